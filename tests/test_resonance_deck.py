"""Machines and frequency bands declared in a deck, checked by the modes cases: deck -> summary
-> results.json -> CSV -> exit status, and every mistake a deck can make in them located."""

import csv
import json

import pytest

from fem import solve
from fem.cli import main
from fem.deck.reader import read_text
from fem.errors import DeckError

# Cantilever NPS 6 Sch 40 steel pipe, L = 5 m, E = 200 GPa, rho = 7850 kg/m^3:
# f1 = 6.44505 Hz (reference-values.md Sec. 1, Euler-Bernoulli, beta1 L = 1.87510407 computed;
# Blevins 1979 Table 8-1), two equal bending modes for the round section; 20 cubic members give
# it within 2e-6 (tests/test_modes_deck.py). The tip is node N20.
PIPE = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..20 { node N[i] = (i*5 m/20, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
"""
F1 = 6.44505


def _run(tmp_path, text, capsys):
    deck = tmp_path / "pipe.deck"
    deck.write_text(text)
    out = tmp_path / "out"
    status = main(["run", str(deck), "--out", str(out), "--no-render"])
    return status, capsys.readouterr().out, out


def test_a_machine_on_the_first_mode_fails_the_run(tmp_path, capsys):
    # 380 rpm = 6.3333 Hz at the tip: both bending modes lie 100 (6.44505 - 6.3333) / 6.3333 =
    # +1.764 % above it, inside the default 20 % (fem.excitation.DEFAULT_MARGIN, our choice):
    # two failing rows, exit status 1, the tip moving 100 % of each mode's largest translation.
    text = PIPE + "machine CHIPPER at N[20] { speed = 380 rpm, orders = 1 }\ncase MODES modes { count = 6 }\n"
    status, printed, out = _run(tmp_path, text, capsys)
    assert status == 1
    assert "resonance: 2 mode-band pairs inside the required margin (closest first):" in printed
    rows = [line.split() for line in printed.splitlines() if "CHIPPER" in line and "1x" in line]
    assert [r[0] for r in rows] == ["1", "2"]
    for r in rows:
        assert float(r[1]) == pytest.approx(F1, abs=5e-3)
        assert r[5:7] == ["+1.8", "%"] and r[9] == "N20"
    assert "resonance check: FAIL in MODES" in printed and "a failed design check" in printed
    assert "self-checks: all pass" in printed          # a design check, apart from the self-checks

    doc = json.loads((out / "results.json").read_text())
    assert doc["excitations"] == [{"name": "CHIPPER", "kind": "machine", "speed_Hz": [380 / 60, 380 / 60],
                                   "speed_rpm": [380.0, 380.0], "orders": [1.0], "blades": None, "line_Hz": None,
                                   "node": "N20", "margin_percent": 20.0}]
    check = doc["cases"][0]["resonance"]
    assert check["ok"] is False and check["complete"] is True and check["failures"] == 2
    margins = [r["margin_percent"] for r in check["rows"]]
    want = 100 * (F1 - 380 / 60) / (380 / 60)
    assert margins[:2] == pytest.approx([want, want], abs=2e-3)
    # mode 3 (40.39 Hz, beta2 L) is far above: 100 (40.3904 - 6.3333) / 6.3333 = +537.7 %
    assert margins[2] == pytest.approx(100 * (40.3904 - 380 / 60) / (380 / 60), abs=0.05)

    with (out / "resonance_MODES.csv").open() as fh:
        table = list(csv.DictReader(fh))
    assert len(table) == 6                                  # 6 modes x 1 band
    assert [t["verdict"] for t in table] == ["FAIL", "FAIL", "pass", "pass", "pass", "pass"]
    assert float(table[0]["margin_percent"]) == pytest.approx(want, abs=2e-3)
    assert table[0]["node"] == "N20" and float(table[0]["node_share_percent"]) == pytest.approx(100.0)
    assert "Resonance check" in (out / "report.html").read_text()
    assert (out / "plots" / "MODES_resonance_CHIPPER.png").stat().st_size > 1000


def test_a_machine_clear_of_the_modes_passes(tmp_path, capsys):
    # 5 Hz (300 rpm): the first modes lie +28.9 % above, beyond 20 %; 2x (10 Hz) lies 35.5 %
    # below the mode at 6.445 Hz and 75 % below 40.39 Hz. Exit status 0.
    text = PIPE + "machine CHIPPER at N20 { speed = 5 Hz }\ncase MODES modes { count = 6 }\n"
    status, printed, out = _run(tmp_path, text, capsys)
    assert status == 0, printed
    assert "resonance: every mode clear of CHIPPER by the required margin" in printed
    assert "resonance check: pass in MODES" in printed
    check = json.loads((out / "results.json").read_text())["cases"][0]["resonance"]
    assert check["ok"] is True and check["failures"] == 0
    assert check["rows"][0]["margin_percent"] == pytest.approx(100 * (F1 - 5) / 5, abs=2e-3)


def test_speed_range_margin_and_a_case_choosing_its_excitations():
    # a speed range 300-360 rpm (5-6 Hz) with a 5 % margin: 6.445 Hz is 100 (6.44505 - 6) / 6 =
    # +7.4 % above the top, so it passes; the band FOOT (6-7 Hz) holds it and fails. The case
    # M2 checks FAN only; M3 none.
    text = PIPE + """
machine FAN at N20 { speed = (300 rpm, 360 rpm), orders = 1, margin = 5 percent }
band FOOT { from = 6 Hz, to = 7 Hz, margin = 0 percent }
case MODES modes { count = 4 }
case M2 modes { count = 4, resonance = FAN }
case M3 modes { count = 4, resonance = none }
"""
    results = solve(read_text(text))
    assert set(results.resonance) == {"MODES", "M2"}
    fan = [r for r in results.resonance["M2"].rows() if r.mode == 1][0]
    assert fan.passed and fan.margin == pytest.approx(100 * (F1 - 6) / 6, abs=2e-3) and fan.required == 5
    assert results.checks.resonance_failed == ("MODES",)
    assert not results.ok
    foot = [r for r in results.resonance["MODES"].failures()]
    assert {(r.mode, r.source) for r in foot} == {(1, "FOOT"), (2, "FOOT")}


def test_vortex_shedding_and_one_frequency_bands_by_hand():
    # f = St v / b (EN 1991-1-4:2005 Annex E, St = 0.18 for a circular cylinder, from memory;
    # reference-values.md Sec. 9): the 168.3 mm pipe in winds of 2 to 6 m/s sheds at
    # 0.18 x 2 / 0.1683 = 2.139 Hz to 0.18 x 6 / 0.1683 = 6.417 Hz; the first modes (6.445 Hz)
    # are +0.43 % above it: inside 20 %. A Strouhal number of 0.12 gives 1.426-4.278 Hz.
    text = PIPE + """
band WIND at N20 { wind = (2 m/s, 6 m/s), width = 168.3 mm }
band BOX { wind = (2 m/s, 6 m/s), width = 168.3 mm, strouhal = 0.12, margin = 10 percent }
band HUM { at = 100 Hz }
case MODES modes { count = 4 }
"""
    model = read_text(text)
    wind, box, hum = model.excitations
    assert (wind.low, wind.high) == pytest.approx((0.36 / 0.1683, 1.08 / 0.1683), rel=1e-14)
    assert (box.low, box.high, box.margin) == pytest.approx((0.24 / 0.1683, 0.72 / 0.1683, 0.1), rel=1e-14)
    assert (hum.low, hum.high, hum.margin) == (100.0, 100.0, 0.2)
    assert wind.node == "N20"
    check = solve(model).resonance["MODES"]
    first = [r for r in check.failures() if r.source == "WIND"]
    assert [r.mode for r in first] == [1, 2]
    assert first[0].margin == pytest.approx(100 * (F1 - 1.08 / 0.1683) / (1.08 / 0.1683), abs=2e-3)


def test_blades_line_and_orders_from_the_deck():
    model = read_text(PIPE + "machine FAN { speed = (900 rpm, 1480 rpm), orders = (1, 2, 3), blades = 6, "
                             "line = 50 Hz }\n")
    fan = model.excitations[0]
    assert fan.speed == pytest.approx((15.0, 1480 / 60)) and fan.orders == (1.0, 2.0, 3.0)
    assert (fan.blades, fan.line, fan.node, fan.margin) == (6, 50.0, None, 0.2)
    assert [b.order for b in fan.bands()] == ["1x", "2x", "3x", "blade pass 6x", "line", "2x line"]
    only_line = read_text(PIPE + "machine MOTOR { speed = 1480 rpm, orders = none, line = 60 Hz }\n").excitations[0]
    assert only_line.orders == () and [b.order for b in only_line.bands()] == ["line", "2x line"]


def test_a_model_without_excitations_writes_no_check(tmp_path, capsys):
    status, printed, out = _run(tmp_path, PIPE + "case MODES modes { count = 2 }\n", capsys)
    assert status == 0 and "resonance" not in printed
    doc = json.loads((out / "results.json").read_text())
    assert doc["excitations"] == [] and doc["cases"][0]["resonance"] is None
    assert not list(out.glob("resonance_*.csv"))


# (statement lines after PIPE, expected message, line:column of the token to fix); PIPE ends on line 6
ERRORS = [
    ("machine P at N99 { speed = 380 rpm }", r"machine P: node 'N99' is not defined; did you mean", "7:14"),
    ("machine P { speed = 1480 }", r"machine P: speed needs its unit: 1480 could be rpm or Hz", "7:21"),
    ("assume time in s\nmachine P { speed = 1480 }", r"speed needs its unit", "8:21"),
    ("machine P { speed = (1480 rpm, 900 rpm) }", r"machine P: speed: the range runs backwards", "7:13"),
    ("machine P { speed = (900 rpm, 1000 rpm, 1480 rpm) }", r"speed is a range of two values", "7:21"),
    ("machine P { speed = 3 m }", r"machine P: speed needs a frequency, but a length was given", "7:21"),
    ("machine P { orders = 1 }", r"machine P needs its running speed: speed = 1480 rpm", "7:1"),
    ("machine P { sped = 380 rpm }", r"machine P: unknown option 'sped'; did you mean 'speed'", "7:13"),
    ("machine P { speed = 380 rpm, margin = 20 }", r"margin is a fraction .* got 20", "7:30"),
    ("machine P { speed = 380 rpm, orders = (1, -2) }", r"orders are multiples of the running speed", "7:30"),
    ("machine P { speed = 380 rpm, blades = 6.5 }", r"blades is the number of blades .* got 6.5", "7:30"),
    ("machine P { speed = 380 rpm, orders = none }", r"machine P: nothing excites", "7:1"),
    ("machine P { speed = 380 rpm, line = 50 }", r"machine P: line needs its unit", "7:37"),
    ("machine P { speed = 380 rpm, speed = 400 rpm }", r"machine P: 'speed' is given twice", "7:30"),
    ("machine P { speed = 380 rpm }\nband P { at = 5 Hz }", r"band P has the same name as machine P", "8:1"),
    ("band B { from = 5 Hz }", r"band B needs from and to", "7:1"),
    ("band B { from = 5 Hz, to = 4 Hz }", r"band B: 'to' \(4 Hz\) is below 'from' \(5 Hz\)", "7:23"),
    ("band B { from = 5 Hz, to = 6 Hz, wind = (2 m/s, 6 m/s) }", r"not both \(from, to with wind\)", "7:34"),
    ("band B { wind = (2 m/s, 6 m/s) }", r"vortex shedding needs wind .* width is missing", "7:1"),
    ("band B { wind = (6 m/s, 2 m/s), width = 0.3 m }", r"band B: wind: the range runs backwards", "7:10"),
    ("band B { wind = (2 m/s, 6 m/s), width = 0 }", r"width .m. must be a finite number above 0", "7:1"),
    ("band B { at = 5 Hz, from = 4 Hz }", r"one frequency \(at\) or a band \(from and to\), not both", "7:10"),
    ("band B { from = 5, to = 6 Hz }", r"band B: from needs its unit", "7:17"),
    ("band B { low = 5 Hz, to = 6 Hz }", r"unknown option 'low'", "7:10"),
    ("machine P { speed = 380 rpm }\ncase M modes { resonance = PP }", r"resonance: 'PP' is not a machine or band of "
     r"the deck; did you mean 'P'", "8:28"),
    ("case M modes { resonance = FAN }", r"'FAN' is not a machine or band of the deck; the deck declares none",
     "7:28"),
    ("machine P { speed = 380 rpm }\ncase M modes { resonance = 3 }", r"resonance names the machines and bands",
     "8:28"),
    ("machine P { speed = 380 rpm }\ncase M modes { resonance = (P, P) }", r"'P' is named twice", "8:32"),
    ("case M modes { resonanse = FAN }", r"unknown option 'resonanse' for modes; did you mean 'resonance'", "7:16"),
]


@pytest.mark.parametrize("lines, match, where", ERRORS, ids=[m[:40] for _, m, _ in ERRORS])
def test_deck_errors_are_located_with_a_hint(lines, match, where):
    with pytest.raises(DeckError, match=match) as err:
        read_text(PIPE + lines + "\n", "pipe.deck")
    assert str(err.value).startswith(f"pipe.deck:{where}:"), str(err.value)


def test_a_machine_without_at_before_its_node_is_a_syntax_error():
    with pytest.raises(DeckError, match=r"pipe.deck:7:11: .*(expected|unexpected)") as err:
        read_text(PIPE + "machine P N20 { speed = 380 rpm }\n", "pipe.deck")
    assert "Traceback" not in str(err.value)


def test_fanframe_demo_shows_its_deliberate_failure(tmp_path, capsys):
    # decks/fanframe.deck says it is meant to fail the resonance check: its modes must reach above
    # the top of the bands' margins (blade pass 6 x 990 rpm = 99 Hz, + 20 % = 118.8 Hz), so the
    # check is complete, and the fan's 1x range (10-16.5 Hz) must hold a mode that moves the fan.
    from pathlib import Path

    deck = Path(__file__).resolve().parent.parent / "decks" / "fanframe.deck"
    assert "SHOW A FAILURE" in deck.read_text()
    out = tmp_path / "fan"
    assert main(["run", str(deck), "--out", str(out), "--no-render"]) == 1
    printed = capsys.readouterr().out
    assert "self-checks: all pass" in printed and "resonance check: FAIL in MODES" in printed
    check = json.loads((out / "results.json").read_text())["cases"][1]["resonance"]
    assert check["complete"] and check["modes_needed_to_Hz"] == pytest.approx(6 * 990 / 60 * 1.2)
    fan_1x = [r for r in check["rows"] if r["source"] == "FAN" and r["order"] == "1x" and r["verdict"] == "FAIL"
              and r["margin_percent"] == 0]
    assert fan_1x and max(r["node_share_percent"] for r in fan_1x) == pytest.approx(100.0)
    assert {p.name for p in (out / "plots").glob("*resonance*")} == {"MODES_resonance_FAN.png",
                                                                      "MODES_resonance_MOTOR.png"}
    # the report's failing rows carry each mode's motion in the words of results.json's mode_character
    doc = json.loads((out / "results.json").read_text())
    label = doc["cases"][1]["mode_character"][fan_1x[0]["mode"] - 1]["label"]
    assert label in (out / "report.html").read_text()
    # the lines docs/resonance.md shows from this run are the ones printed
    import re

    page = (Path(__file__).resolve().parents[1] / "docs" / "resonance.md").read_text()
    shown = re.search(r"```text\n(.*?)```", page, re.S).group(1).splitlines()
    lines = printed.splitlines()
    for want in shown:
        if want.strip() != "...":
            assert want in lines, want
