"""Static load cases: consistent nodal loads, sparse direct solve, reactions, member end forces."""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np
import scipy.sparse.linalg as spla

from .. import elements as el
from ..assembly import Assembled, element_matrices
from ..errors import MechanismError, ModelError
from ..model import DIRECTIONS, LoadCase, Model

__all__ = ["balance", "combine", "condition_estimate", "equilibrium", "EQUILIBRIUM_TOL", "factorise",
           "line_loads", "load_vector", "normalised_stiffness", "precision_lines", "ROUNDING_FACTOR", "solve_static",
           "SOLVE_TOL", "StaticResult", "stiffness_contrast", "support_forces"]

EPS = np.finfo(float).eps
EQUILIBRIUM_TOL = 1e-8   # relative; a direct solve reaches ~1e-12, far looser means a bad model
ROUNDING_FACTOR = 4      # multiple of the rounding scale a correct solution may reach (our choice; measured <= 0.6)
PRECISION_WARN = 1e-6    # rounding of the balance worth a warning: a millionth of the loads (our choice)
SOLVE_TOL = 1e-10        # scaled normwise backward error of the solve (our choice; measured <= 5e-16)


@dataclass
class StaticResult:
    """u (n, 6) displacements, m / rad; reactions (n, 6) N / N m, forces of the supports and of
    springs to ground on the structure (zero elsewhere);
    member_forces (e, 12) local end forces N, Vy, Vz, T, My, Mz at i then j (forces on the member);
    equilibrium: relative out-of-balance of applied loads and reactions, forces and moments
    (see `equilibrium`); residual (6n,) K u - f at the free DOFs (0 elsewhere), N / N m;
    gross (6n,) |K| |u| + |f|, the sizes of the terms that make up K u - f, N / N m (see
    `balance` for the checks built on them)."""

    kind: ClassVar[str] = "static"

    name: str
    u: np.ndarray
    reactions: np.ndarray
    member_forces: np.ndarray
    applied: np.ndarray
    equilibrium: float
    residual: np.ndarray = None
    gross: np.ndarray = None
    diag: np.ndarray = None         # (6n,) diagonal of K at the free DOFs, 0 elsewhere (shared by the cases)
    knorm: float = 1.0              # ||D^-1/2 K D^-1/2||_inf, D = diag(K) over the free DOFs
    links: np.ndarray | None = None  # (d,) forces of the rigid links on their linked DOFs, see link_forces

    def checks(self, coords: np.ndarray) -> dict:
        """The self-checks of this solution (`balance`), by results.json name."""
        return balance(coords, self.applied, self.reactions, self.residual, self.gross, self.u, self.diag,
                       self.knorm)


def load_vector(model: Model, asm: Assembled, case: LoadCase, carried: bool = True):
    """Global load vector (6n,) and the local fixed-end load vectors (e, 12) of member loads.

    Line loads are given per member in global axes or in the member's local axes
    (``LoadItem.axes``); both end up as one local load per length w_local (e, 3). With rigid
    links the vector is carried onto the reduced DOFs (`Assembled.carry`) unless `carried` is
    False (the loads where they act)."""
    f = np.zeros(6 * model.n_nodes)
    for item in case.loads:
        if item.kind == "force":
            _scatter(f, 6 * item.targets[:, None] + np.arange(3), item.vector)
        elif item.kind == "moment":
            _scatter(f, 6 * item.targets[:, None] + np.arange(3, 6), item.vector)
    if case.gravity is not None:
        f += np.c_[model.point_mass[:, :3] * case.gravity, np.zeros((model.n_nodes, 3))].ravel()
        if model.mass_coupling is not None:      # the weight of a mass off its node turns it
            f += np.c_[np.zeros((model.n_nodes, 3)), model.mass_coupling[:, 3:, :3] @ case.gravity].ravel()
    w_local = line_loads(model, asm, case)
    fe = el.uniform_load_fixed_end(asm.L, w_local)
    rel = model.releases & ~model.truss[:, None]
    if model.truss.any():
        fe[model.truss] = 0.0
        fe[model.truss, 0:3] = w_local[model.truss] * asm.L[model.truss, None] / 2
        fe[model.truss, 6:9] = fe[model.truss, 0:3]
    if rel.any():
        k_full = element_matrices(model, condense=False)[0]
        fe = el.condense_load(k_full, fe, rel)
    T = asm.member_transform()
    fg = np.einsum("eba,eb->ea", T, fe)
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    _scatter(f, dofs, fg)
    return (asm.carry(f) if carried else f), fe


def line_loads(model: Model, asm: Assembled, case) -> np.ndarray:
    """The uniform line load on each member, N/m in its local axes (e, 3): the case's line loads
    (given in global or local axes) and the weight its gravity puts on the members."""
    w = np.zeros((model.n_members, 3))       # line load per member in global axes, N/m
    w_own = np.zeros((model.n_members, 3))   # line load per member in its own axes, N/m
    for item in case.loads:
        if item.kind == "line":
            _scatter(w_own if item.axes == "local" else w, item.targets[:, None], item.vector, rows=True)
    if case.gravity is not None:
        w += (model.rho * model.A + model.carried_mass)[:, None] * case.gravity
    return np.einsum("eab,eb->ea", asm.R, w) + w_own


def _scatter(out, idx, vals, rows=False):
    """out[idx] += vals with repeated indices summed.

    Values are broadcast to the index shape explicitly and summed with bincount: np.add.at with
    a broadcast value array gave intermittent NaN on this stack (numpy 2.4).
    """
    if rows:       # idx (t, 1) row indices into a 2-D out, vals (3,) for every row
        vals = np.broadcast_to(vals, (idx.shape[0], out.shape[1]))
        for c in range(out.shape[1]):
            out[:, c] += np.bincount(idx[:, 0], weights=np.ascontiguousarray(vals[:, c]),
                                     minlength=out.shape[0])
        return
    vals = np.ascontiguousarray(np.broadcast_to(vals, idx.shape), dtype=float).ravel()
    out += np.bincount(idx.ravel(), weights=vals, minlength=out.size)


def normalised_stiffness(model: Model, asm: Assembled):
    """K over the free DOFs with every member's stiffness divided by its own largest diagonal
    entry and every spring set to 1: the same zero-energy motions as K (a sum of positive
    semi-definite parts with positive weights vanishes only where every part does), but no
    contrast between members, so a very short or very stiff member is not taken for a hinge."""
    import scipy.sparse as sp

    k = asm.k_local
    scale = np.abs(np.diagonal(k, axis1=1, axis2=2)).max(axis=1, initial=0.0)
    kg = asm.to_nodes(k / np.where(scale > 0, scale, 1.0)[:, None, None])
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    n = 6 * model.n_nodes
    rows = np.r_[np.repeat(dofs, 12, axis=1).ravel(), np.arange(n)]
    cols = np.r_[np.tile(dofs, (1, 12)).ravel(), np.arange(n)]
    vals = np.r_[kg.ravel(), (model.springs.ravel() > 0).astype(float)]
    Kn = sp.coo_matrix((vals, (rows, cols)), shape=(n, n)).tocsr()
    ns = model.node_springs
    if ns is not None and len(ns):  # springs between nodes, each acting direction at unit stiffness
        from dataclasses import replace

        from ..elements.node_spring import spring_matrix

        Kn = (Kn + spring_matrix(replace(ns, k=(ns.k > 0).astype(float)), model.coords)).tocsr()
    if asm.T is not None:           # through the rigid links, as K itself
        Kn = (asm.T.T @ Kn @ asm.T).tocsr()
    return Kn[asm.free][:, asm.free]


def motion_probe(model: Model, asm: Assembled, Kff):
    """The matrix in which zero-energy motions are looked for: the member-normalised stiffness
    (`normalised_stiffness`), so that a stiffness contrast between members (a 0.1 mm link, a
    member with E = 0.2 Pa at a support) is not taken for a mechanism and is left to the
    condition estimate; `Kff` itself when the model's member matrices do not match it (a K
    built elsewhere)."""
    return normalised_stiffness(model, asm) if Kff.shape == (len(asm.free),) * 2 else Kff


def zero_energy_motions(Kff, max_modes: int = 6):
    """Up to `max_modes` motions of zero strain energy of K over the free DOFs: y (n, k) with
    orthonormal columns in the coordinates that scale K to unit diagonal, and that scaling
    s (n,) (a motion in physical units is s * y).

    The lowest eigenvectors of the scaled K (dense up to 3000 DOFs, shift-invert Lanczos
    above) whose eigenvalues lie below 1e-9, so rigid rotations show up as rotations, not
    pivot accidents."""
    import scipy.linalg as sla

    d = np.abs(Kff.diagonal())
    d = np.where(d > 0, d, 1.0)
    s = 1 / np.sqrt(d)
    A = Kff.multiply(s[:, None]).multiply(s[None, :]).tocsc()
    n = A.shape[0]
    k = min(max_modes, n)
    if n <= 3000:
        lam, vec = sla.eigh(A.toarray(), subset_by_index=[0, k - 1])
    else:
        lam, vec = spla.eigsh(A, k=k, sigma=-1e-6, which="LM")
    return vec[:, lam < 1e-9], s


def free_motions(model: Model, asm: Assembled, Kff, max_modes: int = 6):
    """Zero-stiffness motions of K over the free DOFs: a list of mechanisms, each the list of
    (node, direction) pairs that move most in it (components above 10 % of the largest), from
    `zero_energy_motions` of the member-normalised stiffness (`motion_probe`)."""
    vec, s = zero_energy_motions(motion_probe(model, asm, Kff), max_modes)
    out = []
    for j in range(vec.shape[1]):
        v = np.abs(vec[:, j] * s)        # back to physical scaling
        big = np.flatnonzero(v >= 0.1 * v.max())
        big = big[np.argsort(-v[big])][:8]
        out.append([(model.node_names[asm.free[i] // 6], DIRECTIONS[asm.free[i] % 6]) for i in big])
    return out


def stiffness_contrast(model: Model, asm: Assembled) -> float:
    """Ratio of the largest to the smallest member or spring stiffness scale (the largest
    diagonal entry of each member's matrix, each spring's constant): the contrast that a
    singular-looking K without a free motion comes from."""
    k = asm.k_local
    scale = np.abs(np.diagonal(k, axis1=1, axis2=2)).max(axis=1, initial=0.0)
    scale = np.r_[scale, model.springs[model.springs > 0]]
    if model.node_springs is not None:
        scale = np.r_[scale, model.node_springs.k[model.node_springs.k > 0]]
    scale = scale[scale > 0]
    return float(scale.max() / scale.min()) if len(scale) else 1.0


class _Symmetric:
    """A factor of the symmetric K behind the solve(b, trans) of scipy's SuperLU objects."""

    def __init__(self, factor):
        self.factor = factor
        self.name = factor.name

    def solve(self, b, trans="N"):
        return self.factor.solve(b)


def factorise(model: Model, asm: Assembled, what: str = "static solve"):
    """Factor K over the free DOFs. A positive definite K (every stable structure) is factored
    by the family the eigen solver would choose for it (banded Cholesky, PARDISO or SuperLU in a
    symmetric ordering, `factor.spd_factor`); otherwise a pivoting sparse LU finds out why: a
    singular K raises MechanismError naming, for each free motion, the nodes and directions
    that move."""
    Kff = asm.K[asm.free][:, asm.free].tocsc()
    from .factor import PIVOT_TOL, NotPositiveDefinite, column_diagonal, ordering, spd_factor
    from .memory import check_factor_memory

    order = ordering(Kff)
    check_factor_memory(Kff, what, order)
    try:
        return _Symmetric(spd_factor(Kff, order=order))
    except NotPositiveDefinite:
        pass
    singular = False
    try:
        lu = spla.splu(Kff, permc_spec="MMD_AT_PLUS_A")
        # each pivot against its own column's diagonal, so stiffness contrasts between members
        # are not mistaken for a mechanism (they are reported by the condition estimate)
        singular = bool(np.any(np.abs(lu.U.diagonal()) < PIVOT_TOL * np.abs(column_diagonal(lu, Kff))))
    except RuntimeError:
        lu, singular = None, True
    motions = free_motions(model, asm, Kff) if singular else []
    if singular and lu is None and not motions:
        # no motion is free, yet the matrix is exactly singular: the contrast is beyond double precision
        raise ModelError(f"the stiffness is singular to working precision, but no node can move without "
                         f"straining a member or spring: a stiffness contrast of about "
                         f"{stiffness_contrast(model, asm):.0e} between members, beyond double precision "
                         "(1e16), not a mechanism; check E, sections, springs and units, and very short members")
    if singular and motions:
        text = "; ".join(f"motion {i + 1}: " + ", ".join(f"{n} {d}" for n, d in mm)
                         for i, mm in enumerate(motions))
        raise MechanismError(f"the structure is a mechanism (singular stiffness), {len(motions)} free "
                             f"motion(s) - {text}; add supports or members, or remove end releases there",
                             [p for mm in motions for p in mm])
    return lu


def condition_estimate(Kff, lu) -> float:
    """1-norm condition estimate ||K|| ||K^-1|| (Hager-Higham estimator, a few solves)."""
    n = Kff.shape[0]
    if n == 0:
        return 1.0
    inv = spla.LinearOperator((n, n), matvec=lu.solve, rmatvec=lambda x: lu.solve(x, trans="T"), dtype=float)
    # the estimator draws random start vectors from numpy's global generator: seeded (and the
    # caller's state put back) so that the same model always gets the same estimate
    state = np.random.get_state()
    np.random.seed(20261203)
    try:
        return float(spla.norm(Kff, 1) * spla.onenormest(inv))
    finally:
        np.random.set_state(state)


def held_dofs(model: Model, asm: Assembled) -> list[tuple[str, str]]:
    """DOFs held because nothing resists them, leaving out the rotations of truss-only nodes
    (which is what a truss node is): worth a note, since a load there would be refused."""
    beam_nodes = np.zeros(model.n_nodes, bool)
    beam_nodes[model.conn[~model.truss].ravel()] = True
    keep = [d for d in asm.inert if d % 6 < 3 or beam_nodes[d // 6]]
    return [(model.node_names[d // 6], DIRECTIONS[d % 6]) for d in keep]


def equilibrium(coords: np.ndarray, applied: np.ndarray, reactions: np.ndarray) -> float:
    """Relative out-of-balance of the applied loads and the support forces, both (n, 6) at
    nodes at `coords` (n, 3): the resultant force over the sum of the applied force magnitudes,
    and the resultant moment about the centroid of the nodes over the sum of the moment
    magnitudes of loads and support forces (forces times their lever arms included); the
    larger of the two."""
    total = applied + reactions
    arm = coords - coords.mean(axis=0)
    force = total[:, :3].sum(axis=0)
    moment = (np.cross(arm, total[:, :3]) + total[:, 3:]).sum(axis=0)
    f_ref = np.abs(applied[:, :3]).sum()
    gross = np.abs(applied) + np.abs(reactions)
    m_ref = (np.linalg.norm(arm, axis=1) * np.linalg.norm(gross[:, :3], axis=1)).sum() + gross[:, 3:].sum()
    if f_ref + m_ref == 0:
        return 0.0
    return float(max(np.abs(force).max() / max(f_ref, 1e-300) if f_ref else 0.0,
                     np.abs(moment).max() / max(m_ref, 1e-300) if m_ref else 0.0))


def _moment_scale(arm, a):
    """Sum of the moment sizes of nodal force and moment magnitudes a (n, 6) about the centroid."""
    return float((np.linalg.norm(arm, axis=1) * np.linalg.norm(a[:, :3], axis=1)).sum() + a[:, 3:].sum())


def balance(coords, applied, reactions, residual=None, gross=None, u=None, diag=None, knorm=1.0) -> dict:
    """Self-checks of a static solution, each against the rounding scale of its own computation.

    coords (n, 3) m; applied, reactions (n, 6); residual, gross (6n,) as in `StaticResult`;
    u (6n,) displacements; diag (6n,) the diagonal of K at the free DOFs, 0 elsewhere; knorm
    ||D^-1/2 K D^-1/2||_inf over the free DOFs (see below). The loads f are `applied`.

    - equilibrium_relative: `equilibrium` (out-of-balance of loads and support forces over the
      loads and support forces).
    - equilibrium_rounding: the out-of-balance that rounding alone can leave, on the same
      relative scale: eps times the sizes of the terms that make it up, |applied| + |reactions|
      + |K| |u| + |f| summed over the nodes in each direction (for the moment, times their lever
      arms). Every entry of K is stored, and every entry of K u computed, to about eps times its
      own terms (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., sec. 3.1), and
      a backward-stable solve leaves K u - f of that size (sec. 7.1), so the balance of even the
      exact solution of the stored K is only defined to this much: large where a short stiff
      member (|K| ~ 1e18 N/m) moves with the structure, and then the results carry errors of
      about that size too (the stored K itself is that far from the structure's).
    - equilibrium_limit: what equilibrium_relative is held to, the larger of EQUILIBRIUM_TOL
      and ROUNDING_FACTOR times equilibrium_rounding; equilibrium_pass: the force in each
      direction and the moment about each axis within it.
    - solve_backward_error: the normwise backward error of the solve (Rigal and Gaches; Higham,
      2nd ed., sec. 7.1, thm. 7.1, infinity norm) of the system scaled to a unit diagonal,
      D^-1/2 K D^-1/2 (D^1/2 u) = D^-1/2 f with D = diag(K) over the free DOFs: the smallest
      relative change of K and f, in that scaling, that makes u exact. The scaling makes it free
      of units (m against rad) and judges a soft part of the structure at its own scale, not at
      the scale of the stiffest member; solve_backward_error_pass: below SOLVE_TOL. None where
      no residual is kept.
    """
    applied, reactions = np.asarray(applied), np.asarray(reactions)
    out = {"equilibrium_relative": equilibrium(coords, applied, reactions)}
    n = len(coords)
    gross = np.zeros((n, 6)) if gross is None else np.asarray(gross).reshape(n, 6)
    total = applied + reactions
    arm = coords - coords.mean(axis=0)
    force = np.abs(total[:, :3].sum(axis=0))
    moment = np.abs((np.cross(arm, total[:, :3]) + total[:, 3:]).sum(axis=0))
    f_ref = np.abs(applied[:, :3]).sum()
    m_ref = _moment_scale(arm, np.abs(applied) + np.abs(reactions))
    both = np.abs(applied) + np.abs(reactions) + gross
    f_round = EPS * both[:, :3].sum(axis=0)                  # (3,) one per direction
    m_round = EPS * _moment_scale(arm, both)
    rel, lim, ok = [], [], True
    for err, ref, rnd in ((force, f_ref, f_round), (moment, m_ref, m_round)):
        if ref == 0:                      # nothing to balance: only rounding may be left over
            ok = ok and bool(np.all(err <= ROUNDING_FACTOR * rnd))
            continue
        rel.append(float(np.max(rnd)) / ref)
        lim.append(max(EQUILIBRIUM_TOL, ROUNDING_FACTOR * rel[-1]))
        ok = ok and bool(np.all(err <= np.maximum(EQUILIBRIUM_TOL * ref, ROUNDING_FACTOR * rnd)))
    out["equilibrium_rounding"] = float(max(rel, default=0.0))
    out["equilibrium_limit"] = float(max(lim, default=EQUILIBRIUM_TOL))
    out["equilibrium_pass"] = ok
    out["solve_backward_error"] = out["solve_backward_error_pass"] = None
    if residual is None or u is None or diag is None:
        return out
    s = np.sqrt(np.abs(np.asarray(diag).ravel()))
    free = s > 0
    s = s[free]
    r = np.abs(np.asarray(residual).ravel()[free]) / s
    us = np.abs(np.asarray(u).ravel()[free]) * s
    fs = np.abs(applied.ravel()[free]) / s
    den = knorm * us.max(initial=0.0) + fs.max(initial=0.0)
    # with nothing loaded and nothing moving, any residual at all is wholly wrong: 1, not infinity
    eta = float(r.max(initial=0.0) / den) if den > 0 else (0.0 if r.max(initial=0.0) == 0 else 1.0)
    out["solve_backward_error"] = eta
    out["solve_backward_error_pass"] = bool(eta < SOLVE_TOL)
    return out


def precision_lines(checks: dict) -> list[str]:
    """Lines for the summary: the backward error when it fails, and a warning when rounding
    limits how well this case can balance to more than PRECISION_WARN of its loads."""
    out = []
    if checks["solve_backward_error_pass"] is False:
        out.append(f"backward error of the solve {checks['solve_backward_error']:.1e} FAIL (above {SOLVE_TOL:.0e}): "
                   "the displacements do not solve the stiffness equations")
    if checks["equilibrium_rounding"] > PRECISION_WARN:
        out.append(f"warning: loads and support forces can only balance to about {checks['equilibrium_rounding']:.1e} "
                   "here, from rounding at members far stiffer than the rest that move with the structure (e.g. very "
                   f"short members); the check is held to {checks['equilibrium_limit']:.1e}, and displacements and "
                   "forces may be in error by about the out-of-balance (those members' own forces by more); "
                   "lengthen or soften such members, or leave them out")
    return out


def support_forces(model: Model, asm: Assembled, residual: np.ndarray, u: np.ndarray) -> np.ndarray:
    """Forces of the supports and springs on the structure, (..., 6n): the out-of-balance
    K u - f at restrained DOFs, and -k u where a spring to ground holds a free DOF (the spring
    is part of K, so its force never shows in the residual). Works on stacks of fields."""
    out = np.zeros_like(residual)
    out[..., asm.fixed] = residual[..., asm.fixed]
    k = model.springs.ravel()
    sprung = asm.free[k[asm.free] > 0]
    if asm.linked is not None:         # a spring at a linked DOF acts through the link
        sprung = np.r_[sprung, asm.linked[k[asm.linked] > 0]]
    out[..., sprung] = -k[sprung] * u[..., sprung]
    return out


def check_resisted(model: Model, asm: Assembled, case: LoadCase, f: np.ndarray) -> None:
    """Refuse a load vector f (6n,) of `case` that acts on a held DOF (nothing resists it there)."""
    loaded = asm.inert[np.abs(f[asm.inert]) > 0]
    if loaded.size:
        free = [(model.node_names[d // 6], DIRECTIONS[d % 6]) for d in loaded]
        shown = ", ".join(f"{n} {d}" for n, d in free[:12])
        raise MechanismError(f"case {case.name}: load acts where nothing resists it: {shown}", free, case.location)


def solve_static(model: Model, asm: Assembled, case: LoadCase, lu=None) -> StaticResult:
    lu = lu or factorise(model, asm)
    loads, fe = load_vector(model, asm, case, carried=False)
    f = asm.carry(loads)
    check_resisted(model, asm, case, f)
    u = np.zeros(6 * model.n_nodes)
    u[asm.free] = lu.solve(f[asm.free])
    u = asm.expand(u)
    if not np.isfinite(u).all():
        raise MechanismError(f"case {case.name}: the solve did not give finite displacements; "
                             "the stiffness is singular or badly conditioned", [])
    Ku = asm.K @ u
    reactions = support_forces(model, asm, Ku - f, u)
    residual = np.zeros_like(u)
    residual[asm.free] = Ku[asm.free] - f[asm.free]
    gross = abs(asm.K) @ np.abs(u) + np.abs(f)
    diag, knorm = _scaled_stiffness(asm)
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    T = asm.member_transform()
    ue = np.einsum("eab,eb->ea", T, u[dofs])
    mf = np.einsum("eab,eb->ea", asm.k_local, ue) - fe
    applied = loads.reshape(-1, 6)
    return StaticResult(case.name, u.reshape(-1, 6), reactions.reshape(-1, 6), mf, applied,
                        equilibrium(model.coords, applied, reactions.reshape(-1, 6)), residual, gross, diag, knorm,
                        link_forces(asm, u, loads))


def link_forces(asm: Assembled, u: np.ndarray, loads: np.ndarray):
    """Forces the rigid links exert on the nodes that follow them, (d,) at the linked DOFs
    (`asm.linked`), N / N m, or None without links: what the unreduced static equilibrium
    there lacks, K u - f, with u (6n,) expanded and f (6n,) the loads where they act."""
    if asm.link_rows is None:
        return None
    return asm.link_rows @ u - loads[asm.linked]


def _scaled_stiffness(asm: Assembled):
    """diag (6n,) of K at the free DOFs (0 elsewhere) and ||D^-1/2 K D^-1/2||_inf over them, cached
    on `asm` (every case and combination of a run shares them)."""
    got = getattr(asm, "_scaled_stiffness", None)
    if got is None:
        Kff = asm.K[asm.free][:, asm.free]
        d = np.abs(Kff.diagonal())
        s = 1 / np.sqrt(np.where(d > 0, d, 1.0))
        knorm = float((abs(Kff) @ s * s).max(initial=1.0))
        diag = np.zeros(asm.K.shape[0])
        diag[asm.free] = d
        got = (diag, knorm)
        try:
            asm._scaled_stiffness = got
        except AttributeError:      # a frozen or slotted Assembled: recompute next time
            pass
    return got


def combine(name: str, parts, coords) -> StaticResult:
    """The combination sum of factor * result over `parts` [(factor, StaticResult)], with its
    own balance: residual summed with the factors, gross terms with their sizes |factor|."""
    u, reactions, forces, applied = (sum(f * getattr(r, a) for f, r in parts)
                                     for a in ("u", "reactions", "member_forces", "applied"))
    kept = all(r.residual is not None for _, r in parts) and parts
    residual = sum(f * r.residual for f, r in parts) if kept else None
    gross = sum(abs(f) * r.gross for f, r in parts) if kept else None
    first = parts[0][1] if parts else None
    links = sum(f * r.links for f, r in parts) if parts and all(r.links is not None for _, r in parts) else None
    return StaticResult(name, u, reactions, forces, applied, equilibrium(coords, applied, reactions), residual,
                        gross, first.diag if kept else None, first.knorm if kept else 1.0, links)
