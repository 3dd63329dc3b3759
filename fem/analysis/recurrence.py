"""Exact piecewise-linear recurrence for unit-mass modal equations, vectorised over modes.

q'' + 2 zeta w q' + w^2 q = p(t), p linear within each step (Nigam & Jennings 1969;
Chopra 2017 Sec. 5.2). The coefficients come from the matrix exponential of the augmented
system [q, v, p, p'], which is exact for every mode: rigid (w = 0), underdamped and overdamped.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg as sla
from scipy.signal import lfilter, lfiltic

__all__ = ["integrate_modal", "integrate_modal_steps", "knot_kicks", "recurrence_coefficients"]


def _augmented(omega, zeta, tau) -> np.ndarray:
    """exp(F tau) of the augmented system [q, v, p, p'] for every tau (j,) and mode: (j, k, 4, 4)."""
    w = np.atleast_1d(np.asarray(omega, dtype=float))
    z = np.broadcast_to(np.asarray(zeta, dtype=float), w.shape)
    if np.any(w < 0) or np.any(z < 0):
        raise ValueError("omega and zeta must not be negative")
    F = np.zeros((len(w), 4, 4))
    F[:, 0, 1] = 1.0
    F[:, 1, 0] = -w**2
    F[:, 1, 1] = -2 * z * w
    F[:, 1, 2] = 1.0
    F[:, 2, 3] = 1.0
    tau = np.atleast_1d(np.asarray(tau, dtype=float))
    return sla.expm(F[None] * tau[:, None, None, None])      # batched over taus and modes


def recurrence_coefficients(omega, zeta, dt):
    """Coefficients A, B, C, D, Ap, Bp, Cp, Dp, each (k,), for unit modal mass.

    q_{i+1} = A q_i + B v_i + C p_i + D p_{i+1}; v_{i+1} = Ap q_i + Bp v_i + Cp p_i + Dp p_{i+1}.
    """
    if dt <= 0:
        raise ValueError("the time step must be positive")
    E = _augmented(omega, zeta, dt)[0]
    # p(tau) = p_i + s tau with s = (p_{i+1} - p_i)/dt
    A, B, G, H = E[:, 0, 0], E[:, 0, 1], E[:, 0, 2], E[:, 0, 3]
    Ap, Bp, Gp, Hp = E[:, 1, 0], E[:, 1, 1], E[:, 1, 2], E[:, 1, 3]
    return dict(A=A, B=B, C=G - H / dt, D=H / dt, Ap=Ap, Bp=Bp, Cp=Gp - Hp / dt, Dp=Hp / dt)


def integrate_modal_steps(omega, zeta, dt, p, q0=None, v0=None, kicks=None):
    """Reference stepper: a Python loop over time steps, vectorised over modes."""
    c = recurrence_coefficients(omega, zeta, dt)
    p = np.asarray(p, dtype=float)
    n, k = p.shape
    q, v = np.zeros((n, k)), np.zeros((n, k))
    q[0] = 0.0 if q0 is None else q0
    v[0] = 0.0 if v0 is None else v0
    for i in range(n - 1):
        q[i + 1] = c["A"] * q[i] + c["B"] * v[i] + c["C"] * p[i] + c["D"] * p[i + 1]
        v[i + 1] = c["Ap"] * q[i] + c["Bp"] * v[i] + c["Cp"] * p[i] + c["Dp"] * p[i + 1]
        if kicks is not None:
            q[i + 1] += kicks[0][i + 1]
            v[i + 1] += kicks[1][i + 1]
    return q, v


def knot_kicks(omega, zeta, dt, n, b, J, S):
    """State kicks dq, dv (n, k) that make the piecewise-linear recurrence exact for a unit modal
    load g(t) with jumps J and slope changes S at times b (each (j,)), for samples of g taken
    just after each t_i = i dt.

    Write g as a part that is linear between samples plus, for each knot, (J + S (t - b)) H(t - b).
    The linear interpolant of the samples differs from that term only on the step t_{i-1} < b <= t_i
    (it runs from 0 to J + S r with r = t_i - b), and after it the term is linear again, so the
    error is a state jump at t_i: the exact response of the term over r (columns p and p' of
    exp(F r)) minus what the recurrence counted, [D, Dp] (J + S r). A rect(a) pulse thus ends at a
    exactly, not with a ramp over the step after a."""
    w = np.atleast_1d(np.asarray(omega, dtype=float))
    b, J, S = (np.atleast_1d(np.asarray(x, dtype=float)) for x in (b, J, S))
    dq, dv = np.zeros((n, len(w))), np.zeros((n, len(w)))
    i = np.ceil(b / dt - 1e-9).astype(int)          # knots within 1e-9 dt of t_i sit on it
    keep = (b > 0) & (i < n) & ((J != 0) | (S != 0))
    if not keep.any():
        return dq, dv
    i, b, J, S = i[keep], b[keep], J[keep], S[keep]
    r = np.clip(i * dt - b, 0.0, None)
    E = _augmented(w, zeta, r)                                   # (j, k, 4, 4)
    c = recurrence_coefficients(w, zeta, dt)
    end = (J + S * r)[:, None]
    np.add.at(dq, i, J[:, None] * E[:, :, 0, 2] + S[:, None] * E[:, :, 0, 3] - end * c["D"])
    np.add.at(dv, i, J[:, None] * E[:, :, 1, 2] + S[:, None] * E[:, :, 1, 3] - end * c["Dp"])
    return dq, dv


def integrate_modal(omega, zeta, dt, p, q0=None, v0=None, kicks=None):
    """Modal response to loads p (n_steps, k) sampled at t_i = i dt; returns q, v (n_steps, k).

    Each mode's recurrence is run as a second-order IIR filter (scipy.signal.lfilter):
    q(z)/p(z) = (D + (C - Bp D + B Dp) z^-1 + (B Cp - Bp C) z^-2) / (1 - (A + Bp) z^-1
    + (A Bp - B Ap) z^-2), plus the free evolution of the initial state corrected for the
    filter's own start (x0 - [D, Dp] p_0). kicks: optional (dq, dv), each (n_steps, k), added to
    the state at each step after its update (see knot_kicks); x_i = Phi x_{i-1} + w_i gives
    q = w_q (1 - Bp z^-1)/a + w_v B z^-1/a and v = w_q Ap z^-1/a + w_v (1 - A z^-1)/a.
    """
    c = recurrence_coefficients(omega, zeta, dt)
    p = np.asarray(p, dtype=float)
    n, k = p.shape
    q0 = np.zeros(k) if q0 is None else np.broadcast_to(np.asarray(q0, float), (k,))
    v0 = np.zeros(k) if v0 is None else np.broadcast_to(np.asarray(v0, float), (k,))
    A, B, C, D = c["A"], c["B"], c["C"], c["D"]
    Ap, Bp, Cp, Dp = c["Ap"], c["Bp"], c["Cp"], c["Dp"]
    q, v = np.empty((n, k)), np.empty((n, k))
    xq = q0 - D * p[0]
    xv = v0 - Dp * p[0]
    for j in range(k):          # loop over modes (tens to hundreds), not over time steps
        a = [1.0, -(A[j] + Bp[j]), A[j] * Bp[j] - B[j] * Ap[j]]
        bq = [D[j], C[j] - Bp[j] * D[j] + B[j] * Dp[j], B[j] * Cp[j] - Bp[j] * C[j]]
        bv = [Dp[j], Cp[j] - A[j] * Dp[j] + Ap[j] * D[j], Ap[j] * C[j] - A[j] * Cp[j]]
        q[:, j] = lfilter(bq, a, p[:, j]) + _free(a, A[j] * xq[j] + B[j] * xv[j], xq[j], n)
        v[:, j] = lfilter(bv, a, p[:, j]) + _free(a, Ap[j] * xq[j] + Bp[j] * xv[j], xv[j], n)
        if kicks is not None and (kicks[0][:, j].any() or kicks[1][:, j].any()):
            wq, wv = kicks[0][:, j], kicks[1][:, j]
            q[:, j] += lfilter([1.0, -Bp[j]], a, wq) + lfilter([0.0, B[j]], a, wv)
            v[:, j] += lfilter([0.0, Ap[j]], a, wq) + lfilter([1.0, -A[j]], a, wv)
    return q, v


def _free(a, y1, y0, n):
    """Sequence y0, y1, ... of the homogeneous recursion with denominator a."""
    out = np.empty(n)
    out[0] = y0
    if n > 1:
        out[1] = y1
    if n > 2:
        zi = lfiltic([1.0], a, y=[y1, y0])
        out[2:], _ = lfilter([1.0], a, np.zeros(n - 2), zi=zi)
    return out
