"""Static solves from decks against closed forms (reference-values.md section 4)."""


import numpy as np
import pytest

from fem.analysis.static import solve_static
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import MechanismError

# NPS 6 Sch 40 (reference-values.md section 4 / 9): I = 1.171623e-5 m^4, A = 3.600457e-3 m^2
PIPE = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
"""
I, A, E = 1.171623e-5, 3.600457e-3, 200e9


def run(text, case=0):
    m = read_text(PIPE + text)
    a = assemble(m)
    return m, solve_static(m, a, m.cases[case])


def test_cantilever_tip_load_and_udl():
    # Roark 7th ed. Table 8.1 (reference-values.md section 4): PL^3/3EI = 177.8160 mm,
    # wL^4/8EI = 66.68100 mm. Cubic elements are exact at nodes for end loads; for a UDL with
    # consistent loads the nodal values are exact too, so 5 elements and rtol 1e-6 (table digits).
    body = """
for i in 0..5 { node N[i] = (i*1 m, 0, 0) }
for i in 0..4 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
case TIP static { force N5 = (0, 0, -10 kN) }
case UDL static { line M* = (0, 0, -2 kN/m) }
"""
    m, r = run(body, 0)
    assert -r.u[5, 2] == pytest.approx(0.1778160, rel=1e-6)
    assert r.u[5, 4] == pytest.approx(5.334480e-2, rel=1e-6)   # ry = -dw/dx > 0 for downward tip
    assert r.equilibrium < 1e-12
    # root moment P L = 50 kN m about local y, shear 10 kN
    assert abs(r.member_forces[0, 4]) == pytest.approx(50e3, rel=1e-9)
    m, r = run(body, 1)
    assert -r.u[5, 2] == pytest.approx(0.06668100, rel=1e-6)
    assert r.reactions[0, 2] == pytest.approx(10e3, rel=1e-12)
    # root moment wL^2/2 = 25 kN m: fixed-end forces restored in member forces
    assert abs(r.member_forces[0, 4]) == pytest.approx(25e3, rel=1e-9)


def test_simply_supported_udl_midspan():
    # Roark Table 8.1: 5wL^4/384EI = 6.945937 mm (reference-values.md section 4); exact at nodes
    _, r = run("""
for i in 0..4 { node N[i] = (i*1.25 m, 0, 0) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 (ux, uy, uz, rx)
support N4 (uy, uz)
case UDL static { line M* = (0, 0, -2 kN/m) }
""")
    assert -r.u[2, 2] == pytest.approx(6.945937e-3, rel=1e-6)


def test_tripod_truss_member_forces():
    # Method of joints (reference-values.md section 4, trusses): H = 4 m, R = 2 m, vertical P = 100 kN:
    # N = -P L / (3 H) = -37.2678 kN each, apex deflection 0.258771 mm
    body = """
let R = 2 m
node TOP = (0, 0, 4 m)
for k in 0..2 { node B[k] = (R*cos(k*120 deg), R*sin(k*120 deg), 0) }
for k in 0..2 { member L[k] : B[k] -> TOP truss P S }
support B* pinned
case V static { force TOP = (0, 0, -100 kN) }
"""
    _, r = run(body)
    np.testing.assert_allclose(r.member_forces[:, 6], -37267.8, rtol=2e-6)  # axial at j, table 6 digits
    assert -r.u[0, 2] == pytest.approx(0.258771e-3, rel=2e-6)


def test_portal_frame_lateral_stiffness():
    # Slope-deflection closed form (reference-values.md section 4): fixed bases, h = 4 m, L = 6 m,
    # Ic = 1e-4, Ib = 2e-4 m^4, E = 210 GPa: k = 5.906250e6 N/m for axially rigid members.
    # Axial flexibility is made negligible with a huge area (generic section); tolerance 1e-5
    # covers the remaining axial and element effects (columns are exact cubic solutions).
    _, r = run("""
material ST { E = 210 GPa, nu = 0.3 }
section C = generic(A = 1e3 m^2, Iy = 1e-4 m^4, Iz = 1e-4 m^4, J = 1e-4 m^4)
section B = generic(A = 1e3 m^2, Iy = 2e-4 m^4, Iz = 2e-4 m^4, J = 1e-4 m^4)
node A1 = (0, 0, 0)
node A2 = (6 m, 0, 0)
node T1 = (0, 0, 4 m)
node T2 = (6 m, 0, 4 m)
member C1 : A1 -> T1 beam C ST
member C2 : A2 -> T2 beam C ST
member BM : T1 -> T2 beam B ST
support A* fixed
support T* (uy, rx, rz)
case H static { force T1 = (1 kN, 0, 0) }
""")
    assert 1e3 / r.u[2, 0] == pytest.approx(5.906250e6, rel=1e-5)


def test_mechanism_is_reported_with_nodes():
    body = """
node A = (0, 0, 0)
node B = (1 m, 0, 0)
node C = (2 m, 0, 0)
member M1 : A -> B beam P S
member M2 : B -> C beam P S
support A pinned
case X static { force C = (0, 0, -1 kN) }
"""
    m = read_text(PIPE + body)
    with pytest.raises(MechanismError, match="mechanism") as info:
        solve_static(m, assemble(m), m.cases[0])
    assert any(n == "A" and d.startswith("r") for n, d in info.value.free)


def test_up_vector_parallel_to_member_is_refused():
    from fem.errors import DeckError, ModelError
    body = """
node A = (0, 0, 0)
node B = (0, 0, 3 m)
member COLX : A -> B beam P S up = (0, 0, 1)
support A fixed
case X static { force B = (1 kN, 0, 0) }
"""
    with pytest.raises(DeckError, match="COLX: the up vector .0, 0, 1. is parallel") as info:
        read_text(PIPE + body)
    assert info.value.location.line == PIPE.count("\n") + 4
    # the assembly keeps its own check for models built without the reader
    m = read_text(PIPE + body.replace("up = (0, 0, 1)", "up = (1, 0, 0)"))
    m.up[0] = [0.0, 0.0, -2.0]
    with pytest.raises(ModelError, match="COLX.*parallel"):
        assemble(m)


def test_propped_cantilever_by_end_release():
    # Roark 7th ed. Table 8.1 (reference-values.md section 4): propped cantilever under UDL,
    # prop reaction 3wL/8, fixed-end moment wL^2/8. The hinge is an end release at the prop;
    # the rotations there then meet only released ends and are held, not a mechanism.
    m, r = run("""
node A = (0, 0, 0)
node B = (5 m, 0, 0)
member M : A -> B beam P S release j (ry, rz)
support A fixed
support B (uy, uz)
case W static { line M = (0, 0, -2 kN/m) }
""")
    assert r.reactions[1, 2] == pytest.approx(3 * 2e3 * 5 / 8, rel=1e-12)
    assert abs(r.member_forces[0, 4]) == pytest.approx(2e3 * 25 / 8, rel=1e-12)
    assert abs(r.member_forces[0, 10]) < 1e-6        # released moment is zero


def test_load_on_a_dof_nothing_resists():
    m = read_text(PIPE + """
node A = (0, 0, 0)
node B = (5 m, 0, 0)
member M : A -> B beam P S release j (ry, rz)
support A fixed
support B (uy, uz)
case W static { moment B = (0, 1 kN*m, 0) }
""")
    with pytest.raises(MechanismError, match="nothing resists it: B ry"):
        solve_static(m, assemble(m), m.cases[0])


def test_overflowing_properties_are_a_model_error():
    # the deck refuses them at the member (tests/test_deck_errors.py); a model built another way
    # is refused by the assembly, without floating-point warnings leaking first
    import warnings

    from fem.errors import ModelError
    m = read_text(PIPE + """
node A = (0, 0, 0)
node B = (1 mm, 0, 0)
member M : A -> B beam P S
support A fixed
""")
    m.E[:] = 1e308
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(ModelError, match="overflows"):
            assemble(m)


def test_condition_estimate_matches_numpy_and_warns_on_contrast():
    # Hager-Higham 1-norm estimate vs numpy's exact 1-norm condition number (estimate is a lower
    # bound, usually within a factor 3); a huge stiffness contrast is warned in the summary
    import scipy.sparse.linalg as spla2

    from fem.analysis.static import condition_estimate
    m = read_text(PIPE + """
for i in 0..4 { node N[i] = (i*1 m, 0, 0) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
""")
    asm = assemble(m)
    K = asm.K[asm.free][:, asm.free].tocsc()
    est = condition_estimate(K, spla2.splu(K))
    exact = np.linalg.cond(K.toarray(), 1)
    assert exact / 3 <= est <= exact * (1 + 1e-9)


def test_stiffness_contrast_is_warned(tmp_path, capsys):
    from fem.cli import main
    deck = tmp_path / "c.deck"
    deck.write_text(PIPE + """
material SOFT { E = 1 Pa, nu = 0.3, density = 0 kg/m^3 }
node A = (0, 0, 0)
node B = (1 m, 0, 0)
node C = (2 m, 0, 0)
member M1 : A -> B beam P S
member M2 : B -> C beam P SOFT
support A fixed
case X static { force C = (0, 0, -1 N) }
""")
    main(["run", str(deck), "--out", str(tmp_path / "o"), "--no-render"])
    assert "warning: stiffness condition estimate" in capsys.readouterr().out


def test_spring_supported_cantilever_reactions_and_equilibrium():
    # cantilever (PL^3/3EI stiffness, Roark 7th ed. Table 8.1) and a tip spring act in
    # parallel: tip deflection P / (k + 3EI/L^3); the spring pushes back with -k delta and the
    # base takes the rest (statics, common practice, no source). Forces and moments balance.
    k = 2.0e5
    body = f"""
for i in 0..5 {{ node N[i] = (i*1 m, 0, 0) }}
for i in 0..4 {{ member M[i] : N[i] -> N[i+1] beam P S }}
support N0 fixed
spring N5 (uz = {k} N/m)
case TIP static {{ force N5 = (0, 0, -10 kN) }}
"""
    m, r = run(body)
    delta = -10e3 / (k + 3 * E * I / 5.0**3)
    assert r.u[5, 2] == pytest.approx(delta, rel=1e-6)         # I to the table's 7 digits
    d = r.u[5, 2]
    assert r.reactions[5, 2] == pytest.approx(-k * d, rel=1e-12)
    assert r.reactions[0, 2] == pytest.approx(10e3 + k * d, rel=1e-9)
    assert abs(r.reactions[0, 4]) == pytest.approx(5.0 * (10e3 + k * d), rel=1e-9)   # base moment
    assert r.equilibrium < 1e-12


def test_equilibrium_sees_force_and_moment_imbalance():
    # the check itself: a balanced couple passes, a missing force or a missing moment fails
    from fem.analysis.static import equilibrium

    xyz = np.array([[0.0, 0, 0], [2.0, 0, 0]])
    applied = np.zeros((2, 6))
    applied[1, 2] = -1000.0                       # 1 kN down at x = 2 m
    react = np.zeros((2, 6))
    react[0, 2], react[0, 4] = 1000.0, -2000.0    # base shear and moment (about y: z x ... sign)
    assert equilibrium(xyz, applied, react) < 1e-15
    no_moment = react.copy()
    no_moment[0, 4] = 0.0
    assert equilibrium(xyz, applied, no_moment) > 0.1
    no_force = react.copy()
    no_force[0, 2] = 0.0
    assert equilibrium(xyz, applied, no_force) > 0.1


def _global_end_forces(R, f):
    """Member end forces (12,) in local axes -> forces and moments at i and j in global axes."""
    return [R.T @ f[s:s + 3] for s in (0, 3, 6, 9)]


def test_end_force_signs_inclined_cantilever():
    # Sign convention (docs/results.md): member_forces are forces acting ON the member at each
    # end, in its local axes. Free-body statics (no source needed): a one-member cantilever has
    # at end i exactly the support reaction and at end j exactly the applied tip load, both as
    # signed vectors; the moment at i balances the tip load's moment about i.
    body = """
node A = (0, 0, 0)
node B = (3 m, 2 m, 1.5 m)
member C : A -> B beam P S
support A fixed
case TIP static { force B = (4 kN, -7 kN, -10 kN) ; moment B = (1 kN*m, 0, 2 kN*m) }
"""
    m, r = run(body)
    a = assemble(m)
    Fi, Mi, Fj, Mj = _global_end_forces(a.R[0], r.member_forces[0])
    P, Q = np.array([4e3, -7e3, -10e3]), np.array([1e3, 0, 2e3])
    np.testing.assert_allclose(Fj, P, atol=1e-9 * 1e4)
    np.testing.assert_allclose(Mj, Q, atol=1e-9 * 1e4)
    np.testing.assert_allclose(Fi, r.reactions[0, :3], atol=1e-9 * 1e4)
    np.testing.assert_allclose(Mi, r.reactions[0, 3:], atol=1e-9 * 1e4)
    np.testing.assert_allclose(Fi, -P, atol=1e-9 * 1e4)
    lever = np.array([3.0, 2.0, 1.5])
    np.testing.assert_allclose(Mi, -(Q + np.cross(lever, P)), atol=1e-9 * 1e5)


def test_end_force_signs_horizontal_cantilever_local():
    # Member along +X: local y = +Y, z = +Z (fem.geometry.local_axes). A downward tip load
    # P at x = L: on the member at i the support pushes up (Vz_i = +P) and holds the moment
    # M_y,i = -P L (right-hand about +Y: the support's moment turns the root back up); at j the
    # load acts down (Vz_j = -P), no moment. Statics of a cantilever, Roark 7th ed. Table 8.1.
    _, r = run("""
node A = (0, 0, 0)
node B = (5 m, 0, 0)
member C : A -> B beam P S
support A fixed
case TIP static { force B = (0, 0, -10 kN) }
""")
    N_i, Vy_i, Vz_i, T_i, My_i, Mz_i, N_j, Vy_j, Vz_j, T_j, My_j, Mz_j = r.member_forces[0]
    assert Vz_i == pytest.approx(10e3, rel=1e-12)
    assert My_i == pytest.approx(-50e3, rel=1e-12)
    assert Vz_j == pytest.approx(-10e3, rel=1e-12)
    assert abs(My_j) < 1e-9 * 50e3


def test_axial_sign_tension_positive_at_j():
    # Docs/results.md: N at end j is the member's axial force, tension positive (N at i is its
    # negative). A bar pulled by 25 kN along its axis: N_j = +25 kN, N_i = -25 kN.
    _, r = run("""
node A = (0, 0, 0)
node B = (0, 4 m, 0)
member C : A -> B truss P S
support A pinned
support B (ux, uz)
case PULL static { force B = (0, 25 kN, 0) }
""")
    assert r.member_forces[0, 6] == pytest.approx(25e3, rel=1e-12)
    assert r.member_forces[0, 0] == pytest.approx(-25e3, rel=1e-12)


def test_combination_equilibrium_is_its_own():
    # A combination's check is computed from its own combined loads and reactions (statics of
    # the superposed state), not copied from its parts: spoiling one combined reaction must show.
    from fem import solve
    from fem.analysis.static import equilibrium

    m = read_text(PIPE + """
node A = (0, 0, 0)
node B = (4 m, 0, 0)
node C = (4 m, 0, 3 m)
member G : A -> B beam P S
member H : B -> C beam P S
support A fixed
case D static { force C = (0, 0, -20 kN) }
case W static { force C = (5 kN, 0, 0) }
combo U = 1.35*D + 1.5*W
""")
    results = solve(m).statics
    by = {r.name: r for r in results}
    u = by["U"]
    np.testing.assert_allclose(u.reactions, 1.35 * by["D"].reactions + 1.5 * by["W"].reactions)
    assert u.equilibrium == equilibrium(m.coords, u.applied, u.reactions)
    assert u.equilibrium < 1e-12
    spoiled = u.reactions.copy()
    spoiled[0, 2] *= 1.01
    assert equilibrium(m.coords, u.applied, spoiled) > 1e-3
