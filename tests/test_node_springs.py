"""Springs between two nodes: the element, the deck statement and its refusals, and the forces
of static and modes cases, each against a closed form with its source beside it."""

import numpy as np
import pytest

from fem import solve
from fem.deck.reader import read_text
from fem.elements.node_spring import spring_blocks, spring_deflections
from fem.errors import DeckError, MechanismError
from fem.model import NodeSprings

STEEL = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
"""

# two masses stacked on two springs, vertical only (our own scenario: a pump skid on isolators
# on a floor slab that itself sits on a spring): the two-DOF chain
TWO_MASS = STEEL + """
node G = (0, 0, 0)
node A = (0, 0, 0.5 m)
node B = (0, 0, 1 m)
node P = (1 m, 0, 0)
member FLOOR : G -> P beam P S
support P fixed
support G fixed
support A (ux, uy, rx, ry, rz)
support B (ux, uy, rx, ry, rz)
spring SLAB: G -> A (uz = K1)
spring ISO: A -> B (uz = K2)
mass A = M1
mass B = M2
case MODES modes { count = 2 }
case PUSH static { force B = (0, 0, -1 kN) }
"""


def _two_mass(k1=4e6, k2=1e6, m1=800.0, m2=300.0):
    text = (TWO_MASS.replace("K1", f"{k1} N/m").replace("K2", f"{k2} N/m")
            .replace("M1", f"{m1} kg").replace("M2", f"{m2} kg"))
    return solve(read_text(text))


def test_two_masses_on_an_isolator_against_the_two_dof_closed_form():
    # Rao, Mechanical Vibrations, 5th ed., sec. 5.2 (free vibration of an undamped two-degree-
    # of-freedom system, frequency equation eq. 5.8 with k3 = 0 and c = 0):
    # m1 m2 w^4 - (m1 k2 + m2 (k1 + k2)) w^2 + k1 k2 = 0
    k1, k2, m1, m2 = 4e6, 1e6, 800.0, 300.0
    r = _two_mass(k1, k2, m1, m2)
    a, b, c = m1 * m2, -(m1 * k2 + m2 * (k1 + k2)), k1 * k2
    w2 = np.sort(np.roots([a, b, c]).real)
    f = np.sqrt(w2) / (2 * np.pi)
    got = r["MODES"].modes.freq
    np.testing.assert_allclose(got, f, rtol=1e-10)     # exact model: round-off only
    # the mode-shape ratio u_B / u_A = k2 / (k2 - m2 w^2) (same source, eq. 5.10)
    shapes = r["MODES"].shapes
    names = r.model.node_names
    ia, ib = names.index("A"), names.index("B")
    for j in range(2):
        ratio = shapes[ib, 2, j] / shapes[ia, 2, j]
        assert ratio == pytest.approx(k2 / (k2 - m2 * w2[j]), rel=1e-9)


def test_static_forces_of_springs_in_series_carry_the_load():
    # a load through two springs in series: each carries all of it (statics), the deflections
    # add as 1/k (springs in series; e.g. Rao sec. 1.7)
    r = _two_mass()
    s = r.springs["PUSH"]
    assert s.basis == "exact"
    np.testing.assert_allclose(s.force[:, 2], [-1000.0, -1000.0], rtol=1e-12)
    np.testing.assert_allclose(s.deflection[:, 2], [-1000 / 4e6, -1000 / 1e6], rtol=1e-12)
    u_b = r["PUSH"].u[r.model.node_names.index("B"), 2]
    assert u_b == pytest.approx(-1000 * (1 / 4e6 + 1 / 1e6), rel=1e-12)
    # the ground reaction balances the load
    assert r["PUSH"].reactions[r.model.node_names.index("G"), 2] == pytest.approx(1000.0, rel=1e-12)


def test_modes_case_gives_per_mode_spring_forces():
    r = _two_mass()
    s = r.springs["MODES"]
    assert s.basis == "per mode" and s.force.shape == (2, 2, 6)
    shapes = r["MODES"].shapes
    ia, ib = r.model.node_names.index("A"), r.model.node_names.index("B")
    np.testing.assert_allclose(s.force[:, 1, 2], 1e6 * (shapes[ib, 2] - shapes[ia, 2]), rtol=1e-12)


CANTILEVER = STEEL + """
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
spring TIP: B -> C (uz = KS)
case PULL static { force C = (0, 0, -10 kN) }
"""


def test_spring_in_series_with_a_cantilever():
    # tip deflection of a cantilever P L^3 / (3 E I) (Gere and Goodno, Mechanics of Materials,
    # 8th ed., Appendix G, table G-1 case 4) in series with a spring: 1/k_eq = 1/k + L^3/(3 E I)
    ks = 3e5
    r = solve(read_text(CANTILEVER.replace("KS", f"{ks} N/m")))
    m = r.model
    EI = m.E[0] * m.Iy[0]
    k_beam = 3 * EI / 2.0 ** 3
    u_c = r["PULL"].u[m.node_names.index("C"), 2]
    assert u_c == pytest.approx(-1e4 * (1 / ks + 1 / k_beam), rel=1e-10)   # Euler-Bernoulli: exact
    assert r.springs["PULL"].force[0, 2] == pytest.approx(-1e4, rel=1e-10)


def test_stiff_spring_joint_tends_to_the_continuous_member():
    # a cantilever cut in two at mid-length and joined by a spring of all six stiffnesses
    # between coincident nodes: as k grows the tip deflection tends to the uncut member's,
    # with an error that falls as 1/k (the joint's own flexibility, in series)
    base = STEEL + """
node A = (0, 0, 0)
node B1 = (1 m, 0, 0)
node B2 = (1 m, 0, 0)
node C = (2 m, 0, 0)
member M1 : A -> B1 beam P S
member M2 : B2 -> C beam P S
support A fixed
spring JOINT: B1 -> B2 (ux = K N/m, uy = K N/m, uz = K N/m, rx = K N*m/rad, ry = K N*m/rad, rz = K N*m/rad)
case PULL static { force C = (0, 0, -10 kN) }
"""
    whole = solve(read_text(STEEL + """
node A = (0, 0, 0)
node C = (2 m, 0, 0)
member M : A -> C beam P S
support A fixed
case PULL static { force C = (0, 0, -10 kN) }
"""))
    exact = whole["PULL"].u[1, 2]
    errs = []
    for k in (1e9, 1e11):
        r = solve(read_text(base.replace("K N", f"{k:g} N")))
        errs.append(abs(r["PULL"].u[3, 2] / exact - 1))
    assert errs[1] < 1e-4 and errs[0] / errs[1] == pytest.approx(100, rel=0.05)


def test_spring_along_a_bar_equals_the_bar():
    # a spring of k = E A / L along a truss member's axis (a rotated axis) carries the same
    # force and gives the same deflection as the bar (Hooke's law)
    bar = STEEL + """
node A = (0, 0, 0)
node B = (3 m, 4 m, 0)
support A fixed
support B (uz, rx, ry, rz)
node F = (0, -1 m, 0)
member FLOOR : A -> F beam P S
support F fixed
JOIN
case PULL static { force B = (3 kN, 4 kN, 0) }
"""
    r1 = solve(read_text(bar.replace("JOIN", "member M : A -> B truss P S\nsupport B (uy)")))
    m = r1.model
    k = m.E[0] * m.A[0] / 5.0
    r2 = solve(read_text(bar.replace("JOIN", f"spring S1: A -> B (ux = {k} N/m) along = (3, 4, 0)\nsupport B (uy)")))
    np.testing.assert_allclose(r2["PULL"].u[1, :2], r1["PULL"].u[1, :2], rtol=1e-10)
    # the axial force 3 kN along (3, 4, 0)/5 projected: 1.8 kN; tension
    assert r2.springs["PULL"].force[0, 0] == pytest.approx(r1["PULL"].member_forces[m.member_names.index("M"), 6], rel=1e-10)


def test_spring_forces_balance_at_both_ends_and_vanish_for_rigid_motion():
    # equilibrium of the element: its nodal forces K_s u sum to zero force and zero moment about
    # any point (statics of a free body), for nodes apart and turned axes; a rigid motion of
    # the pair deflects it by nothing
    rng = np.random.default_rng(3)
    coords = np.array([[0.0, 0.0, 0.0], [0.4, -0.3, 1.2], [2.0, 1.0, 0.5]])
    R = np.linalg.qr(rng.normal(size=(3, 3)))[0]
    R *= np.sign(np.linalg.det(R))
    ns = NodeSprings(("S1", "S2"), np.array([[0, 1], [2, 0]]), rng.uniform(1e3, 1e6, (2, 6)),
                     np.stack([R, np.eye(3)]), np.zeros(2))
    g = spring_blocks(ns, coords)
    assert np.allclose(g, np.swapaxes(g, 1, 2))
    u = rng.normal(size=(3, 6))
    for s, (a, b) in enumerate(ns.nodes):
        f = g[s] @ np.r_[u[a], u[b]]
        fa, fb = f[:6], f[6:]
        np.testing.assert_allclose(fa[:3] + fb[:3], 0, atol=1e-9 * np.abs(f).max())
        moment = fa[3:] + fb[3:] + np.cross(coords[a], fa[:3]) + np.cross(coords[b], fb[:3])
        np.testing.assert_allclose(moment, 0, atol=1e-9 * np.abs(f).max())
    theta, t0 = rng.normal(size=3), rng.normal(size=3)
    rigid = np.hstack([t0 + np.cross(theta, coords), np.tile(theta, (3, 1))])
    np.testing.assert_allclose(spring_deflections(ns, coords, rigid), 0, atol=1e-12)


def test_a_node_held_only_by_a_spring_is_fine_and_a_missing_direction_is_a_mechanism():
    held = STEEL + """
node A = (0, 0, 0)
node B = (1 m, 0, 0)
node C = (1 m, 0, 0)
node D = (2 m, 0, 0)
member M1 : A -> B beam P S
member M2 : C -> D beam P S
support A fixed
spring J: B -> C (ux = 1 MN/m, uy = 1 MN/m, uz = 1 MN/m, rx = 1 MN*m/rad, ry = 1 MN*m/rad, rz = 1 MN*m/rad)
case PULL static { force D = (0, 0, -1 kN) }
"""
    r = solve(read_text(held))
    assert r["PULL"].equilibrium < 1e-9
    loose = held.replace("rx = 1 MN*m/rad, ", "")
    with pytest.raises(MechanismError) as e:
        solve(read_text(loose))
    text = str(e.value)
    assert "rx" in text and ("C" in text or "D" in text)


@pytest.mark.parametrize("line,words", [
    ("spring J: B -> B (uz = 1 kN/m)", "both ends are node B"),
    ("spring J: B -> Q (uz = 1 kN/m)", "node 'Q' is not defined"),
    ("spring J: A -> B (uz = -1 kN/m)", "cannot be negative"),
    ("spring J: A -> B (uz = 0 kN/m)", "every stiffness is zero"),
    ("spring J: A -> B (uw = 1 kN/m)", "unknown direction 'uw'"),
    ("spring J: A -> B (uz = 1 kN)", "spring J uz"),
    ("spring J: A -> B (uz = 1 kN/m, uz = 2 kN/m)", "given twice"),
    ("spring J: A -> B (uz = 1 kN/m) damping = 80 percent", "damping ratio"),
    ("spring J: A -> B (uz = 1 kN/m) up = (0, 0, 1)", "add along"),
    ("spring J: A -> B (uz = 1 kN/m) along = (0, 0, 1) up = (0, 0, 2)", "parallel"),
    ("spring J: A -> B (uz = 1 kN/m) along = (0, 0, 0)", "zero vector"),
    ("spring J: A -> B (uz = 1 kN/m) colour = 3", "unknown option 'colour'"),
])
def test_refusals_are_located(line, words):
    text = STEEL + "node A = (0, 0, 0)\nnode B = (1 m, 0, 0)\nmember M : A -> B beam P S\nsupport A fixed\n" + line + "\n"
    with pytest.raises(DeckError) as e:
        read_text(text)
    assert words in str(e.value)
    assert e.value.location is not None and e.value.location.line == 8


def test_a_spring_name_is_not_given_twice():
    text = STEEL + ("node A = (0, 0, 0)\nnode B = (1 m, 0, 0)\nmember M : A -> B beam P S\nsupport A fixed\n"
                    "spring J: A -> B (uz = 1 kN/m)\nspring J: A -> B (ux = 1 kN/m)\n")
    with pytest.raises(DeckError, match="defined twice"):
        read_text(text)


def test_a_combination_of_static_cases_combines_the_spring_forces():
    # a combination is the factored sum of its cases' displacements (linear statics), so of the
    # spring forces too
    r = solve(read_text(TWO_MASS.replace("K1", "4e6 N/m").replace("K2", "1e6 N/m").replace("M1", "800 kg")
                        .replace("M2", "300 kg") + "case DEAD static { gravity = (0, 0, -9.81 m/s^2) }\n"
                        "combo ULS = 1.35*DEAD + 1.5*PUSH\n"))
    s = r.springs
    np.testing.assert_allclose(s["ULS"].force, 1.35 * s["DEAD"].force + 1.5 * s["PUSH"].force, rtol=1e-12,
                               atol=1e-9)
    # the lower spring carries both masses' weight (statics), the upper one the upper mass's
    np.testing.assert_allclose(s["DEAD"].force[:, 2], [-1100 * 9.81, -300 * 9.81], rtol=1e-12)
