"""Geometry of the model's members: each member's local axes from its ends, its roll and its
reference (up) vector. The model's data, so the deck's checks, the elements and the pictures
share one definition."""

from __future__ import annotations

import numpy as np

__all__ = ["LEAN_VERTICAL", "local_axes", "offset_mass", "skew"]

_PARALLEL_TOL = 1.0 - 1e-9
# members whose horizontal projection is under this fraction of their length (a lean under
# 0.57 deg: erection tolerances and the usual 1/200 sway imperfection) count as vertical for
# the default axes, so an out-of-plumb column keeps the section orientation of a plumb one
LEAN_VERTICAL = 0.01


def _vec(a, n=None):
    """1-D float array, broadcast to length n when n is given."""
    a = np.atleast_1d(np.asarray(a, dtype=float))
    if n is not None:
        a = np.broadcast_to(a, (n,))
    return a


def local_axes(xi, xj, roll=None, up=None):
    """Local axis triads and lengths of members.

    Parameters
    ----------
    xi, xj : (n, 3) array_like
        Coordinates of end i and end j (m).
    roll : (n,) array_like, optional
        Rotation of local y, z about local x (rad, right-hand positive).
    up : (n, 3) array_like, optional
        Reference vector per member; default global Z.  Members within
        LEAN_VERTICAL of global Z (horizontal projection under 1 % of the
        length) use global X instead of the default.

    Returns
    -------
    R : (n, 3, 3) ndarray
        Rows are local x, y, z unit vectors in global coordinates.
    L : (n,) ndarray
        Member lengths (m).

    Notes
    -----
    Local z is the normalised part of the reference vector perpendicular to
    x; local y = z x x.  A horizontal member along +X thus has y = +Y,
    z = +Z.  Raises ValueError for zero-length members or a given ``up``
    parallel to the member.
    """
    xi = np.atleast_2d(np.asarray(xi, dtype=float))
    xj = np.atleast_2d(np.asarray(xj, dtype=float))
    d = xj - xi
    n = d.shape[0]
    L = np.linalg.norm(d, axis=1)
    bad = np.flatnonzero(~(L > 0))
    if bad.size:
        raise ValueError(f"zero-length member(s) at element index {bad.tolist()}")
    ex = d / L[:, None]
    if up is None:
        ref = np.tile([0.0, 0.0, 1.0], (n, 1))
        vert = np.hypot(ex[:, 0], ex[:, 1]) < LEAN_VERTICAL
        ref[vert] = [1.0, 0.0, 0.0]
    else:
        ref = np.broadcast_to(np.asarray(up, dtype=float), (n, 3)).copy()
        rn = np.linalg.norm(ref, axis=1)
        bad = np.flatnonzero(~(rn > 0))
        if bad.size:
            raise ValueError(f"zero 'up' vector at element index {bad.tolist()}")
        ref /= rn[:, None]
        bad = np.flatnonzero(np.abs(np.einsum("ij,ij->i", ex, ref)) > _PARALLEL_TOL)
        if bad.size:
            raise ValueError(
                "'up' vector is parallel to the member axis at element index "
                f"{bad.tolist()}; choose an up vector not along the member")
    ez = ref - np.einsum("ij,ij->i", ref, ex)[:, None] * ex
    ez /= np.linalg.norm(ez, axis=1)[:, None]
    ey = np.cross(ez, ex)
    if roll is not None:
        th = _vec(roll, n)
        c, s = np.cos(th)[:, None], np.sin(th)[:, None]
        ey, ez = c * ey + s * ez, -s * ey + c * ez
    R = np.stack([ex, ey, ez], axis=1)
    return R, L


def skew(a: np.ndarray) -> np.ndarray:
    """(..., 3, 3) skew matrices [a]x of the vectors a (..., 3): [a]x v = a x v."""
    a = np.asarray(a, dtype=float)
    S = np.zeros(a.shape[:-1] + (3, 3))
    S[..., 0, 1], S[..., 0, 2] = -a[..., 2], a[..., 1]
    S[..., 1, 0], S[..., 1, 2] = a[..., 2], -a[..., 0]
    S[..., 2, 0], S[..., 2, 1] = -a[..., 1], a[..., 0]
    return S


def offset_mass(m: np.ndarray, inertia: np.ndarray, arm: np.ndarray) -> np.ndarray:
    """(k, 6, 6) mass blocks about their nodes of rigid masses m (k,) kg whose centres lie at
    `arm` (k, 3) m from the node, with principal inertias `inertia` (k, 3) kg m^2 about their
    centres along the global axes.

    The kinetic energy of a rigid body whose centre moves by v_c = v - [r]x w gives
    [[m I, -m [r]x], [m [r]x, I_c + m (r.r I - r r^T)]]: the coupling between translation
    and rotation, and the inertia carried to the node by the parallel-axis theorem."""
    m = np.asarray(m, dtype=float)
    r = np.asarray(arm, dtype=float)
    S = skew(r)
    B = np.zeros((len(m), 6, 6))
    B[:, :3, :3] = m[:, None, None] * np.eye(3)
    B[:, :3, 3:] = -m[:, None, None] * S
    B[:, 3:, :3] = m[:, None, None] * S
    parallel = np.einsum("k,kab->kab", m, np.einsum("ka,ka->k", r, r)[:, None, None] * np.eye(3)
                         - r[:, :, None] * r[:, None, :])
    B[:, 3:, 3:] = parallel + np.einsum("ka,ab->kab", np.asarray(inertia, dtype=float), np.eye(3))
    return B
