"""Command line: `quaver check DECK`, `quaver run DECK`, `quaver study FILE` (fem/study/command.py). Heavy imports happen inside commands.

`quaver run` is `run_deck`: read_deck -> solve -> write_results -> the summary; the summary's
numbers (print_solved) are printed as soon as results.json is staged, before the tables and pictures,
and its closing lines (print_written) once the results folder is in place.

Exit statuses: 0 all self-checks pass; 1 results written, a self-check failed; 2 a mistake in
the deck, the model or the results folder (one message, nothing written); 70 an internal error
(a fault in Quaver: a short message asking for a report; the traceback with --debug or
QUAVER_DEBUG=1); 130 interrupted.

With QUAVER_TIMING set (to 1, or to the launch time as time.time() gives it, as
benchmarks/startup.py does), `quaver check` prints the times of its phases on stderr: start-up
(the interpreter and the imports up to the reading of the deck) and the check's own work.
"""

from __future__ import annotations

import argparse
import sys

__all__ = ["main", "run_deck"]

INTERNAL_ERROR = 70     # the conventional status of an internal software error (sysexits.h, EX_SOFTWARE)
DEBUG_ENV = "QUAVER_DEBUG"
TIMING_ENV = "QUAVER_TIMING"

CAUTION = ("Caution: results support, and never replace, the judgement of a qualified engineer; "
           "local codes and licensed practice govern.")


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(prog="quaver", description="Frequencies, mode shapes and "
                                "responses of 3D beam and truss structures from a text deck.")
    sub = p.add_subparsers(dest="command", required=True)
    c = sub.add_parser("check", help="parse and validate a deck, print a model summary")
    c.add_argument("deck")
    r = sub.add_parser("run", help="solve every case the deck asks for")
    r.add_argument("deck")
    r.add_argument("--out", help="results folder (default results/<deck name>/)")
    r.add_argument("--no-render", action="store_true", help="skip pictures and animations")
    r.add_argument("--write", choices=("tables", "viewers", "all"), default="all",
                   help="what the results folder holds: tables (results.json and CSV), viewers (those and "
                        "the files for VTK viewers) or all (also plots, pictures and the report; default)")
    r.add_argument("--jobs", type=int, default=2, help="processes for rendering (default 2)")
    r.add_argument("--draw-modes", type=int, default=6, metavar="N",
                   help="draw the first N modes of each modes case (default 6)")
    r.add_argument("--fps", type=_fps, default=12.0, metavar="N",
                   help="frames a second of the animations, 1 to 50 (default 12)")
    r.add_argument("--video", action="store_true",
                   help="also write each animation as MP4 (needs the 'video' extra's ffmpeg encoder)")
    r.add_argument("--units", type=_units, metavar="UNITS",
                   help="units of the summary, report and tables: a list such as mm,kN,MPa or a named set "
                        "(engineering: mm, kN, kN*m, MPa; si); results.json stays SI (default: the deck's "
                        "settings, else SI)")
    r.add_argument("--case", action="append", metavar="NAME", dest="cases",
                   help="solve only this case or combination and what it needs (repeatable)")
    from .study.command import add_parser as add_study

    st = add_study(sub)
    for sp in (c, r):
        sp.add_argument("--set", action="append", type=_setting, metavar="NAME=VALUE", dest="let",
                        help="replace the value of the deck's let NAME, e.g. --set 'bay=7 m' (repeatable)")
    for sp in (p, c, r, st):
        sp.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help=f"show the Python traceback of an internal error (or set {DEBUG_ENV}=1)")
    return p


def _fps(text: str) -> float:
    try:
        v = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a number") from None
    if not 1 <= v <= 50:
        # our cap: players slow very short frame delays, and no animation here needs more
        raise argparse.ArgumentTypeError(f"{text} is outside 1 to 50 frames a second")
    return v


def _units(text: str):
    from .display import parse_units

    try:
        return parse_units(text)
    except ValueError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _setting(text: str) -> tuple[str, str]:
    name, eq, value = text.partition("=")
    if not eq or not name.strip() or not value.strip():
        raise argparse.ArgumentTypeError(f"'{text}' is not NAME=VALUE, e.g. --set 'bay=7 m'")
    return name.strip(), value.strip()


def _overrides(pairs) -> dict[str, str] | None:
    """The --set options as a dict; a name given twice is refused rather than the last winning."""
    from .errors import DeckError

    out = {}
    for name, value in pairs or ():
        if name in out:
            raise DeckError(f"--set {name} is given twice ({out[name]} and {value}); keep one of them")
        out[name] = value
    return out or None


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    from .output import folder

    folder.begin()
    restore = _watch_interrupts()
    try:
        return _command(args, folder)
    finally:
        restore()


def _command(args, folder) -> int:
    from .errors import QuaverError

    try:
        if args.command == "check":
            from .deck.reader import read_deck

            marks = _phases()               # start-up ends here: the deck is read next
            model = read_deck(args.deck, let=_overrides(args.let))
            _mark(marks, "reading")
            # imported once the deck has been read (scipy, about half of the check's imports, is
            # not needed to report a mistake in the deck)
            from .analysis.soundness import examine, summary_lines

            if model.n_nodes:               # what the checks import (so their phase is their work)
                from .analysis import factor, static  # noqa: F401
            _mark(marks, "check_imports")
            # the same mechanism, free-structure and conditioning checks as `quaver run`, refused
            # with the same message; no case is solved. A deck without nodes (materials and
            # sections to include elsewhere) has nothing to check
            sound = examine(model)[1] if model.n_nodes else None
            _mark(marks, "checks")
            lo, hi = model.bounding_box()
            print(f"{model.title or args.deck}: {model.n_nodes} nodes, {model.n_members} members, "
                  f"total mass {model.total_mass():.6g} kg")
            print(f"bounding box {lo} .. {hi} m")
            if model.overrides:
                print("overrides: " + ", ".join(f"{k} = {v}" for k, v in model.overrides.items()))
            for w in [*model.warnings, *(sound.notes if sound else ())]:
                print(w)
            for line in summary_lines(sound):
                print(line)
            print(CAUTION)
            _mark(marks, "summary")
            _report(marks)
            return 0
        if args.command == "study":
            from .study.command import run_command

            return run_command(args, CAUTION)
        return run_deck(args.deck, args.out, render=not args.no_render, jobs=max(1, args.jobs),
                        draw_modes=max(0, args.draw_modes), fps=args.fps, let=_overrides(args.let),
                        cases=args.cases, write=args.write, units=args.units, video=args.video)
    except QuaverError as exc:
        state = folder.where()
        _say(f"error: {exc}" + (f"\nnote: {state}" if state.startswith("the new results") else ""))
        return 2
    except BrokenPipeError:
        # the reader of our output went away (quaver check deck | head): the work is done and
        # the rest of the text has nowhere to go; silence the interpreter's final flush too
        _silence_stdout()
        return 0
    except KeyboardInterrupt:
        _say(f"interrupted: {folder.where()}")
        return 130
    except Exception as exc:   # noqa: BLE001 - anything else is a fault in Quaver, not the user's
        if _INTERRUPTED:        # Ctrl-C that a library turned into an error of its own
            _say(f"interrupted: {folder.where()}")
            return 130
        return _internal_error(exc, getattr(args, "debug", False))


_INTERRUPTED: list = []


def _watch_interrupts():
    """Note every Ctrl-C (SIGINT) of the command, then raise KeyboardInterrupt as Python does:
    a library's C code that meets the interrupt may report it as an error of its own (matplotlib's
    drawing as "ValueError: Invalid bounding box"), which `main` then reports as the interrupt,
    not as an internal error. Returns the function that puts the earlier handler back; nothing
    is changed where SIGINT is not Python's own handler (ignored, or a thread other than the main)."""
    import signal
    import threading

    _INTERRUPTED.clear()
    if threading.current_thread() is not threading.main_thread() or \
            signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        return lambda: None

    def noted(signum, frame):
        _INTERRUPTED.append(signum)
        signal.default_int_handler(signum, frame)

    signal.signal(signal.SIGINT, noted)
    return lambda: signal.signal(signal.SIGINT, signal.default_int_handler)


def run_deck(deck: str, out: str | None = None, render: bool = True, jobs: int = 2,
             draw_modes: int = 6, fps: float = 12.0, let: dict | None = None, cases=None,
             write: str = "all", units=None, video: bool = False) -> int:
    """Solve the deck and write its results folder (default results/<deck name>); `let`
    overrides let parameters (read_deck), `cases` names the cases and combinations to solve
    (with what they need; all when None), `write` what the folder holds (write_results), `units`
    (fem.display.DisplayUnits) the display units over the deck's, `video` MP4 animations besides WebP.
    Prints the summary; returns the exit status."""
    from dataclasses import replace
    from pathlib import Path

    from .deck.reader import read_deck
    from .output.summary import print_solved, print_written
    from .output.write import prepare_folder, write_results
    from .solver import solve

    model = read_deck(deck, let=let)
    if units is not None:
        model.settings["units"] = units
    if cases:
        from .case_selection import select_cases

        select_cases(model, cases)        # an unknown name is refused before the folder is looked at
    _, shown, notes = prepare_folder(out, Path(deck))   # before solving: an unusable --out fails at once
    results = solve(model, cases)

    def first_answer(doc: dict) -> None:
        # the numbers before the pictures; a reader that stopped reading (| head) must not cost
        # the results folder: the rest of the text goes nowhere, the writing goes on
        try:
            print_solved(results, deck)
            sys.stdout.flush()
        except BrokenPipeError:
            _silence_stdout()

    written = write_results(results, shown, render=render, jobs=jobs, draw_modes=draw_modes, fps=fps,
                            staged=first_answer, write=write, video=video)
    status = print_written(results, replace(written, notes=(*notes, *written.notes)))
    sys.stdout.flush()          # a reader gone by now is met here (status 0), not at the exit
    return status


def _phases() -> list | None:
    """The first mark of `quaver check`'s phases (the end of start-up: CPU time since the process
    began, and wall time since the launch time QUAVER_TIMING holds, if it holds one), or None
    when QUAVER_TIMING is not set."""
    import os
    import time

    value = os.environ.get(TIMING_ENV, "").strip()
    if value in ("", "0"):
        return None
    try:
        launched = float(value) if float(value) > 1e9 else None
    except ValueError:
        launched = None
    wall = time.time() - launched if launched else float("nan")
    return [("startup", time.perf_counter(), time.process_time(), wall)]


def _mark(marks: list | None, phase: str) -> None:
    """The end of `phase` (with QUAVER_TIMING)."""
    if marks is not None:
        import time

        marks.append((phase, time.perf_counter(), time.process_time(), 0.0))


def _report(marks: list | None) -> None:
    """'quaver timing: startup_cpu=... startup_wall=... reading=... ...' on stderr: start-up's
    CPU time and wall time since launch, then each phase's wall time, in seconds."""
    if marks is None:
        return
    _, _, cpu, wall = marks[0]
    parts = [f"startup_cpu={cpu:.4f}", f"startup_wall={wall:.4f}"]
    parts += [f"{name}={t - marks[k][1]:.4f}" for k, (name, t, _, _) in enumerate(marks[1:])]
    parts.append(f"total_cpu={marks[-1][2]:.4f}")
    sys.stderr.write("quaver timing: " + " ".join(parts) + "\n")


def _silence_stdout() -> None:
    """Send the rest of stdout, and the interpreter's final flush, to the null device."""
    import os

    os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())


def _say(text: str) -> None:
    """One message on stderr, ending in exactly one newline, flushed before the prompt returns."""
    try:
        sys.stdout.flush()
    except OSError:
        pass
    sys.stderr.write(text.rstrip("\n") + "\n")
    sys.stderr.flush()


def _internal_error(exc: BaseException, debug: bool) -> int:
    """A one-paragraph message asking for a report, saying where the results are."""
    import os

    from .output import folder

    if debug or os.environ.get(DEBUG_ENV, "").strip() not in ("", "0"):
        import traceback

        traceback.print_exception(type(exc), exc, exc.__traceback__, file=sys.stderr)
    text = " ".join(str(exc).split())
    text = text[:300] + ("..." if len(text) > 300 else "")
    state = folder.where()
    _say(f"internal error ({type(exc).__name__}{': ' + text if text else ''}): Quaver failed in a way it "
         f"should not, and this is not a mistake in your deck as far as it can tell. {state[:1].upper()}{state[1:]}. "
         f"Please report it with the deck (and the files it reads), the command line and the output of the "
         f"same command with --debug (or {DEBUG_ENV}=1), which shows where it failed.")
    return INTERNAL_ERROR
