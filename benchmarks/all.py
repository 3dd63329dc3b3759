"""Every benchmark script, one after another, each in its own process, printed as Markdown for
the README: a section per run with the load average before and after it and the BLAS threads a
process starts with here, then the script's own output (its Markdown tables as they are, plain
text in a code block), and a summary table at the end.

PYTHONPATH=. python benchmarks/all.py [--quick] [--only NAME[,NAME...]] [--list]

--quick   small sizes (a few minutes in all on a quiet 2-core machine); without it the sizes the
          scripts default to, which take an hour or more (eigen.py's scipy defaults alone take
          many minutes)
--only    the named scripts only (file names without .py), e.g. --only startup,study
--list    the runs this would make, without running them

Ratios within one script's run are what count: these machines are shared and a table's load
average says how quiet the machine was. A script that exits with a nonzero status (it failed,
or it reports a target missed, as first_answer.py does) is shown with its output, its status and
the end of its error output, and the others still run (exit status 1 at the end).
"""

from __future__ import annotations

import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HERE = Path(__file__).resolve().parent

# script -> (full runs, quick runs); each run is the script's argument list. A script in this folder
# that is not listed runs once with its defaults in both modes, after these.
RUNS = {
    "startup": ([["7", "--cold"]], [["3"]]),
    "deck_reading": ([[]], [["2000"]]),
    "assembly": ([[]], [[]]),
    "scaling": ([[]], [["5000"]]),
    "dynamics": ([[]], [["800"]]),
    "eigen": ([["frame"], ["tower"], ["floor"], ["crossover"]], [["floor", "300"]]),
    "factor_count": ([["count"], ["threads"], ["output"]], [["count", "frame=5,5,4", "tower=200"]]),
    "stresses": ([[]], [[]]),
    "study": ([[]], [["--quick"]]),
    "first_answer": ([[]], [["--no-render", str(ROOT / "decks" / "rack.deck")]]),
    "render": ([[]], [["150", "2"]]),
}


def scripts() -> dict:
    """Every benchmark script here (all.py aside): RUNS, then the others with their defaults."""
    found = sorted(p.stem for p in HERE.glob("*.py") if p.stem != "all" and not p.stem.startswith("_"))
    runs = {name: RUNS[name] for name in RUNS if name in found}
    runs.update({name: ([[]], [[]]) for name in found if name not in RUNS})
    return runs


def blas_threads(env: dict) -> str:
    """The BLAS libraries a process started with `env` loads with numpy and scipy, and their threads."""
    code = ("import numpy, scipy.linalg\nfrom threadpoolctl import threadpool_info\n"
            "import pathlib\n"
            "print(', '.join(f\"{pathlib.Path(i['filepath']).parent.name.removesuffix('.libs')}'s \""
            "f\"{i['internal_api']} {i['num_threads']} thread{'s' * (i['num_threads'] != 1)}\" for i in threadpool_info() if i['user_api'] == 'blas'))")
    r = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True)
    return r.stdout.strip() or "unknown"


def _load() -> str:
    return " ".join(f"{x:.1f}" for x in os.getloadavg())


def _as_markdown(text: str) -> str:
    """Markdown tables as they are; everything else in a code block."""
    out, plain = [], []

    def flush():
        while plain and not plain[-1].strip():
            plain.pop()
        while plain and not plain[0].strip():
            plain.pop(0)
        if plain:
            out.extend(["```text", *plain, "```"])
        plain.clear()

    for line in text.rstrip("\n").splitlines():
        if line.startswith("|"):
            if plain:
                flush()
                out.append("")
            out.append(line)
        else:
            if out and out[-1].startswith("|") and not plain:
                out.append("")
            plain.append(line)
    flush()
    return "\n".join(out)


def main(argv: list[str]) -> int:
    quick = "--quick" in argv
    known = scripts()
    only = None
    if "--only" in argv:
        i = argv.index("--only")
        if i + 1 >= len(argv):
            print("--only needs script names, e.g. --only startup,study", file=sys.stderr)
            return 2
        only = [n.removesuffix(".py") for n in argv[i + 1].split(",") if n]
        unknown = [n for n in only if n not in known]
        if unknown:
            print(f"no benchmark {', '.join(unknown)}; there are {', '.join(known)}", file=sys.stderr)
            return 2
    names = only or list(known)
    runs = [(n, args) for n in names for args in known[n][1 if quick else 0]]
    if "--list" in argv:
        for n, args in runs:
            print(" ".join(["python", f"benchmarks/{n}.py", *args]))
        return 0
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(p for p in (str(ROOT), os.environ.get("PYTHONPATH")) if p))
    blas = blas_threads(env)
    print(f"# Benchmarks{' (quick sizes)' if quick else ''}")
    print()
    print(f"{os.cpu_count()} cores; Python {sys.version.split()[0]}; BLAS a process starts with: {blas} "
          "(a script may set its own; its text says so); load average (1, 5, 15 min) at the start "
          f"{_load()}")
    summary = []
    for name, args in runs:
        cmd = [sys.executable, str(HERE / f"{name}.py"), *args]
        title = " ".join([f"{name}.py", *args])
        load0 = _load()
        t0 = time.perf_counter()
        r = subprocess.run(cmd, cwd=ROOT, env=env, capture_output=True, text=True)
        seconds = time.perf_counter() - t0
        load1 = _load()
        summary.append((title, r.returncode, seconds, load0, load1))
        print()
        print(f"## {title}")
        print()
        print(f"load average before {load0}, after {load1}; BLAS {blas}; {seconds:.0f} s")
        print()
        if r.stdout.strip():
            print(_as_markdown(r.stdout))
        if r.returncode:                # a script's failure, or a target it reports as missed
            if r.stdout.strip():
                print()
            print(f"exit status {r.returncode}; the end of its error output:")
            print()
            print("\n".join(["```text", *r.stderr.strip().splitlines()[-15:], "```"]))
        sys.stdout.flush()
    print()
    print("## Summary")
    print()
    print("| run | status | seconds | load before | load after |")
    print("|---|---|---|---|---|")
    for title, code, seconds, load0, load1 in summary:
        print(f"| `{title}` | {'ok' if code == 0 else f'exit status {code}'} | {seconds:.0f} | {load0} | {load1} |")
    return 1 if any(code for _, code, *_ in summary) else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
