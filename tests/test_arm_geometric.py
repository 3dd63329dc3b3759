"""The geometric stiffness of rigid arms: rigid links and member end offsets that carry a force
turn it as they rotate (a rigid bar's P-delta), so a buckling case or modes under a preload
take their term as well as the members'.

Sources beside each check. The closed form of the column with a rigid segment is derived in
`rigid_segment_factor` by the method of Timoshenko and Gere, Theory of Elastic Stability, 2nd
ed., 1961, sec. 2.1 (the deflection equation of the elastic part with its end conditions).
"""

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.spatial.transform import Rotation

import fem
from fem.elements.rigid import arm_geometric

E, I = 200e9, 8e-6
HEAD = ['material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }',
        "section C = generic(A = 0.004 m^2, Iy = 8e-6 m^4, Iz = 8e-6 m^4, J = 1.6e-5 m^4)"]


def rigid_segment_factor(L, a):
    """P_cr = E I (x / L)^2 of a column pinned at both ends whose lower part, of length a, is
    rigid and whose upper part, of length L, has E I: in the elastic part E I w'' = -P w, so
    w = C sin(k s) with s measured down from the top (w = 0 there); the rigid part turns about
    the base by theta, so at the joint w = theta a and dw/dy = theta, i.e. C sin kL = theta a and
    -C k cos kL = theta, whence tan(kL) = -k a with kL = x in (pi/2, pi) (pi for a = 0, the
    Euler column; pi/2 as a grows without bound)."""
    x = brentq(lambda x: np.tan(x) + x * a / L, np.pi / 2 + 1e-12, np.pi)
    return E * I * (x / L) ** 2


def column(n, L=4.0, a=2.0, lower="link", stiff=1e4, load=1e3, extra=()):
    """n members of length L / n from N0 at height a up to the top, 1 kN down there; the part
    below N0 is a rigid link from the pinned base O, an end offset of the first member, or a
    member `stiff` times as stiff in bending and twist. `extra`: more deck lines."""
    lines = list(HEAD) + ["node O = (0, 0, 0)"]
    lines += [f"node N{k} = (0, 0, {a + L * k / n} m)" for k in range(n + 1)]
    members = [f"member M{k} : N{k} -> N{k + 1} beam C S" for k in range(n)]
    if lower == "link":
        lines += ["link R: O -> N0"]
    elif lower == "offset":
        members[0] = f"member M0 : O -> N1 beam C S offset_i = (0, 0, {a} m)"
    else:
        lines += [f"section H = generic(A = 4 m^2, Iy = {8e-6 * stiff} m^4, Iz = {8e-6 * stiff} m^4, "
                  f"J = {1.6e-5 * stiff} m^4)", "member RR : O -> N0 beam H S"]
    lines += members + ["support O pinned", "support O (rz)", f"support N{n} (ux, uy)",
                        f"case P static {{ force N{n} = (0, 0, {-load} N) }}",
                        "case B buckling { loading = P, count = 2 }", *extra]
    return fem.read_text("\n".join(lines))


@pytest.mark.parametrize("lower", ["link", "offset"])
def test_a_column_on_a_rigid_segment_buckles_at_the_closed_form_load(lower):
    """Without the arm's geometric term this column came out 1.50 times too strong (the rigid
    segment's own P-delta missing). Tolerance 0.2 / n^4 from the element count, as in
    tests/test_buckling.py (the cubic member's h^4 convergence, measured there), and the error
    falls at least 12-fold from 4 to 8 elements."""
    pcr = rigid_segment_factor(4.0, 2.0)
    errors = []
    for n in (4, 8):
        b = fem.solve(column(n, lower=lower))["B"]
        err = abs(b.factors[0] * 1e3 / pcr - 1)
        assert err < 0.2 / n ** 4, (n, err)
        assert b.factors[1] == pytest.approx(b.factors[0], rel=1e-9)      # the x and y pair
        errors.append(err)
    assert errors[0] / errors[1] > 12


def test_a_stiffer_and_stiffer_member_converges_to_the_rigid_link():
    """The rigid segment modelled as a member 100 and 10^4 times as stiff as the column: its load
    factor approaches the link's as 1/stiffness (the segment's own flexibility; measured gap
    0.155 / stiffness ratio), so the gap must shrink about 100-fold (> 50) and be below 3e-5 at
    10^4. Both models share the column's mesh, so its discretisation error cancels."""
    link = fem.solve(column(8))["B"].factors[0]
    gaps = [abs(fem.solve(column(8, lower="stiff", stiff=s))["B"].factors[0] / link - 1) for s in (1e2, 1e4)]
    assert gaps[1] < 3e-5
    assert gaps[0] / gaps[1] > 50


def test_an_eccentric_offset_and_the_link_it_stands_for_buckle_alike():
    """A leaning cantilever whose top carries its load 0.3 m and 0.2 m across on a rigid arm,
    written as an end offset and as an extra node with a rigid link: one model, so their load
    factors agree to round-off (here the arm carries the column's force across itself, p not
    along a, and the column bends under it as well)."""
    def deck(offset):
        lines = HEAD + ["node O = (0, 0, 0)", "node T = (0, 0, 4 m)", "support O fixed",
                        "case P static { force T = (0, 0, -1 kN) }", "case B buckling { loading = P, count = 3 }"]
        lines += [f"node N{k} = ({0.3 * k / 4} m, {0.2 * k / 4} m, {k} m)" for k in range(1, 4)]
        lines += ["member M0 : O -> N1 beam C S", "member M1 : N1 -> N2 beam C S", "member M2 : N2 -> N3 beam C S"]
        if offset:
            lines += ["member M3 : N3 -> T beam C S offset_j = (0.3 m, 0.2 m, 0)"]
        else:
            lines += ["node F = (0.3 m, 0.2 m, 4 m)", "member M3 : N3 -> F beam C S", "link R: T -> F"]
        return fem.read_text("\n".join(lines))

    a, b = (fem.solve(deck(o))["B"].factors for o in (True, False))
    np.testing.assert_allclose(a, b, rtol=1e-9)


def test_arm_term_is_the_second_order_work_of_the_turned_arm():
    """1/2 theta^T G theta = p . (R(theta) a - a - theta x a) to second order in theta, R(theta) the
    rotation of the rotation vector theta from scipy's Rotation.from_rotvec (an independent
    reference); checked by the ratio of the two at a small rotation, whose third-order remainder
    is about |theta| = 1e-4 of it. For an arm along x carrying N axially (p = -N x): N a (I - x x^T)."""
    rng = np.random.default_rng(3)
    a, p = rng.normal(size=3), rng.normal(size=3)
    G = arm_geometric(np.array([0]), a[None], p[None], 1).toarray()[3:, 3:]
    np.testing.assert_allclose(G, G.T)
    for _ in range(5):
        th = 1e-4 * rng.normal(size=3)
        exact = p @ (Rotation.from_rotvec(th).apply(a) - a - np.cross(th, a))
        assert 0.5 * th @ G @ th == pytest.approx(exact, rel=1e-3)
    N, arm = -2500.0, 0.7
    G = arm_geometric(np.array([0]), np.array([[arm, 0, 0]]), np.array([[-N, 0, 0]]), 1).toarray()[3:, 3:]
    np.testing.assert_allclose(G, N * arm * np.diag([0.0, 1.0, 1.0]), atol=1e-9)


def test_modes_under_a_preload_take_the_links_geometric_term():
    """The column on a rigid link above: without the link's geometric term it would carry 1.50
    times its buckling load, so a preload of 1.2 times that load must be refused as buckling it,
    and one of 0.8 times must lower its first frequency (compression softens it)."""
    from fem.errors import ModelError

    pcr = rigid_segment_factor(4.0, 2.0)
    modes = ("case F modes { count = 2 }", "case G modes { count = 2, preload = P }")
    with pytest.raises(ModelError, match="buckles"):
        fem.solve(column(8, load=1.2 * pcr, extra=modes))
    r = fem.solve(column(8, load=0.8 * pcr, extra=modes))
    ratio = r["G"].modes.freq[0] / r["F"].modes.freq[0]
    assert ratio < 0.6, ratio       # 0.68 without the link term; about sqrt(1 - 0.8) = 0.45 with it


def portal(c, n=8, h=4.0, b=6.0, zones="beam", stiff=None):
    """A fixed-base one-bay portal, columns h and beam b of equal I (columns and beam nearly
    inextensible, A = 0.1 m^2), 1 kN down at each column top, n members per column and beam.
    zones = "beam": the beam's last c at each end is rigid (end offsets from the column tops);
    "column": the columns' top c is rigid, as offsets of the top column members, or, with
    `stiff`, as members that much stiffer than the columns."""
    lines = ['material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }',
             "section C = generic(A = 0.1 m^2, Iy = 8e-6 m^4, Iz = 8e-6 m^4, J = 1.6e-5 m^4)"]
    hc = h - c if zones == "column" else h
    bc = b - 2 * c if zones == "beam" else b
    x0 = c if zones == "beam" else 0.0
    for side, x in (("L", 0.0), ("R", b)):
        lines += [f"node {side}{k} = ({x} m, 0, {hc * k / n} m)" for k in range(n)]
        lines += [f"node {side}{n} = ({x} m, 0, {h} m)"]
        cols = [f"member C{side}{k} : {side}{k} -> {side}{k + 1} beam C S" for k in range(n)]
        if zones == "column" and stiff is None:
            cols[-1] += f" offset_j = (0, 0, {-c} m)"
        elif zones == "column":
            lines += [f"node {side}E = ({x} m, 0, {hc} m)",
                      f"section H{side} = generic(A = 0.1 m^2, Iy = {8e-6 * stiff} m^4, Iz = {8e-6 * stiff} m^4, "
                      f"J = {1.6e-5 * stiff} m^4)", f"member Z{side} : {side}E -> {side}{n} beam H{side} S"]
            cols[-1] = f"member C{side}{n - 1} : {side}{n - 1} -> {side}E beam C S"
        lines += cols
    lines += [f"node T{k} = ({x0 + bc * k / n} m, 0, {h} m)" for k in range(1, n)]
    top = [f"L{n}", *[f"T{k}" for k in range(1, n)], f"R{n}"]
    beams = [f"member B{k} : {top[k]} -> {top[k + 1]} beam C S" for k in range(n)]
    if zones == "beam":
        beams[0] += f" offset_i = ({c} m, 0, 0)"
        beams[-1] += f" offset_j = ({-c} m, 0, 0)"
    lines += beams + ["support L0 fixed", "support R0 fixed", "support * (uy, rx, rz)",
                      f"case P static {{ force L{n} = (0, 0, -1 kN), force R{n} = (0, 0, -1 kN) }}",
                      "case B buckling { loading = P, count = 2 }"]
    return fem.read_text("\n".join(lines))


@pytest.mark.parametrize("c", [0.5, 1.0])
def test_sway_portal_with_rigid_beam_ends_against_the_alignment_chart_equation(c):
    """The sway-frame equation (G_A G_B x^2 - 36) / (6 (G_A + G_B)) = x / tan x, P_cr =
    x^2 E I / h^2, G_B = 0 at the fixed bases (the sway-frame effective-length chart's equation,
    AISC 360-05 Commentary, Fig. C-C2.4, confirmed in a published reproduction of that text;
    exact for this symmetric portal, see tests/test_buckling.py), with the girder's end stiffness in double curvature for a beam whose
    last c at each end is rigid: slope-deflection on the elastic length b' = b - 2c whose ends
    turn by theta and move c theta up and down gives end moments (6 E I / b')(1 + 2c/b') theta,
    carried to the nodes by the shear 2 M / b' over the arms: (6 E I / b')(1 + 2c/b')^2 theta,
    so G_A = (I / h) / ((I / b')(1 + 2c/b')^2). 8 elements a member: tolerance 3e-5 (measured
    4e-7 without offsets, 5.6e-6 with c = 1 m)."""
    h, b = 4.0, 6.0
    bp = b - 2 * c
    G = (I / h) / ((I / bp) * (1 + 2 * c / bp) ** 2)
    x = brentq(lambda x: x / np.tan(x) + 6 / G, np.pi / 2 + 1e-9, np.pi - 1e-9)
    assert fem.solve(portal(c))["B"].factors[0] * 1e3 == pytest.approx(x ** 2 * E * I / h ** 2, rel=3e-5)


def test_sway_portal_with_rigid_column_tops_converges_from_stiff_members():
    """Columns whose top 0.8 m is rigid (offsets carrying the column load, so their arm term
    acts) against the same zones as members 100 and 10^4 times stiffer (the members' own
    geometric stiffness, independent of the arm term): the gap to the offsets' factor falls as
    1/stiffness (> 50-fold) and is below 1e-4 at 10^4 (without the arm term it was 0.16), and
    the 100x gap is below a tenth of the rigid zones' own effect (the change from c = 0)."""
    lam = fem.solve(portal(0.8, zones="column"))["B"].factors[0]
    gaps = [abs(fem.solve(portal(0.8, zones="column", stiff=s))["B"].factors[0] / lam - 1) for s in (1e2, 1e4)]
    assert gaps[1] < 1e-4 and gaps[0] / gaps[1] > 50
    effect = abs(fem.solve(portal(0.0))["B"].factors[0] / lam - 1)
    assert gaps[0] < 0.1 * effect
