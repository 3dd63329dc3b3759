"""One interface over the sparse factorisations of the symmetric positive definite K - sigma M
used by the eigen solver, chosen per model.

- SuperLU with a symmetric minimum-degree ordering and no row pivoting: always available, and
  the faster choice for slender, banded models (towers, masts, long racks).
- MKL PARDISO (optional extra `fast`, pypardiso, about 1 GB): much faster on compact 3D frames,
  whose factors fill in heavily, but its single right-hand-side solves are slow, so it loses on
  banded models. It is used when available and the estimated fill is large.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

__all__ = ["SPDFactor", "spd_factor", "pardiso_available", "negative_eigenvalues", "COMPACT_PROFILE"]

COMPACT_PROFILE = 150   # mean envelope width (entries per row, RCM order) above which PARDISO wins


def pardiso_available() -> bool:
    try:
        import pypardiso  # noqa: F401
    except ImportError:
        return False
    return True


class SPDFactor:
    """A factor of A with solve(b) for vectors; `name` says which library made it."""

    name = ""

    def solve(self, b):  # pragma: no cover - interface
        raise NotImplementedError

    def operator(self) -> spla.LinearOperator:
        return spla.LinearOperator(self.shape, matvec=self.solve, dtype=float)


class _SuperLU(SPDFactor):
    name = "SuperLU (symmetric ordering)"

    def __init__(self, A):
        self.shape = A.shape
        self.lu = spla.splu(sp.csc_matrix(A), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                            options=dict(SymmetricMode=True))

    def solve(self, b):
        return self.lu.solve(np.asarray(b, dtype=float))


class _Pardiso(SPDFactor):
    name = "MKL PARDISO"

    def __init__(self, A):
        import pypardiso

        self.shape = A.shape
        self.upper = sp.triu(A, format="csr")
        self.solver = pypardiso.PyPardisoSolver(mtype=2)      # real symmetric positive definite
        self.solver.factorize(self.upper)
        self.solver.set_phase(33)                            # solve only, no re-checks per call

    def solve(self, b):
        x = self.solver._call_pardiso(self.upper, np.asarray(b, dtype=np.float64).reshape(-1, 1))
        return x.ravel()


def spd_factor(A, kind: str = "auto", profile: float | None = None) -> SPDFactor:
    """Factor SPD A: kind 'superlu', 'pardiso' or 'auto' (PARDISO when installed and the mean
    envelope width `profile` (from memory.factor_bytes_estimate / 24 / n) exceeds
    COMPACT_PROFILE)."""
    if kind == "auto":
        kind = "pardiso" if (pardiso_available() and profile is not None and profile > COMPACT_PROFILE) else "superlu"
    if kind == "pardiso":
        return _Pardiso(A)
    return _SuperLU(A)


def negative_eigenvalues(A) -> int | None:
    """Number of negative eigenvalues of the symmetric (indefinite) A, from a sparse LDL^T
    (Sylvester's law of inertia: P A P^T = L D L^T has as many negative pivots in D).

    SuperLU with a symmetric ordering and no row pivoting factors P A P^T = L U with
    U = D L^T, so D is the diagonal of U. Should it pivot off the diagonal after all (a zero
    pivot), the inertia cannot be read and None is returned."""
    A = sp.csc_matrix(A)
    try:
        lu = spla.splu(A, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                       options=dict(SymmetricMode=True))
    except RuntimeError:           # exactly singular: the shift sits on an eigenvalue
        return None
    if not np.array_equal(lu.perm_r, lu.perm_c):
        return None
    return int(np.count_nonzero(lu.U.diagonal() < 0))
