"""Spectrum shapes, CQC correlation and combination rules against reference-values.md section 6."""

import numpy as np
import pytest

from fem.analysis.modal_sum import combine, combine_directions, cqc_correlation
from fem.spectrum import Spectrum, damping_correction

G = 9.80665


def test_plateau_shape_values():
    # EN 1998-1:2004 Sec. 3.2.2.2, Type 1 ground B, a_g = 0.25 g, 5 % (reference-values.md
    # section 6 example, values C, printed to 5-6 digits)
    sp = Spectrum("plateau", (0.25 * G, 1.2, 0.15, 0.5, 2.0), zeta=0.05)
    T = np.array([0, 0.1, 0.3, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0])
    expect = [0.30, 0.60, 0.75, 0.50, 0.375, 0.25, 0.1875, 0.083333, 0.046875]
    np.testing.assert_allclose(sp(T) / G, expect, rtol=5e-6)
    # eta at 2 % damping: S_e(1.0 s) = 0.448211 g
    assert Spectrum("plateau", (0.25 * G, 1.2, 0.15, 0.5, 2.0), zeta=0.02)(1.0) / G == pytest.approx(0.448211, rel=2e-6)
    # eta floor 0.55 at 30 %
    assert Spectrum("plateau", (G, 1, 0.15, 0.5, 2), zeta=0.3)(0.3) / G == pytest.approx(2.5 * 0.55)


def test_twoperiod_shape_values():
    # ASCE/SEI 7-16 Sec. 11.4.6 shape, S_DS = 0.8, S_D1 = 0.4 g, T_L = 6 s (reference-values.md
    # section 6, values C) and the second example S_DS = 1.0, S_D1 = 0.68, T_L = 8 s
    sp = Spectrum("twoperiod", (0.8 * G, 0.4 * G, 6.0))
    T = np.array([0, 0.05, 0.3, 1.0, 2.0, 6.0, 8.0])
    np.testing.assert_allclose(sp(T) / G, [0.32, 0.56, 0.80, 0.40, 0.20, 0.066667, 0.0375], rtol=5e-6)
    sp2 = Spectrum("twoperiod", (1.0 * G, 0.68 * G, 8.0))
    np.testing.assert_allclose(sp2(np.array([0.1, 1.0, 10.0])) / G, [0.841176, 0.68, 0.0544], rtol=1e-6)


@pytest.mark.parametrize("zeta,r,rho", [
    # reference-values.md section 6 rho table (Der Kiureghian 1981 formula; values C, 5 digits)
    (0.02, 0.5, 0.00301), (0.02, 0.9, 0.12570), (0.05, 0.8, 0.16563), (0.05, 0.95, 0.79141),
    (0.10, 0.67, 0.19360), (0.10, 1.25, 0.44169), (0.05, 1.1, 0.52322),
])
def test_cqc_correlation_table(zeta, r, rho):
    c = cqc_correlation([1.0, r], [zeta, zeta])
    assert c[0, 1] == pytest.approx(rho, abs=6e-6)
    assert c[1, 0] == pytest.approx(c[0, 1], rel=1e-12)


def test_cqc_mixed_damping():
    # zeta_i = 0.02, zeta_j = 0.05: 0.26994 at r = 0.9 and 0.90351 at r = 1 (reference-values.md)
    assert cqc_correlation([1.0, 0.9], [0.02, 0.05])[0, 1] == pytest.approx(0.26994, abs=6e-6)
    assert cqc_correlation([1.0, 1.0], [0.02, 0.05])[0, 1] == pytest.approx(0.90351, abs=6e-6)


def test_combination_worked_example():
    # reference-values.md section 6: R1 = 1.0, R2 = 0.8, zeta = 5 %
    for r, cqc, cqc_neg in ((0.9, 1.54817, 0.93976), (0.5, 1.29212, 1.26902)):
        rho = cqc_correlation([1.0, r], [0.05, 0.05])
        assert combine(np.array([1.0, 0.8]), "cqc", rho) == pytest.approx(cqc, abs=6e-6)
        assert combine(np.array([1.0, -0.8]), "cqc", rho) == pytest.approx(cqc_neg, abs=6e-6)
    assert combine(np.array([1.0, 0.8]), "srss") == pytest.approx(1.28062, abs=6e-6)
    assert combine(np.array([1.0, -0.8]), "abs") == pytest.approx(1.8)


def test_direction_rules():
    R = np.array([[10.0], [4.0], [2.0]])
    assert combine_directions(R, "srss")[0] == pytest.approx(np.sqrt(120))
    assert combine_directions(R, "100/30")[0] == pytest.approx(10 + 0.3 * 6)


def test_plateau_ordinates_at_per_ordinate_damping():
    # one call, one damping ratio per ordinate: S_e(1.0 s) of the Type 1 ground B example at
    # 2 %, 5 % and 30 % (0.448211 g, 0.375 g and the eta floor 0.55 x 0.375 g; reference-values.md
    # section 6, values C); the zero-period value a_g S does not depend on damping
    sp = Spectrum("plateau", (0.25 * G, 1.2, 0.15, 0.5, 2.0))
    np.testing.assert_allclose(sp(np.ones(3), np.array([0.02, 0.05, 0.30])) / G,
                               [0.448211, 0.375, 0.55 * 0.375], rtol=2e-6)
    np.testing.assert_allclose(sp(np.zeros(2), np.array([0.02, 0.30])) / G, 0.30, rtol=1e-14)
    np.testing.assert_allclose(damping_correction([0.05, 0.10]), [1.0, 0.816497], rtol=1e-6)
