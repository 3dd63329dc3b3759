"""Linear buckling: the geometric stiffness, the buckling case and its checks, against closed forms.

Sources beside each check. The cubic (Hermite) member with the consistent geometric stiffness
converges to the exact load factor as h^4 (Przemieniecki, Theory of Matrix Structural Analysis,
1968, sec. 15.3, from memory; measured here: relative error 0.12 / n^4 for a pinned column of n
elements), so each tolerance below is set from the element count.
"""

import numpy as np
import pytest
from scipy.optimize import brentq

import fem
from fem.deck.reader import read_text
from fem.elements.geometric import frame_geometric, truss_geometric
from fem.errors import DeckError, ModelError

E, I, A = 200e9, 8e-6, 4e-3
HEAD = ['title "column"', "material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }",
        "section C = generic(A = 0.004 m^2, Iy = 8e-6 m^4, Iz = 8e-6 m^4, J = 1.6e-5 m^4)"]


def column(n, L=4.0, ends="pinned", cases=("case B buckling { loading = P, count = 3 }",)):
    """A vertical column of n members, 1 kN down at the top; pinned-pinned or fixed-free."""
    lines = list(HEAD)
    lines += [f"node N{k} = (0, 0, {L * k / n} m)" for k in range(n + 1)]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam C S" for k in range(n)]
    if ends == "pinned":
        lines += ["support N0 pinned", "support N0 (rz)", f"support N{n} (ux, uy)"]
    else:
        lines += ["support N0 fixed"]
    lines += [f"case P static {{ force N{n} = (0, 0, -1 kN) }}", *cases]
    return read_text("\n".join(lines))


def test_element_geometric_stiffness_against_the_integral():
    """Kg = N int N'^T N' dx of the cubic Hermite shape functions, integrated here with numpy's
    Gauss-Legendre rule (exact for the quadratic integrand), in the x-y plane (v, rz = dv/dx)
    and the x-z plane (w, ry = -dw/dx); the twist term N Ip / (A L) (McGuire, Gallagher and
    Ziemian, Matrix Structural Analysis, 2nd ed., eq. 9.19, from memory; confirmed as the weak form,
    over a linear twist, of the term (I0 P / A) theta'' of the torsion equation under an axial
    load, Megson, An Introduction to Aircraft Structural Analysis, 2010, ch. 8, eq. 8.70). Round-off
    tolerance."""
    L, N = 2.5, -3000.0
    kg = frame_geometric(L, N, A, 2e-6, 5e-6)[0]
    x, w = np.polynomial.legendre.leggauss(4)
    s = (x + 1) / 2 * L
    d = np.array([-6 * s / L**2 + 6 * s**2 / L**3, 1 - 4 * s / L + 3 * s**2 / L**2,
                  6 * s / L**2 - 6 * s**2 / L**3, -2 * s / L + 3 * s**2 / L**2])       # dN/dx, (4, q)
    ref = N * (d * w * L / 2) @ d.T
    np.testing.assert_allclose(kg[np.ix_([1, 5, 7, 11], [1, 5, 7, 11])], ref, rtol=1e-12, atol=1e-9)
    flip = np.diag([1, -1, 1, -1])          # ry = -dw/dx
    np.testing.assert_allclose(kg[np.ix_([2, 4, 8, 10], [2, 4, 8, 10])], flip @ ref @ flip, rtol=1e-12, atol=1e-9)
    t = N * 7e-6 / (A * L)
    np.testing.assert_allclose(kg[np.ix_([3, 9], [3, 9])], [[t, -t], [-t, t]], rtol=1e-14)
    assert np.all(kg[0] == 0) and np.all(kg[:, 0] == 0)          # no axial term
    kt = truss_geometric(L, N)[0]
    c = N / L
    np.testing.assert_allclose(kt[np.ix_([1, 7], [1, 7])], [[c, -c], [-c, c]])
    assert np.count_nonzero(kt) == 8


@pytest.mark.parametrize("ends, K", [("pinned", 1.0), ("free", 2.0)], ids=["pinned-pinned", "fixed-free"])
def test_euler_column_and_mesh_convergence(ends, K):
    """P_cr = pi^2 E I / (K L)^2, K = 1 pinned-pinned, 2 fixed-free (Timoshenko and Gere, Theory of
    Elastic Stability, 2nd ed., 1961, sec. 2.1 and 2.2); the column buckles in y and z alike,
    so the factors come in equal pairs, the pinned column's next pair at 4 P_cr. Tolerance
    0.2 / n^4 from the element count (h^4 convergence, see the module docstring), and the
    error must fall at least 12-fold from n to 2n (16 in theory)."""
    L = 4.0
    pcr = np.pi**2 * E * I / (K * L) ** 2
    errors = []
    for n in (4, 8):
        r = fem.solve(column(n, L, ends))
        b = r["B"]
        err = abs(b.factors[0] * 1e3 / pcr - 1)
        assert err < 0.2 / n**4, (n, err)
        errors.append(err)
        assert b.factors[1] == pytest.approx(b.factors[0], rel=1e-10)         # the y and z pair
        assert r.checks.passed["B"] and r.checks.cases["B"]["none_missed"] is True
        assert r.checks.cases["B"]["sturm_count"] == r.checks.cases["B"]["sturm_expected"]
        assert b.residual.max() < 1e-12
    assert errors[0] / errors[1] > 12
    if ends == "pinned":
        # two half-waves: each spans n/2 elements, so the same bound with n/2
        assert b.factors[2] * 1e3 == pytest.approx(4 * pcr, rel=0.2 / (n / 2) ** 4)


def test_buckled_shape_is_the_half_sine():
    """The pinned column's buckled shape is sin(pi z / L) (Timoshenko and Gere, sec. 2.2), scaled
    to a largest translation of 1; nodal values of the cubic element within 1e-4 at n = 8."""
    n, L = 8, 4.0
    b = fem.solve(column(n, L))["B"]
    z = np.linspace(0, L, n + 1)
    lateral = b.shapes[:, :2, 0]
    amp = lateral[np.argmax(np.abs(lateral).sum(axis=1))]
    along = lateral @ amp / (amp @ amp)
    np.testing.assert_allclose(along / along.max(), np.sin(np.pi * z / L), atol=1e-4)
    assert np.abs(b.shapes[:, :3, 0]).max() == pytest.approx(1.0)


def test_sparse_path_matches_the_dense_one():
    """Above the dense limit (600 free DOFs) the factors come from Lanczos on K^-1 Kg; they must
    agree with the Euler value to the mesh error of 120 elements (far below 1e-8) and the
    Sturm count must pass."""
    n, L = 120, 4.0
    r = fem.solve(column(n, L))
    b = r["B"]
    assert "Lanczos" in b.solver
    assert b.factors[0] * 1e3 == pytest.approx(np.pi**2 * E * I / L**2, rel=1e-8)
    assert r.checks.passed["B"]


def test_sway_portal_against_the_alignment_chart_equation():
    """A fixed-base portal, columns h = 4 m and beam b = 6 m of equal I, each column loaded with
    P at its top, sways at P_cr = (pi / K)^2 E I / h^2 where pi / K = x solves the sway-frame
    equation (G_A G_B x^2 - 36) / (6 (G_A + G_B)) = x / tan x with G_B = 0 (fixed base) and
    G_A = (I/h) / (I/b) (the equation of the sway-frame effective-length chart, AISC 360-05
    Commentary, Fig. C-C2.4: confirmed in a published reproduction of that Commentary text; the
    2016 edition's number, Appendix 7 eq. C-A-7-2, from memory; exact for
    a symmetric one-bay portal whose columns carry equal loads: its assumptions of equal joint
    rotations and beams bent in double curvature hold). Solved here with scipy's brentq. Columns
    nearly inextensible (A = 0.1 m^2), 8 elements per member: tolerance 1e-4."""
    h, b, n = 4.0, 6.0, 8
    lines = [*HEAD[:2], "section C = generic(A = 0.1 m^2, Iy = 8e-6 m^4, Iz = 8e-6 m^4, J = 1.6e-5 m^4)"]
    lines += [f"node L{k} = (0, 0, {h * k / n} m)" for k in range(n + 1)]
    lines += [f"node R{k} = ({b} m, 0, {h * k / n} m)" for k in range(n + 1)]
    lines += [f"node T{k} = ({b * k / n} m, 0, {h} m)" for k in range(1, n)]
    top = ["L8", *[f"T{k}" for k in range(1, n)], "R8"]
    lines += [f"member CL{k} : L{k} -> L{k + 1} beam C S" for k in range(n)]
    lines += [f"member CR{k} : R{k} -> R{k + 1} beam C S" for k in range(n)]
    lines += [f"member B{k} : {top[k]} -> {top[k + 1]} beam C S" for k in range(n)]
    lines += ["support L0 fixed", "support R0 fixed", "support * (uy, rx, rz)",
              "case P static { force L8 = (0, 0, -1 kN), force R8 = (0, 0, -1 kN) }",
              "case B buckling { loading = P, count = 2 }"]
    r = fem.solve(read_text("\n".join(lines)))
    G = (I / h) / (I / b)
    x = brentq(lambda x: x / np.tan(x) + 6 / G, np.pi / 2 + 1e-9, np.pi - 1e-9)
    pcr = x**2 * E * I / h**2
    assert 1 < np.pi / x < 2                               # a sway frame: 1 < K < 2
    assert r["B"].factors[0] * 1e3 == pytest.approx(pcr, rel=1e-4)
    assert abs(r["B"].shapes[n, 0, 0]) > 0.9               # the top sways: the lowest shape is the sway mode


def test_pretension_holds_in_the_load_factor():
    """A pinned column kept upright by two guys pretensioned to T (a fixed state, not scaled):
    the guys' pull compresses the column, so the load factor of the top load falls by the
    share of P_cr that the pretension state already uses (its forces are checked in
    test_preload.py)."""
    n, L = 8, 4.0
    lines = list(HEAD) + ["section G = round(d = 12 mm)"]
    lines += [f"node N{k} = (0, 0, {L * k / n} m)" for k in range(n + 1)]
    lines += ["node AL = (-3 m, 0, 0)", "node AR = (3 m, 0, 0)"]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam C S" for k in range(n)]
    lines += [f"member G1 : N{n} -> AL truss G S pretension = 20 kN", f"member G2 : N{n} -> AR truss G S pretension = 20 kN"]
    lines += ["support N0 pinned", "support N0 (rz)", "support AL fixed", "support AR fixed", f"support N{n} (uy)",
              f"case P static {{ force N{n} = (0, 0, -1 kN) }}", "case B buckling { loading = P, count = 1 }"]
    r = fem.solve(read_text("\n".join(lines)))
    assert r.checks.passed["B"]
    from fem.analysis.buckling import prestress_forces
    from fem.analysis.soundness import examine
    from fem.analysis.static import factorise

    model = read_text("\n".join(lines))
    asm, _ = examine(model)
    N = prestress_forces(model, asm, factorise(model, asm))
    # the top is held in y by its support and in x by the guys' axial stiffness, so the column
    # buckles as a pinned one (Euler, sec. 2.2) under its compression from the guys, fixed, plus
    # lambda times its compression from the top load (the guys take a little of that load);
    # the mesh bound of P_cr over the share left, 1.04, for the load factor
    pcr = np.pi**2 * E * I / L**2
    b = r["B"]
    assert N[0] < 0 and b.axial[0] < 0
    assert b.factors[0] == pytest.approx((pcr + N[0]) / -b.axial[0], rel=0.2 / n**4 * 1.04)


@pytest.mark.parametrize("text, match", [
    ("case B buckling { count = 2 }", "needs loading = NAME"),
    ("case B buckling { loading = Q }", "loading 'Q' is not a static case or combination; defined: P"),
    ("case B buckling { loading = P, count = 0 }", "count must be a whole number"),
    ("case B buckling { loading = P, cuont = 2 }", "unknown option 'cuont'.*did you mean 'count'"),
    ("case B buckling { loading = P, force N1 = (1 N, 0, 0) }", "takes no loads of its own"),
], ids=["no loading", "unknown case", "zero count", "misspelt option", "own loads"])
def test_deck_errors_of_a_buckling_case(text, match):
    with pytest.raises(DeckError, match=match):
        column(2, cases=(text,))


def test_tension_only_loads_are_refused_in_words():
    """A column pulled at its top cannot buckle: refused, not a list of negative factors."""
    lines = "\n".join([*HEAD, "node N0 = (0, 0, 0)", "node N1 = (0, 0, 2 m)", "member M : N0 -> N1 beam C S",
                       "support N0 fixed", "case P static { force N1 = (0, 0, 1 kN) }",
                       "case B buckling { loading = P }"])
    with pytest.raises(ModelError, match="no positive load factor.*do not compress"):
        fem.solve(read_text(lines))


def test_results_folder_and_summary_of_a_buckling_case(tmp_path, capsys):
    """buckling.csv and buckled_shapes.csv hold the factors and shapes as solved, results.json the
    entry with its checks and the linear note, the summary a line per case, the report its table
    (round trip: written, read back, compared)."""
    import csv
    import json

    from fem.output.summary import print_solved

    r = fem.solve(column(4))
    fem.write_results(r, tmp_path / "out", render=False)
    out = tmp_path / "out"
    rows = list(csv.DictReader((out / "buckling.csv").open()))
    np.testing.assert_array_equal([float(x["load_factor"]) for x in rows], r["B"].factors)
    assert {x["loading"] for x in rows} == {"P"}
    shapes = list(csv.DictReader((out / "buckled_shapes.csv").open()))
    assert len(shapes) == 3 * 5 and float(shapes[0]["ux"]) == r["B"].shapes[0, 0, 0]
    doc = json.loads((out / "results.json").read_text())
    entry = next(c for c in doc["cases"] if c["kind"] == "buckling")
    assert entry["load_factor"] == r["B"].factors.tolist() and entry["checks"]["none_missed"] is True
    assert "no large-displacement analysis" in entry["note"]
    assert doc["cases"][-1] is not None and doc["cases"][-1]["kind"] == "buckling"     # last group
    assert "Load factors of the loads of case P" in (out / "report.html").read_text()
    print_solved(r)
    said = capsys.readouterr().out
    assert "B            buckling of P's loads (linear); lowest load factors: " in said
    assert "Sturm count pass" in said


def test_a_case_built_in_python_naming_no_static_case_is_refused():
    """The API checks what the reader checks: a buckling case's loading must be a static case."""
    from dataclasses import replace

    model = column(2)
    bad = replace(model, cases=[c for c in model.cases if c.kind != "buckling"]
                  + [fem.BucklingCase(name="B2", loading="NOPE")])
    with pytest.raises(ModelError, match="case B2: 'NOPE' is not a static case or combination"):
        fem.solve(bad)


def test_torsional_buckling_from_the_twist_term():
    """A column stiff in bending but with a tiny torsion constant buckles by twisting at
    P_T = G J / r0^2, r0^2 = Ip / A (no warping stiffness; Timoshenko and Gere, Theory of Elastic
    Stability, 2nd ed., 1961, sec. 5.3, eq. 5-16 with C1 = 0, from memory of the numbering;
    confirmed: Megson, An Introduction to Aircraft Structural Analysis, 2010, ch. 8, eq. 8.70,
    E Gamma theta^(4) - (G J - I0 P / A) theta'' = 0 for a section whose shear centre is its
    centroid, here with Gamma = 0).
    Twist and its geometric term are both linear along the member, so the factor is exact at any
    mesh: round-off tolerance (and every twisting shape of the mesh shares it, a repeated factor).
    The shape twists only: scaled to a largest rotation of 1."""
    lines = [*HEAD[:2], "section T = generic(A = 0.004 m^2, Iy = 8e-5 m^4, Iz = 5e-5 m^4, J = 2e-9 m^4)"]
    lines += [f"node N{k} = (0, 0, {k * 0.5} m)" for k in range(5)]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam T S" for k in range(4)]
    lines += ["support N0 fixed", "support N4 (ux, uy, rz)",       # rz: the twist of this vertical column
              "case P static { force N4 = (0, 0, -1 kN) }", "case B buckling { loading = P, count = 1 }"]
    r = fem.solve(read_text("\n".join(lines)))
    G = 200e9 / 2.6
    pt = G * 2e-9 * 0.004 / (8e-5 + 5e-5)
    assert r["B"].factors[0] * 1e3 == pytest.approx(pt, rel=1e-9)
    s = r["B"].shapes[:, :, 0]
    assert np.abs(s[:, :3]).max() < 1e-9 and np.abs(s[:, 5]).max() == pytest.approx(1.0)
    assert r.checks.passed["B"]


def test_sturm_check_sees_a_missed_factor():
    """The check is not a formality: with the lowest factor left out of the computed ones, the
    inertia of K + s Kg counts one more factor below the shift than were computed."""
    from fem.analysis.buckling import axial_forces, geometric_matrix, sturm_check
    from fem.analysis.soundness import examine
    from fem.analysis.static import factorise, solve_static

    model = column(4)
    asm, _ = examine(model)
    st = solve_static(model, asm, model.cases[0], factorise(model, asm))
    f = asm.free
    K = asm.K[f][:, f].tocsc()
    G = geometric_matrix(model, asm, axial_forces(st.member_forces))[f][:, f].tocsc()
    import scipy.linalg as sla

    theta = sla.eigh(-G.toarray(), K.toarray(), eigvals_only=True)
    lam = np.sort(1 / theta[theta > 0])
    _, count, expected = sturm_check(K, G, lam, 3, True)
    assert count == expected
    _, count, expected = sturm_check(K, G, lam[1:], 2, True)      # the lowest one missed
    assert count == expected + 1


def test_released_ends_take_the_condensed_geometric_stiffness():
    """A column on fixed supports whose end members release their bending rotations at the
    supports is a pinned-pinned column, P_cr = pi^2 E I / L^2 (Timoshenko and Gere, sec. 2.2):
    the released ends' Kg is condensed with the stiffness's static transform. The condensed end
    element keeps the h^4 convergence (measured 5.7e-4, 3.3e-5, 2.1e-6 at 4, 8, 16 elements), so
    the bound of the module docstring, 0.2 / n^4, holds."""
    n, L = 8, 4.0
    lines = list(HEAD)
    lines += [f"node N{k} = (0, 0, {L * k / n} m)" for k in range(n + 1)]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam C S" + (" release i (ry, rz)" if k == 0 else "")
              + (" release j (ry, rz)" if k == n - 1 else "") for k in range(n)]
    lines += ["support N0 fixed", f"support N{n} (ux, uy, rx, ry, rz)",
              f"case P static {{ force N{n} = (0, 0, -1 kN) }}", "case B buckling { loading = P, count = 1 }"]
    r = fem.solve(read_text("\n".join(lines)))
    b = r["B"]
    np.testing.assert_allclose(b.axial, -1e3, rtol=1e-9)
    assert r.checks.passed["B"]
    assert b.factors[0] * 1e3 == pytest.approx(np.pi**2 * E * I / L**2, rel=0.2 / n**4)
