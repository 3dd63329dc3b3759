"""Harmonic steady state over a frequency sweep by modal superposition.

u(W) = sum_r phi_r (phi_r^T F) / (w_r^2 - W^2 + 2 i zeta_r w_r W), F the complex amplitude of
the load; optional residual (static) correction of the truncated modes:
(K^-1 - sum_r phi_r phi_r^T / w_r^2) F, added unchanged at every frequency.

Phase convention, the same for displacements, reactions and member end forces: every load of
the case is p(t) = P cos(W t) (ground acceleration a_g cos(W t)); a response of complex amplitude
X is x(t) = |X| cos(W t - lag), lag = -arg X in degrees (`lag_degrees`). The displacement of a
damped SDOF lags by tan(lag) = 2 zeta r / (1 - r^2), 0 to 180 degrees (Chopra, Dynamics of
Structures, Sec. 3.2).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ..assembly import Assembled
from ..errors import ModelError
from ..limits import ROWS_LIMIT
from ..model import LoadCase, Model
from .damping import case_ratios
from .memory import check_memory
from .modal_case import ModesCaseResult, effective_load, field_responses, ground_mass_warnings, residual_static
from .static import load_vector

__all__ = ["HarmonicResult", "lag_degrees", "solve_harmonic_case", "sweep_frequencies"]


@dataclass
class HarmonicResult:
    """freq (m,) Hz; record (r,); u (m, r, 6) complex displacement amplitude (relative to the
    ground for base excitation), phase = angle(u) lag-positive convention u = |u| e^{-i phase};
    peak (n, 6) largest |u| over the sweep and peak_freq (n, 6) where."""

    kind: ClassVar[str] = "harmonic"

    name: str
    freq: np.ndarray
    record: np.ndarray
    u: np.ndarray
    peak: np.ndarray
    peak_freq: np.ndarray
    zeta: np.ndarray
    corrected: bool
    highest_mode_Hz: float
    reaction_peak: np.ndarray = None    # (n, 6) largest reaction amplitude over the sweep
    member_peak: np.ndarray = None      # (e, 12) largest end-force amplitude, local axes
    peak_lag: np.ndarray = None         # (n, 6) lag (degrees) of u at peak_freq
    reaction_peak_freq: np.ndarray = None   # (n, 6) Hz, where reaction_peak occurs
    reaction_peak_lag: np.ndarray = None    # (n, 6) degrees, lag there
    member_peak_freq: np.ndarray = None     # (e, 12) Hz
    member_peak_lag: np.ndarray = None      # (e, 12) degrees
    support: np.ndarray = None          # (s,) supported or sprung nodes
    reactions: np.ndarray = None        # (m, s, 6) complex reaction amplitudes at them, N and N m
    members: np.ndarray = None          # (q,) members with an end at a recorded node
    member_forces: np.ndarray = None    # (m, q, 12) complex end-force amplitudes, local axes; None if too many rows
    warnings: tuple = ()
    modes_complete_Hz: float = None     # no mode is missing below this frequency (Sturm check)


MARGIN = 1.5   # modes should be complete to this multiple of a sweep's top (common practice, no source)


def lag_degrees(X, floor: float = 0.0) -> np.ndarray:
    """Phase lag -arg X in degrees, in [-180, 180), of complex amplitudes X; 0 where |X| <= floor
    (a component that is zero but for round-off has no meaningful phase)."""
    X = np.asarray(X)
    return np.where(np.abs(X) > floor, 0.0 - np.degrees(np.angle(X)), 0.0)


def sweep_frequencies(f_from, f_to, points, spacing, natural, zeta) -> np.ndarray:
    """The sweep plus refinement around every natural frequency inside it: points at
    f_n (1 + k zeta_n), k = -3..3 in halves, so each resonance peak (width ~ 2 zeta f_n between
    the half-power points) is resolved whatever the base spacing."""
    base = (np.geomspace if spacing == "log" else np.linspace)(f_from, f_to, points)
    extra = []
    for fn, z in zip(natural, zeta):
        if f_from <= fn <= f_to:
            zz = max(z, 1e-4)
            pk = fn * np.sqrt(max(1 - 2 * zz**2, 0.0))     # displacement peak, Chopra Sec. 3.2
            extra += [fn * (1 + k * zz) for k in np.arange(-3, 3.01, 0.5)] + [pk]
    f = np.concatenate([base, extra])
    f = f[(f >= f_from) & (f <= f_to)]
    return np.unique(f)


def _amplitude_peaks(H, shapes, freq, static=None, block=500):
    """Largest |H shapes^T + static| over the sweep per component, the frequency of it and the
    complex amplitude there (for its phase)."""
    n = shapes.shape[0]
    peak, peak_f, peak_c = np.zeros(n), np.zeros(n), np.zeros(n, complex)
    for a in range(0, len(freq), block):
        u = H[a:a + block] @ shapes.T
        if static is not None:
            u = u + static[None, :]
        mag = np.abs(u)
        k = mag.argmax(axis=0)
        val = mag[k, np.arange(n)]
        better = val > peak
        peak[better], peak_f[better] = val[better], freq[a + k[better]]
        peak_c[better] = u[k[better], np.flatnonzero(better)]
    return peak, peak_f, peak_c


def _lags(C):
    """Lags of the complex amplitudes C, 0 below 1e-9 of their largest magnitude (round-off)."""
    return lag_degrees(C, 1e-9 * np.abs(C).max(initial=0.0))


def sweep_bytes(freqs: int, modes: int, recorded: int, supports: int, members: int) -> float:
    """Estimate of the memory a sweep holds at its peak, in bytes: the (freqs, modes) complex
    frequency responses and, each with a temporary, the complex amplitudes of the recorded
    nodes (freqs, recorded, 6), the supports (freqs, supports, 6) and the members written
    (freqs, members, 12)."""
    return 16.0 * freqs * (modes + 12 * recorded + 12 * supports + 24 * members)


def check_sweep(case: LoadCase, freqs: int, modes: int, recorded: int, supports: int, members: int) -> None:
    """Refuse a sweep, before it is computed, whose response or reaction table would have more
    than ROWS_LIMIT rows (the frequencies count the points added around each resonance) or
    which would not fit in memory."""
    for nodes, what, fix in ((recorded, "recorded nodes", "record fewer nodes or use fewer points"),
                             (supports, "supported or sprung nodes", "use fewer points")):
        if freqs * nodes > ROWS_LIMIT:
            raise ModelError(f"case {case.name}: the sweep's table at its {what} would have {freqs:,} frequencies "
                             f"x {nodes:,} nodes = {freqs * nodes:,} rows, above the limit of {ROWS_LIMIT:,}; "
                             f"{fix} (at most {ROWS_LIMIT // nodes:,} frequencies for {nodes:,} nodes, counting "
                             "the points added around each resonance in the band)")
    check_memory(sweep_bytes(freqs, modes, recorded, supports, members),
                 f"case {case.name}: the sweep of {freqs:,} frequencies x {modes} modes "
                 f"({recorded} recorded nodes, {supports} supports, {members} members written)",
                 "use fewer points, fewer modes (count or fmax of the modes case) or record fewer nodes")


def solve_harmonic_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                        lu=None) -> HarmonicResult:
    n6 = 6 * model.n_nodes
    f = asm.free
    phi, omega = modal.modes.phi, modal.modes.omega
    zeta = case_ratios(case, omega)
    F = effective_load(model, asm, case, case.ground)
    if np.any((zeta == 0) & (omega > 0)):
        nat = omega / (2 * np.pi)
        inside = (nat >= case.fmin) & (nat <= case.fmax) & (zeta == 0)
        if inside.any():
            raise ModelError(f"case {case.name}: undamped modes inside the sweep have unbounded "
                             "response; give damping")
    freq = sweep_frequencies(case.fmin, case.fmax, case.points, case.spacing,
                             omega / (2 * np.pi), zeta)
    record = case.record if case.record is not None else np.arange(model.n_nodes)
    support = np.flatnonzero(model.restraint.any(axis=1) | (model.springs > 0).any(axis=1))
    members = np.flatnonzero(np.isin(model.conn, record).any(axis=1))
    member_rows = len(freq) * 2 * len(members)
    write_members = member_rows <= ROWS_LIMIT
    check_sweep(case, len(freq), len(omega), len(record), len(support), len(members) if write_members else 0)
    W = 2 * np.pi * freq
    pk = phi.T @ F[f]                                              # (k,)
    H = pk[None, :] / (omega[None, :] ** 2 - W[:, None] ** 2 + 2j * zeta * omega * W[:, None])
    shapes = modal.shapes.reshape(n6, -1)
    static = residual_static(F, asm, lu, shapes, omega, pk) if case.correction else None
    peak, peak_f, peak_c = _amplitude_peaks(H, shapes, freq, static)
    # reactions and member end forces: per mode, superposed per frequency, with the static part
    # and, for member loads, minus the fixed-end forces (loads in phase with the excitation)
    Rm, Fm = field_responses(model, asm, shapes.T)
    F_only, fe = load_vector(model, asm, case) if case.loads else (np.zeros(n6), np.zeros((model.n_members, 12)))
    fixed = np.zeros(n6, bool)
    fixed[asm.fixed] = True
    r_static, m_static = -np.where(fixed, F_only, 0.0), -fe.ravel()
    if static is not None:
        Rs, Fs = field_responses(model, asm, static[None])
        r_static, m_static = r_static + Rs.ravel(), m_static + Fs.ravel()
    r_peak, r_peak_f, r_peak_c = _amplitude_peaks(H, Rm.reshape(len(omega), -1).T, freq, r_static)
    m_peak, m_peak_f, m_peak_c = _amplitude_peaks(H, Fm.reshape(len(omega), -1).T, freq, m_static)
    u = np.einsum("wk,rdk->wrd", H, modal.shapes[record])
    if static is not None:
        u = u + static.reshape(-1, 6)[record][None]
    # complex reactions at every support and end forces of the members at the recorded nodes
    reactions = np.einsum("wk,ksd->wsd", H, Rm[:, support]) + r_static.reshape(-1, 6)[support][None]
    warnings = tuple(f"{case.location}: warning: {w}" for w in
                     ground_mass_warnings(case, modal, [case.ground] if case.ground is not None else []))
    if not write_members:
        member_forces = None
        warnings += (f"{case.location}: warning: case {case.name}: the end-force table would have "
                     f"{len(freq):,} frequencies x {len(members)} members x 2 ends = {member_rows:,} rows, above "
                     f"the limit of {ROWS_LIMIT:,}, and is not written; record fewer nodes (so that at most "
                     f"{ROWS_LIMIT // (2 * len(freq)):,} members have an end at them) or use fewer points",)
    else:
        member_forces = (np.einsum("wk,kqc->wqc", H, Fm[:, members])
                         + m_static.reshape(-1, 12)[members][None])
    complete = modes_complete_to(modal)
    top = float(freq[-1])
    if complete < top:
        warnings += (f"{case.location}: warning: case {case.name}: the retained modes are complete only up to "
                     f"{complete:.4g} Hz, below the top of the sweep ({top:.4g} Hz); ask for more modes"
                     + (" (static correction on)" if static is not None else " or set correction = on"),)
    elif complete < MARGIN * top:
        # a mode just above the band is driven at r = f/fn up to 1/MARGIN: amplified by up to
        # 1/(1 - r^2) = 1.8 at the top of the sweep, which the static correction cannot see
        warnings += (f"{case.location}: warning: case {case.name}: the modes are complete only up to "
                     f"{complete:.4g} Hz, less than {MARGIN:g} times the top of the sweep ({top:.4g} Hz); "
                     "modes just above the band respond dynamically there, beyond any static correction: "
                     f"ask for modes up to at least {MARGIN * top:.4g} Hz",)
    return HarmonicResult(case.name, freq, record, u, peak.reshape(-1, 6), peak_f.reshape(-1, 6),
                          zeta, static is not None, float(omega.max() / (2 * np.pi)),
                          r_peak.reshape(-1, 6), m_peak.reshape(-1, 12), _lags(peak_c).reshape(-1, 6),
                          r_peak_f.reshape(-1, 6), _lags(r_peak_c).reshape(-1, 6),
                          m_peak_f.reshape(-1, 12), _lags(m_peak_c).reshape(-1, 12),
                          support, reactions, members, member_forces, warnings, complete)


def modes_complete_to(modal: ModesCaseResult) -> float:
    """Frequency (Hz) below which the retained modes are every mode of the model: infinite when
    all the model's finite modes are kept; the Sturm check's shift when its count matched (no
    eigenvalue between the highest mode and the shift); else the highest mode itself."""
    modes = modal.modes
    if len(modes.omega) >= modal.n_finite > 0:
        return float("inf")
    top = float(modes.freq.max())
    shift = modes.sturm_shift
    if shift is not None and shift > 0 and modes.sturm_count == modes.sturm_expected:
        return max(top, float(np.sqrt(shift) / (2 * np.pi)))
    return top
