"""Deformed shapes along members from their end displacements and rotations.

The shape between the nodes is the member's own interpolation, the one its stiffness and
consistent mass are built on (see :mod:`fem.elements.frame`):

- axial displacement and twist: linear;
- transverse displacement: cubic, from the end translations and end rotations (Hermite
  functions for Euler-Bernoulli members; the interdependent cubic of the two-node Timoshenko
  member, which depends on phi = 12 E I / (G As L^2), when shear is on), and the section
  rotation with it (the slope, or the Timoshenko quadratic);
- truss members: straight (linear translations), no twist;
- a released end DOF (a hinge) is not the node's: it is the member's own end value that the
  condensation implies, u_b = -K_bb^-1 K_ba u_a, from the member's retained end DOFs.

Everything is vectorised over members and over any leading axes of the displacement field
(modes, time frames).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["MemberCurves", "bending_functions", "member_curves", "points_per_member", "prepare_curves"]

POINTS = 9     # points along each member, ends included: a cubic is drawn smooth at this count
INNER_BUDGET = 200_000   # inner points of all members together in one drawn shape (our choice)


def points_per_member(n_members: int, points: int = POINTS, budget: int = INNER_BUDGET) -> int:
    """`points` along each member (ends included), or fewer, down to the two ends, on a model
    so large that the members' inner points together would pass `budget`: keeps pictures and
    files of large models light."""
    return 2 + int(min(points - 2, budget // max(int(n_members), 1)))


def bending_functions(xi, L, phi=0.0):
    """Transverse shape functions of a two-node member in one plane.

    Parameters
    ----------
    xi : (p,) positions along the member, x / L, 0 to 1.
    L : (e,) lengths (m).  phi : (e,) shear flexibility 12 E I / (G As L^2), 0 for Euler-Bernoulli.

    Returns
    -------
    Nw : (e, p, 4) deflection from (w_i, theta_i, w_j, theta_j), theta the end section
        rotations (the slope dw/dx when phi = 0);
    Npsi : (e, p, 4) section rotation along the member from the same end values.
    """
    xi = np.asarray(xi, float)[None, :]
    L = np.atleast_1d(np.asarray(L, float))[:, None]
    p = np.broadcast_to(np.atleast_1d(np.asarray(phi, float)), L.shape[:1])[:, None]
    f = 1.0 / (1.0 + p)
    x2, x3 = xi ** 2, xi ** 3
    Nw = np.stack([f * (2 * x3 - 3 * x2 - p * xi + 1 + p),
                   f * L * (x3 - (2 + p / 2) * x2 + (1 + p / 2) * xi),
                   f * (-2 * x3 + 3 * x2 + p * xi),
                   f * L * (x3 - (1 - p / 2) * x2 - p / 2 * xi)], axis=-1)
    Npsi = np.stack([f * 6 / L * (x2 - xi),
                     f * (3 * x2 - (4 + p) * xi + 1 + p),
                     -f * 6 / L * (x2 - xi),
                     f * (3 * x2 - (2 - p) * xi)], axis=-1)
    return Nw, Npsi


@dataclass
class MemberCurves:
    """Points along every member (e members, p points each, ends included).

    base : (e, p, 3) undeformed positions, m
    disp : (..., e, p, 3) global translations at the points (the field's units, m for a true shape)
    rot : (..., e, p, 3) global rotation vectors of the sections, rad
    twist : (..., e, p) rotation about the member's own axis, rad
    axes : (e, 3, 3) member local axes (rows x, y, z) for drawing sections
    """

    base: np.ndarray
    disp: np.ndarray
    rot: np.ndarray
    twist: np.ndarray
    axes: np.ndarray


@dataclass
class _Prepared:
    conn: np.ndarray
    R: np.ndarray
    L: np.ndarray
    truss: np.ndarray
    phi: np.ndarray            # (e, 2) shear flexibility of the x-y and x-z planes
    groups: list               # (members, retained DOFs, released DOFs, X (s, nb, na))
    base: np.ndarray
    xi: np.ndarray
    shapes: tuple              # bending_functions of the x-y and x-z planes: (Nv, Pv, Nz, Pz)


def prepare_curves(model, n_points: int = POINTS) -> _Prepared:
    """What member_curves needs from the model, computed once (axes, lengths, shear
    flexibility, and each hinge's static transform)."""
    from ..assembly import element_matrices
    from .frame import _patterns, _phi

    k, _, R, L = element_matrices(model, condense=False)
    truss = np.asarray(model.truss, bool)
    phi = np.zeros((len(L), 2))
    if model.settings.get("shear", False):
        phi[:, 0] = _phi(model.E, model.Iz, model.G, model.Avy, L)
        phi[:, 1] = _phi(model.E, model.Iy, model.G, model.Avz, L)
    phi[truss] = 0.0
    groups = []
    rel = np.asarray(model.releases, bool) & ~truss[:, None]
    if rel.any():
        pats, inv = _patterns(rel, len(L))
        for q, pat in enumerate(pats):
            if pat.any():
                sel = np.flatnonzero(inv == q)
                a, b = np.flatnonzero(~pat), np.flatnonzero(pat)
                X = -np.linalg.solve(k[sel][:, b][:, :, b], k[sel][:, b][:, :, a])
                groups.append((sel, a, b, X))
    xi = np.linspace(0.0, 1.0, max(int(n_points), 2))
    xa, xb = model.coords[model.conn[:, 0]], model.coords[model.conn[:, 1]]
    base = xa[:, None, :] + xi[None, :, None] * (xb - xa)[:, None, :]
    shapes = (*bending_functions(xi, L, phi[:, 0]), *bending_functions(xi, L, phi[:, 1]))
    return _Prepared(np.asarray(model.conn), R, L, truss, phi, groups, base, xi, shapes)


def member_curves(model, field: np.ndarray, n_points: int = POINTS, prepared: _Prepared | None = None
                  ) -> MemberCurves:
    """Interpolated deformed shape of every member.

    Parameters
    ----------
    model : Model
    field : (..., n_nodes, 6) node displacements and rotations (global), e.g. one mode shape
        (n, 6), or frames (f, n, 6).
    n_points : points per member, ends included.
    prepared : the result of prepare_curves(model, n_points), to reuse over many fields.

    Returns
    -------
    MemberCurves

    Examples
    --------
    >>> c = member_curves(model, modal.shapes[:, :, 0])      # doctest: +SKIP
    >>> c.base.shape, c.disp.shape                            # doctest: +SKIP
    ((e, 9, 3), (e, 9, 3))
    """
    pr = prepared or prepare_curves(model, n_points)
    u = np.asarray(field, float)
    lead = u.shape[:-2]
    ug = u[..., pr.conn, :].reshape(*lead, len(pr.L), 4, 3)       # (..., e, [ti, ri, tj, rj], 3)
    ul = (ug @ np.swapaxes(pr.R, 1, 2)).reshape(*lead, len(pr.L), 12)
    for sel, a, b, X in pr.groups:
        ua = ul[..., sel, :][..., a]
        ul[..., sel[:, None], b[None, :]] = np.einsum("sba,...sa->...sb", X, ua)
    xi = pr.xi
    lin = np.stack([1 - xi, xi], axis=-1)                                   # (p, 2)
    axial = ul[..., [0, 6]] @ lin.T                                          # (..., e, p)
    twist = ul[..., [3, 9]] @ lin.T
    local = np.zeros((*lead, len(pr.L), len(xi), 3))
    rot = np.zeros_like(local)
    local[..., 0] = axial
    rot[..., 0] = twist
    # x-y plane: v with rz = +dv/dx; x-z plane: w with ry = -dw/dx (the frame's convention)
    Nv, Pv, Nz, Pz = pr.shapes
    ev = ul[..., [1, 5, 7, 11]]
    ez = ul[..., [2, 4, 8, 10]] * np.array([1.0, -1.0, 1.0, -1.0])
    ev, ez = ev[..., None], ez[..., None]
    local[..., 1] = (Nv @ ev)[..., 0]
    local[..., 2] = (Nz @ ez)[..., 0]
    rot[..., 2] = (Pv @ ev)[..., 0]
    rot[..., 1] = -(Pz @ ez)[..., 0]
    t = pr.truss
    if t.any():
        # a bar is straight between its ends and carries no rotation
        ti = np.flatnonzero(t)
        ends = [ul[..., ti, :][..., [d, d + 6]] @ lin.T for d in (1, 2)]
        local[..., ti, :, 1:3] = np.stack(ends, axis=-1)
        rot[..., ti, :, :] = 0.0
        twist[..., ti, :] = 0.0
    disp = local @ pr.R              # rows: global = R^T local
    rotg = rot @ pr.R
    return MemberCurves(pr.base, disp, rotg, twist, pr.R)
