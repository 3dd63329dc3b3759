"""Factorisations behind the eigen solver: orderings, banded Cholesky and its halves, pivot
checks, inertia counts; each against scipy/numpy dense linear algebra."""

import numpy as np
import pytest
import scipy.sparse as sp

from fem.analysis import factor as fa


def ladder(n_levels: int, width: int = 4, seed: int = 0) -> sp.csr_matrix:
    """SPD stiffness-like matrix of a slender lattice: `width` DOFs per level coupled within a
    level and to the next (bandwidth 2 * width - 1 in level order), seeded random weights."""
    rng = np.random.default_rng(seed)
    n = n_levels * width
    rows, cols = [], []
    for off in range(1, 2 * width):
        i = np.arange(n - off)
        rows.append(i)
        cols.append(i + off)
    r, c = np.concatenate(rows), np.concatenate(cols)
    w = rng.uniform(0.5, 1.5, len(r))
    L = sp.coo_matrix((-w, (r, c)), shape=(n, n))
    A = L + L.T
    d = -np.asarray(A.sum(axis=1)).ravel() + 1e-3          # diagonally dominant: SPD
    return (A + sp.diags(d)).tocsr()


def scrambled(A, seed=1):
    p = np.random.default_rng(seed).permutation(A.shape[0])
    return A[p][:, p].tocsr()


def test_ordering_recovers_the_band_of_a_scrambled_ladder():
    A = ladder(300)
    natural = fa.ordering(A)
    assert natural.bandwidth == 7 and np.array_equal(natural.perm, np.arange(A.shape[0]))
    rcm = fa.ordering(scrambled(A))          # numbering lost: reverse Cuthill-McKee finds a band again
    assert rcm.bandwidth <= 2 * 7 and not np.array_equal(rcm.perm, np.arange(A.shape[0]))


@pytest.mark.parametrize("kind", ["band", "superlu", "pardiso"])
def test_spd_factors_solve_like_dense(kind):
    if kind == "pardiso" and not fa.pardiso_available():
        pytest.skip("pypardiso (optional extra 'fast') not installed")
    A = scrambled(ladder(200))
    b = np.random.default_rng(2).normal(size=(A.shape[0], 3))
    f = fa.spd_factor(A, kind)
    assert f.kind == kind
    ref = np.linalg.solve(A.toarray(), b)
    np.testing.assert_allclose(f.solve(b), ref, rtol=1e-9, atol=1e-12 * np.abs(ref).max())
    np.testing.assert_allclose(f.solve(b[:, 0]), ref[:, 0], rtol=1e-9, atol=1e-12 * np.abs(ref).max())


def test_band_halves_compose_to_the_inverse():
    # lower_solve = L^-1 P b and upper_solve = P^T L^-T y with P A P^T = L L^T
    A = scrambled(ladder(150))
    f = fa.spd_factor(A, "band")
    b = np.random.default_rng(3).normal(size=A.shape[0])
    np.testing.assert_allclose(f.upper_solve(f.lower_solve(b)), np.linalg.solve(A.toarray(), b), rtol=1e-9)
    y = f.lower_solve(b)
    # ||L^-1 P b||^2 = b^T A^-1 b
    assert y @ y == pytest.approx(b @ np.linalg.solve(A.toarray(), b), rel=1e-10)
    Y = np.random.default_rng(4).normal(size=(A.shape[0], 2))
    np.testing.assert_allclose(f.upper_solve(Y)[:, 1], f.upper_solve(Y[:, 1]), rtol=1e-14)


@pytest.mark.parametrize("kind", ["band", "superlu"])
def test_badly_scaled_spd_is_accepted_and_singular_refused(kind):
    # symmetric scaling by 1e-3..1e3 keeps A SPD; pivots are judged against their own
    # column's diagonal, so the contrast is not mistaken for singularity
    A = ladder(100)
    s = sp.diags(10 ** np.random.default_rng(5).uniform(-3, 3, A.shape[0]))
    fa.spd_factor((s @ A @ s).tocsr(), kind)
    # a free-free ladder (rows summing to zero) is singular: refused, not factored
    S = (A - sp.diags(np.full(A.shape[0], 1e-3))).tocsr()
    with pytest.raises(fa.NotPositiveDefinite):
        fa.spd_factor(S, kind)


@pytest.mark.parametrize("kind", ["superlu", "band", "pardiso"])
def test_inertia_counts_match_dense_eigenvalues(kind):
    # Sylvester's law of inertia vs numpy eigvalsh, shifts placed between eigenvalues
    if kind == "pardiso" and not fa.pardiso_available():
        pytest.skip("pypardiso (optional extra 'fast') not installed")
    A = scrambled(ladder(120))
    ev = np.linalg.eigvalsh(A.toarray())
    order = fa.ordering(A)
    for j in (0, 5, 77, 300):
        shift = 0.5 * (ev[j] + ev[j + 1])
        B = (A - shift * sp.identity(A.shape[0])).tocsc()
        assert fa.negative_eigenvalues(B, kind, order) == j + 1


def test_choice_follows_the_model():
    slender = fa.ordering(ladder(400))
    assert fa.choose(1600, slender) == "band"
    wide = fa.Ordering(np.arange(10), bandwidth=fa.BAND_MAX_ALONE + 1, envelope=10 * (fa.COMPACT_PROFILE + 1))
    assert fa.choose(10, wide) == ("pardiso" if fa.pardiso_available() else "superlu")
    mid = fa.Ordering(np.arange(10), bandwidth=fa.BAND_MAX + 1, envelope=10 * (fa.COMPACT_PROFILE + 1))
    assert fa.choose(10, mid) == ("pardiso" if fa.pardiso_available() else "band")
    # a band that would not fit in memory is not chosen however narrow
    assert fa.choose(10**12, slender) != "band"
