"""Exact piecewise-linear recurrence for unit-mass modal equations, vectorised over modes.

q'' + 2 zeta w q' + w^2 q = p(t), p linear within each step (Nigam & Jennings 1969;
Chopra 2017 Sec. 5.2). The coefficients come from the matrix exponential of the augmented
system [q, v, p, p'], which is exact for every mode: rigid (w = 0), underdamped and overdamped.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg as sla

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

    The recurrence x_i = Phi x_{i-1} + w_i, x = [q, v], Phi = [[A, B], [Ap, Bp]], takes as input
    w_0 = x_0, w_i = [C, Cp] p_{i-1} + [D, Dp] p_i (+ optional kicks (dq, dv), each (n_steps, k),
    from knot_kicks). Inverting (I - Phi z^-1) gives, for each mode, one second-order IIR filter
    per output (`_all_pole`, or scipy.signal.lfilter past SHORT_HISTORY steps) with denominator
    a = 1 - (A + Bp) z^-1 + (A Bp - B Ap) z^-2:
    q = ((1 - Bp z^-1) w_q + B z^-1 w_v) / a and v = (Ap z^-1 w_q + (1 - A z^-1) w_v) / a.
    """
    c = recurrence_coefficients(omega, zeta, dt)
    p = np.asarray(p, dtype=float)
    n, k = p.shape
    A, B, C, D = c["A"], c["B"], c["C"], c["D"]
    Ap, Bp, Cp, Dp = c["Ap"], c["Bp"], c["Cp"], c["Dp"]
    wq, wv = np.empty((n, k)), np.empty((n, k))
    wq[0] = 0.0 if q0 is None else q0
    wv[0] = 0.0 if v0 is None else v0
    wq[1:] = C * p[:-1] + D * p[1:]
    wv[1:] = Cp * p[:-1] + Dp * p[1:]
    if kicks is not None:
        wq += kicks[0]
        wv += kicks[1]
    uq, uv = wq.copy(), wv.copy()              # numerators applied, vectorised over modes
    uq[1:] += B * wv[:-1] - Bp * wq[:-1]
    uv[1:] += Ap * wq[:-1] - A * wv[:-1]
    a1, a2 = -(A + Bp), A * Bp - B * Ap
    if n <= SHORT_HISTORY:
        return _all_pole(a1, a2, uq), _all_pole(a1, a2, uv)
    from scipy.signal import lfilter  # here, not at the top: scipy.signal takes ~0.4 s to import

    q, v = np.empty((n, k)), np.empty((n, k))
    for j in range(k):          # loop over modes (tens to hundreds), not over time steps
        a = [1.0, a1[j], a2[j]]
        q[:, j] = lfilter([1.0], a, uq[:, j])
        v[:, j] = lfilter([1.0], a, uv[:, j])
    return q, v


# our choice: up to this many steps the filter runs as a loop over time steps on all the modes at
# once (about 3 us a step for 46 modes, 4.5 ms for the rack's 1501), which spares importing
# scipy.signal (0.37 s, measured); longer histories use lfilter (a loop in C, per mode)
SHORT_HISTORY = 20000


def _all_pole(a1, a2, u):
    """y_i = u_i - a1 y_{i-1} - a2 y_{i-2} for each column (mode) of u (n, k), y_{-1} = y_{-2} = 0:
    scipy.signal.lfilter([1], [1, a1, a2], u) to the bit. lfilter's direct form II transposed
    with b = (1, 0, 0) is computed in that order: y = z0 + 1 u; z0 = (z1 + 0 u) - a1 y;
    z1 = 0 u - a2 y, with no fused multiply-add, and is repeated here operation for operation
    (tests/test_recurrence.py compares the two to the bit)."""
    y = np.empty_like(u)
    z0 = np.zeros(u.shape[1])
    z1 = np.zeros(u.shape[1])
    with np.errstate(all="ignore"):         # as silent as lfilter's C loop on overflow and NaN
        for i in range(len(u)):
            x = u[i]
            y[i] = z0 + x
            z0 = (z1 + x * 0.0) - y[i] * a1
            z1 = x * 0.0 - y[i] * a2
    return y
