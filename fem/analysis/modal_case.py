"""A `modes` case from the deck: the eigen solve on the model and its participation table."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ..assembly import Assembled
from ..errors import ModelError
from ..model import LoadCase, Model
from ..notes import Note
from .modes import ModalResult, Participation, lanczos_limit, participation, solve_modes

__all__ = ["ModesCaseResult", "effective_load", "field_responses", "ground_mass_warnings", "influence_vectors",
           "residual_static", "solve_modes_case"]

AXES = ("X", "Y", "Z", "RX", "RY", "RZ")
GROUND_MASS = 0.9     # share of the mass the modes should carry in a direction the ground shakes


@dataclass
class ModesCaseResult:
    kind: ClassVar[str] = "modes"
    name: str
    modes: ModalResult
    part: Participation
    shapes: np.ndarray        # (n_nodes, 6, k) mode shapes on all nodes (zeros at fixed DOFs)
    reference: np.ndarray     # (3,) point for rotational participation, m
    target: np.ndarray | None = None   # (3,) requested cumulative mass fractions X, Y, Z
    target_met: bool | None = None
    first_mode: int = 0                # index of shapes[..., 0] in the full set (for one-mode views)
    n_finite: int = 0                  # free DOFs that carry mass: the number of finite modes


def influence_vectors(model: Model, point) -> np.ndarray:
    """(6n, 6) rigid-body displacement fields: unit translations X, Y, Z and unit rotations
    about axes through `point`."""
    n = model.n_nodes
    R = np.zeros((n, 6, 6))
    r = model.coords - np.asarray(point)
    for a in range(3):
        R[:, a, a] = 1.0
        axis = np.eye(3)[a]
        R[:, 0:3, 3 + a] = np.cross(axis, r)
        R[:, 3 + a, 3 + a] = 1.0
    return R.reshape(6 * n, 6)


def shape_rows(case: LoadCase, model: Model, count: int, n_free: int, asked: str = "") -> None:
    """Refuse a modes case whose mode-shape table (modes x nodes rows) would pass ROWS_LIMIT;
    the advice is also within what the eigen solver accepts for n_free DOFs."""
    from ..limits import ROWS_LIMIT
    from .modes import DENSE_MAX

    rows = count * model.n_nodes
    if rows > ROWS_LIMIT:
        most = min(ROWS_LIMIT // max(model.n_nodes, 1), n_free if n_free <= DENSE_MAX else lanczos_limit(n_free))
        raise ModelError(f"case {case.name}: {asked}{count} modes x {model.n_nodes} nodes would write {rows:,} rows of "
                         f"mode shapes, above the limit of {ROWS_LIMIT:,}; ask for at most {most} modes "
                         "(count, or a lower fmax)")


def solve_modes_case(model: Model, asm: Assembled, case: LoadCase, factor=None,
                     notes: list[Note] | None = None) -> ModesCaseResult:
    """Solve a modes case (a `ModesCase`, its options checked on construction).

    `factor`: a `factor.SPDFactor` of K over the free DOFs already made (by the model's checks),
    used by shift-invert Lanczos at zero shift instead of factoring K again. What is worth
    saying (more modes asked for than the model has) is appended to `notes`."""
    count, fmax, point = case.n_modes, case.fmax, case.reference
    f = asm.free
    K, M = asm.K[f][:, f], asm.M[f][:, f]
    if len(f) == 0:
        raise ModelError(f"case {case.name}: every DOF is restrained (or has no stiffness), so nothing can "
                         "vibrate; check the supports")
    if M.nnz == 0 or M.diagonal().max() <= 0:
        raise ModelError(f"case {case.name}: the model has no mass; give materials a density or add masses")
    if count is not None:
        shape_rows(case, model, min(count, len(f)), len(f),
                   f"count = {count} asks for all {len(f)} modes; " if count > len(f) else "")
    R = influence_vectors(model, point)[f]
    target = case.target
    cache = {} if factor is None else {"factor": (factor, 0.0)}
    if target is None:
        modes = solve_modes(K.tocsr(), M.tocsr(), n_modes=count, f_max=fmax, cache=cache)
        if len(modes.omega) == 0:
            # the answer to 'which modes lie below fmax' is none: say so with the lowest one
            low = solve_modes(K.tocsr(), M.tocsr(), n_modes=1, sturm=False).freq
            lowest = f"the lowest is {low[0]:.4g} Hz" if len(low) else "the model has no finite mode"
            raise ModelError(f"case {case.name}: no mode lies at or below fmax = {fmax:.4g} Hz ({lowest}); "
                             "raise fmax or ask for a count")
        part = participation(modes.phi, M, R)
        met = None
        if count is not None and count > len(modes.omega) and notes is not None:
            notes.append(Note(case.location, f"case {case.name} asks for {count} modes, but the model "
                              f"has only {len(modes.omega)}; all of them are computed"))
    else:
        # add modes until the cumulative effective mass reaches the target in each direction
        cap = min(case.max_count, len(f))
        most = lanczos_limit(len(f))
        if cap > most:
            raise ModelError(f"case {case.name}: max = {cap} modes is more than one eigen solve of {len(f)} free "
                             f"DOFs finds in reasonable time (the limit is {most}); set max = {most} or less")
        k = min(12, cap)
        K, M = K.tocsr(), M.tocsr()
        while True:
            modes = solve_modes(K, M, n_modes=k, cache=cache)
            part = participation(modes.phi, M, R)
            got = np.nan_to_num(part.cumulative[-1, :3], nan=1.0)
            met = bool(np.all(got >= target - 1e-12))
            if met or k >= cap:
                break
            k = min(2 * k, cap)
        if met:      # keep just enough modes
            need = [int(np.argmax(np.nan_to_num(part.cumulative[:, d], nan=1.0) >= target[d] - 1e-12))
                    for d in range(3)]
            keep = max(need) + 1
            if keep < len(modes.omega):      # solve again so every check speaks of these modes
                modes = solve_modes(K, M, n_modes=keep, cache=cache)
                part = participation(modes.phi, M, R)
    shape_rows(case, model, len(modes.omega), len(f))
    shapes = np.zeros((6 * model.n_nodes, len(modes.omega)))
    shapes[f] = modes.phi
    shapes = asm.expand(shapes)          # linked nodes follow their reference nodes
    return ModesCaseResult(case.name, modes, part, shapes.reshape(model.n_nodes, 6, -1), point,
                           target, met, n_finite=modes.n_finite)



def field_responses(model: Model, asm: Assembled, U: np.ndarray):
    """Elastic reactions (m, n, 6) of supports and springs and member end forces (m, e, 12) in
    local axes of displacement fields U (m, 6n), without any member load (K u only)."""
    from .static import support_forces

    R = support_forces(model, asm, (asm.K @ U.T).T, U)
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    T = asm.member_transform()
    ue = np.einsum("eab,meb->mea", T, U[:, dofs])
    mf = np.einsum("eab,meb->mea", asm.k_local, ue)
    return R.reshape(len(U), -1, 6), mf


def effective_load(model: Model, asm: Assembled, case: LoadCase, ground=None) -> np.ndarray:
    """Spatial load pattern (6n,): the case's loads, minus M r a for a ground acceleration
    vector `ground` (3,) m/s^2 (relative-motion form m u'' + c u' + k u = -M r a_g)."""
    from .static import load_vector

    F = load_vector(model, asm, case)[0] if case.loads else np.zeros(6 * model.n_nodes)
    if ground is not None:
        r = np.zeros((model.n_nodes, 6))
        r[:, :3] = ground
        f = asm.free
        F = F.copy()
        F[f] -= asm.M[f][:, f] @ r.ravel()[f]
        from .link_dynamics import carried_ground

        F[f] -= carried_ground(model, asm, r.ravel())[f]
    return F


def residual_static(F: np.ndarray, asm: Assembled, lu, shapes, omega, pk) -> np.ndarray:
    """Static response of the modes left out, (K^-1 - sum phi phi^T / w^2) F, as a (6n,) field
    (mode-acceleration / residual-flexibility correction; Cornwell, Craig & Johnson 1983)."""
    full = np.zeros(len(F))
    full[asm.free] = lu.solve(F[asm.free])
    full = asm.expand(full)
    pos = omega > 0
    return full - shapes[:, pos] @ (pk[pos] / omega[pos] ** 2)


def ground_mass_warnings(case: LoadCase, modal: ModesCaseResult, accel, remedy: str = "") -> tuple:
    """Texts warning that a ground acceleration shakes a direction (X, Y, Z) in which the retained
    modes carry under GROUND_MASS of the mass: the response to the rest is left out (a modes
    case with a target in other directions, or a count too low for vertical modes). 90 % is the
    usual requirement on the sum of effective modal masses (common practice, e.g. EN 1998-1:2004
    4.3.3.3.1, from memory). `accel` are the ground vectors (3,) of the case."""
    shaken = np.any([np.asarray(a, float) != 0 for a in accel], axis=0) if len(accel) else np.zeros(3, bool)
    got = modal.part.cumulative[-1, :3] if len(modal.part.cumulative) else np.zeros(3)
    out = []
    for d in np.flatnonzero(shaken):
        if np.isfinite(got[d]) and got[d] < GROUND_MASS:
            out.append(f"case {case.name}: the modes of {modal.name} carry {100 * got[d]:.3g} % of the mass in "
                       f"{AXES[d]}, a direction of the ground motion, so the response leaves out the rest; ask "
                       f"{modal.name} for more modes (e.g. a target of 90 percent in {AXES[d]}){remedy}")
    return tuple(out)
