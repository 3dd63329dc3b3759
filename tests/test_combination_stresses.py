"""Member stresses of combinations and envelopes (fem/analysis/stress_field.py,
fem/output/stress_demands.py) against hand formulas and numpy.

Sources: Gere & Goodno, Mechanics of Materials, 8th ed. (combined loadings sigma = N/A +/- My/Wy
+/- Mz/Wz, ch. 8; wL^2/8 at midspan of a simply supported beam and the cantilever's tip stiffness
3EI/L^3, Appendix G); Chopra, Dynamics of Structures, 4th ed., ch. 13 (a mode's equivalent
static forces f_jk = m_j phi_jk Gamma_k A_k; SRSS and CQC of the modal responses, with the
correlation of Der Kiureghian (1981) computed here with numpy).

Tolerances: the Euler-Bernoulli element's end forces are exact for tip loads and uniform line
loads and the extremes along a member are closed form, so static values agree to round-off
(1e-9 relative); values built on eigenvectors agree to their residual (1e-6).
"""

import csv
import json

import numpy as np
import pytest
from shared_decks import TWO_MASS_COLUMN

import fem
from fem.analysis.stress_field import COLUMNS

E = 200e9


def _solve(text):
    return fem.solve(fem.read_text(text))


CANTILEVER = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3, yield = 355 MPa }
section P = rect(b = 100 mm, h = 200 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
case AX static { force B = (10 kN, 0, 0) }
case BEND static { force B = (0, 2 kN, -5 kN) }
combo C = 1.0*AX + 1.0*BEND
envelope E over C
envelope E2 over C, AX, BEND
"""


def test_static_parts_are_the_stresses_of_the_summed_forces():
    """An envelope over a static combination and its cases: the combination's normal stresses
    are N/A + My/Wy + Mz/Wz at the fixed end's corners (Gere & Goodno ch. 8), equal to the summed
    case's own exact stresses to round-off (linearity); the governing corner is where the signs
    of z My and -y Mz are both positive."""
    r = _solve(CANTILEVER)
    b, s = r["E"].fields["stress"], r.stresses["C"]
    A, Wy, Wz, L = 0.1 * 0.2, 0.1 * 0.2**2 / 6, 0.2 * 0.1**2 / 6, 2.0
    hand = 10e3 / A + 5e3 * L / Wy + 2e3 * L / Wz
    assert b.max[0, 0] == pytest.approx(hand, rel=1e-9)
    assert b.min[0, 0] == pytest.approx(10e3 / A - 5e3 * L / Wy - 2e3 * L / Wz, rel=1e-9)
    np.testing.assert_allclose([b.max[0, 0], b.min[0, 0], b.max[0, 1]], [s.sigma_max[0], s.sigma_min[0], s.mises[0]],
                               rtol=1e-12)
    assert b.max[0, 2] == pytest.approx(s.mises[0] / 355e6, rel=1e-12) and b.min[0, 1] == -b.max[0, 1]
    # over the cases too: the largest is the combination's, the smallest the bending case's alone
    b2 = r["E2"].fields["stress"]
    assert r["E2"].over[b2.max_by[0, 0]] == "C" and r["E2"].over[b2.min_by[0, 0]] == "BEND"
    assert b2.min[0, 0] == pytest.approx(-5e3 * L / Wy - 2e3 * L / Wz, rel=1e-9)
    # internal actions at x = 0 are minus the forces at end i: the corner of the largest stress
    F = r["C"].member_forces[0]
    from fem.analysis.stress_field import point_name

    want = f"corner {'+' if F[5] > 0 else '-'}y {'+' if -F[4] > 0 else '-'}z"
    assert point_name(r.model, 0, int(b.point_max[0, 0])) == want
    assert point_name(r.model, 0, int(b2.point_max[0, 0])) == want


SUPPORTED = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = rect(b = 100 mm, h = 200 mm)
node A = (0, 0, 0)
node B = (6 m, 0, 0)
member M : A -> B beam P S
support A (ux, uy, uz, rx)
support B (uy, uz)
case U1 static { line M = (0, 0, -3 kN/m) }
case U2 static { line M = (0, 0, -1 kN/m) }
combo C = 1.0*U1 + 1.0*U2
envelope E over C
"""


def test_static_maximum_inside_the_member():
    """The summed line loads' wL^2/8 at midspan (Gere & Goodno Appendix G), where the ends carry
    no moment: the largest stress is found inside the member in closed form."""
    r = _solve(SUPPORTED)
    b = r["E"].fields["stress"]
    W = 0.1 * 0.2**2 / 6
    assert b.max[0, 0] == pytest.approx(4e3 * 36 / 8 / W, rel=1e-9)
    assert b.min[0, 0] == pytest.approx(-4e3 * 36 / 8 / W, rel=1e-9)


SPECTRUM = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3, yield = 355 MPa }
""" + TWO_MASS_COLUMN + """case G static { force C = (0, 0, -50 kN) }
case MODES modes { count = 6 }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 1, 0),
                   combine = RULE, damping = 5 percent }
combo D = 1.0*G + 1.0*EQ
envelope ENV over G, EQ, D
"""


@pytest.mark.parametrize("rule", ["srss", "cqc"])
def test_spectrum_combination_adds_per_mode_stresses_with_both_signs(rule):
    """Two lateral modes of a two-mass column under an axial load: at the base, the static
    -P/A at every corner plus and minus the per-mode base stresses M_k c/I combined by SRSS or
    CQC (Chopra ch. 13), computed by hand here from the modes."""
    r = _solve(SPECTRUM.replace("RULE", rule))
    sp, modal = r["EQ"], r["MODES"]
    phi = modal.shapes
    m = np.array([0.0, 2000.0, 1000.0])
    z = np.array([0.0, 3.0, 6.0])
    gamma = (m[:, None] * phi[:, 1, :]).sum(axis=0)
    f = m[:, None] * phi[:, 1, :] * gamma * sp.sa[0]
    M_base = (f * z[:, None]).sum(axis=0)
    sec = r.model.sections["P"].props
    per_mode = np.array([M_base / sec.Wy, M_base / sec.Wz])
    if rule == "srss":
        combined = np.sqrt((per_mode**2).sum(axis=1))
    else:
        w, zeta = modal.modes.omega, 0.05
        rr = w[None, :] / w[:, None]
        rho = 8 * zeta**2 * (1 + rr) * rr**1.5 / ((1 - rr**2) ** 2 + 4 * zeta**2 * rr * (1 + rr) ** 2)
        combined = np.sqrt(np.einsum("ai,ij,aj->a", per_mode, rho, per_mode))
    axial = -50e3 / sec.A
    b = r["D"].fields["stress"]
    k = r.model.member_names.index("M1")
    assert min(abs(b.max[k, 0] - (axial + c)) / c for c in combined) < 1e-6
    assert min(abs(b.min[k, 0] - (axial - c)) / c for c in combined) < 1e-6
    assert np.isnan(b.max_by).all()                         # no history part: no time governs
    # the equivalent stress bounds the larger normal size; the ratio is it over the yield
    assert b.max[k, 1] >= abs(b.min[k, 0]) and b.max[k, 2] == pytest.approx(b.max[k, 1] / 355e6, rel=1e-12)


def test_envelope_is_the_largest_and_smallest_over_its_cases():
    """Envelope bounds against max/min taken by hand over the component cases' own stresses
    (the static case's exact ones, the spectrum's +/- combined peaks, the combination's)."""
    r = _solve(SPECTRUM.replace("RULE", "srss"))
    g, eq, d = r.stresses["G"], r.stresses["EQ"], r["D"].fields["stress"]
    env = r["ENV"].fields["stress"]
    hi = np.stack([g.sigma_max, eq.sigma_max, d.max[:, 0]])
    lo = np.stack([g.sigma_min, eq.sigma_min, d.min[:, 0]])
    vm = np.stack([g.mises, eq.mises, d.max[:, 1]])
    np.testing.assert_allclose(env.max[:, 0], hi.max(0), rtol=1e-12)
    np.testing.assert_allclose(env.min[:, 0], lo.min(0), rtol=1e-12)
    np.testing.assert_allclose(env.max[:, 1], vm.max(0), rtol=1e-12)
    np.testing.assert_array_equal(env.max_by[:, 1], vm.argmax(0))
    np.testing.assert_array_equal(env.max_by[:, 0], hi.argmax(0))
    assert [r["ENV"].over[i] for i in env.max_by[:, 1]] == ["D", "D"]


HISTORY = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3, yield = 355 MPa }
section Q = rect(b = 60 mm, h = 60 mm)
node A = (0, 0, 0)
node B = (1.5 m, 0, 0)
member M : A -> B beam Q S
support A fixed
mass B = 200 kg
case PULL static { force B = (5 kN, 0, 0) }
case MODES modes { count = 3 }
case HIT history { force B = (0, 2 kN, 0), time = halfsine(0.05 s), duration = 0.5 s, step = 0.001 s,
                   damping = 2 percent }
combo C = 1.0*PULL + 1.0*HIT
combo C2 = 1.0*PULL - 0.5*HIT
"""


@pytest.mark.parametrize("name, factor", [("C", 1.0), ("C2", -0.5)])
def test_history_with_a_static_case_is_the_time_series_plus_the_static_result(name, factor):
    """Static plus the time series, step by step, then the peaks: the base stress of a square
    cantilever P/A +/- factor * 3 E u(t) c/L^2 (tip force 3EI u/L^3 times L over I/c, Gere &
    Goodno Appendix G) from the recorded tip deflection, computed with numpy; its time."""
    r = _solve(HISTORY)
    h = r["HIT"]
    c, L, A = 0.03, 1.5, 0.06**2
    bend = factor * 3 * E * h.u[:, 1, 1] * c / L**2
    series_hi = 5e3 / A + np.abs(bend)                   # a square's corners see +/- the bending
    series_lo = 5e3 / A - np.abs(bend)
    b = r[name].fields["stress"]
    assert b.max[0, 0] == pytest.approx(series_hi.max(), rel=1e-6)
    assert b.min[0, 0] == pytest.approx(series_lo.min(), rel=1e-6)
    assert b.max_by[0, 0] == pytest.approx(h.t[series_hi.argmax()], abs=1e-12)


def test_a_dynamic_peak_inside_a_member_is_bounded():
    """A static line load with a spectrum peak: the combination never falls below the static
    case's own largest stress inside the member nor below static plus peak at either end."""
    text = SPECTRUM.replace("RULE", "srss").replace("case G static { force C = (0, 0, -50 kN) }",
                                                    "case G static { line M1 = (20 kN/m, 0, 0) }")
    r = _solve(text)
    g, eq, d = r.stresses["G"], r.stresses["EQ"], r["D"].fields["stress"]
    assert np.all(d.max[:, 0] >= g.sigma_max * (1 - 1e-12))
    ends = np.nanmax(eq.points, axis=(1, 2))
    assert np.all(d.max[:, 0] >= ends - 1e-9 * ends.max())
    assert np.all(d.max[:, 0] <= g.sigma_max + ends * (1 + 1e-12))    # and never more than the sum of the two


def test_outputs_carry_the_governing_members(tmp_path, capsys):
    """results.json `fields.stress`, extremes_stresses.csv and the summary hold the same
    governing member, point and ratio as the results."""
    from fem.analysis.stress_field import point_name
    from fem.output.results_json import write_results_json
    from fem.output.summary import print_solved
    from fem.output.tables import write_tables

    r = _solve(SPECTRUM.replace("RULE", "srss"))
    out = tmp_path / "out"
    out.mkdir()
    write_tables(r, out)
    write_results_json(r, out)
    doc = json.loads((out / "results.json").read_text())
    d = next(c for c in doc["demands"] if c["name"] == "D")
    block = d["fields"]["stress"]
    b = r["D"].fields["stress"]
    k = int(np.nanargmax(b.max[:, 2]))
    assert block["columns"] == list(COLUMNS)
    assert block["governing"]["ratio"]["member"] == r.model.member_names[k]
    assert block["governing"]["ratio"]["ratio_to_yield"] == b.max[k, 2]
    assert block["governing_members"][0]["member"] == r.model.member_names[k]
    assert block["governing"]["ratio"]["mises_point"].startswith("corner ")
    env = next(c for c in doc["demands"] if c["name"] == "ENV")["fields"]["stress"]
    assert env["governing"]["mises"]["mises_case"] == "D"
    rows = list(csv.DictReader((out / "extremes_stresses.csv").open()))
    assert len(rows) == 2 * 2
    row = next(x for x in rows if x["result"] == "D" and x["member"] == r.model.member_names[k])
    assert float(row["mises_Pa"]) == b.max[k, 1] and float(row["ratio_to_yield"]) == b.max[k, 2]
    capsys.readouterr()
    print_solved(r)
    text = capsys.readouterr().out
    pt = point_name(r.model, k, int(b.point_max[k, 1]))
    assert f"stresses: governing member {r.model.member_names[k]} (P, {pt}), equivalent {b.max[k, 1] * 1e-6:.4g} MPa" in text
    assert f"{b.max[k, 2]:.3g} of yield (a plain ratio, not a code check)" in text


GUYED = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3, yield = 355 MPa }
section C = rect(b = 100 mm, h = 100 mm)
section G = round(d = 12 mm)
node B = (0, 0, 0)
node TOP = (0, 0, 4 m)
node AL = (-3 m, 0, 0)
node AR = (3 m, 0, 0)
member M : B -> TOP beam C S
member G1 : TOP -> AL truss G S pretension = 20 kN
member G2 : TOP -> AR truss G S pretension = 20 kN
support B pinned
support B (rz)
support AL fixed
support AR fixed
support TOP (uy)
mass TOP = 500 kg
case W static { force TOP = (0, 0, -2 kN) }
case MO modes { count = 4 }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 0), combine = srss,
                   damping = 5 percent }
combo S2 = 2.0*W
combo D = 2.0*W + 1.0*EQ
"""


def test_pretensioned_model_adds_its_state_once():
    """With pretensioned guys, a combination with a dynamic case adds the pretension state once
    (as the static combination 2.0*W does: the state plus twice W's change from it), then the
    spectrum's peaks with both signs; its stresses bound the static combination's."""
    r = _solve(GUYED)
    s2, eq, d = r["S2"], r["EQ"], r["D"]
    ef = d.fields["end_force"]
    np.testing.assert_allclose(ef.max, s2.member_forces + eq.member_forces, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(ef.min, s2.member_forces - eq.member_forces, rtol=1e-12, atol=1e-9)
    assert d.terms[-1][1] == "(pretension state)" and r.checks.passed["D"] and r.checks.passed["S2"]
    assert d.static.equilibrium == s2.equilibrium
    st = d.fields["stress"]
    assert np.all(st.max[:, 0] >= r.stresses["S2"].sigma_max * (1 - 1e-12))


HARMONIC = HISTORY.replace("""case HIT history { force B = (0, 2 kN, 0), time = halfsine(0.05 s), duration = 0.5 s, step = 0.001 s,
                   damping = 2 percent }
combo C = 1.0*PULL + 1.0*HIT
combo C2 = 1.0*PULL - 0.5*HIT""", """case RUN harmonic { force B = (0, 1 kN, 0), from = 2 Hz, to = 8 Hz, points = 50, damping = 2 percent }
combo C = 1.0*PULL - 2.0*RUN""")


def test_harmonic_with_a_static_case_is_the_static_plus_and_minus_its_amplitude():
    """s +/- |factor| A at each point: the base of a square cantilever P/A +/- 2 * 3 E |u| c/L^2
    with |u| the largest tip amplitude over the sweep (Gere & Goodno Appendix G, tip stiffness
    3EI/L^3), with numpy."""
    r = _solve(HARMONIC)
    h = r["RUN"]
    amp = 2 * 3 * E * np.abs(h.u[:, 1, 1]).max() * 0.03 / 1.5**2
    b = r["C"].fields["stress"]
    assert b.max[0, 0] == pytest.approx(5e3 / 0.06**2 + amp, rel=1e-6)
    assert b.min[0, 0] == pytest.approx(5e3 / 0.06**2 - amp, rel=1e-6)


PORTAL = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3, yield = 355 MPa }
section P = rect(b = 150 mm, h = 250 mm)
section K = rect(b = 60 mm, h = 60 mm)
node A = (0, 0, 0)
node B = (0, 0, 4 m)
node C = (6 m, 0, 4 m)
node D = (6 m, 0, 0)
member L : A -> B beam K S
member T : B -> C beam P S
member R : D -> C beam K S
support A fixed
support D fixed
mass B = 4 t
mass C = 2 t
case G static { line T = (0, 0, -30 kN/m) }
case MODES modes { count = 6 }
case EQ spectrum { curve = plateau(0.3 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 0), combine = srss,
                   damping = 5 percent }
combo D1 = 1.0*G + 1.0*EQ
"""


def test_the_peak_inside_a_member_is_bounded_closely():
    """A portal's stiff beam on slender columns under gravity (the largest stress inside the
    span) and a sway spectrum: the true peak, static plus and minus the SRSS over the modes of
    each mode's stress (per-mode end forces from the modes with Chopra ch. 13's peaks, the
    stresses along the beam by statics from the end forces, numpy), sampled at 2001 stations at
    the four corners, is never above the combination's bound, and the bound exceeds it by no
    more than the gap between the SRSS and its chords over eighths of the beam (sampled too)."""
    from fem.analysis.modal_case import field_responses
    from fem.analysis.soundness import examine

    r = _solve(PORTAL)
    model = r.model
    asm, _ = examine(model)
    modal, sp = r["MODES"], r["EQ"]
    shapes = modal.shapes.reshape(6 * model.n_nodes, -1)
    rx = np.zeros((model.n_nodes, 6))
    rx[:, 0] = 1.0
    gamma = shapes.T @ (asm.M @ rx.ravel())
    U = (shapes * (gamma * sp.sa[0] / modal.modes.omega**2)).T            # (k, 6n) modal peaks
    _, Fm = field_responses(model, asm, U)                                   # (k, e, 12)
    j = model.member_names.index("T")
    np.testing.assert_allclose(np.sqrt((Fm[:, j] ** 2).sum(0)), sp.member_forces[j], rtol=1e-9, atol=1e-6)
    x = np.linspace(0.0, 6.0, 2001)
    sec = model.sections["P"].props

    def stress(F, q, y, z):          # sigma(x) at (y, z) from the forces at end i and a line load q (local)
        N = -F[0] - q[0] * x
        My = -F[4] - F[2] * x - q[2] * x**2 / 2
        Mz = -F[5] + F[1] * x + q[1] * x**2 / 2
        return N / sec.A + My * z / sec.Iy - Mz * y / sec.Iz

    Fs, q = r["G"].member_forces[j], (0.0, 0.0, -30e3)       # the beam's local z is global Z here
    assert stress(Fs, q, 0.075, 0.125)[-1] == pytest.approx(
        Fs[6] / sec.A + Fs[10] * 0.125 / sec.Iy - Fs[11] * 0.075 / sec.Iz, rel=1e-9)
    hi, lo, gap, at = -np.inf, np.inf, 0.0, None
    eighths = np.linspace(0.0, 6.0, 9)
    for y in (0.075, -0.075):
        for z in (0.125, -0.125):
            s = stress(Fs, q, y, z)
            d = np.sqrt(sum(stress(Fm[k, j], (0, 0, 0), y, z) ** 2 for k in range(len(Fm))))
            gap = max(gap, (np.interp(x, eighths, np.interp(eighths, x, d)) - d).max())
            if (s + d).max() > hi:
                hi, at = (s + d).max(), x[(s + d).argmax()]
            lo = min(lo, (s - d).min())
    assert 1.0 < at < 5.0                                    # the peak is well inside the span
    b = r["D1"].fields["stress"]
    assert hi * (1 - 1e-9) <= b.max[j, 0] <= hi + gap + 1e-9 * hi
    assert lo - gap - 1e-9 * abs(lo) <= b.min[j, 0] <= lo * (1 - 1e-9)


def test_no_yield_and_no_stress_points_give_nulls(tmp_path, capsys):
    """Without a yield strength the ratio is null and members rank by equivalent stress; a
    generic section without Wy, Wz has no stresses (null, empty cells), and results.json stays
    strict JSON."""
    from fem.output.results_json import write_results_json
    from fem.output.summary import print_solved
    from fem.output.tables import write_tables

    text = SPECTRUM.replace("RULE", "srss").replace(", yield = 355 MPa", "").replace(
        "member M2 : B -> C beam P S", "section X = generic(A = 0.02 m^2, Iy = 1e-4 m^4, Iz = 1e-4 m^4, J = 1e-4 m^4)\n"
        "member M2 : B -> C beam X S")
    r = _solve(text)
    out = tmp_path / "out"
    out.mkdir()
    write_tables(r, out)
    write_results_json(r, out)
    doc = json.loads((out / "results.json").read_text(), parse_constant=lambda c: pytest.fail(f"{c} in results.json"))
    block = next(c for c in doc["demands"] if c["name"] == "D")["fields"]["stress"]
    assert block["members"]["M2"]["mises_Pa"] is None and block["members"]["M1"]["ratio_to_yield"] is None
    assert [m["member"] for m in block["governing_members"]] == ["M1"] and "ratio" not in block["governing"]
    row = next(x for x in csv.DictReader((out / "extremes_stresses.csv").open()) if x["member"] == "M2")
    assert row["mises_Pa"] == "" and row["ratio_to_yield"] == ""
    capsys.readouterr()
    print_solved(r)
    text = capsys.readouterr().out
    assert "stresses: governing member M1 (P, corner " in text
    assert "next by" not in text and "of yield" not in text.split("  D ")[-1]   # one member, no ratio


ROUND = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section R = round(d = 60 mm)
node A = (0, 0, 0)
node B = (1.5 m, 0, 0)
member M : A -> B beam R S
support A fixed
case Y static { force B = (0, 1 kN, 0) }
case Z static { force B = (0, 0, -1 kN) }
"""


@pytest.mark.parametrize("case, fibre", [("Y", "outline at 180 deg from +y towards +z"),
                                          ("Z", "outline at 90 deg from +y towards +z")])
def test_a_case_names_its_governing_fibre(case, fibre):
    """A cantilever along X pushed along +Y at its tip is stretched at the root on its -y side;
    pushed down (-Z), on its top, +z (beam bending: the convex side is in tension, Gere & Goodno
    ch. 5); a rectangle names its corner likewise."""
    from fem.analysis.stress_field import point_name

    r = _solve(ROUND)
    assert r.model.member_names == ["M"]
    assert point_name(r.model, 0, int(r.stresses[case].point[0])) == fibre
    r = _solve(CANTILEVER)
    F = r["C"].member_forces[0]
    want = f"corner {'+' if F[5] > 0 else '-'}y {'+' if -F[4] > 0 else '-'}z"
    assert point_name(r.model, 0, int(r.stresses["C"].point[0])) == want


def test_peaks_known_at_different_stations_combine():
    """A harmonic case no combination adds keeps its amplitudes at the member ends only; added
    through the API to a spectrum case (eighth points), it is taken on chords between the ends:
    never below the same combination with both at eighth points, and equal where the largest
    stress is at an end (a cantilever column's base)."""
    from fem.analysis.stress_field import combination_stresses

    run = "case RUN harmonic { force C = (0, 1 kN, 0), from = 1 Hz, to = 5 Hz, points = 20, damping = 2 percent }\n"
    base = SPECTRUM.replace("RULE", "srss").replace("combo D = 1.0*G + 1.0*EQ\nenvelope ENV over G, EQ, D\n", run)
    alone = _solve(base)
    added = _solve(base + "combo X = 1.0*EQ - 1.5*RUN\n")
    assert alone.stresses["RUN"].points.shape[1] == 2 and added.stresses["RUN"].points.shape[1] == 9
    coarse = combination_stresses(alone.model, [(1.0, alone["EQ"]), (-1.5, alone["RUN"])], None, {})
    fine = added["X"].fields["stress"]
    assert np.all(coarse.max >= fine.max - 1e-9 * np.abs(fine.max).max())
    k = alone.model.member_names.index("M1")
    np.testing.assert_allclose(coarse.max[k], fine.max[k], rtol=1e-12)
    np.testing.assert_allclose(coarse.min[k], fine.min[k], rtol=1e-12)
