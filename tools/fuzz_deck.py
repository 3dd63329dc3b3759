"""Mutation fuzzing of the deck reader: every outcome must be a model or a located DeckError.

python tools/fuzz_deck.py [cases] [seed]   (default 100000 cases) prints the count of other
exceptions, the target being 0. tests/test_fuzz.py runs a bounded version of the same mutations.
"""

from __future__ import annotations

import random
import re
import sys
import traceback
from pathlib import Path

from fem.deck.reader import read_text
from fem.errors import DeckError

ROOT = Path(__file__).resolve().parents[1]
DECKS = [p.read_text() for p in sorted((ROOT / "decks").glob("*.deck"))]
EXTREMES = ["0", "-1", "1e308", "-1e308", "nan", "inf", "1e-320", "00", "9" * 40]
UNITS = ["m", "kN", "kg", "s", "Hz", "GPa", "deg", "kg/m^3", "m/s^2", "percent", "N*m"]
NAMES = ["ZZ9", "A_", "Q*", "nodeX", "S355x", "COLUMN"]


def mutate(text: str, rng: random.Random) -> str:
    kind = rng.randrange(7)
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
    """None if the outcome is acceptable, else a description of the failure."""
    try:
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


if __name__ == "__main__":
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 100_000
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 1
    bad = run(n, seed)
    print(f"{n} cases, {len(bad)} non-deck exceptions")
    for b in bad[:5]:
        print("---\n" + b)
