"""Response-spectrum tools: design-spectrum shapes, modal correlation and combination rules."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Spectrum", "combine", "combine_directions", "cqc_correlation"]


@dataclass(frozen=True)
class Spectrum:
    """Pseudo-acceleration S_a(T) in m/s^2.

    shape 'twoperiod' (params S_DS, S_D1 in m/s^2, T_L in s): the two-period design shape of
    ASCE/SEI 7-16 Sec. 11.4.6 (Eqs. 11.4-5 to 11.4-8).
    shape 'plateau' (params a_g in m/s^2, S, T_B, T_C, T_D in s): the horizontal elastic shape
    of EN 1998-1:2004 Sec. 3.2.2.2 (Eqs. 3.2-3.6) with eta = sqrt(10/(5 + xi%)) >= 0.55 from
    the damping ratio `zeta`.
    shape 'table' (table (m, 2): period s, S_a m/s^2): linear between points; beyond the last
    period S_a falls as 1/T^2 (constant spectral displacement), below the first it is held
    (warned by the case)."""

    shape: str
    params: tuple = ()
    table: np.ndarray | None = None
    zeta: float = 0.05

    def __call__(self, T) -> np.ndarray:
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
            eta = max(np.sqrt(10.0 / (5.0 + 100.0 * self.zeta)), 0.55)
            Tp = np.maximum(T, 1e-12)
            return np.select([T <= tb, T <= tc, T <= td],
                             [ag * s * (1 + T / tb * (2.5 * eta - 1)), 2.5 * ag * s * eta * np.ones_like(T),
                              2.5 * ag * s * eta * tc / Tp],
                             2.5 * ag * s * eta * tc * td / Tp**2)
        if self.shape == "table":
            tt, sa = self.table[:, 0], self.table[:, 1]
            inside = np.interp(T, tt, sa)
            return np.where(T > tt[-1], sa[-1] * (tt[-1] / np.maximum(T, 1e-12)) ** 2, inside)
        raise ValueError(f"unknown spectrum shape {self.shape!r}")

    def zpa(self) -> float:
        """Rigid (zero-period) acceleration, m/s^2."""
        return float(self(np.array([0.0]))[0])


def cqc_correlation(omega, zeta) -> np.ndarray:
    """Modal correlation coefficients rho_ij (k, k) (Der Kiureghian 1981, mixed damping):
    8 sqrt(zi zj)(zi + r zj) r^1.5 / ((1 - r^2)^2 + 4 zi zj r (1 + r^2) + 4 (zi^2 + zj^2) r^2),
    r = w_j / w_i."""
    w = np.asarray(omega, float)
    z = np.asarray(zeta, float)
    wi, wj = w[:, None], w[None, :]
    zi, zj = z[:, None], z[None, :]
    with np.errstate(divide="ignore", invalid="ignore"):
        r = wj / wi
        num = 8 * np.sqrt(zi * zj) * (zi + r * zj) * r**1.5
        den = (1 - r**2) ** 2 + 4 * zi * zj * r * (1 + r**2) + 4 * (zi**2 + zj**2) * r**2
        rho = num / den
    rho = np.where(np.isfinite(rho), rho, 0.0)
    np.fill_diagonal(rho, 1.0)
    return rho


def combine(R, rule: str, rho=None) -> np.ndarray:
    """Combine per-mode peaks R (k, ...) by 'srss', 'cqc' (needs rho (k, k)) or 'abs'."""
    R = np.asarray(R, float)
    if rule == "srss":
        return np.sqrt(np.sum(R**2, axis=0))
    if rule == "abs":
        return np.sum(np.abs(R), axis=0)
    if rule == "cqc":
        s = np.einsum("i...,ij,j...->...", R, rho, R)
        return np.sqrt(np.maximum(s, 0.0))
    raise ValueError(f"unknown combination rule {rule!r}")


def combine_directions(Rd, rule: str) -> np.ndarray:
    """Combine responses to each direction Rd (d, ...) (already modally combined, >= 0):
    'srss', or '100/30': max over the choice of the leading direction of R_a + 0.3 sum of the
    others (ASCE/SEI 7-16 Sec. 12.5.3.1(a); EN 1998-1 Sec. 4.3.3.5)."""
    Rd = np.abs(np.asarray(Rd, float))
    if len(Rd) == 1:
        return Rd[0]
    if rule == "srss":
        return np.sqrt(np.sum(Rd**2, axis=0))
    if rule == "100/30":
        total = Rd.sum(axis=0)
        return np.max([Rd[a] + 0.3 * (total - Rd[a]) for a in range(len(Rd))], axis=0)
    raise ValueError(f"unknown direction rule {rule!r}")
