"""Line loads in member axes, `line TARGET = local(wx, wy, wz)`, in static, history and harmonic
cases, against closed forms; errors for misplaced or malformed local loads."""

import numpy as np
import pytest

from fem import solve
from fem.analysis.static import solve_static
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import DeckError

E = 200e9
# generic section with distinct bending stiffnesses, so a load on the wrong axis shows
IY, IZ, AREA = 2e-5, 5e-6, 4e-3
HEAD = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section G = generic(A = 4e-3 m^2, Iy = 2e-5 m^4, Iz = 5e-6 m^4, J = 1e-5 m^4)
"""


def static(body, case=0):
    m = read_text(HEAD + body)
    asm = assemble(m)
    return m, asm, solve_static(m, asm, m.cases[case])


# an inclined fixed-fixed member A (0,0,0) -> B (3,0,4) m, L = 5 m, in four members; its axes
# (docs/deck.md, Axes): x = (0.6, 0, 0.8), y = (0, 1, 0), z = (-0.8, 0, 0.6)
INCLINED = """
for i in 0..4 { node N[i] = (i*0.75 m, 0, i*1 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam G S }
support N0 fixed
support N4 fixed
case LZ static { line M* = local(0, 0, -2 kN/m) }
case LY static { line M* = local(0, -2 kN/m, 0) }
case GZ static { line M* = (1.6 kN/m, 0, -1.2 kN/m) }
"""
X_AX, Y_AX, Z_AX = np.array([0.6, 0, 0.8]), np.array([0, 1.0, 0]), np.array([-0.8, 0, 0.6])


@pytest.mark.parametrize("case,axis,moment,inertia", [
    (0, Z_AX, 4, IY),      # load along local z bends about local y: My, Iy
    (1, Y_AX, 5, IZ),      # load along local y bends about local z: Mz, Iz
], ids=["local z", "local y"])
def test_inclined_fixed_fixed_member(case, axis, moment, inertia):
    # Roark 8th ed. Table 8.1 (reference-values.md section 4), fixed-fixed beam under a UDL w:
    # end moments wL^2/12, midspan deflection wL^4/(384 EI), end reactions wL/2 each. A load
    # across the inclined member must give exactly the horizontal beam's values, in its axes.
    # Cubic elements with consistent loads are exact at the nodes: tolerance round-off (1e-9).
    w, L = 2e3, 5.0
    m, _, r = static(INCLINED, case)
    mid = r.u[2, :3]
    np.testing.assert_allclose(mid, -w * L**4 / (384 * E * inertia) * axis, atol=1e-9 * np.abs(mid).max())
    assert abs(r.member_forces[0, moment]) == pytest.approx(w * L**2 / 12, rel=1e-9)
    assert abs(r.member_forces[3, 6 + moment]) == pytest.approx(w * L**2 / 12, rel=1e-9)
    # midspan moment wL^2/24 (Roark Table 8.1): the end moment of member 1 at node N2
    assert abs(r.member_forces[1, 6 + moment]) == pytest.approx(w * L**2 / 24, rel=1e-9)
    # no axial force from a load across the member; each support carries wL/2 along +axis
    np.testing.assert_allclose(r.member_forces[:, [0, 6]], 0, atol=1e-9 * w * L)
    np.testing.assert_allclose(r.reactions[0, :3], w * L / 2 * axis, atol=1e-9 * w * L)
    np.testing.assert_allclose(r.reactions[4, :3], w * L / 2 * axis, atol=1e-9 * w * L)
    assert r.equilibrium < 1e-12


def test_local_load_equals_its_global_components():
    # local(0, 0, -w) on this member is -w z = (0.8 w, 0, -0.6 w) in global axes (w = 2 kN/m):
    # the two decks describe the same load, so every result agrees to round-off
    _, _, loc = static(INCLINED, 0)
    _, _, glo = static(INCLINED, 2)
    for a in ("u", "reactions", "member_forces"):
        np.testing.assert_allclose(getattr(loc, a), getattr(glo, a), atol=1e-9 * np.abs(getattr(glo, a)).max())


@pytest.mark.parametrize("load,axis,inertia", [
    ("local(0, 0, -3 kN/m)", "z", IY), ("local(0, -3 kN/m, 0)", "y", IZ),
], ids=["local z", "local y"])
def test_rolled_simply_supported_beam(load, axis, inertia):
    # a member along X turned by roll = 30 deg: y = (0, cos 30, sin 30), z = (0, -sin 30, cos 30)
    # (docs/deck.md, Axes). Roark 8th ed. Table 8.1, simply supported UDL: midspan deflection
    # 5wL^4/(384 EI) along the loaded local axis, about the matching second moment; end
    # reactions wL/2. Exact at the nodes (consistent loads, cubic elements): tolerance 1e-9.
    w, L = 3e3, 5.0
    c, s = np.cos(np.radians(30)), np.sin(np.radians(30))
    direction = {"y": np.array([0, c, s]), "z": np.array([0, -s, c])}[axis]
    _, _, r = static(f"""
for i in 0..4 {{ node N[i] = (i*1.25 m, 0, 0) }}
for i in 0..3 {{ member M[i] : N[i] -> N[i+1] beam G S roll = 30 deg }}
support N0 (ux, uy, uz, rx)
support N4 (uy, uz)
case W static {{ line M* = {load} }}
""")
    np.testing.assert_allclose(r.u[2, :3], -5 * w * L**4 / (384 * E * inertia) * direction,
                               atol=1e-9 * np.abs(r.u[2, :3]).max())
    np.testing.assert_allclose(r.reactions[[0, 4], :3], np.tile(w * L / 2 * direction, (2, 1)),
                               atol=1e-9 * w * L)
    assert r.equilibrium < 1e-12


def test_local_axial_load_on_a_vertical_bar():
    # a column fixed at its base, free at the top, loaded along its own axis by q per length
    # (local x runs up from I to J, so local(-q, 0, 0) pushes down). Statics of a prismatic
    # bar (Timoshenko & Gere, Mechanics of Materials; standard result, re-derived): N(z) =
    # -q (L - z) (compression), varying linearly to zero at the top; top shortening
    # qL^2/(2EA) = int N dz / EA. Linear axial interpolation with consistent loads is exact at
    # the nodes, so the tolerance is round-off (1e-9).
    q, L = 4e3, 6.0
    _, _, r = static("""
for i in 0..6 { node N[i] = (0, 0, i*1 m) }
for i in 0..5 { member C[i] : N[i] -> N[i+1] beam G S }
support N0 fixed
case AX static { line C* = local(-4 kN/m, 0, 0) }
""")
    z = np.arange(6.0)
    # end forces act on the member: +q(L - z_i) pushes up at the foot of each piece,
    # -q(L - z_j) pushes down at its head
    np.testing.assert_allclose(r.member_forces[:, 0], q * (L - z), rtol=1e-9)
    np.testing.assert_allclose(r.member_forces[:, 6], -q * (L - z - 1), atol=1e-9 * q * L)
    assert r.u[6, 2] == pytest.approx(-q * L**2 / (2 * E * AREA), rel=1e-9)
    np.testing.assert_allclose(r.u[:, [0, 1, 3, 4, 5]], 0, atol=1e-15)
    assert r.reactions[0, 2] == pytest.approx(q * L, rel=1e-12)
    np.testing.assert_allclose(r.member_forces[:, [1, 2, 4, 5, 7, 8, 10, 11]], 0, atol=1e-9 * q * L)


def test_local_load_on_a_released_member():
    # Roark 8th ed. Table 8.1, propped cantilever under a UDL (reference-values.md section 4):
    # prop reaction 3wL/8, fixed-end moment wL^2/8; here the member is inclined, the load is
    # across it in its own axes and the prop is an end release, so the condensed fixed-end
    # loads of local loads are exercised (B is held fully; the hinge is the member's released
    # end, so the support takes no moment from it). Exact: tolerance round-off.
    w, L = 2e3, 5.0
    _, _, r = static("""
node A = (0, 0, 0)
node B = (3 m, 0, 4 m)
member M : A -> B beam G S release j (ry, rz)
support A fixed
support B fixed
case W static { line M = local(0, 0, -2 kN/m) }
""")
    assert abs(r.member_forces[0, 4]) == pytest.approx(w * L**2 / 8, rel=1e-9)
    assert abs(r.member_forces[0, 10]) < 1e-6 * w * L**2
    np.testing.assert_allclose(r.reactions[1, :3], 3 * w * L / 8 * Z_AX, atol=1e-9 * w * L)
    np.testing.assert_allclose(r.reactions[0, :3], 5 * w * L / 8 * Z_AX, atol=1e-9 * w * L)


# A massless member carrying a point mass is a one-DOF oscillator along its axis (k = EA/L,
# m = 1000 t); a load w along the member puts wL/2 on the mass and wL/2 straight into the
# support (consistent loads of a linear bar). The member is inclined, so a wrong axis shows.
# A small rotary inertia keeps M positive definite; the axial mode is uncoupled from it.
SDOF = """
material S0 { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section G = generic(A = 4e-3 m^2, Iy = 2e-5 m^4, Iz = 5e-6 m^4, J = 1e-5 m^4)
node A = (0, 0, 0)
node B = (3 m, 0, 4 m)
member M : A -> B beam G S0
support A fixed
mass B = 1000 t inertia = (1 kg*m^2, 1 kg*m^2, 1 kg*m^2)
case MODES modes { count = 6 }
"""
K_AX = E * AREA / 5.0


def _axial_mode_period():
    return 2 * np.pi * np.sqrt(1e6 / K_AX)


def test_history_step_of_a_local_axial_load():
    # undamped step load: the mass reaches twice its static displacement, DLF 2 (Chopra 2017
    # Sec. 4.3; reference-values.md section 5), so the spring force peaks at 2 (wL/2) while
    # the other wL/2 reaches the support directly: peak |N| at the support end = 1.5 wL and the
    # reaction peaks at 1.5 wL along the member. Sampled at T/400: peak within 1 - cos(pi/400)
    # ~ 3e-5 of the dynamic part.
    w, L = 10e3, 5.0
    T = _axial_mode_period()
    m = read_text(SDOF + f"""
case H history {{ line M = local(10 kN/m, 0, 0), time = step, duration = {1.5 * T} s,
                  step = {T / 400} s, damping = 0 }}
""")
    h = solve(m).modal[-1]
    u_static = w * L / 2 / K_AX
    np.testing.assert_allclose(h.peak[1, :3], 2 * u_static * X_AX, rtol=1e-4, atol=1e-9 * u_static)
    assert h.member_peak[0, 0] == pytest.approx(1.5 * w * L, rel=1e-4)
    np.testing.assert_allclose(h.reaction_peak[0, :3], 1.5 * w * L * X_AX, rtol=1e-4, atol=1e-6 * w * L)
    np.testing.assert_allclose(h.member_peak[0, [1, 2, 4, 5, 7, 8, 10, 11]], 0, atol=1e-6 * w * L)


def test_harmonic_local_axial_load():
    # steady state at r = 0.5, zeta = 5 %: the mass moves (wL/2 / k) R_d e^{-i phase} with
    # R_d = 1.3304, phase 3.814 deg (reference-values.md section 5, Chopra 2017 Sec. 3.2). The
    # member end force at the support is the spring force plus the wL/2 taken directly, so its
    # amplitude is (wL/2) |1 + R_d e^{-i phase}|, largest at the top of a sweep below
    # resonance. Tolerance: the table's 5 digits.
    w, L = 10e3, 5.0
    fn = 1 / _axial_mode_period()
    m = read_text(SDOF + f"""
case F harmonic {{ line M = local(10 kN/m, 0, 0), from = {0.4 * fn} Hz, to = {0.5 * fn} Hz,
                   points = 2, damping = 5 percent }}
""")
    h = solve(m).modal[-1]
    i = int(np.argmin(np.abs(h.freq - 0.5 * fn)))
    assert h.freq[i] == pytest.approx(0.5 * fn, rel=1e-12)
    ub = h.u[i, list(h.record).index(1), :3]
    np.testing.assert_allclose(np.abs(ub), 1.3304 * w * L / 2 / K_AX * X_AX, rtol=5e-5, atol=1e-15)
    assert -np.degrees(np.angle(ub[2])) == pytest.approx(3.814, abs=5e-3)
    amp = w * L / 2 * abs(1 + 1.3304 * np.exp(-1j * np.radians(3.814)))
    assert h.member_peak[0, 0] == pytest.approx(amp, rel=5e-5)
    np.testing.assert_allclose(h.reaction_peak[0, :3], amp * X_AX, rtol=5e-5, atol=1e-9 * amp)


def test_history_and_harmonic_take_local_loads_like_global_ones():
    # the same load written in member axes and in global components gives the same response
    T = _axial_mode_period()
    opts = f"time = halfsine({T / 3} s), duration = {T} s, step = {T / 200} s, damping = 2 percent"
    a = solve(read_text(SDOF + f"case H history {{ line M = local(0, 3 kN/m, 5 kN/m), {opts} }}")).modal[-1]
    b = solve(read_text(SDOF + f"case H history {{ line M = (-4 kN/m, 3 kN/m, 3 kN/m), {opts} }}")).modal[-1]
    for x, y in ((a.peak, b.peak), (a.reaction_peak, b.reaction_peak), (a.member_peak, b.member_peak)):
        np.testing.assert_allclose(x, y, atol=1e-9 * np.abs(y).max())


@pytest.mark.parametrize("load,message", [
    ("line M = lokal(0, 0, 1 kN/m)", r"'lokal\(...\)' is not a way to give a load; did you mean 'local'"),
    ("line M = local(0, 1 kN/m)", r"local\(...\) needs three values .* found 2"),
    ("line M = local(0, 0, 1 kN)", "needs a force per length, but a force was given"),
    ("force B = local(0, 0, 1 kN)", r"applies to line loads on members only"),
    ("line M = 2", "needs a vector of 3 values"),
], ids=["misspelt", "two values", "wrong unit", "node load", "scalar"])
def test_local_load_errors(load, message):
    with pytest.raises(DeckError, match=message) as info:
        read_text(SDOF + f"case X static {{ {load} }}")
    assert info.value.location.line == SDOF.count("\n") + 1


def test_local_is_refused_for_initial_values():
    with pytest.raises(DeckError, match="node loads and initial values are in global axes"):
        read_text(SDOF + "case X free { velocity B = local(0, 0, 1 m/s), duration = 1 s, step = 0.1 s }")
