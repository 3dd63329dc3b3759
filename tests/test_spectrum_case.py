"""Response-spectrum cases through the deck against the worked examples of reference-values.md."""

import numpy as np
import pytest

from fem import solve
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError

# two-storey shear frame: guided columns with 12 EI / h^3 = 40 MN/m per storey, 100 t floors
SHEAR2 = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = generic(A = 1 m^2, Iy = 4.5e-4 m^4, Iz = 4.5e-4 m^4, J = 1e-3 m^4)
for i in 0..2 { node F[i] = (0, 0, i*3 m) }
for i in 0..1 { member M[i] : F[i] -> F[i+1] beam C S }
support F0 fixed
support F1 (uy, uz, rx, ry, rz)
support F2 (uy, uz, rx, ry, rz)
mass F1 = 100 t
mass F2 = 100 t
case MODES modes { count = 2 }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), damping = 5 percent,
                   combine = %s }
"""


@pytest.mark.parametrize("rule,roof,base", [
    # reference-values.md section 6 'Worked RSA' (values C): EN 1998-1 Type 1 ground B spectrum,
    # roof SRSS 0.055453 m / CQC 0.055442 m, base shear SRSS 1372.740 kN / CQC 1373.426 kN
    ("srss", 0.055453, 1372.740e3), ("cqc", 0.055442, 1373.426e3),
])
def test_two_storey_worked_example(rule, roof, base):
    m = read_text(SHEAR2 % rule)
    others = solve(m).modal
    modes, eq = others[0], others[-1]
    # T_2 = 2 pi / (1.618034 x 20 rad/s) = 0.1941611 s; the table prints 0.194162, so 6e-6
    np.testing.assert_allclose(modes.modes.period, [0.508320, 0.194162], rtol=6e-6)
    assert eq.u[2, 0] == pytest.approx(roof, rel=2e-5)        # 5-6 printed digits
    assert eq.reactions[0, 0] == pytest.approx(base, rel=2e-6)
    assert eq.base[0] == pytest.approx(base, rel=2e-6)
    assert eq.missing_fraction[0] == pytest.approx(0.0, abs=1e-12)   # all modes kept


def test_abs_is_an_upper_bound():
    u = {r: solve(read_text(SHEAR2 % r)).modal[-1].u[2, 0] for r in ("srss", "cqc", "abs")}
    assert u["abs"] >= u["cqc"] and u["abs"] >= u["srss"]


SHEAR3 = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = generic(A = 1 m^2, Iy = 1.125e-8 m^4, Iz = 1.125e-8 m^4, J = 1e-3 m^4)
for i in 0..3 { node F[i] = (0, 0, i*3 m) }
for i in 0..2 { member M[i] : F[i] -> F[i+1] beam C S }
support F0 fixed
support F1 (uy, uz, rx, ry, rz)
support F2 (uy, uz, rx, ry, rz)
support F3 (uy, uz, rx, ry, rz)
mass F1 = 1 t
mass F2 = 1 t
mass F3 = 1 t
case MODES modes { count = 1 }
case EQ spectrum { table = "flat.csv", scale = 1 m/s^2, combine = srss, missing = on }
"""


def test_missing_mass_correction(tmp_path):
    # reference-values.md section 6 'Missing-mass correction' (values C): 3-storey m = k = 1,
    # flat spectrum S_a = 1; here k = 12 EI/h^3 = 1 kN/m and m = 1 t so lengths come out in m.
    # Mode 1 alone gives [2.742238, 4.941343, 6.161754]; u_mm = [0.257762, 0.058657, -0.161754];
    # their SRSS per floor is what the case reports; base shear sqrt(2.742238^2 + 0.257762^2) kN
    (tmp_path / "flat.csv").write_text("period_s,sa\n0,1\n1000,1\n")
    (tmp_path / "s.deck").write_text(SHEAR3)
    eq = solve(read_deck(tmp_path / "s.deck")).modal[-1]
    mode1 = np.array([2.742238, 4.941343, 6.161754])
    umm = np.array([0.257762, 0.058657, -0.161754])
    np.testing.assert_allclose(eq.u[1:, 0], np.hypot(mode1, umm), rtol=2e-6)
    assert eq.base[0] == pytest.approx(1e3 * np.hypot(2.742238, 0.257762), rel=2e-6)
    assert eq.missing_fraction[0] == pytest.approx(1 - 0.91408, abs=6e-6)


def test_spectrum_errors():
    with pytest.raises(DeckError, match="either curve"):
        read_text((SHEAR2 % "srss").replace("curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), ", ""))
    with pytest.raises(DeckError, match="unknown design curve 'plato'"):
        read_text((SHEAR2 % "srss").replace("plateau", "plato"))
    with pytest.raises(DeckError, match="one of cqc, srss, abs"):
        read_text(SHEAR2 % "sum")


SDOF = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = generic(A = 1 m^2, Iy = 3.55e-6 m^4, Iz = 3.55e-6 m^4, J = 1e-4 m^4)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
member COL : A -> B beam C S
support A fixed
support B (uy, uz, rx, ry, rz)
mass B = 2 t
case MODES modes { count = 1 }
case TH history { ground = (1 gee, 0, 0), table = "ground.csv", duration = 12 s, step = 0.002 s,
                  damping = 5 percent }
case RS spectrum { table = "spectrum.csv", made_for = 5 percent, damping = 5 percent,
                   directions = (1, 0, 0) }
"""


def test_spectrum_peak_equals_history_peak_of_the_same_record(tmp_path):
    # a guided column with a top mass is one SDOF in X (k = 12 EI / L^3, Chopra 2017 Sec. 1.3);
    # the response spectrum of a record is by definition the SDOF's peak response to it
    # (Chopra 2017 Sec. 6.6), computed here independently with scipy's solve_ivp at rtol 1e-10
    # for the piecewise-linear record. The spectrum case (table through the SDOF's own period)
    # and the history case with the same record must both give that peak: the spectrum case to
    # the peak-reading error of solve_ivp (1e-6); the history case's recurrence is exact for
    # the record, but its 2 ms step only samples the peak, (w dt)^2 / 8 = 8e-5, so 1e-3.
    from scipy.integrate import solve_ivp

    rec = np.loadtxt("decks/records/synthetic_ground.csv", delimiter=",", comments="#", skiprows=2)
    np.savetxt(tmp_path / "ground.csv", rec, delimiter=",", header="time_s,factor")
    k = 12 * 200e9 * 3.55e-6 / 27
    wn = np.sqrt(k / 2000.0)
    t_rec, ag = rec[:, 0], rec[:, 1] * 9.80665

    def peak(w):
        # peak read on a 0.1 ms grid: sampling error below (w dt)^2 / 8 = 2e-7
        sol = solve_ivp(lambda t, y: [y[1], -np.interp(t, t_rec, ag) - 2 * 0.05 * w * y[1] - w**2 * y[0]],
                        (0, 12), [0, 0], t_eval=np.arange(0, 12, 1e-4), rtol=1e-10, atol=1e-14,
                        method="DOP853")
        return np.abs(sol.y[0]).max()

    d = peak(wn)
    periods = 2 * np.pi / wn * np.array([0.5, 1.0, 2.0])
    sa = wn**2 * d / 9.80665 * np.array([0.8, 1.0, 0.6])     # only the row at the SDOF's period counts
    np.savetxt(tmp_path / "spectrum.csv", np.c_[periods, sa], delimiter=",", header="period_s,sa_g")
    (tmp_path / "sdof.deck").write_text(SDOF)
    m = read_deck(tmp_path / "sdof.deck")
    others = solve(m).modal
    modes, th, rs = others
    assert modes.modes.omega[0] == pytest.approx(wn, rel=1e-12)
    assert rs.u[1, 0] == pytest.approx(d, rel=1e-6)                # spectral value at a table row
    assert th.peak[1, 0] == pytest.approx(d, rel=1e-3)


RAYLEIGH2 = SHEAR2.replace("damping = 5 percent,", "rayleigh = (1 Hz, 2 percent, 10 Hz, 8 percent),")


def _hand_rayleigh(omega, f1=1.0, z1=0.02, f2=10.0, z2=0.08):
    """zeta_n = a0 / (2 w_n) + a1 w_n / 2 with a0, a1 solved from the two anchors (Chopra 2017
    Sec. 11.4, Eq. 11.4.8 written at both anchors and solved as a 2 x 2 system)."""
    w = 2 * np.pi * np.array([f1, f2])
    a0, a1 = np.linalg.solve(np.c_[1 / (2 * w), w / 2], [z1, z2])
    return a0 / (2 * omega) + a1 * omega / 2


def _eta(z):
    # EN 1998-1:2004 Sec. 3.2.2.2(3), Eq. 3.6: eta = sqrt(10 / (5 + xi)) >= 0.55, xi in percent
    return max(np.sqrt(10 / (5 + 100 * z)), 0.55)


def test_design_curve_at_each_modes_own_damping():
    # Rayleigh damping gives the two modes different ratios; each ordinate is the EN 1998-1
    # elastic shape (Eqs. 3.2-3.5) at that mode's period with eta from that mode's ratio. Mode 1
    # (T = 0.508 s) lies on the T_C/T branch, mode 2 (0.194 s) on the plateau (T_B = 0.15 s,
    # T_C = 0.5 s). Roof displacements from Gamma phi_roof = 1.170820 and -0.170820
    # (reference-values.md section 6 'Worked RSA', values C, 6 digits) combined by SRSS.
    eq = solve(read_text(RAYLEIGH2 % "srss")).modal[-1]
    ag, s, tc = 0.25 * 9.80665, 1.2, 0.5
    T = eq.periods
    z = _hand_rayleigh(2 * np.pi / T)
    assert abs(z[0] - z[1]) > 0.005                           # the ratios really differ
    np.testing.assert_allclose(eq.zeta, z, rtol=1e-12)
    hand = np.array([2.5 * ag * s * _eta(z[0]) * tc / T[0], 2.5 * ag * s * _eta(z[1])])
    np.testing.assert_allclose(eq.sa[0], hand, rtol=1e-12)    # same formula, rounding only
    np.testing.assert_allclose(eq.damping_factor, [_eta(z[0]), _eta(z[1])], rtol=1e-12)
    roof = np.hypot(*(np.array([1.170820, -0.170820]) * hand * T**2 / (4 * np.pi**2)))
    assert eq.u[2, 0] == pytest.approx(roof, rel=2e-6)        # Gamma phi printed to 6-7 digits
    assert not eq.warnings


FLAT2 = SHEAR2.replace("curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), damping = 5 percent,",
                       'table = "flat.csv", scale = 1 m/s^2, made_for = 2 percent, '
                       "rayleigh = (1 Hz, 2 percent, 10 Hz, 8 percent),")


def test_table_made_for_another_damping_is_scaled_per_mode(tmp_path):
    # a flat table S_a = 4 m/s^2 made for 2 % damping; each mode's ordinate is scaled by
    # eta(zeta_n) / eta(2 %) with eta of EN 1998-1:2004 Eq. 3.6, eta(2 %) = 1.195229
    # (reference-values.md section 6, value C); the case says so once
    (tmp_path / "flat.csv").write_text("period_s,sa\n0.01,4\n10,4\n")
    (tmp_path / "s.deck").write_text(FLAT2 % "srss")
    m = read_deck(tmp_path / "s.deck")
    eq = solve(m).modal[-1]
    z = _hand_rayleigh(2 * np.pi / eq.periods)
    assert _eta(0.02) == pytest.approx(1.195229, rel=1e-6)
    factor = np.array([_eta(z[0]), _eta(z[1])]) / 1.195229
    np.testing.assert_allclose(eq.damping_factor, factor, rtol=1e-6)
    np.testing.assert_allclose(eq.sa[0], 4 * factor, rtol=1e-6)
    assert len(eq.warnings) == 1
    assert "made for 2 % damping" in eq.warnings[0].text and "eta(zeta) / eta(made_for)" in eq.warnings[0].text
    assert str(eq.warnings[0]).startswith("s.deck:12:1: warning: case EQ:")     # located at the case
    assert (eq.warnings[0].location.line, eq.warnings[0].kind) == (12, "warning")
    assert not any("does not say" in str(w) for w in m.warnings)


def test_table_without_made_for_is_used_unscaled_and_warned(tmp_path):
    (tmp_path / "flat.csv").write_text("period_s,sa\n0.01,4\n10,4\n")
    (tmp_path / "s.deck").write_text((FLAT2 % "srss").replace("made_for = 2 percent, ", ""))
    m = read_deck(tmp_path / "s.deck")
    eq = solve(m).modal[-1]
    np.testing.assert_allclose(eq.sa[0], 4.0, rtol=1e-14)
    np.testing.assert_allclose(eq.damping_factor, 1.0)
    assert not eq.warnings
    warned = [str(w) for w in m.warnings if "does not say the damping it was made for" in str(w)]
    assert len(warned) == 1 and warned[0].startswith("s.deck:12:1: warning: case EQ:")


def test_table_made_for_the_case_damping_is_not_scaled(tmp_path):
    (tmp_path / "flat.csv").write_text("period_s,sa\n0.01,4\n10,4\n")
    deck = (FLAT2 % "srss").replace("rayleigh = (1 Hz, 2 percent, 10 Hz, 8 percent)", "damping = 2 percent")
    (tmp_path / "s.deck").write_text(deck)
    eq = solve(read_deck(tmp_path / "s.deck")).modal[-1]
    np.testing.assert_allclose(eq.sa[0], 4.0, rtol=1e-14)
    assert not eq.warnings


def test_made_for_with_a_design_curve_is_refused(tmp_path):
    with pytest.raises(DeckError, match="made_for belongs to a table"):
        read_text((SHEAR2 % "srss").replace("damping = 5 percent,", "made_for = 5 percent,"))
    (tmp_path / "flat.csv").write_text("period_s,sa\n0.01,4\n10,4\n")
    (tmp_path / "s.deck").write_text((FLAT2 % "srss").replace("made_for = 2 percent", "made_for = 150 percent"))
    with pytest.raises(DeckError, match="from 0 to below 1"):
        read_deck(tmp_path / "s.deck")


def test_twoperiod_curve_at_other_damping_is_warned():
    deck = (RAYLEIGH2 % "srss").replace("plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s)", "twoperiod(0.8 gee, 0.4 gee, 6 s)")
    eq = solve(read_text(deck)).modal[-1]
    assert len(eq.warnings) == 1 and "5 % damped design spectrum" in eq.warnings[0].text
    np.testing.assert_allclose(eq.damping_factor, 1.0)


def test_missing_mass_term_is_added_absolutely_under_abs(tmp_path):
    # docs/deck.md: the missing-mass term is one more term uncorrelated with every mode, so under
    # combine = abs it adds |u_mm| (the conservative choice), under srss/cqc it goes by SRSS
    # (test_missing_mass_correction); values of reference-values.md section 6 (C)
    (tmp_path / "flat.csv").write_text("period_s,sa\n0,1\n1000,1\n")
    (tmp_path / "s.deck").write_text(SHEAR3.replace("combine = srss", "combine = abs"))
    eq = solve(read_deck(tmp_path / "s.deck")).modal[-1]
    mode1 = np.array([2.742238, 4.941343, 6.161754])
    umm = np.array([0.257762, 0.058657, -0.161754])
    np.testing.assert_allclose(eq.u[1:, 0], mode1 + np.abs(umm), rtol=2e-6)
