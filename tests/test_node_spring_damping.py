"""The damping ratio of springs between nodes as modal damping (fem.analysis.spring_damping):
against a direct complex eigen solve, and in a harmonic case."""

import numpy as np
import pytest
import scipy.linalg as sla
from shared_decks import ISOLATED_PAIR, ISOLATED_SDOF

from fem import solve
from fem.analysis.spring_damping import spring_ratios
from fem.deck.reader import read_text

TWO = ISOLATED_PAIR.replace("(uz = 1 MN/m)\n", "(uz = 1 MN/m) damping = ZETA\n")


@pytest.mark.parametrize("zeta_s", [0.01, 0.05])
def test_energy_weighted_ratio_against_a_complex_eigen_solve(zeta_s):
    # the isolator as a hysteretic damper, stiffness k2 (1 + 2 i zeta_s); the complex eigenvalues
    # lambda = w^2 (1 + 2 i zeta) of (K + 2 i zeta_s K_iso) x = lambda M x (numpy/scipy, direct)
    # give each mode's exact ratio Im(lambda) / (2 Re(lambda)); the energy-weighted estimate is
    # its first-order term: within 1 % here (the error is O(zeta^2), 0.3 % at 5 %)
    r = solve(read_text(TWO.replace("ZETA", f"{zeta_s}")))
    got = spring_ratios(r.model, r["MODES"])
    k1, k2, m1, m2 = 4e6, 1e6, 800.0, 300.0
    K = np.array([[k1 + k2, -k2], [-k2, k2]])
    K_iso = np.array([[k2, -k2], [-k2, k2]])
    lam = sla.eigvals(K + 2j * zeta_s * K_iso, np.diag([m1, m2]))
    lam = lam[np.argsort(lam.real)]
    exact = lam.imag / (2 * lam.real)
    np.testing.assert_allclose(got, exact, rtol=0.01)
    assert np.all(got > 0) and np.all(got < zeta_s)      # each mode strains the isolator only in part


def test_an_undamped_spring_adds_nothing():
    r = solve(read_text(TWO.replace(" damping = ZETA", "")))
    assert np.all(spring_ratios(r.model, r["MODES"]) == 0)


def test_a_harmonic_case_uses_the_spring_damping():
    # one DOF on a damped isolator, no damping of the case's own: the mode's ratio is the
    # spring's, and the amplitude of k u is p0 R_d with R_d of that ratio (Chopra, Dynamics of
    # Structures, 4th ed., eq. 3.2.11)
    deck = ISOLATED_SDOF.replace("(uz = 250 kN/m)\n", "(uz = 250 kN/m) damping = 6 percent\n") + """
case MODES modes { count = 1 }
case HUM harmonic { force A = (0, 0, 100 N), from = 1 Hz, to = 8 Hz, points = 200 }
"""
    r = solve(read_text(deck))
    assert r["HUM"].zeta[0] == pytest.approx(0.06, rel=1e-12)
    s = r.springs["HUM"]
    ratio = 2 * np.pi * s.at[0, 2] / np.sqrt(250e3 / 400)
    assert s.force[0, 2] == pytest.approx(100 / np.sqrt((1 - ratio**2) ** 2 + (0.12 * ratio) ** 2), rel=1e-9)
