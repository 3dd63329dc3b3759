"""Rayleigh and modal damping ratios."""

from __future__ import annotations

import numpy as np

from ..errors import ModelError

__all__ = ["case_ratios", "modal_ratios", "rayleigh_coefficients", "rayleigh_ratios"]


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


def case_ratios(case, omega, below_one: bool = False) -> np.ndarray:
    """modal_ratios for a response case's options. Rayleigh damping through two anchors gives
    negative ratios (energy fed in, growth without bound) below the lower anchor when the upper
    ratio is much larger: refused. Ratios of 1 or more (overdamped modes, far outside the
    anchors) are refused too where the method needs `below_one`."""
    opt = case.options
    zeta = modal_ratios(omega, opt["damping"], opt.get("rayleigh"))
    bad = np.flatnonzero((zeta < 0) | ((zeta >= 1) if below_one else False))
    if bad.size:
        j = int(bad[0])
        limit = "outside 0 to 1" if below_one else "below 0"
        raise ModelError(f"case {case.name}: Rayleigh damping gives mode {j + 1} ({omega[j] / (2 * np.pi):.4g} Hz) "
                         f"a ratio of {zeta[j]:.3g}, {limit}; choose anchor frequencies that bracket "
                         "the retained modes")
    return zeta
