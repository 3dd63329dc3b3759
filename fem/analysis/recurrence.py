"""Exact piecewise-linear recurrence coefficients for unit-mass modal equations.

q'' + 2 zeta w q' + w^2 q = p(t), p linear within each step (Nigam & Jennings 1969).
"""

from __future__ import annotations

import numpy as np

__all__ = ["recurrence_coefficients", "integrate_modal"]


def recurrence_coefficients(omega, zeta, dt):
    """Coefficients A, B, C, D, Ap, Bp, Cp, Dp, each (k,), for unit modal mass (k = w^2).

    q_{i+1} = A q_i + B v_i + C p_i + D p_{i+1}; v_{i+1} = Ap q_i + Bp v_i + Cp p_i + Dp p_{i+1}.
    Requires w > 0 and 0 <= zeta < 1 (underdamped); raises ValueError otherwise.
    """
    w = np.atleast_1d(np.asarray(omega, dtype=float))
    z = np.broadcast_to(np.asarray(zeta, dtype=float), w.shape)
    if np.any(w <= 0):
        raise ValueError("recurrence_coefficients needs omega > 0 (rigid modes not handled yet)")
    if np.any((z < 0) | (z >= 1)):
        raise ValueError(f"damping ratio must satisfy 0 <= zeta < 1; got {z[(z < 0) | (z >= 1)]}")
    sq = np.sqrt(1 - z**2)
    wd = w * sq
    e = np.exp(-z * w * dt)
    s, c = np.sin(wd * dt), np.cos(wd * dt)
    zp = z / sq
    k = w**2
    A = e * (zp * s + c)
    B = e * s / wd
    C = (2 * z / (w * dt) + e * (((1 - 2 * z**2) / (wd * dt) - zp) * s - (1 + 2 * z / (w * dt)) * c)) / k
    D = (1 - 2 * z / (w * dt) + e * ((2 * z**2 - 1) / (wd * dt) * s + 2 * z / (w * dt) * c)) / k
    Ap = -e * w * s / sq
    Bp = e * (c - zp * s)
    Cp = (-1 / dt + e * ((w / sq + zp / dt) * s + c / dt)) / k
    Dp = (1 - e * (zp * s + c)) / (k * dt)
    return dict(A=A, B=B, C=C, D=D, Ap=Ap, Bp=Bp, Cp=Cp, Dp=Dp)


def integrate_modal(omega, zeta, dt, p, q0=None, v0=None):
    """Step the exact recurrence, vectorised over modes. p (n_steps, k) at t_i = i dt.

    Returns q, v, each (n_steps, k). Python loop over time steps (lfilter path not written yet).
    """
    c = recurrence_coefficients(omega, zeta, dt)
    p = np.asarray(p, dtype=float)
    n, k = p.shape
    q = np.zeros((n, k))
    v = np.zeros((n, k))
    q[0] = 0.0 if q0 is None else q0
    v[0] = 0.0 if v0 is None else v0
    for i in range(n - 1):
        q[i + 1] = c["A"] * q[i] + c["B"] * v[i] + c["C"] * p[i] + c["D"] * p[i + 1]
        v[i + 1] = c["Ap"] * q[i] + c["Bp"] * v[i] + c["Cp"] * p[i] + c["Dp"] * p[i + 1]
    return q, v
