"""One interface over the sparse factorisations of the symmetric matrices K - sigma M used by
the eigen solver, chosen per model.

- Banded Cholesky (LAPACK pbtrf/pbtrs through scipy) in the better of the natural and reverse
  Cuthill-McKee orders: for slender models whose half-bandwidth stays small (towers, masts,
  long racks) it factors and solves several times faster than a general sparse LU, because
  its kernels run over dense bands.
- MKL PARDISO (optional extra `fast`, pypardiso, about 1 GB): much faster on compact 3D frames,
  whose factors fill in heavily, but its single right-hand-side solves are slow, so it loses on
  banded models. Used when installed and the envelope is wide.
- SuperLU with a symmetric minimum-degree ordering and no row pivoting: always available, the
  fallback for everything else.

`negative_eigenvalues` counts the negative pivots of an LDL^T (Sylvester's law of inertia), the
Sturm check of the eigen solver.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.sparse.csgraph import reverse_cuthill_mckee

__all__ = ["BAND_MAX", "BAND_MAX_ALONE", "COMPACT_PROFILE", "NotPositiveDefinite", "Ordering", "SPDFactor",
           "negative_eigenvalues", "ordering", "pardiso_available", "shift_invert_factor",
           "spd_factor"]

PIVOT_TOL = 1e-11       # a pivot below this fraction of its own diagonal entry counts as zero
COMPACT_PROFILE = 150   # mean envelope width (entries per row) above which PARDISO wins
BAND_MAX = 160          # half-bandwidth up to which banded Cholesky is as fast as PARDISO
BAND_MAX_ALONE = 600    # ... and up to which it beats SuperLU (benchmarks/eigen.py crossover: 19 s
                        # against 25 s at 497, even at 737)


class NotPositiveDefinite(ArithmeticError):
    """The matrix has a zero or negative pivot: K is singular (rigid-body motion, mechanism) or
    the shift lies above an eigenvalue."""


@dataclass
class Ordering:
    """perm (n,) the better of the natural and RCM orders; bandwidth the half-bandwidth and
    envelope the number of entries in the lower envelope (profile) under it."""

    perm: np.ndarray
    bandwidth: int
    envelope: int

    @property
    def mean_width(self) -> float:
        return self.envelope / max(len(self.perm), 1)


def _band_envelope(A) -> tuple[int, int]:
    n = A.shape[0]
    if A.nnz == 0:
        return 0, n
    first = np.minimum.reduceat(A.indices, A.indptr[:-1])
    first = np.where(np.diff(A.indptr) > 0, np.minimum(first, np.arange(n)), np.arange(n))
    width = np.arange(n) - first
    return int(width.max()), int(width.sum() + n)


def ordering(A) -> Ordering:
    """Band-reducing order of the symmetric-pattern A: natural or reverse Cuthill-McKee,
    whichever gives the smaller half-bandwidth (what a banded factor costs; generated decks are
    often numbered well already: 35 against 44 on a lattice tower), then the smaller envelope."""
    A = sp.csr_matrix(A)
    A.sort_indices()
    n = A.shape[0]
    best = Ordering(np.arange(n), *_band_envelope(A))
    if n:
        perm = reverse_cuthill_mckee(A, symmetric_mode=True)
        B = A[perm][:, perm].tocsr()
        B.sort_indices()
        rcm = Ordering(perm, *_band_envelope(B))
        if (rcm.bandwidth, rcm.envelope) < (best.bandwidth, best.envelope):
            best = rcm
    return best


def pardiso_available() -> bool:
    try:
        import pypardiso  # noqa: F401
    except ImportError:
        return False
    return True


def column_diagonal(lu, A) -> np.ndarray:
    """Diagonal entries of A in the column order of SuperLU's factor (U[j, j] is the pivot of
    original column argsort(perm_c)[j], since A Pc = Pr^T L U with Pc[i, perm_c[i]] = 1)."""
    return A.diagonal()[np.argsort(lu.perm_c)]


def _check_pivots(pivots, diagonal):
    """Refuse a factor with a non-positive pivot, or one so small against its own diagonal
    entry that the matrix is singular to working precision (rigid-body motion)."""
    if not np.all(pivots > PIVOT_TOL * np.abs(diagonal)):
        raise NotPositiveDefinite("a pivot is zero to working precision or negative")


class SPDFactor:
    """A factor of the symmetric positive definite A with solve(b) for vectors and blocks of
    vectors (n,) or (n, m); `name` says which library made it. Factors with `split` also give
    the halves of a Cholesky factor P A P^T = L L^T: lower_solve(b) = L^-1 P b and
    upper_solve(y) = P^T L^-T y, so that A^-1 = upper_solve o lower_solve."""

    name = ""
    kind = ""          # 'band', 'superlu' or 'pardiso': the family, also used for the inertia
    split = False
    definite = True    # a factor of a positive definite matrix (every pivot positive and resolved)
    order: Ordering | None = None

    def solve(self, b):  # pragma: no cover - interface
        raise NotImplementedError

    def operator(self) -> spla.LinearOperator:
        return spla.LinearOperator(self.shape, matvec=self.solve, matmat=self.solve, dtype=float)


class _Band(SPDFactor):
    name = "banded Cholesky"
    kind = "band"
    split = True

    def __init__(self, A, order: Ordering):
        self.shape = A.shape
        self.perm = order.perm
        self.inv = np.empty_like(self.perm)
        self.inv[self.perm] = np.arange(len(self.perm))
        B = sp.tril(sp.csr_matrix(A)[self.perm][:, self.perm], format="coo")
        width = int((B.row - B.col).max(initial=0))
        ab = np.zeros((width + 1, A.shape[0]))               # LAPACK lower band storage
        ab[B.row - B.col, B.col] = B.data
        del B
        try:
            self.c = sla.cholesky_banded(ab, lower=True, check_finite=False)
        except sla.LinAlgError:
            raise NotPositiveDefinite("banded Cholesky met a non-positive pivot") from None
        _check_pivots(self.c[0] ** 2, ab[0])

    def solve(self, b):
        b = np.asarray(b, dtype=float)
        x = sla.cho_solve_banded((self.c, True), b[self.perm], check_finite=False)
        return x[self.inv]

    def lower_solve(self, b):
        from scipy.linalg.blas import dtbsv

        return dtbsv(self.c.shape[0] - 1, self.c, np.asarray(b, dtype=float)[self.perm], lower=1)

    def upper_solve(self, y):
        from scipy.linalg.blas import dtbsv

        y = np.asarray(y, dtype=float)
        if y.ndim == 2:
            return np.column_stack([self.upper_solve(c) for c in y.T]) if y.shape[1] else y.copy()
        return dtbsv(self.c.shape[0] - 1, self.c, y, lower=1, trans=1)[self.inv]


class _SuperLU(SPDFactor):
    name = "SuperLU (symmetric ordering)"
    kind = "superlu"

    def __init__(self, A):
        self.shape = A.shape
        try:
            self.lu = spla.splu(sp.csc_matrix(A), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                options=dict(SymmetricMode=True))
        except RuntimeError:
            raise NotPositiveDefinite("SuperLU met an exactly singular pivot") from None
        if not np.array_equal(self.lu.perm_r, self.lu.perm_c):
            raise NotPositiveDefinite("SuperLU pivoted off the diagonal")
        _check_pivots(self.lu.U.diagonal(), column_diagonal(self.lu, A))
        # the fill-reducing order it chose (column j of the factor is column_order[j] of A): a
        # later factor of a matrix of the same pattern (the Sturm check's K - sigma M) reuses it
        self.column_order = np.argsort(self.lu.perm_c)

    def solve(self, b):
        return self.lu.solve(np.asarray(b, dtype=float))


def _pardiso_settings(solver, indefinite=False) -> None:
    """METIS nested dissection and the parallel forward/backward solve (iparm 2 and 25, 1-based):
    single right-hand-side solves, most of a shift-invert run, are 2x faster on 2 cores than
    with the default sequential solve (benchmarks/eigen.py). Indefinite: Bunch-Kaufman pivots
    with perturbation 1e-8 (iparm 21 and 10), the inertia reported in iparm 22 and 23."""
    solver.iparm[:] = 0
    solver.iparm[0] = 1          # these values, not the defaults
    solver.iparm[1] = 2
    solver.iparm[17] = -1        # report the factor's entries in iparm 18
    solver.iparm[24] = 2
    if indefinite:
        solver.iparm[9] = 8
        solver.iparm[20] = 1


class _Pardiso(SPDFactor):
    name = "MKL PARDISO"
    kind = "pardiso"

    def __init__(self, A):
        import pypardiso

        self.shape = A.shape
        self.upper = sp.triu(A, format="csr")
        self.upper.sort_indices()
        self.solver = pypardiso.PyPardisoSolver(mtype=2)      # real symmetric positive definite
        _pardiso_settings(self.solver)
        try:
            self.solver.factorize(self.upper)
        except pypardiso.pardiso_wrapper.PyPardisoError:
            raise NotPositiveDefinite("PARDISO met a non-positive pivot") from None
        self.solver.set_phase(33)                            # solve only, no re-checks per call

    def solve(self, b):
        b = np.asarray(b, dtype=np.float64)
        x = self.solver._call_pardiso(self.upper, np.asfortranarray(b.reshape(len(b), -1)))
        return x.reshape(b.shape)

    def __del__(self):
        try:
            self.solver.free_memory(everything=True)
        except Exception:       # interpreter shutdown or a half-built object
            pass


def choose(n: int, order: Ordering, kind: str = "auto") -> str:
    """'band', 'pardiso' or 'superlu' for a model of n DOFs under `order`: banded Cholesky up
    to BAND_MAX (or BAND_MAX_ALONE when PARDISO is not installed), PARDISO for wide envelopes,
    SuperLU otherwise. Crossovers measured by `benchmarks/eigen.py crossover`."""
    if kind != "auto":
        return kind
    from .memory import available_bytes

    pardiso = pardiso_available()
    band_bytes = 8 * n * (order.bandwidth + 1)
    if order.bandwidth <= (BAND_MAX if pardiso else BAND_MAX_ALONE) and band_bytes < available_bytes() / 2:
        return "band"
    if pardiso and order.mean_width > COMPACT_PROFILE:
        return "pardiso"
    return "superlu"


def spd_factor(A, kind: str = "auto", order: Ordering | None = None) -> SPDFactor:
    """Factor the symmetric positive definite A with `kind` 'band', 'superlu', 'pardiso' or
    'auto' (see `choose`); raises NotPositiveDefinite when A is not positive definite."""
    order = order or ordering(A)
    kind = choose(A.shape[0], order, kind)
    factor = {"band": lambda: _Band(A, order), "pardiso": lambda: _Pardiso(A), "superlu": lambda: _SuperLU(A)}[kind]()
    factor.order = order
    return factor


class _GeneralLU(SPDFactor):
    name = "SuperLU (partial pivoting)"
    kind = "superlu"
    definite = False

    def __init__(self, A):
        self.shape = A.shape
        self.lu = spla.splu(sp.csc_matrix(A), permc_spec="MMD_AT_PLUS_A")

    def solve(self, b):
        return self.lu.solve(np.asarray(b, dtype=float))


def shift_invert_factor(K, M, shift: float | None = None, kind: str = "auto") -> tuple[SPDFactor, float]:
    """Factor of K - sigma M for shift-invert Lanczos, and the sigma used.

    Without a given shift, sigma = 0 when K is positive definite (a supported structure: the
    inverted spectrum 1/lambda then separates even the lowest modes of a very flexible
    tower), else a small negative sigma so that rigid-body modes at zero are found. A shift
    among the eigenvalues falls back to a general LU."""
    from ..errors import ModelError
    from .memory import check_factor_memory

    order = ordering(K)          # the pattern of the matrix factored (M's may reach outside it)
    check_factor_memory(K, "eigen solve", order)
    if shift is None:
        try:
            return spd_factor(K, kind, order), 0.0
        except NotPositiveDefinite:
            d = K.diagonal() / np.where(M.diagonal() > 0, M.diagonal(), np.inf)
            shift = -1e-6 * float(np.median(d[d > 0]))
    A = (K - shift * M).tocsc()
    order = ordering(A)
    try:
        return spd_factor(A, kind, order), shift
    except NotPositiveDefinite:
        pass
    try:
        factor = _GeneralLU(A)
        factor.order = order
        return factor, shift
    except RuntimeError:
        raise ModelError("the stiffness is singular where the model has no mass (a mechanism of "
                         "massless parts); restrain it or give it mass") from None


def negative_eigenvalues(A, kind: str = "superlu", order: Ordering | None = None,
                         column_order: np.ndarray | None = None) -> int | None:
    """Number of negative eigenvalues of the symmetric (indefinite) A, from a sparse LDL^T
    (Sylvester's law of inertia: P A P^T = L D L^T has as many negative pivots in D).

    kind 'superlu': SuperLU with a symmetric ordering and no row pivoting factors
    P A P^T = L U with U = D L^T, so D is the diagonal of U; 'band': the same in the given
    band order (`order`), no fill-reducing reordering (2x faster on slender models);
    'pardiso': MKL's Bunch-Kaufman LDL^T, which reports the inertia itself. None when it
    cannot be read (an off-diagonal pivot, a perturbed pivot, an exactly singular A).
    `column_order`: with 'superlu', the fill-reducing order of an earlier factor of a matrix of
    the same pattern (`_SuperLU.column_order`), used instead of computing the ordering again
    (the inertia does not depend on the order; only the cost does)."""
    if kind == "pardiso":
        return _pardiso_inertia(A)
    A = sp.csc_matrix(A)
    spec = "MMD_AT_PLUS_A"
    if kind == "band" and order is not None:
        A, spec = A[order.perm][:, order.perm].tocsc(), "NATURAL"
    elif kind == "superlu" and column_order is not None and len(column_order) == A.shape[0]:
        A, spec = A[column_order][:, column_order].tocsc(), "NATURAL"
    try:
        lu = spla.splu(A, permc_spec=spec, diag_pivot_thresh=0.0, options=dict(SymmetricMode=True))
    except RuntimeError:           # exactly singular: the shift sits on an eigenvalue
        return None
    if not np.array_equal(lu.perm_r, lu.perm_c):
        return None
    return int(np.count_nonzero(lu.U.diagonal() < 0))


def _pardiso_inertia(A) -> int | None:
    import pypardiso

    upper = sp.triu(A, format="csr")
    upper.sort_indices()
    solver = pypardiso.PyPardisoSolver(mtype=-2)      # real symmetric indefinite
    _pardiso_settings(solver, indefinite=True)
    try:
        solver.factorize(upper)
        if solver.iparm[13] > 0:       # perturbed pivots: the inertia is not exact
            return None
        return int(solver.iparm[22])
    except pypardiso.pardiso_wrapper.PyPardisoError:
        return None
    finally:
        solver.free_memory(everything=True)
