"""Mistakes an engineer makes in a deck that would otherwise give a silently wrong answer: each
is a located error, or a located warning where the deck may mean what it says."""

from pathlib import Path

import numpy as np
import pytest

from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError

HEAD = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (4 m, 0, 0)
member M : A -> B beam P S
member N : B -> C beam P S
support A fixed
"""
N_HEAD = HEAD.count("\n")


# ---------- supports and springs: they add up, so a later one cannot loosen an earlier one

def test_a_support_asking_for_less_than_an_earlier_one_is_refused():
    # "every base fixed, this one pinned": the union would keep it fixed without a word
    with pytest.raises(DeckError, match=r"support on node A \(ux, uy, uz\) conflicts with the support at "
                                        r"deck.deck:8:1, which already holds ux, uy, uz, rx, ry, rz") as err:
        read_text(HEAD + "support A* pinned\n")
    assert err.value.location.line == N_HEAD + 1
    assert "leave it out of the earlier one" in err.value.hint


def test_supports_that_add_directions_add_up_and_a_repeat_is_a_warning():
    m = read_text(HEAD + "support C (ux, uy)\nsupport C (uz)\n")
    assert m.restraint[2].tolist() == [True, True, True, False, False, False]
    assert m.warnings == []
    m = read_text(HEAD + "support A fixed\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 1}:1: warning: this support repeats an earlier one at 1 node(s), "
        "A (at deck.deck:8:1); remove one of them"]
    assert m.restraint[0].all()


def test_a_spring_on_a_supported_direction_is_a_warning():
    # foundation springs left under a fixed support do nothing
    m = read_text(HEAD + "spring A (uz = 1e8 N/m, rx = 0)\nspring C (uz = 1e6 N/m)\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 1}:1: warning: this spring acts only where a support already holds "
        "the node (1: A uz), so it has no effect; to model a flexible support, leave those "
        "directions out of the support"]
    # a pattern of springs that also reaches free nodes (a beam on an elastic bed, one end fixed) is fine
    assert read_text(HEAD + "spring * (uz = 1e6 N/m)\n").warnings == []


# ---------- loops and time steps

def test_a_reversed_loop_range_is_a_warning_given_once():
    m = read_text(HEAD + "for k in 0..2 {\nfor i in 3..1 { node Q[i] = (i*1 m, 1 m, 0) } }\n")
    assert m.n_nodes == 3
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 2}:1: warning: loop range 3..1 is empty (a range counts up), so "
        "its statements are skipped; write 1..3 to run them"]


@pytest.mark.parametrize("kind,loads", [("free", "start = D"), ("history", "force C = (1 kN, 0, 0), time = step")])
def test_a_duration_shorter_than_the_step_is_refused(kind, loads):
    deck = (HEAD + "case D static { force C = (1 kN, 0, 0) }\ncase X modes { count = 2 }\n"
            f"case F {kind} {{ {loads}, duration = 0.001 s, step = 0.005 s }}\n")
    with pytest.raises(DeckError, match=f"case F: duration 0.001 s is shorter than the step 0.005 s, so the {kind} "
                                        "case would hold its start only") as err:
        read_text(deck)
    assert err.value.location.line == N_HEAD + 3
    assert err.value.location.source_line[err.value.location.column - 1:].startswith("duration")


# ---------- CSV tables

def _spectrum_deck(tmp_path: Path, csv: bytes, extra: str = "") -> Path:
    (tmp_path / "sa.csv").write_bytes(csv)
    deck = tmp_path / "top.deck"
    deck.write_text(HEAD + "case X modes { count = 2 }\n"
                    f'case E spectrum {{ table = "sa.csv", made_for = 5 percent{extra} }}\n')
    return deck


@pytest.mark.parametrize("csv", [
    b"T,Sa\n0,0.3\n0.5,0.75\n2,0.2\n",
    b"\xef\xbb\xbfT;Sa\r\n\r\n# comment\r\n0;0.3\r\n0.5;0.75\r\n\r\n2;0.2\r\n",    # BOM, CRLF, blank lines
    b"T\tSa\n0\t0.3\n0.5\t0.75\n2\t0.2\n",                                        # tab separated
    b"  0   0.3\n  0.5 0.75   # plateau\n  2   0.2\n",                             # spaces, trailing comment
])
def test_table_layouts_read_alike(tmp_path, csv):
    m = read_deck(_spectrum_deck(tmp_path, csv))
    sp = m.cases[-1].spectrum
    np.testing.assert_array_equal(sp.table, [[0, 0.3 * 9.80665], [0.5, 0.75 * 9.80665], [2, 0.2 * 9.80665]])


@pytest.mark.parametrize("csv,where,pattern", [
    # a typo in the first row was skipped as a header, moving the table's start
    (b"0,O.3\n0.5,0.75\n2,0.2\n", "sa.csv:1:3", "expected two numbers in this row, found 'O.3'"),
    (b"T,Sa\n0,0.3\n0.5,0.75\n0.5,0.6\n2,0.2\n", "sa.csv:4:1",
     r"the first column must increase row by row: 0.5 follows 0.5 \(row 3\)"),
    (b"0,5;0,3\n1,0;0,2\n", "sa.csv:1:1", "expected two finite numbers in this row, found 4: 0, 5, 0, 3"),
    (b"T,Sa\n0,0.3\n", "top.deck:10:", r"needs at least two rows of numbers \(time or period, value\); it has 1"),
    (b"T,Sa\n0,0\n0.5,0\n2,0\n", "top.deck:10:", "every value in its second column is zero"),
])
def test_bad_tables_are_located(tmp_path, csv, where, pattern):
    with pytest.raises(DeckError, match=pattern) as err:
        read_deck(_spectrum_deck(tmp_path, csv))
    assert str(err.value).startswith(where), str(err.value)


def test_a_spectrum_scale_must_be_positive(tmp_path):
    with pytest.raises(DeckError, match="scale must be a positive acceleration"):
        read_deck(_spectrum_deck(tmp_path, b"0,0.3\n2,0.2\n", ", scale = -1 gee"))


# ---------- ground motion in a direction the retained modes hardly move

POLE = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for k in 0..10 { node N[k] = (0, 0, k*1 m) }
for k in 0..9 { member M[k] : N[k] -> N[k+1] beam P S }
support N0 fixed
case MODES modes { MODES_OPTIONS }
case H history { ground = GROUND, time = halfsine(0.2 s), duration = 0.5 s, step = 0.001 s, damping = 2 percent }
case W harmonic { ground = GROUND, from = 1 Hz, to = 5 Hz, points = 20, damping = 2 percent }
case E spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = DIRS, missing = MISSING }
"""


def _pole(modes: str, ground: str, missing: str = "off"):
    from fem import solve

    text = (POLE.replace("MODES_OPTIONS", modes).replace("GROUND", ground).replace("MISSING", missing)
            .replace("DIRS", ground.replace(" m/s^2", "")))
    return solve(read_text(text)).modal


def test_ground_motion_where_the_modes_carry_little_mass_is_warned():
    # two modes of a cantilever pole: the first bending pair, about 61 % of the mass in X and Y
    # (uniform cantilever, first mode; Chopra, Dynamics of Structures, 4th ed., Sec. 17.8, from
    # memory); nothing in Z, whose first mode is axial
    modes, hist, harm, spec = _pole("count = 2", "(1 m/s^2, 0, 0.5 m/s^2)")
    got = modes.part.cumulative[-1, :3]
    assert 0.5 < got[0] < 0.7 and got[2] < 1e-6
    for r in (hist, harm, spec):
        x = [w.text for w in r.warnings if "of the mass in X" in w.text]
        z = [w.text for w in r.warnings if "of the mass in Z" in w.text]
        assert len(x) == 1 and len(z) == 1, r.warnings
        assert f"case {r.name}: the modes of MODES carry {100 * got[0]:.3g} % of the mass in X, a direction of the " \
               "ground motion" in x[0]
    assert spec.warnings[-1].text.endswith("or set missing = on") and str(spec.warnings[-1]).startswith("deck.deck:9:1: ")
    assert str(harm.warnings[-1]).startswith("deck.deck:8:1: warning: case W")


def test_no_ground_mass_warning_when_the_modes_carry_enough_or_missing_mass_is_on():
    _, hist, harm, spec = _pole("target = (90 percent, 90 percent, 0)", "(1 m/s^2, 0, 0)")
    assert not [w for r in (hist, harm, spec) for w in r.warnings if "of the mass in" in w.text]
    *_, spec = _pole("count = 2", "(0, 0, 1 m/s^2)", missing="on")
    assert not [w for w in spec.warnings if "of the mass in" in w.text]


def test_spectrum_summary_shows_the_vertical_base_force(tmp_path, capsys):
    from fem.cli import main

    deck = tmp_path / "pole.deck"
    deck.write_text(POLE.replace("MODES_OPTIONS", "count = 2").replace("GROUND", "(0, 0, 1 m/s^2)")
                    .replace("DIRS", "(0, 0, 1)").replace("MISSING", "on"))
    main(["run", str(deck), "--out", str(tmp_path / "out"), "--no-render"])
    line = next(x for x in capsys.readouterr().out.splitlines() if x.strip().startswith("E "))
    # vertical shaking only: no shear, and the vertical reaction is the missing mass's (the modes
    # carry none in Z): the mass on the free DOFs times the zero-period acceleration 0.25 g x 1.2.
    # With consistent mass the free DOFs carry all but 2/3 of the bottom member's mass (its row
    # and column at the support: m L/3 + 2 m L/6), so 1 - 2/30 of the pole's 10 m of pipe
    mass = 7850 * np.pi / 4 * (0.1683**2 - (0.1683 - 2 * 0.00711) ** 2) * 10 * (1 - 2 / 30)
    assert "base shear Fx 0 kN, Fy 0 kN, base force Fz " in line
    fz = float(line.split("base force Fz ")[1].split()[0])
    assert fz == pytest.approx(mass * 0.25 * 9.80665 * 1.2 / 1e3, rel=1e-3)     # printed to 4 digits


# ---------- values of the wrong kind: the hint names the usual slip

@pytest.mark.parametrize("body,caret,message,hint", [
    ("material W { E = 210 GPa, nu = 0.3, density = 78.5 kN/m^3 }", "78.5",
     "material W: density needs a density, but a force per volume was given",
     "this is a weight: divide by g0 for a density, e.g. 78.5 kN/m^3 / g0"),
    ("member X : A -> C beam P S carried_mass = 0.5 kN/m", "0.5", "member X: carried_mass needs a mass per length, but a force per length",
     "divide by g0 for a mass per length, e.g. 0.5 kN/m / g0"),
    ("mass C = 25 kN", "25", "mass needs a mass, but a force was given", "e.g. 25 kN / g0"),
    ("mass C = 2.5", "2.5", "mass needs a mass, but a bare number was given",
     "e.g. '2.5 t', or declare 'assume mass in t'"),
    ("spring C (rz = 1e6 N/m)", "1e6", "spring rz needs a moment, but a force per length was given",
     "a rotational stiffness is a moment per radian"),
    ("case X modes { fmax = 0.05 s }", "0.05", "case X: fmax needs a frequency, but a time was given",
     "one over the period"),
    ("case X modes { count = 2 }\ncase F free { displacement C = (0, 0, 1 mm), duration = 1 s, step = 0.01 s, "
     "damping = 5 }", "damping", r"case F: damping: ratios lie from 0 to below 1", "5 is 500 %; for 5 % write 5 percent"),
    ("case X modes { count = 2 }\ncase F free { displacement C = (0, 0, 1 mm), duration = 1 s, step = 0.01 s, "
     "rayleigh = (2 percent, 1 Hz, 3 percent, 10 Hz) }", "2 percent",
     r"rayleigh \(f1, ratio1, f2, ratio2\): f1 needs a frequency", "e.g. '5 Hz'"),
    ("assume density in t", "density", "a density has no unit symbol of its own", "assume mass in t and assume length in mm"),
])
def test_a_value_of_the_wrong_kind_gets_a_pointed_hint(body, caret, message, hint):
    with pytest.raises(DeckError, match=message) as err:
        read_text(HEAD + body + "\n")
    loc = err.value.location
    assert loc.line == N_HEAD + body.count("\n") + 1, str(err.value)
    assert loc.source_line[loc.column - 1:].startswith(caret), str(err.value)
    assert hint in err.value.hint


# ---------- cases that would silently compute nothing, or not what was written

@pytest.mark.parametrize("body,message,caret", [
    # a misspelt gravity was kept as an option nobody read: a case of zero load
    ("case D static { gravit = (0, 0, -g0) }", "case D: unknown option 'gravit' for a static case; did you mean "
     "'gravity'", "gravit"),
    ("case D static { force C = (1 kN, 0, 0), damping = 5 percent }", "unknown option 'damping' for a static case",
     "damping"),
    ("case D static { }", "case D: this static case has no loads, so every result would be zero", "case"),
    ("case D static { force C = (1 kN, 0, 0) }\ncase X modes { count = 2 }\n"
     "case F free { start = D, gravity = (0, 0, -g0), duration = 1 s, step = 0.01 s }",
     "case F: gravity belongs to static and history cases, not to a free case", "gravity"),
    ("case X modes { count = 2 }\ncase W harmonic { gravity = (0, 0, -g0), force C = (1 kN, 0, 0), from = 1 Hz, "
     "to = 2 Hz, damping = 2 percent }", "case W: gravity belongs to static and history cases, not to a harmonic",
     "gravity"),
])
def test_a_case_that_would_compute_nothing_or_else_is_refused(body, message, caret):
    with pytest.raises(DeckError, match=message) as err:
        read_text(HEAD + body + "\n")
    loc = err.value.location
    assert loc.line == N_HEAD + body.count("\n") + 1 and loc.source_line[loc.column - 1:].startswith(caret)


def test_a_load_only_on_held_directions_is_a_warning():
    # every node it names is held where it pushes: it moves nothing
    m = read_text(HEAD + "case D static { force A = (1 kN, 0, 0), moment A = (0, 0, 1 kN*m) }\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 1}:17: warning: case D: this force acts only in directions a support holds (A ux), so "
        "it goes straight into the support and moves nothing; check the node names or pattern",
        f"deck.deck:{N_HEAD + 1}:41: warning: case D: this moment acts only in directions a support holds (A rz), "
        "so it goes straight into the support and moves nothing; check the node names or pattern"]
    # a pattern that takes in a support as well as free nodes is fine: that part is a reaction
    assert read_text(HEAD + "case D static { force * = (1 kN, 0, 0) }\n").warnings == []


def test_a_case_named_twice_in_a_combination_is_a_warning():
    m = read_text(HEAD + "case D static { force C = (1 kN, 0, 0) }\ncombo U = 1.35*D + 1.5*D\n")
    assert [str(w) for w in m.warnings] == [
        f"deck.deck:{N_HEAD + 2}:20: warning: case D appears more than once in this combination; "
        "its factors add up to 2.85"]
    assert m.combinations[0].factors == {"D": pytest.approx(2.85)}


def test_a_vector_in_a_let_and_a_target_in_bare_numbers_say_how_to_write_them():
    with pytest.raises(DeckError, match="a let parameter holds one value, not a vector") as err:
        read_text(HEAD + "let v = (0, 0, 1)\n")
    assert (err.value.location.line, err.value.location.column) == (N_HEAD + 1, 11)
    assert "up = (0, 0, vz)" in err.value.hint
    with pytest.raises(DeckError, match="fractions of the mass from 0 to 100 percent") as err:
        read_text(HEAD + "case X modes { target = (90, 90, 0) }\n")
    assert "target = (90 percent, 90 percent, 0)" in err.value.hint


def test_a_trigonometric_function_of_a_bare_number_needs_its_angle_unit():
    # cos(120) meant as degrees would place the node at cos(120 rad) = 0.81 silently
    with pytest.raises(DeckError, match=r"cos\(\) of a bare number would read it in radians: write cos\(120 deg\) "
                                        r"or cos\(120 rad\)") as err:
        read_text(HEAD + "node Q = (cos(120)*1 m, 1 m, 0)\n")
    assert (err.value.location.line, err.value.location.column) == (N_HEAD + 1, 15)
    # a parameter written as a bare number is bare too (as for roll)
    with pytest.raises(DeckError, match=r"tan\(\) of a bare number"):
        read_text(HEAD + "let a = 2\nnode Q = (tan(a*0.25)*1 m, 1 m, 0)\n")
    # angles with units, radians through pi or a parameter with its unit, and 0 read as before
    m = read_text(HEAD + "let a = 2 rad\nnode Q = (cos(pi/3)*1 m + sin(30 deg)*1 m + cos(0)*1 m + tan(a*0.25)*1 m, 1 m, 0)\n")
    assert m.coords[-1, 0] == pytest.approx(0.5 + 0.5 + 1 + np.tan(0.5), rel=1e-15)


def test_a_pulse_or_table_running_past_the_duration_is_a_warning(tmp_path):
    # halfsine(30 s) for 30 ms, or a record longer than the run: only the start is seen
    (tmp_path / "rec.csv").write_text("t,a\n0,0\n1,1\n12,0\n")
    (tmp_path / "h.deck").write_text(
        HEAD + "case X modes { count = 2 }\n"
        "case H history { time F = halfsine(30 s), force C = (1 kN, 0, 0) times F, ground = (0.1 gee, 0, 0), "
        'table = "rec.csv", duration = 6 s, step = 0.01 s }\n')
    w = [str(x) for x in read_deck(tmp_path / "h.deck").warnings]
    assert sorted(w) == sorted([
        f"h.deck:{N_HEAD + 2}:101: warning: case H: the table runs to 12 s, past the duration 6 s, so only its start "
        "is seen; check the units, or lengthen the duration",
        f"h.deck:{N_HEAD + 2}:18: warning: case H: the halfsine lasts to 30 s, past the duration 6 s, so only its "
        "start is seen; check the units, or lengthen the duration"])
    # a pulse that ends within the run, and a table that ends with it, say nothing
    (tmp_path / "h.deck").write_text(
        HEAD + "case X modes { count = 2 }\n"
        'case H history { force C = (1 kN, 0, 0), table = "rec.csv", duration = 12 s, step = 0.01 s }\n'
        "case K history { force C = (1 kN, 0, 0), time = halfsine(0.03 s), duration = 1 s, step = 0.001 s }\n")
    assert read_deck(tmp_path / "h.deck").warnings == []


def test_a_wider_support_pattern_over_a_node_supported_on_its_own_is_fine():
    # pin one end, then hold the rest of the line out of plane: N0 keeps its pin, no message
    m = read_text(HEAD + "support C pinned\nsupport * (uy, uz)\n")
    assert m.restraint[2].tolist() == [True, True, True, False, False, False]
    assert m.restraint[1].tolist() == [False, True, True, False, False, False]
    assert m.warnings == []


def test_record_in_a_spectrum_case_is_refused():
    # it was accepted and did nothing
    with pytest.raises(DeckError, match="case E: a spectrum case has no histories to record") as err:
        read_text(HEAD + 'case X modes { count = 2 }\ncase E spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, '
                  '0.5 s, 2 s), record = "C" }\n')
    assert err.value.location.source_line[err.value.location.column - 1:].startswith("record")


def test_a_release_on_a_truss_member_is_refused():
    # a truss has no end moments to release: the member was probably meant as a beam
    with pytest.raises(DeckError, match="member T: a truss member carries axial force only, so a release does nothing"
                       ) as err:
        read_text(HEAD + "member T : A -> C truss P S release j (rz)\n")
    assert err.value.location.source_line[err.value.location.column - 1:].startswith("release")


def test_spectrum_direction_factors_written_as_percent_numbers_are_warned():
    m = read_text(HEAD + 'case X modes { count = 2 }\ncase E spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, '
                  '0.5 s, 2 s), directions = (100, 30, 0) }\n')
    assert [str(x) for x in m.warnings] == [f"deck.deck:{N_HEAD + 2}:71: warning: case E: direction factors multiply the spectrum, so "
                          "100 scales the response 100-fold; for the 100/30 rule write directions = (1, 1, 0) with "
                          'spatial = "100/30"']
    assert read_text(HEAD + 'case X modes { count = 2 }\ncase E spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, '
                     '0.5 s, 2 s), directions = (1, 0.3, 0) }\n').warnings == []


def test_a_group_of_nodes_and_members_used_for_nodes_is_warned():
    # support MIX fixed takes the group's nodes only; its members are left out, said once
    m = read_text(HEAD + "group MIX = C, M\nsupport MIX fixed\nsupport MIX fixed\n")
    w = [str(x) for x in m.warnings if "group 'MIX'" in str(x)]
    assert len(w) == 1 and "also holds 1 name(s) that are not a node" in w[0]
    assert w[0].startswith(f"deck.deck:{N_HEAD + 2}:9: warning:")
