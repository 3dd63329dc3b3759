"""Render speed and output size.

PYTHONPATH=. python benchmarks/render.py [deck] [repeats]    (default decks/rack.deck, 1)
    `quaver run` of the deck as a user runs it (a new process each time), by default and with
    --no-render, alternately; the ratio default / --no-render (target <= 3) and the results
    folder's size and file count (target under about 15 MB and 100 files), the load average
    printed beside them.
PYTHONPATH=. python benchmarks/render.py --against CHECKOUT [repeats]    (default 2)
    the same runs with the code of another checkout (e.g. `git worktree add /tmp/base <commit>`),
    like with like: (a) its code on its decks/rack.deck, (b) this code on that same deck, (c) this
    code on this decks/rack.deck; each by default and with --no-render, interleaved, best of
    `repeats`, a new process each run, the load average printed before each round. (a)/(b) of the
    default runs is the pictures' speed-up at the same deck (target >= 4 against the code of the
    day issue 17 was filed).
PYTHONPATH=. python benchmarks/render.py frame [members] [jobs]
    pictures and animations of the first 6 modes of a generated ~1000-member frame (target
    under 20 s on 2 cores).
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))


def _load() -> str:
    return " ".join(f"{x:.1f}" for x in os.getloadavg())


def _folder(path: Path) -> tuple[float, int, dict]:
    """MB, file count and MB by top-level part of a results folder."""
    parts, total, count = {}, 0, 0
    for f in path.rglob("*"):
        if f.is_file():
            size = f.stat().st_size
            total, count = total + size, count + 1
            top = f.relative_to(path).parts[0] if len(f.relative_to(path).parts) > 1 else (
                "report.html" if f.name == "report.html" else "tables")
            parts[top] = parts.get(top, 0) + size
    return total / 1e6, count, {k: v / 1e6 for k, v in sorted(parts.items())}


CPU: list[float] = []      # CPU seconds (user + system, its drawing processes included) of each _run


def _run(deck: Path, out: Path, *extra: str, code: Path = ROOT) -> float:
    """Wall-clock seconds of `quaver run deck` with the package of checkout `code` (a new process;
    it runs in that folder, which `python -m` puts first on the path); its CPU seconds go to CPU."""
    import resource

    env = dict(os.environ, PYTHONPATH=str(code))
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out), *extra],
                       cwd=code, env=env, capture_output=True, text=True)
    dt = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    CPU.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    if r.returncode != 0:
        raise SystemExit(f"quaver run failed ({r.returncode}):\n{r.stdout[-2000:]}{r.stderr[-2000:]}")
    return dt


def _compiled(code: Path) -> None:
    """The checkout's package compiled to bytecode now, as an installed package is: no run then
    compiles its sources, even where PYTHONDONTWRITEBYTECODE is set (a checkout without its
    bytecode took 27.6 -> 31.0 s a default rack run here, its drawing processes compiling too)."""
    import compileall

    compileall.compile_dir(str(code / "fem"), quiet=1)


def run_ratio(deck: Path, repeats: int = 1) -> None:
    _compiled(ROOT)
    print(f"{deck.name}: load average {_load()} (1, 5, 15 min) at the start, {os.cpu_count()} cores")
    with tempfile.TemporaryDirectory() as tmp:
        full, bare = [], []
        for k in range(repeats):
            bare.append(_run(deck, Path(tmp) / f"bare{k}", "--no-render"))
            full.append(_run(deck, Path(tmp) / f"full{k}"))
        mb, files, parts = _folder(Path(tmp) / "full0")
        tmb, tfiles, _ = _folder(Path(tmp) / "bare0")
    f, b = min(full), min(bare)
    print(f"default run {f:.1f} s, --no-render {b:.1f} s: ratio {f / b:.2f} (target <= 3); "
          f"best of {repeats}; load average {_load()} at the end")
    print(f"default folder {mb:.1f} MB in {files} files (target under about 15 MB and 100 files); "
          f"--no-render {tmb:.1f} MB in {tfiles} files")
    print("  by part: " + ", ".join(f"{k} {v:.1f} MB" for k, v in parts.items()))


def against(other: Path, repeats: int = 2) -> None:
    """Like with like: the code of `other` and this code on `other`'s rack deck, and this code on
    this rack deck; default and --no-render runs interleaved, best of `repeats`."""
    other = other.resolve()
    runs = {"(a) its code, its rack.deck": (other, other / "decks" / "rack.deck"),
            "(b) this code, its rack.deck": (ROOT, other / "decks" / "rack.deck"),
            "(c) this code, this rack.deck": (ROOT, ROOT / "decks" / "rack.deck")}
    head = subprocess.run(["git", "-C", str(other), "log", "-1", "--format=%h %s"],
                          capture_output=True, text=True).stdout.strip()[:90]
    _compiled(other)
    _compiled(ROOT)
    print(f"against {other} ({head}); {os.cpu_count()} cores; both packages compiled to bytecode first")
    times: dict[tuple[str, str], list[float]] = {}
    cpus: dict[tuple[str, str], list[float]] = {}
    with tempfile.TemporaryDirectory() as tmp:
        for k in range(repeats):
            print(f"round {k + 1}: load average {_load()} (1, 5, 15 min)", flush=True)
            for name, (code, deck) in runs.items():
                for mode, extra in (("default", ()), ("--no-render", ("--no-render",))):
                    out = Path(tmp) / f"{name[1]}-{mode}-{k}"
                    dt = _run(deck, out, *extra, code=code)
                    times.setdefault((name, mode), []).append(dt)
                    cpus.setdefault((name, mode), []).append(CPU[-1])
                    print(f"  {name:<32} {mode:<12} {dt:6.1f} s wall {CPU[-1]:6.1f} s CPU", flush=True)
    print(f"best of {repeats}; load average {_load()} at the end; CPU: user + system of the run and "
          "its drawing processes (less sensitive to the load than the wall clock)")
    print(f"{'':<32} {'default s':>10} {'--no-render s':>14} {'ratio':>6}   {'CPU s':>6} {'--no-render CPU s':>18}")
    best = {key: min(v) for key, v in times.items()}
    cpu = {key: min(v) for key, v in cpus.items()}
    for name in runs:
        f, b = best[name, "default"], best[name, "--no-render"]
        print(f"{name:<32} {f:10.1f} {b:14.1f} {f / b:6.2f}   {cpu[name, 'default']:6.1f} {cpu[name, '--no-render']:18.1f}")
    first, second = list(runs)[:2]
    a, b = best[first, "default"], best[second, "default"]
    pa, pb = a - best[first, "--no-render"], b - best[second, "--no-render"]
    ca, cb = cpu[first, "default"], cpu[second, "default"]
    qa, qb = ca - cpu[first, "--no-render"], cb - cpu[second, "--no-render"]
    print(f"default run on the same deck: (a)/(b) = {a / b:.2f} wall, {ca / cb:.2f} CPU (target >= 4); "
          f"the pictures' own share (default - --no-render): {pa:.1f} s -> {pb:.1f} s wall ({pa / pb:.2f}x), "
          f"{qa:.1f} s -> {qb:.1f} s CPU ({qa / qb:.2f}x)")


def frame(members: int, jobs: int) -> None:
    from assembly import grid_model

    from fem.analysis.modal_case import ModesCaseResult, influence_vectors
    from fem.analysis.modes import participation, solve_modes
    from fem.assembly import assemble
    from fem.output.render import MODE_FRAMES, can_render
    from fem.output.render_pool import render_all
    from fem.output.vtk import shape_scale

    model = grid_model(members)
    model.restraint[model.coords[:, 2] == 0] = True
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    modes = solve_modes(K, M, n_modes=6, sturm=False)
    part = participation(modes.phi, M, influence_vectors(model, np.zeros(3))[f])
    shapes = np.zeros((6 * model.n_nodes, 6))
    shapes[f] = modes.phi
    case = ModesCaseResult("BENCH", modes, part, shapes.reshape(model.n_nodes, 6, -1), np.zeros(3))
    ok, why = can_render()
    if not ok:
        print("cannot render here:", why)
        return
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        files = render_all(Path(tmp), model, [case], [], shape_scale(model), jobs)
        dt = time.perf_counter() - t0
    print(f"{model.n_members} members, 6 modes: {len(files)} files (2 PNG and a {MODE_FRAMES}-frame WebP a mode) "
          f"in {dt:.1f} s with {jobs} process(es); load average {_load()}")


if __name__ == "__main__":
    args = sys.argv[1:]
    if args and args[0] == "--against":
        against(Path(args[1]), int(args[2]) if len(args) > 2 else 2)
    elif args and args[0] == "frame":
        frame(int(args[1]) if len(args) > 1 else 1000, int(args[2]) if len(args) > 2 else 2)
    else:
        run_ratio(Path(args[0]) if args else ROOT / "decks" / "rack.deck", int(args[1]) if len(args) > 1 else 1)
