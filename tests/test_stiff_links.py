"""Short stiff members and stiffness contrasts: real modes are never zeroed, the self-checks
pass on a correct solution and fail on a spoiled one, and a contrast is not called a mechanism.

References: scipy.linalg.eigh on the dense matrices in its inverted form eigh(M, K) (lowest
modes to about eps relative to themselves) and, where its error bound is small, its direct form
eigh(K, M) (every eigenvalue to about eps times the largest: Golub and Van Loan, Matrix
Computations, 4th ed., sec. 8.7); mpmath at 30 digits on the same double-precision matrices
for the shortest link; closed forms by virtual work for the two-member column (common practice,
no source).

Tolerances. Assembling a member of stiffness k next to one of stiffness k' << k rounds k' by
about eps k where they meet, so a mode is only defined by the stored matrices to about eps
times its own stiffness scale |phi|^T |K| |phi| (the rounding unit of phi^T K phi: Higham,
Accuracy and Stability of Numerical Algorithms, 2nd ed., sec. 3.1). Every eigenvalue check is
therefore |lambda - lambda_ref| <= OWN * eps * |phi|^T |K| |phi| + 1e-12 lambda_ref: OWN = 10
is our choice (measured 0.03-3.3 against mpmath for links of 0.1 mm to 100 mm).
"""

import numpy as np
import pytest
import scipy.linalg as sla

from fem import solve
from fem.analysis import modes as modes_mod
from fem.analysis.modes import eigen_checks, own_scale, solve_modes
from fem.analysis.static import factorise, solve_static
from fem.assembly import assemble
from fem.checks import ORTHO_TOL, RESIDUAL_TOL
from fem.deck.reader import read_text
from fem.errors import MechanismError, ModelError

EPS = np.finfo(float).eps
OWN = 10
LINKS = [0.1, 0.2, 1.0, 5.0, 20.0, 100.0]      # mm

# an invented three-leg lattice mast, 9 m, three panels, with a short link member standing on
# one leg top (a bracket stub modelled as a member)
MAST = """
material S355 {{ E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section LEG = pipe(od = 88.9 mm, wall = 5.49 mm)
section DIA = angle(b = 50 mm, h = 50 mm, t = 5 mm)
for k in 0..{panels} {{ for a in 0..2 {{ node P[k,a] = (0.8 m*cos(a*120 deg), 0.8 m*sin(a*120 deg), k*3 m) }} }}
for k in 0..{panels}-1 {{
  for a in 0..2 {{ member L[k,a] : P[k,a] -> P[k+1,a] beam LEG S355 }}
  member D[k,0] : P[k,0] -> P[k+1,1] truss DIA S355
  member D[k,1] : P[k,1] -> P[k+1,2] truss DIA S355
  member D[k,2] : P[k,2] -> P[k+1,0] truss DIA S355
}}
for k in 1..{panels} {{
  member H[k,0] : P[k,0] -> P[k,1] truss DIA S355
  member H[k,1] : P[k,1] -> P[k,2] truss DIA S355
  member H[k,2] : P[k,2] -> P[k,0] truss DIA S355
}}
{support}
mass P{panels}_* = 50 kg
node TIP = (0.8 m, 0, {panels}*3 m + {link} mm)
member LINK : P{panels}_0 -> TIP beam LEG S355
"""


def mast(link, panels=3, support="support P0_* fixed"):
    m = read_text(MAST.format(link=link, panels=panels, support=support))
    a = assemble(m)
    return a.K[a.free][:, a.free].tocsr(), a.M[a.free][:, a.free].tocsr()


def inverted_reference(K, M, k):
    """Lowest k eigenpairs by scipy's eigh(M, K): mu = 1 / lambda, largest first."""
    mu, y = sla.eigh(M.toarray(), K.toarray())
    lam, y = 1 / mu[::-1][:k], y[:, ::-1][:, :k]
    return lam, y / np.sqrt(np.einsum("ij,ij->j", y, M @ y))


def assert_eigenvalues(lam, ref, K, phi_ref):
    tol = OWN * EPS * own_scale(K, phi_ref) + 1e-12 * ref
    assert np.all(np.abs(lam - ref) <= tol), (lam, ref, np.abs(lam - ref) / tol)


@pytest.mark.parametrize("link", LINKS, ids=[f"{x:g}mm" for x in LINKS])
def test_link_modes_match_dense_eigh(link):
    K, M = mast(link)
    r = solve_modes(K, M, n_modes=6)
    assert r.solver == "dense"
    ref, phi_ref = inverted_reference(K, M, 6)
    assert np.all(r.freq > 5.0)                 # none zeroed: the lowest is 8.4 Hz at every link
    assert_eigenvalues(r.omega ** 2, ref, K, phi_ref)
    # the direct form where its own error bound (eps times the largest eigenvalue) is below 1e-6
    # of the lowest mode: the 20 and 100 mm links
    direct = sla.eigh(K.toarray(), M.toarray(), eigvals_only=True)
    if 10 * EPS * direct[-1] < 1e-6 * direct[0]:
        assert link >= 20
        np.testing.assert_allclose(r.omega ** 2, direct[:6], rtol=1e-6)
    # a correct solution passes its own self-checks
    assert r.residual.max() < RESIDUAL_TOL and max(r.orth_mass, r.orth_stiff) < ORTHO_TOL
    assert r.sturm_count == r.sturm_expected


@pytest.mark.parametrize("link", [0.1, 1.0, 100.0], ids=["0.1mm", "1mm", "100mm"])
def test_link_modes_on_the_sparse_path(link, monkeypatch):
    # the same model through shift-invert Lanczos (the dense limit lowered for the test): at
    # 0.1 mm the factor of K is refused (a pivot of 1e-14 of its diagonal) and the run goes on
    # with a negative shift, where zero modes are decided by each mode's own scale
    monkeypatch.setattr(modes_mod, "DENSE_LIMIT", 0)
    K, M = mast(link)
    r = solve_modes(K, M, n_modes=5)
    assert r.solver.startswith("shift-invert")
    ref, phi_ref = inverted_reference(K, M, 5)
    assert np.all(r.freq > 5.0)
    # Lanczos stops at a relative Ritz tolerance of LANCZOS_TOL on mu = 1/(lambda - sigma)
    tol = OWN * EPS * own_scale(K, phi_ref) + 1e3 * modes_mod.LANCZOS_TOL * ref
    assert np.all(np.abs(r.omega ** 2 - ref) <= tol)
    assert r.residual.max() < RESIDUAL_TOL and max(r.orth_mass, r.orth_stiff) < ORTHO_TOL


def test_shortest_link_against_extended_precision():
    # the exact eigenvalues of the stored double-precision matrices, by mpmath at 30 digits
    # (Cholesky of M, then mpmath.eigsy): our lowest modes are within their own rounding bound
    mp = pytest.importorskip("mpmath")
    K, M = mast(0.1, panels=2)
    r = solve_modes(K, M, n_modes=4)
    mp.mp.dps = 30
    Li = mp.inverse(mp.cholesky(mp.matrix(M.toarray().tolist())))
    exact = sorted(float(x) for x in mp.eigsy(Li * mp.matrix(K.toarray().tolist()) * Li.T, eigvals_only=True))
    assert_eigenvalues(r.omega ** 2, np.array(exact[:4]), K, r.phi)
    assert np.all(r.freq > 5.0)


@pytest.mark.parametrize("link,mix", [(5.0, 1e-5), (100.0, 1e-7)], ids=["5mm", "100mm"])
def test_stiffness_orthogonality_fails_on_a_spoiled_shape(link, mix):
    # the scaled measure is not blind: one shape mixed with another couples them by about
    # mix w3 / w1 = 1.1 mix, far above ORTHO_TOL; the rounding bound it allows for is about
    # 4e-7 of the modes' own stiffness at 5 mm (measured), far less at 100 mm
    K, M = mast(link)
    r = solve_modes(K, M, n_modes=6)
    phi = r.phi.copy()
    phi[:, 0] += mix * phi[:, 2]
    phi[:, 0] /= np.sqrt(phi[:, 0] @ (M @ phi[:, 0]))
    _, _, orth_k = eigen_checks(K, M, r.omega ** 2, phi)
    assert orth_k > 0.5 * mix and mix >= 10 * ORTHO_TOL


def test_residual_fails_on_a_zeroed_mode():
    # a mode given a zero eigenvalue is a backward error of |w^2 M phi| against |K| |phi| of the
    # mode's own motion: 4e-5 with a 100 mm link, far above RESIDUAL_TOL. (With a 5 mm link the
    # link's own stiffness brings it to 6e-9: the residual alone cannot tell there, which is why
    # the solver must never zero a mode of a positive definite K in the first place.)
    K, M = mast(100.0)
    r = solve_modes(K, M, n_modes=6)
    res, _, _ = eigen_checks(K, M, np.r_[0.0, r.omega[1:] ** 2], r.phi)
    assert res[0] > 100 * RESIDUAL_TOL and res[1:].max() < 1e-3 * RESIDUAL_TOL


def test_free_structure_keeps_its_zero_modes_with_a_short_link():
    # a free mast (no support) with a 0.2 mm link. Its zero modes are the null space of the
    # stiffness with every member at its own scale (numpy's eigvalsh, the largest eigenvalue
    # 1, the smallest nonzero one 1e-3 here): six rigid-body modes and three more. Those come
    # out at exactly zero, the elastic ones as the dense reference gives them (scipy's eigh
    # of the inverted pencil with the same small negative shift the solver uses)
    from fem.analysis.static import normalised_stiffness

    m = read_text(MAST.format(link=0.2, panels=3, support=""))
    asm = assemble(m)
    K, M = asm.K[asm.free][:, asm.free].tocsr(), asm.M[asm.free][:, asm.free].tocsr()
    Kn = normalised_stiffness(m, asm).toarray()
    s = 1 / np.sqrt(np.diag(Kn))
    ev = np.linalg.eigvalsh(Kn * s[:, None] * s[None, :])
    zero = int(np.sum(ev < 1e-9 * ev.max()))
    assert zero >= 6 and ev[zero] > 1e-6
    r = solve_modes(K, M, n_modes=zero + 4)
    assert np.all(r.freq[:zero] == 0.0) and r.freq[zero] > 1.0
    d = K.diagonal() / M.diagonal()
    sigma = -1e-6 * np.median(d)
    mu, y = sla.eigh(M.toarray(), (K - sigma * M).toarray())
    lam, y = (sigma + 1 / mu[::-1])[zero:zero + 4], y[:, ::-1][:, zero:zero + 4]
    assert_eigenvalues(r.omega[zero:] ** 2, lam, K, y / np.sqrt(np.einsum("ij,ij->j", y, M @ y)))
    assert np.isfinite(r.orth_stiff) and r.orth_stiff < ORTHO_TOL


def test_all_zero_modes_give_a_finite_orthogonality():
    # six rigid-body modes only: the old measure divided by 1e-300 and printed 3e+299
    K, M = mast(5.0, support="")
    r = solve_modes(K, M, n_modes=6)
    assert np.all(r.freq == 0.0)
    assert r.orth_stiff < ORTHO_TOL and r.orth_mass < ORTHO_TOL
    # two of them given the same elastic component are coupled through it (1e-6 of its w^2):
    # seen against the largest w^2 of a set that holds elastic modes, and finite in a set of
    # zero modes only, where the rounding scale is the only one (the results file refuses
    # non-finite numbers)
    r12 = solve_modes(K, M, n_modes=12)
    lam = r12.omega ** 2
    phi = r12.phi.copy()
    phi[:, :2] += 1e-3 * phi[:, [-1]]
    _, _, orth_k = eigen_checks(K, M, lam, phi)
    assert orth_k > 0.5e-6 > 10 * ORTHO_TOL             # 1e-6 lam[-1] over lam[-1]
    _, _, orth_k = eigen_checks(K, M, np.zeros(6), phi[:, :6])
    assert np.isfinite(orth_k) and orth_k > 0


COLUMN = """
material STIFF { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
material SOFT { E = 0.21 Pa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (0, 0, 6 m)
member M1 : A -> B beam P LOWER
member M2 : B -> C beam P UPPER
support A fixed
case PUSH static { force C = (1 N, 0, -1 N) }
"""


@pytest.mark.parametrize("lower,upper", [("SOFT", "STIFF"), ("STIFF", "SOFT")],
                         ids=["soft-at-support", "stiff-at-support"])
def test_stiffness_contrast_is_not_a_mechanism(lower, upper):
    m = read_text(COLUMN.replace("LOWER", lower).replace("UPPER", upper))
    asm = assemble(m)
    lu = factorise(m, asm)                       # no MechanismError either way round
    r = solve_static(m, asm, m.cases[0], lu)
    E1, E2 = (0.21, 210e9) if lower == "SOFT" else (210e9, 0.21)
    A, I, L = m.A[0], m.Iy[0], 3.0
    # tip of a two-segment cantilever (virtual work; common practice, no source): axial
    # P L1/(E1 A) + P L2/(E2 A); lateral P ((L1 + L2)^3 - L2^3) / (3 E1 I) + P L2^3 / (3 E2 I)
    uz = -(L / (E1 * A) + L / (E2 * A))
    ux = ((2 * L) ** 3 - L ** 3) / (3 * E1 * I) + L ** 3 / (3 * E2 * I)
    # soft at the support: the soft member's stiffness is rounded where it meets the stiff one
    # (eps times the contrast, 2e-4; 20x that allowed, our choice); the other way round nothing
    # of the soft member is lost (1e-12, a few eps times the elements' own conditioning)
    rtol = 20 * EPS * 1e12 if lower == "SOFT" else 1e-12
    np.testing.assert_allclose([r.u[2, 0], r.u[2, 2]], [ux, uz], rtol=rtol)
    if lower == "SOFT":
        # the run refuses it on its condition estimate, and says it is a contrast, not a mechanism
        with pytest.raises(ModelError, match=r"not a mechanism.*span about 1e\+12") as info:
            solve(m)
        assert not isinstance(info.value, MechanismError)
    else:
        statics = solve(m).statics
        assert statics[0].equilibrium < 1e-12


def test_a_mechanism_next_to_a_short_link_is_still_named():
    # a cantilever hinged at both ends of one member is a mechanism even with a 0.1 mm link elsewhere
    m = read_text("""
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (2 m, 0, 0.1 mm)
node D = (4 m, 0, 0)
member M1 : A -> B beam P S
member LINK : B -> C beam P S
member M2 : B -> D beam P S release i (ry, rz) release j (ry, rz)
support A fixed
case ALL static { force D = (1 kN, 1 kN, 1 kN) }
""")
    with pytest.raises(MechanismError) as info:
        solve_static(m, assemble(m), m.cases[0])
    assert ("D", "uz") in info.value.free or ("D", "uy") in info.value.free
