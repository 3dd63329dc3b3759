"""Quantities with physical dimensions; everything is converted to SI on reading.

A dimension is a tuple of exponents of (kg, m, s, rad-free). Angles are dimensionless
(rad = 1, deg = pi/180).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["DIMENSIONS", "UNITS", "UNIT_EXAMPLES", "Quantity", "dim_name", "unit_remedy", "unit_suggestion", "unit_value"]

# Our choice: no formula of this field raises a unit beyond a small power (m^4 for a second
# moment of area); a larger one is a typing slip, and its exponent would grow without bound.
MAX_UNIT_POWER = 12

# exponents of (mass, length, time)
Dim = tuple[int, int, int]
NONE: Dim = (0, 0, 0)


@dataclass(frozen=True)
class Quantity:
    value: float
    dim: Dim = NONE

    def _same(self, other: Quantity, op: str) -> None:
        if self.dim != other.dim:
            raise ArithmeticError(f"cannot {op} {dim_name(self.dim)} and {dim_name(other.dim)}")

    def __add__(self, o):
        self._same(o, "add")
        return Quantity(self.value + o.value, self.dim)

    def __sub__(self, o):
        self._same(o, "subtract")
        return Quantity(self.value - o.value, self.dim)

    def __mul__(self, o):
        return Quantity(self.value * o.value, tuple(a + b for a, b in zip(self.dim, o.dim)))

    def __truediv__(self, o):
        if o.value == 0:
            raise ArithmeticError("division by zero")
        return Quantity(self.value / o.value, tuple(a - b for a, b in zip(self.dim, o.dim)))

    def __neg__(self):
        return Quantity(-self.value, self.dim)

    def __pow__(self, o):
        if o.dim != NONE:
            raise ArithmeticError("an exponent must be a plain number")
        p = o.value
        if self.dim != NONE and p != int(p):
            raise ArithmeticError("a quantity with units can only be raised to a whole power")
        if self.dim != NONE and abs(p) > MAX_UNIT_POWER:
            raise ArithmeticError(f"a quantity with units raised to the power {p:g} has no physical meaning "
                                  f"(the limit is {MAX_UNIT_POWER})")
        if self.value < 0 and p != int(p):
            raise ArithmeticError(f"the power {p:g} of a negative number ({self.value:g}) is not a real number; "
                                  "for an odd root of a negative value put the sign outside, e.g. -(8^(1/3))")
        if self.value == 0 and p < 0:
            raise ArithmeticError(f"0 to a negative power ({p:g}) is a division by zero")
        return Quantity(self.value ** p, tuple(int(a * p) for a in self.dim))


_k, _m, _s = (1, 0, 0), (0, 1, 0), (0, 0, 1)
LENGTH, MASS, TIME = (0, 1, 0), (1, 0, 0), (0, 0, 1)
FORCE = (1, 1, -2)
PRESSURE = (1, -1, -2)
DENSITY = (1, -3, 0)
ACCEL = (0, 1, -2)
MOMENT = (1, 2, -2)
FREQ = (0, 0, -1)

DIMENSIONS: dict[Dim, str] = {
    NONE: "a plain number", LENGTH: "a length", MASS: "a mass", TIME: "a time",
    FORCE: "a force", PRESSURE: "a stress or modulus", DENSITY: "a density",
    ACCEL: "an acceleration", MOMENT: "a moment", FREQ: "a frequency",
    (0, 2, 0): "an area", (0, 4, 0): "a second moment of area", (1, 0, -2): "a force per length",
    (1, -1, 0): "a mass per length", (1, 2, 0): "a rotary inertia", (0, 1, -1): "a velocity",
    (0, 3, 0): "a volume", (1, 0, -1): "a damping per length", (1, -2, -2): "a force per volume",
}


def dim_name(d: Dim) -> str:
    if d in DIMENSIONS:
        return DIMENSIONS[d]
    names = ("kg", "m", "s")
    return " ".join(f"{n}^{e}" for n, e in zip(names, d) if e) or "a plain number"


# symbol -> (factor to SI, dimension)
UNITS: dict[str, tuple[float, Dim]] = {
    "m": (1.0, LENGTH), "mm": (1e-3, LENGTH), "cm": (1e-2, LENGTH), "km": (1e3, LENGTH),
    "in": (0.0254, LENGTH), "ft": (0.3048, LENGTH),
    "kg": (1.0, MASS), "g": (1e-3, MASS), "t": (1e3, MASS), "lb": (0.45359237, MASS),
    "s": (1.0, TIME), "ms": (1e-3, TIME), "min": (60.0, TIME),
    "N": (1.0, FORCE), "kN": (1e3, FORCE), "MN": (1e6, FORCE), "kip": (4448.2216152605, FORCE),
    "lbf": (4.4482216152605, FORCE),
    "Pa": (1.0, PRESSURE), "kPa": (1e3, PRESSURE), "MPa": (1e6, PRESSURE),
    "GPa": (1e9, PRESSURE), "psi": (6894.757293168, PRESSURE), "ksi": (6894757.293168, PRESSURE),
    "Hz": (1.0, FREQ), "rpm": (1.0 / 60.0, FREQ),
    "rad": (1.0, NONE), "deg": (math.pi / 180.0, NONE), "percent": (0.01, NONE),
    "gee": (9.80665, ACCEL),
}


def unit_value(symbol: str) -> Quantity | None:
    """The SI quantity of one unit symbol, or None if unknown."""
    entry = UNITS.get(symbol)
    return Quantity(*entry) if entry else None


# other spellings of units a user may type, -> the symbol of the deck
_SPELLINGS = {
    "tonne": "t", "tonnes": "t", "ton": "t", "tons": "t", "kgs": "kg", "kilogram": "kg", "kilograms": "kg",
    "gram": "g", "grams": "g", "lbs": "lb", "pound": "lb", "pounds": "lb",
    "meter": "m", "meters": "m", "metre": "m", "metres": "m", "millimeter": "mm", "millimetre": "mm",
    "inch": "in", "inches": "in", "foot": "ft", "feet": "ft",
    "sec": "s", "secs": "s", "second": "s", "seconds": "s", "msec": "ms", "minute": "min", "minutes": "min",
    "newton": "N", "newtons": "N", "kips": "kip", "degree": "deg", "degrees": "deg", "radian": "rad",
    "radians": "rad", "pct": "percent", "g0": "gee", "rps": "Hz", "cps": "Hz",
}


def unit_suggestion(word: str) -> str | None:
    """The deck's unit symbol for another spelling of it (tonne -> t, KN -> kN), or None."""
    if word in _SPELLINGS:
        return _SPELLINGS[word]
    lower = {u.lower(): u for u in UNITS}
    return lower.get(word.lower()) or _SPELLINGS.get(word.lower())


# an example of a value with its unit for each dimension a deck asks for, and the assume that
# would let bare numbers stand for it (None where no single assume does)
UNIT_EXAMPLES = {
    LENGTH: ("6 m", "length in m"), MASS: ("2.5 t", "mass in t"), TIME: ("0.01 s", "time in s"),
    FORCE: ("12 kN", "force in kN"), PRESSURE: ("210 GPa", "stress in MPa"),
    DENSITY: ("7850 kg/m^3", None), ACCEL: ("0.25 gee", None), MOMENT: ("20 kN*m", None),
    FREQ: ("5 Hz", None), (1, 0, -2): ("4 kN/m", None), (1, -1, 0): ("12 kg/m", None),
    (1, 2, 0): ("0.4 t*m^2", None),
}


def unit_remedy(need, got) -> str:
    """A hint for a value of the wrong kind that is a common slip: a weight for a mass (divide by
    g0), a period for a frequency, a translational stiffness for a rotational one."""
    weight = tuple(a + b for a, b in zip(need, ACCEL))
    if got == weight:
        example = {MASS: "25 kN / g0", DENSITY: "78.5 kN/m^3 / g0", (1, -1, 0): "0.5 kN/m / g0"}
        return (f"this is a weight: divide by g0 for {dim_name(need)}"
                + (f", e.g. {example[need]}" if need in example else ""))
    if need == FREQ and got == TIME:
        return "a frequency is one over the period: write it in Hz or rpm, or as 1 / (0.5 s)"
    if need == TIME and got == FREQ:
        return "a time is one over the frequency: write it in s, or as 1 / (2 Hz)"
    if need == MOMENT and got == (1, 0, -2):
        return "a rotational stiffness is a moment per radian, e.g. rz = 2e5 N*m"
    return ""
