"""Member stresses (fem/analysis/stress.py, fem/sections/points.py) against hand formulas.

Sources: Gere & Goodno, Mechanics of Materials, 8th ed. (flexure and combined loadings
sigma = N/A +/- My/Wy +/- Mz/Wz, ch. 5, 6 and 8; torsion of round bars tau = T r/J, ch. 3;
beam tables: wL^2/8 at midspan of a simply supported beam, 9wL^2/128 at 3L/8 from the pinned end
of a propped cantilever, Appendix G); Roark, Formulas for Stress and Strain, 7th ed., Table 10.1
(thin-walled closed tube tau = T/(2 A_m t); a square bar tau = T/(0.208 a^3)) (table numbers
from memory); Chopra, Dynamics of Structures, 4th ed., ch. 13 (equivalent static forces of a
mode, f_jk = m_j phi_jk Gamma_k A_k) and the CQC correlation of Der Kiureghian (1981).

Tolerances: the Euler-Bernoulli element's end forces are exact for point loads and uniform line
loads, and the stress stations are closed form, so hand values agree to round-off (1e-9
relative); responses built on eigenvectors agree to their residual (1e-6).
"""

import numpy as np
import pytest
from shared_decks import TWO_MASS_COLUMN

import fem
from fem.analysis.stress import member_stresses

E = 200e9


def _solve(text):
    return fem.solve(fem.read_text(text))


CANTILEVER = """
material S {{ E = 200 GPa, nu = 0.3, density = 0 kg/m^3, yield = 355 MPa }}
section P = {section}
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
case TIP static {{ force B = ({N} kN, {Vy} kN, {Vz} kN), moment B = ({T} kN*m, 0, 0) }}
"""


def test_rectangle_cantilever_combined_normal_stress():
    """sigma_max = N/A + My/Wy + Mz/Wz at the fixed end (Gere & Goodno ch. 8, combined loadings);
    the smallest is N/A - My/Wy - Mz/Wz; the largest lies at x = 0."""
    r = _solve(CANTILEVER.format(section="rect(b = 100 mm, h = 200 mm)", N=10, Vy=2, Vz=-5, T=0))
    s = r.stresses["TIP"]
    A, Wy, Wz, L = 0.1 * 0.2, 0.1 * 0.2**2 / 6, 0.2 * 0.1**2 / 6, 2.0
    My, Mz = 5e3 * L, 2e3 * L
    assert s.basis == "exact"
    assert s.sigma_max[0] == pytest.approx(10e3 / A + My / Wy + Mz / Wz, rel=1e-9)
    assert s.sigma_min[0] == pytest.approx(10e3 / A - My / Wy - Mz / Wz, rel=1e-9)
    assert s.bending_y[0] == pytest.approx(My / Wy, rel=1e-9)
    assert s.bending_z[0] == pytest.approx(Mz / Wz, rel=1e-9)
    assert s.x[0] == pytest.approx(0.0, abs=1e-12)
    # shear: 1.5 V/A for a rectangle (Gere & Goodno ch. 5), from both shear forces
    assert s.shear[0] == pytest.approx(1.5 * (2e3 + 5e3) / A, rel=1e-9)
    assert s.ratio[0] == pytest.approx(s.mises[0] / 355e6, rel=1e-12)
    # the equivalent stress is the upper bound sqrt(sigma^2 + 3 tau^2) of the module docstring
    assert s.mises[0] == pytest.approx(np.hypot(s.sigma_max[0], np.sqrt(3) * s.tau[0]), rel=1e-12)


def test_round_bar_torsion_and_inclined_bending():
    """tau = T r/J = 16 T/(pi d^3) (Gere & Goodno ch. 3); a round bar bent about both axes has
    sigma = N/A + sqrt(My^2 + Mz^2)/W, W = pi d^3/32 (the resultant moment; Gere & Goodno ch. 6)."""
    r = _solve(CANTILEVER.format(section="round(d = 60 mm)", N=0, Vy=3, Vz=4, T=1.5))
    s = r.stresses["TIP"]
    d = 0.06
    assert s.torsion[0] == pytest.approx(16 * 1.5e3 / (np.pi * d**3), rel=1e-9)
    assert s.sigma_max[0] == pytest.approx(5e3 * 2.0 / (np.pi * d**3 / 32), rel=1e-9)


def test_pipe_and_tube_torsion():
    """Pipe: tau = T (D/2)/J, J = pi (D^4 - d^4)/32 (Gere & Goodno ch. 3). Rectangular tube:
    Bredt's tau = T/(2 A_m t), A_m = (b - t)(h - t) on the midline (Roark Table 10.1)."""
    r = _solve(CANTILEVER.format(section="pipe(od = 114.3 mm, wall = 6 mm)", N=0, Vy=0, Vz=0, T=2))
    D, d = 0.1143, 0.1143 - 0.012
    assert r.stresses["TIP"].torsion[0] == pytest.approx(2e3 * D / 2 / (np.pi * (D**4 - d**4) / 32), rel=1e-9)
    r = _solve(CANTILEVER.format(section="rhs(b = 100 mm, h = 150 mm, t = 5 mm)", N=0, Vy=0, Vz=0, T=2))
    assert r.stresses["TIP"].torsion[0] == pytest.approx(2e3 / (2 * 0.095 * 0.145 * 0.005), rel=1e-9)


def test_square_bar_torsion_against_roark_coefficient():
    """A square bar a x a: tau_max = T/(0.208 a^3) (Roark Table 10.1, from the Saint-Venant
    solution; the coefficient is printed to 3 figures, hence 0.2 %)."""
    r = _solve(CANTILEVER.format(section="rect(b = 50 mm, h = 50 mm)", N=0, Vy=0, Vz=0, T=1))
    assert r.stresses["TIP"].torsion[0] == pytest.approx(1e3 / (0.208 * 0.05**3), rel=2e-3)


def test_ishape_web_shear_and_flange_corners():
    """I shape: the corners (+/- bf/2, +/- d/2) carry N/A + My/Wy + Mz/Wz with Wy = 2Iy/d and
    Wz = 2Iz/bf; web shear V Q/(I t), Q = bf tf (d - tf)/2 + tw (d/2 - tf)^2/2 (Gere & Goodno ch. 5)."""
    r = _solve(CANTILEVER.format(section="ishape(d = 300 mm, bf = 150 mm, tf = 10 mm, tw = 7 mm)",
                                 N=-20, Vy=1, Vz=-8, T=0))
    s = r.stresses["TIP"]
    sec = r.model.sections["P"].props
    d, bf, tf, tw = 0.3, 0.15, 0.01, 0.007
    Q = bf * tf * (d - tf) / 2 + tw * (d / 2 - tf) ** 2 / 2
    assert s.sigma_min[0] == pytest.approx(-20e3 / sec.A - 16e3 / sec.Wy - 2e3 / sec.Wz, rel=1e-9)
    # shear at an end: web shear from Vz plus flange shear from Vy = bf^2/(8 Iz) per unit Vy
    assert s.shear[0] == pytest.approx(8e3 * Q / (sec.Iy * tw) + 1e3 * bf**2 / (8 * sec.Iz), rel=1e-9)


SUPPORTED = """
material S {{ E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }}
section P = rect(b = 100 mm, h = 200 mm)
node A = (0, 0, 0)
node B = (6 m, 0, 0)
member M : A -> B beam P S
support A {a}
support B {b}
case UDL static {{ line M = (0, 0, -4 kN/m) }}
"""


def test_simply_supported_udl_maximum_inside_the_member():
    """wL^2/8 at midspan (Gere & Goodno Appendix G): the ends carry no moment, the largest
    bending stress lies inside the member, found in closed form at x = L/2."""
    r = _solve(SUPPORTED.format(a="(ux, uy, uz, rx)", b="(uy, uz)"))
    s = r.stresses["UDL"]
    W = 0.1 * 0.2**2 / 6
    assert s.bending_y[0] == pytest.approx(4e3 * 36 / 8 / W, rel=1e-9)
    assert s.sigma_max[0] == pytest.approx(4e3 * 36 / 8 / W, rel=1e-9)
    assert s.x[0] == pytest.approx(3.0, rel=1e-9)


def test_propped_cantilever_span_moment_position():
    """Fixed at A, pinned at B: the span moment 9wL^2/128 at 3L/8 from the pinned end, the fixed
    end moment wL^2/8 (Gere & Goodno Appendix G); the section stresses follow M/W."""
    r = _solve(SUPPORTED.format(a="fixed", b="(uy, uz)"))
    W, w, L = 0.1 * 0.2**2 / 6, 4e3, 6.0
    F = r["UDL"].member_forces
    wl = np.array([[0.0, 0.0, -w]])
    s = member_stresses(r.model, F, wl)
    assert s.bending_y[0] == pytest.approx(w * L**2 / 8 / W, rel=1e-9)      # fixed end governs |M|
    # the span moment is found among the stations in closed form: My is positive where the top
    # fibre (+z) is in tension, so the sagging span moment is its most negative value
    from fem.analysis.stress import _actions_at, _stations, section_table

    tab = section_table(r.model)
    x = _stations(F, wl, r.model.lengths, tab)
    _, My, _ = _actions_at(F, wl, x)
    k = np.argmin(My[0])
    assert -My[0, k] == pytest.approx(9 * w * L**2 / 128, rel=1e-9)
    assert x[0, k] == pytest.approx(L - 3 * L / 8, rel=1e-9)


def test_internal_actions_reach_the_far_end_forces():
    """Equilibrium of the whole member: the actions carried to x = L equal the end forces at j
    (a check of the sign conventions, under a line load in all three directions)."""
    r = _solve(SUPPORTED.format(a="fixed", b="fixed").replace("(0, 0, -4 kN/m)", "(1 kN/m, 2 kN/m, -4 kN/m)"))
    F = r["UDL"].member_forces
    from fem.analysis.stress import _actions_at

    w = np.array([[1e3, 2e3, -4e3]])
    N, My, Mz = _actions_at(F, w, np.array([[6.0]]))
    scale = np.abs(F).max()
    assert N[0, 0] == pytest.approx(F[0, 6], abs=1e-9 * scale)
    assert My[0, 0] == pytest.approx(F[0, 10], abs=1e-9 * scale)
    assert Mz[0, 0] == pytest.approx(F[0, 11], abs=1e-9 * scale)


PORTAL = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = ishape(d = 300 mm, bf = 300 mm, tf = 19 mm, tw = 11 mm)
node A = (0, 0, 0)
node B = (0, 0, 4 m)
node C = (6 m, 0, 4 m)
node D = (6 m, 0, 0)
member L : A -> B beam C S
member T : B -> C beam C S
member R : D -> C beam C S
support A pinned
support D pinned
support * (uy, rx, rz)
case SWAY static { force B = (5 kN, 0, 0), force C = (5 kN, 0, 0) }
"""


def test_portal_frame_columns_against_hand_statics():
    """A symmetric portal with pinned column bases under a sway load H shared by the two column
    tops: by antisymmetry each base takes H/2, so each column top carries M = H h/2, and the
    overturning gives the columns N = +/- H h/L (frame statics by equilibrium, common practice).
    Column stress sigma = |N|/A + M/W at the top (Gere & Goodno ch. 8)."""
    r = _solve(PORTAL)
    s = r.stresses["SWAY"]
    sec = r.model.sections["C"].props
    H, h, L = 10e3, 4.0, 6.0
    M = H / 2 * h
    N = H * h / L
    k = r.model.member_names.index("L")
    big = max(abs(s.sigma_max[k]), abs(s.sigma_min[k]))
    W = sec.Wy if abs(s.bending_y[k]) > abs(s.bending_z[k]) else sec.Wz
    assert big == pytest.approx(N / sec.A + M / W, rel=1e-9)


SPECTRUM = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
""" + TWO_MASS_COLUMN + """case MODES modes { count = 6 }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 1, 0),
                   combine = RULE, damping = 5 percent }
"""


@pytest.mark.parametrize("rule", ["srss", "cqc"])
def test_spectrum_stresses_are_per_mode_stresses_combined(rule):
    """Two lateral modes of a two-mass column: per mode, the equivalent static forces
    f_jk = m_j phi_jk Gamma_k A_k (Chopra ch. 13) give the base moment sum f_jk z_j and the
    stress M/W at the base; combined by SRSS, or by CQC with Der Kiureghian's correlation
    computed here with numpy."""
    r = _solve(SPECTRUM.replace("RULE", rule))
    sp, modal = r["EQ"], r["MODES"]
    phi = modal.shapes                                          # (n, 6, k) mass-normalised
    m = np.array([0.0, 2000.0, 1000.0])
    z = np.array([0.0, 3.0, 6.0])
    gamma = (m[:, None] * phi[:, 1, :]).sum(axis=0)             # phi^T M r, r along Y
    sa = sp.sa[0]                                               # (k,) m/s^2 at each mode
    f = m[:, None] * phi[:, 1, :] * gamma * sa                  # (n, k)
    M_base = (f * z[:, None]).sum(axis=0)
    # the column bends about its local axis whose W the Y direction uses: take both and the match
    sec = r.model.sections["P"].props
    per_mode = np.array([M_base / sec.Wy, M_base / sec.Wz])
    if rule == "srss":
        combined = np.sqrt((per_mode**2).sum(axis=1))
    else:
        w, zeta = modal.modes.omega, np.full(len(sa), 0.05)
        rr = w[None, :] / w[:, None]
        rho = 8 * zeta[0] ** 2 * (1 + rr) * rr**1.5 / ((1 - rr**2) ** 2 + 4 * zeta[0] ** 2 * rr * (1 + rr) ** 2)
        combined = np.sqrt(np.einsum("ai,ij,aj->a", per_mode, rho, per_mode))
    s = r.stresses["EQ"]
    assert s.basis == "combined peaks"
    assert min(abs(s.sigma_max[0] - c) / c for c in combined) < 1e-6
    assert s.sigma_min[0] == -s.sigma_max[0]


HISTORY = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section R = round(d = 60 mm)
node A = (0, 0, 0)
node B = (1.5 m, 0, 0)
member M : A -> B beam R S
support A fixed
mass B = 200 kg
case MODES modes { count = 3 }
case HIT history { force B = (0, 2 kN, 0), time = halfsine(0.05 s), duration = 0.5 s, step = 0.001 s,
                   damping = 2 percent }
case RUN harmonic { force B = (0, 1 kN, 0), force B = (0, 0, 1 kN) LAG, from = 2 Hz, to = 8 Hz, points = 50,
                    damping = 2 percent }
"""
_D, _L = 0.06, 1.5


def _base_stress(u_tip):
    """Bending stress at the fixed end of a massless cantilever from its tip deflection: the tip
    force 3EI u/L^3 (Gere & Goodno Appendix G) times L, over W = pi d^3/32."""
    I = np.pi * _D**4 / 64
    return 3 * E * I * u_tip / _L**2 * (_D / 2) / I


def test_history_peak_is_the_largest_over_the_time_series():
    """The peak stress over time against the time series computed with numpy from the recorded
    tip deflection, and its time."""
    r = _solve(HISTORY.replace("LAG", ""))
    h, s = r["HIT"], r.stresses["HIT"]
    series = _base_stress(np.abs(h.u[:, 1, 1]))
    assert s.basis == "peak over time"
    assert s.sigma_max[0] == pytest.approx(series.max(), rel=1e-6)
    assert s.at[0] == pytest.approx(h.t[series.argmax()], abs=1e-12)


@pytest.mark.parametrize("lag, factor", [("", np.sqrt(2)), ("lag 90 deg", 1.0)], ids=["in-phase", "quadrature"])
def test_harmonic_amplitude_keeps_the_phases(lag, factor):
    """Equal loads along Y and Z on a round bar: in phase, the moment swings along a diagonal
    with sqrt(2) times the single amplitude; 90 degrees apart it turns at constant size, and the
    stress amplitude at a point is the single one (sum of harmonics at one frequency). Peak
    frequency against numpy's argmax over the recorded tip amplitude. The round outline is taken
    as the corners of the 72-gon drawn around the circle (a bound, fem.analysis.stress), and both
    the diagonal and any direction's constant amplitude meet a corner: 1/cos(2.5 deg) above."""
    r = _solve(HISTORY.replace("LAG", lag))
    h, s = r["RUN"], r.stresses["RUN"]
    single = _base_stress(np.abs(h.u[:, 1, 1]))
    assert s.basis == "amplitude"
    assert s.sigma_max[0] == pytest.approx(factor * single.max() / np.cos(np.pi / 72), rel=1e-6)
    assert s.at[0] == pytest.approx(h.freq[single.argmax()])


def test_generic_section_needs_its_moduli():
    """A generic section without Wy, Wz has no stress points (nan, said in the docs); with them
    the corner formula N/A +/- My/Wy +/- Mz/Wz applies (Gere & Goodno ch. 8)."""
    base = CANTILEVER.format(section="generic(A = 0.02 m^2, Iy = 6.67e-5 m^4, Iz = 1.67e-5 m^4, J = 4.6e-5 m^4 EXTRA)",
                             N=10, Vy=2, Vz=-5, T=0)
    r = _solve(base.replace(" EXTRA", ""))
    s = r.stresses["TIP"]
    assert np.isnan(s.sigma_max[0]) and s.governing() is None
    from fem.output.stress_out import stress_block, summary_lines

    assert "declare Wy, Wz" in summary_lines(r, "TIP", "")[0]
    assert stress_block(r, "TIP")["sections_without_stress_points"] == ["P"]
    s = _solve(base.replace(" EXTRA", ", Wy = 6.67e-4 m^3, Wz = 3.34e-4 m^3")).stresses["TIP"]
    assert s.sigma_max[0] == pytest.approx(10e3 / 0.02 + 10e3 / 6.67e-4 + 4e3 / 3.34e-4, rel=1e-9)


def test_free_vibration_peak_is_the_largest_over_the_time_series():
    """Free vibration from a static start: the peak stress over time against the series
    computed with numpy from the recorded tip deflection (the static start itself is the first
    sample, so the peak is at least the start's M/W = P L/W)."""
    text = HISTORY.replace("LAG", "") + ("case PUSH static { force B = (0, 2 kN, 0) }\n"
                                         "case FREE free { start = PUSH, duration = 0.5 s, step = 0.001 s, "
                                         "damping = 2 percent }\n")
    r = _solve(text)
    fr, s = r["FREE"], r.stresses["FREE"]
    series = _base_stress(np.abs(fr.u[:, 1, 1]))
    assert s.basis == "peak over time"
    assert s.sigma_max[0] == pytest.approx(series.max(), rel=1e-6)
    assert s.sigma_max[0] >= 2e3 * _L / (np.pi * _D**3 / 32) * (1 - 1e-6)


def test_spectrum_stresses_are_not_from_combined_forces():
    """In a two-storey portal's columns each of the two sway modes brings axial force
    (overturning) and bending in its own proportion, so the per-mode stresses combined, sqrt(sum (N_k/A + M_k/W)^2), lie below the
    stress of the combined forces |N|/A + |M|/W (Minkowski's inequality; equal only when every
    mode has the same N/M ratio). Checked against the case's own combined end forces."""
    text = PORTAL.replace("case SWAY static { force B = (5 kN, 0, 0), force C = (5 kN, 0, 0) }",
                          "node E = (0, 0, 8 m)\nnode F = (6 m, 0, 8 m)\nmember L2 : B -> E beam C S\n"
                          "member R2 : C -> F beam C S\nmember T2 : E -> F beam C S\nsupport E (uy, rx, rz)\n"
                          "support F (uy, rx, rz)\n"
                          "mass B = 3 t\nmass C = 3 t\nmass E = 2 t\nmass F = 2 t\ncase MODES modes { count = 8 }\n"
                          "case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), "
                          "directions = (1, 0, 0), combine = srss, damping = 5 percent }")
    r = _solve(text)
    k = r.model.member_names.index("L")
    F = r["EQ"].member_forces[k]                       # combined peaks, >= 0
    sec = r.model.sections["C"].props
    from_forces = max(F[0] / sec.A + F[4] / sec.Wy + F[5] / sec.Wz, F[6] / sec.A + F[10] / sec.Wy + F[11] / sec.Wz)
    s = r.stresses["EQ"]
    # the axial stress is small beside the bending here, so the gap is a few 1e-5 of the stress:
    # far above the round-off of either (1e-12)
    assert s.sigma_max[k] < from_forces * (1 - 1e-5)
    assert s.sigma_max[k] >= max(F[4], F[10]) / sec.Wy * (1 - 1e-9)  # at least the bending alone


SHAPE_CASES = [
    ("pipe", {"od": 0.1683, "wall": 0.00711}),
    ("round", {"d": 0.05}),
    ("rhs", {"b": 0.1, "h": 0.16, "t": 0.006}),
    ("rhs", {"b": 0.1, "h": 0.16, "t": 0.006, "ro": 0.012}),
    ("rect", {"b": 0.1, "h": 0.2}),
    ("ishape", {"d": 0.3, "bf": 0.3, "tf": 0.019, "tw": 0.011, "r": 0.027}),
    ("angle", {"b": 0.06, "h": 0.04, "t": 0.005}),
    ("angle", {"b": 0.06, "h": 0.04, "t": 0.005, "r": 0.006}),
    ("channel", {"d": 0.15, "bf": 0.075, "tf": 0.01, "tw": 0.0055, "r": 0.01}),
    ("catalogue", {"designation": "HEB 300"}),
    ("catalogue", {"designation": "L4X4X1/2"}),
]


@pytest.mark.parametrize("shape, dims", SHAPE_CASES, ids=lambda v: v if isinstance(v, str) else "-".join(map(str, v.values())))
def test_stress_points_agree_with_the_section_moduli(shape, dims):
    """For every shape the farthest stress points from each axis give the section's own elastic
    moduli, computed independently in fem/sections/shapes.py: max |z| = Iy/Wy, max |y| = Iz/Wz
    (Gere & Goodno ch. 5: W = I/c); the shear and torsion factors are positive."""
    from fem.sections import make_section
    from fem.sections.points import stress_points

    p = make_section(shape, dims)
    s = stress_points(shape, dims, p)
    far_z = s.radius or max(abs(z) for z in s.z)
    far_y = s.radius or max(abs(y) for y in s.y)
    assert far_z == pytest.approx(p.Iy / p.Wy, rel=1e-12)
    assert far_y == pytest.approx(p.Iz / p.Wz, rel=1e-12)
    assert s.shear_y > 0 and s.shear_z > 0 and s.torsion > 0


def test_thin_pipe_shear_tends_to_twice_the_average():
    """A thin circular tube carries its largest shear stress 2V/A at the neutral axis (Gere &
    Goodno ch. 5, circular tubes); V Q/(I t) of a tube with t/D = 1/200 is within 1 % of it."""
    from fem.sections import make_section
    from fem.sections.points import stress_points

    p = make_section("pipe", {"od": 1.0, "wall": 0.005})
    s = stress_points("pipe", {"od": 1.0, "wall": 0.005}, p)
    assert s.shear_z == pytest.approx(2 / p.A, rel=1e-2)
