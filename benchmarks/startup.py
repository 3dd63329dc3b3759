"""Start-up: `import fem.cli` and `quaver check decks/rack.deck`, against a bare `python -c pass`.

PYTHONPATH=. python benchmarks/startup.py [repeats] [--cold] [--base DIR]
(target: `quaver check` of the rack under 0.3 s of start-up)

Start-up is everything before the deck's text is read: the interpreter, the imports of the CLI and
the deck reader (numpy, lark); the check's own work is reading the deck (the grammar's cached
analysis is loaded then), importing what the checks use (scipy.sparse, scipy.sparse.linalg,
scipy.linalg) and the checks (assembly, factor of K, condition estimate). The check runs with
QUAVER_TIMING set to its launch time, so the CLI reports the phases on stderr (fem/cli.py): the
start-up's wall time from the launch, its CPU time, and each later phase's wall time.

The floor rows are what any check must import: numpy, then scipy.sparse (assembly), then
scipy.sparse.linalg (the factor of K; it brings scipy.linalg) and lark (the parser). The children
run with bytecode caching on (PYTHONDONTWRITEBYTECODE removed), as an installed package does: the
warm-up run writes the caches, so no row pays for compiling Python source.

The commands are run in turn, `repeats` rounds of each (default 7), so that a change in the
machine's load falls on all of them alike; the medians are printed with their ratio to the bare
interpreter and the load average before and after. The grammar cache is warmed first (the
first run after a grammar change or a Python upgrade makes it); `--cold` also times a check with
an empty cache folder; `--base DIR` also times the check with the code of another checkout
(e.g. one of the main branch) on that checkout's rack deck, and this code on that deck, in the
same rounds.
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


PHASES: dict[str, list[dict[str, float]]] = {}     # command name -> the phases the CLI reported, run by run


def _time(cmd: list[str], env: dict, cwd: Path = ROOT, name: str = "") -> tuple[float, float]:
    """Wall-clock and CPU (user + system) seconds of one run of `cmd` in `cwd`; the phases of a
    `quaver check` (QUAVER_TIMING) are kept in PHASES[name]."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    env = dict(env, QUAVER_TIMING=repr(time.time()))
    t0 = time.perf_counter()
    r = subprocess.run(cmd, cwd=cwd, env=env, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    for line in r.stderr.splitlines():
        if line.startswith("quaver timing: ") and name:
            PHASES.setdefault(name, []).append({k: float(v) for k, v in (w.split("=") for w in line.split()[2:])})
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
        # the floor of start-up: what the deck reader needs
        "import numpy, lark": [py, "-c", "import numpy, lark"],
        "import numpy, scipy.sparse": [py, "-c", "import numpy, scipy.sparse"],
        "import numpy, scipy.sparse.linalg, lark": [py, "-c", "import numpy, scipy.sparse.linalg, lark"],
        "quaver check decks/rack.deck": [py, "-m", "fem", "check", "decks/rack.deck"],
    }
    runs = {name: (cmd, env, ROOT) for name, cmd in commands.items()}
    if base_dir:
        # run in that checkout (python -m puts the current folder first on the path), on its own
        # rack deck (an older reader may not read this one), and this code on that deck too
        other = Path(base_dir).resolve()
        deck = str(other / "decks" / "rack.deck")
        runs[f"check, code and deck of {base_dir}"] = ([py, "-m", "fem", "check", deck],
                                                        dict(env, PYTHONPATH=str(other)), other)
        runs[f"check, this code, deck of {base_dir}"] = ([py, "-m", "fem", "check", deck], env, ROOT)
    load0 = os.getloadavg()
    for cmd, e, cwd in runs.values():              # the grammar and bytecode caches are made here
        _time(cmd, e, cwd)
    times: dict[str, list[tuple[float, float]]] = {k: [] for k in runs}
    with tempfile.TemporaryDirectory() as empty:
        if cold:
            times["quaver check, empty grammar cache"] = []
        for _ in range(repeats):
            for name, (cmd, e, cwd) in runs.items():
                times[name].append(_time(cmd, e, cwd, name))
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
    print(f"{'command':<44} {'wall s':>7} {'x bare':>7} {'CPU s':>7} {'x bare':>7}")
    for name in times:
        w, c = med(name, 0), med(name, 1)
        print(f"{name:<44} {w:7.3f} {w / base[0]:7.1f} {c:7.3f} {c / base[1]:7.1f}")
    w, c = med("quaver check decks/rack.deck", 0), med("quaver check decks/rack.deck", 1)
    floor = med("import numpy, scipy.sparse.linalg, lark", 1)
    print(f"quaver check of the rack in all: {w:.3f} s wall, {c:.3f} s CPU; "
          f"the import floor is {floor:.3f} s CPU, Quaver's own share {c - floor:.3f} s")
    phases = PHASES.get("quaver check decks/rack.deck")
    if phases:
        def pm(key):
            return statistics.median(p[key] for p in phases)

        print(f"its phases (medians): start-up {pm('startup_wall'):.3f} s wall from the launch "
              f"({pm('startup_cpu'):.3f} s CPU; {'within' if pm('startup_wall') < 0.3 else 'OVER'} the 0.3 s target), "
              f"then reading the deck {pm('reading'):.3f} s, the checks' imports {pm('check_imports'):.3f} s, "
              f"the checks {pm('checks'):.3f} s, the summary {pm('summary'):.3f} s (wall)")


if __name__ == "__main__":
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    base = sys.argv[sys.argv.index("--base") + 1] if "--base" in sys.argv else None
    args = [a for a in args if a != base]
    main(int(args[0]) if args else 7, "--cold" in sys.argv, base)
