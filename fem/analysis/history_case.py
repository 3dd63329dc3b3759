"""A `history` case: force loads or ground acceleration times time functions, by modal
superposition with the exact piecewise-linear recurrence (jumps and kinks exact); optional static correction of the
truncated modes for force loads (mode-acceleration method, Cornwell, Craig & Johnson 1983)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar, NamedTuple

import numpy as np

from ..assembly import Assembled
from ..model import LoadCase, Model
from ..notes import Note
from .damping import case_ratios
from .free_case import frame_indices, peak_index, peaks, step_warnings
from .memory import check_memory
from .modal_case import ModesCaseResult, effective_load, field_responses, ground_mass_warnings, residual_static
from .recurrence import integrate_modal, knot_kicks
from .spring_damping import spring_ratios
from .spring_forces import series_springs
from .static import line_loads, load_vector
from .stress import series_stresses

__all__ = ["HistoryResult", "HistorySeries", "series_basis", "solve_history_case"]


@dataclass
class HistoryResult:
    """t (m,) s; record (r,) node indices; u, v (m, r, 6) displacement and velocity relative to
    the ground; a (m, r, 6) absolute acceleration; peak, peak_time (n, 6) largest |u| and when;
    zeta (k,) modal damping; corrected: static correction applied."""

    kind: ClassVar[str] = "history"

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
    frame_t: np.ndarray = None      # (f,) times of the frames kept (frame_indices)
    frames: np.ndarray = None       # (f, n, 6) displacements of every node at those times
    warnings: tuple = ()
    stresses: object = None         # fem.analysis.stress.MemberStresses: peaks over time
    series: HistorySeries = None    # every field at every step, as columns times their histories
    links: np.ndarray = None        # (d,) largest |force| of the rigid links at their linked DOFs (link_dynamics)
    link_times: np.ndarray = None   # (d,) s, when
    springs: object = None          # fem.analysis.spring_forces.SpringForces: peaks over time (None: no springs)
    animated: np.ndarray = None     # positions in frame_t of the frames an animation plays (frame_indices)


class HistorySeries(NamedTuple):
    """The whole response at every step without holding it: q (m, k + l) the histories of the
    k modes then of the l time functions' static parts, and statics[field] (N, l) the static
    parts' own fields ("displacement" (6n,), "reaction" (6n,), "end_force" (12e,)) and their
    members' uniform line loads ("line_load" (3e,), local axes: at step i, statics @ q[i, k:]).
    With the modes' fields (`series_basis`), field(t_i) = basis[field] @ q[i]. inertia (m, k + 3):
    the modes' accelerations then the ground's X, Y, Z, in a model with rigid links or inertia
    carried into supports (link_dynamics; else None); the reactions then add
    basis["reaction_inertia"] @ inertia[i], the links' forces ("link_force", at the linked DOFs)
    basis["link_inertia"] @ inertia[i]."""

    q: np.ndarray
    statics: dict
    basis: dict | None = None
    inertia: np.ndarray | None = None


def series_basis(model: Model, asm: Assembled, r: HistoryResult, modal: ModesCaseResult) -> HistorySeries:
    """The series of history result `r` with its basis: what each column contributes to each
    field (N, k + l). Made when a combination needs it, not kept with the result (the modes'
    end forces alone are 12 e k values)."""
    shapes = modal.shapes.reshape(6 * model.n_nodes, -1)
    Rm, Fm = field_responses(model, asm, shapes.T)
    k = shapes.shape[1]
    own = {"displacement": shapes, "reaction": Rm.reshape(k, -1).T, "end_force": Fm.reshape(k, -1).T}
    basis = {f: np.hstack([own[f], r.series.statics[f]]) for f in own}
    from .link_dynamics import inertia_columns, link_inertia_columns

    carried = None if r.series.inertia is None else inertia_columns(model, asm, shapes)
    if carried is not None:                 # the inertia links and masses off nodes carry into supports
        basis["reaction_inertia"] = np.hstack(carried)
    if "link_force" in r.series.statics:    # the links' forces: K u - f and the inertia M a they hold
        basis["link_force"] = np.hstack([np.asarray(asm.link_rows @ shapes), r.series.statics["link_force"]])
        basis["link_inertia"] = np.hstack(link_inertia_columns(model, asm, shapes))
    return r.series._replace(basis=basis)


class _Part(NamedTuple):
    """The loads and gravity of a history case that follow one time function."""

    loads: tuple
    gravity: np.ndarray | None


def _groups(case: LoadCase) -> list:
    """The case's loads and ground accelerations grouped by the time function that scales them:
    [(TimeFunction, _Part with those loads, ground (3,) m/s^2 or None)]. Loads and a
    `ground = ...` without their own function follow the case's `time` (gravity too)."""
    functions = {None: case.time, **case.functions}
    loads, ground = {}, {}
    for item in case.loads:
        loads.setdefault(getattr(item, "time", None), []).append(item)
    if case.ground is not None:
        ground[None] = np.asarray(case.ground, float)
    for vec, name in case.grounds:
        ground[name] = ground.get(name, 0.0) + np.asarray(vec, float)
    names = sorted(set(loads) | set(ground) | ({None} if case.gravity is not None else set()),
                   key=lambda x: "" if x is None else str(x))
    return [(functions[k], _Part(tuple(loads.get(k, [])), case.gravity if k is None else None),
             ground.get(k)) for k in names]


def history_bytes(steps: int, modes: int, groups: int, recorded: int) -> float:
    """Estimate of the memory a history case holds at its peak, in bytes: about eleven
    (steps, modes) float arrays (loads, knot kicks, the recurrence's inputs, outputs and
    temporaries), three per time-function group and four (steps, recorded, 6) output fields
    (displacement, velocity, acceleration and a temporary). Checked against a measured peak
    in tests/test_bounds.py."""
    return 8.0 * steps * (11 * modes + 3 * groups + 24 * recorded)


def solve_history_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                       lu=None) -> HistoryResult:
    """Each group of loads with its own time function g_l adds its modal load
    phi^T F_l g_l(t) (superposition); the jumps and kinks of each g_l are integrated exactly."""
    n6 = 6 * model.n_nodes
    f = asm.free
    dt = case.step
    t = np.arange(0.0, case.duration + 0.5 * dt, dt)
    n = len(t)
    phi, omega = modal.modes.phi, modal.modes.omega
    zeta = case_ratios(case, omega, below_one=True, added=spring_ratios(model, modal))
    shapes = modal.shapes.reshape(n6, -1)
    k = len(omega)
    fixed = np.zeros(n6, bool)
    fixed[asm.fixed] = True
    P = np.zeros((n, k))
    kq, kv = np.zeros((n, k)), np.zeros((n, k))
    G, Gdot, statics, r_statics, m_statics, lines = [], [], [], [], [], []
    a_ground = np.zeros((n, 3))
    corrected = case.correction
    groups = _groups(case)
    recorded = model.n_nodes if case.record is None else len(case.record)
    check_memory(history_bytes(n, k, len(groups), recorded),
                 f"case {case.name}: the time history of {n:,} steps x {k} modes x {recorded} recorded nodes",
                 f"use a longer step or a shorter duration, fewer modes (count or fmax of {modal.name}), "
                 'or record fewer nodes (record = "NAME*")')
    for fn, sub, ground in groups:
        g = fn(t)                                            # (m,) values just after each t_i
        F_eff = effective_load(model, asm, sub, ground)
        pk = phi.T @ F_eff[f]                                # (k,) modal load amplitudes
        P += g[:, None] * pk[None, :]
        dq, dv = knot_kicks(omega, zeta, dt, n, *fn.knots())
        kq += dq * pk
        kv += dv * pk
        if ground is not None:
            a_ground += g[:, None] * ground[None, :]
        # reactions and member end forces follow g(t) beside the modes: the static correction's,
        # minus the applied loads at supports and the members' fixed-end forces
        F_only, fe = load_vector(model, asm, sub) if (sub.loads or sub.gravity is not None) else \
            (np.zeros(n6), np.zeros((model.n_members, 12)))
        static = residual_static(F_eff, asm, lu, shapes, omega, pk) if corrected else np.zeros(n6)
        Rs, Fs = field_responses(model, asm, static[None])
        G.append(g)
        Gdot.append(fn.rate(t))
        statics.append(static)
        r_statics.append(Rs.ravel() - np.where(fixed, F_only, 0.0))
        m_statics.append(Fs.ravel() - fe.ravel())
        lines.append(line_loads(model, asm, sub).ravel() if (sub.loads or sub.gravity is not None)
                     else np.zeros(3 * model.n_members))
    q, v = integrate_modal(omega, zeta, dt, P, kicks=(kq, kv))
    acc = P - 2 * zeta * omega * v - omega**2 * q            # modal relative accelerations
    # the parts that follow each g_l(t) join the modes as extra columns: (m, k + l) histories
    qg = np.hstack([q, np.array(G).T])
    Rm, Fm = field_responses(model, asm, shapes.T)
    own = {"displacement": np.array(statics).T, "reaction": np.array(r_statics).T, "end_force": np.array(m_statics).T}
    peak, peak_t = peaks(qg, np.hstack([shapes, own["displacement"]]), t)
    from .link_dynamics import inertia_columns

    carried = inertia_columns(model, asm, shapes)     # inertia links and masses off nodes carry into supports
    r_peak, _ = peaks(qg, np.hstack([Rm.reshape(k, -1).T, own["reaction"]]), t) if carried is None else \
        peaks(np.hstack([qg, acc, a_ground]), np.hstack([Rm.reshape(k, -1).T, own["reaction"], *carried]), t)
    m_peak, _ = peaks(qg, np.hstack([Fm.reshape(k, -1).T, own["end_force"]]), t)
    stresses = _stresses(model, qg, np.hstack([Fm.reshape(k, -1).T, own["end_force"]]), np.array(G).T,
                         np.array(lines), t)
    record = case.record if case.record is not None else np.arange(model.n_nodes)
    full = np.concatenate([modal.shapes, np.array(statics).T.reshape(model.n_nodes, 6, -1)], axis=2)
    sel = modal.shapes[record]                               # (r, 6, k)
    u = np.einsum("tk,rdk->trd", qg, full[record])
    vel = np.einsum("tk,rdk->trd", v, sel)
    # the static correction moves with g_l(t), so its velocity is static * dg_l/dt (v = du/dt)
    vel += np.einsum("tl,rdl->trd", np.array(Gdot).T, full[record][:, :, k:])
    a = np.einsum("tk,rdk->trd", acc, sel)
    a[:, :, :3] += a_ground[:, None, :]
    warnings = step_warnings(dt, omega, "the load and the output are",
                             "each step is integrated exactly for a linear load")
    warnings += ground_mass_warnings(case, modal, [gr for _, _, gr in groups if gr is not None])
    warnings = tuple(Note(case.location, w) for w in warnings)
    # frames spaced by the modes that matter, the step of the largest motion among them, and the
    # window an animation plays around it
    frames, shown = frame_indices(t, q, modal.shapes, omega, peak_index(t, peak.reshape(-1, 6), peak_t.reshape(-1, 6)))
    from .link_dynamics import history_link_peaks, history_link_statics

    l_peak, l_time = history_link_peaks(model, asm, groups, shapes, own["displacement"], qg, acc, a_ground,
                                        np.array(G).T, t)
    if l_peak is not None:      # the links' forces per unit of each time function, for combinations
        own["link_force"] = history_link_statics(model, asm, groups, own["displacement"])
    return HistoryResult(case.name, t, record, u, vel, a, peak.reshape(-1, 6),
                         peak_t.reshape(-1, 6), zeta, corrected,
                         r_peak.reshape(-1, 6), m_peak.reshape(-1, 12),
                         t[frames], np.einsum("fk,ndk->fnd", qg[frames], full), warnings, stresses,
                         HistorySeries(qg, {**own, "line_load": np.array(lines).T},
                                       inertia=None if carried is None and l_peak is None else np.hstack([acc, a_ground])),
                         l_peak, l_time,
                         springs=series_springs(model, qg, np.hstack([shapes, own["displacement"]]), t),
                         animated=shown)


def _stresses(model, qg, columns, G, lines, t):
    """Member stresses of every step (end forces qg @ columns^T, line loads G @ lines), peaks over time."""
    e = model.n_members
    w = (lambda rows: (G[rows] @ lines).reshape(-1, e, 3)) if np.any(lines) else None
    return series_stresses(model, lambda rows: (qg[rows] @ columns.T).reshape(-1, e, 12), t, w,
                           linear=(qg, columns.T))
