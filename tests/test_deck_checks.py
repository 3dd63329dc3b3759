"""Semantic checks of a deck: each user mistake is a located DeckError that says what is wrong
and how to fix it, or a located warning where the deck may mean what it says."""

import json

import numpy as np
import pytest

from fem.analysis.static import held_dofs, solve_static
from fem.assembly import assemble
from fem.cli import main
from fem.deck.model_checks import COINCIDENT
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError

HEAD = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
"""
N_HEAD = HEAD.count("\n")

# (id, body appended to HEAD, line of the error within the body, pattern of the message)
MISTAKES = [
    # duplicate definitions name the first one
    ("material twice", "material S { E = 1 GPa, nu = 0.3 }", 1, r"material S is defined twice \(first at deck.deck:1:1\)"),
    ("section twice", "section P = rect(b = 1 m, h = 1 m)", 1, r"section P is defined twice \(first at deck.deck:2:1\)"),
    ("member twice", "member M : B -> A beam P S", 1, r"member M is defined twice \(first at deck.deck:5:1\)"),
    ("group twice", "group G = A\ngroup G = B", 2, r"group G is defined twice \(first at deck.deck:7:1\)"),
    ("case twice", "case D static { force B = (1 kN, 0, 0) }\ncase D static { force B = (2 kN, 0, 0) }", 2,
     "case D is defined twice"),
    ("combination named like a case", "case D static { force B = (1 kN, 0, 0) }\ncombo D = 2*D", 2,
     "combination D has the same name as case D"),
    ("combination twice", "case D static { force B = (1 kN, 0, 0) }\ncombo U = 2*D\ncombo U = 3*D", 3,
     "combination U is defined twice"),
    ("let twice", "let a = 1 m\nlet a = 2 m", 2, r"parameter 'a' is defined twice \(first at deck.deck:7:1\)"),
    ("let of a loop's name after it", "for i in 0..1 { let x = i*1 m }\nlet x = 3 m", 2, "parameter 'x' is defined twice"),
    ("let of the loop variable", "for i in 0..1 { let i = 2 }", 1, "variable of an enclosing loop"),
    ("let of a constant", "let pi = 3", 1, "built-in constant"),
    ("loop variable used after the loop", "for i in 0..2 { node N[i] = (i*1 m, 1 m, 0) }\nnode Q = (i*1 m, 0, 0)", 2,
     "'i' is not defined"),
    ("group named like a node", "group A = B", 1, "group A has the same name as node A"),
    ("node named like a group", "group G = B\nnode G = (0, 1 m, 0)", 2, "node G has the same name as group G"),
    ("settings key twice", "settings { mass = lumped }\nsettings { mass = consistent }", 2, "'mass' is given twice"),
    ("case option twice", "case X modes { count = 2, count = 3 }", 1, "case X: 'count' is given twice"),
    ("material property twice", "material T { E = 1 GPa, E = 2 GPa, nu = 0.3 }", 1, "material T: 'E' is given twice"),
    ("section dimension twice", "section R = rect(b = 1 m, h = 1 m, b = 2 m)", 1, "section R: 'b' is given twice"),
    ("member option twice", "member N : B -> A beam P S roll = 1 deg roll = 2 deg", 1, "member N: 'roll' is given twice"),
    ("spring direction twice", "spring B (ux = 1 N/m, ux = 2 N/m)", 1, "spring: 'ux' is given twice"),
    # references to what does not exist or is of the wrong kind
    ("load on an undefined node", "case D static { force C = (1 kN, 0, 0) }", 1, "node 'C' is not defined"),
    ("line load on an undefined member", "case D static { line Q = (0, 0, -1 kN/m) }", 1, "member 'Q' is not defined"),
    ("pattern matching nothing", "case D static { force Z* = (1 kN, 0, 0) }", 1, "pattern 'Z\\*' matches no node"),
    ("support on an undefined node", "support C fixed", 1, "node 'C' is not defined"),
    ("combination of an undefined case", "case D static { force B = (1 kN, 0, 0) }\ncombo U = 2*E", 2,
     "refers to case 'E', which is not defined"),
    ("combination of a modes case", "case D static { force B = (1 kN, 0, 0) }\ncase X modes { count = 2 }\n"
     "combo U = D + X", 3, "'X', which is a modes case"),
    ("combination of a combination", "case D static { force B = (1 kN, 0, 0) }\ncombo U = 2*D\ncombo V = 2*U", 3,
     "'U', which is a combination"),
    ("free case starting from nothing", "case X modes { count = 2 }\n"
     "case F free { start = WIND, duration = 1 s, step = 0.01 s }", 2, "start 'WIND' is not a static case"),
    ("response case naming no modes case", "case D static { force B = (1 kN, 0, 0) }\ncase X modes { count = 2 }\n"
     "case F free { start = D, modes = D, duration = 1 s, step = 0.01 s }", 3, "'D' is not a modes case"),
    ("response case without modes", "case D static { force B = (1 kN, 0, 0) }\n"
     "case F free { start = D, duration = 1 s, step = 0.01 s }", 2, "add a modes case"),
    # geometry
    ("zero-length member", "node C = (2 m, 0, 0)\nmember N : B -> C beam P S", 2, "member N has zero length"),
    ("member ends closer than the tolerance", "node C = (2 m, 0, 1e-7 m)\nmember N : B -> C beam P S", 2,
     "member N has zero length"),
    ("coincident nodes both used", "node C = (2 m, 0, 0)\nnode D = (2 m, 0, 3 m)\nmember N : C -> D beam P S", 1,
     r"node C is at the same place as node B \(at deck.deck:4:1\)"),
    ("coincident node with a support", "node C = (2 m, 0, 0)\nsupport C pinned", 1, "node C is at the same place as node B"),
    ("zero up vector", "node C = (2 m, 0, 3 m)\nmember N : B -> C beam P S up = (0, 0, 0)", 2, "up vector is zero"),
    ("up vector along the member", "node C = (2 m, 0, 3 m)\nmember N : B -> C beam P S up = (0, 0, -5)", 2,
     "up vector .0, 0, -5. is parallel to the member axis"),
    ("twist released at both ends", "node C = (4 m, 0, 0)\nmember N : B -> C beam P S release i (rx) release j (rx)",
     2, "twist about its axis"),
    ("axial released at both ends", "node C = (4 m, 0, 0)\nmember N : B -> C beam P S release i (ux) release j (ux)",
     2, "slide along its axis"),
    ("shear and moment released", "node C = (4 m, 0, 0)\nmember N : B -> C beam P S release i (uy, rz) release j (rz)",
     2, "move along its local y"),
    # properties that are not positive
    ("E zero", "material T { E = 0, nu = 0.3 }", 1, "E must be positive"),
    ("E negative", "material T { E = -200 GPa, nu = 0.3 }", 1, "E must be positive"),
    ("G negative", "material T { E = 200 GPa, G = -80 GPa }", 1, "G must be positive"),
    ("nu of a half", "material T { E = 200 GPa, nu = 0.5 }", 1, "nu must lie between -1 and 0.5"),
    ("density negative", "material T { E = 200 GPa, nu = 0.3, density = -1 kg/m^3 }", 1, "density cannot be negative"),
    ("generic area zero", "section G = generic(A = 0, Iy = 1e-6 m^4, Iz = 1e-6 m^4, J = 1e-6 m^4)", 1, "A"),
    ("wall negative", "section Q = pipe(od = 100 mm, wall = -1 mm)", 1, "wall"),
    ("negative carried mass", "member N : B -> A beam P S carried_mass = -1 kg/m", 1, "carried_mass .mass per length. cannot be negative"),
    ("negative spring", "spring B (uz = -1e6 N/m)", 1, "a stiffness cannot be negative"),
    ("negative mass", "mass B = -1 t", 1, "cannot be negative"),
    ("initial displacement at a support", "case X modes { count = 2 }\n"
     "case F free { displacement A* = (0, 0, 1 mm), duration = 1 s, step = 0.01 s }", 2,
     "initial displacement in uz at node A, which is restrained there"),
    # results too large to hold or write
    ("history table too long", "for i in 1..9 { node N[i] = (i*1 m, 1 m, 0) }\ncase X modes { count = 2 }\n"
     "case H history { force B = (1 kN, 0, 0), time = step, duration = 1000 s, step = 0.001 s }", 3,
     "1000001 time steps x 11 recorded nodes = 1.1e.07 rows"),
    ("sweep table too long", "for i in 1..9 { node N[i] = (i*1 m, 1 m, 0) }\ncase X modes { count = 2 }\n"
     "case W harmonic { force B = (1 kN, 0, 0), from = 1 Hz, to = 2 Hz, points = 1000000 }", 3,
     "1000000 frequencies x 11 recorded nodes"),
    # masses
    ("mass on a node nothing holds", "node C = (5 m, 0, 0)\nmass C = 1 t", 2,
     "mass on node C, which no member, support or spring holds in ux, uy, uz"),
    ("mass on a node a spring holds in one direction", "node C = (5 m, 0, 0)\nspring C (ux = 1e3 N/m)\nmass C = 1 t",
     3, "holds in uy, uz"),
]


@pytest.mark.parametrize("body,line,pattern", [m[1:] for m in MISTAKES], ids=[m[0] for m in MISTAKES])
def test_mistake_is_a_located_deck_error(body, line, pattern):
    with pytest.raises(DeckError, match=pattern) as info:
        read_text(HEAD + body + "\n")
    err = info.value
    assert err.location is not None and err.location.file == "deck.deck"
    assert err.location.line == N_HEAD + line, str(err)


def test_a_let_inside_a_loop_changes_on_every_pass():
    m = read_text(HEAD + "for i in 1..3 { let x = i*1 m\nnode N[i] = (x, 1 m, 0) }\n")
    np.testing.assert_allclose(m.coords[-3:, 0], [1.0, 2.0, 3.0])


def test_a_loop_variable_keeps_an_outer_parameter():
    m = read_text(HEAD + "let i = 7\nfor i in 0..1 { node N[i] = (i*1 m, 1 m, 0) }\nnode Q = (i*1 m, 0, 1 m)\n")
    assert m.coords[-1, 0] == 7.0


def test_coincidence_tolerance_is_relative_to_the_model_size():
    # 1 km long: nodes 0.5 mm apart are one place (tolerance 1 mm); 2 m long: 0.5 mm apart are distinct
    far = HEAD.replace("node B = (2 m, 0, 0)", "node B = (1 km, 0, 0)")
    body = "node C = (1 km, 0, 0.5 mm)\nnode D = (1 km, 0, 5 m)\nmember N : C -> D beam P S\n"
    with pytest.raises(DeckError, match="node C is at the same place as node B"):
        read_text(far + body)
    near = body.replace("1 km", "2 m")
    m = read_text(HEAD + near)
    assert m.warnings == [] and COINCIDENT * np.linalg.norm(np.ptp(m.coords, axis=0)) < 0.5e-3


def test_a_bare_coincident_node_is_a_warning():
    m = read_text(HEAD + "node C = (2 m, 0, 0)\n")
    assert len(m.warnings) == 1
    w = str(m.warnings[0])
    assert w.startswith(f"deck.deck:{N_HEAD + 1}:1: warning: node C is at the same place as node B")
    assert "C carries nothing" in w


def test_a_mass_on_a_supported_bare_node_is_allowed():
    # a mass on a fixed node sits on the ground: nothing is lost
    m = read_text(HEAD + "node C = (5 m, 0, 0)\nsupport C fixed\nmass C = 1 t\n")
    assert m.point_mass[2, 0] == 1000.0


def test_zero_density_with_modes_is_warned_with_the_count():
    body = ("material LIGHT { E = 70 GPa, nu = 0.3, density = 0 kg/m^3 }\nnode C = (4 m, 0, 0)\nnode D = (6 m, 0, 0)\n"
            "member N1 : B -> C beam P LIGHT\nmember N2 : C -> D beam P LIGHT\n"
            "member N3 : D -> A beam P LIGHT carried_mass = 3 kg/m\nmass D = 1 t\n")
    m = read_text(HEAD + body + "case MODES modes { count = 3 }\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 1}:1: warning: material LIGHT has zero density, so 2 member(s) "
        "of it carry no mass in modes case MODES; give its density if their mass matters"]
    assert read_text(HEAD + body).warnings == []         # no modes: the mass does not matter


def test_parallel_members_are_warned():
    m = read_text(HEAD + "member N : B -> A beam P S\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 1}:1: warning: member N joins the same two nodes as member M "
        "(at deck.deck:5:1); both act, with their stiffness and mass added"]


def test_truss_only_nodes_have_held_rotations_not_mechanisms():
    # a pinned truss triangle: every node's rotations have no stiffness; they are held, not
    # reported as mechanisms, and not listed (that is what a truss node is)
    m = read_text(HEAD.replace("member M : A -> B beam P S\nsupport A fixed\n", "") + """
node C = (1 m, 0, 1.5 m)
member T1 : A -> B truss P S
member T2 : B -> C truss P S
member T3 : C -> A truss P S
support A pinned
support B (uy, uz)
support C (uy)
case V static { force C = (0, 0, -10 kN) }
""")
    asm = assemble(m)
    assert len(asm.inert) == 9 and all(d % 6 >= 3 for d in asm.inert)
    assert held_dofs(m, asm) == []
    r = solve_static(m, asm, m.cases[0])
    assert r.equilibrium < 1e-12


def test_warnings_reach_check_and_run(tmp_path, capsys):
    deck = tmp_path / "w.deck"
    deck.write_text(HEAD + "node C = (2 m, 0, 0)\ncase D static { force B = (0, 0, -1 kN) }\n")
    assert main(["check", str(deck)]) == 0
    assert "w.deck:7:1: warning: node C is at the same place as node B" in capsys.readouterr().out
    assert main(["run", str(deck), "--out", str(tmp_path / "o"), "--no-render"]) == 0
    assert "w.deck:7:1: warning: node C" in capsys.readouterr().out
    doc = json.loads((tmp_path / "o" / "results.json").read_text())
    assert doc["model"]["warnings"] == [str(w) for w in read_deck(deck).warnings]


def test_included_duplicate_names_the_other_file(tmp_path):
    (tmp_path / "mat.deck").write_text("material S { E = 1 GPa, nu = 0.3 }\n")
    (tmp_path / "top.deck").write_text(HEAD + 'include "mat.deck"\n')
    with pytest.raises(DeckError, match=r"mat.deck:1:1: material S is defined twice \(first at top.deck:1:1\)"):
        read_deck(tmp_path / "top.deck")


@pytest.mark.parametrize("text", ["", "# only a comment\n", 'title "nothing"\ncase D static { gravity = (0, 0, -g0) }\n'],
                         ids=["empty", "comment", "no nodes"])
def test_a_deck_without_nodes_is_checked_and_refused_to_run(tmp_path, text, capsys):
    # a deck of materials only (to be included) reads and checks; running it is refused
    deck = tmp_path / "e.deck"
    deck.write_text(text)
    assert main(["check", str(deck)]) == 0
    assert main(["run", str(deck), "--out", str(tmp_path / "o"), "--no-render"]) == 2
    err = capsys.readouterr().err
    assert "defines no nodes" in err and "Traceback" not in err
    assert not (tmp_path / "o").exists()


def test_member_leaning_just_past_vertical_is_warned():
    # an I shape leaning 2 % (past the 1 % vertical band) without `up` gets the inclined-member
    # axes; a plumb one and a round one are not warned about
    text = """
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section I = rect(b = 100 mm, h = 300 mm)
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0.08 m, 4 m)
node C = (3 m, 0, 0)
node D = (3 m, 0, 4 m)
node E = (6 m, 0, 0)
node F = (6 m, 0.08 m, 4 m)
member C1 : A -> B beam I S
member C2 : C -> D beam I S
member C3 : E -> F beam P S
support A fixed
support C fixed
support E fixed
"""
    m = read_text(text)
    lean = [str(w) for w in m.warnings if "leans" in str(w)]
    assert len(lean) == 1 and ":11:" in lean[0] and "member C1 leans 1.1 deg" in lean[0]
