"""Forces of springs between nodes in the response cases and the frequency sensitivity to them,
against closed forms (sources beside each) and against full solves."""

import numpy as np
import pytest
from shared_decks import ISOLATED_PAIR, ISOLATED_SDOF

from fem import solve
from fem.analysis.sensitivity import frequency_sensitivity
from fem.deck.reader import read_text

K, M = 250e3, 400.0
WN = np.sqrt(K / M)


def test_free_vibration_peak_is_the_starting_force():
    # released from the deflection under 2 kN, undamped: u(t) = u0 cos(w t) (Chopra, Dynamics
    # of Structures, 4th ed., eq. 2.1.3 with zero initial velocity), so the largest spring force
    # is the starting one, at t = 0 and again every period
    r = solve(read_text(ISOLATED_SDOF + """
case PUSH static { force A = (0, 0, 2 kN) }
case MODES modes { count = 1 }
case LET free { start = PUSH, duration = 1 s, step = 0.001 s, damping = 0 percent }
"""))
    s = r.springs["LET"]
    assert s.basis == "peak over time" and s.at_unit == "s"
    assert s.force[0, 2] == pytest.approx(2000.0, rel=1e-9)
    T = 2 * np.pi / WN
    assert min(s.at[0, 2] % T, T - s.at[0, 2] % T) < 1e-3 + 1e-9     # at a multiple of the period


def test_step_load_doubles_the_spring_force():
    # a suddenly applied constant force on an undamped SDOF: u_max = 2 F / k (Chopra, 4th ed.,
    # sec. 4.3, eq. 4.3.2), at t = T/2 (3T/2, ...); step 1 ms resolves the peak to 1 - cos(w dt / 2) ~ 1e-4
    r = solve(read_text(ISOLATED_SDOF + """
case MODES modes { count = 1 }
case KICK history { force A = (0, 0, 1 kN), time = step, duration = 0.5 s, step = 0.001 s, damping = 0 percent }
"""))
    s = r.springs["KICK"]
    assert s.force[0, 2] == pytest.approx(2000.0, rel=2e-4)
    half = s.at[0, 2] / (np.pi / WN)                 # at T/2, or a later odd multiple (undamped)
    assert abs(half - round(half)) * np.pi / WN < 1.5e-3 and round(half) % 2 == 1


def test_harmonic_amplitude_against_the_deformation_response_factor():
    # steady amplitude of k u under p0 sin(w t): p0 R_d, R_d = 1 / sqrt((1 - r^2)^2 + (2 zeta r)^2)
    # (Chopra, 4th ed., eq. 3.2.11); the sweep's largest, at the frequency reported
    r = solve(read_text(ISOLATED_SDOF + """
case MODES modes { count = 1 }
case HUM harmonic { force A = (0, 0, 100 N), from = 1 Hz, to = 8 Hz, points = 200, damping = 3 percent }
"""))
    s = r.springs["HUM"]
    assert s.basis == "amplitude" and s.at_unit == "Hz"
    ratio = 2 * np.pi * s.at[0, 2] / WN
    rd = 1 / np.sqrt((1 - ratio**2) ** 2 + (2 * 0.03 * ratio) ** 2)
    assert s.force[0, 2] == pytest.approx(100 * rd, rel=1e-9)
    assert s.force[0, 2] == pytest.approx(100 / (2 * 0.03), rel=2e-3)   # near 1/(2 zeta) at resonance




def test_spectrum_spring_forces_combine_per_mode_forces():
    # each mode's force k (phi_B - phi_A) Gamma Sa / w^2 (Chopra, 4th ed., sec. 13.1, the peak
    # modal responses), combined by SRSS (eq. 13.7.2): not k times combined displacements
    r = solve(read_text(ISOLATED_PAIR + """
case QUAKE spectrum { modes = MODES, curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 0, 1),
                      combine = srss }
"""))
    q, modes = r["QUAKE"], r["MODES"]
    m = r.model
    ia, ib = m.node_names.index("A"), m.node_names.index("B")
    phi = modes.shapes[:, 2, :]
    gamma = 800 * phi[ia] + 300 * phi[ib]
    w = modes.modes.omega
    per_mode = 1e6 * (phi[ib] - phi[ia]) * gamma * q.sa[0] / w**2
    s = r.springs["QUAKE"]
    assert s.basis == "combined peaks"
    assert s.force[1, 2] == pytest.approx(np.sqrt(np.sum(per_mode**2)), rel=1e-9)
    from_u = 1e6 * abs(q.u[ib, 2] - q.u[ia, 2])
    assert abs(s.force[1, 2] - from_u) > 1e-3 * s.force[1, 2]     # the two differ here


def test_sensitivity_to_a_spring_between_nodes_against_central_differences():
    # d lambda / d p = phi^T K_spring phi (Fox and Kapoor 1968), against full re-solves with the
    # spring scaled by 1 +/- h: central difference error O(h^2) ~ 1e-8 of lambda at h = 1e-4
    r = solve(read_text(ISOLATED_PAIR))
    sens = frequency_sensitivity(r.model, r["MODES"])
    row = [i for i, (k, t) in enumerate(zip(sens.kind, sens.target)) if k == "spring" and t == "ISO"]
    assert len(row) == 1
    h = 1e-4
    lam = []
    for p in (1 + h, 1 - h):
        rp = solve(read_text(ISOLATED_PAIR.replace("uz = 1 MN/m", f"uz = {1e6 * p!r} N/m")))
        lam.append(rp["MODES"].modes.omega ** 2)
    fd = (lam[0] - lam[1]) / (2 * h)
    np.testing.assert_allclose(sens.d_lambda[row[0]], fd, rtol=1e-6)
    assert np.all(sens.energy_check < 1e-8)


def test_spring_forces_reach_the_tables_results_json_summary_and_report(tmp_path, capsys):
    import csv
    import json

    from fem import write_results
    from fem.output.summary import print_summary

    r = solve(read_text(ISOLATED_SDOF + """
case PUSH static { force A = (0, 0, -2 kN) }
case MODES modes { count = 1 }
"""))
    written = write_results(r, tmp_path, render=False)
    rows = list(csv.DictReader(open(tmp_path / "springs_PUSH.csv")))
    assert rows[0]["spring"] == "ISO" and float(rows[0]["Fz_N"]) == pytest.approx(-2000.0, rel=1e-12)
    assert float(rows[0]["duz_m"]) == pytest.approx(-2000.0 / K, rel=1e-12)
    modes = list(csv.DictReader(open(tmp_path / "springs_MODES.csv")))
    assert modes[0]["mode"] == "1"
    doc = json.load(open(tmp_path / "results.json"))
    assert doc["node_springs"]["ISO"]["stiffness"][2] == K
    push = next(c for c in doc["cases"] if c["name"] == "PUSH")
    assert push["springs"]["largest"]["spring"] == "ISO"
    assert "Springs between nodes" in (tmp_path / "report.html").read_text()
    print_summary(r, written)
    assert "springs: largest force 2 kN along z of ISO" in capsys.readouterr().out


def test_isolated_fan_frame_demo():
    # decks/fanframe-isolated.deck: the isolators carry the machines' weight (statics: the four
    # vertical forces sum to (520 + 310) kg g0), the base's modes lie below the fan's lowest
    # speed less its margin (10 Hz / 1.2), and the unbalance velocity limit passes
    from pathlib import Path

    from fem import read_deck

    r = solve(read_deck(Path(__file__).parents[1] / "decks" / "fanframe-isolated.deck"))
    s = r.springs["DEAD"]
    assert s.force[:, 2].sum() == pytest.approx(-(520 + 310) * 9.80665, rel=1e-9)
    freq = r["MODES"].modes.freq
    assert np.all(freq[:5] < 10 / 1.2) and freq[5] > 10 / 1.2
    assert r["DEAD"].equilibrium < 1e-9
    assert r["RUN"].limits and all(lim.ratio < 0.5 for lim in r["RUN"].limits)   # about 0.27


def test_harmonic_case_recording_a_node_no_member_reaches():
    # regression: a harmonic load that grows with the frequency (an unbalance) and a recorded
    # node that no member has an end at (here a mass on an isolator) failed when the end-force
    # table of the recorded members was empty
    r = solve(read_text(ISOLATED_SDOF + """
case MODES modes { count = 1 }
case RUN harmonic { unbalance A = 10 kg * 1 mm about x, from = 1 Hz, to = 8 Hz, points = 50, damping = 2 percent,
                    record = "A" }
"""))
    assert r["RUN"].member_forces.shape == (len(r["RUN"].freq), 0, 12)
    # the unbalance force m e w^2 through the isolator: its amplitude is k |u| (a vertical share
    # of the force turning in the y-z plane)
    s = r.springs["RUN"]
    assert s.force[0, 2] > 0 and s.at[0, 2] == pytest.approx(WN / (2 * np.pi), rel=0.05)


def test_combination_with_a_history_and_a_spectrum_bounds_the_spring_force(tmp_path):
    # dead load, a suddenly applied 1 kN up (its spring force runs from 0 to 2 kN, Chopra sec.
    # 4.3) and half a vertical spectrum peak (no sign: both ways, fem/analysis/combine.py)
    r = solve(read_text(ISOLATED_SDOF + """
case DEAD static { gravity = (0, 0, -9.81 m/s^2) }
case MODES modes { count = 1 }
case KICK history { force A = (0, 0, 1 kN), time = step, duration = 0.5 s, step = 0.001 s, damping = 0 percent }
case QUAKE spectrum { modes = MODES, curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 0, 1) }
combo MIX = 1.0*DEAD + 1.0*KICK + 0.5*QUAKE
envelope ALL over DEAD, MIX, QUAKE
"""))
    s = r.springs["MIX"]
    assert s.basis == "bounds"
    dead, peak = -400 * 9.81, r.springs["QUAKE"].force[0, 2]
    assert s.force[0, 2] == pytest.approx(dead + 2000 + 0.5 * peak, rel=1e-4)
    assert s.force_min[0, 2] == pytest.approx(dead - 0.5 * peak, rel=1e-9)
    assert s.at_min[0, 2] == 0.0                     # the step load starts from rest
    env, quake = r.springs["ALL"], r.springs["QUAKE"]
    assert env.force[0, 2] == pytest.approx(max(s.force[0, 2], quake.force[0, 2], dead), rel=1e-12)
    assert env.force_min[0, 2] == pytest.approx(min(s.force_min[0, 2], -quake.force[0, 2], dead), rel=1e-12)
    from fem import write_results

    write_results(r, tmp_path, render=False)
    import csv

    row = next(csv.DictReader(open(tmp_path / "springs_MIX.csv")))
    assert float(row["Fz_N_min"]) == pytest.approx(dead - 0.5 * peak, rel=1e-9)
