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


def doc_units(doc: dict):
    """The display units a results document names (fem.display.DisplayUnits; SI when none)."""
    from ..display import SI, DisplayUnits

    du = doc.get("display_units")
    if not du or not du.get("chosen"):
        return SI
    return DisplayUnits(**{k: v for k, v in du.items() if k != "chosen"}, chosen=True)


def quantity(doc: dict, kind: str, value: float, default: tuple[float, str]) -> str:
    """An SI value as text in the document's display unit, four figures; without display units
    as before: `default` (scale, unit), e.g. (1e-3, "kN") for forces in kN."""
    units = doc_units(doc)
    k, unit = (units.per_si(kind), units.label(kind)) if units.chosen else default
    return f"{value * k:.4g} {unit}"
