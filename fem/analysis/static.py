"""Static load cases: consistent nodal loads, sparse direct solve, reactions, member end forces."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse.linalg as spla

from .. import elements as el
from ..assembly import Assembled, element_matrices
from ..errors import MechanismError
from ..model import DIRECTIONS, LoadCase, Model

__all__ = ["StaticResult", "factorise", "load_vector", "solve_static"]


@dataclass
class StaticResult:
    """u (n, 6) displacements, m / rad; reactions (n, 6) N / N m (zero off supports);
    member_forces (e, 12) local end forces N, Vy, Vz, T, My, Mz at i then j (forces on the member);
    equilibrium: largest |sum of applied + reactions| over force components, relative."""

    name: str
    u: np.ndarray
    reactions: np.ndarray
    member_forces: np.ndarray
    applied: np.ndarray
    equilibrium: float


def load_vector(model: Model, asm: Assembled, case: LoadCase):
    """Global load vector (6n,) and the local fixed-end load vectors (e, 12) of member loads."""
    f = np.zeros(6 * model.n_nodes)
    w = np.zeros((model.n_members, 3))       # global line load per member, N/m
    for item in case.loads:
        if item.kind == "force":
            _scatter(f, 6 * item.targets[:, None] + np.arange(3), item.vector)
        elif item.kind == "moment":
            _scatter(f, 6 * item.targets[:, None] + np.arange(3, 6), item.vector)
        elif item.kind == "line":
            _scatter(w, item.targets[:, None], item.vector, rows=True)
    if case.gravity is not None:
        w += (model.rho * model.A + model.nsm)[:, None] * case.gravity
        f += np.c_[model.point_mass[:, :3] * case.gravity, np.zeros((model.n_nodes, 3))].ravel()
    w_local = np.einsum("eab,eb->ea", asm.R, w)
    fe = el.uniform_load_fixed_end(asm.L, w_local)
    rel = model.releases & ~model.truss[:, None]
    if model.truss.any():
        fe[model.truss] = 0.0
        fe[model.truss, 0:3] = w_local[model.truss] * asm.L[model.truss, None] / 2
        fe[model.truss, 6:9] = fe[model.truss, 0:3]
    if rel.any():
        k_full = element_matrices(model, condense=False)[0]
        fe = el.condense_load(k_full, fe, rel)
    T = el.transform_matrix(asm.R)
    fg = np.einsum("eba,eb->ea", T, fe)
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    _scatter(f, dofs, fg)
    return f, fe


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


def factorise(model: Model, asm: Assembled):
    """Sparse LU of K over the free DOFs; a singular K raises MechanismError naming the free DOFs."""
    Kff = asm.K[asm.free][:, asm.free].tocsc()
    scale = abs(Kff.diagonal()).max() if Kff.shape[0] else 1.0
    try:
        # partial pivoting: the symmetric no-pivot mode gave intermittent NaN solves here
        lu = spla.splu(Kff, permc_spec="MMD_AT_PLUS_A")
        piv = np.abs(lu.U.diagonal())
        bad = np.flatnonzero(piv < 1e-10 * scale)
    except RuntimeError:
        lu, bad = None, np.flatnonzero(np.abs(Kff.diagonal()) < 1e-10 * scale)
        if bad.size == 0:
            bad = np.arange(min(6, Kff.shape[0]))
    if lu is None or bad.size:
        dof = asm.free[lu.perm_c[bad]] if lu is not None else asm.free[bad]
        free = [(model.node_names[d // 6], DIRECTIONS[d % 6]) for d in dof]
        shown = ", ".join(f"{n} {d}" for n, d in free[:12]) + (" ..." if len(free) > 12 else "")
        raise MechanismError(f"the structure is a mechanism (singular stiffness): free to move at {shown}; "
                             "add supports or members, or remove end releases there", free)
    return lu


def solve_static(model: Model, asm: Assembled, case: LoadCase, lu=None) -> StaticResult:
    lu = lu or factorise(model, asm)
    f, fe = load_vector(model, asm, case)
    loaded = asm.inert[np.abs(f[asm.inert]) > 0]
    if loaded.size:
        free = [(model.node_names[d // 6], DIRECTIONS[d % 6]) for d in loaded]
        shown = ", ".join(f"{n} {d}" for n, d in free[:12])
        raise MechanismError(f"case {case.name}: load acts where nothing resists it: {shown}", free)
    u = np.zeros(6 * model.n_nodes)
    u[asm.free] = lu.solve(f[asm.free])
    if not np.isfinite(u).all():
        raise MechanismError(f"case {case.name}: the solve did not give finite displacements; "
                             "the stiffness is singular or badly conditioned", [])
    r = asm.K @ u - f
    reactions = np.zeros_like(u)
    reactions[asm.fixed] = r[asm.fixed]
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    T = el.transform_matrix(asm.R)
    ue = np.einsum("eab,eb->ea", T, u[dofs])
    mf = np.einsum("eab,eb->ea", asm.k_local, ue) - fe
    applied = f.reshape(-1, 6)
    tot = applied[:, :3].sum(0) + reactions.reshape(-1, 6)[:, :3].sum(0)
    ref = max(np.abs(applied[:, :3]).sum(), 1e-300)
    return StaticResult(case.name, u.reshape(-1, 6), reactions.reshape(-1, 6), mf, applied,
                        float(np.abs(tot).max() / ref))
