"""A harmonic sweep is refined where the deck's machines run (issue 13): at each band's ends
and +-1 %, +-2 % about them, as it is about each natural frequency; a model without machines
sweeps exactly as before."""

import numpy as np

from fem import read_text, solve

FRAME = """
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
member C : A -> B beam P S
support A fixed
mass B = 500 kg
case MODES modes { count = 2 }
case RUN harmonic { force B = (1 kN, 0, 0), from = 1 Hz, to = 60 Hz, points = 60, damping = 2 percent }
"""


def test_the_sweep_is_refined_at_a_machines_speeds():
    plain = solve(read_text(FRAME))["RUN"].freq
    fan = solve(read_text(FRAME + "machine FAN at B { speed = (1010 rpm, 1190 rpm), orders = 1 }\n"))["RUN"].freq
    for f in (1010 / 60, 1190 / 60):                      # the band's ends, Hz
        for k in (-2, -1, 0, 1, 2):                       # AROUND = 1 % (harmonic.py)
            assert np.isclose(fan, f * (1 + 0.01 * k), rtol=1e-12, atol=0).any()
            if k == 0:
                assert not np.isclose(plain, f, rtol=1e-9, atol=0).any()   # off the 1 Hz grid: added
    extra = np.setdiff1d(fan, plain)
    assert len(extra) == 10 and len(fan) == len(plain) + 10


def test_a_speed_outside_the_sweep_adds_nothing():
    plain = solve(read_text(FRAME))["RUN"].freq
    far = solve(read_text(FRAME + "machine SLOW at B { speed = 30 rpm, orders = 1 }\n"))["RUN"].freq
    np.testing.assert_array_equal(plain, far)


def test_the_response_at_the_added_points_is_the_sweeps_own():
    # the refinement adds frequencies, it does not move the others: the common ones agree exactly
    a = solve(read_text(FRAME))["RUN"]
    b = solve(read_text(FRAME + "band WALK { from = 1.6 Hz, to = 2.4 Hz }\n"))["RUN"]
    common, ia, ib = np.intersect1d(a.freq, b.freq, return_indices=True)
    assert len(common) == len(a.freq) < len(b.freq)
    np.testing.assert_array_equal(a.u[ia], b.u[ib])


def test_the_frf_plot_marks_where_the_machines_run(tmp_path):
    # the bands inside the sweep are the ones marked; a speed outside it is not; the plot is drawn
    from fem.output import plots

    deck = FRAME + ("machine FAN at B { speed = (1010 rpm, 1190 rpm), orders = (1, 2) }\n"
                    "machine SLOW at B { speed = 30 rpm, orders = 1 }\n")
    results = solve(read_text(deck))
    h = results["RUN"]
    bands = plots.frf_bands(results.model.excitations, h.freq)
    assert [(b[0], round(b[1], 6), round(b[2], 6)) for b in bands] == [
        ("FAN 1x", round(1010 / 60, 6), round(1190 / 60, 6)), ("FAN 2x", round(2020 / 60, 6), round(2380 / 60, 6))]
    plain = plots.plot_frf(tmp_path / "plain.png", h, "B", 0, results["MODES"].modes.freq)
    marked = plots.plot_frf(tmp_path / "marked.png", h, "B", 0, results["MODES"].modes.freq, bands=bands)
    assert marked.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and marked.read_bytes() != plain.read_bytes()
