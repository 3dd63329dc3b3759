"""Viscous damping of the modes: a modal ratio for every mode, a ratio per mode, or Rayleigh
damping (by its coefficients or by two anchor frequencies); an input the deck builds and the
response cases use."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .rules import RuleError
from .rules import g as _g
from .rules import same_fields as _same

__all__ = ["Damping", "modal_ratios", "rayleigh_coefficients", "rayleigh_ratios"]


def rayleigh_coefficients(f1, zeta1, f2, zeta2):
    """a0 (1/s), a1 (s) of C = a0 M + a1 K giving zeta1 at f1 and zeta2 at f2 (Hz)."""
    if not (f1 > 0 and f2 > 0 and f1 != f2):
        raise ValueError(f"Rayleigh damping needs two distinct positive frequencies; got {f1}, {f2} Hz")
    wi, wj = 2 * np.pi * f1, 2 * np.pi * f2
    den = wj**2 - wi**2
    a0 = 2 * wi * wj * (zeta1 * wj - zeta2 * wi) / den
    a1 = 2 * (zeta2 * wj - zeta1 * wi) / den
    return float(a0), float(a1)


def rayleigh_ratios(omega, a0, a1):
    """zeta = a0/(2w) + a1 w/2 per mode, shape (k,); rigid modes (w = 0) get 0."""
    w = np.asarray(omega, dtype=float)
    out = np.zeros_like(w)
    pos = w > 0
    out[pos] = a0 / (2 * w[pos]) + a1 * w[pos] / 2
    return out


def modal_ratios(omega, ratios=None, rayleigh=None):
    """Damping ratio of each mode (k,): Rayleigh from (f1, z1, f2, z2) or from its coefficients
    (a0, a1) if given, else the list `ratios` (one value for all modes, or one per mode; the
    last repeats for higher modes)."""
    w = np.asarray(omega, dtype=float)
    if rayleigh is not None:
        a0, a1 = rayleigh if len(rayleigh) == 2 else rayleigh_coefficients(*rayleigh)
        return rayleigh_ratios(w, a0, a1)
    z = np.atleast_1d(np.asarray(0.0 if ratios is None else ratios, dtype=float))
    out = np.empty_like(w)
    n = min(len(z), len(w))
    out[:n] = z[:n]
    out[n:] = z[-1]
    return out


@dataclass(frozen=True, kw_only=True, eq=False)
class Damping:
    """Viscous damping of the modes, in one of three forms (none given: undamped).

    zeta : ratios, one for every mode or one per mode from the first (the last repeats)
    rayleigh : coefficients (a0 1/s, a1 s) of C = a0 M + a1 K
    anchors : (f1 Hz, zeta1, f2 Hz, zeta2), the Rayleigh damping with zeta1 at f1 and zeta2 at f2

    Examples
    --------
    >>> Damping(zeta=0.02).ratios([10.0, 50.0])
    array([0.02, 0.02])
    >>> Damping(anchors=(1.0, 0.02, 10.0, 0.02)).ratios([2 * np.pi]).round(4)
    array([0.02])
    """

    zeta: np.ndarray | None = None
    rayleigh: tuple[float, float] | None = None
    anchors: tuple[float, float, float, float] | None = None

    def __post_init__(self):
        if sum(x is not None for x in (self.zeta, self.rayleigh, self.anchors)) > 1:
            raise RuleError("give damping = ... or rayleigh = ..., not both", "damping", "rayleigh")
        if self.zeta is not None:
            z = np.array(self.zeta, dtype=float).reshape(-1)
            object.__setattr__(self, "zeta", z)
            if not z.size or not np.all((z >= 0) & (z < 1)):
                big = z[z >= 1]
                raise RuleError("damping: ratios lie from 0 to below 1 (e.g. 2 percent)", "damping",
                                hint=f"{_g(big[0])} is {_g(100 * big[0])} %; for {_g(big[0])} % write "
                                     f"{_g(big[0])} percent" if len(big) and big[0] < 1e300 else "")
        if self.rayleigh is not None:
            a0, a1 = coefficients = tuple(float(x) for x in self.rayleigh)
            object.__setattr__(self, "rayleigh", coefficients)
            if not (a0 >= 0 and a1 >= 0 and a0 + a1 > 0):
                raise RuleError("rayleigh: the coefficients cannot be negative and not both zero", "rayleigh")
        if self.anchors is not None:
            f1, z1, f2, z2 = anchors = tuple(float(x) for x in self.anchors)
            object.__setattr__(self, "anchors", anchors)
            if not (f1 > 0 and f2 > 0 and f1 != f2):
                raise RuleError("rayleigh: two different positive frequencies are needed", "rayleigh")
            if not (0 <= z1 < 1 and 0 <= z2 < 1):
                raise RuleError("rayleigh: ratios lie from 0 to below 1 (e.g. 2 percent)", "rayleigh",
                                hint="write the ratios with their unit, e.g. 2 percent")

    def ratios(self, omega) -> np.ndarray:
        """The damping ratio of each mode of circular frequency omega (k,) rad/s, shape (k,)."""
        return modal_ratios(omega, self.zeta, self.rayleigh if self.rayleigh is not None else self.anchors)

    __eq__ = _same        # arrays by value; fields marked compare=False (locations) left out
    __hash__ = None
