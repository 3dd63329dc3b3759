"""Harmonic cases for machinery: loads with their own lag, unbalance (m e W^2), loads growing
with a power of the frequency, single frequencies and lists, velocity and acceleration."""

import gzip

import numpy as np
import pytest
import scipy.sparse.linalg as spla
from shared_decks import BAR_SDOF, PIPE_ARM

from fem import solve
from fem.analysis.modal_case import field_responses
from fem.analysis.static import load_vector
from fem.assembly import assemble
from fem.cases import HarmonicCase, LoadItem, StaticCase
from fem.damping import rayleigh_coefficients
from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.harmonic_forms import unbalance_axes

# a mass on an axial bar: one degree of freedom (ux of B), k = EA / L, m = 1000 t
SDOF = BAR_SDOF + """case H harmonic { %s, at = (%s), damping = 5 percent }
"""
K_BAR = 200e9 * np.pi / 4 * (0.1683**2 - (0.1683 - 2 * 0.00711) ** 2) / 2.0    # E A / L, A of the pipe
MASS = 1e6
FN = np.sqrt(K_BAR / MASS) / (2 * np.pi)


def _rd(r, zeta):
    """Steady-state dynamic amplification and phase (degrees) of a damped SDOF (Chopra 2017,
    Sec. 3.2; reference-values.md section 5)."""
    return 1 / np.hypot(1 - r**2, 2 * zeta * r), np.degrees(np.arctan2(2 * zeta * r, 1 - r**2))


def _at(h, node):
    return list(h.record).index(node)


def test_unbalance_sdof_matches_the_rotating_unbalance_amplification():
    # rotating unbalance m e on a damped SDOF of mass M: X = (m e / M) r^2 R_d(r), the force
    # m e W^2 lagging the displacement by the same phase as any harmonic force (Rao, Mechanical
    # Vibrations, 5th ed., Sec. 3.7, rotating unbalance, the m e w^2 form; Chopra 2017 Sec. 3.3,
    # vibration generator, p0 = m e w^2; section numbers from memory, formula re-derived).
    # Turning about +Z, the force points along +X at phase 0 (the axis after Z is X); the
    # support takes its Y part. Check values from reference-values.md section 5 (zeta = 0.05):
    # r^2 R_d = 0.25 x 1.3304 at r = 0.5, 10 at r = 1, 4 x 0.3326 at r = 2.
    me = 50.0                                                      # kg m
    rs = np.array([0.5, 1.0, 2.0])
    h = solve(read_text(SDOF % (f"unbalance B = {me} kg*m about z", ", ".join(f"{float(r * FN)!r} Hz" for r in rs)))).modal[-1]
    u = h.u[:, _at(h, 1), 0]
    np.testing.assert_allclose(h.freq, rs * FN, rtol=1e-12)        # exactly the frequencies asked, no sweep
    rd, lag = _rd(rs, 0.05)
    np.testing.assert_allclose(np.abs(u) / (me / MASS), rs**2 * rd, rtol=1e-9)
    np.testing.assert_allclose(np.abs(u) / (me / MASS), [0.25 * 1.3304, 10.0, 4 * 0.3326], rtol=1e-4)
    np.testing.assert_allclose(-np.degrees(np.angle(u)), lag, atol=1e-7)


@pytest.mark.parametrize("form,n", [("like f^2 at 10 Hz", 2), ("like f at 10 Hz", 1), ("like f^-1 at 10 Hz", -1)],
                         ids=["f2", "f1", "f-1"])
def test_load_growing_with_a_power_of_frequency(form, n):
    # P (f / f0)^n on the SDOF: u = P (f / f0)^n / k R_d (Chopra 2017 Sec. 3.2 with the scaled force)
    rs = np.array([0.3, 1.0, 1.7])
    h = solve(read_text(SDOF % (f"force B = (100 kN, 0, 0) {form}", ", ".join(f"{float(r * FN)!r} Hz" for r in rs)))).modal[-1]
    u = h.u[:, _at(h, 1), 0]
    np.testing.assert_allclose(np.abs(u), 100e3 * (rs * FN / 10) ** n / K_BAR * _rd(rs, 0.05)[0], rtol=1e-9)


def test_lag_delays_the_response_by_the_same_angle():
    # a load lagging by 40 degrees: the response lags 40 degrees more than without it, same size
    at = f"{float(0.8 * FN)!r} Hz"
    plain = solve(read_text(SDOF % ("force B = (100 kN, 0, 0)", at))).modal[-1]
    late = solve(read_text(SDOF % ("force B = (100 kN, 0, 0) lag 40 deg", at))).modal[-1]
    ratio = late.u[0, _at(late, 1), 0] / plain.u[0, _at(plain, 1), 0]
    assert abs(ratio) == pytest.approx(1, rel=1e-12)
    assert -np.degrees(np.angle(ratio)) == pytest.approx(40, abs=1e-9)


# a vertical pipe column with a mass on top: the same stiffness and mass in X and Y
POST = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1 m) }
for i in 0..3 { member C[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N4 = 300 kg
case MODES modes { count = 24 }
case ORBIT harmonic { %s, from = 1 Hz, to = 40 Hz, points = 50, damping = 2 percent, record = "N4" }
"""


def test_two_forces_a_quarter_turn_apart_make_a_circular_orbit():
    # on a support as stiff and heavy in X as in Y, forces F cos(W t) along X and F cos(W t - 90)
    # along Y turn the top on a circle (radius constant in time) counter-clockwise about +Z:
    # equal amplitudes, Y lagging X by 90 degrees (superposition of two equal SDOF responses
    # a quarter period apart; closed form, Chopra 2017 Sec. 3.2)
    h = solve(read_text(POST % "force N4 = (1 kN, 0, 0), force N4 = (0, 1 kN, 0) lag 90 deg")).modal[-1]
    ux, uy = h.u[:, 0, 0], h.u[:, 0, 1]
    np.testing.assert_allclose(np.abs(uy), np.abs(ux), rtol=1e-9)
    d = (np.degrees(np.angle(ux) - np.angle(uy)) + 180) % 360 - 180
    np.testing.assert_allclose(d, 90, atol=1e-6)
    t = np.linspace(0, 1, 17)[:, None]                                     # a period, in turns
    x = np.real(ux[None] * np.exp(2j * np.pi * t))
    y = np.real(uy[None] * np.exp(2j * np.pi * t))
    radius = np.hypot(x, y)
    np.testing.assert_allclose(radius, np.abs(ux)[None].repeat(len(t), 0), rtol=1e-9)
    turn = x[0] * y[1] - y[0] * x[1]                                       # z of r(0) x r(dt) > 0
    assert np.all(turn > 0)
    # an unbalance about +Z is the same pair of forces, of size m e W^2
    me = 0.2
    u = solve(read_text(POST % f"unbalance N4 = {me} kg*m about (0, 0, 1)")).modal[-1]
    scale = me * (2 * np.pi * h.freq) ** 2 / 1e3
    np.testing.assert_allclose(u.u[:, 0, :3], h.u[:, 0, :3] * scale[:, None], rtol=1e-9,
                               atol=1e-12 * np.abs(u.u).max())


def test_unbalance_axes_turn_positively_about_the_shaft():
    for axis, e1 in [((1, 0, 0), (0, 1, 0)), ((0, 1, 0), (0, 0, 1)), ((0, 0, 2), (1, 0, 0))]:
        a, b = unbalance_axes(axis)
        np.testing.assert_allclose(a, e1)
        np.testing.assert_allclose(b, np.cross(np.array(axis) / np.linalg.norm(axis), e1))
    a, b = unbalance_axes((1, 1, 0.2))                                      # any direction
    n = np.array([1, 1, 0.2]) / np.linalg.norm([1, 1, 0.2])
    np.testing.assert_allclose([a @ n, b @ n, a @ b, np.linalg.norm(a), np.linalg.norm(b)], [0, 0, 0, 1, 1],
                               atol=1e-15)
    assert np.cross(a, b) @ n == pytest.approx(1)


FRAME = PIPE_ARM + """case MODES modes { count = 30 }
case F harmonic { force H = (1 kN, 0.5 kN, 0) lag 30 deg, force N2 = (0, 2 kN, 0) like f^2 at 10 Hz,
                  unbalance H = 0.5 kg*m about y lag 45 deg, line M1 = (0, 0, -1 kN/m) lag 60 deg,
                  at = %s, rayleigh = (2 Hz, 2 percent, 40 Hz, 3 percent), record = "*" }
"""


def _direct(m, freq):
    """Displacements (m, 6n), reactions (m, n, 6) and end forces (m, e, 12) of direct complex
    solves (K - W^2 M + i W C) u = F(W) with scipy, C = a0 M + a1 K, F(W) built here from
    each load: P e^{-i lag}, P (f / 10 Hz)^2, and the unbalance m e W^2 (e1 - i e2) e^{-i lag}
    with e1 = Z, e2 = Y x Z = X for a shaft along Y."""
    asm = assemble(m)
    f = asm.free
    n6 = 6 * m.n_nodes
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    a0, a1 = rayleigh_coefficients(2, 0.02, 40, 0.03)
    C = a0 * M + a1 * K
    H, N2, M1 = m.node_names.index("H"), m.node_names.index("N2"), m.member_names.index("M1")

    def static(kind, target, vector):
        return load_vector(m, asm, StaticCase(name="X", loads=(LoadItem(kind, np.array([target]),
                                                                         np.array(vector, float)),)))

    force_h, force_n2 = static("force", H, (1e3, 500, 0))[0], static("force", N2, (0, 2e3, 0))[0]
    line, fe = static("line", M1, (0, 0, -1e3))
    unb_x, unb_z = static("force", H, (1, 0, 0))[0], static("force", H, (0, 0, 1))[0]
    U = np.zeros((len(freq), n6), complex)
    FE = np.zeros((len(freq), m.n_members, 12), complex)
    for i, fr in enumerate(freq):
        W = 2 * np.pi * fr
        F = (force_h * np.exp(-1j * np.pi / 6) + force_n2 * (fr / 10) ** 2 + line * np.exp(-1j * np.pi / 3)
             + 0.5 * W**2 * (unb_z - 1j * unb_x) * np.exp(-1j * np.pi / 4))
        U[i, f] = spla.spsolve((K - W**2 * M + 1j * W * C).tocsc(), F[f])
        FE[i] = fe * np.exp(-1j * np.pi / 3)
    Rr, Mr = field_responses(m, asm, U.real)
    Ri, Mi = field_responses(m, asm, U.imag)
    return U, Rr + 1j * Ri, Mr + 1j * Mi - FE


@pytest.mark.parametrize("at", ["24.7 Hz", "(3 Hz, 17.5 Hz, 42 Hz)"], ids=["single", "list"])
def test_lagged_growing_and_unbalance_loads_equal_a_direct_complex_solve(at):
    # all 30 modes and classical damping: modal superposition is exact, so displacements,
    # reactions and end forces (with the line load's fixed-end forces, lagging 60 degrees)
    # equal a direct complex solve at every frequency given
    m = read_text(FRAME % at)
    h = solve(m).modal[-1]
    U, R, Fm = _direct(m, h.freq)
    assert h.listed and len(h.freq) == at.count("Hz")
    u = h.u.reshape(len(h.freq), -1)
    np.testing.assert_allclose(u, U, rtol=0, atol=1e-9 * np.abs(U).max())
    np.testing.assert_allclose(h.reactions[:, 0], R[:, 0], rtol=0, atol=1e-8 * np.abs(R[:, 0]).max())
    np.testing.assert_allclose(h.member_forces, Fm[:, h.members], rtol=0, atol=1e-8 * np.abs(Fm).max())


def test_rules_of_frequencies_and_load_forms():
    loads = (LoadItem("force", np.array([1]), np.array([1.0, 0, 0])),)
    with pytest.raises(ValueError, match="not both"):
        HarmonicCase(name="X", modes="M", loads=loads, fmin=1.0, fmax=2.0, at=(3.0,))
    with pytest.raises(ValueError, match="given twice"):
        HarmonicCase(name="X", modes="M", loads=loads, at=(3.0, 3.0))
    with pytest.raises(ValueError, match="needs from"):
        HarmonicCase(name="X", modes="M", loads=loads)
    assert HarmonicCase(name="X", modes="M", loads=loads, at=(5.0, 3.0)).at.tolist() == [3.0, 5.0]
    lagged = (LoadItem("force", np.array([1]), np.array([1.0, 0, 0]), lag=0.5),)
    with pytest.raises(ValueError, match="belong to harmonic cases"):
        StaticCase(name="S", loads=lagged)


@pytest.mark.parametrize("load,extra,message", [
    ("force B = (1 kN, 0, 0) lag 90 deg", "", None),
    ("force B = (1 kN, 0, 0) lag 90", "", "is an angle and needs its unit"),
    ("force B = (1 kN, 0, 0) lag 9 deg lag 9 deg", "", "'lag' is given twice"),
    ("force B = (1 kN, 0, 0) about x", "", "'about' gives an unbalance's shaft axis"),
    ("force B = (1 kN, 0, 0) like g^2 at 5 Hz", "", "'like' takes f raised to a power"),
    ("force B = (1 kN, 0, 0) like f^9 at 5 Hz", "", "the power is a number from -4 to 4"),
    ("force B = (1 kN, 0, 0) like f^2 at 5 s", "", "needs a frequency"),
    ("unbalance B = 0.1 kg*m", "", "give the shaft's axis"),
    ("unbalance B = (0.1 kg*m, 0, 0) about x", "", "an unbalance is one value"),
    ("unbalance B = 0.1 kg about x", "", r"m e is a mass times its eccentricity, in kg\*m, but a mass"),
    ("unbalance B = 0.1 about x", "", "but a plain number was given"),
    ("unbalance B = 0.1 kg*m about (0, 0, 0)", "", "cannot be"),
    ("unbalance B = 0.1 kg*m about x like f^2 at 3 Hz", "", "already grows"),
    ("force B = (1 kN, 0, 0)", ", from = 1 Hz", "'from' belongs to a sweep"),
    ("force B = (1 kN, 0, 0)", ", points = 5", "'points' belongs to a sweep"),
], ids=lambda v: v if isinstance(v, str) and len(v) < 12 else None)
def test_deck_load_forms_and_errors_are_located(load, extra, message):
    text = SDOF % (load + extra, "3 Hz")
    if message is None:
        assert read_text(text).cases[-1].loads[0].lag == pytest.approx(np.pi / 2)
        return
    with pytest.raises(DeckError, match=message) as err:
        read_text(text)
    assert ":11:" in str(err.value)                                # the case's line


def test_lag_outside_a_harmonic_case_is_refused_where_written():
    text = SDOF.replace("case H harmonic { %s, at = (%s), damping = 5 percent }",
                        "case S static { force B = (1 kN, 0, 0) lag 90 deg }")
    with pytest.raises(DeckError, match=r":11:\d+: case S: force: 'lag' belongs to the loads of a harmonic case"):
        read_text(text)


@pytest.mark.parametrize("options,hint", [("from = 3 Hz, to = 3 Hz", "at = 24.7 Hz"),
                                          ("from = 3 Hz, to = 5 Hz, points = 1", "at = 24.7 Hz")],
                         ids=["from=to", "points=1"])
def test_a_sweep_of_one_frequency_points_to_at(options, hint):
    text = SDOF.replace("at = (%s)", options) % "force B = (1 kN, 0, 0)"
    with pytest.raises(DeckError) as err:
        read_text(text)
    assert hint in str(err.value)


def test_velocity_is_omega_times_displacement_and_rms_is_peak_over_root_two(tmp_path, capsys):
    # for a harmonic x = X cos(W t - lag): v = W X, a = W^2 X in amplitude, and the RMS of a
    # sinusoid is its amplitude / sqrt 2 (definitions); checked in the result, the CSV table,
    # results.json and the summary (mm/s)
    import csv
    import json

    from fem.output.summary import print_summary
    from fem.output.write import write_results
    solved = solve(read_text(FRAME % "(3 Hz, 17.5 Hz, 42 Hz)"))
    h = solved.modal[-1]
    W = 2 * np.pi * h.freq[:, None, None]
    np.testing.assert_allclose(h.velocity(), 1j * W * h.u[:, :, :3], rtol=1e-14)
    np.testing.assert_allclose(h.acceleration(), -W**2 * h.u[:, :, :3], rtol=1e-14)
    # every node is recorded: the peaks over the frequencies follow from the displacements
    vel = np.abs(h.velocity()).max(axis=0)
    np.testing.assert_allclose(h.vel_peak[h.record], vel, rtol=1e-12, atol=1e-15 * vel.max())
    np.testing.assert_allclose(h.acc_peak[h.record], np.abs(h.acceleration()).max(axis=0), rtol=1e-12,
                               atol=1e-15 * h.acc_peak.max())
    out = tmp_path / "out"
    written = write_results(solved, out, render=False)
    with gzip.open(out / "frf_F.csv.gz", "rt", newline="") as fh:
        rows = [row for row in csv.DictReader(fh) if row["node"] == "H"]
    assert len(rows) == 3
    for row, fr in zip(rows, h.freq):
        w = 2 * np.pi * fr
        for d in "xyz":
            # each number is written to 9 significant digits (half a unit in the 9th place is at
            # most 5e-9 of it), so two of them agree to 1e-8 and a little round-off
            assert float(row[f"amp_v{d}"]) == pytest.approx(w * float(row[f"amp_u{d}"]), rel=1.1e-8)
            assert float(row[f"amp_a{d}"]) == pytest.approx(w**2 * float(row[f"amp_u{d}"]), rel=1.1e-8)
            for q in "uva":
                assert float(row[f"rms_{q}{d}"]) == pytest.approx(float(row[f"amp_{q}{d}"]) / np.sqrt(2), rel=1.1e-8)
    case = json.loads((out / "results.json").read_text())["cases"][-1]
    top = case["largest_motion"]["velocity_m_s"]
    assert top["peak"] == pytest.approx(h.vel_peak.max(), rel=1e-14)
    assert top["rms"] == pytest.approx(h.vel_peak.max() / np.sqrt(2), rel=1e-14)
    k = solved.model.node_names.index(top["node"])
    assert top["peak"] == h.vel_peak[k, "XYZ".index(top["direction"])]
    assert case["recorded_motion"]["H"]["acceleration_m_s2"]["peak"] == pytest.approx(
        h.acc_peak[solved.model.node_names.index("H")].tolist(), rel=1e-14)
    assert case["frequencies_listed"] is True
    capsys.readouterr()
    print_summary(solved, written)
    text = capsys.readouterr().out
    assert "harmonic at 3, 17.5, 42 Hz" in text
    assert f"largest velocity {1e3 * top['peak']:.4g} mm/s amplitude ({1e3 * top['rms']:.4g} mm/s RMS)" in text


def test_ground_shaking_gives_absolute_acceleration_by_the_transmissibility():
    # base acceleration a_g cos(W t) under a damped SDOF: the mass's absolute acceleration is
    # TR a_g, TR = sqrt(1 + (2 zeta r)^2) R_d (Chopra 2017 Sec. 3.6; reference-values.md
    # section 5: 1.33204 at r = 0.5, 10.04988 at r = 1, 0.33918 at r = 2, zeta = 0.05)
    rs = np.array([0.5, 1.0, 2.0])
    text = SDOF % ("ground = (1 m/s^2, 0, 0)", ", ".join(f"{float(r * FN)!r} Hz" for r in rs))
    h = solve(read_text(text)).modal[-1]
    acc = np.abs(h.acceleration()[:, _at(h, 1), 0])
    np.testing.assert_allclose(acc, [1.33204, 10.04988, 0.33918], rtol=1e-5)
    rd = _rd(rs, 0.05)[0]
    np.testing.assert_allclose(acc, np.sqrt(1 + (2 * 0.05 * rs) ** 2) * rd, rtol=1e-9)
    # the support moves with the ground: its absolute acceleration is a_g
    np.testing.assert_allclose(np.abs(h.acceleration()[:, _at(h, 0), 0]), 1.0, rtol=1e-12)
    np.testing.assert_allclose(h.acc_peak[1, 0], acc.max(), rtol=1e-12)


def test_sweep_refined_around_given_frequencies():
    # the hook for declared excitations: each frequency given inside the band is a point of the
    # sweep, with points 1 % and 2 % either side; one outside the band adds nothing
    from fem.analysis.harmonic import AROUND, sweep_frequencies
    f = sweep_frequencies(1, 50, 5, "linear", [], [], around=[24.7, 80.0])
    for k in range(-2, 3):
        assert np.any(np.isclose(f, 24.7 * (1 + k * AROUND), rtol=1e-14))
    assert len(f) == 5 + 5 and f.max() == 50


def test_undamped_list_refused_only_on_a_natural_frequency():
    # undamped response is bounded away from resonance (R_d = 1 / |1 - r^2|, Chopra 2017
    # Sec. 3.1): a list off the natural frequency solves, one on it is refused
    text = SDOF.replace(", damping = 5 percent", "")
    h = solve(read_text(text % ("force B = (100 kN, 0, 0)", f"{float(0.5 * FN)!r} Hz"))).modal[-1]
    assert abs(h.u[0, _at(h, 1), 0]) == pytest.approx(100e3 / K_BAR / (1 - 0.25), rel=1e-9)
    from fem.errors import ModelError
    with pytest.raises(ModelError, match="undamped modes"):
        solve(read_text(text % ("force B = (100 kN, 0, 0)", f"{float(FN)!r} Hz")))


def test_static_correction_follows_lagging_and_growing_loads():
    # 6 of 30 modes: below the highest retained mode the missing modes respond quasi-statically,
    # so the residual correction (Cornwell, Craig & Johnson 1983), built per load term with its
    # own lag and growth, must remove most of the truncation error against the direct solve
    m = read_text(FRAME % "(3 Hz, 6 Hz)")
    U = _direct(m, [3.0, 6.0])[0]

    def err(extra):
        h = solve(read_text((FRAME % "(3 Hz, 6 Hz)").replace("count = 30", "count = 6")
                            .replace('record = "*"', 'record = "*"' + extra))).modal[-1]
        return (np.linalg.norm(h.u.reshape(2, -1) - U, axis=1) / np.linalg.norm(U, axis=1)).max()

    plain, corrected = err(""), err(", correction = on")
    assert plain > 1e-4                   # truncation is visible without the correction
    assert corrected < 0.02 * plain
