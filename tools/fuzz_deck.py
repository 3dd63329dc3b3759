"""Mutation fuzzing of the deck reader: every outcome must be a model or a located DeckError.

python tools/fuzz_deck.py [cases] [seed]   (default 100000 cases) prints the count of other
exceptions, the target being 0. tests/test_fuzz.py runs a bounded version of the same mutations.
Besides character and token mutations it writes expressions a user may type: long sums, powers
of negative numbers, huge and tiny exponents, units with spaces, percent signs.
"""

from __future__ import annotations

import argparse
import random
import re
import sys
import traceback
import warnings
from pathlib import Path

from fem.deck.reader import read_text
from fem.errors import DeckError

ROOT = Path(__file__).resolve().parents[1]
DECKS = [p.read_text() for p in sorted((ROOT / "decks").glob("*.deck"))]
EXTREMES = ["0", "-1", "1e308", "-1e308", "nan", "inf", "1e-320", "00", "9" * 40]
UNITS = ["m", "kN", "kg", "s", "Hz", "GPa", "deg", "kg/m^3", "m/s^2", "percent", "N*m"]
NAMES = ["ZZ9", "A_", "Q*", "nodeX", "S355x", "COLUMN"]


def expression(rng: random.Random) -> str:
    """An expression of a kind a user may type, often one the reader must refuse."""
    kind = rng.randrange(8)
    if kind == 0:                                # a long sum or product
        return rng.choice("+*-").join(rng.choice(["1", "2 m", "x", "0.5"]) for _ in range(rng.randint(50, 3000)))
    if kind == 1:                                # a fractional power of a negative number
        return f"(-{rng.choice(['8', '2.5', '1e-3', '8 m'])})^({rng.choice(['1/3', '0.5', '-1/2', '1e-9'])})"
    if kind == 2:                                # huge and tiny exponents and powers
        return rng.choice(["exp(-800)*1 m", "exp(800)", "2^(-2000)", "10^400", "(1 m)^1e300", "1e-300*1e-300 m",
                           "(2 m)^-1e18", "0^(-1)", "1e308*10", "log(0)", "1e-320", "sqrt(-1 m^2)"])
    if kind == 3:                                # a unit written with spaces
        return rng.choice(["9.81 m / s^2", "7850 kg / m^3", "2 kN * m", "9.81 m/s ^2", "2 m ^2", "5 m/ s"])
    if kind == 4:                                # a percent sign or another spelling of a unit
        return rng.choice(["2%", "2 %", "5 tonne", "3 KN", "10 sec", "2 pct", "100*x kg", "(1+x) kg"])
    if kind == 5:                                # deep brackets and signs
        n = rng.randint(50, 2000)
        return rng.choice(["(" * n + "1" + ")" * n, "-" * n + "1", "+" * n + "1 m"])
    if kind == 6:                                # a function of the wrong kind of value
        fname = rng.choice(["sin", "cos", "exp", "log", "sqrt", "atan", "abs"])
        return f"{fname}({rng.choice(['2 m', '-1', '0', '1e308', '30 deg'])})"
    return f"x{rng.choice(['+', '*', '/', '^'])}{rng.choice(['0', '-0.5', '1e308', '1e-308', 'pi'])}"


def mutate(text: str, rng: random.Random) -> str:
    kind = rng.randrange(8)
    exprs = [m.span(1) for m in re.finditer(r"=\s*([^,;{}()\n=]+)", text)]
    if kind == 7 and exprs:                      # a value replaced by a typed expression
        a, b = rng.choice(exprs)
        return "let x = 2\n" + text[:a] + expression(rng) + text[b:]
    if kind == 7:
        return f"let x = 2\nlet y = {expression(rng)}\n" + text
    if kind == 0 and text:                       # delete a run of characters
        i = rng.randrange(len(text))
        return text[:i] + text[i + rng.randint(1, 8):]
    if kind == 1 and text:                       # duplicate a run
        i = rng.randrange(len(text))
        return text[:i] + text[i:i + rng.randint(1, 12)] + text[i:]
    if kind == 2 and len(text) > 2:              # swap two characters
        i, j = sorted(rng.sample(range(len(text)), 2))
        return text[:i] + text[j] + text[i + 1:j] + text[i] + text[j + 1:]
    nums = [m.span() for m in re.finditer(r"\d+(\.\d+)?", text)]
    if kind == 3 and nums:                       # a number replaced by an extreme
        a, b = rng.choice(nums)
        return text[:a] + rng.choice(EXTREMES) + text[b:]
    units = [m.span(2) for m in re.finditer(r"(\d)\s*([A-Za-z][A-Za-z/^*0-9]*)", text)]
    if kind == 4 and units:                      # a unit swapped for another dimension
        a, b = rng.choice(units)
        return text[:a] + rng.choice(UNITS) + text[b:]
    names = [m.span() for m in re.finditer(r"\b[A-Z][A-Z0-9_]*\b", text)]
    if kind == 5 and names:                      # a name replaced by an undefined one
        a, b = rng.choice(names)
        return text[:a] + rng.choice(NAMES) + text[b:]
    tokens = re.findall(r"\S+", text) or ["x"]  # token soup
    return " ".join(rng.choice(tokens) for _ in range(rng.randint(1, 40)))


def check(text: str, folder: Path) -> str | None:
    """None if the outcome is acceptable, else a description of the failure (a warning of a
    library, which would reach the user as its own text, counts as one)."""
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            read_text(text, name="fuzz.deck", folder=folder)
    except DeckError as exc:
        if exc.location is None:
            return None if "table" in str(exc) or "include" in str(exc) else f"no location: {exc}"
        n_lines = text.count("\n") + 1
        if not (1 <= exc.location.line <= max(n_lines, 1)):
            return f"location outside the file: {exc.location}"
        return None
    except Exception:  # noqa: BLE001 - the point is to catch everything else
        return traceback.format_exc(limit=3)
    return None


def run(cases: int, seed: int = 1, folder: Path = ROOT / "decks") -> list[str]:
    rng = random.Random(seed)
    bad = []
    for _ in range(cases):
        text = rng.choice(DECKS)
        for _ in range(rng.randint(1, 3)):
            text = mutate(text, rng)
        why = check(text, folder)
        if why:
            bad.append(why)
    return bad


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description="Mutation fuzzing of the deck reader: mutated demo decks must "
                                 "give a model or a located deck error, never another exception.")
    ap.add_argument("cases", nargs="?", type=int, default=100_000, help="number of mutated decks (default 100000)")
    ap.add_argument("seed", nargs="?", type=int, default=1, help="random seed (default 1)")
    args = ap.parse_args(argv)
    bad = run(args.cases, args.seed)
    print(f"{args.cases} cases, {len(bad)} non-deck exceptions")
    for b in bad[:5]:
        print("---\n" + b)
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
