"""The shear-flexible frame member's consistent mass (`frame_mass_timoshenko`) against a symbolic
derivation made here, independently of the implementation.

The two-node Timoshenko member: deflection v(x) and section rotation psi(x) that solve the
homogeneous static equations (Timoshenko 1921; reference-values.md section 3a with the inertia
terms dropped)

    (kGA (v' - psi))' = 0,        EI psi'' + kGA (v' - psi) = 0,

for given end values (v_i, psi_i, v_j, psi_j). sympy finds them from a general polynomial of
degree 5 in x for each field (the equations force the degrees down), then integrates

    M = int_0^L rho A N_v^T N_v + rho I N_psi^T N_psi dx,
    K = int_0^L EI N_psi'^T N_psi' + kGA (N_v' - N_psi)^T (N_v' - N_psi) dx,

with phi = 12 EI / (kGA L^2). psi is +dv/dx in the x-y plane (rz); in the x-z plane ry = -dw/dx,
so that plane's block is D M D with D = diag(1, -1, 1, -1).
"""

import numpy as np
import pytest
import sympy as sy

from fem.elements import frame_mass, frame_mass_timoshenko, frame_stiffness

E, NU, RHO = 200e9, 0.3, 7850.0
G = E / (2 * (1 + NU))
# a deep rectangle 200 x 600 mm, so Iy and Iz differ and a swapped plane shows
A, IY, IZ = 0.12, 0.2 * 0.6**3 / 12, 0.6 * 0.2**3 / 12
J = 1e-3
CARRIED = 35.0
# the two bending planes: (translation DOF, rotation DOF, sign of the rotation vs dv/dx,
# second moment, keyword of the shear area)
PLANES = {"x-y": (1, 5, 1.0, IZ, "Avy"), "x-z": (2, 4, -1.0, IY, "Avz")}
# round-off: entries are sums of a few terms of one sign pattern, evaluated in double precision
RTOL = 1e-13


@pytest.fixture(scope="module")
def shape_functions():
    """N_v, N_psi: four polynomials in x each (coefficients rational in L, phi), from the
    homogeneous static equations."""
    x, L, phi, EI = sy.symbols("x L phi EI", positive=True)
    kGA = 12 * EI / (phi * L**2)
    deg = 5
    a, b = sy.symbols(f"a0:{deg + 1}"), sy.symbols(f"b0:{deg + 1}")
    v = sum(c * x**i for i, c in enumerate(a))
    psi = sum(c * x**i for i, c in enumerate(b))
    gamma = sy.diff(v, x) - psi
    # both equations hold for every x: all their coefficients vanish (times phi, to clear 1/phi)
    equations = (sy.Poly(sy.expand(sy.diff(kGA * gamma, x) * phi), x).all_coeffs()
                 + sy.Poly(sy.expand((EI * sy.diff(psi, x, 2) + kGA * gamma) * phi), x).all_coeffs())
    q = sy.symbols("q0:4")
    ends = [v.subs(x, 0) - q[0], psi.subs(x, 0) - q[1], v.subs(x, L) - q[2], psi.subs(x, L) - q[3]]
    sol = sy.solve(equations + ends, a + b, dict=True)
    assert len(sol) == 1          # the four end values fix the homogeneous solution uniquely
    v, psi = v.subs(sol[0]), psi.subs(sol[0])
    Nv = [sy.Poly(sy.diff(v, qi), x) for qi in q]
    Npsi = [sy.Poly(sy.diff(psi, qi), x) for qi in q]
    assert all(p.free_symbols <= {x, L, phi} for p in Nv + Npsi)
    # the interpolation is the interdependent one: deflection cubic, rotation quadratic
    assert max(p.degree() for p in Nv) == 3 and max(p.degree() for p in Npsi) == 2
    return L, phi, Nv, Npsi


def _gram(F, H, L):
    """4x4 sympy matrix of int_0^L F_i H_j dx for polynomials F, H in x."""
    out = sy.zeros(4, 4)
    for i in range(4):
        for j in range(4):
            P = (F[i] * H[j]).integrate()
            out[i, j] = sy.factor(P.eval(L) - P.eval(0))
    return out


@pytest.fixture(scope="module")
def plane_matrices(shape_functions):
    """Per unit property, as functions of (L, phi) returning 4x4 arrays: the mass from rho A = 1
    (MA) and from rho I = 1 (MI), and the stiffness for EI = 1 (K)."""
    L, phi, Nv, Npsi = shape_functions
    MA = _gram(Nv, Nv, L)
    MI = _gram(Npsi, Npsi, L)
    gam = [p.diff() - r for p, r in zip(Nv, Npsi)]
    dpsi = [p.diff() for p in Npsi]
    K = (_gram(dpsi, dpsi, L) + 12 / (phi * L**2) * _gram(gam, gam, L)).applyfunc(sy.factor)
    return {name: sy.lambdify((L, phi), mat, "numpy") for name, mat in (("MA", MA), ("MI", MI), ("K", K))}


def _shear_area(I, L, phi):
    """The shear area that makes 12 E I / (G As L^2) equal phi (None for phi = 0)."""
    return None if phi == 0 else 12 * E * I / (G * phi * L**2)


def _expected_mass(plane_matrices, L, phi_y, phi_z):
    """12 x 12 consistent mass from the symbolic shape functions: the two bending planes, and
    linear interpolation for axial (rho A + carried_mass) and torsion (rho (Iy + Iz))."""
    m = np.zeros((12, 12))
    lin = np.array([[1 / 3, 1 / 6], [1 / 6, 1 / 3]]) * L
    m[np.ix_([0, 6], [0, 6])] = (RHO * A + CARRIED) * lin
    m[np.ix_([3, 9], [3, 9])] = RHO * (IY + IZ) * lin
    for (v, r, sgn, I, _), phi in zip(PLANES.values(), (phi_y, phi_z)):
        D = np.diag([1, sgn, 1, sgn])
        block = (RHO * A + CARRIED) * np.asarray(plane_matrices["MA"](L, phi), dtype=float)
        block += RHO * I * np.asarray(plane_matrices["MI"](L, phi), dtype=float)
        m[np.ix_([v, r, v + 6, r + 6], [v, r, v + 6, r + 6])] = D @ block @ D
    return m


def _mass(L, phi_y, phi_z):
    return frame_mass_timoshenko(L, RHO, A, IY, IZ, J, E, G, Avy=_shear_area(IZ, L, phi_y),
                                 Avz=_shear_area(IY, L, phi_z), carried_mass=CARRIED)[0]


@pytest.mark.parametrize("L, phi_y, phi_z", [(1.5, 0.0, 0.0), (2.0, 0.05, 0.3), (0.8, 0.7, 2.5),
                                             (3.0, 4.0, 1e-3)],
                         ids=["rigid-in-shear", "slender", "deep", "very-deep"])
def test_mass_equals_symbolic_derivation(plane_matrices, L, phi_y, phi_z):
    # phi = 0 is the limit kGA -> infinity, taken by sympy on the closed-form entries
    expected = _expected_mass(plane_matrices, L, phi_y, phi_z)
    np.testing.assert_allclose(_mass(L, phi_y, phi_z), expected, rtol=0,
                               atol=RTOL * np.abs(expected).max())


@pytest.mark.parametrize("plane", PLANES, ids=list(PLANES))
@pytest.mark.parametrize("phi", [0.05, 0.7, 2.5])
def test_stiffness_comes_from_the_same_shape_functions(plane_matrices, plane, phi):
    # the mass belongs to the element whose stiffness frame_stiffness builds: the energy of the
    # same interpolation gives that stiffness, sign convention of each plane included
    L = 1.7
    v, r, sgn, I, key = PLANES[plane]
    k = frame_stiffness(L, E, G, A, IY, IZ, J, **{key: _shear_area(I, L, phi)})[0]
    D = np.diag([1, sgn, 1, sgn])
    expected = E * I * D @ np.asarray(plane_matrices["K"](L, phi), dtype=float) @ D
    dofs = [v, r, v + 6, r + 6]
    np.testing.assert_allclose(k[np.ix_(dofs, dofs)], expected, rtol=0, atol=1e-12 * np.abs(expected).max())


def test_zero_phi_is_euler_bernoulli_plus_rotary_inertia():
    # phi -> 0: the Hermite consistent mass (frame_mass) plus the classical rotary-inertia matrix
    # rho I/(30 L) [[36, 3L, -36, 3L], [3L, 4L^2, -3L, -L^2], [-36, -3L, 36, -3L],
    # [3L, -L^2, -3L, 4L^2]] (Przemieniecki, Theory of Matrix Structural Analysis, 1968, ch. 11;
    # from memory, re-derived by the symbolic test above at phi = 0)
    L = 2.4
    rot = np.array([[36, 3 * L, -36, 3 * L], [3 * L, 4 * L**2, -3 * L, -(L**2)],
                    [-36, -3 * L, 36, -3 * L], [3 * L, -(L**2), -3 * L, 4 * L**2]]) / (30 * L)
    expected = frame_mass(L, RHO, A, IY, IZ, J, carried_mass=CARRIED)[0]
    for v, r, sgn, I, _ in PLANES.values():
        D = np.diag([1, sgn, 1, sgn])
        dofs = [v, r, v + 6, r + 6]
        expected[np.ix_(dofs, dofs)] += RHO * I * D @ rot @ D
    got = frame_mass_timoshenko(L, RHO, A, IY, IZ, J, E, G, carried_mass=CARRIED)[0]
    np.testing.assert_allclose(got, expected, rtol=0, atol=RTOL * np.abs(expected).max())
    # a vanishing shear flexibility tends to the same matrix (no jump at As = 0)
    tiny = _mass(L, 1e-9, 1e-9)
    np.testing.assert_allclose(tiny, expected, rtol=0, atol=1e-8 * np.abs(expected).max())


@pytest.mark.parametrize("phi_y, phi_z", [(0.0, 0.0), (0.3, 1.2), (5.0, 0.02)])
def test_rigid_motions_carry_the_physical_inertia(phi_y, phi_z):
    # physical facts, with no element theory: a rigid translation moves the mass (rho A + carried_mass) L;
    # a rigid rotation theta about local z (or y) through end i moves every slice by theta x and
    # turns it by theta, so 2 T / theta^2 = (rho A + carried_mass) L^3 / 3 + rho Iz L (or rho Iy L).
    # The interpolation holds rigid motions exactly (they solve the static equations), so the
    # element reproduces these to round-off whatever phi.
    L = 2.0
    m = _mass(L, phi_y, phi_z)
    mL = (RHO * A + CARRIED) * L
    for t in np.eye(3):
        u = np.r_[t, 0, 0, 0, t, 0, 0, 0]
        assert u @ m @ u == pytest.approx(mL, rel=1e-13)
    about_z = np.r_[0, 0, 0, 0, 0, 1, 0, L, 0, 0, 0, 1]      # v = x, rz = 1
    about_y = np.r_[0, 0, 0, 0, 1, 0, 0, 0, -L, 0, 1, 0]     # w = -x, ry = 1
    assert about_z @ m @ about_z == pytest.approx(mL * L**2 / 3 + RHO * IZ * L, rel=1e-13)
    assert about_y @ m @ about_y == pytest.approx(mL * L**2 / 3 + RHO * IY * L, rel=1e-13)
    # symmetric and positive definite (kinetic energy of any motion is positive)
    assert np.array_equal(m, m.T)
    assert np.linalg.eigvalsh(m).min() > 0


def test_batched_over_members_equals_one_by_one():
    Ls = np.array([0.5, 1.5, 4.0])
    Iys, carried_mass = np.array([IY, 2 * IY, 0.5 * IY]), np.array([0.0, CARRIED, 3.0])
    Avy, Avz = np.array([0.0, 0.08, 0.1]), np.array([0.1, 0.0, 0.05])
    mb = frame_mass_timoshenko(Ls, RHO, A, Iys, IZ, J, E, G, Avy=Avy, Avz=Avz, carried_mass=carried_mass)
    assert mb.shape == (3, 12, 12)
    for e in range(3):
        one = frame_mass_timoshenko(Ls[e], RHO, A, Iys[e], IZ, J, E, G, Avy=Avy[e], Avz=Avz[e], carried_mass=carried_mass[e])
        np.testing.assert_allclose(mb[e], one[0], rtol=1e-15, atol=0)
