"""Saint-Venant J of channels with parallel flanges and root fillets, solved numerically
(fem.sections.torsion.channel_torsion_constant), against an independent finite-difference
solution of the same outline, the thin-wall limit and published UPE tables (its convergence under
finer meshes is checked with the I shape's in tests/test_ishape_torsion.py).

Sources beside each check. The UPE dimensions (h, b, tw, tf, r) are DIN 1026-2 / EN 10279 rows
as transcribed to a public section-property data file; their printed It (cm^4, three figures) is
a steel producer's sales programme as quoted in a public test file (a secondary source, not
checked against the producer's document).
"""

import numpy as np
import pytest
from prandtl_grid import channel_nodes, prandtl_J

from fem.sections import channel
from fem.sections.torsion import channel_torsion_constant

# name, d, bf, tw, tf, r (mm); printed It (cm^4)
UPE = [("UPE 80", 80, 50, 4.0, 7.0, 10, 1.47), ("UPE 100", 100, 55, 4.5, 7.5, 10, 2.01),
       ("UPE 200", 200, 80, 6.0, 11.0, 13, 8.89), ("UPE 220", 220, 85, 6.5, 12.0, 13, 12.1),
       ("UPE 300", 300, 100, 9.5, 15.0, 15, 31.5), ("UPE 400", 400, 115, 13.5, 18.0, 18, 79.1)]


def _thin_wall(d, bf, tf, tw):
    return (2 * bf * tf**3 + (d - 2 * tf) * tw**3) / 3


def test_channel_J_against_finite_differences():
    # The same Saint-Venant problem by finite differences on the whole UPE 200 outline (mm), all
    # straight edges on grid lines, the fillet arcs stair-stepped: first order in h, so J is
    # extrapolated as 2 J(h/2) - J(h) (measured 89615.7 and 89257.9 mm^4 at h = 0.5, 0.25 mm,
    # extrapolated 88900.0; the elements give 88842.4, 0.065 % apart). rtol 2e-3 is the finite
    # differences' own error, as in the I shape's check (tests/test_sections_catalogue.py).
    dims = (200.0, 80.0, 11.0, 6.0, 13.0)
    J1, J2 = (prandtl_J(channel_nodes(h, *dims), h) for h in (0.5, 0.25))
    assert channel_torsion_constant(*dims) == pytest.approx(2 * J2 - J1, rel=2e-3)
    # a small channel of stubby plates, where the fillets add 14 % to the sharp outline's J
    # (measured 25.2395 by finite differences at h = 1/16, 1/32 against 25.2324)
    small = (20.0, 8.0, 1.5, 1.0, 1.5)
    J1, J2 = (prandtl_J(channel_nodes(h, *small), h) for h in (0.0625, 0.03125))
    assert channel_torsion_constant(*small) == pytest.approx(2 * J2 - J1, rel=2e-3)


@pytest.mark.parametrize("row", UPE, ids=[u[0] for u in UPE])
def test_upe_tables_print_the_outline_J(row):
    # Every row's printed It is the outline's J within 0.6 % (measured -0.01 % to +0.54 %, the
    # largest on UPE 80, whose three printed figures round at 0.34 %), while the thin-wall sum
    # (the channel's J before fillets were solved) is 4-15 % under them
    name, d, bf, tw, tf, r, printed = row
    J = channel(d * 1e-3, bf * 1e-3, tf * 1e-3, tw * 1e-3, r=r * 1e-3).J * 1e8        # cm^4
    assert printed == pytest.approx(J, rel=6e-3)
    assert 0.04 < printed / (_thin_wall(d, bf, tf, tw) * 1e-4) - 1 < 0.15


def test_channel_thin_wall_limit():
    # Far from the corners and the flange tips the web and the flanges are long strips, each unit
    # length adding exactly tw^3/3 and tf^3/3 to J (Timoshenko & Goodier, Theory of Elasticity,
    # 3rd ed., sec. 111), so J less the thin-wall sum is the same for any d and bf (measured
    # within 1.3e-5 of itself)
    tf, tw, r = 1.0, 0.6, 1.2

    def excess(d, bf):
        return channel_torsion_constant(d, bf, tf, tw, r) - _thin_wall(d, bf, tf, tw)

    ref = excess(40.0, 20.0)
    for d, bf in ((20.0, 10.0), (100.0, 50.0), (100.0, 10.0), (20.0, 50.0)):
        assert excess(d, bf) == pytest.approx(ref, rel=1e-4)


def test_channel_takes_it_with_fillets_and_keeps_the_thin_wall_sum_without():
    s = channel(0.2, 0.08, 0.011, 0.006, r=0.013)
    assert s.J == channel_torsion_constant(0.2, 0.08, 0.011, 0.006, 0.013)
    assert s.J == pytest.approx(channel_torsion_constant(200.0, 80.0, 11.0, 6.0, 13.0) * 1e-12, rel=1e-9)
    sharp = channel(0.2, 0.08, 0.011, 0.006)
    assert sharp.J == pytest.approx(_thin_wall(0.2, 0.08, 0.011, 0.006), rel=1e-12) and sharp.J < s.J
    with pytest.raises(ValueError, match="channel torsion"):
        channel_torsion_constant(20.0, 8.0, 1.5, 1.0, 9.0)             # r beyond (d - 2tf)/2 and bf - tw
    assert np.isfinite(channel_torsion_constant(20.0, 8.0, 1.5, 1.0, 7.0))
