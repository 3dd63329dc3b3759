"""Command line: `quaver check DECK`, `quaver run DECK`. Heavy imports happen inside commands."""

from __future__ import annotations

import argparse
import sys

__all__ = ["main"]

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
    r.add_argument("--jobs", type=int, default=2, help="processes for rendering (default 2)")
    r.add_argument("--draw-modes", type=int, default=6, metavar="N",
                   help="draw the first N modes of each modes case (default 6)")
    r.add_argument("--fps", type=_fps, default=12.0, metavar="N",
                   help="frames a second of the animations, 1 to 50 (default 12)")
    return p


def _fps(text: str) -> float:
    try:
        v = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{text}' is not a number") from None
    if not 1 <= v <= 50:
        # GIF frame delays are whole hundredths of a second, and players slow anything faster
        raise argparse.ArgumentTypeError(f"{text} is outside 1 to 50 frames a second")
    return v


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    from .errors import QuaverError

    try:
        if args.command == "check":
            from .analysis.soundness import examine, summary_lines
            from .deck.reader import read_deck

            model = read_deck(args.deck)
            # the same mechanism, free-structure and conditioning checks as `quaver run`, refused
            # with the same message; no case is solved. A deck without nodes (materials and
            # sections to include elsewhere) has nothing to check
            if model.n_nodes:
                examine(model)
            lo, hi = model.bounding_box()
            print(f"{model.title or args.deck}: {model.n_nodes} nodes, {model.n_members} members, "
                  f"total mass {model.total_mass():.6g} kg")
            print(f"bounding box {lo} .. {hi} m")
            for w in model.warnings:
                print(w)
            for line in summary_lines(model):
                print(line)
            print(CAUTION)
            return 0
        from .run import run_deck

        return run_deck(args.deck, args.out, render=not args.no_render, jobs=max(1, args.jobs),
                        draw_modes=max(0, args.draw_modes), fps=args.fps)
    except QuaverError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:
        # the reader of our output went away (quaver check deck | head): the work is done and
        # the rest of the text has nowhere to go; silence the interpreter's final flush too
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except KeyboardInterrupt:
        print("interrupted: no results were written; earlier results are as they were", file=sys.stderr)
        return 130
