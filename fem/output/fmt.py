"""Number formats shared by the run summary and the report."""

from __future__ import annotations

import math

__all__ = ["percent"]


def percent(x, digits: int = 1) -> str:
    """A fraction as a percentage: 'n/a' where it is undefined (None or NaN: no mass moves in
    that direction, 0/0), and never '-0.0%' from round-off.

    >>> percent(0.91408), percent(-1e-17), percent(float("nan"))
    ('91.4%', '0.0%', 'n/a')
    """
    if x is None or not math.isfinite(x):
        return "n/a"
    text = f"{100 * x:.{digits}f}"
    if text.startswith("-") and float(text) == 0:
        text = text[1:]
    return text + "%"
