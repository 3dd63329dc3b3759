"""Free vibration by modal superposition: closed-form damped response of each mode."""

from __future__ import annotations

import numpy as np

__all__ = ["free_response", "modal_initial_conditions"]


def modal_initial_conditions(phi, M, u0, v0):
    """eta(0) = phi^T M u0 and eta'(0) = phi^T M v0 for mass-normalised phi (n, k); (k,) each."""
    return phi.T @ (M @ u0), phi.T @ (M @ v0)


def free_response(omega, zeta, q0, v0, t):
    """Damped free vibration of unit-mass modal equations, exactly.

    q = e^{-zeta w t} [q0 cos wd t + (v0 + zeta w q0)/wd sin wd t], wd = w sqrt(1 - zeta^2)
    (Chopra 2017 Eq. 2.2.4). Rigid-body modes (w = 0) move as q0 + v0 t.

    Parameters
    ----------
    omega, zeta, q0, v0 : (k,) arrays; zeta < 1
    t : (m,) times, s

    Returns
    -------
    q, v : (m, k) modal displacement and velocity
    """
    w, z = np.asarray(omega, float), np.asarray(zeta, float)
    if np.any(z >= 1) or np.any(z < 0):
        raise ValueError("damping ratios must lie in [0, 1)")
    t = np.asarray(t, float)[:, None]
    wd = w * np.sqrt(1 - z**2)
    rigid = w == 0
    wd_safe = np.where(rigid, 1.0, wd)
    e = np.exp(-z * w * t)
    c, s = np.cos(wd * t), np.sin(wd * t)
    b = (v0 + z * w * q0) / wd_safe
    q = e * (q0 * c + b * s)
    v = e * ((-z * w) * (q0 * c + b * s) + (-q0 * wd * s + b * wd * c))
    q = np.where(rigid, q0 + v0 * t, q)
    v = np.where(rigid, v0 + 0 * t, v)
    return q, v
