"""Rigid bodies between points: the constraint transformation of rigid links and the rigid arm
of a member end offset (the nodal mass block of a mass off its node is fem.geometry.offset_mass).

Both rest on the small-rotation motion of a rigid body: a point at arm a from a node
that moves by (u, theta) moves by u + theta x a = u - [a]x theta, where [a]x is the skew
matrix with [a]x v = a x v.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from ..geometry import skew

__all__ = ["arm_geometric", "arm_transform", "end_arms", "forces_at_nodes", "link_geometric", "link_transform"]


def arm_transform(arm: np.ndarray) -> np.ndarray:
    """(..., 6, 6) rigid-arm transforms A of arms (..., 3): the motion (u, theta) of a node
    carried to the point at `arm` from it, [u - [arm]x theta, theta] = A [u, theta]."""
    arm = np.asarray(arm, dtype=float)
    A = np.zeros(arm.shape[:-1] + (6, 6))
    A[..., [0, 1, 2, 3, 4, 5], [0, 1, 2, 3, 4, 5]] = 1.0
    A[..., :3, 3:] = -skew(arm)
    return A


def arm_geometric(nodes: np.ndarray, arms: np.ndarray, forces: np.ndarray, n_nodes: int) -> sp.csr_matrix:
    """Geometric stiffness (6n, 6n) CSR of rigid arms carrying forces: arm k runs from node
    nodes[k] by the vector arms[k] (3,) to a point where it pushes with the force p = forces[k]
    (3,) on what it carries (p = dPi/du there: a rigid link's force on its dependent node, a
    member's end force at its elastic end).

    To second order a rotation theta of the node moves the arm's end by theta x a + 1/2
    theta x (theta x a), whose second term, weighted by p, is the energy 1/2 theta^T G theta
    with G = 1/2 (p a^T + a p^T) - (p . a) I on the node's rotations. For an arm of length a
    along x carrying an axial force N (tension positive, p = -N x) this is N a (I - x x^T):
    N / a on the relative sideways motion a theta of the arm's ends, a rigid bar's P-delta."""
    a = np.asarray(arms, dtype=float).reshape(-1, 3)
    p = np.asarray(forces, dtype=float).reshape(-1, 3)
    g = 0.5 * (p[:, :, None] * a[:, None, :] + a[:, :, None] * p[:, None, :])
    g -= np.einsum("ki,ki->k", p, a)[:, None, None] * np.eye(3)
    dof = 6 * np.asarray(nodes, dtype=np.int64)[:, None] + np.arange(3, 6)          # (k, 3) rotations
    rows = np.broadcast_to(dof[:, :, None], g.shape).ravel()
    cols = np.broadcast_to(dof[:, None, :], g.shape).ravel()
    n6 = 6 * n_nodes
    return sp.csr_matrix((g.ravel(), (rows, cols)), shape=(n6, n6))


def link_geometric(coords: np.ndarray, links, linked: np.ndarray, forces: np.ndarray) -> sp.csr_matrix:
    """Geometric stiffness (6n, 6n) CSR of rigid links carrying the forces `forces` (d,) at
    their linked DOFs `linked` (d,) (fem.analysis.static.link_forces), on the rotations of
    their reference nodes (`arm_geometric` with the arm from the reference to each dependent
    node and the link's force on it; the moments it passes take no second-order term, a
    dependent node turning as its reference does)."""
    n = len(coords)
    p = np.zeros(6 * n)
    p[linked] = forces
    p = p.reshape(n, 6)
    ref = np.full(n, -1)
    for link in links:
        ref[np.asarray(link.dependents, dtype=np.int64)] = int(link.reference)
    d = np.flatnonzero(ref >= 0)
    return arm_geometric(ref[d], coords[d] - coords[ref[d]], p[d, :3], n)


def end_arms(offsets: np.ndarray) -> np.ndarray:
    """(e, 12, 12) block-diagonal rigid-arm transforms diag(A_i, A_j) of member end offsets
    (e, 2, 3): the motions of a member's elastic ends from those of its nodes (global axes)."""
    A = arm_transform(offsets)                     # (e, 2, 6, 6)
    out = np.zeros((len(offsets), 12, 12))
    out[:, :6, :6], out[:, 6:, 6:] = A[:, 0], A[:, 1]
    return out


def forces_at_nodes(member_forces: np.ndarray, offsets: np.ndarray, R: np.ndarray) -> np.ndarray:
    """End forces (..., e, 12) of members with end offsets (e, 2, 3) and axes R (e, 3, 3), in
    local axes at their elastic ends, carried along the rigid arms to the nodes: the same
    forces, and moments M + o x F with o the offset in local axes (statics of a rigid arm)."""
    o = np.einsum("eab,ekb->eka", R, offsets)                    # (e, 2, 3) local offsets
    f = np.array(member_forces, dtype=float, copy=True)
    for end in (0, 1):
        F = f[..., 6 * end:6 * end + 3]
        f[..., 6 * end + 3:6 * end + 6] += np.cross(o[:, end], F)
    return f


def link_transform(coords: np.ndarray, links) -> tuple[sp.csr_matrix, np.ndarray]:
    """The constraint transformation u = T u of rigid links, and the dependent DOFs.

    T (6n, 6n) is the identity on every DOF no link constrains; the column of a dependent DOF
    is zero and its row writes it in terms of the reference node: u_d = u_r + theta_r x
    (x_d - x_r) for a translation, theta_d = theta_r for a rotation. T is a projection
    (T T = T): T u fills a vector's dependent DOFs from its reference nodes, whatever they
    held. K_r = T^T K T, M_r = T^T M T and T^T f are the reduced matrices and loads, zero on
    the dependent DOFs, which are then held like supports. `links`: fem.model.Link objects,
    no dependent node of one being a reference or dependent node of another (the reader
    checks this)."""
    n6 = 6 * len(coords)
    rows, cols, vals, dep = [], [], [], []
    for link in links:
        d = np.asarray(link.dependents, dtype=np.int64)
        r = int(link.reference)
        arm = coords[d] - coords[r]                       # (k, 3)
        A = arm_transform(arm)                            # (k, 6, 6) rows: dependent DOFs
        on = np.flatnonzero(link.dirs)
        # the rows of the linked directions: dependent DOF 6d+i from reference DOFs 6r+j
        block = A[:, on, :]                               # (k, q, 6)
        rr = np.broadcast_to((6 * d)[:, None, None] + on[None, :, None], block.shape)
        cc = np.broadcast_to(6 * r + np.arange(6)[None, None, :], block.shape)
        keep = block != 0
        rows.append(rr[keep])
        cols.append(cc[keep])
        vals.append(block[keep])
        dep.append(((6 * d)[:, None] + on[None, :]).ravel())
    dep = np.unique(np.concatenate(dep)) if dep else np.zeros(0, np.int64)
    free = np.setdiff1d(np.arange(n6), dep)
    rows = np.concatenate([free, *rows])
    cols = np.concatenate([free, *cols])
    vals = np.concatenate([np.ones(len(free)), *vals])
    return sp.csr_matrix((vals, (rows, cols)), shape=(n6, n6)), dep
