"""A `spectrum` case: per-mode peaks from a design or tabulated spectrum, combined per response
quantity (displacements, reactions, member end forces are each computed per mode and then
combined, never derived from combined displacements), directions combined afterwards,
optional missing-mass correction for the truncated modes."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ..assembly import Assembled
from ..errors import ModelError
from ..model import LoadCase, Model
from ..notes import Note
from .damping import case_ratios
from .link_dynamics import carried_ground, carried_inertia
from .modal_case import ModesCaseResult, field_responses, ground_mass_warnings
from .modal_sum import combine, combine_directions, cqc_correlation
from .spring_damping import spring_ratios
from .spring_forces import spectrum_springs
from .stress import spectrum_stresses

__all__ = ["SpectrumResult", "solve_spectrum_case"]


@dataclass
class SpectrumResult:
    """Peak (combined, >= 0) responses: u (n, 6), reactions (n, 6), member_forces (e, 12);
    per direction: sa (d, k) spectral accelerations at the modal periods, each at its mode's
    damping ratio zeta (k,) (m/s^2, direction factor included); damping_factor (k,) the factor
    those ordinates carry for damping (Spectrum.damping_factor: eta for a design curve,
    eta(zeta) / eta(made_for) for a table, else 1); modal_u (d, k, n, 6) signed per-mode
    displacement peaks; missing_fraction (d,); warnings: Notes at the case."""

    kind: ClassVar[str] = "spectrum"

    name: str
    u: np.ndarray
    reactions: np.ndarray
    member_forces: np.ndarray
    periods: np.ndarray
    sa: np.ndarray
    zeta: np.ndarray
    rule: str
    spatial: str
    directions: np.ndarray
    missing: bool
    missing_fraction: np.ndarray
    periods_outside: list
    base: np.ndarray          # (6,) combined total reaction Fx, Fy, Fz, Mx, My, Mz (about origin)
    damping_factor: np.ndarray = None
    warnings: tuple = ()
    links: np.ndarray | None = None   # (d,) combined peak forces of the rigid links on their linked DOFs
    stresses: object = None   # fem.analysis.stress.MemberStresses: per-mode stresses, combined
    springs: object = None    # fem.analysis.spring_forces.SpringForces: per-mode forces, combined (None: no springs)


def _base(model, R):
    """Total reaction of each field R (m, n, 6): forces and moments about the origin (m, 6)."""
    F = R[:, :, :3].sum(axis=1)
    Mo = R[:, :, 3:].sum(axis=1) + np.cross(model.coords[None], R[:, :, :3]).sum(axis=1)
    return np.c_[F, Mo]


def solve_spectrum_case(model: Model, asm: Assembled, case: LoadCase, modal: ModesCaseResult,
                        lu=None) -> SpectrumResult:
    sp = case.spectrum
    phi, omega = modal.modes.phi, modal.modes.omega
    if np.any(omega <= 0):
        raise ModelError(f"case {case.name}: rigid-body modes have no spectral response; "
                         "support the structure")
    zeta = case_ratios(case, omega, added=spring_ratios(model, modal))
    T = 2 * np.pi / omega
    outside = []
    if sp.shape == "table":
        tmin, tmax = sp.table[0, 0], sp.table[-1, 0]
        outside = [float(t) for t in T if t < tmin or t > tmax]
    warnings = _damping_warnings(case, sp, zeta)
    if outside:
        warnings += (f"case {case.name}: {len(outside)} modal period(s) outside the "
                     "table: held below the first period, falling as 1/T^2 beyond the last",)
    if not case.missing:
        warnings += ground_mass_warnings(case, modal, [case.directions], " or set missing = on")
    warnings = tuple(Note(case.location, w) for w in warnings)
    rho = cqc_correlation(omega, zeta)
    f = asm.free
    n6 = 6 * model.n_nodes
    M = asm.M[f][:, f]
    shapes = modal.shapes.reshape(n6, -1)
    C = carried_inertia(model, asm)
    per_dir_u, per_dir_r, per_dir_m, sas, modal_u, missing_frac = [], [], [], [], [], []
    per_dir_b, per_dir_l, per_dir_f, per_dir_s = [], [], [], []
    for d in range(3):
        factor = case.directions[d]
        if factor == 0:
            continue
        r = np.zeros((model.n_nodes, 6))
        r[:, d] = 1.0
        r_all = r.ravel()
        r = r_all[f]
        # the ground's load M r, with the inertia links and masses off supported nodes carry
        load = M @ r + carried_ground(model, asm, r_all)[f]
        gamma = phi.T @ load                             # (k,) mass-normalised participation
        sa = factor * sp(T, zeta)                       # (k,) m/s^2, each at its mode's damping
        U = (shapes * (gamma * sa / omega**2)).T        # (k, 6n) signed modal peaks
        Rm, Fm = field_responses(model, asm, U)
        if C is not None:           # each mode's equivalent static loads w^2 M U that reach supports
            Rm = Rm - (omega**2)[:, None, None] * np.asarray(C @ U.T).T.reshape(Rm.shape)
        total = float(r @ (M @ r))
        gamma0 = phi.T @ (M @ r)
        missing_frac.append(1 - float(np.sum(gamma0**2)) / total if total > 0 else np.nan)   # 0/0: no mass moves
        if case.missing:
            # residual rigid response: K^-1 M (r - sum gamma phi) at the zero-period acceleration,
            # one more term uncorrelated with every mode: SRSS with the modal combination under
            # srss and cqc, added absolutely under abs
            umm = np.zeros(n6)
            umm[f] = lu.solve(load - M @ (phi @ gamma)) * factor * sp.zpa()
            umm = asm.expand(umm)
            Rmm, Fmm = field_responses(model, asm, umm[None])
            if C is not None:       # and the rigid part's: with the masses carried into supports
                Rmm = Rmm - np.asarray(C @ (r_all - shapes @ gamma)).reshape(Rmm.shape) * factor * sp.zpa()
            rho_x = np.zeros((len(omega) + 1, len(omega) + 1))
            rho_x[:-1, :-1] = rho
            rho_x[-1, -1] = 1.0
            U2, R2, F2, rr = np.r_[U, umm[None]], np.r_[Rm, Rmm], np.r_[Fm, Fmm], rho_x
        else:
            U2, R2, F2, rr = U, Rm, Fm, rho
        if asm.link_rows is not None:
            # each mode's equivalent static loads w^2 M U: the links hold K U - w^2 M U at the
            # nodes that follow them; the missing mass's static loads M (r - Phi gamma) a_zpa
            lk = U @ asm.link_rows.T - (omega**2)[:, None] * (U @ asm.link_mass.T)
            if case.missing:
                r_all = np.zeros((model.n_nodes, 6))
                r_all[:, d] = 1.0
                dr_all = r_all.ravel() - shapes @ gamma
                lk = np.r_[lk, (asm.link_rows @ umm - asm.link_mass @ dr_all * factor * sp.zpa())[None]]
            per_dir_l.append(combine(lk, case.combine, rr))
        per_dir_u.append(combine(U2.reshape(len(U2), -1, 6), case.combine, rr))
        per_dir_r.append(combine(R2, case.combine, rr))
        per_dir_m.append(combine(F2, case.combine, rr))
        per_dir_f.append((F2, rr))
        per_dir_s.append((U2, rr))
        per_dir_b.append(combine(_base(model, R2), case.combine, rr))
        sas.append(sa)
        modal_u.append(U.reshape(len(U), -1, 6))
    rule = case.spatial
    return SpectrumResult(case.name, combine_directions(per_dir_u, rule),
                          combine_directions(per_dir_r, rule), combine_directions(per_dir_m, rule),
                          T, np.array(sas), zeta, case.combine, rule, case.directions,
                          case.missing, np.array(missing_frac), outside,
                          combine_directions(per_dir_b, rule), sp.damping_factor(zeta), warnings,
                          combine_directions(per_dir_l, rule) if per_dir_l else None,
                          spectrum_stresses(model, per_dir_f, case.combine, rule),
                          springs=spectrum_springs(model, per_dir_s, case.combine, rule))


def _damping_warnings(case, sp, zeta) -> tuple:
    """Say once how the spectrum's ordinates follow the modes' damping where that is a choice."""
    pct = f"{100 * zeta.min():.3g}" + (f" to {100 * zeta.max():.3g}" if np.ptp(zeta) > 1e-12 else "")
    if sp.shape == "table" and sp.made_for is not None and np.any(np.abs(zeta - sp.made_for) > 1e-12):
        return (f"case {case.name}: the spectrum table was made for "
                f"{100 * sp.made_for:.3g} % damping and the modes have {pct} %; each mode's ordinate is scaled "
                "by eta(zeta) / eta(made_for), eta = sqrt(10 / (5 + zeta in %)) >= 0.55 (EN 1998-1:2004 Eq. 3.6)",)
    if sp.shape == "twoperiod" and np.any(np.abs(zeta - 0.05) > 1e-12):
        return (f"case {case.name}: the two-period curve is a 5 % damped design "
                f"spectrum and is used unchanged for modes with {pct} % damping",)
    return ()
