"""History cases: SDOF load factors, full-system integration, static correction, ground motion."""

from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse.linalg as spla
from scipy.integrate import solve_ivp
from shared_decks import BAR_SDOF

from fem import solve
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import DeckError

# a massless axial bar carrying a point mass is a single-DOF oscillator: k = EA/L, m
SDOF = BAR_SDOF + """case H history { force B = (100 kN, 0, 0), time = %s, duration = %s, step = %s, damping = %s }
"""
K_BAR = 200e9 * 3.600457e-3 / 2.0       # EA/L, A from reference-values.md section 4
# the same from the pipe's area pi (od^2 - id^2) / 4 in full precision, for the checks at round-off
K_EXACT = 200e9 * np.pi * (0.1683**2 - (0.1683 - 2 * 0.00711)**2) / 4 / 2.0


def sdof(time, duration, step, damping="0"):
    m = read_text(SDOF % (time, duration, step, damping))
    others = solve(m).modal
    return others[-1]


def test_step_load_factor_two():
    # undamped step load: peak = 2 x static (Chopra 2017 Sec. 4.3; Biggs 1964 Ch. 2; the
    # reference-values.md section 5 'DLF = 2'); the recurrence is exact for a constant load,
    # and sampling at T/400 finds the peak within 1 - cos(pi/400) ~ 3e-5
    T = 2 * np.pi * np.sqrt(1e6 / K_BAR)
    r = sdof("step", f"{1.5 * T} s", f"{T / 400} s")
    assert r.peak[1, 0] / (100e3 / K_BAR) == pytest.approx(2.0, abs=1e-4)


@pytest.mark.parametrize("shape,td_over_T,rd,tol", [
    # undamped shock spectra, reference-values.md section 5 (values C; Chopra Ch. 4, Biggs Ch. 2),
    # printed to 4-5 digits: tolerance 3e-4. The rectangle's is the closed form 2 sin(pi td/T)
    # (Chopra 2017 Sec. 4.7), so its tolerance is that of sampling the peak at T/1000 only:
    # sqrt(2) (1 - cos(pi/1000)) ~ 7e-6; the pulse's end is integrated exactly
    ("halfsine", 0.5, 1.5708, 3e-4), ("halfsine", 1.0, 1.7321, 3e-4), ("rect", 0.25, np.sqrt(2), 1e-5),
    ("rect", 0.1, 2 * np.sin(0.1 * np.pi), 1e-5), ("triangle", 1.0, 1.5085, 3e-4), ("decay", 1.0, 1.5502, 3e-4),
], ids=["halfsine-0.5", "halfsine-1", "rect-0.25", "rect-0.1", "triangle-1", "decay-1"])
def test_pulse_shock_spectrum(shape, td_over_T, rd, tol):
    # the shapes are sampled at T/1000 (a pulse end falls between samples: 0.25 T / (T/1000)
    # is 250 in exact arithmetic, not in floating point) and integrated exactly as piecewise
    # linear, with their jumps and kinks exact, so the peak is within ~1e-5 of the continuous value
    T = 2 * np.pi * np.sqrt(1e6 / K_BAR)
    r = sdof(f"{shape}({td_over_T * T} s)", f"{(td_over_T + 1.5) * T} s", f"{T / 1000} s")
    assert r.peak[1, 0] / (100e3 / K_BAR) == pytest.approx(rd, abs=tol)


def _rect_exact(t, td, w):
    """Undamped response to a rectangular pulse of length td over the static deflection:
    1 - cos(w t) while it acts, cos(w (t - td)) - cos(w t) after (Chopra 2017 Sec. 4.7)."""
    return np.where(t < td, 1 - np.cos(w * t), np.cos(w * (t - td)) - np.cos(w * t))


@pytest.mark.parametrize("steps_per_period", [12.3, 37.9, 101.7, 400.0])
def test_rect_pulse_end_off_the_grid_is_exact_at_any_step(steps_per_period):
    # a pulse ending between samples: the response at every sample equals the closed form to
    # round-off, whatever the step (before, the pulse ended with a ramp over the next step,
    # an error of order dt/T: 3e-2 of the static deflection at T/12); 1e-9 is round-off of
    # the recurrence over a few hundred steps
    w = np.sqrt(K_EXACT / 1e6)
    T = 2 * np.pi / w
    td = 0.3141 * T
    r = sdof(f"rect({td} s)", f"{2 * T} s", f"{T / steps_per_period} s")
    err = np.abs(r.u[:, 1, 0] / (100e3 / K_EXACT) - _rect_exact(r.t, td, w)).max()
    assert err < 1e-9


@pytest.mark.parametrize("shape,exact", [
    # undamped response over the static deflection to a decaying triangle (jump to 1, linear to 0
    # at td) and a ramp to 1 over td, by Duhamel's integral of the piecewise-linear load
    # (Chopra 2017 Sec. 4.5, 4.6): u = sum over the knots of (J (1 - cos w s) + S (s - sin(w s)/w))
    ("decay", lambda t, td, w: (1 - np.cos(w * t)) - (t - np.sin(w * t) / w) / td
     + np.where(t > td, (t - td - np.sin(w * (t - td)) / w) / td, 0.0)),
    ("ramp", lambda t, td, w: (t - np.sin(w * t) / w) / td
     - np.where(t > td, (t - td - np.sin(w * (t - td)) / w) / td, 0.0)),
], ids=["decay", "ramp"])
def test_kinked_shapes_exact_at_a_coarse_step(shape, exact):
    w = np.sqrt(K_EXACT / 1e6)
    T = 2 * np.pi / w
    td = 0.777 * T
    r = sdof(f"{shape}({td} s)", f"{2 * T} s", f"{T / 13.7} s")
    assert np.abs(r.u[:, 1, 0] / (100e3 / K_EXACT) - exact(r.t, td, w)).max() < 1e-9


FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 6 m)
member ARM : N4 -> H beam P S
support N0 fixed
mass H = 400 kg
case MODES modes { count = %d }
case H1 history { force N2 = (5 kN, 0, 0), force H = (0, 2 kN, -3 kN), time = halfsine(0.15 s),
                  duration = 0.6 s, step = 0.002 s, damping = 0, record = "H" %s }
"""


def full_solution(m, tmax, dt):
    """Direct integration of the whole undamped system with scipy's solve_ivp (RK45 at
    rtol 1e-10) under the same piecewise-linear load."""
    asm = assemble(m)
    f = asm.free
    from fem.analysis.static import load_vector
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    Mlu = spla.splu(M)
    t = np.arange(0, tmax + dt / 2, dt)
    g = np.where(t <= 0.15, np.sin(np.pi * t / 0.15), 0.0)
    n = len(f)

    def rhs(tt, y):
        gt = np.interp(tt, t, g)
        return np.r_[y[n:], Mlu.solve(F * gt - K @ y[:n])]

    sol = solve_ivp(rhs, (0, tmax), np.zeros(2 * n), t_eval=t, rtol=1e-10, atol=1e-13, method="DOP853")
    tip = list(f).index(6 * m.node_names.index("H") + 2)
    return t, sol.y[tip]


def test_all_modes_equal_direct_integration():
    m = read_text(FRAME % (30, ""))
    others = solve(m).modal
    h = others[-1]
    t, uz = full_solution(m, 0.6, 0.002)
    # all 30 modes: the same piecewise-linear problem solved two ways; rtol of solve_ivp
    np.testing.assert_allclose(h.u[:, 0, 2], uz, atol=1e-6 * np.abs(uz).max())


def test_truncation_error_drops_with_modes_and_correction():
    t, uz = full_solution(read_text(FRAME % (30, "")), 0.6, 0.002)

    def err(k, corr):
        m = read_text(FRAME % (k, ", correction = on" if corr else ""))
        h = solve(m).modal[-1]
        return np.abs(h.u[:, 0, 2] - uz).max() / np.abs(uz).max()

    e2, e4, e2c = err(2, False), err(4, False), err(2, True)
    assert e4 < e2
    assert e2c < e2


GROUND = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = generic(A = 1 m^2, Iy = 1e-4 m^4, Iz = 1e-4 m^4, J = 1e-4 m^4)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
member COL : A -> B beam C S
support A fixed
support B (uy, uz, rx, ry, rz)
mass B = 2 t
case MODES modes { count = 1 }
case QUAKE history { ground = (0.2 gee, 0, 0), time = harmonic(%s Hz), duration = 2 s,
                     step = 0.001 s, damping = 5 percent, record = "B" }
"""


def test_ground_motion_sdof_vs_solve_ivp():
    # a guided cantilever column with a top mass is an SDOF with k = 12 EI / L^3; base
    # acceleration gives m u'' + c u' + k u = -m a_g (Chopra 2017 Sec. 1.7); compared with
    # solve_ivp at rtol 1e-10 under the same piecewise-linear a_g
    k = 12 * 200e9 * 1e-4 / 27
    wn = np.sqrt(k / 2000)
    fg = 0.8 * wn / (2 * np.pi)
    m = read_text(GROUND % fg)
    h = solve(m).modal[-1]
    t = h.t
    ag = 0.2 * 9.80665 * np.sin(2 * np.pi * fg * t)
    sol = solve_ivp(lambda tt, y: [y[1], -np.interp(tt, t, ag) - 2 * 0.05 * wn * y[1] - wn**2 * y[0]],
                    (0, t[-1]), [0, 0], t_eval=t, rtol=1e-10, atol=1e-13, method="DOP853")
    np.testing.assert_allclose(h.u[:, 0, 0], sol.y[0], atol=1e-7 * np.abs(sol.y[0]).max())
    # absolute acceleration = relative + ground = -(c u' + k u)/m
    np.testing.assert_allclose(h.a[:, 0, 0], -(2 * 0.05 * wn * h.v[:, 0, 0] + wn**2 * h.u[:, 0, 0]),
                               atol=1e-9 * np.abs(h.a[:, 0, 0]).max())


def test_history_errors(tmp_path):
    with pytest.raises(DeckError, match="unknown time function 'halfsin'.*halfsine"):
        read_text(SDOF % ("halfsin(1 s)", "1 s", "0.01 s", "0"))
    with pytest.raises(DeckError, match="needs a time"):
        read_text(SDOF % ("step", "1 s", "0.01 m", "0"))
    (tmp_path / "rec.csv").write_text("t,a\n0,0\n0.1,1\n0.1,2\n")
    deck = (SDOF % ("step", "1 s", "0.01 s", "0")).replace("time = step", 'table = "rec.csv"')
    with pytest.raises(DeckError, match=r"rec.csv:4:1: the first column must increase row by row: 0.1 follows 0.1 \(row 3\)"):
        read_text(deck, folder=tmp_path)


def test_table_time_function_from_deck_file(tmp_path):
    # a tabulated ramp to 1 at t = 0 and held: same as a step (exact for piecewise-linear input)
    from fem.deck.reader import read_deck
    (tmp_path / "rec").mkdir()
    (tmp_path / "rec" / "f.csv").write_text("# time, factor\n0,1\n10,1\n")
    deck = tmp_path / "d.deck"
    deck.write_text((SDOF % ("step", "0.5 s", "0.001 s", "0")).replace("time = step", 'table = "rec/f.csv"'))
    tab = solve(read_deck(deck)).modal[-1]
    step = sdof("step", "0.5 s", "0.001 s")
    np.testing.assert_allclose(tab.u, step.u, atol=1e-15)


def test_member_and_reaction_peaks_step_load():
    # undamped step: the bar force and the support reaction also reach twice the static value
    # (DLF 2, Chopra 2017 Sec. 4.3); sampled at T/400 (peak within 3e-5)
    T = 2 * np.pi * np.sqrt(1e6 / K_BAR)
    r = sdof("step", f"{1.5 * T} s", f"{T / 400} s")
    assert r.member_peak[0, 6] == pytest.approx(200e3, rel=1e-4)      # axial force at end j
    assert r.reaction_peak[0, 0] == pytest.approx(200e3, rel=1e-4)


def test_member_peaks_match_direct_integration():
    # all modes kept: peak end forces from modal superposition equal those recovered from the
    # directly integrated displacements (solve_ivp, rtol 1e-10) with the member stiffness
    from fem.analysis.modal_case import field_responses
    m = read_text(FRAME % (30, ""))
    h = solve(m).modal[-1]
    asm = assemble(m)
    f = asm.free
    from fem.analysis.static import load_vector
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    Mlu = spla.splu(M)
    t = h.t
    g = np.where(t <= 0.15, np.sin(np.pi * t / 0.15), 0.0)
    n = len(f)
    sol = solve_ivp(lambda tt, y: np.r_[y[n:], Mlu.solve(F * np.interp(tt, t, g) - K @ y[:n])],
                    (0, t[-1]), np.zeros(2 * n), t_eval=t, rtol=1e-10, atol=1e-13, method="DOP853")
    U = np.zeros((len(t), 6 * m.n_nodes))
    U[:, f] = sol.y[:n].T
    _, mf = field_responses(m, asm, U)
    ref = np.abs(mf).max(axis=0)
    np.testing.assert_allclose(h.member_peak, ref, atol=1e-6 * ref.max())


def test_coarse_step_is_warned_with_the_figure():
    T = 2 * np.pi * np.sqrt(1e6 / K_BAR)
    r = sdof("step", f"{3 * T} s", f"{T / 4} s")
    assert r.warnings and "coarse" in r.warnings[0].text and f"{T / 10:.3g}" in r.warnings[0].text
    assert not sdof("step", f"{T} s", f"{T / 20} s").warnings
    # a Note located at the case; a case made in Python (no location) says "warning: ..." alone
    assert str(r.warnings[0]) == f"{r.warnings[0].location}: warning: {r.warnings[0].text}"
    m = read_text(SDOF % ("step", f"{3 * T} s", f"{T / 4} s", "0"))
    made = solve(replace(m, cases=[replace(c, location=None) for c in m.cases])).modal[-1]
    assert made.warnings[0].location is None and str(made.warnings[0]) == f"warning: {r.warnings[0].text}"


def test_step_longer_than_table_spacing_is_warned(tmp_path):
    # a record at 0.005 s read with a 0.01 s step skips every other row: a located warning with
    # both figures and the step to use; a step equal to the spacing is quiet
    from fem.deck.reader import read_deck
    t = np.arange(0, 1.0001, 0.005)
    (tmp_path / "rec.csv").write_text("".join(f"{x:.3f},{np.sin(40 * x):.6f}\n" for x in t))
    deck = tmp_path / "d.deck"
    text = SDOF % ("step", "1 s", "%s", "0")
    text = text.replace("time = step", 'table = "rec.csv"')
    deck.write_text(text % "0.01 s")
    m = read_deck(deck)
    line = 1 + text.split("\n").index(next(x for x in text.split("\n") if "rec.csv" in x))
    w = [str(x) for x in m.warnings if "row spacing" in str(x)]
    assert len(w) == 1
    assert w[0].startswith(f"d.deck:{line}:")
    assert "step 0.01 s" in w[0] and "0.005 s row spacing of table 'rec.csv'" in w[0]
    assert "use step <= 0.005 s" in w[0]
    deck.write_text(text % "0.005 s")
    assert not [x for x in read_deck(deck).warnings if "row spacing" in str(x)]
    # a named table is checked the same way
    deck.write_text((text % "0.008 s").replace('table = "rec.csv"', 'time = step, table R = "rec.csv"')
                    .replace("force B = (100 kN, 0, 0)", "force B = (100 kN, 0, 0) times R"))
    w = [str(x) for x in read_deck(deck).warnings if "row spacing" in str(x)]
    assert len(w) == 1 and "step 0.008 s" in w[0] and "table 'rec.csv'" in w[0]


TWO = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 6 m)
member ARM : N4 -> H beam P S
support N0 fixed
mass H = 400 kg
case MODES modes { count = 6 }
case H1 history { %s
                  duration = 0.6 s, step = 0.0017 s, damping = 2 percent, record = "*" %s }
"""


@pytest.mark.parametrize("correction", ["", ", correction = on"], ids=["modal", "corrected"])
def test_two_loads_with_two_functions_equal_the_sum_of_single_runs(correction):
    # superposition (the equations are linear): a machine force at N2 following a harmonic and
    # an impact at H following a short half-sine, in one case, equal the two single-load runs
    # added, at every node and time (displacement, velocity, absolute acceleration); the pulse
    # end (0.0235 s) falls between steps. Round-off tolerance.
    both = """time HUM = harmonic(24.5 Hz), time KNOCK = halfsine(0.0235 s)
              force N2 = (0, 1.2 kN, 0) times HUM
              force H = (-8 kN, 0, 3 kN) times KNOCK"""
    r = solve(read_text(TWO % (both, correction))).modal[-1]
    a = solve(read_text(TWO % ("force N2 = (0, 1.2 kN, 0), time = harmonic(24.5 Hz)", correction))).modal[-1]
    b = solve(read_text(TWO % ("force H = (-8 kN, 0, 3 kN), time = halfsine(0.0235 s)", correction))).modal[-1]
    for x in ("u", "v", "a"):
        ref = getattr(a, x) + getattr(b, x)
        np.testing.assert_allclose(getattr(r, x), ref, atol=1e-12 * np.abs(ref).max(), err_msg=x)
    # the drawn frames at the times all three keep (each keeps those around its own largest motion)
    common = np.intersect1d(np.intersect1d(r.frame_t, a.frame_t), b.frame_t)
    assert len(common) >= 100
    at = [x.frames[np.isin(x.frame_t, common)] for x in (r, a, b)]
    np.testing.assert_allclose(at[0], at[1] + at[2], atol=1e-12 * np.abs(at[0]).max())
    assert np.abs(a.u).max() > 0 and np.abs(b.u).max() > 0
    # peaks of member end forces and reactions (each function's static part included) equal
    # those of the forces recovered from the recorded displacements of every node (no loads sit
    # at supports and there are no line loads, so end forces are k u alone); round-off
    from fem.analysis.modal_case import field_responses
    m = read_text(TWO % (both, correction))
    rf, mf = field_responses(m, assemble(m), r.u.reshape(len(r.t), -1))
    np.testing.assert_allclose(r.member_peak, np.abs(mf).max(axis=0), atol=1e-10 * r.member_peak.max())
    np.testing.assert_allclose(r.reaction_peak, np.abs(rf).max(axis=0), atol=1e-10 * r.reaction_peak.max())
    # the peak envelopes lie within the sum of the single runs' envelopes (triangle inequality)
    assert np.all(r.peak <= a.peak + b.peak + 1e-12 * r.peak.max())
    assert np.all(r.member_peak <= a.member_peak + b.member_peak + 1e-9 * r.member_peak.max())


def test_two_direction_ground_motion_equals_the_sum_of_single_directions(tmp_path):
    # X from one record, Y from another, each with its own scale, equals the two single-direction
    # runs added (linearity); the records' rows (0.002 s) are finer than no step, so no warning
    from fem.deck.reader import read_deck
    t = np.arange(0, 0.6001, 0.002)
    (tmp_path / "ew.csv").write_text("".join(f"{x:.4f},{np.sin(31 * x) * np.exp(-3 * x):.6f}\n" for x in t))
    (tmp_path / "ns.csv").write_text("".join(f"{x:.4f},{np.cos(47 * x) * x:.6f}\n" for x in t))

    def run(body):
        deck = tmp_path / "g.deck"
        deck.write_text(TWO.replace("step = 0.0017 s", "step = 0.002 s") % (body, ""))
        m = read_deck(deck)
        assert not [w for w in m.warnings if "row spacing" in w]
        return solve(m).modal[-1]

    r = run('''table EW = "ew.csv", table NS = "ns.csv"
               ground = (0.3 gee, 0, 0) times EW
               ground = (0, 0.2 gee, 0) times NS''')
    a = run('ground = (0.3 gee, 0, 0), table = "ew.csv"')
    b = run('ground = (0, 0.2 gee, 0), table = "ns.csv"')
    for x in ("u", "v", "a"):
        ref = getattr(a, x) + getattr(b, x)
        np.testing.assert_allclose(getattr(r, x), ref, atol=1e-12 * np.abs(ref).max(), err_msg=x)
    assert np.abs(a.u[:, :, 0]).max() > 0 and np.abs(b.u[:, :, 1]).max() > 0


def test_named_function_equals_the_case_function():
    # the old form (one time = ... for the case) and a named function give the same run
    old = solve(read_text(TWO % ("force H = (-8 kN, 0, 3 kN), time = rect(0.05 s)", ""))).modal[-1]
    new = solve(read_text(TWO % ("time P = rect(0.05 s), force H = (-8 kN, 0, 3 kN) times P", ""))).modal[-1]
    np.testing.assert_array_equal(new.u, old.u)
    np.testing.assert_array_equal(new.member_peak, old.member_peak)


@pytest.mark.parametrize("body,message,where", [
    ("time KNOCK = halfsine(0.02 s), force H = (1 kN, 0, 0) times KNOK",
     r"case H1: force follows time function 'KNOK', which is not defined in the case; did you mean 'KNOCK'\?",
     "KNOK"),
    ("time KNOCK = halfsine(0.02 s), ground = (0.1 gee, 0, 0) times QUAKE",
     r"ground follows time function 'QUAKE', which is not defined.*defined: KNOCK", "QUAKE"),
    ("time K = step, force H = (1 kN, 0, 0)", r"this force has no time function", "force H"),
    ("time K = step, time K = rect(1 s), force H = (1 kN, 0, 0) times K", r"time function K is defined twice",
     "time K = rect"),
    ("time K = halfsin(1 s), force H = (1 kN, 0, 0) times K", r"unknown time function 'halfsin'.*halfsine",
     "time K = halfsin"),
    ("time = step, table = \"x.csv\", force H = (1 kN, 0, 0)", r"give time = \.\.\. or table = \.\.\., not both",
     "table ="),
], ids=["unknown-load-function", "unknown-ground-function", "no-function", "twice", "bad-shape", "time-and-table"])
def test_per_load_function_errors_are_located(body, message, where):
    text = TWO % (body, "")
    with pytest.raises(DeckError, match=message) as exc:
        read_text(text)
    line = next(k for k, x in enumerate(text.split("\n"), 1) if where in x)
    assert exc.value.location.line == line
    assert exc.value.location.column == text.split("\n")[line - 1].index(where) + 1


def test_times_outside_a_history_case_is_refused():
    with pytest.raises(DeckError, match="'times K' is for the loads of a history case"):
        read_text(TWO.replace("case H1 history {", "case S static { force H = (1 kN, 0, 0) times K }\ncase H2 history {")
                  % ("force H = (1 kN, 0, 0), time = step", ""))


def test_unused_time_function_is_warned():
    m = read_text(TWO % ("time = step, time SPARE = rect(0.1 s), force H = (1 kN, 0, 0)", ""))
    w = [str(x) for x in m.warnings if "SPARE" in str(x)]
    assert len(w) == 1 and w[0].startswith("deck.deck:11:") and "no load or ground follows it" in w[0]


def test_table_pulse_with_ends_between_steps_is_exact(tmp_path):
    # a table holding 1 from t1 to t2 (both between steps) is a rectangular pulse starting late:
    # u/u_st = H(t - t1)(1 - cos w(t - t1)) - H(t - t2)(1 - cos w(t - t2)) (Chopra 2017 Sec. 4.7,
    # by superposition of two step loads), at round-off whatever the step
    from fem.deck.reader import read_deck
    w = np.sqrt(K_EXACT / 1e6)
    T = 2 * np.pi / w
    t1, t2 = 0.1234 * T, 0.4321 * T
    (tmp_path / "p.csv").write_text(f"{t1:.17g},1\n{t2:.17g},1\n")
    deck = tmp_path / "d.deck"
    deck.write_text((SDOF % ("step", f"{2 * T} s", f"{T / 17.3} s", "0")).replace("time = step", 'table = "p.csv"'))
    r = solve(read_deck(deck)).modal[-1]

    def step(s):
        return np.where(s > 0, 1 - np.cos(w * s), 0.0)
    exact = step(r.t - t1) - step(r.t - t2)
    assert np.abs(r.u[:, 1, 0] / (100e3 / K_EXACT) - exact).max() < 1e-9


def test_corrected_velocity_is_the_rate_of_the_corrected_displacement():
    # with the static correction u = Phi q + u_res g(t) (mode-acceleration method, Cornwell,
    # Craig & Johnson 1983), so v = Phi q' + u_res g'(t). Reference: the 2 retained modal
    # equations integrated by scipy's solve_ivp (DOP853, rtol 1e-11) under the exact half-sine,
    # u_res = K^-1 F - sum phi phi^T F / w^2 from a dense solve. Tolerance 1e-3 of the peak
    # velocity: the case's load is linear within each of its 75 steps per pulse, an error of
    # about (pi/75)^2/8 = 2e-4 of the pulse; without the g' term the tip's vertical velocity is
    # off by 8 % of its peak.
    m = read_text(FRAME % (2, ", correction = on"))
    others = solve(m).modal
    h = others[-1]
    asm = assemble(m)
    f = asm.free
    from fem.analysis.static import load_vector
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].toarray(), asm.M[f][:, f].toarray()
    import scipy.linalg as sla
    w2, V = sla.eigh(K, M, subset_by_index=[0, 1])
    u_res = np.linalg.solve(K, F) - V @ (V.T @ F / w2)
    p = V.T @ F

    def rhs(tt, y):
        return np.r_[y[2:], p * np.sin(np.pi * tt / 0.15) * (tt < 0.15) - w2 * y[:2]]

    t = h.t
    y1 = solve_ivp(rhs, (0, 0.15), [0, 0, 0, 0], t_eval=t[t <= 0.15 + 1e-12], rtol=1e-11,
                   atol=1e-14, method="DOP853").y
    y2 = solve_ivp(rhs, (0.15, t[-1]), y1[:, -1], t_eval=t[t > 0.15 + 1e-12], rtol=1e-11,
                   atol=1e-14, method="DOP853").y
    qd = np.c_[y1, y2][2:]
    gd = np.where(t < 0.15, np.pi / 0.15 * np.cos(np.pi * t / 0.15), 0.0)
    H = m.node_names.index("H")
    for d in range(3):
        i = list(f).index(6 * H + d)
        v = V[i] @ qd + u_res[i] * gd
        np.testing.assert_allclose(h.v[:, 0, d], v, atol=1e-3 * np.abs(v).max())


@pytest.mark.parametrize("shape,param", [("ramp", 0.4), ("halfsine", 0.3), ("triangle", 0.5),
                                         ("decay", 0.2), ("harmonic", 3.0), ("table", 0.0)])
def test_time_function_rate_is_its_slope(shape, param):
    # reference: the central difference of the function itself (exact for the piecewise-linear
    # shapes away from their corners, error h^2 g'''/6 < 1e-6 for the smooth ones at h = 1e-5)
    from fem.timefn import TimeFunction
    table = np.array([[0.0, 0.0], [0.1, 0.5], [0.25, -0.3], [0.6, 0.2]]) if shape == "table" else None
    fn = TimeFunction(shape, param, table)
    t = np.array([0.013, 0.07, 0.12, 0.17, 0.33, 0.41, 0.55, 0.77])
    h = 1e-5
    np.testing.assert_allclose(fn.rate(t), (fn(t + h) - fn(t - h)) / (2 * h), atol=1e-6 * max(1, 2 * np.pi * param))
