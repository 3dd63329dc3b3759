"""A `history` case: force loads or ground acceleration times a time function, by modal
superposition with the exact piecewise-linear recurrence; optional static correction of the
truncated modes for force loads (mode-acceleration method, Cornwell, Craig & Johnson 1983)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..assembly import Assembled
from ..model import LoadCase, Model
from .damping import case_ratios
from .free_case import animation_frames, peak_index, peaks, step_warnings
from .modal_case import ModesCaseResult, effective_load, field_responses, residual_static
from .static import load_vector
from .recurrence import integrate_modal

__all__ = ["HistoryResult", "solve_history_case"]


@dataclass
class HistoryResult:
    """t (m,) s; record (r,) node indices; u, v (m, r, 6) displacement and velocity relative to
    the ground; a (m, r, 6) absolute acceleration; peak, peak_time (n, 6) largest |u| and when;
    zeta (k,) modal damping; corrected: static correction applied."""

    name: str
    t: np.ndarray
    record: np.ndarray
    u: np.ndarray
    v: np.ndarray
    a: np.ndarray
    peak: np.ndarray
    peak_time: np.ndarray
    zeta: np.ndarray
    corrected: bool
    reaction_peak: np.ndarray       # (n, 6) largest |reaction| over time, N / N m
    member_peak: np.ndarray         # (e, 12) largest |end force| over time, local axes
    frame_t: np.ndarray = None      # (f,) animation frame times
    frames: np.ndarray = None       # (f, n, 6) displacements of every node at those times
    warnings: tuple = ()


def solve_history_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                       lu=None) -> HistoryResult:
    opt = case.options
    n6 = 6 * model.n_nodes
    f = asm.free
    dt = opt["step"]
    t = np.arange(0.0, opt["duration"] + 0.5 * dt, dt)
    g = opt["time"](t)                                       # (m,)
    ground = opt.get("ground")
    F_eff = effective_load(model, asm, case, ground)
    phi, omega = modal.modes.phi, modal.modes.omega
    zeta = case_ratios(case, omega, below_one=True)
    pk = phi.T @ F_eff[f]                                    # (k,) modal load amplitudes
    P = g[:, None] * pk[None, :]
    q, v = integrate_modal(omega, zeta, dt, P)
    acc = P - 2 * zeta * omega * v - omega**2 * q            # modal relative accelerations
    shapes = modal.shapes.reshape(n6, -1)
    static = residual_static(F_eff, asm, lu, shapes, omega, pk) if opt.get("correction") else None
    peak, peak_t = peaks(q, shapes, t, static, g)
    # reactions and member end forces: per mode, then superposed in time (+ static part, minus
    # the applied loads at supports and the members' fixed-end forces, which follow g(t))
    Rm, Fm = field_responses(model, asm, shapes.T)
    F_only = load_vector(model, asm, case)[0] if case.loads else np.zeros(n6)
    fe = load_vector(model, asm, case)[1] if case.loads else np.zeros((model.n_members, 12))
    fixed = np.zeros(n6, bool)
    fixed[asm.fixed] = True
    r_static = -np.where(fixed, F_only, 0.0)
    m_static = -fe.ravel()
    if static is not None:
        Rs, Fs = field_responses(model, asm, static[None])
        r_static = r_static + Rs.ravel()
        m_static = m_static + Fs.ravel()
    r_peak, _ = peaks(q, Rm.reshape(len(omega), -1).T, t, r_static, g)
    m_peak, _ = peaks(q, Fm.reshape(len(omega), -1).T, t, m_static, g)
    record = opt["record"] if opt["record"] is not None else np.arange(model.n_nodes)
    sel = modal.shapes[record]                               # (r, 6, k)
    u = np.einsum("tk,rdk->trd", q, sel)
    vel = np.einsum("tk,rdk->trd", v, sel)
    a = np.einsum("tk,rdk->trd", acc, sel)
    if static is not None:
        u += g[:, None, None] * static.reshape(-1, 6)[record][None]
    if ground is not None:
        a[:, :, :3] += g[:, None, None] * ground[None, None, :]
    warnings = step_warnings(dt, omega, "the load and the output are",
                             "each step is integrated exactly for a linear load")
    return HistoryResult(case.name, t, record, u, vel, a, peak.reshape(-1, 6),
                         peak_t.reshape(-1, 6), zeta, bool(static is not None),
                         r_peak.reshape(-1, 6), m_peak.reshape(-1, 12),
                         *animation_frames(t, q, modal.shapes, static, g, omega,
                                           [peak_index(t, peak.reshape(-1, 6), peak_t.reshape(-1, 6))]),
                         warnings)
