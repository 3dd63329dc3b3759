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

__all__ = ["carried_ground", "carried_inertia", "free_link_peaks", "harmonic_link_peaks", "harmonic_inertia", "history_link_peaks",
           "history_link_statics", "inertia_columns", "link_inertia_columns"]


def _translations(n_nodes: int) -> np.ndarray:
    """(6n, 3) unit translations X, Y, Z of every node."""
    r = np.zeros((6 * n_nodes, 3))
    for i in range(3):
        r[i::6, i] = 1.0
    return r


def _ground_columns(asm: Assembled, n_nodes: int) -> np.ndarray:
    """(d, 3) inertia at the linked DOFs of a unit absolute acceleration X, Y, Z of every node."""
    return np.asarray(asm.link_mass @ _translations(n_nodes))


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

    if asm.link_rows is None:
        return None, None
    k = shapes.shape[1]
    B = np.hstack([np.asarray(asm.link_rows @ shapes), history_link_statics(model, asm, groups, statics),
                   *link_inertia_columns(model, asm, shapes)])
    return peaks(np.hstack([qg[:, :k], G, acc, a_ground]), B, t)


def history_link_statics(model, asm: Assembled, groups, statics) -> np.ndarray:
    """(d, l) the link forces per unit of each group's time function (its columns of a history's
    series): the static parts' K s less the group's loads where they act, at the linked DOFs."""
    from .static import load_vector

    loads = [load_vector(model, asm, sub, carried=False)[0][asm.linked] if (sub.loads or sub.gravity is not None)
             else np.zeros(len(asm.linked)) for _, sub, _ in groups]
    return np.asarray(asm.link_rows @ statics) - np.array(loads).T


def link_inertia_columns(model, asm: Assembled, shapes: np.ndarray):
    """(link_mass shapes (d, k), link_mass r (d, 3)): the link forces per unit modal acceleration
    of each shape and per unit ground acceleration X, Y, Z."""
    return np.asarray(asm.link_mass @ shapes), _ground_columns(asm, model.n_nodes)


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


def carried_inertia(model, asm: Assembled):
    """(6n, 6n) CSR, or None where there is none: per unit absolute acceleration, the inertia
    forces that reach the supports beyond the elastic reactions K u of the reduced model. At a
    supported DOF of a link's reference node the support holds (T^T (K u + M a - f)) there, of
    which the reduced K u and loads are in the reactions already; the rest is what the link
    carries from its followers' inertia, T^T (M a) from the linked DOFs. At a supported node
    with a mass off it, the coupling of the mass's offset centre (its rotation moves the mass,
    fem.geometry.offset_mass). A supported node's own inertia on its own held DOFs is left out,
    as at every support (reactions are of the structure, not of the support's mass)."""
    import scipy.sparse as sp

    parts = []
    if asm.link_mass is not None and asm.T is not None:
        parts.append(asm.T[asm.linked].T @ asm.link_mass)
    if model.mass_coupling is not None:
        n = model.n_nodes
        parts.append(sp.bsr_matrix((np.asarray(model.mass_coupling, float), np.arange(n), np.arange(n + 1)),
                                   shape=(6 * n, 6 * n)).tocsr())
    if not parts:
        return None
    held = model.restraint.ravel().astype(float)
    X = (sp.diags(held) @ sum(parts[1:], parts[0])).tocsr()
    X.eliminate_zeros()
    return X if X.nnz else None


def inertia_columns(model, asm: Assembled, shapes: np.ndarray):
    """(C shapes (6n, k), C r (6n, 3)) with C = carried_inertia: the reactions' inertia part per
    unit modal acceleration of each shape, and per unit ground acceleration X, Y, Z; or None."""
    C = carried_inertia(model, asm)
    if C is None:
        return None
    return np.asarray(C @ shapes), np.asarray(C @ _translations(model.n_nodes))


def harmonic_inertia(model, asm: Assembled, case, H, shapes, W, static):
    """The reactions' inertia part (carried_inertia) over a sweep as (columns (m, c), basis
    (6n, c)), the part being columns @ basis^T: the modes' -W^2 H (H (m, k) their amplitudes,
    shapes (6n, k)), the static parts' -W^2 s (`static` as harmonic_link_peaks takes it), a
    ground acceleration's a_g; None where nothing is carried."""
    C = carried_inertia(model, asm)
    if C is None:
        return None
    w2 = -(W[:, None] ** 2)
    cols, basis = [w2 * H], [np.asarray(C @ shapes)]
    if static is not None:
        scale, parts = (np.ones((len(W), 1)), np.atleast_2d(static)) if isinstance(static, np.ndarray) else static
        cols.append(w2 * scale)
        basis.append(np.asarray(C @ parts.T))
    if case.ground is not None:
        cols.append(np.ones((len(W), 1)))
        basis.append(np.asarray(C @ (_translations(model.n_nodes) @ np.asarray(case.ground, float)))[:, None])
    return np.hstack(cols).astype(complex), np.hstack(basis).astype(complex)


def carried_ground(model, asm: Assembled, r: np.ndarray) -> np.ndarray:
    """(6n,) the part of a ground motion's effective load -M r a_g (per unit a_g, r (6n,) the
    ground's motion at every DOF) that the inertia carried into supports adds on the free DOFs:
    the mass a link carries to a supported reference node, or a mass off a supported node,
    couples the support's motion to the node's free rotations (the counterweight on an arm at a
    pinned foot is pushed round by a vertical ground motion). The coupling of members' consistent
    mass across a support is left out, as in the rest of the ground-motion load. Zero when
    nothing is carried."""
    C = carried_inertia(model, asm)
    if C is None:
        return np.zeros(len(r))
    out = np.asarray(C.T @ r)
    return out if asm.T is None else np.asarray(asm.T.T @ out)
