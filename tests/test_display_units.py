"""Display units (fem/display.py): the deck's `settings { units = ... }` or `quaver run --units`
choose the units of the summary, report and CSV tables; results.json stays SI.

Conversion factors are the SI definitions (1 mm = 1e-3 m, 1 kN = 1e3 N, 1 MPa = 1e6 Pa; BIPM,
The International System of Units, 9th ed., Table 7 prefixes), so scaled values agree with the SI
ones to one rounding (1e-15 relative)."""

import csv
import json

import numpy as np
import pytest

import fem
from fem.cli import main
from fem.display import SI, ZERO_TOL, parse_units, tidy
from fem.errors import DeckError

DECK = """title "units frame"
SETTINGS
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3, yield = 355 MPa }
section P = ishape(d = 200 mm, bf = 100 mm, tf = 8 mm, tw = 5.6 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (4 m, 0, 3 m)
member M1 : A -> B beam P S
member M2 : B -> C beam P S
support A fixed
case LOAD static { force C = (0, 0, -5 kN), gravity = (0, 0, -9.81 m/s^2) }
"""


def _rows(path):
    with open(path, newline="") as fh:
        return list(csv.reader(fh))


def test_parse_named_sets_and_lists():
    u = parse_units("engineering")
    assert (u.length, u.force, u.moment, u.stress, u.frequency, u.chosen) == ("mm", "kN", "kN*m", "MPa", "Hz", True)
    u = parse_units("mm, kN, N/mm2")
    assert u.stress == "N/mm^2" and u.moment == "kN*m" and u.header("stress") == "N_per_mm2"
    assert parse_units("kN, kN*mm").moment == "kN*mm"
    assert u.show("stress", 2.5e8) == pytest.approx(250.0, rel=1e-15)
    assert not SI.chosen and SI.per_si("length") == 1.0
    with pytest.raises(ValueError, match="unknown display unit 'furlong'.*engineering"):
        parse_units("mm, furlong")
    with pytest.raises(ValueError, match="two units for length"):
        parse_units("mm, m")


def test_tidy_zeroes_round_off_only():
    """Below ZERO_TOL (1e-9) of the largest |value| is round-off (fem/display.py's reasoning);
    a value at 1e-6 of the largest is kept."""
    v = tidy([-9.095e-16, 4.263e-17, 269.5e3, 1e-6 * 269.5e3])
    assert v.tolist() == [0.0, 0.0, 269.5e3, 1e-6 * 269.5e3]
    assert not np.signbit(v[0])
    assert ZERO_TOL == 1e-9


def test_deck_setting_and_its_errors():
    m = fem.read_text(DECK.replace("SETTINGS", 'settings { units = "mm, kN, MPa" }'))
    assert m.settings["units"].length == "mm"
    assert m.materials["S"].yield_strength == pytest.approx(355e6)
    with pytest.raises(DeckError, match=r"deck.deck:2:\d+: settings: unknown display unit 'parsec'"):
        fem.read_text(DECK.replace("SETTINGS", 'settings { units = "mm, parsec" }'))
    with pytest.raises(DeckError, match="yield .* must be positive"):
        fem.read_text(DECK.replace("SETTINGS", "").replace("yield = 355 MPa", "yield = -1 MPa"))


def _run(tmp_path, settings, name):
    r = fem.solve(fem.read_text(DECK.replace("SETTINGS", settings)))
    fem.write_results(r, tmp_path / name, render=False)
    return tmp_path / name


def test_tables_in_display_units_and_json_stays_si(tmp_path):
    si = _run(tmp_path, "", "si")
    en = _run(tmp_path, "settings { units = engineering }", "en")
    # the default keeps the earlier headers
    assert _rows(si / "displacements.csv")[0] == ["case", "node", "ux", "uy", "uz", "rx", "ry", "rz"]
    assert _rows(en / "displacements.csv")[0][2:] == ["ux_mm", "uy_mm", "uz_mm", "rx_rad", "ry_rad", "rz_rad"]
    assert _rows(en / "member_forces.csv")[0][3:] == ["N_kN", "Vy_kN", "Vz_kN", "T_kN_m", "My_kN_m", "Mz_kN_m"]
    d_si = np.array([r[2:] for r in _rows(si / "displacements.csv")[1:]], float)
    d_en = np.array([r[2:] for r in _rows(en / "displacements.csv")[1:]], float)
    big = np.abs(d_si[:, :3]).max()
    keep = np.abs(d_si[:, :3]) >= ZERO_TOL * big
    assert np.allclose(d_en[:, :3][keep], 1e3 * d_si[:, :3][keep], rtol=1e-15, atol=0)
    assert np.all(d_en[:, :3][~keep] == 0.0)
    f_si = np.array([r[3:] for r in _rows(si / "member_forces.csv")[1:]], float)
    f_en = np.array([r[3:] for r in _rows(en / "member_forces.csv")[1:]], float)
    top = np.abs(f_si[:, :3]).max()
    keep = np.abs(f_si[:, :3]) >= ZERO_TOL * top
    assert np.allclose(f_en[:, :3][keep], f_si[:, :3][keep] / 1e3, rtol=1e-15, atol=0)
    # the frame moves in its plane only: the out-of-plane end forces are round-off, shown as 0
    assert np.all(f_en[:, 1][np.abs(f_si[:, 1]) < ZERO_TOL * top] == 0.0)
    s_si, s_en = _rows(si / "stresses_LOAD.csv"), _rows(en / "stresses_LOAD.csv")
    assert s_si[0][2] == "sigma_max_Pa" and s_en[0][2] == "sigma_max_MPa" and s_en[0][11] == "x_mm"
    assert float(s_en[1][10]) == pytest.approx(float(s_si[1][10]) / 1e6, rel=1e-15)
    # results.json: SI in both runs, the display units named
    j_si, j_en = (json.loads((p / "results.json").read_text()) for p in (si, en))
    assert j_si["cases"] == j_en["cases"]
    assert j_en["display_units"]["stress"] == "MPa" and j_en["display_units"]["chosen"] is True
    assert j_si["units"]["stress"] == "Pa"
    assert j_en["cases"][0]["stresses"]["governing"]["ratio_to_yield"] is not None
    # the report: the stress table in MPa either way, lengths in the display unit when chosen
    rep_si, rep_en = ((p / "report.html").read_text() for p in (si, en))
    assert "equivalent MPa" in rep_si and "equivalent MPa" in rep_en
    top = j_si["cases"][0]["max_translation_m"]
    assert f"{top:.4g} m<" in rep_si and f"{1e3 * top:.4g} mm<" in rep_en


def test_cli_units_option(tmp_path, capsys):
    deck = tmp_path / "frame.deck"
    deck.write_text(DECK.replace("SETTINGS", ""))
    assert main(["run", str(deck), "--out", str(tmp_path / "out"), "--no-render", "--units", "mm,kN,MPa"]) == 0
    out = capsys.readouterr().out
    assert "max translation" in out and " mm " in out.split("max translation")[1].split("\n")[0] + " "
    assert "MPa" in out and "of yield (a plain ratio, not a code check)" in out
    assert _rows(tmp_path / "out" / "reactions.csv")[0][2] == "Fx_kN"
    with pytest.raises(SystemExit) as exc:
        main(["run", str(deck), "--units", "mm,furlong"])
    assert exc.value.code == 2
    assert "unknown display unit 'furlong'" in capsys.readouterr().err
