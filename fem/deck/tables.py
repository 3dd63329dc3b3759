"""CSV tables a deck names (a time history's record, a response spectrum): two numbers a row,
read through the same guarded path as deck files and located row by row in their errors."""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np

from ..errors import DeckError, Location
from .sources import Sources, file_name, read_utf8, resolved

__all__ = ["read_table"]


def read_table(sources: Sources, rel: str, where: Location, deck_file: Path) -> np.ndarray:
    """Two-column CSV (time s, factor), relative to the deck file and inside its folder tree."""
    file_name(rel, "table", where)
    path = resolved(deck_file.parent / rel, "table", where)
    if sources.top_dir not in path.parents:
        raise DeckError(f"table '{rel}' is outside the deck's folder {sources.top_dir}", where)
    shown = sources.shown(path)
    lines = read_utf8(path, "table", where, shown).splitlines()
    rows, at = [], []
    fix = (f"table named at {where}; two numbers a row, separated by a comma, semicolon, tab or spaces, "
           "decimals with a point")
    for k, line in enumerate(lines, 1):
        parts = [x for x in re.split(r"[,;\s]+", line.split("#")[0]) if x]
        if not parts:
            continue                  # blank, or a comment
        vals = []
        for x in parts:
            try:
                vals.append(float(x))
            except ValueError:
                vals.append(None)
        here = Location(shown, k, 1, line)
        if all(v is None for v in vals) and not rows:
            continue                  # a header line
        if None in vals:
            bad = parts[vals.index(None)]
            here = Location(shown, k, line.find(bad) + 1, line)
            raise DeckError(f"expected two numbers in this row, found '{bad}'", here, fix)
        if len(vals) != 2 or not all(map(math.isfinite, vals)):
            raise DeckError(f"expected two finite numbers in this row, found {len(vals)}: "
                            f"{', '.join(parts)}", here, fix)
        if rows and vals[0] <= rows[-1][0]:
            raise DeckError(f"the first column must increase row by row: {vals[0]:g} follows "
                            f"{rows[-1][0]:g} (row {at[-1]})", here, f"table named at {where}")
        rows.append(vals)
        at.append(k)
    table = np.array(rows).reshape(-1, 2)
    if len(table) < 2:
        raise DeckError(f"table '{rel}' needs at least two rows of numbers (time or period, value); "
                        f"it has {len(table)}", where)
    if not table[:, 1].any():
        raise DeckError(f"table '{rel}': every value in its second column is zero, so it would give no "
                        "response", where, "check the file, or that the right column holds the values")
    return table
