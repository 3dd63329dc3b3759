"""Vibration limits: the largest motion a harmonic case may cause at named nodes over an operating range.

A `VibrationLimit` belongs to a harmonic case. It names a quantity (the amplitude of the
velocity, displacement or acceleration of each translation X, Y, Z, absolute), the nodes, the
largest value allowed (given as an amplitude, or as an RMS value, amplitude / sqrt 2 for a
harmonic), and the frequencies it holds over: a machine's speed range, a band, a range given
directly, or every frequency of the case. The check (`fem.analysis.vibration_check`) takes the
largest amplitude over the case's frequencies inside that range; a value above the limit fails
the run's design check (exit status 1), as a resonance margin does.

The limit's value is the user's: vibration criteria for machines and their supports (the
velocity zones of the ISO 10816 / ISO 20816 family, a machine maker's or an owner's figure) are
given as RMS velocities in mm/s, hence `rms`. A rule broken here raises RuleError (fem.rules);
the deck reader locates it at the limit.

Examples
--------
>>> lim = VibrationLimit("velocity", nodes=(3, 4), value=4.5e-3, rms=True, over=(10.0, 16.5), source="FAN")
>>> round(lim.amplitude * 1e3, 4), lim.describe()
(6.364, 'velocity <= 4.5 mm/s RMS over FAN (10-16.5 Hz)')
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import Location
from .rules import RuleError

__all__ = ["QUANTITIES", "VibrationLimit", "range_problem"]

# quantity -> (SI unit, unit shown, factor from SI to the unit shown)
QUANTITIES = {"velocity": ("m/s", "mm/s", 1e3), "displacement": ("m", "mm", 1e3),
              "acceleration": ("m/s^2", "m/s^2", 1.0)}


@dataclass(frozen=True, eq=False)
class VibrationLimit:
    """The largest `quantity` ('velocity', 'displacement' or 'acceleration') allowed at `nodes`
    (node indices), in each of X, Y, Z: `value` in SI (m/s, m, m/s^2), an amplitude, or an RMS
    value when `rms`; over the frequencies `over` (low, high) Hz, or every frequency of the case
    when None; `source` the machine or band whose range `over` is (None when given directly);
    `target` the nodes as written (a name or pattern), for messages."""

    quantity: str
    nodes: tuple
    value: float
    rms: bool = False
    over: tuple | None = None
    source: str | None = None
    target: str | None = None
    location: Location | None = field(default=None, compare=False)

    def __post_init__(self):
        if self.quantity not in QUANTITIES:
            raise RuleError(f"a vibration limit is on {', '.join(QUANTITIES)}, not {self.quantity!r}")
        arr = np.asarray(self.nodes, dtype=float).reshape(-1)
        if not arr.size or not np.all(np.isfinite(arr) & (arr == np.round(arr)) & (arr >= 0)):
            raise RuleError(f"limit {self.quantity}: give the nodes it holds at (node numbers from 0)")
        object.__setattr__(self, "nodes", tuple(dict.fromkeys(int(n) for n in arr)))
        v = float(self.value)
        if not (math.isfinite(v) and v > 0):
            raise RuleError(f"limit {self.quantity}: the value must be above 0, got {self.value!r}")
        object.__setattr__(self, "value", v)
        object.__setattr__(self, "rms", bool(self.rms))
        if self.over is not None:
            lo, hi = (float(x) for x in self.over)
            if not (math.isfinite(lo) and math.isfinite(hi) and 0 < lo <= hi):
                raise RuleError(f"limit {self.quantity}: over is a range of frequencies (low, high) above 0 Hz, "
                                f"low first, got {self.over!r}")
            object.__setattr__(self, "over", (lo, hi))

    @property
    def amplitude(self) -> float:
        """The largest amplitude allowed, SI: the value, or sqrt 2 times it when given as RMS."""
        return self.value * math.sqrt(2) if self.rms else self.value

    @property
    def unit(self) -> str:
        """The unit the limit is shown in (mm/s, mm, m/s^2)."""
        return QUANTITIES[self.quantity][1]

    def shown(self, si: float) -> float:
        """A value of this quantity, SI, in the unit shown."""
        return si * QUANTITIES[self.quantity][2]

    def range_text(self) -> str:
        if self.over is None:
            return "every frequency of the case"
        lo, hi = self.over
        band = f"{lo:.4g} Hz" if lo == hi else f"{lo:.4g}-{hi:.4g} Hz"
        return f"{self.source} ({band})" if self.source else band

    def describe(self) -> str:
        """One line: 'velocity <= 4.5 mm/s RMS over FAN (10-16.5 Hz)'."""
        return (f"{self.quantity} <= {self.shown(self.value):.4g} {self.unit}{' RMS' if self.rms else ''} "
                f"over {self.range_text()}")


def range_problem(case, limit: VibrationLimit) -> str | None:
    """Why `limit` cannot be checked by harmonic `case` (its sweep from fmin to fmax, or its
    listed frequencies `at`), or None: a range reaching outside the sweep (part of it would go
    unchecked), or a list of frequencies with none inside the range."""
    if limit.over is None:
        return None
    lo, hi = limit.over
    what = f"case {case.name}: limit {limit.describe()}"
    if case.at is not None:
        if not np.any((case.at >= lo) & (case.at <= hi)):
            return (f"{what}: none of the case's frequencies (at) lies in that range, so nothing would be "
                    "checked; add a frequency inside the range to at")
        return None
    if lo < case.fmin or hi > case.fmax:
        return (f"{what}: the range reaches outside the sweep ({case.fmin:.4g}-{case.fmax:.4g} Hz), so part of "
                "it would go unchecked; sweep over the whole range")
    return None
