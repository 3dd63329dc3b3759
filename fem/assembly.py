"""DOF map and vectorised assembly of global K and M (COO triplets -> CSR once)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from . import elements as el
from .errors import ModelError
from .geometry import local_axes
from .limits import HUGE
from .model import Model

__all__ = ["Assembled", "BlockPattern", "assemble", "element_matrices"]


@dataclass
class Assembled:
    """Global matrices over all 6 n DOFs, and the free/restrained split.

    K, M : (6n, 6n) CSR; R : (e, 3, 3) member local axes; k_local : (e, 12, 12) condensed local K
    free : (n_free,) indices of unrestrained DOFs; fixed: restrained, inert or linked DOFs

    With rigid links (model.links) K and M are the reduced T^T K T and T^T M T of the
    constraint transformation T (fem.elements.rigid.link_transform), still over all 6 n DOFs:
    the linked (dependent) DOFs are held among `fixed`, so the one selection of the free DOFs
    applies supports and links together. Loads enter as T^T f (`carry`), displacements and
    shapes over the free DOFs leave as T u (`expand`); `link_rows` and `link_mass` keep the
    rows of the unreduced K and M at the linked DOFs, from which the link forces are recovered.
    """

    K: sp.csr_matrix
    M: sp.csr_matrix
    R: np.ndarray
    L: np.ndarray
    k_local: np.ndarray
    free: np.ndarray
    fixed: np.ndarray
    inert: np.ndarray      # DOFs held because nothing (stiffness or mass) acts on them
    T: sp.csr_matrix | None = None          # (6n, 6n) constraint transformation of rigid links
    linked: np.ndarray | None = None        # (d,) dependent DOFs of the rigid links
    link_rows: sp.csr_matrix | None = None  # (d, 6n) rows of the unreduced K at the linked DOFs
    link_mass: sp.csr_matrix | None = None  # (d, 6n) rows of the unreduced M at the linked DOFs
    arms: np.ndarray | None = None          # (e, 12, 12) rigid arms of member end offsets, see member_transform

    def carry(self, f: np.ndarray) -> np.ndarray:
        """Loads (6n,) or (6n, m) on all DOFs as loads on the reduced DOFs, T^T f: a load at a
        linked DOF carried to its reference node (the same force and moment)."""
        return f if self.T is None else np.asarray(self.T.T @ f)

    def member_transform(self) -> np.ndarray:
        """(e, 12, 12) from the global motions of each member's nodes to the local motions of
        its elastic ends: diag(R, R, R, R), times the rigid arms of end offsets if any."""
        T = el.transform_matrix(self.R)
        return T if self.arms is None else T @ self.arms

    def to_nodes(self, k_local: np.ndarray, sel=slice(None)) -> np.ndarray:
        """(e, 12, 12) local member matrices of the members `sel` in global axes at their nodes:
        T^T k T (`member_transform`), the rigid arms of end offsets included."""
        g = el.to_global(k_local, self.R[sel])
        if self.arms is None:
            return g
        A = self.arms[sel]
        return np.swapaxes(A, 1, 2) @ g @ A

    def expand(self, u: np.ndarray) -> np.ndarray:
        """Displacements (6n,) or (6n, m) over the free DOFs (zero elsewhere) as T u: each
        linked DOF filled from its reference node."""
        return u if self.T is None else np.asarray(self.T @ u)


def element_matrices(model: Model, condense: bool = True, sel=None):
    """Batched local stiffness and mass (e, 12, 12), axes R (e, 3, 3) and lengths L (e,) of all
    members, or of the members `sel` (index array or slice).

    With condense=False the stiffness and mass are returned before end releases are condensed
    out. A consistent mass is condensed with the stiffness's static transform (the released end
    rotation follows the member, which restores h^4 convergence of frequencies next to hinges;
    lumped mass is left as it is). With
    `shear = on` the consistent mass is the Timoshenko one (rotary inertia of bending included);
    lumped mass is the same with shear on or off."""
    if sel is not None:
        return element_matrices(_subset(model, sel), condense)
    xi, xj = model.coords[model.conn[:, 0]], model.coords[model.conn[:, 1]]
    if model.offsets is not None:             # the elastic part lies between the offset ends
        xi, xj = xi + model.offsets[:, 0], xj + model.offsets[:, 1]
    up = np.where(np.isnan(model.up).any(axis=1, keepdims=True), np.nan, model.up)
    has_up = ~np.isnan(up).any(axis=1)
    R, L = local_axes(xi, xj, roll=model.roll)
    if has_up.any():
        sel = np.flatnonzero(has_up)
        try:
            R2, _ = local_axes(xi[sel], xj[sel], roll=model.roll[sel], up=up[sel])
        except ValueError:
            x = (xj[sel] - xi[sel]) / L[sel, None]
            u = up[sel] / np.maximum(np.linalg.norm(up[sel], axis=1, keepdims=True), 1e-300)
            bad = sel[np.abs(np.einsum("ij,ij->i", x, u)) > 1 - 1e-9]
            names = ", ".join(model.member_names[k] for k in bad[:8])
            raise ModelError(f"member(s) {names}: the 'up' vector is zero or parallel to the member "
                             "axis; give a vector across the member") from None
        R[has_up] = R2
    shear = model.settings.get("shear", False)
    lumped = model.settings.get("mass", "consistent") == "lumped"
    k = el.frame_stiffness(L, model.E, model.G, model.A, model.Iy, model.Iz, model.J,
                           model.Avy if shear else None, model.Avz if shear else None)
    if shear and not lumped:
        # the mass of the same shear-flexible member, with the rotary inertia of bending
        m = el.frame_mass_timoshenko(L, model.rho, model.A, model.Iy, model.Iz, model.J, model.E,
                                     model.G, model.Avy, model.Avz, model.carried_mass)
    else:
        m = el.frame_mass(L, model.rho, model.A, model.Iy, model.Iz, model.J, model.carried_mass, lumped)
    t = model.truss
    if t.any():
        k[t] = el.truss_stiffness(L[t], model.E[t], model.A[t])
        m[t] = el.truss_mass(L[t], model.rho[t], model.A[t], model.carried_mass[t], lumped)
    rel = model.releases & ~t[:, None]
    if condense and rel.any():
        try:
            if not lumped:      # the released end follows the member statically, in mass as in stiffness
                m = el.condense_mass(k, m, rel)
            k = el.condense_releases(k, rel)
        except np.linalg.LinAlgError:
            raise ModelError("a member's end releases leave it free to move as a rigid body (e.g. its "
                             "twist released at both ends); release a direction at one end only") from None
    return k, m, R, L


_MEMBER_FIELDS = ("conn", "truss", "E", "G", "rho", "A", "Iy", "Iz", "J", "Avy", "Avz", "roll", "up",
                  "carried_mass", "releases")


def _subset(model: Model, sel) -> Model:
    """A shallow view of the model holding only the members `sel` (nodes unchanged)."""
    from dataclasses import replace

    names = model.member_names[sel] if isinstance(sel, slice) else [model.member_names[i] for i in sel]
    fields = _MEMBER_FIELDS + (("offsets",) if model.offsets is not None else ())
    return replace(model, member_names=names, **{f: getattr(model, f)[sel] for f in fields})


CHUNK = 4096   # members per batch: keeps the (chunk, 12, 12) temporaries in cache


@dataclass
class BlockPattern:
    """Node-block sparsity of a model: which 6x6 node-pair blocks exist, and a 0/1 summation
    matrix S that adds the four blocks of every member (and each node's diagonal block) into
    them. Built once per connectivity and reused for K and M (and later assemblies)."""

    S: sp.csr_matrix     # (nb, 4e + n) summation matrix
    indices: np.ndarray  # (nb,) block column of each distinct block
    indptr: np.ndarray   # (n_nodes + 1,) BSR row pointers
    n_nodes: int

    @classmethod
    def of(cls, conn: np.ndarray, n_nodes: int) -> "BlockPattern":
        brow = np.repeat(conn, 2, axis=1).ravel()            # (e, [i, i, j, j])
        bcol = np.tile(conn, (1, 2)).ravel()                 # (e, [i, j, i, j])
        keys = brow.astype(np.int64) * n_nodes + bcol
        # every node carries a diagonal block (springs and point masses go there)
        keys = np.r_[keys, np.arange(n_nodes, dtype=np.int64) * (n_nodes + 1)]
        uniq, inverse = np.unique(keys, return_inverse=True)
        S = sp.csr_matrix((np.ones(len(keys)), (inverse.ravel(), np.arange(len(keys)))),
                          shape=(len(uniq), len(keys)))
        indptr = np.r_[0, np.cumsum(np.bincount(uniq // n_nodes, minlength=n_nodes))]
        return cls(S, (uniq % n_nodes).astype(np.int32), indptr.astype(np.int32), n_nodes)

    def matrix_from_blocks(self, X: np.ndarray) -> sp.csr_matrix:
        """CSR from member blocks and nodal diagonal blocks X (4e + n, 36) (see _blocks)."""
        data = (self.S @ X).reshape(-1, 6, 6)
        n = 6 * self.n_nodes
        return sp.bsr_matrix((data, self.indices, self.indptr), shape=(n, n)).tocsr()


def _blocks(g: np.ndarray) -> np.ndarray:
    """(e, 12, 12) member matrices -> (4e, 36) node-pair blocks ii, ij, ji, jj."""
    e = g.shape[0]
    return g.reshape(e, 2, 6, 2, 6).transpose(0, 1, 3, 2, 4).reshape(4 * e, 36)


def assemble(model: Model, pattern: BlockPattern | None = None) -> Assembled:
    """Assemble K and M with springs and point masses; no Python loop over members.

    Members are summed as 6x6 node-pair blocks through a BlockPattern (pass one to reuse it
    when only the values change)."""
    e, n = model.n_members, model.n_nodes
    pattern = pattern or BlockPattern.of(model.conn, n)
    # member blocks in pattern order (4 per member), then the nodal diagonal blocks
    XK = np.zeros((4 * e + n, 36))
    XM = np.zeros((4 * e + n, 36))
    k = np.empty((e, 12, 12))
    R = np.empty((e, 3, 3))
    L = np.empty(e)
    arms = None
    if model.offsets is not None:
        from .elements.rigid import end_arms

        arms = end_arms(model.offsets)
    # a model that bypassed the deck's checks can overflow here (inf, then inf*0 = NaN in the
    # transforms): not hidden, it is refused as a ModelError just below, and without the
    # floating-point warnings it would otherwise print first
    with np.errstate(over="ignore", invalid="ignore"):
        for a in range(0, e, CHUNK):
            sl = slice(a, min(a + CHUNK, e))
            kc, mc, Rc, Lc = element_matrices(model, sel=sl)
            k[sl], R[sl], L[sl] = kc, Rc, Lc
            c = Lc.shape[0]
            kg, mg = el.to_global(kc, Rc), el.to_global(mc, Rc)
            if arms is not None:        # end offsets: the elastic ends' matrices moved to the nodes
                A = arms[sl]
                At = np.swapaxes(A, 1, 2)
                kg, mg = At @ kg @ A, At @ mg @ A
            XK[4 * a:4 * a + 4 * c] = _blocks(kg)
            XM[4 * a:4 * a + 4 * c] = _blocks(mg)
    d6 = np.arange(6) * 7                      # diagonal positions in a flattened 6x6 block
    XK[4 * e:, d6] = model.springs
    XM[4 * e:, d6] = model.point_mass
    if model.mass_coupling is not None:        # masses placed off their nodes
        XM[4 * e:] += model.mass_coupling.reshape(n, 36)
    K = pattern.matrix_from_blocks(XK)
    M = pattern.matrix_from_blocks(XM)
    if model.node_springs is not None and len(model.node_springs):     # springs between two nodes
        from .elements.node_spring import spring_matrix

        K = (K + spring_matrix(model.node_springs, model.coords)).tocsr()
    if model.pretension is not None and np.any(model.pretension):
        # a pretensioned cable resists sideways motion by its tension (a taut string)
        from .elements.geometric import geometric_matrix

        K = (K + geometric_matrix(model, R, L, model.pretension)).tocsr()
    # 6x6 blocks of axis-aligned or truss members hold many exact zeros: dropping them cuts the
    # stored entries (a third on a lattice tower) and keeps them out of the fill orderings
    K.eliminate_zeros()
    M.eliminate_zeros()
    # beyond 1e150 the squares taken by norms and residual checks overflow double precision
    if not all(np.isfinite(X.data).all() and np.abs(X.data).max(initial=0.0) <= HUGE for X in (K, M)):
        raise ModelError("the stiffness or mass matrix overflows (a property or coordinate is far too "
                         "large or too small); check the magnitudes and units in the deck")
    T = linked = link_rows = link_mass = None
    if model.links:
        K, M, T, linked, link_rows, link_mass = _reduce_links(model, K, M)
    restrained = model.restraint.ravel()
    # a DOF with no stiffness at all (a truss-only node's rotations, a rotation that only
    # released member ends meet) is held rather than reported as a mechanism, unless a load
    # acts on it (checked by the static solve); its rotary mass, if any, is dropped with it
    inert = (K.diagonal() == 0) & ~restrained
    if linked is not None:
        inert[linked] = False
        restrained = restrained.copy()
        restrained[linked] = True
    fixed = restrained | inert
    return Assembled(K, M, R, L, k, np.flatnonzero(~fixed), np.flatnonzero(fixed),
                     np.flatnonzero(inert), T, linked, link_rows, link_mass, arms)


def _reduce_links(model: Model, K, M):
    """K and M reduced by the rigid links' transformation T (T^T K T, T^T M T), T, the linked
    DOFs and the rows of the unreduced K and M there. The one place links enter the matrices."""
    from .elements.rigid import link_transform

    T, linked = link_transform(model.coords, model.links)
    Tt = T.T.tocsr()
    # symmetric to the last bit (the products sum the two triangles in different orders), as
    # the banded Cholesky and the eigen solvers read one triangle
    Kr, Mr = ((0.5 * (X + X.T)).tocsr() for X in (Tt @ K @ T, Tt @ M @ T))
    for X in (Kr, Mr):
        X.sum_duplicates()
        X.eliminate_zeros()
    return Kr, Mr, T, linked, K[linked], M[linked]
