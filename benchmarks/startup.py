"""Start-up: `import fem.cli` and `quaver check decks/rack.deck`, against a bare `python -c pass`.

PYTHONPATH=. python benchmarks/startup.py [repeats] [--cold] [--base DIR]
(target: `quaver check` of the rack under 0.3 s)

The floor rows are what any check must import: numpy, then scipy.sparse (assembly), then
scipy.sparse.linalg (the factor of K; it brings scipy.linalg) and lark (the parser). The children
run with bytecode caching on (PYTHONDONTWRITEBYTECODE removed), as an installed package does: the
warm-up run writes the caches, so no row pays for compiling Python source.

The commands are run in turn, `repeats` rounds of each (default 7), so that a change in the
machine's load falls on all of them alike; the medians are printed with their ratio to the bare
interpreter and the load average before and after. The grammar cache is warmed first (the
first run after a grammar change or a Python upgrade makes it); `--cold` also times a check with
an empty cache folder; `--base DIR` also times the check with the code of another checkout
(e.g. one of the main branch) in the same rounds.
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _time(cmd: list[str], env: dict, cwd: Path = ROOT) -> tuple[float, float]:
    """Wall-clock and CPU (user + system) seconds of one run of `cmd` in `cwd`."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run(cmd, cwd=cwd, env=env, check=True, stdout=subprocess.DEVNULL)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def main(repeats: int, cold: bool, base_dir: str | None = None) -> None:
    py = sys.executable
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    commands = {
        "python -c pass": [py, "-c", "pass"],
        "import fem.cli": [py, "-c", "import fem.cli"],
        # the floor, step by step: what any check needs (it assembles and factors K, parses with lark)
        "import numpy": [py, "-c", "import numpy"],
        "import numpy, scipy.sparse": [py, "-c", "import numpy, scipy.sparse"],
        "import numpy, scipy.sparse.linalg, lark": [py, "-c", "import numpy, scipy.sparse.linalg, lark"],
        "quaver check decks/rack.deck": [py, "-m", "fem", "check", "decks/rack.deck"],
    }
    runs = {name: (cmd, env, ROOT) for name, cmd in commands.items()}
    if base_dir:
        # run in that checkout (python -m puts the current folder first on the path), on this deck
        other = Path(base_dir).resolve()
        runs[f"quaver check, code of {base_dir}"] = ([py, "-m", "fem", "check", str(ROOT / "decks" / "rack.deck")],
                                                     dict(env, PYTHONPATH=str(other)), other)
    load0 = os.getloadavg()
    for cmd, e, cwd in runs.values():              # the grammar and bytecode caches are made here
        _time(cmd, e, cwd)
    times: dict[str, list[tuple[float, float]]] = {k: [] for k in runs}
    with tempfile.TemporaryDirectory() as empty:
        if cold:
            times["quaver check, empty grammar cache"] = []
        for _ in range(repeats):
            for name, (cmd, e, cwd) in runs.items():
                times[name].append(_time(cmd, e, cwd))
            if cold:
                for p in Path(empty).glob("*/*"):
                    p.unlink()
                times["quaver check, empty grammar cache"].append(
                    _time(commands["quaver check decks/rack.deck"], dict(env, XDG_CACHE_HOME=empty)))
    load1 = os.getloadavg()
    def med(name, k):
        return statistics.median(t[k] for t in times[name])

    base = [med("python -c pass", k) for k in (0, 1)]
    print(f"start-up, median of {repeats} runs each, interleaved; {os.cpu_count()} cores")
    print(f"load average before {load0[0]:.2f} {load0[1]:.2f} {load0[2]:.2f}, "
          f"after {load1[0]:.2f} {load1[1]:.2f} {load1[2]:.2f}")
    print("wall: elapsed time; CPU: user + system time of the process (less sensitive to the load)")
    print(f"{'command':<40} {'wall s':>7} {'x bare':>7} {'CPU s':>7} {'x bare':>7}")
    for name in times:
        w, c = med(name, 0), med(name, 1)
        print(f"{name:<40} {w:7.3f} {w / base[0]:7.1f} {c:7.3f} {c / base[1]:7.1f}")
    w, c = med("quaver check decks/rack.deck", 0), med("quaver check decks/rack.deck", 1)
    floor = med("import numpy, scipy.sparse.linalg, lark", 1)
    print(f"quaver check of the rack: {w:.3f} s wall, {c:.3f} s CPU "
          f"({'within' if w < 0.3 else 'OVER'} the 0.3 s target on the wall clock); "
          f"the import floor is {floor:.3f} s CPU, Quaver's own share {c - floor:.3f} s")


if __name__ == "__main__":
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    base = sys.argv[sys.argv.index("--base") + 1] if "--base" in sys.argv else None
    args = [a for a in args if a != base]
    main(int(args[0]) if args else 7, "--cold" in sys.argv, base)
