"""The forces of rigid links in free, history and harmonic cases: at each linked DOF of a node
that follows a link, the force the link exerts on it is what the node's unreduced equation of
motion lacks, p = K u + M a - f (u the displacement, a the absolute acceleration, f the loads
where they act; the static case's K u - f with the inertia of what the node carries). With
the response as modes and static parts, p is a sum of columns times their histories (or
frequency factors), whose largest magnitude over the run is found block by block, as for the
displacements. The modal damping's forces are not nodal and are left out (the modes'
accelerations include them).
"""

from __future__ import annotations

import numpy as np

from ..assembly import Assembled

__all__ = ["free_link_peaks", "harmonic_link_peaks", "history_link_peaks"]


def _ground_columns(asm: Assembled, n_nodes: int) -> np.ndarray:
    """(d, 3) inertia at the linked DOFs of a unit absolute acceleration X, Y, Z of every node."""
    r = np.zeros((6 * n_nodes, 3))
    for i in range(3):
        r[i::6, i] = 1.0
    return np.asarray(asm.link_mass @ r)


def free_link_peaks(asm: Assembled, shapes: np.ndarray, q: np.ndarray, acc: np.ndarray, t: np.ndarray):
    """(peak (d,), time (d,)) of |p| over a free vibration: u = shapes q, a = shapes acc; shapes
    (6n, k) on all DOFs; q, acc (m, k). (None, None) without links."""
    from .free_case import peaks

    if asm.link_rows is None:
        return None, None
    B = np.hstack([np.asarray(asm.link_rows @ shapes), np.asarray(asm.link_mass @ shapes)])
    return peaks(np.hstack([q, acc]), B, t)


def history_link_peaks(model, asm: Assembled, groups, shapes, statics, qg, acc, a_ground, G, t):
    """(peak (d,), time (d,)) of |p| over a history: u = [shapes, statics] qg (modes, then the
    static corrections of each group), relative acceleration shapes acc plus the ground's
    a_ground (m, 3), the loads of group l (fem.analysis.history_case._groups) times G[:, l].
    (None, None) without links."""
    from .free_case import peaks
    from .static import load_vector

    if asm.link_rows is None:
        return None, None
    loads = [load_vector(model, asm, sub, carried=False)[0][asm.linked] if (sub.loads or sub.gravity is not None)
             else np.zeros(len(asm.linked)) for _, sub, _ in groups]
    B = np.hstack([np.asarray(asm.link_rows @ np.hstack([shapes, statics])), np.asarray(asm.link_mass @ shapes),
                   _ground_columns(asm, model.n_nodes), -np.array(loads).T])
    return peaks(np.hstack([qg, acc, a_ground, G]), B, t)


def harmonic_link_peaks(model, asm: Assembled, case, H, shapes, W, S, static):
    """(amplitude (d,), its frequency (d,) Hz, complex value there (d,)) of the largest |p| over
    a sweep: U = H shapes^T + the static parts (`static`: one (6n,) for a single plain load term,
    or (S (m, T) term scales, (T, 6n) parts), or None), absolute acceleration -W^2 U plus the
    ground's a_g, loads the terms' (S scales them) where they act. None without links."""
    from dataclasses import replace

    from .harmonic import _amplitude_peaks, load_terms

    if asm.link_rows is None:
        return None
    terms = load_terms(model, replace(asm, T=None), case)      # the loads where they act
    loads = np.array([F_only[asm.linked] for _, _, _, F_only, _ in terms])     # (T, d)
    Kl, Ml = np.asarray(asm.link_rows @ shapes), np.asarray(asm.link_mass @ shapes)
    w2 = W[:, None] ** 2
    cols, basis = [H, -w2 * H, -S], [Kl, Ml, loads.T]
    if static is not None:
        scale, parts = (np.ones((len(W), 1)), np.atleast_2d(static)) if isinstance(static, np.ndarray) else static
        cols += [scale, -w2 * scale]
        basis += [np.asarray(asm.link_rows @ parts.T), np.asarray(asm.link_mass @ parts.T)]
    if case.ground is not None:
        cols.append(np.ones((len(W), 1)))
        basis.append(_ground_columns(asm, model.n_nodes) @ np.asarray(case.ground, float)[:, None])
    freq = W / (2 * np.pi)
    return _amplitude_peaks(np.hstack(cols).astype(complex), np.hstack(basis).astype(complex), freq)
