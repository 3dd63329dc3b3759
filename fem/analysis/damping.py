"""The damping ratios a response case gives its modes, refused where the method cannot use them.
The forms of damping, their ratios and the Rayleigh formulas are `fem.damping`."""

from __future__ import annotations

import numpy as np

from ..errors import ModelError

__all__ = ["case_ratios"]


def case_ratios(case, omega, below_one: bool = False, added=0.0) -> np.ndarray:
    """case.damping.ratios(omega) plus the ratios `added` to each mode (the damping of springs
    between nodes, fem.analysis.spring_damping), checked. Rayleigh damping through two anchors gives
    negative ratios (energy fed in, growth without bound) below the lower anchor when the upper
    ratio is much larger: refused. Ratios of 1 or more (overdamped modes, far outside the
    anchors) are refused too where the method needs `below_one`."""
    zeta = case.damping.ratios(omega) + added
    bad = np.flatnonzero((zeta < 0) | ((zeta >= 1) if below_one else False))
    if bad.size:
        j = int(bad[0])
        limit = "outside 0 to 1" if below_one else "below 0"
        raise ModelError(f"case {case.name}: Rayleigh damping gives mode {j + 1} ({omega[j] / (2 * np.pi):.4g} Hz) "
                         f"a ratio of {zeta[j]:.3g}, {limit}; choose anchor frequencies that bracket "
                         "the retained modes")
    return zeta
