"""Lowest modes of K x = w^2 M x over the free DOFs, with self-checks and participation."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..errors import ModelError

__all__ = ["DENSE_LIMIT", "eigen_checks", "massless_dofs", "ModalResult", "own_scale", "participation",
           "Participation", "solve_modes", "sturm_shift"]

DENSE_LIMIT = 600   # free DOFs up to which a dense eigh is cheaper and exact
DEFLATION_ROUNDS = 12  # re-runs for modes the Sturm count shows missed (one or more each)
LANCZOS_TOL = 1e-12  # ARPACK's relative Ritz tolerance: eigenvalues to ~1e-12, fewer steps than 0 (eps)
ZERO_ROUNDING = 10   # a mode of a K not shown positive definite is a zero mode within this many eps of
                     # its own stiffness scale: rigid-body modes measured at <= 2 (free beams, free masts,
                     # with and without 0.2 mm links), the first mode of a mast with a 0.1 mm link (its
                     # factor refused) at 17; our choice
# Size limits, our choice (measured on a loaded 2-core machine): a dense solve of n DOFs holds
# about 8.5 n^2 doubles at its peak and took 18 s at n = 1600 (time ~ n^3: ~2 min at 3000);
# shift-invert Lanczos took 45, 80 and 180 s for 100, 200 and 400 modes of 19 600 DOFs, its
# basis of 2k + 1 vectors and their orthogonalisation (~ n k^2) growing with the count (1500
# modes of an 18 522-DOF grid had not finished in 120 s). LANCZOS_WORK allows about three
# times the work of the 400-mode run.
DENSE_MAX = 3000        # free DOFs above which finding (nearly) every mode densely is refused
DENSE_COPIES = 10       # n x n double arrays held at the dense solve's peak (8.5 measured before the
                        # inverted pencil was added, which holds about one more)
LANCZOS_WORK = 1e10     # finite modes x (modes asked)^2 above which a Lanczos run is refused
LANCZOS_MAX = 1000      # and never more modes than this in one Lanczos run


@dataclass
class ModalResult:
    """omega (k,) rad/s ascending; freq (k,) Hz; period (k,) s (inf for rigid-body modes);
    phi (n, k) mass-normalised; residual (k,) backward error in each mode's own scale
    ||K phi - w^2 M phi|| / (|| |K| |phi| || + w^2 || |M| |phi| ||); orth_mass max |phi^T M phi - I|;
    orth_stiff the largest off-diagonal |phi_i^T K phi_j| beyond its rounding bound, over
    sqrt(w_i^2 w_j^2) (see `eigen_checks`); sturm_count eigenvalues below
    the check shift sturm_shift (None if not computed) and sturm_expected the computed ones
    below it (the modes found plus any repeated partners of the last one); solver 'dense' or
    'shift-invert, <factorisation>'."""

    omega: np.ndarray
    freq: np.ndarray
    period: np.ndarray
    phi: np.ndarray
    residual: np.ndarray
    orth_mass: float
    orth_stiff: float
    sturm_count: int | None
    sturm_shift: float | None
    solver: str
    sturm_expected: int | None = None
    n_finite: int | None = None       # finite modes the pencil has (rank of M; an upper estimate
                                      # from M's diagonal when not solved densely)


@dataclass
class Participation:
    """gamma (k, d) = phi^T M R for mass-normalised phi; effective_mass (k, d) = gamma^2;
    total (d,) = diag(R^T M R); fraction and cumulative (k, d) of the total."""

    gamma: np.ndarray
    effective_mass: np.ndarray
    total: np.ndarray
    fraction: np.ndarray
    cumulative: np.ndarray


def own_scale(K, phi) -> np.ndarray:
    """(k,) |phi_j|^T |K| |phi_j|: the stiffness scale of each mode's own motion, the rounding
    unit of phi_j^T K phi_j (a short stiff member that moves rigidly in a mode raises it; one
    that stays still does not)."""
    aK = abs(K) if sp.issparse(K) else np.abs(K)
    a = np.abs(phi)
    return np.einsum("ij,ij->j", a, aK @ a)


def eigen_checks(K, M, lam, phi):
    """Residuals and orthogonality, each against the modes' own scales, never the whole model's.

    residual_j = ||K phi - w^2 M phi|| / (|| |K| |phi| || + w^2 || |M| |phi| ||): the backward error
    of the pair in the norm of its own motion (a normwise backward error with |K| |phi| in place
    of ||K|| ||phi||; Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., sec. 7.1
    and 7.2), so a short stiff member elsewhere in the model does not hide a wrong low mode.

    orth_stiff: for each pair i != j, the part of |phi_i^T K phi_j| beyond the rounding bound of
    its own computation, gamma |phi_i|^T |K| |phi_j| (Higham, sec. 3.1: a dot product of length m
    is exact to gamma_m = m u / (1 - m u) times |x|^T |y|, taken for the row lengths of K plus the
    final sum), over sqrt(w_i^2 w_j^2), the pair's own stiffness (the larger one where a mode is a
    rigid-body mode; for two of them the largest w^2 of the set, or with none their rounding scale
    |phi_i|^T |K| |phi_j|); the largest over the pairs. 0 when every coupling is explained by
    rounding."""
    Kp, Mp = K @ phi, M @ phi
    aK = abs(K) if sp.issparse(K) else np.abs(K)
    aM = abs(M) if sp.issparse(M) else np.abs(M)
    a = np.abs(phi)
    den = np.linalg.norm(aK @ a, axis=0) + np.abs(lam) * np.linalg.norm(aM @ a, axis=0)
    res = np.linalg.norm(Kp - Mp * lam, axis=0) / np.where(den > 0, den, 1.0)
    mm = phi.T @ Mp
    kk = phi.T @ Kp
    orth_m = float(np.abs(mm - np.eye(len(lam))).max()) if len(lam) else 0.0
    if len(lam) < 2:
        return res, orth_m, 0.0
    n = K.shape[0]
    row = int(np.diff(K.indptr).max()) if sp.issparse(K) and K.format in ("csr", "csc") else n
    u = np.finfo(float).eps / 2
    gamma = (row + n) * u / (1 - (row + n) * u)
    bound = a.T @ (aK @ a)
    excess = np.maximum(np.abs(kk) - gamma * bound, 0.0)
    np.fill_diagonal(excess, 0.0)
    w2 = np.maximum(lam, 0.0)
    scale = np.where((w2[:, None] > 0) & (w2[None, :] > 0), np.sqrt(np.outer(w2, w2)),
                     np.maximum(w2[:, None], w2[None, :]))
    # two rigid-body modes: against the largest w^2 of the set, or with none, their rounding scale
    scale = np.where(scale > 0, scale, w2.max() if w2.max() > 0 else bound)
    ratio = np.divide(excess, scale, out=np.zeros_like(excess), where=excess > 0)
    return res, orth_m, float(ratio.max())


BLAS_THREADS = 1     # BLAS threads during the Lanczos iterations, whatever the factorisation (None: no limit)


def _one_blas_thread(factor=None):
    """BLAS limited to BLAS_THREADS during the Lanczos iterations (threadpoolctl): their dense
    work is on thin blocks (the basis times a few vectors, the triangular band solves) where
    threads cost more in start-up and contention than they save, and on a shared machine they
    oversubscribe the cores (with MKL loaded, several BLAS libraries each start their own).
    Measured by benchmarks/factor_count.py (threads). `factor` is kept for the callers: the limit
    no longer depends on it."""
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=BLAS_THREADS, user_api="blas")


def massless_dofs(M) -> np.ndarray:
    """(n,) bool: DOFs whose row of M carries no mass (lumped rotations, massless members).
    A PSD row with a zero diagonal is zero throughout; 1e-13 of the largest diagonal is far
    below any physical mass and far above round-off."""
    d = M.diagonal()
    return d <= 1e-13 * max(float(d.max(initial=0.0)), 1e-300)


def _dense(K, M):
    """All finite eigenpairs of the dense pencil, ascending, their number (the rank of M), the
    shift of the inverted pencil (0 when K is positive definite; None if only the direct pencil
    could be solved) and whether K is positive definite (then no mode is a zero mode).

    The direct reduction eigh(K, M) gives every eigenvalue to about eps times the largest
    (Golub and Van Loan, Matrix Computations, 4th ed., sec. 8.7), so where the highest is
    1e15 times the lowest (a short stiff member) the lowest come out as zero or noise. The
    inverted pencil eigh(M, K - sigma M), mu = 1 / (lambda - sigma), gives the lowest to about
    eps relative to themselves and loses the highest. Each is used where it is the more
    accurate, below and above the point where their error bounds eps mu_max (lambda - sigma)^2
    and eps lambda_max meet; the upper vectors are made M-orthogonal to the lower ones and the
    pencil is solved again in their span (Rayleigh-Ritz), so that the set stays M-orthonormal.
    sigma = 0 when K has a Cholesky factor (a supported structure); else a small negative shift,
    so that rigid-body modes are found at zero. The inverted pencil needs no special care for
    massless DOFs (they have mu = 0, an infinite eigenvalue).

    For the direct pencil, where M is singular (massless DOFs, or massless directions that are
    not single DOFs, such as the axial rotation of an inclined member with lumped or
    translational-only mass) the pencil is split along the eigenvectors of M: x = R y + N z with
    M N = 0. The massless coordinates z carry no inertia, so Kn z + Knr y = 0 at every frequency
    and they are condensed out exactly; the rest is a definite problem (Kc, R^T M R)."""
    Kd = K.toarray() if sp.issparse(K) else np.asarray(K, dtype=float)
    Md = M.toarray() if sp.issparse(M) else np.asarray(M, dtype=float)
    mu, V = sla.eigh(Md)
    null = mu <= 1e-13 * max(float(mu.max(initial=0.0)), 1e-300)   # far below any mass, above round-off
    if not null.any():
        lam_d, phi_d = sla.eigh(Kd, Md)
    else:
        R, N = V[:, ~null], V[:, null]
        KR, KN = Kd @ R, Kd @ N
        try:
            T = -sla.solve(N.T @ KN, N.T @ KR, assume_a="sym")          # z = T y
        except (sla.LinAlgError, ValueError):
            raise ModelError("massless parts move without stiffness: give the members there a density "
                             "or a point mass, or restrain the free directions") from None
        Kc = R.T @ KR + (R.T @ KN) @ T
        lam_d, y = sla.eigh((Kc + Kc.T) / 2, np.diag(mu[~null]))
        phi_d = R @ y + N @ (T @ y)
        del R, N, KR, KN, T, Kc, y
    del V                             # the peak below is Kd, Md, phi_d and the inverted solve
    n_fin = len(lam_d)
    d = np.diag(Kd) / np.where(np.diag(Md) > 0, np.diag(Md), np.inf)
    sigma = 0.0
    for _ in range(2):
        try:
            nu, y = sla.eigh(Md, Kd - sigma * Md)
            break
        except sla.LinAlgError:       # K singular: rigid-body modes or mechanisms
            sigma = -1e-6 * float(np.median(d[d > 0])) if (d > 0).any() else -1.0
    else:
        return lam_d, phi_d, n_fin, None, False
    nu, y = nu[::-1], y[:, ::-1]
    top = max(abs(float(lam_d[-1])), 1e-300) if n_fin else 1e-300
    ok = (nu > 0) & ((1.0 / np.where(nu > 0, nu, 1.0)) ** 2 <= top / max(nu[0], 1e-300))
    ok[n_fin:] = False
    s = int(np.argmin(ok)) if not ok.all() else len(nu)
    lam_lo = sigma + 1.0 / nu[:s]
    phi_lo = y[:, :s] / np.sqrt(np.einsum("ij,ij->j", y[:, :s], Md @ y[:, :s]))
    if s == n_fin:
        return lam_lo, phi_lo, n_fin, sigma, sigma == 0.0
    Q = phi_d[:, s:]
    for _ in range(2):                # one repeat of the projection restores orthogonality (common practice)
        Q = Q - phi_lo @ (phi_lo.T @ (Md @ Q))
    AQ, BQ = Q.T @ Kd @ Q, Q.T @ Md @ Q
    lam_hi, z = sla.eigh((AQ + AQ.T) / 2, (BQ + BQ.T) / 2)
    lam, phi = np.r_[lam_lo, lam_hi], np.c_[phi_lo, Q @ z]
    order = np.argsort(lam, kind="stable")
    return lam[order], phi[:, order], n_fin, sigma, sigma == 0.0


def _kept(lam, want, lam_max) -> int:
    """How many of the ascending eigenvalues `lam` are reported: the lowest `want`, none above
    lam_max."""
    return int(np.sum((np.arange(len(lam)) < want) & (lam <= lam_max * (1 + 1e-12))))


def sturm_shift(lam, k, more):
    """Shift for the Sturm check of the first k of the computed eigenvalues `lam` (ascending):
    midway to the next distinct computed eigenvalue, so that repeated partners of the last
    mode (symmetric towers give pairs) are counted as computed, not as missed; when the
    cluster of the last mode runs past the computed ones, midway below the cluster. Returns the
    shift and how many computed eigenvalues lie below it. `more`: eigenvalues exist above
    the computed ones."""
    top = lam[k - 1]
    tol = 1e-8 * max(abs(top), 1.0)
    above = np.flatnonzero(lam > top + tol)
    if len(above):
        j = above[0]
        return 0.5 * (top + lam[j]), int(j)
    if more:
        # the last mode's cluster runs past the computed ones: check below the cluster instead
        c = int(np.flatnonzero(lam >= top - tol)[0])
        return (0.5 * (lam[c - 1] + lam[c]), c) if c > 0 else (None, None)
    return top + max(1e-6 * abs(top), 1e-8), len(lam)


def _lanczos(K, M, k, sigma, factor, found=None):
    """k eigenpairs of (K, M) nearest sigma by shift-invert Lanczos (ARPACK), and the basis
    to deflate them from a later run (pass the bases of earlier runs, stacked, as `found`).

    With a split Cholesky factor K - sigma M = P^T L L^T P, the standard symmetric problem
    L^-1 P M P^T L^-T y = mu y, mu = 1 / (lambda - sigma), phi = P^T L^-T y, is solved:
    one M product per step instead of the three of ARPACK's generalised mode; its basis is the
    orthonormal y. Otherwise ARPACK's generalised mode runs on (K - sigma M)^-1 M in the M
    inner product; its basis is the M-orthonormal phi. Found vectors are deflated by
    projecting them out of the operator, which maps their mu to 0 so that the run converges to
    the next ones, notably the partners of an exactly repeated eigenvalue that a single start
    vector cannot see (the six rigid-body modes of a free structure)."""
    n = K.shape[0]
    if not factor.split:
        op = factor.operator()
        if found is not None:
            Q, MQ = found, M @ found
            op = spla.LinearOperator((n, n), dtype=float,
                                     matvec=lambda x: (lambda v: v - Q @ (MQ.T @ v))(factor.solve(x)))
        lam, phi = spla.eigsh(K, k=k, M=M, sigma=sigma, which="LM", OPinv=op, tol=LANCZOS_TOL)
        return lam, phi, phi / np.sqrt(np.einsum("ij,ij->j", phi, M @ phi))

    def apply(y):
        return factor.lower_solve(M @ factor.upper_solve(y))

    if found is not None:
        Y = found

        def apply(y, plain=apply):  # noqa: F811 - the deflated operator P C P, P = I - Y Y^T
            y = y - Y @ (Y.T @ y)
            z = plain(y)
            return z - Y @ (Y.T @ z)

    C = spla.LinearOperator((n, n), matvec=apply, dtype=float)
    mu, y = spla.eigsh(C, k=k, which="LA", tol=LANCZOS_TOL)
    return sigma + 1.0 / mu, factor.upper_solve(y), y


def lanczos_limit(n_fin: int) -> int:
    """The most modes one shift-invert Lanczos run is asked for on a model with n_fin finite
    modes: LANCZOS_MAX, fewer on a large model (n_fin k^2 <= LANCZOS_WORK)."""
    return max(1, min(LANCZOS_MAX, int(np.sqrt(LANCZOS_WORK / max(n_fin, 1)))))


def check_size(n: int, n_fin: int, count: int | None, dense: bool, f_max: float | None = None) -> None:
    """Refuse, before it starts, an eigen solve that would not end in reasonable time or not fit:
    a dense solve of more than DENSE_MAX DOFs or of more memory than this process may take, a
    Lanczos run for more modes than lanczos_limit or whose vectors do not fit. `count`: modes
    asked for, or with `f_max` the modes the next run for f_max would compute."""
    from .memory import check_memory, gib

    limit = lanczos_limit(n_fin)
    fix = f"ask for at most {limit} modes (count = {limit}) or set a frequency limit (fmax)"
    if dense and n > DENSE_LIMIT:
        need = DENSE_COPIES * 8.0 * n * n
        asked = f"count = {count} asks for {'all' if count >= n_fin else 'nearly all'} of the {n_fin} modes"
        if n > DENSE_MAX:
            raise ModelError(f"{asked}, which only a dense solve finds: for {n} free DOFs it needs about "
                             f"{gib(need)} and time growing as the cube of the DOFs, above the limit of "
                             f"{DENSE_MAX} free DOFs for it (about 2 minutes on 2 cores); {fix}")
        check_memory(need, f"the dense eigen solve of {n} free DOFs ({asked})", fix)
        return
    if dense or count is None:
        return
    if count > limit:
        what = f"count = {count}" if f_max is None else f"fmax = {f_max:.4g} Hz takes in more than {count} modes, which"
        why = ("" if limit == LANCZOS_MAX else f" for a model of {n_fin} modes: the work grows with the "
               "modes times the square of the count")
        every = f", or for every mode (count = {n_fin}), which a dense solve finds" if n <= DENSE_MAX else ""
        raise ModelError(f"{what} is more modes than one Lanczos run finds in reasonable time (the limit is "
                         f"{limit}{why}); "
                         + (f"lower fmax or ask for at most {limit} modes (count = {limit})" if f_max else fix) + every)
    ncv = min(max(2 * count + 1, 20), n)
    need = 8.0 * (n * (ncv + 4 * count) + 2 * ncv * ncv)     # basis, found vectors, work (7 n k measured)
    check_memory(need, f"the Lanczos eigen solve of {count} modes on {n} free DOFs",
                 "ask for fewer modes (count), a lower fmax, or reduce the model")


def solve_modes(K, M, n_modes: int | None = None, f_max: float | None = None,
                shift: float | None = None, sturm: bool = True, factor_kind: str = "auto",
                cache: dict | None = None) -> ModalResult:
    """Lowest modes of the pencil (K, M), K and M symmetric (n, n), M positive semi-definite.

    n_modes modes, or all with frequency up to f_max (Hz), or both (the smaller set).
    Shift-invert Lanczos around `shift` (rad^2/s^2; by default 0, or slightly negative when
    K is singular so rigid-body modes are found) for large models, dense eigh for
    n <= DENSE_LIMIT. DOFs without mass
    have no finite mode; at most n minus their number modes exist. With `sturm`, the number
    of eigenvalues below a shift just above the last mode is counted from a factorisation
    (Sylvester's law of inertia) and compared with the number computed. Pass the same dict as
    `cache` to calls on the same K and M to factor them only once.
    """
    n = K.shape[0]
    if n_modes is None and f_max is None:
        raise ValueError("ask for a number of modes or a frequency limit")
    massless = massless_dofs(M)
    n_fin = n - int(massless.sum())
    want = min(n_modes or n_fin, n_fin)
    lam_max = (2 * np.pi * f_max) ** 2 if f_max is not None else np.inf
    extra = 2       # eigenpairs beyond the wanted ones, to place the Sturm shift past a repeated pair
    dense = n <= DENSE_LIMIT or (n_modes is not None and want + extra >= n_fin - 1)
    check_size(n, n_fin, n_modes, dense)
    if dense:
        lam, phi, n_fin, sigma, definite = _dense(K, M)
        want = min(want, n_fin)
        more = False
        solver = "dense"
        inertia_kind, band_order, column_order = "superlu", None, None
    else:
        from .factor import shift_invert_factor

        cache = {} if cache is None else cache
        if "factor" not in cache:
            cache["factor"] = shift_invert_factor(K, M, shift, factor_kind)
        factor, sigma = cache["factor"]
        definite = sigma == 0 and factor.definite       # K itself has a Cholesky factor
        inertia_kind, band_order = factor.kind, factor.order
        column_order = getattr(factor, "column_order", None)   # SuperLU's ordering, reused by the Sturm check
        k = min((want if n_modes else 20) + extra, n_fin - 2)
        while True:
            with _one_blas_thread(factor):
                lam, phi, basis = _lanczos(K, M, k, sigma, factor)
            order = np.argsort(lam)
            lam, phi, basis = lam[order], phi[:, order], basis[:, order]
            if n_modes is None and lam[-1 - extra] < lam_max and k < n_fin - 2:
                k = min(2 * k, n_fin - 2)
                check_size(n, n_fin, k - extra, False, f_max)
                continue
            break
        more = True
        solver = f"shift-invert, {factor.name}"
    finite = np.isfinite(lam)           # a Lanczos run asked past the rank of M returns no more
    lam, phi = lam[finite], phi[:, finite]
    basis = basis[:, finite] if solver != "dense" else None
    keep = _kept(lam, want, lam_max)
    count = shift_used = expected = None
    if sturm and keep:
        shift_used, expected = sturm_shift(lam, keep, more)
        if shift_used is not None:
            from .factor import negative_eigenvalues

            count = negative_eigenvalues((K - shift_used * M).tocsc(), inertia_kind, band_order, column_order)
        rounds = 0
        while basis is not None and count is not None and count > expected and rounds < DEFLATION_ROUNDS:
            # modes missed below the check shift (a repeated eigenvalue shows a single start
            # vector only one of its modes): run again with the found ones deflated, which
            # finds at least one more per round, and merge
            k = min(count - expected + extra, n_fin - 2 - len(lam))
            if k < 1:
                break
            with _one_blas_thread(factor):
                lam2, phi2, basis2 = _lanczos(K, M, k, sigma, factor, found=basis)
            ok = np.isfinite(lam2)
            lam, phi = np.r_[lam, lam2[ok]], np.c_[phi, phi2[:, ok]]
            basis = np.c_[basis, basis2[:, ok]]
            order = np.argsort(lam, kind="stable")
            lam, phi, basis = lam[order], phi[:, order], basis[:, order]
            expected = int(np.sum(lam < shift_used))
            rounds += 1
        keep = _kept(lam, want, lam_max)
    lam_all = lam
    lam, phi = lam[:keep], phi[:, :keep]
    # Zero modes. A positive definite K (shown by its factor: every supported structure) has
    # none, however stiff some member is, and the inverted solve gives every lambda > 0. Else
    # rigid-body modes come out at round-off, of either sign: about eps times their own
    # stiffness scale |phi|^T |K| |phi| (the rounding unit of phi^T K phi, which does not grow
    # with a stiff member that does not move in the mode), and, after a negative shift sigma, up
    # to ~20 LANCZOS_TOL |sigma| (the accuracy of mu = 1/(lambda - sigma) at lambda = 0; 17x
    # measured on a free pipe; eps |sigma| for the dense inverted pencil). Zero those (1e3
    # LANCZOS_TOL of the free pipe's |sigma| = 2.2e6 is 7e-3 Hz, its first elastic mode 41 Hz),
    # clip the negative rest
    if not definite and len(lam):
        tol = LANCZOS_TOL if basis is not None else np.finfo(float).eps
        own = own_scale(K, phi) / np.einsum("ij,ij->j", phi, M @ phi)
        noise = ZERO_ROUNDING * np.finfo(float).eps * own
        if sigma is not None:
            noise = np.maximum(noise, 1e3 * tol * abs(sigma))
        else:       # only the direct pencil was solved: its rounding unit is the largest eigenvalue
            noise = np.maximum(noise, 1e-12 * float(np.abs(lam_all).max(initial=0.0)))
        lam = np.where(np.abs(lam) <= noise, 0.0, lam)
    lam = np.maximum(lam, 0.0)
    # mass-normalise (eigh and eigsh already do; renormalise against round-off)
    mnorm = np.sqrt(np.einsum("ij,ij->j", phi, M @ phi))
    phi = phi / mnorm
    res, orth_m, orth_k = eigen_checks(K, M, lam, phi)
    omega = np.sqrt(lam)
    with np.errstate(divide="ignore"):
        period = np.where(omega > 0, 2 * np.pi / np.where(omega > 0, omega, 1), np.inf)
    return ModalResult(omega, omega / (2 * np.pi), period, phi, res, orth_m, orth_k, count,
                       shift_used, solver, expected, n_fin)


def participation(phi, M, R) -> Participation:
    """Participation of mass-normalised modes phi (n, k) for influence vectors R (n, d)."""
    MR = M @ R
    gamma = phi.T @ MR
    eff = gamma ** 2
    total = np.einsum("ij,ij->j", R, MR)
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(total > 0, eff / np.where(total > 0, total, 1), np.nan)
    return Participation(gamma, eff, total, frac, np.cumsum(frac, axis=0))
