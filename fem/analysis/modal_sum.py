"""Modal and directional combination rules of a response-spectrum case: CQC correlation, SRSS,
absolute sum, 100/30."""

from __future__ import annotations

import numpy as np

__all__ = ["combine", "combine_directions", "cqc_correlation"]


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
