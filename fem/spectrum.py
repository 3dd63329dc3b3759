"""Response spectra: design shapes and tables of pseudo-acceleration against period, an input the
deck builds and the spectrum case reads."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Spectrum", "damping_correction"]


def damping_correction(zeta) -> np.ndarray:
    """eta = sqrt(10 / (5 + xi)) >= 0.55, xi the viscous damping ratio in percent: the damping
    correction factor of the horizontal elastic spectrum of EN 1998-1:2004 Sec. 3.2.2.2(3),
    Eq. 3.6 (eta = 1 at 5 %). zeta (any shape) as a ratio."""
    return np.maximum(np.sqrt(10.0 / (5.0 + 100.0 * np.asarray(zeta, float))), 0.55)


@dataclass(frozen=True)
class Spectrum:
    """Pseudo-acceleration S_a(T) in m/s^2.

    shape 'twoperiod' (params S_DS, S_D1 in m/s^2, T_L in s): the two-period design shape of
    ASCE/SEI 7-16 Sec. 11.4.6 (Eqs. 11.4-5 to 11.4-8).
    shape 'plateau' (params a_g in m/s^2, S, T_B, T_C, T_D in s): the horizontal elastic shape
    of EN 1998-1:2004 Sec. 3.2.2.2 (Eqs. 3.2-3.5) scaled by its damping correction eta (Eq. 3.6,
    `damping_correction`) at the damping ratio of each ordinate.
    shape 'table' (table (m, 2): period s, S_a m/s^2): linear between points; beyond the last
    period S_a falls as 1/T^2 (constant spectral displacement), below the first it is held
    (warned by the case). With `made_for` (the damping ratio the table was made for) an
    ordinate at another ratio zeta is scaled by eta(zeta) / eta(made_for) (the same Eq. 3.6);
    without it the table is used as it is.
    The two-period shape has no damping correction: it is the 5 %-damped design spectrum.

    `zeta` is the ratio used when a call gives none (the drawn curve); a response-spectrum case
    passes each mode's own ratio: spectrum(T, zeta) with T and zeta of one shape."""

    shape: str
    params: tuple = ()
    table: np.ndarray | None = None
    zeta: float = 0.05
    made_for: float | None = None

    def damping_factor(self, zeta=None) -> np.ndarray:
        """Factor on the ordinates for damping ratio(s) zeta (default self.zeta): eta(zeta) for
        'plateau', eta(zeta) / eta(made_for) for a table with made_for, otherwise 1."""
        z = np.asarray(self.zeta if zeta is None else zeta, float)
        if self.shape == "plateau":
            return damping_correction(z)
        if self.shape == "table" and self.made_for is not None:
            return damping_correction(z) / damping_correction(self.made_for)
        return np.ones_like(z)

    def __call__(self, T, zeta=None) -> np.ndarray:
        T = np.asarray(T, dtype=float)
        if self.shape == "twoperiod":
            sds, sd1, tl = self.params
            t0, ts = 0.2 * sd1 / sds, sd1 / sds
            Tp = np.maximum(T, 1e-12)
            return np.select([T < t0, T <= ts, T <= tl],
                             [sds * (0.4 + 0.6 * T / t0), sds * np.ones_like(T), sd1 / Tp],
                             sd1 * tl / Tp**2)
        if self.shape == "plateau":
            ag, s, tb, tc, td = self.params
            eta = self.damping_factor(zeta)
            Tp = np.maximum(T, 1e-12)
            return np.select([T <= tb, T <= tc, T <= td],
                             [ag * s * (1 + T / tb * (2.5 * eta - 1)), 2.5 * ag * s * eta * np.ones_like(T),
                              2.5 * ag * s * eta * tc / Tp],
                             2.5 * ag * s * eta * tc * td / Tp**2)
        if self.shape == "table":
            tt, sa = self.table[:, 0], self.table[:, 1]
            inside = np.interp(T, tt, sa)
            out = np.where(T > tt[-1], sa[-1] * (tt[-1] / np.maximum(T, 1e-12)) ** 2, inside)
            return out if zeta is None else out * self.damping_factor(zeta)
        raise ValueError(f"unknown spectrum shape {self.shape!r}")

    def zpa(self) -> float:
        """Rigid (zero-period) acceleration, m/s^2: the ground's own, whatever the damping."""
        return float(self(np.array([0.0]))[0])
