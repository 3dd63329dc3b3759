"""Stress stiffening and linear buckling: the geometric stiffness Kg of the members' axial forces.

A static case's member axial forces N (tension positive) give Kg (fem/elements/geometric.py);
members' pretensions give a fixed initial state whose forces enter every Kg. Two uses:

- modes under a preload: (K + Kg) x = w^2 M x, refused when K + Kg is not positive definite
  (the preload buckles the structure), naming the lowest load factor;
- a buckling case: the lowest load factors lambda of (K + Kg0 + lambda Kg) x = 0 (Kg0 of the
  pretensions, if any) and their shapes, with residuals and a Sturm count.

Both are linear: the axial forces are those of the linear static solution on the undeformed
geometry, and the load factors are bifurcation loads of the perfect structure (no
large-displacement analysis, no imperfections, no yielding).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .. import elements as el
from ..assembly import Assembled
from ..elements.geometric import geometric_matrix as _geometric
from ..errors import ModelError
from .factor import NotPositiveDefinite, negative_eigenvalues, spd_factor
from .modes import DENSE_LIMIT, LANCZOS_TOL, sturm_shift

__all__ = ["BucklingResult", "Preload", "PretensionState", "axial_forces", "preload_of", "pretension_state", "with_state", "geometric_matrix", "lowest_factor", "preloaded", "prestress_forces",
           "solve_buckling", "sturm_check"]


@dataclass
class BucklingResult:
    """factors (k,) ascending positive load factors lambda: the loads of `loading` times lambda
    buckle the structure (linear, bifurcation); shapes (n_nodes, 6, k) buckled shapes scaled
    to a largest translation of 1; residual (k,) backward error of each pair in its own scale
    ||(K + lambda Kg) x|| / (|| |K| |x| || + lambda || |Kg| |x| ||); sturm_count the factors
    below sturm_shift counted from the inertia of K + shift Kg, sturm_expected the computed
    ones below it; axial (e,) N member axial forces of the loading (tension positive)."""

    kind: ClassVar[str] = "buckling"
    name: str
    loading: str
    factors: np.ndarray
    shapes: np.ndarray
    residual: np.ndarray
    sturm_count: int | None
    sturm_expected: int | None
    sturm_shift: float | None
    solver: str
    axial: np.ndarray
    prestressed: bool = False


def axial_forces(member_forces: np.ndarray) -> np.ndarray:
    """(e,) axial force of each member, N, tension positive, from the local end forces (e, 12) on
    the members (N at i is -f[0], at j f[6]; their mean where an axial line load makes them differ)."""
    return 0.5 * (member_forces[:, 6] - member_forces[:, 0])


@dataclass(frozen=True)
class Preload:
    """The forces of a state that enter the geometric stiffness: axial (e,) member axial forces N,
    tension positive; ends (e, 12) the members' end forces on them, local axes (the arms of end
    offsets carry them), or None to take the axial forces alone; links (d,) the rigid links'
    forces at their linked DOFs (fem.analysis.static.link_forces), or None."""

    axial: np.ndarray
    ends: np.ndarray | None = None
    links: np.ndarray | None = None

    def acts(self) -> bool:
        return bool(np.any(self.axial) or (self.links is not None and np.any(self.links)))


def preload_of(result) -> Preload:
    """The Preload of a static result (or a combination, or a PretensionState)."""
    return Preload(axial_forces(result.member_forces), result.member_forces, getattr(result, "links", None))


def geometric_matrix(model, asm: Assembled, N) -> sp.csr_matrix:
    """Global geometric stiffness (6n, 6n) of a state's forces, reduced by the rigid links'
    transformation as K is (T^T Kg T), plus the links' own term: a link carrying a force turns
    it with the reference node's rotation (fem.elements.rigid.link_geometric). N: a Preload, or
    the member axial forces (e,) N, tension positive, alone."""
    pre = N if isinstance(N, Preload) else Preload(np.asarray(N, dtype=float))
    G = _geometric(model, asm.R, asm.L, pre.axial, pre.ends)
    if asm.T is not None:
        G = asm.T.T @ G @ asm.T
        if pre.links is not None:
            from ..elements.rigid import link_geometric

            G = G + link_geometric(model.coords, model.links, asm.linked, pre.links)
        G = (0.5 * (G + G.T)).tocsr()
    return G


@dataclass
class PretensionState:
    """The state the members' pretensions settle into with no load: u (n, 6) m, reactions (n, 6)
    N (they add to zero: the pretensions pull within the structure), member_forces (e, 12) local
    end forces on the members with the pretension in N, axial (e,) N tension positive,
    residual and gross (6n,) as in StaticResult."""

    u: np.ndarray
    reactions: np.ndarray
    member_forces: np.ndarray
    axial: np.ndarray
    residual: np.ndarray
    gross: np.ndarray
    links: np.ndarray | None = None      # (d,) forces of the rigid links at their linked DOFs

    def beyond(self, pretension: np.ndarray) -> Preload:
        """The Preload of this state beyond the pretensions themselves (which K holds)."""
        ends = self.member_forces.copy()
        ends[:, 0] += pretension
        ends[:, 6] -= pretension
        return Preload(self.axial - pretension, ends, self.links)


def pretension_state(model, asm: Assembled, lu) -> PretensionState | None:
    """The pretension state, or None when no member is pretensioned.

    Each member's pretension T acts as an initial force: the member pulls its end nodes
    together with T, the structure deforms under that self-balanced pair until it is in
    equilibrium, and each member's force is then T plus its elastic force (a guy's pull
    compresses the mast it is anchored to, and the guy relaxes by as much as the mast shortens;
    a cable between fixed anchors keeps T). `lu` solves with K over the free DOFs, K holding
    the pretensions' own geometric stiffness (fem/assembly.py), so that a straight cable is
    not a mechanism."""
    from .static import link_forces, support_forces

    T = getattr(model, "pretension", None)
    if T is None or not np.any(T):
        return None
    xi, xj = model.coords[model.conn[:, 0]], model.coords[model.conn[:, 1]]
    ex = (xj - xi) / asm.L[:, None]
    f = np.zeros((model.n_nodes, 6))
    np.add.at(f[:, :3], model.conn[:, 0], T[:, None] * ex)
    np.add.at(f[:, :3], model.conn[:, 1], -T[:, None] * ex)
    f = f.ravel()
    u = np.zeros(6 * model.n_nodes)
    u[asm.free] = lu.solve(f[asm.free])
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    ue = np.einsum("eab,eb->ea", el.transform_matrix(asm.R), u[dofs])
    mf = np.einsum("eab,eb->ea", asm.k_local, ue)
    mf[:, 0] -= T                      # the initial force on the member: -T at i, +T at j along x
    mf[:, 6] += T
    Ku = asm.K @ u
    residual = np.zeros_like(u)
    residual[asm.free] = Ku[asm.free] - f[asm.free]
    reactions = support_forces(model, asm, Ku - f, u)
    return PretensionState(u.reshape(-1, 6), reactions.reshape(-1, 6), mf, axial_forces(mf), residual,
                           abs(asm.K) @ np.abs(u) + np.abs(f), link_forces(asm, u, f))


def prestress_forces(model, asm: Assembled, lu) -> np.ndarray | None:
    """(e,) axial forces N of the pretension state (`pretension_state`), or None when no member
    is pretensioned."""
    state = pretension_state(model, asm, lu)
    return None if state is None else state.axial


def with_state(result, state: PretensionState, coords):
    """A static result with the pretension state added once: the results of a static case or
    combination in a pretensioned model are the state plus the change its loads make."""
    from dataclasses import replace

    from .static import equilibrium

    reactions = result.reactions + state.reactions
    kept = result.residual is not None
    links = result.links + state.links if result.links is not None and state.links is not None else result.links
    return replace(result, u=result.u + state.u, reactions=reactions, links=links,
                   member_forces=result.member_forces + state.member_forces,
                   equilibrium=equilibrium(coords, result.applied, reactions),
                   residual=result.residual + state.residual if kept else None,
                   gross=result.gross + state.gross if kept else None)


def _residual(K, G, lam, X):
    aK, aG, a = abs(K), abs(G), np.abs(X)
    den = np.linalg.norm(aK @ a, axis=0) + np.abs(lam) * np.linalg.norm(aG @ a, axis=0)
    return np.linalg.norm(K @ X + (G @ X) * lam, axis=0) / np.where(den > 0, den, 1.0)


def _pairs(K, G, k: int, factor=None):
    """The lowest k positive factors of (K + lambda G) x = 0 (K positive definite), ascending,
    their vectors, whether more may exist above them, and the solver's name. Solved as
    (-G) x = theta K x, theta = 1 / lambda: the lowest positive lambda are the largest theta.
    `factor`: an SPD factor of K already made (else K is factored here)."""
    n = K.shape[0]
    if n <= DENSE_LIMIT:
        try:
            theta, X = sla.eigh(-G.toarray(), K.toarray())
        except sla.LinAlgError:
            raise NotPositiveDefinite("K") from None
        theta, X = theta[::-1], X[:, ::-1]
        pos = theta > 0
        theta, X = theta[pos], X[:, pos]
        return 1.0 / theta[:k + 2], X[:, :k + 2], False, "dense"
    factor = factor or spd_factor(K.tocsc())
    ask = min(k + 2, n - 1)
    theta, X = spla.eigsh(-G, k=ask, M=K, Minv=factor.operator(), which="LA", tol=LANCZOS_TOL)
    order = np.argsort(-theta)
    theta, X = theta[order], X[:, order]
    pos = theta > 0
    return 1.0 / theta[pos], X[:, pos], True, f"Lanczos on K^-1 Kg, {factor.name}"


def lowest_factor(K, G) -> float | None:
    """The lowest positive load factor of (K + lambda G) x = 0 over the free DOFs, or None."""
    lam, _, _, _ = _pairs(K, G, 1)
    return float(lam[0]) if len(lam) else None


def preloaded(model, asm: Assembled, G: sp.csr_matrix | None, what: str, location=None,
              G0: sp.csr_matrix | None = None):
    """(Assembled with K + G0 + G, SPD factor of it over the free DOFs) for the modes of case
    `what` under the geometric stiffness G of its preload and G0 of the pretension state (either
    may be None); refused when K + G0 + G is not positive definite (the preload buckles the
    structure), naming the lowest load factor of G over K + G0."""
    from dataclasses import replace

    f = asm.free
    base = asm.K if G0 is None else (asm.K + G0).tocsr()
    Kp = base if G is None else (base + G).tocsr()
    try:
        factor = spd_factor(Kp[f][:, f].tocsc())
    except NotPositiveDefinite:
        if G is None:
            raise ModelError(f"{what} buckles the structure (K + Kg of the state the pretensions settle into is "
                             "not positive definite), so it has no modes; check the pretensions", location) from None
        try:
            lam = lowest_factor(base[f][:, f].tocsc(), G[f][:, f].tocsc())
        except NotPositiveDefinite:
            lam = None
        said = f"its lowest buckling load factor is {lam:.4g}" if lam is not None else "K + Kg is singular"
        raise ModelError(f"{what} buckles the structure ({said}, below 1), so it has no modes under this preload; "
                         "check the loads, or find the buckling factors with a buckling case", location) from None
    return replace(asm, K=Kp), factor


def sturm_check(K, G, lam, keep: int, more: bool):
    """The Sturm check of the lowest `keep` of the computed factors `lam` (ascending) of
    (K + lambda G) x = 0: a shift s past them (past a repeated partner of the last, see
    modes.sturm_shift), the number of factors in (0, s) counted as the negative eigenvalues of
    K + s G (Sylvester's law of inertia: K + s G = K^1/2 (I - s C) K^1/2 with C's eigenvalues
    1 / lambda), and the number of computed ones below s. (None, None, None) when no shift can
    be placed; the count is None when the inertia cannot be read."""
    shift, expected = sturm_shift(lam, keep, more)
    if shift is None:
        return None, None, None
    return shift, negative_eigenvalues((K + shift * G).tocsc()), expected


ROUNDS = 3      # re-runs asking for more factors when the Sturm count shows some missed


def solve_buckling(model, asm: Assembled, case, N, N0=None, factor=None) -> BucklingResult:
    """The lowest `case.count` load factors and buckled shapes of the forces N (a Preload, or the
    axial forces (e,) alone) of the static case `case.loading`, with the pretension state's forces
    N0 held fixed (not scaled; beyond the pretensions themselves, which asm.K holds). `factor`: an
    SPD factor of K over the free DOFs already made (used when there is no N0)."""
    f = asm.free
    N = N if isinstance(N, Preload) else Preload(np.asarray(N, dtype=float))
    N0 = N0 if N0 is None or isinstance(N0, Preload) else Preload(np.asarray(N0, dtype=float))
    if not N.acts():
        raise ModelError(f"case {case.name}: the loads of case {case.loading} put no member in tension or "
                         "compression, so they cannot buckle the structure", case.location)
    held = N0 is not None and N0.acts()
    K = asm.K + geometric_matrix(model, asm, N0) if held else asm.K
    Kf = K[f][:, f].tocsc()
    G = geometric_matrix(model, asm, N)[f][:, f].tocsc()
    want = case.count
    for _ in range(ROUNDS):
        try:
            lam, X, more, solver = _pairs(Kf, G, want, None if held else factor)
        except NotPositiveDefinite:
            raise ModelError(f"case {case.name}: the structure's stiffness" + (" under the pretensions" if held else "")
                             + " is not positive definite, so it has no buckling factors", case.location) from None
        if not len(lam):
            raise ModelError(f"case {case.name}: no positive load factor: the loads of case {case.loading} do not "
                             "compress the structure enough to buckle it (reversed, they might)", case.location)
        keep = min(case.count, len(lam))
        shift, count, expected = sturm_check(Kf, G, lam, keep, more or len(lam) > keep)
        if count is None or count <= expected or not more:
            break
        want = count + 1          # some were missed below the shift: ask for all of them
    lam, X = lam[:keep], X[:, :keep]
    res = _residual(Kf, G, lam, X)
    full = np.zeros((6 * model.n_nodes, keep))
    full[f] = X
    shapes = full.reshape(model.n_nodes, 6, keep)
    # largest translation 1 (largest rotation 1 for a shape that only twists), its sign positive
    moved = np.abs(shapes[:, :3]).max(axis=(0, 1)) > 1e-9 * np.abs(shapes).max(axis=(0, 1))
    part = np.where(moved[None, None, :], shapes[:, :3], shapes[:, 3:]).reshape(-1, keep)
    top = np.argmax(np.abs(part), axis=0)
    scale = part[top, np.arange(keep)]
    shapes = shapes / np.where(scale != 0, scale, 1.0)
    return BucklingResult(case.name, case.loading, lam, shapes, res, count, expected, shift, solver, N.axial,
                          N0 is not None)
