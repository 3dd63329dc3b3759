"""A `free` case from the deck: release from a static deflection and/or initial velocity."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ..assembly import Assembled
from ..model import LoadCase, Model
from ..notes import Note
from .damping import case_ratios
from .free import free_response, modal_initial_conditions
from .memory import check_memory
from .modal_case import ModesCaseResult, field_responses
from .spring_damping import spring_ratios

__all__ = ["animation_frames", "frame_indices", "FreeCaseResult", "inertia_balance", "peak_index", "peaks",
           "solve_free_case", "step_warnings"]


@dataclass
class FreeCaseResult:
    """t (m,) s; u (m, r, 6) response at the recorded nodes; peak (n, 6) largest |u| at every
    node and peak_time (n, 6); captured: M-norm fraction of the initial displacement the modes
    represent (1 = all of it); reaction_peak (n, 6) and member_peak (e, 12) largest |reaction|
    and |member end force| over time (N, N m; end forces in local axes), superposed from the
    per-mode fields in time; inertia_balance: largest mismatch, relative, between each mode's
    base reaction (with spring forces) and its inertia force w^2 M phi in X, Y, Z;
    inertia_rounding and inertia_ok: its rounding scale and verdict (`inertia_balance_terms`)."""

    kind: ClassVar[str] = "free"

    name: str
    t: np.ndarray
    record: np.ndarray
    u: np.ndarray
    peak: np.ndarray
    peak_time: np.ndarray
    captured: float
    zeta: np.ndarray
    reaction_peak: np.ndarray = None
    member_peak: np.ndarray = None
    inertia_balance: float = 0.0
    frame_t: np.ndarray = None      # (f,) times of the frames kept (frame_indices)
    frames: np.ndarray = None       # (f, n, 6) displacements of every node at those times
    warnings: tuple = ()
    start_force_error: float = 0.0  # support forces K u at t = 0: largest |modes - exact|, relative
    inertia_rounding: float = 0.0   # the mismatch rounding alone can leave, on inertia_balance's scale
    inertia_ok: bool = True         # every mode and direction within its limit (inertia_balance_terms)
    stresses: object = None         # fem.analysis.stress.MemberStresses: peaks over time
    links: np.ndarray = None        # (d,) largest |force| of the rigid links at their linked DOFs (link_dynamics)
    link_times: np.ndarray = None   # (d,) s, when
    springs: object = None          # fem.analysis.spring_forces.SpringForces: peaks over time (None: no springs)
    animated: np.ndarray = None     # positions in frame_t of the frames an animation plays (frame_indices)


BALANCE_TOL = 1e-6        # per-mode reactions vs inertia forces; limited by the eigen residuals
START_FORCE_TOL = 0.02     # share of the starting support forces the modes may leave out (our choice, no source)


def step_warnings(dt, omega, sampled: str, exact: str) -> tuple:
    """A warning when the step gives fewer than 10 samples per period of the highest retained
    mode: peaks between samples are missed (by up to 1 - cos(pi/10) = 5 % of a sine)."""
    pos = omega > 0
    if not pos.any():
        return ()
    tmin = float(2 * np.pi / omega[pos].max())
    if dt <= tmin / 10:
        return ()
    return (f"step {dt:.3g} s is coarse for the highest retained mode (period {tmin:.3g} s): {sampled} "
            f"sampled at fewer than 10 points per period of that mode ({exact}); consider step <= {tmin / 10:.3g} s",)


def _nodal(model: Model, items, kind) -> np.ndarray:
    x = np.zeros((model.n_nodes, 6))
    for it in items:
        if it.kind == kind:
            x[it.targets, :3] += it.vector
    return x.ravel()


def peaks(q, shapes, t, static=None, g=None, block=2000):
    """Largest |u| over time at every DOF and when, for u(t) = shapes q(t) (+ static g(t)).

    q (m, k); shapes (N, k); static (N,) pattern scaled by g (m,); returns (N,), (N,).
    Works through blocks of time steps so the full (m, N) history is never held."""
    n = shapes.shape[0]
    peak, peak_t = np.zeros(n), np.zeros(n)
    for a in range(0, len(t), block):
        u = q[a:a + block] @ shapes.T
        if static is not None:
            u += np.outer(g[a:a + block], static)
        k = np.abs(u).argmax(axis=0)
        val = np.abs(u[k, np.arange(n)])
        better = val > peak
        peak[better], peak_t[better] = val[better], t[a + k[better]]
    return peak, peak_t


FRAMES_PER_PERIOD = 8     # a sine drawn at 8 points a cycle reads as smooth motion
MAX_FRAMES = 200          # caps drawing time (~0.1 s a frame) and file size; frames then spread evenly
MATTERS = 0.01            # a mode matters when its largest motion is >= 1 % of the largest mode's
ANIMATED = 60             # frames an animation plays: 5 s at 12 a second, around the largest motion (our choice)
NO_ALIAS = 3              # frames a period of every mode that matters in an animation: over 2, no motion
                          # shows as a slower one that is not there (the sampling theorem)


def frame_indices(t, q, shapes, omega, peak: int, per_period: int = FRAMES_PER_PERIOD,
                  cap: int = MAX_FRAMES, animated: int = ANIMATED) -> tuple[np.ndarray, np.ndarray]:
    """Time-step indices of the frames kept, sorted, and the positions among them of the frames
    an animation plays.

    Kept: spaced at 1/per_period of the shortest period among the modes that matter (largest
    |q_k| times largest translation of phi_k at least MATTERS of the largest such product),
    never closer than the time step, at most about `cap` - `animated` spread evenly over the
    run, plus the first and last steps, step `peak` and the animation's frames.
    Played: all of those if they are `animated` or fewer, else `animated` steps in a row around
    `peak`, which is one, spaced at 1/per_period of the period of the mode of largest motion or
    1/NO_ALIAS of the shortest period that matters, whichever is less, never closer than the
    time step: every mode that matters is seen at its own speed, however long the run.

    t (m,) s; q (m, k) modal coordinates; shapes (n, 6, k); omega (k,) rad/s."""
    m = len(t)
    if m <= 1:
        return np.arange(m), np.arange(m)
    dt = float(t[1] - t[0])
    size = np.abs(q).max(axis=0) * np.abs(shapes[:, :3]).max(axis=(0, 1))
    matter = (omega > 0) & (size >= MATTERS * size.max()) if size.max() > 0 else omega > 0
    stride = played = 1
    if matter.any():
        shortest = 2 * np.pi / float(omega[matter].max())
        stride = max(1, int(shortest / per_period / dt))
        largest = 2 * np.pi / float(omega[np.argmax(np.where(matter, size, -1.0))])
        played = max(1, int(min(largest / per_period, shortest / NO_ALIAS) / dt))
    spread = np.union1d(np.arange(0, m, stride), [m - 1, peak])
    if len(spread) <= animated:               # a short run: every frame kept is played
        return spread, np.arange(len(spread))
    before = max(min(animated // 2, peak // played),            # played frames before the peak's
                 -(-(peak + played * (animated - 1) - (m - 1)) // played))      # room for the rest after it
    shown = np.arange(peak - played * min(before, peak // played), m, played)[:animated]
    if (m - 1) / stride + 1 > cap - len(shown):
        stride = int(np.ceil((m - 1) / max(cap - len(shown) - 1, 1)))
    kept = np.union1d(np.arange(0, m, stride), np.array([m - 1, peak, *shown], dtype=int))
    return kept, np.searchsorted(kept, shown)


def peak_index(t, peak, peak_time) -> int:
    """Index of the step holding the largest translation anywhere (peak, peak_time (n, 6))."""
    node, d = np.unravel_index(np.argmax(np.abs(peak[:, :3])), peak[:, :3].shape)
    return int(np.argmin(np.abs(t - peak_time[node, d])))


def animation_frames(t, q, shapes, omega, peak: int):
    """Frames of the whole deformed shape at frame_indices: times (f,), displacements
    (f, n, 6), and the positions of those an animation plays."""
    idx, shown = frame_indices(t, q, shapes, omega, peak)
    return t[idx], np.einsum("fk,ndk->fnd", q[idx], shapes), shown


def free_bytes(steps: int, modes: int, recorded: int) -> float:
    """Estimate of the memory a free case holds at its peak, in bytes: about nine (steps, modes)
    float arrays (the closed-form response and its temporaries) and two (steps, recorded, 6)
    output fields (the displacements and a temporary)."""
    return 8.0 * steps * (9 * modes + 12 * recorded)


def solve_free_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                    start_u: np.ndarray | None) -> FreeCaseResult:
    """start_u (n, 6) deflected shape of the start case, or None."""
    u0 = _nodal(model, case.loads, "displacement")
    v0 = _nodal(model, case.loads, "velocity")
    if start_u is not None:
        u0 = u0 + start_u.ravel()
    f = asm.free
    M = asm.M[f][:, f]
    phi, omega = modal.modes.phi, modal.modes.omega
    zeta = case_ratios(case, omega, below_one=True, added=spring_ratios(model, modal))
    q0, qd0 = modal_initial_conditions(phi, M, u0[f], v0[f])
    mu = M @ u0[f]
    total = float(u0[f] @ mu)
    captured = float(q0 @ q0 / total) if total > 0 else 1.0
    t = np.arange(0.0, case.duration + 0.5 * case.step, case.step)
    recorded = model.n_nodes if case.record is None else len(case.record)
    check_memory(free_bytes(len(t), len(omega), recorded),
                 f"case {case.name}: the free vibration of {len(t):,} steps x {len(omega)} modes x {recorded} "
                 "recorded nodes", f"use a longer step or a shorter duration, fewer modes (count or fmax of "
                 f'{modal.name}), or record fewer nodes (record = "NAME*")')
    q, qd = free_response(omega, zeta, q0, qd0, t)
    peak, peak_t = peaks(q, modal.shapes.reshape(6 * model.n_nodes, -1), t)
    record = case.record if case.record is not None else np.arange(model.n_nodes)
    sel = modal.shapes[record]                       # (r, 6, k)
    u = np.einsum("tk,rdk->trd", q, sel)
    # reactions and member end forces of each mode (K phi), superposed in time like the
    # displacements: peaks of the forces themselves, not forces of the peak displacements
    k = len(omega)
    Rm, Fm = field_responses(model, asm, modal.shapes.reshape(6 * model.n_nodes, -1).T)
    from .link_dynamics import inertia_columns

    acc = -omega ** 2 * q - 2 * zeta * omega * qd
    carried = inertia_columns(model, asm, modal.shapes.reshape(6 * model.n_nodes, -1))
    # the inertia links and masses off their nodes carry into supports joins the elastic K u
    r_peak, _ = peaks(q, Rm.reshape(k, -1).T, t) if carried is None else \
        peaks(np.hstack([q, acc]), np.hstack([Rm.reshape(k, -1).T, carried[0]]), t)
    m_peak, _ = peaks(q, Fm.reshape(k, -1).T, t)
    # the support forces at the start, K u0, against those the retained modes hold, K Phi q0:
    # a load carried by stiffer paths than the retained modes (a vertical load down a mast's legs)
    # is left out of every reaction and end force of the run, whatever share of the
    # displacement (M-norm) the modes capture
    R0 = field_responses(model, asm, u0[None])[0][0]
    scale = float(np.abs(R0).max())
    start_error = float(np.abs(np.tensordot(q0, Rm, axes=(0, 0)) - R0).max() / scale) if scale > 0 else 0.0
    warnings = step_warnings(case.step, omega, "the output and its peaks are",
                             "each sample is exact, the motion between samples is not seen")
    if start_error > START_FORCE_TOL:
        warnings += (f"the {k} retained modes miss up to {100 * start_error:.3g} % of the largest "
                     f"support force at the start ({scale:.4g} N or N m): the loads they leave out "
                     "are missing from every reaction and member-force peak of this case; keep more "
                     "modes (count or fmax of the modes case) until this is below "
                     f"{100 * START_FORCE_TOL:g} %",)
    ft, frames, shown = animation_frames(t, q, modal.shapes, omega,
                                         peak_index(t, peak.reshape(-1, 6), peak_t.reshape(-1, 6)))
    warnings = tuple(Note(case.location, w) for w in warnings)
    rel, rounding, ok = inertia_balance_terms(model, asm, modal, Rm)
    from .stress import series_stresses

    cols = Fm.reshape(k, -1).T
    stresses = series_stresses(model, lambda rows: (q[rows] @ cols.T).reshape(-1, model.n_members, 12), t,
                               linear=(q, cols.T))
    from .link_dynamics import free_link_peaks
    from .spring_forces import series_springs

    l_peak, l_time = free_link_peaks(asm, modal.shapes.reshape(6 * model.n_nodes, -1), q, acc, t)
    return FreeCaseResult(case.name, t, record, u, peak.reshape(-1, 6), peak_t.reshape(-1, 6),
                          captured, zeta, r_peak.reshape(-1, 6), m_peak.reshape(-1, 12),
                          rel, ft, frames, warnings, start_error, rounding, ok, stresses, l_peak, l_time,
                          springs=series_springs(model, q, modal.shapes.reshape(6 * model.n_nodes, -1), t),
                          animated=shown)


def inertia_balance(model: Model, asm: Assembled, modal: ModesCaseResult, Rm) -> float:
    """The largest relative mismatch of `inertia_balance_terms`."""
    return inertia_balance_terms(model, asm, modal, Rm)[0]


def inertia_balance_terms(model: Model, asm: Assembled, modal: ModesCaseResult, Rm) -> tuple[float, float, bool]:
    """Mode by mode, supports and springs hold the structure against its inertia forces:
    sum of reactions (springs' -k phi included) = -w^2 r^T M phi in X, Y, Z (K r = 0 for a rigid
    translation r of the members).

    Returns (relative, rounding, ok): the largest mismatch relative to the largest force entering
    these sums, |K| |phi| at the supports included (0 when nothing moves); the largest mismatch
    that rounding alone can leave, on the same scale: eps times, per mode and direction, the sizes
    |K| |phi| + w^2 |M| |phi| of every nodal term of the sum, at free DOFs too (the mismatch is
    the sum of K phi - w^2 M phi over the free DOFs, each entry computed, and each entry of K
    stored, to about eps times its own terms: Higham, Accuracy and Stability of Numerical
    Algorithms, 2nd ed., sec. 3.1; large where a short stiff member moves with the mode); and
    whether every mode and direction is within the larger of BALANCE_TOL of the scale and
    ROUNDING_FACTOR times its rounding."""
    from .static import EPS, ROUNDING_FACTOR

    shapes = modal.shapes                                        # (n, 6, k)
    k = shapes.shape[2]
    w2 = modal.modes.omega ** 2
    inertia = w2[:, None] * modal.part.gamma[:, :3]              # (k, 3), gamma = phi^T M r
    spring = np.einsum("nd,ndk->kd", model.springs[:, :3], shapes[:, :3])
    held = Rm[:, :, :3].sum(axis=1)                             # springs' -k phi included
    a = np.abs(shapes.reshape(-1, k))
    size = abs(asm.K) @ a                                       # (6n, k) sizes of the K phi terms
    mask = np.zeros(len(size), bool)
    mask[asm.fixed] = True
    gross = np.where(mask[:, None], size, 0.0).reshape(-1, 6, k)[:, :3].sum(axis=0).T
    scale = max(np.abs(inertia).max(initial=0.0), np.abs(spring).max(initial=0.0), gross.max(initial=0.0))
    every = (size + w2 * (abs(asm.M) @ a)).reshape(-1, 6, k)[:, :3].sum(axis=0).T     # (k, 3)
    bound = EPS * (every + np.abs(inertia) + np.abs(spring))
    miss = np.abs(held + inertia)
    if scale == 0:
        return 0.0, 0.0, bool(np.all(miss <= ROUNDING_FACTOR * bound))
    ok = bool(np.all(miss <= np.maximum(BALANCE_TOL * scale, ROUNDING_FACTOR * bound)))
    return float(miss.max() / scale), float(bound.max() / scale), ok
