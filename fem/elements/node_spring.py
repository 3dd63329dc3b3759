"""Linear springs between two nodes (fem.model.NodeSprings), vectorised over springs.

A spring with stiffness k = diag(kx, ky, kz, krx, kry, krz) in its axes R (rows: its x, y, z in
global components) joins nodes A and B and sits at their midpoint P. Each node's motion is
carried to P rigidly, u_P = u + theta x (P - x_node), and the spring's deflection is the
relative motion there in its axes,

    d = T (C_B u_B - C_A u_A) = D [u_A; u_B],  T = diag(R, R),  C = [[I, -[r]x], [0, I]],

so its force on B is -k d and on A +k d, and its global stiffness over (u_A, u_B) is
D^T k D (a spring element with rigid arms to its nodes: the transformation of a member's end
offsets; e.g. Przemieniecki, Theory of Matrix Structural Analysis, 1968, ch. 5 and 9, from
memory). A rigid motion of the pair gives d = 0, so the spring's forces on its two nodes are in
equilibrium (moments included) wherever the nodes lie; for coincident nodes (the usual isolator
model) the arms vanish and the blocks are +/- T^T k T.

The force reported for a spring is k d, the force and moment it carries (tension positive along
its x when B moves away from A along x).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from .rigid import arm_transform

__all__ = ["spring_blocks", "spring_deflections", "spring_map", "spring_matrix"]


def spring_map(ns, coords) -> np.ndarray:
    """(s, 6, 12) D of each spring: its deflection in its axes from (u_A, u_B), global."""
    nodes = np.asarray(ns.nodes)
    x = np.asarray(coords, float)[nodes]                               # (s, 2, 3)
    mid = x.mean(axis=1)
    R = np.asarray(ns.axes, float)
    s = len(R)
    D = np.zeros((s, 6, 12))
    for end, sign in ((0, -1.0), (1, 1.0)):
        C = arm_transform(mid - x[:, end])          # the node's motion carried to the midpoint
        D[:, :3, 6 * end:6 * end + 6] = sign * R @ C[:, :3]
        D[:, 3:, 6 * end:6 * end + 6] = sign * R @ C[:, 3:]
    return D


def spring_blocks(ns, coords) -> np.ndarray:
    """(s, 12, 12) global stiffness of each spring over (u_A, u_B): D^T k D."""
    D = spring_map(ns, coords)
    return np.swapaxes(D, 1, 2) @ (np.asarray(ns.k, float)[:, :, None] * D)


def spring_matrix(ns, coords, blocks: np.ndarray | None = None) -> sp.csr_matrix:
    """(6n, 6n) CSR of all the springs (their `spring_blocks`, or `blocks` given instead), summed
    as 6x6 node-pair blocks as the members are (fem.assembly.BlockPattern)."""
    from ..assembly import BlockPattern

    g = spring_blocks(ns, coords) if blocks is None else blocks
    s, n = len(g), len(coords)
    X = np.zeros((4 * s + n, 36))
    X[:4 * s] = g.reshape(s, 2, 6, 2, 6).transpose(0, 1, 3, 2, 4).reshape(4 * s, 36)
    return BlockPattern.of(np.asarray(ns.nodes), n).matrix_from_blocks(X)


def spring_deflections(ns, coords, u) -> np.ndarray:
    """(..., s, 6) deflections D [u_A; u_B] in each spring's axes from node displacements u
    (..., n, 6) (real or complex): relative translation, then relative rotation."""
    u = np.asarray(u)
    nodes = np.asarray(ns.nodes)
    pair = np.concatenate([u[..., nodes[:, 0], :], u[..., nodes[:, 1], :]], axis=-1)   # (..., s, 12)
    return np.einsum("sab,...sb->...sa", spring_map(ns, coords), pair)
