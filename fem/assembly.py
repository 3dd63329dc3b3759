"""DOF map and vectorised assembly of global K and M (COO triplets -> CSR once)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from . import elements as el
from .errors import ModelError
from .model import Model

__all__ = ["Assembled", "assemble", "element_matrices"]


@dataclass
class Assembled:
    """Global matrices over all 6 n DOFs, and the free/restrained split.

    K, M : (6n, 6n) CSR; R : (e, 3, 3) member local axes; k_local : (e, 12, 12) condensed local K
    free : (n_free,) indices of unrestrained DOFs; fixed: restrained or inert DOFs
    """

    K: sp.csr_matrix
    M: sp.csr_matrix
    R: np.ndarray
    L: np.ndarray
    k_local: np.ndarray
    free: np.ndarray
    fixed: np.ndarray
    inert: np.ndarray      # DOFs held because nothing (stiffness or mass) acts on them


def element_matrices(model: Model, condense: bool = True):
    """Batched local stiffness and mass (e, 12, 12), axes R (e, 3, 3) and lengths L (e,).

    With condense=False the stiffness is returned before end releases are condensed out."""
    xi, xj = model.coords[model.conn[:, 0]], model.coords[model.conn[:, 1]]
    up = np.where(np.isnan(model.up).any(axis=1, keepdims=True), np.nan, model.up)
    has_up = ~np.isnan(up).any(axis=1)
    R, L = el.local_axes(xi, xj, roll=model.roll)
    if has_up.any():
        sel = np.flatnonzero(has_up)
        try:
            R2, _ = el.local_axes(xi[sel], xj[sel], roll=model.roll[sel], up=up[sel])
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
    m = el.frame_mass(L, model.rho, model.A, model.Iy, model.Iz, model.J, model.nsm, lumped)
    t = model.truss
    if t.any():
        k[t] = el.truss_stiffness(L[t], model.E[t], model.A[t])
        m[t] = el.truss_mass(L[t], model.rho[t], model.A[t], model.nsm[t], lumped)
    rel = model.releases & ~t[:, None]
    if condense and rel.any():
        k = el.condense_releases(k, rel)
    return k, m, R, L


def assemble(model: Model) -> Assembled:
    """Assemble K and M with springs and point masses; no Python loop over members."""
    k, m, R, L = element_matrices(model)
    kg, mg = el.to_global(k, R), el.to_global(m, R)
    n = 6 * model.n_nodes
    dofs = (6 * model.conn[:, :, None] + np.arange(6)).reshape(-1, 12).astype(np.int32)  # (e, 12)
    rows = np.repeat(dofs, 12, axis=1).ravel()
    cols = np.tile(dofs, (1, 12)).ravel()
    K = sp.csr_matrix((kg.ravel(), (rows, cols)), shape=(n, n))
    M = sp.csr_matrix((mg.ravel(), (rows, cols)), shape=(n, n))
    K = (K + sp.diags(model.springs.ravel(), format="csr")).tocsr()
    M = (M + sp.diags(model.point_mass.ravel(), format="csr")).tocsr()
    if not (np.isfinite(K.data).all() and np.isfinite(M.data).all()):
        raise ModelError("the stiffness or mass matrix overflows (a property or coordinate is far too "
                         "large or too small); check the magnitudes and units in the deck")
    restrained = model.restraint.ravel()
    # a DOF with no stiffness at all (a truss-only node's rotations, a rotation that only
    # released member ends meet) is held rather than reported as a mechanism, unless a load
    # acts on it (checked by the static solve); its rotary mass, if any, is dropped with it
    inert = (K.diagonal() == 0) & ~restrained
    fixed = restrained | inert
    return Assembled(K, M, R, L, k, np.flatnonzero(~fixed), np.flatnonzero(fixed),
                     np.flatnonzero(inert))
