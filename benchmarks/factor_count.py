"""One factorisation where one serves, one BLAS thread in the Lanczos iterations, and the size
of a results folder. Run by hand; ratios within one run are what count (shared machine): the
load average is printed beside each table.

PYTHONPATH=. python benchmarks/factor_count.py count [frame|tower ...]
    a modes case (20 modes) and a static case (gravity) solved by fem.solve, with every sparse
    factorisation counted by instrumenting scipy's splu and cholesky_banded (and PARDISO's
    factorize when installed), and the run timed. Quaver's claim: 2 factorisations, one of
    K (the model's checks; the modes and the static case reuse it) and one of K - sigma M (the
    Sturm check, in the ordering of the first).
PYTHONPATH=. python benchmarks/factor_count.py threads [frame|tower ...]
    20 modes by solve_modes (Sturm check off), alternately with BLAS limited to one thread
    during the Lanczos iterations (modes.BLAS_THREADS = 1, the default) and with no limit,
    twice each; the ratio of the best times.
PYTHONPATH=. python benchmarks/factor_count.py output [deck]   (default decks/rack.deck)
    the results folder of `quaver run` with --write tables, viewers and all (all with pictures):
    size in MB and number of files.
Models (benchmarks/scaling.py generators): frame 14 x 14 x 10 bays (about 13k free DOFs,
SuperLU without PARDISO), tower 2000 panels (about 48k free DOFs, banded Cholesky); give
frame=NX,NY,NZ or tower=PANELS to change them.
"""

from __future__ import annotations

import collections
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).parent))
from scaling import frame_deck, tower_deck  # noqa: E402

DEFAULTS = {"frame": (14, 14, 10), "tower": (2000,)}


def _deck(spec: str) -> tuple[str, str]:
    name, _, sizes = spec.partition("=")
    dims = tuple(int(x) for x in sizes.split(",")) if sizes else DEFAULTS[name]
    text = frame_deck(*dims) if name == "frame" else tower_deck(*dims)
    return f"{name} {'x'.join(map(str, dims))}", text


def _load() -> str:
    return "load average " + " ".join(f"{x:.2f}" for x in os.getloadavg())


def count_factorisations(text: str) -> tuple[collections.Counter, float, object]:
    """fem.solve of the deck with a modes and a static case; the factorisations it made by kind,
    seconds, and the results."""
    import scipy.linalg as sla
    import scipy.sparse.linalg as spla

    import fem

    calls = collections.Counter()
    patched = []

    def counting(owner, name, key):
        original = getattr(owner, name)

        def wrapper(*a, **k):
            calls[key] += 1
            return original(*a, **k)
        setattr(owner, name, wrapper)
        patched.append((owner, name, original))

    counting(spla, "splu", "SuperLU")
    counting(sla, "cholesky_banded", "banded Cholesky")
    try:
        import pypardiso
        counting(pypardiso.PyPardisoSolver, "factorize", "PARDISO")
    except ImportError:
        pass
    model = fem.read_text(text + "\ncase MODES modes { count = 20 }\ncase G static { gravity = (0, 0, -9.81 m/s^2) }\n")
    try:
        t0 = time.perf_counter()
        results = fem.solve(model)
        return calls, time.perf_counter() - t0, results
    finally:
        for owner, name, original in patched:
            setattr(owner, name, original)


def count(specs: list[str]) -> None:
    print(f"factorisations of a modes + static run ({_load()})")
    for spec in specs:
        label, text = _deck(spec)
        calls, seconds, r = count_factorisations(text)
        m = r["MODES"].modes
        print(f"  {label:<18} {sum(calls.values())} factorisations ({', '.join(f'{k} {v}' for k, v in calls.items())}); "
              f"{seconds:.1f} s; {m.solver}; Sturm {m.sturm_count} = {m.sturm_expected}", flush=True)
    print(f"  ({_load()})")


def threads(specs: list[str]) -> None:
    from fem.analysis import modes
    from fem.analysis.modes import solve_modes
    from fem.assembly import assemble
    from fem.deck.reader import read_text

    print(f"20 modes, BLAS limited to one thread in the Lanczos iterations or not ({_load()})")
    for spec in specs:
        label, text = _deck(spec)
        asm = assemble(read_text(text))
        f = asm.free
        K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
        best = {1: float("inf"), None: float("inf")}
        for _ in range(2):
            for limit in (1, None):
                modes.BLAS_THREADS = limit
                t0 = time.perf_counter()
                r = solve_modes(K, M, n_modes=20, sturm=False)
                best[limit] = min(best[limit], time.perf_counter() - t0)
        modes.BLAS_THREADS = 1
        print(f"  {label:<18} {len(f)} DOFs, {r.solver}: one thread {best[1]:.1f} s, no limit {best[None]:.1f} s, "
              f"ratio {best[None] / best[1]:.2f}", flush=True)
    print(f"  ({_load()})")


def output(deck: Path) -> None:
    print(f"results folder of {deck.name} ({_load()})")
    with tempfile.TemporaryDirectory() as tmp:
        for write in ("tables", "viewers", "all"):
            out = Path(tmp) / write
            t0 = time.perf_counter()
            subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out), "--write", write],
                           cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT)), stdout=subprocess.DEVNULL,
                           stderr=subprocess.DEVNULL, check=True)
            files = [p for p in out.rglob("*") if p.is_file()]
            mb = sum(p.stat().st_size for p in files) / 1e6
            print(f"  --write {write:<8} {mb:6.1f} MB, {len(files):4d} files, {time.perf_counter() - t0:.0f} s", flush=True)
    print(f"  ({_load()})")


def main(argv: list[str]) -> None:
    what = argv[0] if argv else "count"
    if what == "output":
        return output(Path(argv[1]) if len(argv) > 1 else ROOT / "decks" / "rack.deck")
    specs = argv[1:] or ["frame", "tower"]
    {"count": count, "threads": threads}[what](specs)


if __name__ == "__main__":
    main(sys.argv[1:])
