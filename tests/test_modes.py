"""Modes: closed forms for shear frames and beams, sparse vs dense, self-checks."""

import numpy as np
import pytest
import scipy.sparse as sp

from fem.analysis.modes import participation, solve_modes


def shear_frame(m, k):
    """Stiffness and mass of a shear building, storeys bottom to top."""
    n = len(m)
    K = np.zeros((n, n))
    for i, ki in enumerate(k):
        K[i, i] += ki
        if i > 0:
            K[i - 1, i - 1] += ki
            K[i, i - 1] -= ki
            K[i - 1, i] -= ki
    return sp.csr_matrix(K), sp.csr_matrix(np.diag(m))


@pytest.mark.parametrize("n,omega,eff", [
    # reference-values.md section 7 (Chopra Ch. 10 examples; values C): omega in sqrt(k/m),
    # effective mass in % of total; printed to 6 and 5 digits
    (2, [0.618034, 1.618034], [94.721, 5.279]),
    (3, [0.445042, 1.246980, 1.801938], [91.408, 7.488, 1.104]),
], ids=["2-storey", "3-storey"])
def test_shear_frame_closed_form(n, omega, eff):
    K, M = shear_frame([1.0] * n, [1.0] * n)
    res = solve_modes(K, M, n_modes=n)
    np.testing.assert_allclose(res.omega, omega, rtol=2e-6)
    p = participation(res.phi, M, np.ones((n, 1)))
    np.testing.assert_allclose(100 * p.fraction[:, 0], eff, atol=6e-4)
    # with all modes the effective masses add up to the total mass (a physical fact)
    assert p.cumulative[-1, 0] == pytest.approx(1.0, abs=1e-12)
    assert res.orth_mass < 1e-12 and res.residual.max() < 1e-12
    assert res.sturm_count == n


def chain(n, k=1.0, m=1.0):
    """Fixed-free chain of n equal springs and masses."""
    main = np.full(n, 2 * k)
    main[-1] = k
    K = sp.diags([main, -k * np.ones(n - 1), -k * np.ones(n - 1)], [0, 1, -1], format="csr")
    return K, sp.identity(n, format="csr") * m


def test_sparse_path_matches_closed_form_chain():
    # fixed-free chain: omega_j = 2 sqrt(k/m) sin((2j-1) pi / (2(2n+1))) (standard result for the
    # lumped chain, derived from the difference equation; common practice, no source)
    n = 2000
    K, M = chain(n)
    res = solve_modes(K, M, n_modes=10)
    assert res.solver.startswith("shift-invert")
    j = np.arange(1, 11)
    np.testing.assert_allclose(res.omega, 2 * np.sin((2 * j - 1) * np.pi / (2 * (2 * n + 1))), rtol=1e-9)
    assert res.residual.max() < 1e-10 and res.orth_mass < 1e-10
    assert res.sturm_count == 10


def test_sparse_vs_dense_and_frequency_limit():
    K, M = chain(500)
    dense = solve_modes(K, M, n_modes=8)
    assert dense.solver == "dense"
    import fem.analysis.modes as mm
    old = mm.DENSE_LIMIT
    mm.DENSE_LIMIT = 10
    try:
        sparse = solve_modes(K, M, f_max=dense.freq[7] * 1.0000001)
    finally:
        mm.DENSE_LIMIT = old
    assert sparse.solver.startswith("shift-invert")
    assert len(sparse.freq) == 8
    np.testing.assert_allclose(sparse.omega, dense.omega, rtol=1e-10)


def test_free_free_rigid_mode():
    # a free-free chain has one rigid-body mode at zero frequency (physical fact); elastic
    # omega_j = 2 sin(j pi / (2n)) from the difference equation (common practice, no source)
    n = 50
    K = sp.diags([np.r_[1, 2 * np.ones(n - 2), 1], -np.ones(n - 1), -np.ones(n - 1)], [0, 1, -1])
    res = solve_modes(K.tocsr(), sp.identity(n, format="csr"), n_modes=3)
    assert res.omega[0] == 0.0 and res.period[0] == np.inf
    assert res.omega[1] == pytest.approx(2 * np.sin(np.pi / (2 * n)), rel=1e-10)


@pytest.mark.parametrize("kind", ["superlu", "pardiso"])
def test_factorisations_agree(kind):
    # both back ends give the same modes on the same pencil (PARDISO only where installed)
    from fem.analysis.factor import pardiso_available
    if kind == "pardiso" and not pardiso_available():
        pytest.skip("pypardiso (optional extra 'fast') not installed")
    K, M = chain(2000)
    res = solve_modes(K, M, n_modes=6, factor_kind=kind)
    ref = solve_modes(K, M, n_modes=6, factor_kind="superlu")
    np.testing.assert_allclose(res.omega, ref.omega, rtol=1e-10)
    assert ("PARDISO" in res.solver) == (kind == "pardiso")
