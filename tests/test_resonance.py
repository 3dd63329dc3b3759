"""Excitations, the resonance check and the frequency-vs-speed diagram.

The hand-checked model is a two-mass chain, ground - k - m - k - m (masses on nodes N1, N2,
motion along X only). Its characteristic equation det(K - w^2 M) = 0,
m^2 w^4 - 3 k m w^2 + k^2 = 0, gives w^2 = (3 -+ sqrt 5)/2 k/m (Chopra, Dynamics of Structures,
5th ed., Sec. 10.2, frequency equation det[k - w^2 m] = 0 (section number from memory); the values
0.618034 and 1.618034 sqrt(k/m) are in reference-values.md Sec. 7). With sqrt(k/m) = 20 pi rad/s,
and since sqrt((3 -+ sqrt 5)/2) = (sqrt 5 -+ 1)/2:

    f1 = 5 (sqrt 5 - 1) = 6.180340 Hz,   f2 = 5 (sqrt 5 + 1) = 16.180340 Hz.

Mode shapes (top mass = 1): [(sqrt 5 - 1)/2, 1] and [-(sqrt 5 + 1)/2, 1]; effective masses in X
94.721 % and 5.279 % of the total (reference-values.md Sec. 7, computed).
"""

import math

import numpy as np
import pytest
import scipy.sparse as sp

from fem.analysis.modal_case import ModesCaseResult
from fem.analysis.modes import participation, solve_modes
from fem.analysis.resonance import COLUMNS, check_resonance, margins
from fem.excitation import DEFAULT_MARGIN, Band, FrequencyBand, Machine, excitation_bands

S5 = math.sqrt(5)
F1, F2 = 5 * (S5 - 1), 5 * (S5 + 1)          # Hz, closed form above
NODES = ("N1", "N2")
# Eigen solve to about 1e-13 relative (dense, 2 DOFs); margins are ratios of such numbers.
RTOL = 1e-11


def chain(n_modes=2) -> ModesCaseResult:
    """The two-mass chain as a modes result on two nodes (only ux free)."""
    m, k = 100.0, 100.0 * (20 * np.pi) ** 2
    K = sp.csr_matrix([[2 * k, -k], [-k, k]])
    M = sp.csr_matrix(np.diag([m, m]))
    modes = solve_modes(K, M, n_modes=n_modes)
    R = np.zeros((2, 6))
    R[:, 0] = 1.0                                 # unit translation in X; no rotations carried
    part = participation(modes.phi, M, R)
    shapes = np.zeros((2, 6, len(modes.omega)))
    shapes[:, 0, :] = modes.phi
    return ModesCaseResult("MODES", modes, part, shapes, np.zeros(3), n_finite=modes.n_finite)


def test_chain_frequencies_are_the_closed_form():
    np.testing.assert_allclose(chain().modes.freq, [F1, F2], rtol=RTOL)


def test_mode_exactly_on_a_running_speed_fails_with_margin_zero():
    # A fixed speed equal to mode 1's frequency: the band is one point, the mode is on it, the
    # margin is exactly 0 and the mode fails even when no margin is asked for.
    modal = chain()
    for margin in (0.0, 0.2):
        fan = Machine("FAN", speed=float(modal.modes.freq[0]), orders=(1,), margin=margin)
        check = check_resonance(modal, [fan], NODES)
        assert check.margin[0, 0] == 0.0
        assert not check.passed[0, 0]
        assert [(r.mode, r.order, r.margin) for r in check.failures()] == [(1, "1x", 0.0)]
        assert not check.ok


def test_margins_and_verdicts_by_hand_for_a_speed_range():
    # Speed 4 to 5.5 Hz, orders 1x, 2x, 3x, margin 20 %: bands [4, 5.5], [8, 11], [12, 16.5] Hz.
    # By hand (f1, f2 from the closed form in the module docstring):
    #   mode 1 vs 1x: above, 100 (f1 - 5.5)/5.5 = +12.370 %  -> fails (< 20 %)
    #   mode 1 vs 2x: below, 100 (f1 - 8)/8     = -22.746 %  -> passes
    #   mode 1 vs 3x: below, 100 (f1 - 12)/12   = -48.497 %  -> passes
    #   mode 2 vs 1x: above, 100 (f2 - 5.5)/5.5 = +194.188 % -> passes
    #   mode 2 vs 2x: above, 100 (f2 - 11)/11   = +47.094 %  -> passes
    #   mode 2 vs 3x: inside [12, 16.5]         = 0          -> fails
    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3), node="N2")
    check = check_resonance(chain(), [pump], NODES)
    expected = np.array([[100 * (F1 - 5.5) / 5.5, 100 * (F1 - 8) / 8, 100 * (F1 - 12) / 12],
                         [100 * (F2 - 5.5) / 5.5, 100 * (F2 - 11) / 11, 0.0]])
    np.testing.assert_allclose(check.margin, expected, rtol=RTOL, atol=1e-12)
    np.testing.assert_allclose(expected[0], [12.3698, -22.7458, -48.4972], atol=5e-4)   # the hand figures
    np.testing.assert_array_equal(check.passed, [[False, True, True], [True, True, False]])
    assert [(r.mode, r.order) for r in check.failures()] == [(1, "1x"), (2, "3x")]
    assert check.complete and not check.ok


@pytest.mark.parametrize("f, sign, passes", [
    (3.0, -1, True),     # 25 % below the band's low edge of 4 Hz
    (3.5, -1, False),    # 12.5 % below: within 20 %
    (4.0, 0, False),     # on the low edge
    (5.0, 0, False),     # inside
    (6.0, 1, False),     # 9.1 % above the high edge of 5.5 Hz
    (7.0, 1, True),      # 27.3 % above
], ids=["well-below", "just-below", "low-edge", "inside", "just-above", "well-above"])
def test_sign_convention_and_edges(f, sign, passes):
    band = Band("B", "1x", 4.0, 5.5, 0.2, 1.0, None, (4.0, 5.5))
    margin, passed = margins([f], [band])
    assert np.sign(margin[0, 0]) == sign
    ref = 4.0 if f < 4.0 else 5.5
    assert margin[0, 0] == pytest.approx(0.0 if 4.0 <= f <= 5.5 else 100 * (f - ref) / ref, rel=1e-14)
    assert passed[0, 0] == passes


def test_margin_edge_itself_fails():
    # [low (1 - m), high (1 + m)] is closed: exactly 25 % above with a 25 % margin fails,
    # a hair beyond passes (0.25 and the frequencies below are exact in binary).
    band = Band("B", "1x", 4.0, 4.0, 0.25, 1.0)
    _, passed = margins([5.0, 5.0 * (1 + 1e-12), 3.0, 3.0 * (1 - 1e-12)], [band])
    np.testing.assert_array_equal(passed[:, 0], [False, True, False, True])


def test_blade_pass_and_line_bands():
    # 60 rpm (1 Hz) with 6 blades: blade pass 6 Hz; f1 = 6.1803 Hz lies 100 (f1 - 6)/6 = +3.006 %
    # above it (fails); crossing of mode 1 with the blade-pass ray at f1/6 = 1.03006 Hz (61.80 rpm).
    fan = Machine("FAN", speed=1.0, orders=(1,), blades=6, line=50.0)
    assert [(b.order, b.low, b.high, b.multiple) for b in fan.bands()] == [
        ("1x", 1.0, 1.0, 1.0), ("blade pass 6x", 6.0, 6.0, 6.0), ("line", 50.0, 50.0, None),
        ("2x line", 100.0, 100.0, None)]
    check = check_resonance(chain(), [fan], NODES)
    assert check.margin[0, 1] == pytest.approx(100 * (F1 - 6) / 6, rel=RTOL)
    assert check.margin[0, 1] == pytest.approx(3.0057, abs=1e-4)
    assert check.margin[1, 2] == pytest.approx(100 * (F2 - 50) / 50, rel=RTOL)     # -67.64 %: below line
    assert [(r.mode, r.order) for r in check.failures()] == [(1, "blade pass 6x")]
    blade = [c for c in check.crossings() if c.order == "blade pass 6x"]
    assert [c.mode for c in blade] == [1, 2]
    assert blade[0].speed == pytest.approx(F1 / 6, rel=RTOL) and not blade[0].passed
    assert not blade[0].in_range                      # 1.030 Hz is off the fixed 1 Hz speed


def test_crossings_by_hand():
    # Rays k x speed meet mode j at speed f_j / k: 1x at f1, f2; 2x at f1/2, f2/2; 3x at f1/3,
    # f2/3. Only f2/3 = 5.3934 Hz lies in the range 4 to 5.5 Hz.
    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3))
    c = check_resonance(chain(), [pump], NODES).crossings("PUMP")
    got = [(x.order, x.mode, x.speed, x.in_range, x.passed) for x in c]
    want = [("1x", 1, F1, False, False), ("1x", 2, F2, False, True), ("2x", 1, F1 / 2, False, True),
            ("2x", 2, F2 / 2, False, True), ("3x", 1, F1 / 3, False, True), ("3x", 2, F2 / 3, True, False)]
    assert [g[:2] + g[3:] for g in got] == [w[:2] + w[3:] for w in want]
    np.testing.assert_allclose([g[2] for g in got], [w[2] for w in want], rtol=RTOL)


def test_effective_mass_and_motion_at_the_machine_node():
    # Effective mass in X: 94.721 % and 5.279 % (reference-values.md Sec. 7). Mass-normalised
    # shapes: phi = s / sqrt(m s^T s), s = [(sqrt5 - 1)/2, 1] and [-(sqrt5 + 1)/2, 1], m = 100 kg,
    # so the top mass N2 moves 1 / sqrt(100 (1 + ((sqrt5 -+ 1)/2)^2)) = 0.0850651, 0.0525731;
    # its share of the largest translation is 1 in mode 1 and 2/(sqrt5 + 1) = 0.618034 in mode 2.
    fan = Machine("FAN", speed=10.0, node="N2")
    check = check_resonance(chain(), [fan], NODES)
    rows = check.rows()
    assert [r.mode for r in rows] == [1, 1, 2, 2]
    np.testing.assert_allclose([rows[0].effective_mass[0], rows[2].effective_mass[0]], [0.947214, 0.052786],
                               atol=5e-7)
    assert math.isnan(rows[0].effective_mass[1])      # no mass carried in Y: no fraction to give
    s1, s2 = (S5 - 1) / 2, (S5 + 1) / 2
    np.testing.assert_allclose([rows[0].node_motion, rows[2].node_motion],
                               [1 / math.sqrt(100 * (1 + s1**2)), 1 / math.sqrt(100 * (1 + s2**2))], rtol=1e-12)
    np.testing.assert_allclose([rows[0].node_share, rows[2].node_share], [1.0, 1 / s2], rtol=1e-12)
    assert rows[2].motion == "largest translation in X at N1"
    custom = check_resonance(chain(), [fan], NODES, motion=["sway", "stretch"])
    assert custom.rows()[3].motion == "stretch"


def test_table_rows_and_failures_view():
    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3), node="N1")
    vortex = FrequencyBand("STACK", 15.0, 15.5, margin=0.05)
    check = check_resonance(chain(), [pump, vortex], NODES)
    table = check.table()
    assert len(table) == 2 * 4 and all(tuple(r) == COLUMNS for r in table)
    failed = check.table(failed_only=True)
    assert [(r["mode"], r["source"], r["order"], r["verdict"]) for r in failed] == [
        (1, "PUMP", "1x", "FAIL"), (2, "PUMP", "3x", "FAIL"), (2, "STACK", "band", "FAIL")]
    # the plain band: f2 = 16.1803 Hz is 100 (f2 - 15.5)/15.5 = +4.389 % above, inside 5 %
    assert failed[2]["margin_percent"] == pytest.approx(100 * (F2 - 15.5) / 15.5, rel=RTOL)
    assert failed[2]["required_percent"] == pytest.approx(5.0)
    assert failed[2]["node"] is None and failed[2]["node_motion"] is None
    assert failed[0]["meff_Y_percent"] is None and failed[0]["meff_X_percent"] == pytest.approx(94.7214, abs=1e-4)


def test_incomplete_modes_are_reported():
    # One mode only: the Sturm count proves no mode is missing below its check shift (about
    # 12.2 Hz), but the 3x band's margin reaches 16.5 x 1.2 = 19.8 Hz, so mode 2 (16.18 Hz,
    # inside the 3x band) could not be checked: the check is not complete and not ok, although
    # its one row against 3x passes.
    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(3,))
    check = check_resonance(chain(n_modes=1), [pump], NODES)
    assert check.passed.all()
    assert check.needed_to == pytest.approx(19.8)
    assert F1 < check.complete_to < F2
    assert not check.complete and not check.ok
    assert check_resonance(chain(n_modes=2), [pump], NODES).complete    # every mode of the model


@pytest.mark.parametrize("make, match", [
    (lambda: Machine("", speed=10.0), "needs a name"),
    (lambda: Machine("P", speed=0.0), "P: speed must be a finite frequency above 0"),
    (lambda: Machine("P", speed=float("nan")), "finite frequency"),
    (lambda: Machine("P", speed=(30.0, 20.0)), "ends .20 Hz. below where it starts .30 Hz.; give it as low, high"),
    (lambda: Machine("P", speed=(10.0, 20.0, 30.0)), "a range .low, high. in Hz, got 3 values"),
    (lambda: Machine("P", speed="1480 rpm"), "must be a number"),
    (lambda: Machine("P", speed=10.0, orders=(1, 1)), "given twice"),
    (lambda: Machine("P", speed=10.0, orders=(1, -2)), "order must be a finite frequency above 0"),
    (lambda: Machine("P", speed=10.0, orders=()), "nothing excites"),
    (lambda: Machine("P", speed=10.0, blades=0), "blades must be a whole number"),
    (lambda: Machine("P", speed=10.0, blades=6.5), "blades must be a whole number"),
    (lambda: Machine("P", speed=10.0, blades="6"), "blades must be a whole number"),
    (lambda: Machine("P", speed=10.0, line=-50.0), "line must be"),
    (lambda: Machine("P", speed=10.0, margin=20), "below 1 .a fraction"),
    (lambda: Machine("P", speed=10.0, margin=-0.1), "at least 0"),
    (lambda: Machine("P", speed=10.0, node=""), "node must be a node's name"),
    (lambda: FrequencyBand("W", 5.0, 4.0), "high .4 Hz. is below low .5 Hz."),
    (lambda: FrequencyBand("W", 0.0, 4.0), "W: low must be"),
    (lambda: excitation_bands([Machine("A", 10.0), FrequencyBand("A", 1.0, 2.0)]), "two excitations are named"),
], ids=["no-name", "zero-speed", "nan-speed", "reversed-range", "three-speeds", "text-speed", "order-twice",
        "negative-order", "no-orders", "zero-blades", "fractional-blades", "text-blades", "negative-line", "percent-margin",
        "negative-margin", "empty-node", "reversed-band", "zero-band", "duplicate-name"])
def test_bad_excitations_are_refused_in_words(make, match):
    with pytest.raises(ValueError, match=match):
        make()


def test_defaults_and_speed_forms():
    fan = Machine("FAN", speed=24.0)
    assert fan.speed == (24.0, 24.0) and fan.fixed and fan.margin == DEFAULT_MARGIN == 0.2
    assert [b.order for b in fan.bands()] == ["1x", "2x"]
    vsd = Machine("FAN", speed=[15, 24.5], orders=(0.5, 1))
    assert vsd.speed == (15.0, 24.5) and not vsd.fixed
    assert [(b.order, b.low, b.high) for b in vsd.bands()] == [("0.5x", 7.5, 12.25), ("1x", 15.0, 24.5)]
    with pytest.raises(ValueError, match="FAN: node 'N9' is not a node of the model; did you mean 'N2' or 'N1'"):
        check_resonance(chain(), [Machine("FAN", speed=24.0, node="N9")], NODES)


def test_diagram_writes_a_png_marking_the_computed_crossings(tmp_path):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.image as mpimg
    import matplotlib.pyplot as plt

    from fem.output.resonance_plot import plot_resonance, resonance_figure

    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3), line=5.0, node="N2")
    check = check_resonance(chain(), [pump, FrequencyBand("STACK", 15.0, 15.5)], NODES)
    path = plot_resonance(tmp_path / "resonance.png", check, "PUMP")
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    image = mpimg.imread(path)
    assert image.ndim == 3 and image.shape[0] > 300 and image.shape[1] > 500
    assert image[..., :3].std() > 0.01                 # something is drawn

    fig = resonance_figure(check, "PUMP")
    ax = fig.axes[0]
    marked = {}
    for line in ax.get_lines():
        if line.get_gid() in ("crossings-fail", "crossings-pass"):
            marked[line.get_gid()] = sorted(zip(line.get_xdata(), line.get_ydata()))
    x_top, y_top = ax.get_xlim()[1], ax.get_ylim()[1]
    # by hand: the rays meet the modes at the speeds f_j / k (test_crossings_by_hand); those on
    # the plot (speed <= 1.3 x 5.5 Hz x 60 = 429 rpm, frequency <= 1.15 x 16.5 x 1.2 = 22.77 Hz)
    assert x_top == pytest.approx(429.0) and y_top == pytest.approx(22.77)
    want = [(60 * F1 / k, F1, k == 1) for k in (1, 2, 3)] + [(60 * F2 / k, F2, k == 3) for k in (1, 2, 3)]
    want = [w for w in want if w[0] <= x_top]
    for gid, failing in (("crossings-fail", True), ("crossings-pass", False)):
        expect = sorted((x, f) for x, f, fails in want if fails == failing)
        np.testing.assert_allclose(np.array(marked[gid]), np.array(expect), rtol=1e-12)
    assert len(marked["crossings-fail"]) == 2           # mode 1 on 1x (above the range), mode 2 in 3x
    plt.close(fig)
    with pytest.raises(ValueError, match="no machine named 'STACK'"):
        resonance_figure(check, "STACK")


def test_through_a_deck_cantilever_with_a_machine_at_its_tip():
    # Cantilever NPS 6 Sch 40, L = 5 m: f1 = 6.44505 Hz (reference-values.md Sec. 1, Blevins 1979
    # Table 8-1, computed), two equal bending modes (round section), 20 cubic elements converge to
    # 2e-6 (tests/test_modes_deck.py). A machine at the tip at 380 rpm (6.3333 Hz): both modes lie
    # 100 (6.44505 - 6.3333)/6.3333 = +1.764 % above it and fail; the tip is where they move most.
    from fem.analysis.modal_case import solve_modes_case
    from fem.assembly import assemble
    from fem.deck.reader import read_text

    text = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..20 { node N[i] = (i*5 m/20, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
case MODES modes { count = 6 }
"""
    model = read_text(text)
    modal = solve_modes_case(model, assemble(model), model.cases[0])
    check = check_resonance(modal, [Machine("M1", speed=380 / 60, orders=(1,), node="N20")], model.node_names)
    fails = check.failures()
    assert [r.mode for r in fails] == [1, 2]
    for r in fails:
        assert r.margin == pytest.approx(100 * (6.44505 - 380 / 60) / (380 / 60), abs=2e-3)
        assert r.node_share == pytest.approx(1.0)
        assert r.node_motion > 0
    assert check.complete


def test_vortex_shedding_band_by_hand():
    # f = St v / b (EN 1991-1-4:2005 Annex E, St = 0.18 for a circular cylinder, from memory;
    # reference-values.md Sec. 9): a 0.3239 m pipe in winds of 4 to 12 m/s sheds at
    # 0.18 x 4 / 0.3239 = 2.2229 Hz to 0.18 x 12 / 0.3239 = 6.6687 Hz.
    band = FrequencyBand.vortex_shedding("PIPE", 0.3239, (4.0, 12.0), node="N2")
    assert (band.low, band.high) == pytest.approx((0.72 / 0.3239, 2.16 / 0.3239), rel=1e-15)
    assert (band.low, band.high) == pytest.approx((2.2229, 6.6687), abs=1e-4)
    assert band.margin == DEFAULT_MARGIN and band.node == "N2"
    other = FrequencyBand.vortex_shedding("BOX", 0.2, (5.0, 5.0), strouhal=0.12, margin=0.0)
    assert other.low == other.high == pytest.approx(3.0)
    for args, match in (((0.0, (4.0, 12.0)), "width .m. must be a finite number above 0"),
                        ((0.3, (12.0, 4.0)), "the wind range ends .4 m/s. below where it starts .12 m/s."),
                        ((0.3, 12.0), "wind is a range of wind speeds")):
        with pytest.raises(ValueError, match=match):
            FrequencyBand.vortex_shedding("PIPE", *args)


def test_results_json_form_is_strict_and_complete():
    import json

    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3), node="N1")
    check = check_resonance(chain(), [pump, FrequencyBand("STACK", 15.0, 15.5, margin=0.05)], NODES)
    doc = json.loads(json.dumps(check.as_json(), allow_nan=False))      # no NaN may reach the file
    assert doc["ok"] is False and doc["complete"] is True and doc["failures"] == 3
    assert doc["modes_complete_to_Hz"] is None                           # every mode of the model: inf
    assert doc["modes_needed_to_Hz"] == pytest.approx(19.8)              # 16.5 x 1.2 (3x band)
    assert [b["order"] for b in doc["bands"]] == ["1x", "2x", "3x", "band"]
    assert doc["bands"][0]["speed_Hz"] == [4.0, 5.5] and doc["bands"][3]["speed_Hz"] is None
    assert len(doc["rows"]) == 8 and doc["rows"] == check.table()


def test_summary_lines_name_the_failures_closest_first():
    pump = Machine("PUMP", speed=(4.0, 5.5), orders=(1, 2, 3), node="N2")
    lines = check_resonance(chain(), [pump], NODES).summary_lines()
    assert lines[0] == "resonance check of MODES: 2 mode-band pairs inside the required margin"
    # mode 2 is inside the 3x band (margin 0, 20 short); mode 1 is 12.4 % above 1x (7.6 short)
    assert lines[1] == ("  mode 2 at 16.18 Hz vs PUMP 3x (12-16.5 Hz): inside the band, needs 20 %; "
                        "N2 moves 62 % of the mode's most")
    assert lines[2].startswith("  mode 1 at 6.18 Hz vs PUMP 1x (4-5.5 Hz): margin +12.4 %, needs 20 %")
    assert len(lines) == 3
    short = check_resonance(chain(n_modes=1), [Machine("P", speed=(4.0, 5.5), orders=(3,))], NODES)
    assert short.summary_lines()[0].endswith("every mode clear of every excitation band by its margin")
    assert "modes above were not checked" in short.summary_lines()[-1]


def test_docs_examples_run_and_print_what_the_page_shows(tmp_path, capsys, monkeypatch):
    # docs/resonance.md's Python blocks, run as written (OUT is the folder the page writes to);
    # the printed lines must be the ones the page shows.
    import pathlib
    import re

    root = pathlib.Path(__file__).resolve().parents[1]
    page = (root / "docs" / "resonance.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", page, re.S)
    shown = re.findall(r"```\n(resonance check.*?)```", page, re.S)
    assert len(blocks) == 2 and len(shown) == 1
    monkeypatch.chdir(root)
    env = {"Machine": Machine, "OUT": tmp_path}
    exec(blocks[0], env)
    first = capsys.readouterr().out.strip()
    assert first == blocks[0].strip().splitlines()[-1].lstrip("# ")
    exec(blocks[1], env)
    printed = capsys.readouterr().out.splitlines()
    for want, got in zip(shown[0].strip().splitlines(), printed):
        if want.strip() != "...":
            assert got == want
    assert (tmp_path / "resonance_MODES_FAN-3.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_excitations_for_results_json():
    import json

    fan = Machine("FAN", speed=(600 / 60, 990 / 60), blades=6, line=50.0, node="N2", margin=0.25)
    doc = json.loads(json.dumps(fan.as_json(), allow_nan=False))
    assert doc == {"name": "FAN", "kind": "machine", "speed_Hz": [10.0, 16.5], "speed_rpm": [600.0, 990.0],
                   "orders": [1.0, 2.0], "blades": 6, "line_Hz": 50.0, "node": "N2", "margin_percent": 25.0}
    band = FrequencyBand("WALK", 1.6, 2.4, margin=0.0).as_json()
    assert band == {"name": "WALK", "kind": "band", "low_Hz": 1.6, "high_Hz": 2.4, "node": None,
                    "margin_percent": 0.0}
    with pytest.raises(ValueError, match="node_names gives 3 names for the 2 nodes of case MODES"):
        check_resonance(chain(), [fan], ("N1", "N2", "N3"))


def test_diagram_of_a_machine_with_only_fixed_orders(tmp_path):
    # A motor on the grid with no speed order: no rays, so no crossings; its line bands still show
    # whether a mode fails: line 8 Hz, f1 = 6.18 Hz is 22.7 % below (clear); 2x line 16 Hz,
    # f2 = 16.18 Hz is 1.1 % above (fails); f2 is 102 % above the line frequency (clear).
    from fem.output.resonance_plot import plot_resonance, resonance_figure

    motor = Machine("M", speed=24.0, orders=(), line=8.0)
    check = check_resonance(chain(), [motor], NODES)
    assert [(r.mode, r.order) for r in check.failures()] == [(2, "2x line")]
    assert check.margin[1, 1] == pytest.approx(100 * (F2 - 16) / 16, rel=RTOL)
    assert check.crossings() == []
    fig = resonance_figure(check)
    marked = [len(line.get_xdata()) for line in fig.axes[0].get_lines() if line.get_gid()]
    assert marked == [0, 0]
    assert "1 mode inside a margin" in fig.axes[0].get_title(loc="left")
    assert plot_resonance(tmp_path / "m.png", check).read_bytes()[:4] == b"\x89PNG"
    with pytest.raises(ValueError, match="plain bands have no speed to draw"):
        resonance_figure(check_resonance(chain(), [FrequencyBand("W", 1.0, 2.0)], NODES))


def test_excitation_docstring_examples():
    import doctest

    import fem.excitation

    result = doctest.testmod(fem.excitation)
    assert result.attempted >= 3 and result.failed == 0


def test_numpy_numbers_are_taken_as_numbers():
    fan = Machine("FAN", speed=np.array([10.0, 16.5]), orders=np.arange(1, 3), blades=np.int64(6),
                  margin=np.float64(0.25))
    assert fan.speed == (10.0, 16.5) and fan.orders == (1.0, 2.0) and fan.margin == 0.25
    assert [b.order for b in fan.bands()] == ["1x", "2x", "blade pass 6x"]
    import json

    assert json.loads(json.dumps(fan.as_json()))["blades"] == 6         # plain Python numbers inside
    assert FrequencyBand.vortex_shedding("P", np.float64(0.5), np.array([5.0, 15.0])).low == pytest.approx(1.8)
    with pytest.raises(ValueError, match="must be a number"):
        Machine("FAN", speed=True)
