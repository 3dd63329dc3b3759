"""Plausibility checks: models that read and solve but cannot be meant are warned about or fail.

Model-level checks (fem.deck.plausible) give located warnings with the likely intended value;
answer-level checks (fem.analysis.plausible) fail a run whose static translation exceeds the
model's size or whose supported structure has a mode at near-zero frequency.
"""

import json
from pathlib import Path

import numpy as np
import pytest

from fem.analysis.plausible import NEAR_ZERO_HZ, SIZE_WARN
from fem.cli import main
from fem.deck.plausible import SLENDER
from fem.deck.reader import read_deck, read_text

ROOT = Path(__file__).parents[1]

STEEL = "material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }\n"
PIPE6 = "section P = pipe(od = 168.3 mm, wall = 7.11 mm)\n"     # NPS 6 Sch 40 (ASME B36.10M)

# a two-bay portal frame along X, 6 m bays, 4 m columns, fixed feet
FRAME = STEEL + PIPE6 + """
node A = (0, 0, 0)
node B = (0, 0, 4 m)
node C = (6 m, 0, 4 m)
node D = (6 m, 0, 0)
node E = (XE, 0, 4 m)
node F = (XE, 0, 0)
member AB : A -> B beam P S
member BC : B -> C beam P S
member CD : D -> C beam P S
member CE : C -> E beam P S
member EF : F -> E beam P S
support A fixed
support D fixed
support F fixed
case DEAD static { gravity = (0, 0, -9.81 m/s^2) }
case MODES modes { count = 6 }
"""


def _run(tmp_path, text, name="m.deck"):
    deck = tmp_path / name
    deck.write_text(text)
    out = tmp_path / "out"
    code = main(["run", str(deck), "--out", str(out), "--no-render"])
    doc = json.loads((out / "results.json").read_text()) if (out / "results.json").exists() else None
    return code, doc


def _case(doc, name):
    return next(c for c in doc["cases"] if c["name"] == name)


# ---------- 1. the slip of the issue: 6000 m typed for 6 m

def test_node_at_6000_m_for_6_m_fails_the_run(tmp_path, capsys):
    code, doc = _run(tmp_path, FRAME.replace("XE", "6000 m"))
    text = capsys.readouterr().out
    assert code == 1
    assert "self-checks: all pass" not in text
    # a located model warning names the member, its nodes and what was probably meant
    assert "m.deck:13:1: warning: member CE: it is 5.994 km long, 1498 times longer than the model's median " \
           "member (4 m): check the coordinates of its nodes C and E; did you mean 5.994 m?" in text
    # the static case is warned about, naming case, node and value (nodal translations: the
    # 6 km member bends far more between its nodes, which nodes do not show)
    dead = _case(doc, "DEAD")["checks"]
    assert dead["largest_translation"]["node"] == "E" and dead["model_size_m"] == 6000.0
    v = dead["largest_translation"]["value_m"]
    assert 6000.0 * SIZE_WARN < v < 6000.0
    assert f"m.deck:18:1: warning: case DEAD: node E moves {v:.4g} m in ux, " in text
    assert dead["warnings"] and dead["translation_within_size_pass"] is True
    # the modes case fails, naming its near-zero modes with the motion
    modes = _case(doc, "MODES")["checks"]
    assert modes["near_zero_pass"] is False and modes["rigid_body_motions_free"] == 0
    assert len(modes["near_zero_modes"]) == 4
    assert all(m["frequency_Hz"] < NEAR_ZERO_HZ for m in modes["near_zero_modes"])
    assert "4 mode(s) below 0.01 Hz though the supports hold every rigid-body motion FAIL" in text
    assert all("moving most: " in m["motion"] and ("E " in m["motion"] or "C " in m["motion"])
               for m in modes["near_zero_modes"])


def test_the_same_frame_written_right_passes(tmp_path, capsys):
    code, doc = _run(tmp_path, FRAME.replace("XE", "12 m"))
    text = capsys.readouterr().out
    assert code == 0, text
    assert "warning" not in text
    assert _case(doc, "DEAD")["checks"]["translation_within_size_pass"] is True
    assert _case(doc, "MODES")["checks"]["near_zero_modes"] == []


# ---------- 2. static translation against the model's size (cantilever, closed form)

CANTILEVER = STEEL.replace("210 GPa", "200 GPa") + PIPE6 + """
node R = (0, 0, 0)
node T = (5 m, 0, 0)
member M : R -> T beam P S
support R fixed
case TIP static { force T = (0, 0, -P kN) }
"""


@pytest.mark.parametrize("p, warned, code", [(1.0, False, 0), (10.0, True, 0), (300.0, True, 1)],
                         ids=["L/281 quiet", "L/28 warned", "beyond the span fails"])
def test_tip_deflection_against_span(tmp_path, capsys, p, warned, code):
    # cantilever tip load: delta = P L^3 / (3 E I) (Roark 7th ed. Table 8.1 case 1a); NPS 6 Sch 40,
    # E = 200 GPa, L = 5 m: 177.8160 mm at 10 kN (reference-values.md section 4, computed)
    got, doc = _run(tmp_path, CANTILEVER.replace("P kN", f"{p} kN"))
    text = capsys.readouterr().out
    delta = 0.1778160 * p / 10.0
    tip = _case(doc, "TIP")["checks"]
    assert tip["largest_translation"] == {"node": "T", "direction": "uz", "value_m": pytest.approx(delta, rel=1e-5)}
    assert tip["model_size_m"] == 5.0
    assert got == code
    assert (delta / 5.0 > SIZE_WARN) == warned
    if warned:
        assert f"m.deck:8:1: warning: case TIP: node T moves {delta:.4g} m in uz" in text
        assert _case(doc, "TIP")["checks"]["warnings"]
    else:
        assert "warning" not in text
    assert tip["translation_within_size_pass"] == (code == 0)


# ---------- 3. materials out of the structural range, with the likely value

@pytest.mark.parametrize("prop, meant", [
    ("E = 210 MPa, nu = 0.3", "E = 210 MPa is outside the range of structural materials (500 MPa to 1.2 TPa; "),
    ("E = 210 MPa, nu = 0.3", "; did you mean 210 GPa?"),
    ("E = 11 MPa, nu = 0.3", "; did you mean 11 GPa?"),
    ("E = 210000 GPa, nu = 0.3", "; did you mean 210 GPa?"),
    ("E = 210 GPa, nu = 0.3, density = 7.85 kg/m^3", "density = 7.85 kg/m^3 is outside the range of structural "
     "materials (100 to 2.3e+04 kg/m^3; timber about 350-700, concrete 2400, aluminium 2700, steel 7850); did you "
     "mean 7850 kg/m^3"),
    ("E = 210 GPa, nu = 0.3, density = 78.5 kg/m^3", "did you mean 8005 kg/m^3 (a unit weight in kN/m^3 "),
    ("E = 210 GPa, nu = 0.3, density = 77000 kg/m^3", "did you mean 7852 kg/m^3 (a unit weight in N/m^3 "),
    ("E = 210 GPa, G = 81 MPa", "E/G = 2593 is more than any structural material has (steel 2.6, timber about 16); "
     "did you mean G = 81 GPa?"),
    ("E = 210 GPa, nu = -0.2", "E/G = 1.6 means a Poisson's ratio nu = E/(2G) - 1 = -0.2 below 0"),
], ids=["E MPa", "E MPa meant", "timber MPa", "E 1000x", "t/m3", "kN/m3", "N/m3", "G MPa", "nu negative"])
def test_material_slips_are_warned_with_the_likely_value(prop, meant):
    m = read_text(_material_deck(prop))
    hits = [str(w) for w in m.warnings if "material X" in str(w)]
    assert len(hits) == 1, m.warnings
    assert hits[0].startswith("deck.deck:1:1: warning: material X: ")
    assert meant in hits[0]


def _material_deck(prop):
    if "density" not in prop:
        prop += ", density = 7850 kg/m^3"
    return (f"material X {{ {prop} }}\n" + PIPE6 + "node A = (0, 0, 0)\nnode B = (3 m, 0, 0)\n"
            "member M : A -> B beam P X\n")


@pytest.mark.parametrize("prop", ["E = 210 GPa, nu = 0.3, density = 7850 kg/m^3",          # steel
                                  "E = 70 GPa, nu = 0.33, density = 2700 kg/m^3",          # aluminium
                                  "E = 33 GPa, nu = 0.2, density = 2500 kg/m^3",           # concrete C30/37
                                  "E = 11 GPa, G = 0.69 GPa, density = 420 kg/m^3",        # timber C24
                                  "E = 1 GPa, nu = 0.45, density = 950 kg/m^3",            # polyethylene pipe
                                  "E = 210 GPa, nu = 0.3, density = 0 kg/m^3"],            # massless
                         ids=["steel", "aluminium", "concrete", "timber", "polyethylene", "massless"])
def test_structural_materials_are_not_warned(prop):
    # EN 1993-1-1 3.2.6, EN 1999-1-1 3.2.5, EN 1992-1-1 Table 3.1, EN 338 Table 1 (from memory)
    assert not [w for w in read_text(_material_deck(prop)).warnings if "material X" in str(w)]


# ---------- 4. sections against members and the model; members against the median

MM = """assume length in mm
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section COL = ishape(d = 300, bf = 300, tf = 19, tw = 11)
node A = (0, 0, 0)
node B = (0, 0, 4.5)
node C = (6, 0, 4.5)
node D = (6, 0, 0)
member AB : A -> B beam COL S
member BC : B -> C beam COL S
member CD : D -> C beam COL S
support A fixed
support D fixed
"""


def test_coordinates_in_metres_under_assume_mm_are_warned():
    w = [str(x) for x in read_text(MM).warnings]
    assert w[0].startswith("deck.deck:8:1: warning: member AB: its section COL is 300 mm across (ishape d), more "
                           "than the member is long (4.5 mm) and half the whole model (6 mm across)")
    assert "'assume length in mm' (at deck.deck:1:1) reads them in its unit" in w[0]
    assert w[1] == "deck.deck:9:1: warning: 2 more members are shorter than their sections are deep: BC, CD"
    # written in mm, as meant: quiet
    fixed = MM.replace("(0, 0, 4.5)", "(0, 0, 4500)").replace("(6, 0, 4.5)", "(6000, 0, 4500)") \
              .replace("(6, 0, 0)", "(6000, 0, 0)")
    assert read_text(fixed).warnings == []


def test_coordinates_in_mm_read_as_metres_are_warned_as_slender():
    deck = MM.replace("assume length in mm\n", "").replace("= 300, bf = 300, tf = 19, tw = 11",
                                                           "= 300 mm, bf = 300 mm, tf = 19 mm, tw = 11 mm")
    deck = deck.replace("4.5)", "4500 m)").replace("(6, ", "(6000 m, ")
    w = [str(x) for x in read_text(deck).warnings]
    assert w[0].startswith("deck.deck:7:1: warning: member AB: it is 4.5 km long with a section 300 mm across "
                           "(COL), 1.5e+04 times its depth")
    assert f"(warned above {SLENDER:g})" in w[0] and "coordinates in mm read as metres" in w[0]


def test_fine_mesh_deep_beam_and_short_link_are_not_warned():
    # a 2 m cantilever 0.5 m deep meshed in 16 elements of 125 mm, and a 6 m frame with a
    # 150 mm stiff link: ordinary models, elements shorter than their sections on purpose
    mesh = "\n".join(f"node N{k} = ({0.125 * k} m, 0, 0)" for k in range(17))
    mesh += "\n" + "\n".join(f"member M{k} : N{k} -> N{k + 1} beam B S" for k in range(16))
    deep = STEEL + "section B = rect(b = 200 mm, h = 500 mm)\n" + mesh + "\nsupport N0 fixed\n"
    assert read_text(deep).warnings == []
    link = FRAME.replace("XE", "12 m").replace("node F = (12 m, 0, 0)", "node F = (12 m, 0, 0)\nnode G = (12.15 m, 0, 4 m)") \
        + "member EG : E -> G beam P S\n"
    assert read_text(link).warnings == []


@pytest.mark.parametrize("guy, warned", [("50 m", False), ("500 m", True)], ids=["100x quiet", "1000x warned"])
def test_member_length_outliers_against_the_median(guy, warned):
    # a mast of 100 panels of 0.5 m with a guy from the top; a guy 100 times the panel is ordinary
    nodes = "\n".join(f"node P{k} = (0, 0, {0.5 * k} m)" for k in range(101))
    mems = "\n".join(f"member L{k} : P{k} -> P{k + 1} beam P S" for k in range(100))
    deck = STEEL + PIPE6 + "section W = round(d = 20 mm)\n" + nodes + "\n" + mems + \
        f"\nnode G = ({guy}, 0, 0)\nmember GUY : G -> P100 truss W S\nsupport P0 fixed\nsupport G pinned\n"
    w = [str(x) for x in read_text(deck).warnings if "member GUY" in str(x)]
    assert bool(w) == warned
    if warned:
        assert "times longer than the model's median member (500 mm)" in w[0]


# ---------- 5. near-zero modes in a supported structure; none flagged in a free one

COLUMN = STEEL + PIPE6 + """
node B = (0, 0, 0)
node T = (0, 0, 4 m)
member C : B -> T beam P S
mass T = 500 kg
SUPPORT
case MODES modes { count = 4 }
"""


def test_soft_spring_for_a_missing_restraint_fails_naming_the_motion(tmp_path, capsys):
    # the base should be fixed; its rotations about X and Y are held only by a 1 N m/rad spring.
    # The column is rigid against that spring (3EI/h = 1.8e6 N m/rad), so it rocks as a rigid
    # body: w^2 = k / (m h^2 + m_col h^2 / 3) (a rod turning about its end), 1.716e-3 Hz, far
    # below 0.01 Hz; the run solves, and fails the check
    soft = "support B (ux, uy, uz, rz)\nspring B (rx = 1 N*m, ry = 1 N*m)"
    code, doc = _run(tmp_path, COLUMN.replace("SUPPORT", soft))
    text = capsys.readouterr().out
    assert code == 1
    ch = _case(doc, "MODES")["checks"]
    assert ch["rigid_body_motions_free"] == 0
    slow = ch["near_zero_modes"]
    assert [m["mode"] for m in slow] == [1, 2]
    m_col = 7850 * 3.600457e-3 * 4.0          # NPS 6 Sch 40 area (reference-values.md section 9)
    f = np.sqrt(1.0 / (500 * 4.0 ** 2 + m_col * 4.0 ** 2 / 3)) / (2 * np.pi)
    # 1e-4: the column's bending (1.8e6 against 1 N m/rad) and rotary inertia (0.4 of 8600
    # kg m^2) move it far less
    assert slow[0]["frequency_Hz"] == pytest.approx(f, rel=1e-4)
    assert slow[1]["frequency_Hz"] == pytest.approx(f, rel=1e-4)
    assert {m["motion"].split(";")[0] for m in slow} == {"main motion X", "main motion Y"}
    assert all("moving most: T" in m["motion"] and "T u" in m["motion"] for m in slow)
    assert "2 mode(s) below 0.01 Hz though the supports hold every rigid-body motion FAIL" in text
    assert f"  mode 1 at {f:.3g} Hz: main motion " in text


def test_fixed_column_has_no_near_zero_mode(tmp_path):
    code, doc = _run(tmp_path, COLUMN.replace("SUPPORT", "support B fixed"))
    assert code == 0
    assert _case(doc, "MODES")["checks"]["near_zero_pass"] is True


def test_free_structure_rigid_modes_are_not_flagged(tmp_path, capsys):
    code, doc = _run(tmp_path, COLUMN.replace("SUPPORT", "").replace("count = 4", "count = 8"))
    assert code == 0, capsys.readouterr().out
    ch = _case(doc, "MODES")["checks"]
    assert ch["rigid_body_motions_free"] == 6
    assert ch["near_zero_pass"] is True
    assert sum(f < NEAR_ZERO_HZ for f in _case(doc, "MODES")["frequency_Hz"]) == 6


@pytest.mark.parametrize("support, free", [("", 6), ("support A pinned", 3),
                                           ("support A pinned\nsupport B pinned", 1),
                                           ("support A fixed", 0), ("spring A (ux = 1 kN/m)", 5)],
                         ids=["free", "one pin", "two pins", "fixed", "one spring"])
def test_rigid_motions_left_free_by_the_supports(support, free):
    # rigid-body kinematics: a body held at one point can still turn about it (3 motions), at
    # two points about the line through them (1); one spring holds one translation
    deck = STEEL + PIPE6 + "node A = (0, 0, 0)\nnode B = (3 m, 0, 0)\nnode C = (3 m, 2 m, 0)\n" \
        "member AB : A -> B beam P S\nmember BC : B -> C beam P S\n" + support + "\n"
    from fem.analysis.soundness import examine

    model = read_text(deck)
    _, sound = examine(model)      # the model's checks before any case find the motions from K itself
    assert len(sound.rigid) == free


# ---------- 6. the demo decks raise no plausibility warning and pass

@pytest.mark.parametrize("name", ["rack.deck", "mast.deck"])
def test_demo_decks_raise_no_plausibility_warning(name):
    assert read_deck(ROOT / "decks" / name).warnings == []


def test_mast_answers_are_plausible():
    from fem import solve
    from fem.analysis.modal_case import ModesCaseResult
    from fem.analysis.plausible import static_check, zero_mode_check

    model = read_deck(ROOT / "decks" / "mast.deck")
    solved = solve(model)
    results, modal = solved.statics, solved.modal
    for r in results:
        c = static_check(model, r)
        assert c["translation_within_size_pass"] and not c["warnings"]
    for r in modal:
        if isinstance(r, ModesCaseResult):
            assert zero_mode_check(model, r, len(solved.soundness.rigid))["near_zero_pass"]
