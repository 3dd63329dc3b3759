"""`quaver study`: a study file, or a deck with the study's lines given as options.

    quaver study rack-bay.study
    quaver study rack.deck --vary "bay from 5 m to 7 m points 9" --cases MODES --serial

Each option is one line of the study file without its first word's repetition: `--vary "bay
from 5 m to 7 m points 9"` is the line `vary bay from 5 m to 7 m points 9`; they are read by the
study file's own reader, so a mistake is located in the command line's text.

Exit statuses: 0 every variant solved and passed its self-checks; 1 the table is written but a
variant did not solve or failed a self-check; 2 a mistake in the study (nothing written).
"""

from __future__ import annotations

import sys
from pathlib import Path

__all__ = ["add_parser", "run_command"]

_LINES = ("vary", "draw", "draws", "records", "record", "peak", "track", "shapes")


def add_parser(sub):
    s = sub.add_parser("study", help="solve many variants of a deck (sweeps, draws, record suites) on Dask",
                       description="Run a study file, or a deck with the study's lines as options.")
    s.add_argument("file", help="a study file, or a deck (.deck) with --vary/--draw/... options")
    s.add_argument("--out", help="the study's folder (default studies/<file name>/)")
    s.add_argument("--serial", action="store_true", help="run the variants in this process, without Dask")
    s.add_argument("--workers", type=int, metavar="N", help="worker processes of the local cluster (default 2)")
    s.add_argument("--scheduler", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://127.0.0.1:8786")
    s.add_argument("--chunk", type=int, metavar="N",
                   help="variants a Dask task (default: a quarter of those left for 2 workers, "
                        "shrinking to 2)")
    s.add_argument("--cases", metavar="A,B", help="the cases to solve (with a deck; default all)")
    for word in _LINES:
        s.add_argument(f"--{word}", action="append", metavar="TEXT", dest=f"line_{word}",
                       help=f"a study line: {word} TEXT (repeatable; with a deck)")
    return s


def _study(args):
    from ..errors import DeckError
    from .spec import read_study, read_study_text

    path = Path(args.file)
    lines = [f"{w} {t}" for w in _LINES for t in (getattr(args, f"line_{w}") or ())]
    if path.suffix == ".deck":
        text = "\n".join([f'study "{path.stem}"', f'deck "{path.name}"',
                          *([f"cases {args.cases}"] if args.cases else []), *lines])
        return read_study_text(text, "command line", path.parent), f"studies/{path.stem}"
    if lines or args.cases:
        raise DeckError("--vary, --draw, --cases and the like go with a deck; in a study file, write them as its lines")
    return read_study(path), f"studies/{path.stem}"


def run_command(args, caution: str) -> int:
    from .run import run_study

    study, default_out = _study(args)
    if args.workers is not None and not 1 <= args.workers <= 256:
        from ..errors import DeckError

        raise DeckError(f"--workers {args.workers}: give 1 to 256")
    if args.chunk is not None:
        from ..errors import DeckError

        if args.serial:
            raise DeckError("--chunk sets the variants a Dask task; a --serial study has no tasks: "
                            "give one or the other")
        if args.chunk < 1:
            raise DeckError(f"--chunk {args.chunk}: give 1 or more variants a task")
    result = run_study(study, serial=args.serial, workers=args.workers, scheduler=args.scheduler,
                       progress=True, chunk=args.chunk)
    out = result.write(args.out or default_out)
    n, failed = len(result.variants), result.failed
    tasks = "" if args.serial else f" ({result.phases.get('tasks', 0)} tasks)"
    print(f"{study.title or study.deck}: {n} variant{'s' if n != 1 else ''} on {result.engine}{tasks} in "
          f"{result.seconds:.1f} s")
    for r in result.results:
        if r["status"] != "ok":
            print(f"  variant {r['index']} did not solve: {r['message']}")
    checks = result.columns.get("self-checks", [])
    bad = [i for i, c in enumerate(checks) if c == "FAIL"]
    if bad:
        print(f"  self-checks failed in variant{'s' if len(bad) != 1 else ''} {', '.join(map(str, bad))}")
    t = result.tracked
    if t is not None:
        print(f"modes of {t.case} followed by MAC: {len(t.crossings)} crossing{'s' if len(t.crossings) != 1 else ''}, "
              f"{len(t.veerings)} veering{'s' if len(t.veerings) != 1 else ''} flagged")
    for c in [k for k in result.columns if k.startswith("resonance ")]:
        fails = sum(v == "FAIL" for v in result.columns[c])
        print(f"{c}: {fails} of {n} variants inside a required margin")
    print(f"table: {out / 'study.csv'} (and .parquet); report: {out / 'report.html'}")
    print(caution)
    sys.stdout.flush()
    return 1 if failed or bad else 0
