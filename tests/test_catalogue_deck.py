"""Catalogue sections in the deck (`section NAME = catalogue "HEB 300"`) and shear coefficients
that follow the member's material (Poisson's ratio nu = E/(2G) - 1).

Sources: the deck's properties are checked against fem.sections.catalogue_section, whose rows
are checked against the published tables in tests/test_sections_catalogue.py. The shear
coefficients are Cowper's, G.R. Cowper, "The shear coefficient in Timoshenko's beam theory",
J. Appl. Mech. 33 (1966) 335-340 (formulas as listed in /work/shared/reference-values.md §3a,
from memory, there evaluated at nu = 0.3: rectangle 0.849673, solid circle 0.886364). The tip
deflection of a shear-flexible cantilever is PL^3/(3EI) + PL/(kappa G A) (Timoshenko & Gere,
Mechanics of Materials; reference-values §4)."""

import json
import math
import re
from pathlib import Path

import numpy as np
import pytest

import fem
from fem.cli import main
from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.sections import catalogue_entry, catalogue_section, make_section

SKID = Path(__file__).parent / "decks" / "catalogue_skid.deck"
STEEL = "material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }\n"


def _cowper_rectangle(nu):
    return 10 * (1 + nu) / (12 + 11 * nu)


def _cowper_solid_circle(nu):
    return 6 * (1 + nu) / (7 + 6 * nu)


def _cowper_hollow_circle(nu, m):
    """m = inside / outside diameter."""
    return 6 * (1 + nu) * (1 + m**2) ** 2 / ((7 + 6 * nu) * (1 + m**2) ** 2 + (20 + 12 * nu) * m**2)


def _props(p):
    return np.array([p.A, p.Iy, p.Iz, p.J, p.Avy, p.Avz, p.Wy, p.Wz])


def caret_under(err: DeckError) -> str:
    lines = str(err).splitlines()
    src, caret = lines[1][4:], lines[2][4:]
    return src[caret.index("^"):]


# ---------- 1. deck -> the catalogue's properties

def test_skid_deck_sections_are_the_catalogue_sections():
    """Every catalogue section of the test deck has exactly the properties catalogue_section
    gives for its designation (same function, same dimensions: equal to the last bit), and the
    steel members carry them unchanged (nu = 0.3)."""
    model = fem.read_deck(SKID)
    expect = {"POST": "HEB 200", "RAIL": "IPE 240", "TIE": "HSS4X4X1/4", "BRACE": "L4X4X1/2",
              "MAST": "Pipe4SCH40"}
    for name, designation in expect.items():
        sec = model.sections[name]
        assert sec.designation == designation            # as the table prints it ("ipe 240" in the deck)
        assert np.array_equal(_props(sec.props), _props(catalogue_section(designation)))
    for k, (sname, mname) in enumerate(zip(model.member_section, model.member_material)):
        if mname != "STEEL":
            continue
        p = model.sections[sname].props
        assert (model.A[k], model.Iy[k], model.Iz[k], model.J[k], model.Avy[k], model.Avz[k]) == \
            (p.A, p.Iy, p.Iz, p.J, p.Avy, p.Avz)


def test_skid_deck_aluminium_mast_takes_its_own_nu():
    """The aluminium mast (nu = 0.33) is a catalogue tube: its shear areas are Cowper's hollow
    circle at 0.33 on the tube's design dimensions, A, I, J unchanged."""
    model = fem.read_deck(SKID)
    k = model.member_names.index("M")
    entry = catalogue_entry("Pipe4SCH40")
    od, wall = entry.dims["od"], entry.dims["wall"]
    assert model.materials["ALU"].nu == 0.33
    kappa = _cowper_hollow_circle(0.33, (od - 2 * wall) / od)
    sec = catalogue_section("Pipe4SCH40")
    assert model.Avy[k] == pytest.approx(kappa * sec.A, rel=1e-12)      # round-off only
    assert model.Avz[k] == pytest.approx(kappa * sec.A, rel=1e-12)
    assert (model.A[k], model.Iy[k], model.J[k]) == (sec.A, sec.Iy, sec.J)
    assert model.Avy[k] != sec.Avy                                      # 0.3 would give another value


def test_skid_deck_runs_and_checks_itself(tmp_path: Path):
    assert main(["run", str(SKID), "--out", str(tmp_path / "out"), "--no-render"]) == 0
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    assert all(c["checks"].get("pass", True) is not False for c in doc["cases"])


@pytest.mark.parametrize("designation", ["HEB 300", "W14X90", "HSS4X4X1/4", "Pipe6SCH40", "L4X4X1/2", "IPE 80"])
def test_designation_forms(designation):
    """Case and spaces do not matter; 'HE 300 B' reads as 'HEB 300' (the library's matching)."""
    for written in (designation, designation.lower(), designation.replace(" ", "")):
        m = read_text(STEEL + f'section C = catalogue "{written}"\n')
        assert m.sections["C"].designation == designation
    m = read_text(STEEL + 'section C = catalogue "HE 300 B"\n')
    assert m.sections["C"].designation == "HEB 300"


def test_catalogue_section_in_a_loop_and_an_include(tmp_path: Path):
    (tmp_path / "parts.deck").write_text('section LEG = catalogue "Pipe6SCH40"\n')
    m = read_text(STEEL + 'include "parts.deck"\nfor i in 1..2 { section S[i] = catalogue "IPE 300" }\n',
                  folder=tmp_path)
    assert set(m.sections) == {"LEG", "S1", "S2"}
    assert m.sections["LEG"].designation == "Pipe6SCH40"
    assert m.sections["S1"].designation == m.sections["S2"].designation == "IPE 300"


# ---------- 2. located errors

# (id, section line, line:column, message pattern, text under the caret, hint pattern)
ERRORS = [
    ("unknown size names the nearest", 'section C = catalogue "IPE 290"', "2:23",
     r"section C: unknown section designation 'IPE 290'; did you mean 'IPE 300' or 'IPE 270' or 'IPE 330'\?",
     '"IPE 290"', r"ignore case and spaces"),
    ("unknown size of an American family", 'section C = catalogue "W14X91"', "2:23",
     r"did you mean 'W14X90'", '"W14X91"', r"docs/sections.md"),
    ("a family we do not have lists ours", 'section C = catalogue "HEA 300"', "2:23",
     r"unknown section designation 'HEA 300'; families: IPE, HEB, W, HSS rectangular, HSS round / pipe, L equal",
     '"HEA 300"', r"IPE: IPE 80 to IPE 600; HEB: HEB 100 to HEB 1000; .*ishape\(d, bf, tf, tw, r\)"),
    ("a channel family we do not have", 'section C = catalogue "UPN 200"', "2:23",
     r"'UPN 200'; families: IPE, HEB", '"UPN 200"', r"the catalogue holds"),
    ("empty designation", 'section C = catalogue ""', "2:23", r"unknown section designation ''; families:",
     '""', r"the catalogue holds"),
    ("another word before the designation", 'section C = ishape "IPE 300"', "2:13",
     r"section C: a quoted designation follows the word 'catalogue', not 'ishape'", 'ishape',
     r'write section C = catalogue "IPE 300"'),
    ("catalogue with brackets", 'section C = catalogue(designation = 1)', "2:13",
     r"a catalogue section is named by its designation in double quotes", "catalogue(",
     r'write section C = catalogue "HEB 300"'),
    ("designation without quotes", 'section C = catalogue HEB 300  # columns', "2:23",
     r"unexpected name 'HEB': a section's designation is written in double quotes", "HEB 300",
     r'write "HEB 300"$'),
    ("designation without the word", 'section C = "HEB 300"', "2:13",
     r"unexpected text \"HEB 300\": a designation follows the word 'catalogue'", '"HEB 300"',
     r'write catalogue "HEB 300"'),
]


@pytest.mark.parametrize("line, where, message, caret, hint", [e[1:] for e in ERRORS], ids=[e[0] for e in ERRORS])
def test_errors_are_located(tmp_path: Path, line, where, message, caret, hint):
    deck = tmp_path / "frame.deck"
    deck.write_text(STEEL + line + "\n")
    with pytest.raises(DeckError, match=message) as err:
        fem.read_deck(deck)
    text = str(err.value)
    assert text.startswith(f"frame.deck:{where}: ")
    assert caret_under(err.value).startswith(caret)
    assert any(re.search(hint, ln) for ln in text.splitlines() if ln.startswith("hint: "))


def test_cli_exits_2_without_traceback(tmp_path: Path, capsys):
    deck = tmp_path / "frame.deck"
    deck.write_text(STEEL + 'section C = catalogue "HEA 300"\n')
    assert main(["check", str(deck)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "frame.deck:2:23" in err and "families:" in err


def test_pipe_shape_without_brackets_keeps_the_general_message():
    """The quoting hint is for the word catalogue only: a shape without its brackets is told
    what the parser wanted."""
    with pytest.raises(DeckError, match=r"unexpected name 'od'; expected '\(' or a quoted text"):
        read_text(STEEL + "section C = pipe od = 3 mm\n")


# ---------- 3. Poisson's ratio from the material

def _frame(material: str, section: str, shear: str = "on") -> str:
    return (f"material Q {{ {material}, density = 7850 kg/m^3 }}\nsection C = {section}\n"
            "node A = (0, 0, 0)\nnode B = (1.2 m, 0, 0)\nmember M : A -> B beam C Q\nsupport A fixed\n"
            f"settings {{ shear = {shear} }}\n")


@pytest.mark.parametrize("section, kappa", [
    ("rect(b = 100 mm, h = 400 mm)", lambda nu: _cowper_rectangle(nu)),
    ("round(d = 80 mm)", lambda nu: _cowper_solid_circle(nu)),
    ("pipe(od = 168.3 mm, wall = 7.11 mm)", lambda nu: _cowper_hollow_circle(nu, (168.3 - 2 * 7.11) / 168.3)),
], ids=["rect", "round", "pipe"])
def test_member_shear_areas_follow_nu_025(section, kappa):
    """A material with nu = 0.25: the member's shear areas are kappa(0.25) A by Cowper's formula
    (to round-off), not the kappa(0.3) the section is written with."""
    m = read_text(_frame("E = 200 GPa, nu = 0.25", section))
    A = m.sections["C"].props.A
    assert m.Avy[0] == pytest.approx(kappa(0.25) * A, rel=1e-12)
    assert m.Avz[0] == pytest.approx(kappa(0.25) * A, rel=1e-12)
    assert m.sections["C"].props.Avy == pytest.approx(kappa(0.3) * A, rel=1e-12)   # the section as written
    assert abs(kappa(0.25) / kappa(0.3) - 1) > 1e-3                                   # the check can fail


def test_nu_given_as_G_reads_back():
    """A material given by E and G: nu = E/(2G) - 1 (here 0.25)."""
    m = read_text(_frame("E = 200 GPa, G = 80 GPa", "rect(b = 100 mm, h = 400 mm)"))
    assert m.materials["Q"].nu == 0.25
    assert m.Avy[0] == pytest.approx(_cowper_rectangle(0.25) * m.A[0], rel=1e-12)


def test_nu_03_keeps_every_bit():
    """nu = 0.3, given as nu or as the matching G: the member's properties are exactly those of the
    section as written (why the demo decks' results do not change)."""
    for mat in ("E = 210 GPa, nu = 0.3", f"E = 210 GPa, G = {210 / 2.6!r} GPa"):
        m = read_text(_frame(mat, "pipe(od = 114.3 mm, wall = 6.02 mm)"))
        assert m.materials["Q"].nu == 0.3
        assert (m.Avy[0], m.Avz[0]) == (m.sections["C"].props.Avy, m.sections["C"].props.Avz)


def test_same_section_two_materials():
    """The coefficients are per (section, material) pair: one section in two materials gives two
    shear areas; an I shape's plate shear areas do not depend on nu."""
    text = ("material S { E = 210 GPa, nu = 0.3 }\nmaterial L { E = 70 GPa, nu = 0.33 }\n"
            "section P = pipe(od = 60.3 mm, wall = 3.91 mm)\nsection I = catalogue \"IPE 200\"\n"
            "node A = (0, 0, 0)\nnode B = (2 m, 0, 0)\nnode C = (0, 2 m, 0)\n"
            "member M1 : A -> B beam P S\nmember M2 : A -> C beam P L\n"
            "member M3 : B -> C beam I S\nmember M4 : C -> B beam I L\nsupport A fixed\n")
    m = read_text(text)
    d = 60.3 - 2 * 3.91
    A = m.sections["P"].props.A
    assert m.Avy[0] == pytest.approx(_cowper_hollow_circle(0.3, d / 60.3) * A, rel=1e-12)
    assert m.Avy[1] == pytest.approx(_cowper_hollow_circle(0.33, d / 60.3) * A, rel=1e-12)
    assert (m.Avy[2], m.Avz[2]) == (m.Avy[3], m.Avz[3]) == (m.sections["I"].props.Avy, m.sections["I"].props.Avz)


def test_nu_outside_isotropic_range_keeps_03_with_a_note():
    """A material whose G makes E/(2G) - 1 leave (-1, 0.5) (a timber with E/G = 16) keeps the 0.3
    coefficients; with shear deformation on, a note says so; off, shear areas do not matter."""
    mat = "E = 11 GPa, G = 0.6875 GPa"
    m = read_text(_frame(mat, "rect(b = 100 mm, h = 400 mm)"))
    assert m.Avy[0] == m.sections["C"].props.Avy
    notes = [n.text for n in m.warnings if "Poisson" in n.text]
    assert notes == ["material Q: E/(2G) - 1 = 7 is not the Poisson's ratio of an isotropic material (between -1 "
                     "and 0.5), so the shear areas of section C keep Cowper's coefficients at nu = 0.3"]
    m = read_text(_frame(mat, "rect(b = 100 mm, h = 400 mm)", shear="off"))
    assert not [n for n in m.warnings if "Poisson" in n.text]


def test_timoshenko_cantilever_tip_deflection_with_nu_025():
    """Tip load P on a deep shear-flexible cantilever, nu = 0.25: delta = PL^3/(3EI) + PL/(kappa G A)
    with Cowper's rectangle kappa at 0.25 (Timoshenko & Gere; reference-values §4). The
    shear-flexible member is exact for a tip load (linear moment, constant shear), so the
    tolerance is round-off (1e-9); with kappa at 0.3 the answer would be off by 2e-4."""
    E, nu, b, h, L, P = 200e9, 0.25, 0.1, 0.4, 1.2, 50e3
    text = _frame("E = 200 GPa, nu = 0.25", "rect(b = 100 mm, h = 400 mm)") + \
        "case TIP static { force B = (0, 0, -50 kN) }\n"
    res = fem.solve(read_text(text))
    (r,) = res.of_kind("static")
    G, A, I = E / (2 * (1 + nu)), b * h, b * h**3 / 12
    exact = P * L**3 / (3 * E * I) + P * L / (_cowper_rectangle(nu) * G * A)
    at_03 = P * L**3 / (3 * E * I) + P * L / (_cowper_rectangle(0.3) * G * A)
    got = -r.u[1, 2]
    assert got == pytest.approx(exact, rel=1e-9)
    assert abs(at_03 / exact - 1) > 1e-4


# ---------- 4. plausibility with the catalogue's dimensions

def test_section_deeper_than_member_uses_catalogue_depth():
    """HEB 1000 is 1000 mm deep (EN 10365 row): on a 0.8 m member in a 0.8 m model it is flagged
    with the table's depth."""
    m = read_text(STEEL + 'section C = catalogue "HEB 1000"\nnode A = (0, 0, 0)\nnode B = (0, 0, 0.8 m)\n'
                  "member M : A -> B beam C S\nsupport A fixed\n")
    assert catalogue_entry("HEB 1000").dims["d"] == pytest.approx(1.0)
    (note,) = [n.text for n in m.warnings if "across" in n.text]
    assert note.startswith("member M: its section C is 1 m across (HEB 1000 d), more than the member is long (800 mm)")


def test_catalogue_section_not_flagged_on_a_long_member():
    m = read_text(STEEL + 'section C = catalogue "HEB 1000"\nnode A = (0, 0, 0)\nnode B = (0, 0, 8 m)\n'
                  "member M : A -> B beam C S\nsupport A fixed\n")
    assert not [n for n in m.warnings if "across" in n.text]


def test_make_section_catalogue_nu_matches_deck():
    """The deck's per-material section is the library's make_section('catalogue', ..., nu=...)."""
    m = read_text(_frame("E = 200 GPa, nu = 0.25", 'catalogue "Pipe6SCH40"'))
    p = make_section("catalogue", {"designation": "Pipe6SCH40"}, nu=0.25)
    assert (m.A[0], m.Avy[0], m.Avz[0]) == (p.A, p.Avy, p.Avz)
    assert math.isclose(p.Avy / p.A, _cowper_hollow_circle(0.25, 1 - 2 * catalogue_entry("Pipe6SCH40").dims["wall"]
                                                           / catalogue_entry("Pipe6SCH40").dims["od"]), rel_tol=1e-12)


# ---------- 5. results.json lists the sections

def test_results_json_lists_sections(tmp_path: Path):
    """results.json `sections`: each section's properties as the library computes them, its
    designation and standard when taken from the catalogue, and the shear areas its members use
    per material (the aluminium mast's at nu = 0.33)."""
    assert main(["run", str(SKID), "--out", str(tmp_path / "out"), "--no-render"]) == 0
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    secs = doc["sections"]
    assert list(secs) == ["POST", "RAIL", "TIE", "BRACE", "MAST"]
    post, p = secs["POST"], catalogue_section("HEB 200")
    assert (post["designation"], post["standard"], post["shape"], post["members"]) == ("HEB 200", "EN 10365", "ishape", 4)
    assert [post[k] for k in ("A_m2", "Iy_m4", "Iz_m4", "J_m4", "Wy_m3", "Wz_m3")] == [p.A, p.Iy, p.Iz, p.J, p.Wy, p.Wz]
    assert post["shear_areas_m2"] == {"STEEL": {"nu": 0.3, "Avy_m2": p.Avy, "Avz_m2": p.Avz}}
    mast = secs["MAST"]["shear_areas_m2"]["ALU"]
    q = catalogue_section("Pipe4SCH40", nu=0.33)
    assert mast == {"nu": 0.33, "Avy_m2": q.Avy, "Avz_m2": q.Avz}
    assert secs["MAST"]["A_m2"] == q.A


def test_results_json_sections_written_by_dimensions():
    """A section typed by its dimensions has no designation; a generic section's W is not known
    (null); an unused section is listed with no members."""
    from fem.output.results_json import results_doc

    text = (STEEL + "section P = pipe(od = 60.3 mm, wall = 3.91 mm)\n"
            "section G = generic(A = 0.01 m^2, Iy = 1e-5 m^4, Iz = 1e-5 m^4, J = 2e-5 m^4)\n"
            "section U = rect(b = 0.1 m, h = 0.2 m)\n"
            "node A = (0, 0, 0)\nnode B = (2 m, 0, 0)\nnode C = (0, 2 m, 0)\n"
            "member M1 : A -> B beam P S\nmember M2 : A -> C beam G S\nsupport A fixed\n"
            "case D static { force B = (0, 0, -1 kN), force C = (0, 0, -1 kN) }\n")
    doc = results_doc(fem.solve(read_text(text)))
    secs = doc["sections"]
    assert secs["P"]["designation"] is None and secs["P"]["standard"] is None and secs["P"]["members"] == 1
    assert secs["G"]["Wy_m3"] is None and secs["G"]["shear_areas_m2"] == {"S": {"nu": 0.3, "Avy_m2": 0.0, "Avz_m2": 0.0}}
    assert secs["U"]["members"] == 0 and secs["U"]["shear_areas_m2"] == {}


def test_docs_deck_catalogue_example_reads():
    """The catalogue lines of docs/deck.md, Sections, read as written."""
    doc = (Path(__file__).parents[1] / "docs" / "deck.md").read_text()
    block = re.search(r"## Sections\n.*?```\n(.*?)```", doc, re.S)
    assert block, "docs/deck.md lost its catalogue example"
    m = read_text(STEEL + block.group(1))
    assert {n: s.designation for n, s in m.sections.items()} == {
        "COL": "HEB 300", "BEAM": "W14X90", "TIE": "HSS4X4X1/4", "LEG": "Pipe6SCH40"}
