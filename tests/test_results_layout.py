"""Layout of the result files against docs/results.md: order of cases, the missing-mass rule."""

import csv
import json

from fem import solve
from fem.deck.reader import read_text
from fem.output.write import write_results

# cases written deliberately out of the documented order
MIXED = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..3 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N3 = 200 kg
case RS spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s) }
case HA harmonic { force N3 = (1 kN, 0, 0), from = 1 Hz, to = 5 Hz, points = 5,
                   damping = 2 percent }
case TH history { force N3 = (1 kN, 0, 0), time = halfsine(0.3 s), duration = 1 s, step = 0.01 s }
case ST1 static { force N3 = (1 kN, 0, 0) }
case MODES modes { count = 3 }
case FV free { start = ST1, duration = 1 s, step = 0.01 s }
combo C1 = 2*ST1
case ST2 static { force N3 = (0, 1 kN, 0) }
"""


def test_cases_are_written_in_the_documented_order(tmp_path):
    # docs/results.md: results.json groups static, combinations, modes, free and history (as in
    # the deck), harmonic, spectrum; the peak tables: static, combinations, spectrum, then the
    # free, history and harmonic envelopes as in the deck
    m = read_text(MIXED)
    out = tmp_path / "out"
    doc = write_results(solve(m), out, render=False).doc
    assert [c["name"] for c in doc["cases"]] == ["ST1", "ST2", "C1", "MODES", "TH", "FV", "HA", "RS"]
    assert json.loads((out / "results.json").read_text())["cases"][0]["name"] == "ST1"
    with (out / "displacements.csv").open() as fh:
        order = list(dict.fromkeys(row["case"] for row in csv.DictReader(fh)))
    assert order == ["ST1", "ST2", "C1", "RS", "HA", "TH", "FV"]


# two-storey shear frame: the floors move in X only, so no mass moves in Y or Z
SHEAR2 = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section C = generic(A = 1 m^2, Iy = 4.5e-4 m^4, Iz = 4.5e-4 m^4, J = 1e-3 m^4)
for i in 0..2 { node F[i] = (0, 0, i*3 m) }
for i in 0..1 { member M[i] : F[i] -> F[i+1] beam C S }
support F0 fixed
support F1 (uy, uz, rx, ry, rz)
support F2 (uy, uz, rx, ry, rz)
mass F1 = 100 t
mass F2 = 100 t
case MODES modes { count = 2 }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (0, 1, 1) }
case EQX spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s) }
"""


def test_percent_format():
    from fem.output.fmt import percent
    assert percent(0.91408) == "91.4%"
    assert percent(-1e-17) == "0.0%" and percent(-0.0004) == "0.0%"   # no negative zero
    assert percent(-0.02) == "-2.0%"                                     # a real negative stays
    assert percent(float("nan")) == "n/a" and percent(None) == "n/a"
    assert percent(0.955, 0) == "96%"


def test_summary_shows_undefined_fractions_as_na(tmp_path, capsys):
    # no mass moves in Y or Z: their effective-mass and missing-mass fractions are 0/0, printed
    # n/a (null in results.json), and each missing-mass fraction is labelled by its direction;
    # with both modes kept the X fraction is round-off around zero, printed 0.0%
    from fem.cli import run_deck
    (tmp_path / "s.deck").write_text(SHEAR2)
    run_deck(str(tmp_path / "s.deck"), str(tmp_path / "out"), render=False)
    text = capsys.readouterr().out
    assert "nan" not in text and "-0.0%" not in text
    assert "X 100.0%  Y n/a  Z n/a" in text
    assert "missing mass Y n/a, Z n/a" in text
    assert "missing mass X 0.0%" in text
    assert "base shear Fx 1373 kN, Fy 0 kN;" in text     # Y not excited: no round-off shear shown
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    eq = next(c for c in doc["cases"] if c["name"] == "EQ")
    assert eq["checks"]["missing_mass_fraction"] == {"Y": None, "Z": None}
    assert "n/a" in (tmp_path / "out" / "report.html").read_text()


def test_report_modes_table_of_a_free_structure(tmp_path):
    # a free-free pipe: six rigid-body modes have no period (null in results.json), shown as
    # 'rigid' in the report's modes table; a direction of the shear frame without moving mass
    # shows n/a there, not 0.0
    from fem.cli import run_deck
    (tmp_path / "f.deck").write_text("""
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..6 { node N[i] = (i*0.5 m, 0, 0) }
for i in 0..5 { member M[i] : N[i] -> N[i+1] beam P S }
case MODES modes { count = 8 }
""")
    run_deck(str(tmp_path / "f.deck"), str(tmp_path / "f"), render=False)
    assert (tmp_path / "f" / "report.html").read_text().count(">rigid</td>") == 6
    (tmp_path / "s.deck").write_text(SHEAR2)
    run_deck(str(tmp_path / "s.deck"), str(tmp_path / "s"), render=False)
    page = (tmp_path / "s" / "report.html").read_text()
    row = page[page.index("Modes: MODES"):].split("<tr>")[2]          # mode 1: X Y Z RX RY RZ, cumulative X Y Z
    assert row.count(">n/a</td>") == 6          # Y, Z, RX, RZ (held at every node) and the sums of Y and Z


def test_every_static_case_gets_its_deformed_plot(tmp_path):
    # six static cases and a combination: seven plots (the cap is 24), each in the report
    from fem.cli import run_deck
    cases = "".join(f"case L{i} static {{ force C = ({i + 1} kN, 0, 0) }}\n" for i in range(6))
    from test_case_errors import FRAME  # an L-shaped two-member frame fixed at A
    (tmp_path / "d.deck").write_text(FRAME + cases + "combo ALL = L0 + L5\n")
    run_deck(str(tmp_path / "d.deck"), str(tmp_path / "o"), render=False)
    plots = sorted(p.name for p in (tmp_path / "o" / "plots").glob("*_deformed.png"))
    assert plots == sorted([f"L{i}_deformed.png" for i in range(6)] + ["ALL_deformed.png"])
