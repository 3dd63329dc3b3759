"""Rigid links applied as constraints (u = T u_reduced), and masses placed off their nodes.

Sources beside each check:
- the cantilever under an end load P and an end moment M (Roark's Formulas for Stress and
  Strain, 7th ed., Table 8.1 case 1a and 3a): tip deflection P L^3/3EI + M L^2/2EI, tip
  rotation P L^2/2EI + M L/EI; the twist of a shaft T L/GJ (same, Table 10.1); the cubic
  beam element and the linear torsion element are exact for end loads, so these hold to
  round-off;
- an eccentric mass on a massless column: a hand-derived 3x3 stiffness and mass (below), its
  eigenvalues by scipy.linalg.eigh;
- consistency: the same structure with stiff members in place of the link converges to the
  linked one as their stiffness grows (the compliance left is proportional to 1/stiffness,
  common practice, no source), and the link itself is exactly rigid.
"""

import numpy as np
import pytest
import scipy.linalg as sla
from shared_decks import COUNTERWEIGHT_FRAME

from fem import solve
from fem.analysis.static import solve_static
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import DeckError, MechanismError

E, NU = 200e9, 0.3
G = E / (2 * (1 + NU))
B = 0.05                       # square bar 50 mm
I = B**4 / 12
J = 0.1406 * B**4              # the section's own J is read back from the model below

ARM = """
material ST {{ E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }}
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = ({cx} m, {cy} m, 0)
member AB : A -> B beam P ST
support A fixed
link ARM: B -> C
mass C = 100 kg
case LOAD static {{ force C = (0, 0, -1 kN) }}
case LOADY static {{ force C = (0, -1 kN, 0) }}
case MODES modes {{ count = 3 }}
"""


def _arm(cx, cy):
    return read_text(ARM.format(cx=cx, cy=cy))


def test_tip_load_on_an_arm_along_the_member():
    """Arm a = 0.5 m beyond the tip: at B a force P and a moment M = P a; at C
    w_B + a theta_B (Roark, cantilever with end load and end moment). Exact to round-off
    (1e-10 relative leaves room for the solve's rounding on a condition of ~1e4)."""
    model = _arm(2.5, 0)
    res = solve(model, cases=["LOAD"])
    L, a, P = 2.0, 0.5, 1000.0
    EI = E * model.Iz[0]       # bending in the x-z plane: about the local y axis, Iy = Iz for a square
    wB = P * L**3 / (3 * EI) + P * a * L**2 / (2 * EI)
    tB = P * L**2 / (2 * EI) + P * a * L / EI
    u = res["LOAD"].u
    assert u[2, 2] == pytest.approx(-(wB + a * tB), rel=1e-10)
    assert u[1, 2] == pytest.approx(-wB, rel=1e-10)
    # the link carries P to B: its force on C is +P up, exactly
    assert res["LOAD"].links == pytest.approx([0, 0, P, 0, 0, 0], abs=1e-9 * P)
    assert res.ok


def test_tip_load_on_an_arm_across_the_member():
    """Arm 0.5 m across the tip (along y): a z load twists the bar by T L / GJ (Roark Table
    10.1) and bends it: w_C = P L^3/3EI + a (P a) L / GJ; a y load bends it about z and pulls
    nothing else: v_C = P L^3/3EI + 0 (the arm is along the load)."""
    model = _arm(2.0, 0.5)
    res = solve(model, cases=["LOAD", "LOADY"])
    L, a, P = 2.0, 0.5, 1000.0
    EI, GJ = E * model.Iy[0], model.G[0] * model.J[0]
    assert res["LOAD"].u[2, 2] == pytest.approx(-(P * L**3 / (3 * EI) + a * P * a * L / GJ), rel=1e-10)
    assert res["LOADY"].u[2, 1] == pytest.approx(-P * L**3 / (3 * E * model.Iz[0]), rel=1e-10)


def test_tip_mass_on_an_arm_frequency_from_the_flexibility():
    """A translational mass m at C on a massless cantilever plus rigid arm along its axis: the
    vertical mode has w^2 = 1/(m d), d the flexibility at C from Roark's end load and end
    moment (above); the lateral one likewise with Iz. Exact to the eigen solver's accuracy
    (1e-9 relative)."""
    model = _arm(2.5, 0)
    res = solve(model, cases=["MODES"])
    L, a, m = 2.0, 0.5, 100.0
    f = []
    for Ib in (model.Iy[0], model.Iz[0]):
        EI = E * Ib
        d = L**3 / (3 * EI) + a * L**2 / (2 * EI) + a * (L**2 / (2 * EI) + a * L / EI)
        f.append(np.sqrt(1 / (m * d)) / (2 * np.pi))
    axial = np.sqrt(E * model.A[0] / L / m) / (2 * np.pi)
    got = np.sort(res["MODES"].modes.freq)
    assert got == pytest.approx(np.sort([*f, axial]), rel=1e-9)
    # the shapes are M-orthonormal in the full space: the mass at C (linked) moves with them
    phi = res["MODES"].shapes[2, :3]                  # (3, k) translations of C
    assert 100.0 * phi.T @ phi == pytest.approx(np.eye(3), abs=1e-12)


ECCENTRIC = """
material ST {{ E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }}
section P = pipe(od = 168.3 mm, wall = 7.1 mm)
node A = (0, 0, 0)
node T = (0, 0, 3 m)
member COL : A -> T beam P ST
support A fixed
mass T = 400 kg inertia = (30 kg*m^2, {iy} kg*m^2, 50 kg*m^2) offset = ({e} m, 0, {h} m)
case MODES modes {{ count = 6 }}
case DEAD static {{ gravity = (0, 0, -9.81 m/s^2) }}
"""


def test_eccentric_mass_against_a_hand_model():
    """A mass m at (e, 0, h) from the top of a massless vertical cantilever column, inertia
    I_y about its centre. In the DOFs (u_x, u_z, theta_y) of the top the centre moves by
    (u + h th, w - e th) (small rotation th about y), so by hand
    M = [[m, 0, m h], [0, m, -m e], [m h, -m e, I_y + m (e^2 + h^2)]] and
    K = [[12EI/L^3... ]] the tip stiffness of the cantilever: axial EA/L and, in bending,
    inv([[L^3/3, L^2/2], [L^2/2, L]] / EI) (Roark, end load and end moment). The three
    frequencies of this block are three of the model's six (the other plane and the twist do
    not couple with it). Eigenvalues by scipy.linalg.eigh; 1e-9 relative (both exact)."""
    m, e, h, Iy = 400.0, 0.6, 0.4, 40.0
    model = read_text(ECCENTRIC.format(e=e, h=h, iy=Iy))
    res = solve(model, cases=["MODES"])
    L = 3.0
    EI, EA = E * model.Iy[0], E * model.A[0]
    kb = np.linalg.inv(np.array([[L**3 / 3, L**2 / 2], [L**2 / 2, L]]) / EI)
    K = np.zeros((3, 3))
    K[np.ix_([0, 2], [0, 2])] = kb
    K[1, 1] = EA / L
    M = np.array([[m, 0, m * h], [0, m, -m * e], [m * h, -m * e, Iy + m * (e**2 + h**2)]])
    hand = np.sqrt(sla.eigh(K, M, eigvals_only=True)) / (2 * np.pi)
    got = res["MODES"].modes.freq
    for f in hand:
        assert np.min(np.abs(got - f) / f) < 1e-9
    assert res.ok


def test_eccentric_mass_weight_turns_its_node():
    """Gravity on a mass off its node: the node gets the weight m g and the moment e x (m g)
    (statics, common practice, no source): the base moment My = -m g e (about A) balances it."""
    m, e = 400.0, 0.6
    model = read_text(ECCENTRIC.format(e=e, h=0.4, iy=40.0))
    res = solve(model, cases=["DEAD"])
    r = res["DEAD"]
    assert r.applied[1, 2] == pytest.approx(-m * 9.81, rel=1e-12)
    # moment about y of the weight (-m g z-hat) at +e x-hat: r x F = (e,0,0) x (0,0,-mg) = (0, m g e, 0)
    assert r.applied[1, 4] == pytest.approx(m * 9.81 * e, rel=1e-12)
    assert r.reactions[0, 4] == pytest.approx(-m * 9.81 * e, rel=1e-9)
    assert res.ok


# an invented equipment table: four columns, a top frame, a 900 kg block whose centre E sits
# 0.6 m above the frame, tied to the four top corners
TABLE = """
material ST {{ E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }}
material HARD {{ E = {hard} GPa, nu = 0.3, density = 0 kg/m^3 }}
section COL = rhs(b = 100 mm, h = 100 mm, t = 5 mm)
section BM = rhs(b = 80 mm, h = 120 mm, t = 5 mm)
for i in 0..1 {{ for j in 0..1 {{
  node B[i,j] = (i*2 m, j*1.5 m, 0)
  node H[i,j] = (i*2 m, j*1.5 m, 1 m)
  node T[i,j] = (i*2 m, j*1.5 m, 2 m)
  member C[i,j] : B[i,j] -> H[i,j] beam COL ST
  member D[i,j] : H[i,j] -> T[i,j] beam COL ST
}} }}
member X0 : T[0,0] -> T[1,0] beam BM ST
member X1 : T[0,1] -> T[1,1] beam BM ST
member Y0 : T[0,0] -> T[0,1] beam BM ST
member Y1 : T[1,0] -> T[1,1] beam BM ST
node E = (1 m, 0.75 m, 2.6 m)
{tie}
support B* fixed
mass E = 900 kg inertia = (120 kg*m^2, 150 kg*m^2, 200 kg*m^2)
case DEAD static {{ gravity = (0, 0, -9.81 m/s^2) }}
case PUSH static {{ force E = (4 kN, 2 kN, 0), moment E = (0, 0, 3 kN*m) }}
combo BOTH = 1.35*DEAD + 1.5*PUSH
case MODES modes {{ count = 8 }}
case ALL modes {{ count = 1000 }}
case KNOCK history {{ force E = (6 kN, 0, 0), time = halfsine(0.05 s), duration = 0.5 s, step = 0.001 s,
                      damping = 2 percent, record = "E", modes = MODES, correction = on }}
case SHAKE harmonic {{ force E = (0, 1 kN, 0), from = 1 Hz, to = 40 Hz, points = 80, damping = 2 percent,
                       record = "E", modes = MODES, correction = on }}
case QUAKE spectrum {{ curve = plateau(0.2 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 1, 0),
                       combine = cqc, damping = 5 percent, missing = on, modes = MODES }}
case LET_GO free {{ start = PUSH, duration = 0.5 s, step = 0.002 s, damping = 2 percent, modes = MODES }}
"""
LINKED = "link BLOCK: E -> T*"
SPOKES = "for i in 0..1 {{ for j in 0..1 {{ member S[i,j] : E -> T[i,j] beam BM HARD }} }}"


@pytest.fixture(scope="module")
def linked():
    return solve(read_text(TABLE.format(hard=210, tie=LINKED)))


def _stiff(factor):
    return solve(read_text(TABLE.format(hard=210 * factor, tie=SPOKES.replace("{{", "{").replace("}}", "}"))),
                 cases=["MODES"])


def test_link_is_exactly_rigid(linked):
    """Every linked node moves as the rigid body of E: u_d = u_E + th_E x (x_d - x_E),
    th_d = th_E, in static results and mode shapes (to round-off: 1e-12 of the largest)."""
    model = linked.model
    e = model.node_names.index("E")
    deps = [model.node_names.index(f"T{i}_{j}") for i in range(2) for j in range(2)]
    arm = model.coords[deps] - model.coords[e]
    fields = [linked["PUSH"].u[:, :, None], linked["MODES"].shapes]
    for U in fields:
        for k in range(U.shape[2]):
            u, th = U[e, :3, k], U[e, 3:, k]
            top = np.abs(U[:, :, k]).max()
            assert U[deps, :3, k] == pytest.approx(u + np.cross(th, arm), abs=1e-12 * top)
            assert U[deps, 3:, k] == pytest.approx(np.broadcast_to(th, (4, 3)), abs=1e-12 * top)


def test_every_case_kind_and_its_checks_work_through_the_link(linked):
    """Static, combination, modes (every mode: effective masses add up to the total mass), free,
    history, harmonic and spectrum cases solve with every self-check passing: eigen residuals
    and M-orthogonality of the full-space shapes, equilibrium of reactions and loads."""
    assert linked.ok, linked.checks
    assert {r.kind for r in linked} == {"static", "modes", "free", "history", "harmonic", "spectrum"}
    part = linked["ALL"].part
    assert part.cumulative[-1, :3] == pytest.approx(1.0, abs=1e-10)
    # the reduced mass T^T M T keeps the whole mass: the block's 900 kg moves the frame
    assert linked.assembled_mass == pytest.approx(linked.model.total_mass(), rel=1e-12)
    # the link carries the whole push onto the frame: reactions balance the load on E
    assert linked["PUSH"].reactions[:, :3].sum(axis=0) == pytest.approx([-4000, -2000, 0], abs=1e-6)
    # link forces of a combination are the combination of the cases'
    both = 1.35 * linked["DEAD"].links + 1.5 * linked["PUSH"].links
    assert linked["BOTH"].links == pytest.approx(both, rel=1e-12, abs=1e-9)
    # the link forces on the four corners carry the load on E to them: together the same force
    # and the same moment about E (E's own equilibrium through the link)
    f = linked["PUSH"].links.reshape(4, 6)
    arm = linked.model.coords[[linked.model.node_names.index(f"T{i}_{j}") for i in range(2) for j in range(2)]] \
        - linked.model.coords[linked.model.node_names.index("E")]
    assert f[:, :3].sum(axis=0) == pytest.approx([4000, 2000, 0], abs=1e-6)
    moment = (np.cross(arm, f[:, :3]) + f[:, 3:]).sum(axis=0)
    assert moment == pytest.approx([0, 0, 3000], abs=1e-6)


def test_stiff_members_converge_to_the_link(linked):
    """Frequencies with stiff members (E x 10^3, 10^4, 10^5) in place of the link approach the
    linked ones from below, the gap falling tenfold per decade of stiffness once the members
    are far stiffer than the frame (the members' compliance left; common practice, no
    source; measured 6e-2, 7e-3, 7e-4): each gap at most 0.2 of the one before (our margin),
    the last under 1e-3 relative."""
    f_link = linked["MODES"].modes.freq
    gaps = []
    for factor in (1e3, 1e4, 1e5):
        f = _stiff(factor)["MODES"].modes.freq[:len(f_link)]
        assert np.all(f <= f_link * (1 + 1e-9))
        gaps.append(np.max((f_link - f) / f_link))
    assert gaps[1] < 0.2 * gaps[0] and gaps[2] < 0.2 * gaps[1]
    assert gaps[2] < 1e-3


def test_link_keeps_the_conditioning(linked):
    """A link adds no stiffness contrast: the stiffness condition estimate stays that of the
    frame (7e3 measured), while stiff members of E x 10^4 in its place raise it by orders of
    magnitude (1e8 measured); the margin asked for is 100."""
    stiff = _stiff(1e4)
    assert linked.soundness.condition * 100 < stiff.soundness.condition


def test_responses_match_the_stiff_member_model(linked):
    """History, harmonic, spectrum, free and static peaks agree with the model whose link is
    stiff members of E x 10^5 (compliance left ~1e-5 relative; 1e-3 allows for the sharpness
    of the harmonic peak, whose frequency moves by about that gap)."""
    stiff = solve(read_text(TABLE.format(hard=210e5, tie=SPOKES.replace("{{", "{").replace("}}", "}"))),
                  cases=["PUSH", "KNOCK", "SHAKE", "QUAKE", "LET_GO"])
    e = linked.model.node_names.index("E")
    for name in ("PUSH", "QUAKE"):
        assert linked[name].u[e] == pytest.approx(stiff[name].u[e], rel=1e-3, abs=1e-3 * np.abs(stiff[name].u[e]).max())
    for name in ("KNOCK", "SHAKE", "LET_GO"):
        a, b = linked[name].peak[e], stiff[name].peak[e]
        assert a == pytest.approx(b, rel=1e-3, abs=1e-3 * np.abs(b).max())


def test_partial_link_leaves_a_mechanism_named():
    """A node tied by translations only (ux, uy, uz) keeps its rotations; a cantilever stub
    hanging from it is then free to turn about the tied point: a mechanism, reported with
    its nodes and directions."""
    deck = """
material ST { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (2 m, 0, 0.5 m)
node D = (2 m, 0, 1.5 m)
member AB : A -> B beam P ST
member CD : C -> D beam P ST
support A fixed
link PIN: B -> C (ux, uy, uz)
case LOAD static { force D = (1 kN, 0, 0) }
"""
    with pytest.raises(MechanismError, match=r"C r|D u"):
        solve(read_text(deck))


def test_loads_and_springs_at_linked_nodes_balance():
    """A load and a spring to ground at linked nodes: the load acts through the link, the spring
    force is reported at its own node, and reactions balance the loads (equilibrium check)."""
    deck = ARM.format(cx=2.5, cy=0).replace("link ARM: B -> C", "link ARM: B -> C\nspring C (uz = 200 kN/m)")
    res = solve(read_text(deck), cases=["LOAD"])
    r = res["LOAD"]
    assert r.reactions[2, 2] == pytest.approx(-2e5 * r.u[2, 2], rel=1e-12)
    assert r.reactions[:, 2].sum() == pytest.approx(1000.0, rel=1e-10)
    assert res.ok


def test_reduction_is_symmetric_and_keeps_linked_dofs_held():
    model = _arm(2.5, 0)
    asm = assemble(model)
    assert abs(asm.K - asm.K.T).max() == 0 and abs(asm.M - asm.M.T).max() == 0
    assert set(asm.linked) == set(range(12, 18)) and set(asm.linked) <= set(asm.fixed)
    assert not set(asm.linked) & set(asm.inert)


BAD = [
    ("link L: B -> B", "both the reference and a node that follows it"),
    ("link L: B -> C\nlink M: D -> C", "already follows link L"),
    ("link L: B -> C\nlink M: C -> D", "its reference C follows link L"),
    ("link L: C -> D\nlink M: B -> C", "is the reference of link L"),
    ("link L: B -> A", "but a support holds it in ux"),
    ("link L: B -> C (ux, uq)", "unknown direction 'uq'"),
    ("link L: B -> C\nlink L: B -> D", "link L is defined twice"),
    ("link L: B -> Q", "Q"),
]


@pytest.mark.parametrize("line, words", BAD, ids=[b[1][:24] for b in BAD])
def test_bad_links_are_refused_with_their_place(line, words):
    deck = f"""
material ST {{ E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (2.5 m, 0, 0)
node D = (3 m, 0, 0)
member AB : A -> B beam P ST
support A fixed
{line}
"""
    with pytest.raises(DeckError, match=words) as info:
        read_text(deck)
    assert info.value.location is not None and info.value.location.line >= 10


def test_initial_values_at_a_linked_node_are_refused():
    deck = ARM.format(cx=2.5, cy=0) + "case GO free { displacement C = (0, 0, 1 mm), duration = 1 s, step = 0.01 s }\n"
    with pytest.raises(DeckError, match="follows a rigid link there"):
        read_text(deck)


def test_mass_only_on_a_linked_node_is_held():
    """A mass on a node that only a link holds is part of the structure (not refused)."""
    model = _arm(2.5, 0)
    assert model.point_mass[2, 0] == 100.0
    assert solve_static(model, assemble(model), model.cases[0]).u[2, 2] < 0


def test_free_structure_with_a_link_has_six_rigid_body_modes():
    """Without supports the linked table floats: the mechanism check through the constraints
    finds exactly the six rigid-body motions (not the block's node, which only links hold), and
    the modes case gives six modes at 0 Hz then elastic ones (common practice, no source)."""
    deck = TABLE.format(hard=210, tie=LINKED).replace("support B* fixed", "")
    deck = "\n".join(line for line in deck.splitlines() if not line.startswith(("case", "combo", "   ")))
    res = solve(read_text(deck + "\ncase MODES modes { count = 8 }\n"))
    assert len(res.soundness.rigid) == 6
    f = res["MODES"].modes.freq
    assert np.all(f[:6] < 1e-3 * f[6]) and f[6] > 1.0
    assert res.ok


HINGE = """
material ST { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node B2 = (2 m, 0, 0)
node C = (4 m, 0, 0)
member AB : A -> B beam P ST
member BC : B2 -> C beam P ST
support A fixed
support C fixed
link HINGE: B -> B2 (ux, uy, uz)
case MODES modes { count = 4, sensitivity = members }
"""


def test_hinge_between_two_nodes_at_one_place():
    """A link of translations only between two nodes at one place is a hinge (meant, so not
    refused as coincident nodes). A fixed-fixed span of 2a hinged at mid-span under a load P
    at the hinge is two cantilevers of length a sharing it: deflection P a^3 / 6EI, and each
    side's end turns by (P/2) a^2 / 2EI, the two in opposite senses (Roark, cantilever with
    an end load); exact to round-off (1e-10). The frequency sensitivities' energy check
    (2U = lambda, 2T = 1 from the element energies of the full-space shapes) holds to 1e-12."""
    res = solve(read_text(HINGE + "case LOAD static { force B = (0, 0, -1 kN) }\n"))
    model = res.model
    a, P, EI = 2.0, 1000.0, model.E[0] * model.Iy[0]
    u = res["LOAD"].u
    assert u[1, 2] == pytest.approx(-P * a**3 / (6 * EI), rel=1e-10)
    assert u[2, 2] == u[1, 2]
    assert u[1, 4] == pytest.approx(P / 2 * a**2 / (2 * EI), rel=1e-10)
    assert u[2, 4] == pytest.approx(-u[1, 4], rel=1e-10)
    assert np.max(res.sensitivities["MODES"].energy_check) < 1e-12
    assert res.ok


def test_eccentric_mass_sensitivities_balance():
    """The element energies of a mass off its node (u . B u / 2 with the coupling terms) add up
    to the modal kinetic energy: the sensitivities' energy check holds to 1e-12."""
    res = solve(read_text(ECCENTRIC.format(e=0.6, h=0.4, iy=40.0).replace("count = 6", "count = 6, sensitivity = members")),
                cases=["MODES"])
    assert np.max(res.sensitivities["MODES"].energy_check) < 1e-12


def test_inertia_at_a_reference_node_is_not_called_idle():
    """The block's rotary inertia at E, which only the link holds, is kept by the assembly (its
    rotations have stiffness through the link), so no note says it is left out."""
    model = read_text(TABLE.format(hard=210, tie=LINKED))
    assert not [w for w in model.warnings if "rotary inertia" in str(w)]
    asm = assemble(model)
    e = model.node_names.index("E")
    assert not set(range(6 * e + 3, 6 * e + 6)) & set(asm.inert)


def test_supported_reference_with_mass_following_is_warned():
    """At a supported reference node the followers' masses move partly with the support, which no
    mode holds: a spectrum case's reactions leave that inertia out unless its missing-mass term
    is on, and the reader says so at the link. Free, history and harmonic cases, and spectrum
    cases with `missing = on`, add it (tests/test_link_dynamics.py), so they are not warned about."""
    deck = COUNTERWEIGHT_FRAME + "link ARM: B -> F\ncase MODES modes { count = 4 }\n"
    quiet = read_text(deck)
    assert not [w for w in quiet.warnings if "link ARM" in str(w)]
    loud = read_text(deck + "case KNOCK history { force T = (6 kN, 0, 0), time = halfsine(0.05 s), duration = 0.2 s, "
                            "step = 0.001 s, damping = 2 percent }\n")
    assert not [w for w in loud.warnings if "link ARM" in str(w)]
    spectrum = "case QUAKE spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 0)"
    assert not [w for w in read_text(deck + spectrum + ", missing = on }\n").warnings if "link ARM" in str(w)]
    loud = read_text(deck + spectrum + " }\n")
    (w,) = [w for w in loud.warnings if "link ARM" in str(w)]
    assert "leave out the inertia" in str(w) and w.location.line == deck.splitlines().index("link ARM: B -> F") + 1


def test_mass_on_a_follower_free_in_a_direction_is_refused():
    """A follower tied by ux only, with nothing else at it: its mass would be held (dropped) in
    uy and uz, so the reader refuses it, naming the directions."""
    deck = ARM.format(cx=2.5, cy=0).replace("link ARM: B -> C", "link ARM: B -> C (ux)")
    deck = "\n".join(line for line in deck.splitlines() if not line.startswith("case"))
    with pytest.raises(DeckError, match=r"mass on node C.*uy, uz"):
        read_text(deck)


def test_report_rows_name_the_largest_link_force():
    from fem.output.report import _link_rows

    entry = {"link_forces": {"ARM": {"C": [3000.0, 4000.0, None, 0.0, 0.0, 1500.0], "D": [0.0, 1000.0, 0.0, 0, 0, 0]}}}
    (row,) = _link_rows(entry)
    assert row[0].startswith("link ARM") and row[1] == "5 kN at C, moment 1.5 kN m at C"
    assert _link_rows({"name": "X"}) == []


def test_spectrum_link_force_is_the_equivalent_static_force_of_the_mass():
    """A mass m that only a link holds (on an arm off a massless column top): in each mode the
    link must give it its equivalent static force m Gamma_n phi_n A_n (Chopra, Dynamics of
    Structures, 4th ed., sec. 13.1, s_n = Gamma_n M phi_n, peak A_n = Sa(T_n)), combined over
    the modes by SRSS (sec. 13.7). Gamma, phi and Sa are read from the solve; 1e-10 relative
    (the same arithmetic by another route). The missing-mass term is off (all modes kept)."""
    deck = """
material ST { E = 210 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.1 mm)
node A = (0, 0, 0)
node T = (0, 0, 3 m)
node C = (0.7 m, 0.4 m, 3.5 m)
member COL : A -> T beam P ST
support A fixed
link ARM: T -> C
mass C = 600 kg
case MODES modes { count = 3 }
case QUAKE spectrum { curve = plateau(0.3 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 0), combine = srss,
                      damping = 5 percent, modes = MODES }
"""
    res = solve(read_text(deck))
    assert res.ok
    m, modes, q = 600.0, res["MODES"], res["QUAKE"]
    phi = modes.shapes[2, :3]                         # (3, k) translations of C
    s = m * phi * modes.part.gamma[:, 0] * q.sa[0]     # (3, k) equivalent static forces on C
    expected = np.sqrt((s**2).sum(axis=1))
    assert q.links[:3] == pytest.approx(expected, rel=1e-10)


def test_spectrum_link_force_with_the_missing_mass():
    """With one mode kept and the missing-mass term on, the mass's rigid part (1 - sum Gamma phi)
    moves with the ground at the zero-period acceleration (the missing-mass correction, e.g.
    Gupta, Response Spectrum Method in Seismic Analysis and Design of Structures, 1990, from
    memory): its link force is m (r - Gamma_1 phi_1) a_zpa, combined with the mode's by SRSS as
    one more uncorrelated term (as the spectrum case combines its missing-mass term); 1e-10."""
    deck = """
material ST { E = 210 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.1 mm)
node A = (0, 0, 0)
node T = (0, 0, 3 m)
node C = (0.7 m, 0.4 m, 3.5 m)
member COL : A -> T beam P ST
support A fixed
link ARM: T -> C
mass C = 600 kg
case MODES modes { count = 1 }
case QUAKE spectrum { curve = plateau(0.3 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 0), combine = srss,
                      damping = 5 percent, modes = MODES, missing = on }
"""
    res = solve(read_text(deck))
    m, modes, q = 600.0, res["MODES"], res["QUAKE"]
    phi, g = modes.shapes[2, :3, 0], modes.part.gamma[0, 0]
    zpa = res.definition("QUAKE").spectrum.zpa()
    modal = m * phi * g * q.sa[0, 0]
    rigid = m * (np.array([1.0, 0, 0]) - g * phi) * zpa
    assert q.links[:3] == pytest.approx(np.sqrt(modal**2 + rigid**2), rel=1e-10)
