"""Geometric (stress) stiffness of frame and truss members under an axial force, batched.

The members' axial forces N (tension positive) enter as a matrix Kg that adds to K: tension
stiffens a member against sideways motion, compression softens it, so (K + Kg) gives the
modes under a preload and det(K + lambda Kg) = 0 the linear buckling load factors.

Frame members: the consistent matrix of the cubic Hermite deflection, Kg = N int N'^T N' dx,
in each bending plane (N/L) [[6/5, L/10, -6/5, L/10], [L/10, 2L^2/15, -L/10, -L^2/30], ...]
(Przemieniecki, Theory of Matrix Structural Analysis, 1968, sec. 15.3; McGuire, Gallagher and
Ziemian, Matrix Structural Analysis, 2nd ed., 2000, sec. 9.3 and eq. 9.19), plus the twist term
N Ip / (A L) [[1, -1], [-1, 1]] of a section whose shear centre is its centroid (the same
source, from memory; it is the weak form over a linear twist of the term (I0 P / A) theta'' of
the torsion equation under an axial load, Megson, An Introduction to Aircraft Structural
Analysis, 2010, ch. 8, eq. 8.70, confirmed): a compressed member twists more easily (torsional
buckling at N = G J A / Ip without warping stiffness). The end-moment terms of that source are left out:
only the axial force of the preload acts. Shear-flexible members use the same matrix (the
deflection's slope, not the section's rotation, carries the force).

Truss members: N / L on the two transverse translations of each end (a taut string between
them); the axial direction takes no geometric term, its stiffness E A / L being far larger.

DOF order and axes as in fem/elements/frame.py: node i then j, (ux, uy, uz, rx, ry, rz).
"""

from __future__ import annotations

import numpy as np

from .frame import _bcast, _plane_blocks, _sym_fill

__all__ = ["frame_geometric", "geometric_matrix", "truss_geometric"]


def frame_geometric(L, N, A, Iy, Iz):
    """Local geometric stiffness (n, 12, 12) of frame members with axial forces N.

    Parameters
    ----------
    L, N, A, Iy, Iz : (n,) array_like or scalars
        Length (m), axial force (N, tension positive), area (m^2), second moments (m^4);
        Iy + Iz is the polar moment of the twist term.

    Returns
    -------
    kg : (n, 12, 12) ndarray, local axes (N/m, N, N m); symmetric, linear in N.

    Examples
    --------
    >>> kg = frame_geometric(2.0, -1000.0, 1e-3, 1e-6, 1e-6)
    >>> float(kg[0, 1, 1])           # -6/5 N/L: compression softens sway
    -600.0
    """
    L, N, A, Iy, Iz = _bcast(L, N, A, Iy, Iz)
    kg = np.zeros((L.shape[0], 12, 12))
    c = N / L
    for v, r, sgn in ((1, 5, 1.0), (2, 4, -1.0)):
        # same pattern as the mass's planes: sgn*vr at (v_i, r_i), -sgn*vr_ij at (v_i, r_j), ...
        _plane_blocks(kg, v, r, sgn, 1.2 * c, -1.2 * c, 2.0 * L ** 2 * c / 15.0, -L ** 2 * c / 30.0,
                      L * c / 10.0, -L * c / 10.0)
    t = N * (Iy + Iz) / (A * L)
    _sym_fill(kg, [(3, 3), (9, 9), (3, 9)], [t, t, -t])
    return kg


def truss_geometric(L, N):
    """Local geometric stiffness (n, 12, 12) of truss members with axial forces N (tension
    positive): N / L [[I, -I], [-I, I]] on local y and z of the two ends."""
    L, N = _bcast(L, N)
    kg = np.zeros((L.shape[0], 12, 12))
    c = N / L
    for d in (1, 2):
        _sym_fill(kg, [(d, d), (d + 6, d + 6), (d, d + 6)], [c, c, -c])
    return kg


def geometric_matrix(model, R, L, N, ends=None):
    """Global geometric stiffness (6n, 6n) CSR of the member axial forces N (e,) N, tension
    positive; R (e, 3, 3) and L (e,) the members' axes and lengths (of their elastic parts).

    Members with released ends take Kg condensed with their stiffness's static transform
    T^T Kg T (the released end follows the member, as for the consistent mass). Members with
    end offsets take it moved along their rigid arms as K is (A^T Kg A), plus the arms' own
    term (fem.elements.rigid.arm_geometric) from the members' end forces `ends` (e, 12), local
    axes, on the members (fem.analysis.static member forces), or from N alone when not given."""
    from ..assembly import BlockPattern, _blocks, element_matrices
    from .frame import condense_mass, to_global

    e, n = model.n_members, model.n_nodes
    N = np.broadcast_to(np.asarray(N, dtype=float), (e,))
    kg = frame_geometric(L, N, model.A, model.Iy, model.Iz)
    t = model.truss
    if t.any():
        kg[t] = truss_geometric(L[t], N[t])
    rel = model.releases & ~t[:, None]
    if rel.any():
        k, _, _, _ = element_matrices(model, condense=False)
        kg = condense_mass(k, kg, rel)
    kg = to_global(kg, R)
    if model.offsets is not None:
        from .rigid import arm_geometric, end_arms

        A = end_arms(model.offsets)
        kg = np.swapaxes(A, 1, 2) @ kg @ A
    X = np.zeros((4 * e + n, 36))
    X[:4 * e] = _blocks(kg)
    G = BlockPattern.of(model.conn, n).matrix_from_blocks(X)
    if model.offsets is not None:
        if ends is None:
            ends = np.zeros((e, 12))
            ends[:, 0], ends[:, 6] = -N, N
        p = np.einsum("eba,ekb->eka", R, np.asarray(ends, dtype=float).reshape(e, 2, 6)[:, :, :3])   # global
        G = G + arm_geometric(model.conn.ravel(), model.offsets.reshape(-1, 3), p.reshape(-1, 3), n)
    G.eliminate_zeros()
    return G
