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


@pytest.mark.parametrize("kind", ["band", "superlu", "pardiso"])
def test_factorisations_agree(kind):
    # every back end gives the closed-form modes of the chain (PARDISO only where installed);
    # the banded one goes through the standard-form Lanczos on the Cholesky halves
    from fem.analysis.factor import pardiso_available
    if kind == "pardiso" and not pardiso_available():
        pytest.skip("pypardiso (optional extra 'fast') not installed")
    n = 2000
    K, M = chain(n)
    res = solve_modes(K, M, n_modes=6, factor_kind=kind)
    j = np.arange(1, 7)
    np.testing.assert_allclose(res.omega, 2 * np.sin((2 * j - 1) * np.pi / (2 * (2 * n + 1))), rtol=1e-9)
    assert res.sturm_count == res.sturm_expected == 6
    assert {"band": "banded", "superlu": "SuperLU", "pardiso": "PARDISO"}[kind] in res.solver


def chain_with_massless_joints(n, k=1.0, m=1.0):
    """Fixed-free chain of 2n springs k whose odd joints carry no mass: two springs in series
    between masses act as one spring k/2."""
    K, _ = chain(2 * n, k)
    mass = np.tile([0.0, m], n)
    return K, sp.diags(mass, format="csr")


@pytest.mark.parametrize("n", [40, 2000], ids=["dense", "shift-invert"])
def test_massless_dofs_are_condensed(n):
    # springs in series: k_eff = k/2, so omega_j = 2 sqrt(k_eff/m) sin((2j-1) pi / (2(2n+1)))
    # for the n-mass chain (difference equation; common practice, no source). Lumped beam mass
    # and massless members give such DOFs; M is singular there and dense eigh would refuse it.
    K, M = chain_with_massless_joints(n)
    res = solve_modes(K, M, n_modes=8)
    assert res.solver.startswith("dense" if n == 40 else "shift-invert")
    j = np.arange(1, 9)
    np.testing.assert_allclose(res.omega, 2 * np.sqrt(0.5) * np.sin((2 * j - 1) * np.pi / (2 * (2 * n + 1))),
                               rtol=1e-9)
    assert res.residual.max() < 1e-12 and res.orth_mass < 1e-10
    assert res.sturm_count == res.sturm_expected == 8


def test_all_finite_modes_with_massless_dofs():
    # asking for more modes than there are masses gives the n finite ones; with all of them the
    # effective mass equals the total mass (physical fact)
    K, M = chain_with_massless_joints(30)
    res = solve_modes(K, M, n_modes=100)
    assert len(res.omega) == 30
    p = participation(res.phi, M, np.tile([1.0, 1.0], 30)[:, None])
    assert p.cumulative[-1, 0] == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("n", [60, 6000], ids=["dense", "shift-invert"])
def test_sturm_count_with_repeated_modes(n):
    # two identical uncoupled chains: every frequency is double (as the sway pairs of a
    # symmetric tower). Asking for 5 modes cuts the third pair; the check shift goes past the
    # partner, so the count is 6 below it, 6 computed, none missed.
    K1, M1 = chain(n // 2)
    res = solve_modes(sp.block_diag([K1, K1], format="csr"), sp.block_diag([M1, M1], format="csr"), n_modes=5)
    j = np.array([1, 1, 2, 2, 3])
    np.testing.assert_allclose(res.omega, 2 * np.sin((2 * j - 1) * np.pi / (2 * (n + 1))), rtol=1e-9)
    assert res.sturm_count == res.sturm_expected == 6


def test_sturm_count_sees_a_missing_mode():
    # were the eigen solver to skip a mode, the inertia of K - sigma M still counts it
    from fem.analysis.factor import negative_eigenvalues
    from fem.analysis.modes import sturm_shift

    K, M = chain(5000)
    exact = (2 * np.sin((2 * np.arange(1, 9) - 1) * np.pi / (2 * (2 * 5000 + 1)))) ** 2
    skipped = np.delete(exact, 3)
    shift, expected = sturm_shift(skipped, 6, more=True)
    assert expected == 6 and negative_eigenvalues(K - shift * M) == 7


def test_negative_eigenvalues_match_dense_inertia():
    # Sylvester's law of inertia through the sparse LDL^T vs numpy's eigvalsh on random
    # symmetric indefinite matrices (seeded)
    from fem.analysis.factor import negative_eigenvalues

    rng = np.random.default_rng(7)
    for trial in range(5):
        B = sp.random(200, 200, density=0.03, random_state=trial)
        A = (B + B.T + sp.diags(rng.normal(size=200))).tocsc()
        assert negative_eigenvalues(A) == int(np.sum(np.linalg.eigvalsh(A.toarray()) < 0))


def test_sturm_shift_placement():
    # midway to the next distinct eigenvalue; past a repeated partner; below the last cluster
    # when it runs past the computed eigenvalues; after all of them when none lie beyond
    from fem.analysis.modes import sturm_shift

    lam = np.array([1.0, 2.0, 2.0, 3.0])
    assert sturm_shift(lam, 1, more=True) == (1.5, 1)
    assert sturm_shift(lam, 2, more=True) == (2.5, 3)          # mode 2's partner counted
    assert sturm_shift(np.array([1.0, 2.0, 2.0, 2.0]), 2, more=True) == (1.5, 1)
    assert sturm_shift(np.array([2.0, 2.0]), 1, more=True) == (None, None)
    shift, expected = sturm_shift(lam, 4, more=False)
    assert 3.0 < shift < 3.0 + 1e-5 and expected == 4


def test_static_solves_share_the_eigen_factor_family():
    # a positive definite K is factored like the eigen solver's (banded Cholesky for a
    # chain); the displacement is the closed-form one of springs in series (common practice)
    from fem.analysis.static import factorise
    from fem.assembly import assemble
    from fem.deck.reader import read_text

    m = read_text("""
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..10 { node N[i] = (i*1 m, 0, 0) }
for i in 0..9 { member M[i] : N[i] -> N[i+1] truss P S }
support N0 pinned
support N* (uy, uz)
""")
    lu = factorise(m, assemble(m))
    assert "banded" in lu.name
    asm = assemble(m)
    f = np.zeros(len(asm.free))
    f[-1] = 1e3                                     # 1 kN along the chain at its free end
    u = lu.solve(f)
    assert u[-1] == pytest.approx(1e3 * 10.0 / (200e9 * 3.600457e-3), rel=1e-6)


def test_residual_and_orthogonality_measures_see_a_bad_eigenpair():
    # the self-check measures of ModalResult, recomputed from their definitions on eigenpairs
    # spoiled on purpose (a 1e-3 error in one shape, 1e-4 in one eigenvalue), so that the
    # figures are far above round-off: backward error ||K x - l M x|| / (|| |K| |x| || + |l| || |M| |x| ||)
    # in the scale of the pair's own motion (Higham, Accuracy and Stability of Numerical
    # Algorithms, 2nd ed., sec. 7.1 and 7.2 for normwise and componentwise backward errors;
    # common practice for eigenpairs); K-orthogonality: |x_i^T K x_j| beyond the rounding bound
    # gamma |x_i|^T |K| |x_j| of its computation (Higham, sec. 3.1), over sqrt(l_i l_j)
    from fem.analysis.modes import eigen_checks

    K, M = chain(40)
    Kd, Md = K.toarray(), M.toarray()
    lam, phi = np.linalg.eigh(Kd)                        # M = I here
    lam, phi = lam[:5].copy(), phi[:, :5].copy()
    rng = np.random.default_rng(0)
    phi[:, 1] += 1e-3 * rng.standard_normal(40)
    lam[3] *= 1 + 1e-4
    res, orth_m, orth_k = eigen_checks(K, M, lam, phi)
    a = np.abs(phi)
    mine = (np.linalg.norm(Kd @ phi - Md @ phi * lam, axis=0)
            / (np.linalg.norm(np.abs(Kd) @ a, axis=0) + np.abs(lam) * np.linalg.norm(np.abs(Md) @ a, axis=0)))
    np.testing.assert_allclose(res, mine, rtol=1e-10)
    assert res[1] > 1e-5 and res[3] > 1e-6 and res[[0, 2, 4]].max() < 1e-14
    G = phi.T @ Md @ phi
    assert orth_m == pytest.approx(np.abs(G - np.eye(5)).max(), rel=1e-12) and orth_m > 1e-4
    H = phi.T @ Kd @ phi
    m = 3 + 40                                   # longest row of K plus the length of the sum
    gamma = m * 2.0 ** -53 / (1 - m * 2.0 ** -53)
    excess = np.maximum(np.abs(H) - gamma * a.T @ np.abs(Kd) @ a, 0)
    np.fill_diagonal(excess, 0)
    assert orth_k == pytest.approx((excess / np.sqrt(np.outer(lam, lam))).max(), rel=1e-12) and orth_k > 1e-4
