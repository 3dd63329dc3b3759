"""Excitations a structure must keep its natural frequencies away from: machines and plain bands.

These are input types, below the deck and the analyses: the deck builds them (converting rpm to
Hz), the resonance check (`fem.analysis.resonance`) reads their bands. Each one validates itself
on construction and refuses a bad value with a plain ``ValueError`` that names the excitation and
the field; the deck reader adds the file, line and column.

A `Machine` turns at a fixed speed or over a speed range and excites its support at multiples
of that speed (the *orders*: 1x, 2x, ...), at the blade or vane pass frequency (number of blades
x speed) and, for an electric machine on the supply, at the line frequency and twice the line
frequency (which do not follow the speed). A `FrequencyBand` is any other source given directly
as a band of frequencies: vortex shedding of a member in a range of wind speeds, footfall,
traffic.

Every excitation yields its `Band`s: (low, high) in Hz, one per order, with the separation
margin it requires. A natural frequency f fails against a band when it lies inside
(low (1 - margin), high (1 + margin)), i.e. within the margin of some excitation frequency of
the band, measured in percent of that excitation frequency.

DEFAULT_MARGIN, 20 %, is our choice. It follows the common practice of keeping structural
natural frequencies outside about +-20 % of an operating frequency (some owners ask for 30 %);
no standard is cited for the exact figure. Set `margin` per excitation where a specification
asks for another.

Examples
--------
>>> fan = Machine("FAN", speed=(900 / 60, 1480 / 60), blades=6, node="N12")
>>> [(b.order, round(b.low, 3), round(b.high, 3)) for b in fan.bands()]
[('1x', 15.0, 24.667), ('2x', 30.0, 49.333), ('blade pass 6x', 90.0, 148.0)]
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

__all__ = ["DEFAULT_MARGIN", "DEFAULT_ORDERS", "STROUHAL_CIRCLE", "Band", "FrequencyBand", "Machine", "excitation_bands"]

DEFAULT_MARGIN = 0.20          # required separation, fraction of the excitation frequency; our choice
DEFAULT_ORDERS = (1.0, 2.0)    # multiples of the running speed checked when none are given; our choice
                               # (1x for unbalance, 2x for misalignment and looseness)
STROUHAL_CIRCLE = 0.18         # Strouhal number of a circular cylinder (EN 1991-1-4:2005 Annex E, from memory)


def _name(value, what: str) -> str:
    if not isinstance(value, str) or not value.strip():
        raise ValueError(f"{what} needs a name (a non-empty text), got {value!r}")
    return value


def _positive(value, what: str) -> float:
    """A finite number > 0 as float; what names it in the message."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise ValueError(f"{what} must be a number, got {value!r}")
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise ValueError(f"{what} must be a finite frequency above 0 Hz, got {value!r}")
    return v


def _margin(value, who: str) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real) or not math.isfinite(float(value)):
        raise ValueError(f"{who}: margin must be a number (a fraction: 0.2 for 20 %), got {value!r}")
    v = float(value)
    if not 0 <= v < 1:
        raise ValueError(f"{who}: margin must be at least 0 and below 1 (a fraction of the excitation "
                         f"frequency: 0.2 for 20 %), got {value!r}")
    return v


def _node(value, who: str) -> str | None:
    if value is not None and (not isinstance(value, str) or not value.strip()):
        raise ValueError(f"{who}: node must be a node's name or None, got {value!r}")
    return value


def _low_high_margin(band, who: str) -> None:
    """Check and store a frozen band's low <= high (Hz) and its margin."""
    low, high = _positive(band.low, f"{who}: low"), _positive(band.high, f"{who}: high")
    if high < low:
        raise ValueError(f"{who}: high ({high:g} Hz) is below low ({low:g} Hz); give the band as low, high")
    object.__setattr__(band, "low", low)
    object.__setattr__(band, "high", high)
    object.__setattr__(band, "margin", _margin(band.margin, who))


@dataclass(frozen=True)
class Band:
    """One band of excitation frequencies of one source.

    source: the excitation's name; order: what excites ('1x', '2x', 'blade pass 6x', 'line',
    '2x line', 'band'); low, high: the band in Hz (equal for a fixed frequency); margin: the
    separation required, a fraction of the excitation frequency; multiple: the factor on the
    running speed for orders that follow it (None for fixed frequencies); node: the node the
    source sits on, or None; speed: the machine's running speed (low, high) in Hz, None for a
    plain band.
    """

    source: str
    order: str
    low: float
    high: float
    margin: float
    multiple: float | None = None
    node: str | None = None
    speed: tuple[float, float] | None = None

    def __post_init__(self):
        _name(self.source, "a band")
        _low_high_margin(self, f"band {self.order!r} of {self.source}")

    @property
    def avoid(self) -> tuple[float, float]:
        """(low (1 - margin), high (1 + margin)), Hz: a natural frequency inside or on an edge fails."""
        return self.low * (1 - self.margin), self.high * (1 + self.margin)


@dataclass(frozen=True)
class Machine:
    """A rotating machine: fan, pump, compressor, motor.

    Parameters
    ----------
    name : the machine's name, used in tables and the diagram.
    speed : running speed in Hz (rpm / 60): one number for a fixed speed, or (low, high) for a
        speed range (a variable-speed drive). Stored as the pair (low, high).
    orders : multiples of the running speed that excite the support, default DEFAULT_ORDERS
        (1x and 2x). Any positive numbers (0.5 for a half-speed order); () for none.
    blades : number of blades or vanes, or None; adds the blade pass order, blades x speed.
    line : supply frequency in Hz (50 or 60) of an electric machine on the grid, or None; adds
        the line frequency and twice the line frequency, fixed whatever the speed (for a motor on
        a variable-speed drive, whose electrical frequency follows the speed, give its electrical
        orders in `orders` instead).
    node : name of the node the machine sits on, or None. The check reports each mode's
        motion there.
    margin : separation required, a fraction of the excitation frequency, 0 <= margin < 1;
        default DEFAULT_MARGIN (20 %, our choice).
    """

    name: str
    speed: float | tuple[float, float]
    orders: tuple[float, ...] = DEFAULT_ORDERS
    blades: int | None = None
    line: float | None = None
    node: str | None = None
    margin: float = DEFAULT_MARGIN

    def __post_init__(self):
        who = f"machine {_name(self.name, 'a machine')}"
        s = self.speed
        if not isinstance(s, numbers.Real) and hasattr(s, "__iter__") and not isinstance(s, (str, bytes)):
            s = tuple(s)
            if len(s) != 2:
                raise ValueError(f"{who}: speed is one running speed or a range (low, high) in Hz, "
                                 f"got {len(s)} values")
            low, high = _positive(s[0], f"{who}: speed low"), _positive(s[1], f"{who}: speed high")
            if high < low:
                raise ValueError(f"{who}: the speed range ends ({high:g} Hz) below where it starts "
                                 f"({low:g} Hz); give it as low, high")
        else:
            low = high = _positive(s, f"{who}: speed")
        object.__setattr__(self, "speed", (low, high))
        if isinstance(self.orders, (str, bytes)) or not hasattr(self.orders, "__iter__"):
            raise ValueError(f"{who}: orders must be a list of multiples of the speed (1, 2, ...), "
                             f"got {self.orders!r}")
        orders = tuple(_positive(k, f"{who}: order") for k in self.orders)
        if len(set(orders)) != len(orders):
            raise ValueError(f"{who}: an order is given twice in {orders}")
        object.__setattr__(self, "orders", orders)
        if self.blades is not None and (isinstance(self.blades, bool) or not isinstance(self.blades, numbers.Integral)
                                        or self.blades < 1):
            raise ValueError(f"{who}: blades must be a whole number of blades or vanes, 1 or more, "
                             f"got {self.blades!r}")
        if self.blades is not None:
            object.__setattr__(self, "blades", int(self.blades))
        if self.line is not None:
            object.__setattr__(self, "line", _positive(self.line, f"{who}: line"))
        if not orders and self.blades is None and self.line is None:
            raise ValueError(f"{who}: nothing excites: give orders (1x, 2x, ...), blades or line")
        _node(self.node, who)
        object.__setattr__(self, "margin", _margin(self.margin, who))

    def as_json(self) -> dict:
        """The machine for results.json: speeds in Hz and rpm, the margin in percent."""
        return {"name": self.name, "kind": "machine", "speed_Hz": list(self.speed),
                "speed_rpm": [60 * s for s in self.speed], "orders": list(self.orders), "blades": self.blades,
                "line_Hz": self.line, "node": self.node, "margin_percent": 100 * self.margin}

    @property
    def fixed(self) -> bool:
        """True for a fixed running speed."""
        return self.speed[0] == self.speed[1]

    def bands(self) -> tuple[Band, ...]:
        """The bands this machine excites: one per order, then blade pass, then the line ones."""
        lo, hi = self.speed
        s = self.speed
        out = [Band(self.name, f"{k:g}x", k * lo, k * hi, self.margin, k, self.node, s) for k in self.orders]
        if self.blades is not None:
            b = float(self.blades)
            out.append(Band(self.name, f"blade pass {self.blades}x", b * lo, b * hi, self.margin, b, self.node, s))
        if self.line is not None:
            out.append(Band(self.name, "line", self.line, self.line, self.margin, None, self.node, s))
            out.append(Band(self.name, "2x line", 2 * self.line, 2 * self.line, self.margin, None, self.node, s))
        return tuple(out)


@dataclass(frozen=True)
class FrequencyBand:
    """A plain band of excitation frequencies from a source other than a machine: vortex shedding
    of a member over a range of wind speeds (f = St v / b), footfall, traffic.

    low, high in Hz (equal for one frequency); margin a fraction, default DEFAULT_MARGIN (set
    0 when the band already holds the allowance wanted); node optional, as for a machine.
    """

    name: str
    low: float
    high: float
    margin: float = DEFAULT_MARGIN
    node: str | None = None

    def __post_init__(self):
        who = f"band {_name(self.name, 'a frequency band')}"
        _node(self.node, who)
        _low_high_margin(self, who)

    @classmethod
    def vortex_shedding(cls, name: str, width: float, wind: tuple[float, float], strouhal: float = STROUHAL_CIRCLE,
                        margin: float = DEFAULT_MARGIN, node: str | None = None) -> FrequencyBand:
        """The band of vortex-shedding frequencies f = St v / b of a member of cross-wind width b
        (m; the outside diameter of a pipe or stack) in winds v from wind[0] to wind[1] (m/s).
        The Strouhal number St defaults to STROUHAL_CIRCLE, 0.18 for a circular cylinder
        (EN 1991-1-4:2005 Annex E, from memory); give the section's own for others.

        >>> band = FrequencyBand.vortex_shedding("STACK", 0.5, (5.0, 15.0))
        >>> round(band.low, 9), round(band.high, 9)
        (1.8, 5.4)
        """
        who = f"band {_name(name, 'a frequency band')}"
        b = _above_zero(width, f"{who}: width (m)")
        if isinstance(wind, (str, bytes)) or not hasattr(wind, "__len__") or len(wind) != 2:
            raise ValueError(f"{who}: wind is a range of wind speeds (low, high) in m/s, got {wind!r}")
        v_lo, v_hi = (_above_zero(v, f"{who}: a wind speed (m/s)") for v in wind)
        if v_hi < v_lo:
            raise ValueError(f"{who}: the wind range ends ({v_hi:g} m/s) below where it starts ({v_lo:g} m/s)")
        st = _above_zero(strouhal, f"{who}: the Strouhal number")
        return cls(name, st * v_lo / b, st * v_hi / b, margin, node)

    def bands(self) -> tuple[Band, ...]:
        return (Band(self.name, "band", self.low, self.high, self.margin, None, self.node),)

    def as_json(self) -> dict:
        """The band for results.json, the margin in percent."""
        return {"name": self.name, "kind": "band", "low_Hz": self.low, "high_Hz": self.high, "node": self.node,
                "margin_percent": 100 * self.margin}


def _above_zero(value, what: str) -> float:
    """A finite number > 0 (a width, a wind speed, a ratio) as float."""
    if isinstance(value, bool) or not isinstance(value, numbers.Real) or not math.isfinite(float(value)) \
            or float(value) <= 0:
        raise ValueError(f"{what} must be a finite number above 0, got {value!r}")
    return float(value)


def excitation_bands(excitations) -> tuple[Band, ...]:
    """All bands of a sequence of excitations, in order; refuses two excitations of one name."""
    seen: set[str] = set()
    out: list[Band] = []
    for e in excitations:
        if not isinstance(e, (Machine, FrequencyBand)):
            raise ValueError(f"an excitation is a Machine or a FrequencyBand, got {type(e).__name__}")
        if e.name in seen:
            raise ValueError(f"two excitations are named {e.name!r}; give each its own name")
        seen.add(e.name)
        out.extend(e.bands())
    return tuple(out)
