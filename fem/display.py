"""Display units: the units the summary, the report and the CSV tables show (results.json stays
SI, with its units in its key names).

Chosen by the deck (``settings { units = engineering }`` or ``units = "mm, kN, MPa"``) or on the
command line (``quaver run DECK --units mm,kN,MPa``; it wins over the deck). Without a choice
everything is shown as before, in SI (m, N, N m, Pa, Hz), and the tables keep their headers.

With a choice, values below `ZERO_TOL` of the largest |value| of the same quantity in the same
case show as 0: a static solve's rounding measured here stays below 1e-12 of the loads
(fem.analysis.static.SOLVE_TOL is 1e-10, the rounding check's measured values <= 1e-12), so
1e-9 removes round-off noise (a -9.1e-16 beside 269.5 kN) with a margin of 1000 while staying
five orders below the four significant figures shown.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["DisplayUnits", "SI", "UNIT_SETS", "ZERO_TOL", "parse_units", "tidy"]

ZERO_TOL = 1e-9

# unit name -> SI value of one unit, per quantity
_TABLES = {
    "length": {"m": 1.0, "cm": 1e-2, "mm": 1e-3},
    "force": {"N": 1.0, "kN": 1e3, "MN": 1e6},
    "moment": {"N*m": 1.0, "kN*m": 1e3, "MN*m": 1e6, "N*mm": 1e-3, "kN*mm": 1.0},
    "stress": {"Pa": 1.0, "kPa": 1e3, "MPa": 1e6, "GPa": 1e9, "N/mm^2": 1e6},
    "frequency": {"Hz": 1.0},
}
_ALIASES = {"Nm": "N*m", "kNm": "kN*m", "MNm": "MN*m", "N m": "N*m", "kN m": "kN*m", "Nmm": "N*mm",
            "kNmm": "kN*mm", "N/mm2": "N/mm^2"}
UNIT_SETS = {"si": "m, N, N*m, Pa, Hz", "engineering": "mm, kN, kN*m, MPa, Hz"}


@dataclass(frozen=True)
class DisplayUnits:
    """The unit of each shown quantity (names as in the tables above); `chosen` is False for the
    default SI display, which keeps the earlier texts and tables."""

    length: str = "m"
    force: str = "N"
    moment: str = "N*m"
    stress: str = "Pa"
    frequency: str = "Hz"
    chosen: bool = False

    def per_si(self, quantity: str) -> float:
        """Display units in one SI unit of `quantity` (multiply an SI value by it)."""
        return 1.0 / _TABLES[quantity][getattr(self, quantity)]

    def show(self, quantity: str, value):
        """An SI value (or array) in the display unit."""
        return np.asarray(value, float) * self.per_si(quantity) if np.ndim(value) else float(value) * self.per_si(quantity)

    def label(self, quantity: str) -> str:
        """The unit as text: 'kN m', 'MPa'."""
        return getattr(self, quantity).replace("*", " ")

    def header(self, quantity: str) -> str:
        """The unit for a CSV header: 'kN_m', 'N_per_mm2'."""
        return getattr(self, quantity).replace("*", "_").replace("/", "_per_").replace("^", "")

    def text(self) -> str:
        return ", ".join(getattr(self, q) for q in _TABLES)


SI = DisplayUnits()


def parse_units(text: str) -> DisplayUnits:
    """Display units from a named set ('si', 'engineering') or a list of units separated by
    commas ('mm, kN, MPa'); the moment follows the force and the length unless given
    ('kN' with 'mm' gives kN*mm only when written; by default the force times metres).
    ValueError names what is not understood and what is."""
    words = text.strip()
    if words.lower() in UNIT_SETS:
        words = UNIT_SETS[words.lower()]
    got: dict[str, str] = {}
    for raw in words.split(","):
        unit = _ALIASES.get(raw.strip(), raw.strip())
        if not unit:
            continue
        hit = [q for q, table in _TABLES.items() if unit in table]
        if not hit:
            known = "; ".join(f"{q}: {', '.join(t)}" for q, t in _TABLES.items())
            raise ValueError(f"unknown display unit '{raw.strip()}'; units: {known}; or a named set: "
                             f"{', '.join(UNIT_SETS)}")
        q = hit[0]
        if q in got and got[q] != unit:
            raise ValueError(f"two units for {q}: {got[q]} and {unit}; give one")
        got[q] = unit
    if not got:
        raise ValueError(f"no display unit given; write e.g. 'mm, kN, MPa' or a named set: {', '.join(UNIT_SETS)}")
    if "moment" not in got and "force" in got:
        got["moment"] = got["force"] + "*m"
    return DisplayUnits(**got, chosen=True)


def tidy(values, scale=None, rel: float = ZERO_TOL):
    """`values` with every entry below `rel` of `scale` (default: their largest |value|) set to
    0, the sign of a rounded zero dropped."""
    v = np.array(values, float)
    top = np.nanmax(np.abs(v), initial=0.0) if scale is None else scale
    v[np.abs(v) < rel * top] = 0.0
    return v + 0.0
