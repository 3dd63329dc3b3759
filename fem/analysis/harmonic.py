"""Harmonic steady state over a frequency sweep by modal superposition.

u(W) = sum_r phi_r (phi_r^T F) / (w_r^2 - W^2 + 2 i zeta_r w_r W), F the complex amplitude of
the load; optional residual (static) correction of the truncated modes:
(K^-1 - sum_r phi_r phi_r^T / w_r^2) F, added at every frequency. The loads that grow with the
frequency (an unbalance, `like f^n`) form terms F_t (f / f0_t)^n_t of their own, so
F(W) = sum_t s_t(W) F_t, with each term's static parts scaled by s_t(W) too.

Phase convention, the same for displacements, reactions and member end forces: every load of
the case is p(t) = P cos(W t - lag), lag its own (0 unless given; ground acceleration
a_g cos(W t)); a response of complex amplitude
X is x(t) = |X| cos(W t - lag), lag = -arg X in degrees (`lag_degrees`). The displacement of a
damped SDOF lags by tan(lag) = 2 zeta r / (1 - r^2), 0 to 180 degrees (Chopra, Dynamics of
Structures, Sec. 3.2).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from types import SimpleNamespace
from typing import ClassVar

import numpy as np

from ..assembly import Assembled
from ..errors import ModelError
from ..harmonic_forms import complex_amplitude, growth
from ..limits import ROWS_LIMIT
from ..model import LoadCase, Model
from ..notes import Note
from .damping import case_ratios
from .memory import check_memory
from .modal_case import ModesCaseResult, effective_load, field_responses, ground_mass_warnings, residual_static
from .spring_damping import spring_ratios
from .static import load_vector
from .vibration_check import check_limits, limit_frequencies

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
    vel_peak: np.ndarray = None         # (n, 3) m/s, largest velocity amplitude of X, Y, Z over the frequencies
    vel_peak_freq: np.ndarray = None    # (n, 3) Hz, where
    acc_peak: np.ndarray = None         # (n, 3) m/s^2, largest acceleration amplitude
    acc_peak_freq: np.ndarray = None    # (n, 3) Hz, where
    ground: np.ndarray = None           # (3,) m/s^2, the ground acceleration amplitude, or None
    listed: bool = False                # the frequencies are the case's list (at), not a sweep
    limits: tuple = ()                  # LimitCheck, ...: the case's vibration limits checked (vibration_check.py)
    stresses: object = None             # fem.analysis.stress.MemberStresses: amplitudes, largest over freq
    links: np.ndarray = None            # (d,) largest force amplitude of the rigid links at their linked DOFs
    link_freq: np.ndarray = None        # (d,) Hz, where
    link_lag: np.ndarray = None         # (d,) degrees, lag there
    springs: object = None              # fem.analysis.spring_forces.SpringForces: amplitudes (None: no springs)

    def velocity(self) -> np.ndarray:
        """(m, r, 3) complex velocity amplitudes of the recorded nodes' translations, m/s:
        i W u, absolute (for a ground acceleration a_g the ground's displacement -a_g / W^2
        is added to u, relative to it)."""
        W = 2 * np.pi * self.freq[:, None, None]
        u = self.u[:, :, :3]
        if self.ground is not None:
            u = u - self.ground[None, None, :] / W ** 2
        return 1j * W * u

    def acceleration(self) -> np.ndarray:
        """(m, r, 3) complex absolute acceleration amplitudes of the recorded nodes, m/s^2: i W v."""
        return 2j * np.pi * self.freq[:, None, None] * self.velocity()


MARGIN = 1.5   # modes should be complete to this multiple of a sweep's top (common practice, no source)


def lag_degrees(X, floor: float = 0.0) -> np.ndarray:
    """Phase lag -arg X in degrees, in [-180, 180), of complex amplitudes X; 0 where |X| <= floor
    (a component that is zero but for round-off has no meaningful phase)."""
    X = np.asarray(X)
    return np.where(np.abs(X) > floor, 0.0 - np.degrees(np.angle(X)), 0.0)


AROUND = 0.01   # points at f (1 + k AROUND), k = -2..2, around each frequency given to refine around (our choice)


def sweep_frequencies(f_from, f_to, points, spacing, natural, zeta, around=()) -> np.ndarray:
    """The sweep plus refinement around every natural frequency inside it: points at
    f_n (1 + k zeta_n), k = -3..3 in halves, so each resonance peak (width ~ 2 zeta f_n between
    the half-power points) is resolved whatever the base spacing; and around every frequency
    of `around` (Hz, e.g. a machine's running speed and its orders) inside it: the frequency
    itself and f (1 + k AROUND), k = -2..2."""
    base = (np.geomspace if spacing == "log" else np.linspace)(f_from, f_to, points)
    extra = []
    for fn, z in zip(natural, zeta):
        if f_from <= fn <= f_to:
            zz = max(z, 1e-4)
            pk = fn * np.sqrt(max(1 - 2 * zz**2, 0.0))     # displacement peak, Chopra Sec. 3.2
            extra += [fn * (1 + k * zz) for k in np.arange(-3, 3.01, 0.5)] + [pk]
    for fe in around:
        extra += [fe * (1 + k * AROUND) for k in range(-2, 3)]
    f = np.concatenate([base, extra])
    f = f[(f >= f_from) & (f <= f_to)]
    return np.unique(f)


def _static_at(static, a, b):
    """The static parts of frequencies a:b: a constant (n,) or, for terms that grow with the
    frequency, (scales (m, T), parts (T, n)) -> (b - a, n)."""
    return static[None, :] if isinstance(static, np.ndarray) else static[0][a:b] @ static[1]


def _amplitude_peaks(H, shapes, freq, static=None, block=500):
    """Largest |H shapes^T + static| over the sweep per component, the frequency of it and the
    complex amplitude there (for its phase); `static` as `_static_at` takes it."""
    n = shapes.shape[0]
    peak, peak_f, peak_c = np.zeros(n), np.zeros(n), np.zeros(n, complex)
    for a in range(0, len(freq), block):
        u = H[a:a + block] @ shapes.T
        if static is not None:
            u = u + _static_at(static, a, a + block)
        mag = np.abs(u)
        k = mag.argmax(axis=0)
        val = mag[k, np.arange(n)]
        better = val > peak
        peak[better], peak_f[better] = val[better], freq[a + k[better]]
        peak_c[better] = u[k[better], np.flatnonzero(better)]
    return peak, peak_f, peak_c


def motion_peaks(H, shapes, freq, static=None, block=500):
    """Largest velocity W |u| and acceleration W^2 |u| over the sweep per component of
    u = H shapes^T + static (absolute motion: `static` holds a ground motion's part), each with
    its frequency: (velocity, its Hz, acceleration, its Hz), each (n,)."""
    n = shapes.shape[0]
    out = [np.zeros(n) for _ in range(4)]
    for a in range(0, len(freq), block):
        u = H[a:a + block] @ shapes.T
        if static is not None:
            u = u + _static_at(static, a, a + block)
        W = 2 * np.pi * freq[a:a + block, None]
        for j, power in ((0, 1), (2, 2)):
            val = np.abs(u) * W ** power
            k = val.argmax(axis=0)
            top = val[k, np.arange(n)]
            better = top > out[j]
            out[j][better], out[j + 1][better] = top[better], freq[a + k[better]]
    return tuple(out)


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


def load_terms(model: Model, asm: Assembled, case: LoadCase) -> list:
    """The case's load as terms (n, f0 Hz, F (6n,), loads alone (6n,), fixed-end loads (e, 12)):
    F(W) = sum of (f / f0)^n F over the terms, each complex where its loads lag (real when none
    does); the ground's part is in the term (0, 1). A case whose loads all act in phase and
    grow with nothing is one real term, as before lags and growth existed."""
    n6 = 6 * model.n_nodes
    none = (np.zeros(n6), np.zeros((model.n_members, 12)))
    if all(i.kind != "unbalance" and i.lag == 0 and i.like is None for i in case.loads):
        F_only, fe = load_vector(model, asm, case) if case.loads else none
        return [(0.0, 1.0, effective_load(model, asm, case, case.ground), F_only, fe)]
    groups = {(0.0, 1.0): []} if case.ground is not None else {}
    for item in case.loads:
        groups.setdefault(growth(item), []).append(item)
    terms = []
    for (n, f0), items in groups.items():
        parts = []
        for part in (np.real, np.imag):
            loads = [replace(i, kind="force" if i.kind == "unbalance" else i.kind, lag=0.0, like=None,
                             vector=part(complex_amplitude(i))) for i in items]
            parts.append(load_vector(model, asm, SimpleNamespace(loads=loads, gravity=None)) if loads else none)
        F_only, fe = parts[0][0] + 1j * parts[1][0], parts[0][1] + 1j * parts[1][1]
        F = F_only
        if case.ground is not None and n == 0 and f0 == 1.0:
            F = F + effective_load(model, asm, SimpleNamespace(loads=(), gravity=None), case.ground)
        terms.append((n, f0, F, F_only, fe))
    return terms


def _residual(F, asm, lu, shapes, omega, pk):
    """residual_static of a real or complex load F (its real and imaginary parts apart)."""
    if not np.iscomplexobj(F):
        return residual_static(F, asm, lu, shapes, omega, pk)
    return (residual_static(F.real, asm, lu, shapes, omega, pk.real)
            + 1j * residual_static(F.imag, asm, lu, shapes, omega, pk.imag))


def _columns(static, cols, shape):
    """The static parts (as `_static_at` takes them) at the columns `cols`, reshaped to
    (frequencies or 1, *shape)."""
    if isinstance(static, np.ndarray):
        return static[cols][None].reshape(1, *shape)
    # the frequencies counted from the scales: a shape of size 0 (no member at a recorded node)
    # leaves -1 undetermined
    return (static[0] @ static[1][:, cols]).reshape(len(static[0]), *shape)


def _frequencies(case, omega, zeta, around) -> np.ndarray:
    """The frequencies of the case: its list `at`, or its sweep refined around the modes and
    `around`; undamped modes at them refused."""
    nat = omega / (2 * np.pi)
    undamped = (zeta == 0) & (omega > 0)
    if case.at is not None:
        hit = undamped & np.isclose(nat[:, None], case.at[None, :], rtol=1e-9, atol=0).any(axis=1)
    else:
        hit = undamped & (nat >= case.fmin) & (nat <= case.fmax)
    if hit.any():
        raise ModelError(f"case {case.name}: undamped modes inside the sweep have unbounded "
                         "response; give damping")
    if case.at is not None:
        return case.at.copy()
    return sweep_frequencies(case.fmin, case.fmax, case.points, case.spacing, nat, zeta, around)


def solve_harmonic_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                        lu=None, around=(), stations: int = 2) -> HarmonicResult:
    """The steady response of harmonic `case` on the modes of `modal`; a sweep is refined around
    the natural frequencies in it and the frequencies `around` (Hz: declared excitations).
    `stations`: along each member, where the per-point stress amplitudes are kept
    (fem.analysis.stress.harmonic_stresses; more for a case a combination adds)."""
    n6 = 6 * model.n_nodes
    f = asm.free
    phi, omega = modal.modes.phi, modal.modes.omega
    zeta = case_ratios(case, omega, added=spring_ratios(model, modal))
    terms = load_terms(model, asm, case)
    freq = _frequencies(case, omega, zeta, tuple(around) + limit_frequencies(case.limits))
    record = case.record if case.record is not None else np.arange(model.n_nodes)
    support = np.flatnonzero(model.restraint.any(axis=1) | (model.springs > 0).any(axis=1))
    members = np.flatnonzero(np.isin(model.conn, record).any(axis=1))
    member_rows = len(freq) * 2 * len(members)
    write_members = member_rows <= ROWS_LIMIT
    check_sweep(case, len(freq), len(omega), len(record), len(support), len(members) if write_members else 0)
    W = 2 * np.pi * freq
    PK = [phi.T @ F[f] for _, _, F, _, _ in terms]                  # (k,) each
    plain = len(terms) == 1 and terms[0][0] == 0
    S = np.stack([(freq / f0) ** n for n, f0, *_ in terms], axis=1)  # (m, T) growth of each term
    top = PK[0][None, :] if plain else S @ np.array(PK)
    H = top / (omega[None, :] ** 2 - W[:, None] ** 2 + 2j * zeta * omega * W[:, None])
    shapes = modal.shapes.reshape(n6, -1)

    def parts(each):
        """Static parts, one (6n,) or (e*12,) per term: a constant for one plain term."""
        each = [np.asarray(x) for x in each]
        return each[0] if plain else (S, np.array(each))

    static = parts([_residual(F, asm, lu, shapes, omega, pk) for (_, _, F, _, _), pk in zip(terms, PK)]) \
        if case.correction else None
    peak, peak_f, peak_c = _amplitude_peaks(H, shapes, freq, static)

    def translations(nodes):
        """(m, p, 3) complex absolute displacement amplitudes of the translations of `nodes`."""
        dofs = (6 * nodes[:, None] + np.arange(3)).ravel()
        u = (H @ shapes[dofs].T).reshape(len(freq), len(nodes), 3)
        if static is not None:
            u = u + _columns(static, dofs, (len(nodes), 3))
        if case.ground is not None:
            u = u - case.ground[None, None, :] / W[:, None, None] ** 2
        return u

    limits = check_limits(case.name, case.limits, freq, translations, model.n_nodes)
    # reactions and member end forces: per mode, superposed per frequency, with the static part
    # and, for member loads, minus the fixed-end forces (loads in phase with the excitation)
    Rm, Fm = field_responses(model, asm, shapes.T)
    fixed = np.zeros(n6, bool)
    fixed[asm.fixed] = True
    r_static, m_static = [], []
    for k, (_, _, F, F_only, fe) in enumerate(terms):
        r, m = -np.where(fixed, F_only, 0.0), -fe.ravel()
        if static is not None:
            s = static if plain else static[1][k]
            Rs, Fs = field_responses(model, asm, s.real[None])
            if np.iscomplexobj(s):
                Rs_i, Fs_i = field_responses(model, asm, s.imag[None])
                Rs, Fs = Rs + 1j * Rs_i, Fs + 1j * Fs_i
            r, m = r + Rs.ravel(), m + Fs.ravel()
        r_static.append(r)
        m_static.append(m)
    r_static, m_static = parts(r_static), parts(m_static)
    from .link_dynamics import harmonic_inertia

    # the inertia links and masses off their nodes carry into supports joins the elastic K u
    extra = harmonic_inertia(model, asm, case, H, shapes, W, static)
    Hr, Br = (H, Rm.reshape(len(omega), -1).T) if extra is None else \
        (np.hstack([H, extra[0]]), np.hstack([Rm.reshape(len(omega), -1).T, extra[1]]))
    r_peak, r_peak_f, r_peak_c = _amplitude_peaks(Hr, Br, freq, r_static)
    m_peak, m_peak_f, m_peak_c = _amplitude_peaks(H, Fm.reshape(len(omega), -1).T, freq, m_static)
    u = np.einsum("wk,rdk->wrd", H, modal.shapes[record])
    if static is not None:
        u = u + _columns(static, (6 * record[:, None] + np.arange(6)).ravel(), (len(record), 6))
    # complex reactions at every support and end forces of the members at the recorded nodes
    sdofs = (6 * support[:, None] + np.arange(6)).ravel()
    reactions = (np.einsum("wk,ksd->wsd", H, Rm[:, support]) + _columns(r_static, sdofs, (len(support), 6))
                 + (0 if extra is None else (extra[0] @ extra[1][sdofs].T).reshape(len(freq), len(support), 6)))
    # velocity and acceleration of the translations at every node, absolute: with the ground's
    # displacement -a_g / W^2 for a ground acceleration
    moving = (6 * np.arange(model.n_nodes)[:, None] + np.arange(3)).ravel()
    motion = [] if static is None else [(S if not plain else np.ones((len(freq), 1)),
                                         np.atleast_2d(static if plain else static[1])[:, moving])]
    if case.ground is not None:
        motion.append((-1.0 / W[:, None] ** 2, np.tile(case.ground, model.n_nodes)[None]))
    motion = (np.hstack([m[0] for m in motion]), np.vstack([m[1] for m in motion])) if motion else None
    vel, vel_f, acc, acc_f = motion_peaks(H, shapes[moving], freq, motion)
    warnings = ground_mass_warnings(case, modal, [case.ground] if case.ground is not None else [])
    if not write_members:
        member_forces = None
        warnings += (f"case {case.name}: the end-force table would have "
                     f"{len(freq):,} frequencies x {len(members)} members x 2 ends = {member_rows:,} rows, above "
                     f"the limit of {ROWS_LIMIT:,}, and is not written; record fewer nodes (so that at most "
                     f"{ROWS_LIMIT // (2 * len(freq)):,} members have an end at them) or use fewer points",)
    else:
        member_forces = (np.einsum("wk,kqc->wqc", H, Fm[:, members])
                         + _columns(m_static, (12 * members[:, None] + np.arange(12)).ravel(), (len(members), 12)))
    stresses = _stresses(model, H, Fm, m_static, freq, stations)
    complete = modes_complete_to(modal)
    top = float(freq[-1])
    if complete < top:
        warnings += (f"case {case.name}: the retained modes are complete only up to "
                     f"{complete:.4g} Hz, below the top of the sweep ({top:.4g} Hz); ask for more modes"
                     + (" (static correction on)" if static is not None else " or set correction = on"),)
    elif complete < MARGIN * top:
        # a mode just above the band is driven at r = f/fn up to 1/MARGIN: amplified by up to
        # 1/(1 - r^2) = 1.8 at the top of the sweep, which the static correction cannot see
        warnings += (f"case {case.name}: the modes are complete only up to "
                     f"{complete:.4g} Hz, less than {MARGIN:g} times the top of the sweep ({top:.4g} Hz); "
                     "modes just above the band respond dynamically there, beyond any static correction: "
                     f"ask for modes up to at least {MARGIN * top:.4g} Hz",)
    from .link_dynamics import harmonic_link_peaks

    lk = harmonic_link_peaks(model, asm, case, H, shapes, W, S, static) or (None, None, None)
    return HarmonicResult(case.name, freq, record, u, peak.reshape(-1, 6), peak_f.reshape(-1, 6),
                          zeta, static is not None, float(omega.max() / (2 * np.pi)),
                          r_peak.reshape(-1, 6), m_peak.reshape(-1, 12), _lags(peak_c).reshape(-1, 6),
                          r_peak_f.reshape(-1, 6), _lags(r_peak_c).reshape(-1, 6),
                          m_peak_f.reshape(-1, 12), _lags(m_peak_c).reshape(-1, 12),
                          support, reactions, members, member_forces, tuple(Note(case.location, w) for w in warnings),
                          complete, vel.reshape(-1, 3), vel_f.reshape(-1, 3), acc.reshape(-1, 3), acc_f.reshape(-1, 3),
                          case.ground, case.at is not None, limits, stresses, lk[0], lk[1],
                          None if lk[2] is None else _lags(lk[2]),
                          springs=_springs(model, H, shapes, freq, static))


def _stresses(model, H, Fm, m_static, freq, stations=2):
    """Stress amplitudes of every member at every frequency (phases kept), largest over them."""
    from .stress import harmonic_stresses

    e = model.n_members
    cols = Fm.reshape(len(Fm), -1)

    def forces(rows):
        static = m_static if isinstance(m_static, np.ndarray) else (m_static[0][rows], m_static[1])
        return (H[rows] @ cols).reshape(-1, e, 12) + _columns(static, np.arange(12 * e), (e, 12))

    return harmonic_stresses(model, forces, freq, stations)


def _springs(model, H, shapes, freq, static):
    """Amplitudes of the springs between nodes, largest over the frequencies (phases kept)."""
    from .spring_forces import deflection_matrix, peak_springs

    if model.node_springs is None:
        return None
    D = deflection_matrix(model)
    if static is not None:
        static = D @ static if isinstance(static, np.ndarray) else (static[0], (D @ static[1].T).T)
    pk, at, _ = _amplitude_peaks(H, np.asarray(D @ shapes), freq, static)
    return peak_springs(model, pk, at, "amplitude", "Hz")


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
