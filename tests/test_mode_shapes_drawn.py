"""Deformed shapes drawn along members, the energy each member holds, and the words that
caption a mode: closed forms first, then the element's own matrices, then decks.

Fast: pure numpy on small decks, no rendering."""

import numpy as np
import pytest

from fem import solve
from fem.analysis.energy import field_energies
from fem.assembly import assemble, element_matrices
from fem.deck.reader import read_deck
from fem.elements import frame as fr
from fem.elements.interpolate import bending_functions, member_curves
from fem.output.character import describe_mode

E, G = 200e9, 80e9
IY, IZ, J, A = 2e-5, 3e-5, 1e-5, 0.01
MAT = "material S { E = 200 GPa, G = 80 GPa, density = 7850 kg/m^3 }\n" \
      "section G = generic(A = 0.01 m^2, Iy = 2e-5 m^4, Iz = 3e-5 m^4, J = 1e-5 m^4)\n"


def _solve(tmp_path, text, name="m.deck"):
    d = tmp_path / name
    d.write_text(MAT + text)
    model = read_deck(d)
    solved = solve(model)
    return model, (solved.statics, solved.modal)


def _along(model, u, member=0, n=41):
    """Positions x along the member and the interpolated global displacement there."""
    c = member_curves(model, u, n_points=n)
    x = np.linalg.norm(c.base[member] - c.base[member, 0], axis=1)
    return x, c.disp[member], c


@pytest.mark.parametrize("end, load, axis", [("(0, 0, 3 kN)", 2, IY), ("(0, -3 kN, 0)", 1, IZ)], ids=["z", "y"])
def test_cantilever_tip_load_is_the_closed_form(tmp_path, end, load, axis):
    """One member, tip load P: w(x) = P x^2 (3L - x) / (6 E I) (Roark's Formulas for Stress and
    Strain, 7th ed., Table 8.1 case 1a). The deflection is a cubic, so the member's Hermite
    interpolation of the solved end values is exact: 1e-9 relative (round-off of the solve)."""
    model, (st, _) = _solve(tmp_path, "node A = (0, 0, 0)\nnode B = (2.5 m, 0, 0)\nmember M : A -> B beam G S\n"
                                      f"support A fixed\ncase TIP static {{ force B = {end} }}\n")
    x, d, _ = _along(model, st[0].u)
    P = 3e3 * np.sign(st[0].u[1, load])
    want = P * x ** 2 * (3 * 2.5 - x) / (6 * E * axis)
    np.testing.assert_allclose(d[:, load], want, rtol=1e-9, atol=1e-15)
    # the other transverse direction and the axis do not move
    assert np.abs(np.delete(d, load, axis=1)).max() < 1e-12 * np.abs(want).max()


def test_simply_supported_end_moment_is_the_closed_form(tmp_path):
    """Pinned at both ends, a moment M at end B: w(x) = M x (L^2 - x^2) / (6 E I L), from
    E I w'' = M x / L integrated with w(0) = w(L) = 0 (elementary beam theory; Gere & Goodno,
    Mechanics of Materials, appendix of beam deflections, from memory). A cubic: exact."""
    L, M = 3.0, 2e3
    model, (st, _) = _solve(tmp_path, f"node A = (0, 0, 0)\nnode B = ({L} m, 0, 0)\nmember M : A -> B beam G S\n"
                                      "support A pinned\nsupport B (ux, uy, uz, rx)\n"
                                      "case END static { moment B = (0, 2 kN*m, 0) }\n")
    x, d, _ = _along(model, st[0].u)
    # a moment +My at B turns B's section so the member meets it sloping down (ry = -dw/dx > 0):
    # the span bows up in +z
    want = M * x * (L ** 2 - x ** 2) / (6 * E * IY * L)
    np.testing.assert_allclose(d[:, 2], want, rtol=1e-9, atol=1e-15 * M)


def test_any_orientation_gives_the_same_curve(tmp_path):
    """The same cantilever along a skew line with the load across it: the interpolated
    deflection, measured across the member, is the closed form of the aligned one (rotation
    invariance; Roark's Table 8.1 case 1a as above)."""
    ax = np.array([1.0, 2.0, 3.0]) / np.sqrt(14)
    L = 2.5
    tip = ax * L
    load = np.cross(ax, [0, 0, 1.0])
    load /= np.linalg.norm(load)
    model, (st, _) = _solve(tmp_path, f"node A = (0, 0, 0)\nnode B = ({tip[0]} m, {tip[1]} m, {tip[2]} m)\n"
                                      "member M : A -> B beam G S up = (0, 0, 1)\nsupport A fixed\n"
                                      f"case TIP static {{ force B = ({3 * load[0]} kN, {3 * load[1]} kN, 0) }}\n")
    x, d, c = _along(model, st[0].u)
    R = c.axes[0]
    # the load lies along local y or z of this member: find which bending plane carries it
    plane = int(np.argmax(np.abs(R[1:] @ load))) + 1
    I = IZ if plane == 1 else IY
    want = 3e3 * x ** 2 * (3 * L - x) / (6 * E * I)
    np.testing.assert_allclose(d @ load, want, rtol=1e-9, atol=1e-15)
    assert np.abs(d @ ax).max() < 1e-9 * want.max()


def _gauss(n=8):
    t, w = np.polynomial.legendre.leggauss(n)
    return (t + 1) / 2, w / 2                 # on 0..1


@pytest.mark.parametrize("phi", [0.0, 0.35], ids=["euler-bernoulli", "timoshenko"])
def test_shape_functions_are_the_elements_own(phi):
    """The interpolation is the one the element matrices are built on: integrating
    rho A Nw^T Nw + rho I Npsi^T Npsi gives frame.py's consistent mass, and E I Npsi'^T Npsi' +
    G As (Nw' - Npsi)^T (Nw' - Npsi) its stiffness, in the x-y plane (Gauss quadrature with 8
    points is exact for these polynomials; 1e-12 relative)."""
    L, rho, I, As = 1.7, 7850.0, IZ, None
    if phi:
        As = 12 * E * I / (G * phi * L ** 2)
    xi, w = _gauss()
    Nw, Np = bending_functions(xi, [L], phi)
    h = 1e-6
    dNw = (bending_functions(xi + h, [L], phi)[0] - bending_functions(xi - h, [L], phi)[0]) / (2 * h * L)
    dNp = (bending_functions(xi + h, [L], phi)[1] - bending_functions(xi - h, [L], phi)[1]) / (2 * h * L)
    Nw, Np, dNw, dNp = Nw[0], Np[0], dNw[0], dNp[0]
    W = w[:, None, None] * L
    rI = rho * I if phi else 0.0            # the Euler-Bernoulli mass leaves out rotary inertia
    m = (W * (rho * A * Nw[:, :, None] * Nw[:, None, :] + rI * Np[:, :, None] * Np[:, None, :])).sum(0)
    gas = G * As if phi else 0.0
    sh = dNw - Np
    k = (W * (E * I * dNp[:, :, None] * dNp[:, None, :] + gas * sh[:, :, None] * sh[:, None, :])).sum(0)
    dofs = [1, 5, 7, 11]                     # v_i, rz_i, v_j, rz_j (rz = +dv/dx)
    if phi:
        M = fr.frame_mass_timoshenko(L, rho, A, IY, IZ, J, E, G, Avy=As, Avz=As)[0]
        K = fr.frame_stiffness(L, E, G, A, IY, IZ, J, Avy=As, Avz=As)[0]
    else:
        M = fr.frame_mass(L, rho, A, IY, IZ, J)[0]
        K = fr.frame_stiffness(L, E, G, A, IY, IZ, J)[0]
    np.testing.assert_allclose(m, M[np.ix_(dofs, dofs)], rtol=1e-12, atol=1e-12 * np.abs(M).max())
    # the stiffness uses a central difference of the section rotation: 1e-7 relative
    np.testing.assert_allclose(k, K[np.ix_(dofs, dofs)], rtol=1e-7, atol=1e-7 * np.abs(K).max())


def test_a_hinged_span_is_straight_and_a_bar_too(tmp_path):
    """A-B fixed at A, B-C hinged at B (rotations released) and pinned at C, load at B: B-C
    carries no bending moment, so it stays straight from B to C (statics, common practice, no
    source), although B turns (A-B's tip rotation). Drawn with B's rotation instead of the
    member's own end rotation, it would bow. A truss member is straight between its ends."""
    model, (st, _) = _solve(tmp_path, "node A = (0, 0, 0)\nnode B = (2 m, 0, 0)\nnode C = (4 m, 0, 0)\n"
                                      "node D = (2 m, 0, -1.5 m)\n"
                                      "member AB : A -> B beam G S\nmember BC : B -> C beam G S release i (ry, rz)\n"
                                      "member BD : B -> D truss G S\n"
                                      "support A fixed\nsupport C pinned\nsupport D pinned\n"
                                      "case P static { force B = (1 kN, 0, -5 kN) }\n")
    u = st[0].u
    chord = (u[2, 2] - u[1, 2]) / 2.0             # slope of B-C's chord, dw/dx
    assert abs(u[1, 4] + chord) > 0.1 * abs(chord)    # B turns other than the chord
    c = member_curves(model, u, n_points=21)
    xi = np.linspace(0, 1, 21)[:, None]
    for m in (1, 2):
        i, j = model.conn[m]
        line = (1 - xi) * u[i, :3] + xi * u[j, :3]
        np.testing.assert_allclose(c.disp[m], line, atol=1e-12 * np.abs(u[:, :3]).max())
    # the member's own end rotation at the hinge is the chord's slope, not B's rotation
    assert c.rot[1, 0, 1] == pytest.approx(-chord, rel=1e-9)


MOTOR = """
section POST = ishape(d = 200 mm, bf = 200 mm, tf = 15 mm, tw = 9 mm)
section CH = channel(d = 160 mm, bf = 65 mm, tf = 7.5 mm, tw = 5 mm)
section TIE = rhs(b = 100 mm, h = 100 mm, t = 5 mm)
node F0 = (0, 0, 0)
node F1 = (4 m, 0, 0)
node F2 = (0, 1.5 m, 0)
node F3 = (4 m, 1.5 m, 0)
node T0 = (0, 0, 2.5 m)
node T1 = (4 m, 0, 2.5 m)
node T2 = (0, 1.5 m, 2.5 m)
node T3 = (4 m, 1.5 m, 2.5 m)
node MOTOR = (2 m, 1.5 m, 2.5 m)
member C0 : F0 -> T0 beam POST S
member C1 : F1 -> T1 beam POST S
member C2 : F2 -> T2 beam POST S
member C3 : F3 -> T3 beam POST S
member MB1 : T0 -> T1 beam CH S
member MB2a : T2 -> MOTOR beam CH S
member MB2b : MOTOR -> T3 beam CH S
member E0 : T0 -> T2 beam TIE S
member E1 : T1 -> T3 beam TIE S
support F* fixed
spring T1 (uy = 5e6 N/m)
mass MOTOR = 400 kg inertia = (40 kg*m^2, 10 kg*m^2, 10 kg*m^2)
case MODES modes { count = 4 }
"""


@pytest.fixture(scope="module")
def motor(tmp_path_factory):
    return _solve(tmp_path_factory.mktemp("motor"), MOTOR)


def test_energies_add_up_to_the_assembled_matrices(motor):
    """Per-member (by kind), spring and point-mass energies of every mode add up to
    0.5 phi^T K phi = 0.5 omega^2 and 0.5 phi^T M phi = 0.5 (mass-normalised shapes; the
    definitions, common practice, no source): 1e-9 relative."""
    model, (_, (modes,)) = motor
    asm = assemble(model)
    mats = element_matrices(model)
    for j in range(modes.shapes.shape[2]):
        phi = modes.shapes[:, :, j]
        en = field_energies(model, phi, mats)
        v = phi.ravel()
        assert en.strain == pytest.approx(0.5 * v @ (asm.K @ v), rel=1e-9)
        assert en.strain == pytest.approx(0.5 * modes.modes.omega[j] ** 2, rel=1e-7)
        assert en.kinetic == pytest.approx(0.5 * v @ (asm.M @ v), rel=1e-9)
        trans, rot = en.kinetic_directions()
        assert trans.sum() + rot.sum() == pytest.approx(en.kinetic, rel=1e-12)


def test_a_rolling_motor_is_captioned_as_a_twist_not_a_sway(motor):
    """Mode 1 of the stand is the motor rolling on the channel: its frequency is that of the
    motor's rotary inertia I = 40 kg m^2 on the two 2 m channel halves in torsion, in parallel,
    k = 2 G J / 2 m, f = sqrt(k / I) / (2 pi) (a torsional spring and inertia, common practice,
    no source), within 3 % (the channel's own torsional inertia and the posts' flexibility). Its translations are tiny, so
    it is local, a twist of MB2a and MB2b turning MOTOR about X, never a sway; and the drawing
    scale leaves the translations tiny."""
    from fem.output.render import drawing_scale

    model, (_, (modes,)) = motor
    GJ = model.G[5] * model.J[5]
    f = np.sqrt(2 * GJ / 2.0 / 40.0) / (2 * np.pi)
    assert modes.modes.freq[0] == pytest.approx(f, rel=0.03)
    phi = modes.shapes[:, :, 0]
    c = describe_mode(model, phi)
    assert c.scope == "local" and c.rotational
    assert c.motion.startswith("twist of MB2") and "MB2a" in c.motion and "MB2b" in c.motion
    assert c.motion.endswith("turning MOTOR about X") and "sway" not in c.label
    assert c.strain[0][0] in ("MB2a", "MB2b") and c.kinetic[0] == ("MOTOR", pytest.approx(1.0, abs=0.02))
    curves = member_curves(model, phi)
    length = 0.05 * 4.0
    k = drawing_scale(curves, phi, length)
    assert k * np.abs(curves.disp).max() < 0.01 * length       # no sway drawn
    assert k * np.abs(curves.twist).max() == pytest.approx(0.5, rel=0.02)   # the twist shows instead


def test_sways_and_plan_twist_are_global(motor, tmp_path):
    """The stand's mode 4 sways in X with the frame; a 4-member cantilever's first mode is a
    global sway (its strain sits in the lower members, its motion at the top); the symmetric
    table's twist is a twist in plan (test_render's table: a symmetry argument)."""
    model, (_, (modes,)) = motor
    labels = [describe_mode(model, modes.shapes[:, :, j]).label for j in range(4)]
    assert labels[3] == "global: sway in X"
    assert labels[2].startswith("local: vertical bending of MB2")
    mast, (_, (m2,)) = _solve(tmp_path, "for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }\n"
                                        "for i in 0..3 { member M[i] : N[i] -> N[i+1] beam G S }\n"
                                        "support N0 fixed\ncase MODES modes { count = 2 }\n", "c.deck")
    assert {describe_mode(mast, m2.shapes[:, :, j]).label for j in range(2)} == {"global: sway in X",
                                                                                  "global: sway in Y"}
    # one member pinned at both ends (twist held at B only): its nodes only turn, the member
    # bends between them; sideways bending is a sway in Y, not a turn in plan
    span, (_, (m4,)) = _solve(tmp_path, "node A = (0, 0, 0)\nnode B = (6 m, 0, 0)\nmember M : A -> B beam G S\n"
                                        "support A pinned\nsupport B (uy, uz, rx)\ncase MODES modes { count = 3 }\n",
                              "s.deck")
    assert np.abs(m4.shapes[:, 1:3]).max() < 1e-12               # no node moves across the span
    labels = [describe_mode(span, m4.shapes[:, :, j]).label for j in range(3)]
    assert "global: sway in Y" in labels and "global: vertical motion" in labels
    assert not any("plan" in x for x in labels)
    from tests.test_render import TABLE
    (tmp_path / "t.deck").write_text(TABLE)
    table = read_deck(tmp_path / "t.deck")
    (m3,) = solve(table).modal
    frac = np.nan_to_num(m3.part.fraction)
    twist = int(np.argmax(frac[:, 5]))
    assert describe_mode(table, m3.shapes[:, :, twist]).label == "global: twist in plan about Z"


def test_results_json_and_vtu_carry_the_character_and_curves(tmp_path):
    """The run writes each mode's character into results.json, and the modes file holds the
    members' interpolated shape: at each member's inner points the file's displacement is
    member_curves' at the same scale (a round trip through pyvista's VTKHDF reader, 1e-9
    relative, plus the file's float32 rounding, 2**-24 relative: IEEE 754 round to nearest)."""
    import json

    import pyvista as pv

    from fem.cli import main
    from fem.output.vtk import VTU_POINTS, drawing_scale, shape_scale

    d = tmp_path / "motor.deck"
    d.write_text(MAT + MOTOR)
    out = tmp_path / "o"
    assert main(["run", str(d), "--out", str(out), "--no-render"]) == 0
    doc = json.loads((out / "results.json").read_text())
    ch = next(c for c in doc["cases"] if c["kind"] == "modes")["mode_character"]
    assert ch[0]["label"] == "local: twist of MB2a, MB2b, turning MOTOR about X"
    assert ch[0]["kinetic_energy_share"]["MOTOR"] == pytest.approx(1.0, abs=0.02)
    assert ch[3]["label"] == "global: sway in X"
    model = read_deck(d)
    (modes,) = solve(model).modal
    phi = modes.shapes[:, :, 0]
    c = member_curves(model, phi, n_points=VTU_POINTS)
    k = drawing_scale(c, phi, shape_scale(model))
    mesh = pv.read(out / "modes" / "MODES_modes.vtkhdf")          # its first step: mode 1
    n, e = model.n_nodes, model.n_members
    inner = mesh.point_data["displacement"][n:].reshape(e, -1, 3)
    scale = np.abs(c.disp).max() * k
    rnd = float(np.finfo(np.float32).eps) / 2
    np.testing.assert_allclose(inner, c.disp[:, 1:-1] * k, rtol=rnd + 1e-9, atol=1e-9 * scale)
    np.testing.assert_allclose(mesh.point_data["rotation"][n:].reshape(e, -1, 3), c.rot[:, 1:-1] * k,
                               rtol=rnd + 1e-9, atol=1e-9)
