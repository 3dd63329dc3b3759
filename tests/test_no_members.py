"""A model with no members at all (a machine on an isolator: nodes, a spring between them, a
point mass) through every case kind, a combination and an envelope, the results folder and the
CLI; the numbers against closed forms of the single-degree-of-freedom system (sources beside
each check)."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from fem import read_text, solve, write_results

K, M, ZETA = 1e6, 800.0, 0.02          # N/m, kg, damping ratio of the deck below
WN = np.sqrt(K / M)                     # rad/s
TD, DT = 0.05, 0.005                    # half-sine pulse length and the history's step, s
DECK = """
node G = (0, 0, 0)
node A = (0, 0, 0.5 m)
support G fixed
support A (ux, uy, rx, ry, rz)
spring ISO: G -> A (uz = 1 MN/m)
mass A = 800 kg
case MODES modes { count = 1 }
case PUSH static { force A = (0, 0, -1 kN) }
case KNOCK history { force A = (0, 0, 1 kN), time = halfsine(0.05 s), duration = 1 s, step = 0.005 s, damping = 2 percent }
case HUM harmonic { force A = (0, 0, 100 N), from = 1 Hz, to = 10 Hz, damping = 2 percent }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 0, 1) }
combo C = 1*PUSH + 1*KNOCK
envelope W over PUSH, C
"""
A, UZ = 1, 2                            # node A's index, the vertical direction


@pytest.fixture(scope="module")
def results():
    return solve(read_text(DECK, "isolator.deck"))


def test_static_deflection_and_spring_force(results):
    # Hooke: u = F / k = 1 kN / 1 MN/m = 1 mm, and the spring carries the whole 1 kN
    assert results["PUSH"].u[A, UZ] == pytest.approx(-1e-3, rel=1e-12)
    assert abs(results.springs["PUSH"].force[0, 2]) == pytest.approx(1e3, rel=1e-12)
    assert results.stresses == {}                       # no member, no stress


def test_natural_frequency(results):
    # f = sqrt(k/m) / (2 pi) (Chopra, Dynamics of Structures, 4th ed., sec. 2.1.2; shared
    # reference-values.md sec. 5)
    assert results["MODES"].modes.freq[0] == pytest.approx(WN / (2 * np.pi), rel=1e-12)


def _reference_history(chords: bool = False):
    """m u'' + c u' + k u = p0 sin(pi t / td) for t < td, 0 after, from rest, integrated by
    scipy's RK45 at tolerances far below the checks' (c = 2 zeta m wn); with `chords` the
    pulse is taken on straight lines between the steps."""
    t = np.arange(0.0, 1.0 + DT / 2, DT)
    samples = 1e3 * np.sin(np.pi * np.minimum(t, TD) / TD)

    def rhs(s, y):
        p = np.interp(s, t, samples) if chords else (1e3 * np.sin(np.pi * s / TD) if s < TD else 0.0)
        return [y[1], (p - 2 * ZETA * M * WN * y[1] - K * y[0]) / M]

    first = solve_ivp(rhs, (0, TD), [0, 0], rtol=1e-11, atol=1e-14, dense_output=True)
    rest = solve_ivp(rhs, (TD, 1.0), first.sol(TD), rtol=1e-11, atol=1e-14, dense_output=True)
    return t, np.where(t <= TD, first.sol(np.minimum(t, TD))[0], rest.sol(np.maximum(t, TD))[0])


def test_history_peak_against_direct_integration(results):
    # the half-sine pulse is taken piecewise linear between the steps (fem/analysis/recurrence.py):
    # the impulse of a chord differs from the sine's by about (pi dt / td)^2 / 12 = 0.8 %
    # (trapezoid rule error, common practice, no source), so the response to 1 %; the peak is
    # compared at the same step times, so sampling the maximum costs nothing
    h = results["KNOCK"]
    t, ref = _reference_history()
    row = list(h.record).index(A)
    assert np.allclose(h.t, t)
    assert np.abs(h.u[:, row, UZ]).max() == pytest.approx(np.abs(ref).max(), rel=0.01)
    assert np.abs(h.u[:, row, UZ] - ref).max() < 0.01 * np.abs(ref).max()
    assert h.peak[A, UZ] == pytest.approx(np.abs(ref).max(), rel=0.01)
    assert h.stresses is None
    # on the same chords the recurrence is exact (Chopra, 4th ed., sec. 5.2): only the
    # reference's integration error is left
    _, chords = _reference_history(chords=True)
    assert np.abs(h.u[:, row, UZ] - chords).max() < 1e-6 * np.abs(chords).max()


def test_harmonic_amplitude_at_resonance(results):
    # steady amplitude (p0/k) R_d, R_d = 1 / sqrt((1 - r^2)^2 + (2 zeta r)^2): at r = 1 it is
    # p0 / (2 zeta k) = 2.5 mm, and its largest 1 / (2 zeta sqrt(1 - zeta^2)) times p0/k at
    # r = sqrt(1 - 2 zeta^2) (Chopra, Dynamics of Structures, 4th ed., sec. 3.2, eqs. 3.2.11
    # and after; equation numbers from memory; reference-values.md sec. 5 rates the formulas H).
    # The sweep's largest lies between the two (0.02 % apart), its grid refined at the mode.
    r = results["HUM"]
    at_one, top = 100.0 / (2 * ZETA * K), 100.0 / (2 * ZETA * K * np.sqrt(1 - ZETA**2))
    assert at_one * (1 - 1e-4) <= r.peak[A, UZ] <= top * (1 + 1e-9)
    assert r.peak_freq[A, UZ] == pytest.approx(WN * np.sqrt(1 - 2 * ZETA**2) / (2 * np.pi), rel=2e-3)
    assert r.stresses is None


def test_spectrum_peak_of_one_mode(results):
    # one mode holding the whole mass: the peak deformation is A / wn^2 and the base force m A
    # (Chopra, 4th ed., sec. 6.7), A the spectral acceleration at the mode's period
    s = results["EQ"]
    sa = float(s.sa[0, 0])
    assert s.u[A, UZ] == pytest.approx(sa / WN**2, rel=1e-9)
    assert abs(s.reactions[0, UZ]) == pytest.approx(M * sa, rel=1e-9)


def test_combination_and_envelope(results):
    # PUSH + KNOCK by time: the static deflection plus the history at every step
    h, row = results["KNOCK"], list(results["KNOCK"].record).index(A)
    both = results["PUSH"].u[A, UZ] + h.u[:, row, UZ]
    c = results["C"].fields["displacement"]
    assert c.min[A, UZ] == pytest.approx(both.min(), rel=1e-9)
    assert c.max[A, UZ] == pytest.approx(both.max(), rel=1e-9)
    w = results["W"].fields["displacement"]
    assert w.min[A, UZ] == pytest.approx(min(both.min(), results["PUSH"].u[A, UZ]), rel=1e-9)
    assert "stress" not in results["C"].fields or results["C"].fields["stress"] is None


def test_results_folder(results, tmp_path):
    write_results(results, tmp_path / "out", render=False)
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    assert {c["name"] for c in doc["cases"]} == {"MODES", "PUSH", "KNOCK", "HUM", "EQ"}
    assert {c["name"] for c in doc["demands"]} == {"C", "W"}
    for name in ("displacements.csv", "reactions.csv", "member_forces.csv", "frf_HUM.csv.gz",
                 "frf_member_forces_HUM.csv.gz", "history_KNOCK.csv.gz", "report.html"):
        assert (tmp_path / "out" / name).is_file(), name


def test_command_line_with_pictures(tmp_path):
    deck = tmp_path / "isolator.deck"
    deck.write_text(DECK)
    run = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(tmp_path / "out")],
                         capture_output=True, text=True, cwd=Path(__file__).resolve().parents[1], timeout=300)
    assert run.returncode == 0, run.stderr
    assert "pictures skipped: the model has no members to draw" in run.stdout
    assert "zero-size" not in run.stdout + run.stderr
    assert "governed by" not in run.stdout
