"""User mistakes the deck reader must turn into one located DeckError (file:line:column, the
line with a caret under the offending token, what is wrong and how to fix it), and the CLI into
exit status 2 without a traceback."""

from pathlib import Path

import numpy as np
import pytest

from fem.cli import main
from fem.deck.reader import read_deck
from fem.errors import DeckError

GOOD = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
"""


def caret_under(err: DeckError) -> str:
    """The text the caret line points at in the quoted source line."""
    lines = str(err).splitlines()
    src, caret = lines[1][4:], lines[2][4:]
    return src[caret.index("^"):]


# ---------- 1. files that are not UTF-8 text, and folders

def test_latin1_byte_is_located(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(GOOD.encode() + 'title "pump 5 \u00b5m"\n'.encode("latin-1"))
    with pytest.raises(DeckError) as err:
        read_deck(deck)
    text = str(err.value)
    assert text.startswith("stand.deck:7:15: byte 0xb5 ('\u00b5' in the Windows/Latin-1 encoding) is not UTF-8")
    assert "must be UTF-8" in text and "save it as UTF-8" in text
    assert caret_under(err.value).startswith("\ufffdm")


def test_utf16_deck_is_refused(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_text(GOOD, encoding="utf-16")
    with pytest.raises(DeckError, match="'stand.deck' is UTF-16 .* must be UTF-8"):
        read_deck(deck)
    deck.write_bytes(GOOD.encode("utf-16-le"))          # no byte-order mark
    with pytest.raises(DeckError, match="is UTF-16"):
        read_deck(deck)


def test_utf8_byte_order_mark_is_accepted(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(b"\xef\xbb\xbf" + GOOD.encode())
    assert read_deck(deck).n_nodes == 2


def test_folder_given_as_deck(tmp_path: Path):
    (tmp_path / "stand.deck").mkdir()
    (tmp_path / "stand.deck" / "floor.deck").write_text(GOOD)
    with pytest.raises(DeckError, match=r"is a folder, not a file") as err:
        read_deck(tmp_path / "stand.deck")
    assert "decks in it: floor.deck" in str(err.value)


def test_included_folder_and_latin1_file(tmp_path: Path):
    (tmp_path / "parts").mkdir()
    (tmp_path / "top.deck").write_text(GOOD + 'include "parts"\n')
    with pytest.raises(DeckError, match=r"^top.deck:7:9: deck '.*parts' is a folder") as err:
        read_deck(tmp_path / "top.deck")
    assert caret_under(err.value) == '"parts"'
    (tmp_path / "top.deck").write_text(GOOD + '\ninclude "loads.deck"\n')
    (tmp_path / "loads.deck").write_bytes(b'title "a"\ntitle "\xe9"\n')
    with pytest.raises(DeckError, match=r"^loads.deck:2:8: byte 0xe9 .* \(included at top.deck:8:9\)"):
        read_deck(tmp_path / "top.deck")


def test_latin1_table_is_located(tmp_path: Path):
    (tmp_path / "pulse.csv").write_bytes(b"# t \xb5s\n0, 0\n1, 1\n")
    (tmp_path / "top.deck").write_text(
        GOOD + "case X modes { count = 2 }\n"
        'case H history { force B = (0, 1 kN, 0), table = "pulse.csv", duration = 1 s, step = 0.01 s }\n')
    with pytest.raises(DeckError, match=r"^pulse.csv:1:5: byte 0xb5 .* \(named at top.deck:8:"):
        read_deck(tmp_path / "top.deck")


def test_cli_exits_2_on_undecodable_deck(tmp_path: Path, capsys):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(b'title "\xb5"\n')
    assert main(["check", str(deck)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "stand.deck:1:8" in err
    assert main(["check", str(tmp_path)]) == 2
    assert "is a folder" in capsys.readouterr().err


# ---------- 2. syntax errors in plain words

# (id, text appended to GOOD, location "line:column", message pattern, text under the caret)
SYNTAX = [
    ("misspelled statement after a member", "suport A fixed", "7:1",
     r"unknown statement 'suport'; did you mean 'support'\?", "suport"),
    ("misspelled statement at the start", "nod C = (0, 0, 0)", "7:1", r"did you mean 'node'\?", "nod"),
    ("misspelled statement after a block", "case D static { force B = (1 kN, 0, 0) }\ncas E static { }", "8:1",
     r"unknown statement 'cas'; did you mean 'case'\?", "cas"),
    ("misspelled release", "member N : A -> B beam P S relese j (rz)", "7:28", r"did you mean 'release'\?", "relese"),
    ("keyword glued to a word", "assume length inn mm", "7:15", r"unknown word .inn. here", "inn"),
    ("keyword glued to a name", "nodeC = (0, 1 m, 0)", "7:1", r"unknown word .nodeC. here", "nodeC"),
    ("unclosed block at the end", "case D static {\n  force B = (1 kN, 0, 0)\n", "7:15",
     r"the file ends before the '\{' opened here is closed", "{"),
    ("unclosed list at the end", "node C = (1 m, 0", "7:10", r"the file ends before the '\(' opened here", "("),
    ("unclosed block before the next statement", "material T { E = 1 GPa, nu = 0.3\nnode C = (0, 1 m, 0)",
     "7:12", r"'\{' opened here is not closed before the 'node' statement on line 8", "{ E"),
    ("statement cut short", "support A", "7:10", r"the file ends in the middle of a statement; expected '\(' or a name",
     ""),
    ("stray bracket", "node C = (1 m, 2 m, 3 m))", "7:25", r"this '\)' closes nothing", ")"),
    ("mismatched bracket", "node C = (1 m, 2 m, 3 m}", "7:24", r"this '\}' closes nothing: the bracket open here is the '\(' of line 7, "
     "column 10", "}"),
    ("missing comma", "node C = (1 m 2 m, 0)", "7:15", r"unexpected value '2 m'; expected ',' or an operator \(\+ - \* / \^\)",
     "2 m"),
    ("number before a name", "combo X = 1.2 DEAD", "7:15", r"unknown unit 'DEAD'\n", "DEAD"),
    ("option without a value", "mass B = 1 t inertia (1, 1, 1)", "7:14", r"'inertia' needs a value", "inertia"),
    ("curly quotes", 'title \u201cstand\u201d', "7:7", "unexpected character", "\u201c"),
    ("number too large", "let a = 1e999", "7:9", r"the number 1e999 is too large", "1e999"),
    ("long integer too large", "let a = 1" + "0" * 400, "7:9", "is too large", "1000"),
    ("number too small", "let a = 1e-999", "7:9", r"the number 1e-999 is too small", "1e-999"),
    ("quantity too large", "node C = (1e306 km, 0, 0)", "7:11", "1e306 km is beyond the range", "1e306 km"),
    ("product too large", "let a = 1e200 * 1e200", "7:9", "the result is too large", "1e200"),
    ("power too large", "let a = 10^400", "7:9", "the result is too large", "10^400"),
    ("quotient too small", "let a = 1e-300 / 1e300", "7:9", "the result is too small", "1e-300"),
]


@pytest.mark.parametrize("body, at, pattern, under", [s[1:] for s in SYNTAX], ids=[s[0] for s in SYNTAX])
def test_syntax_errors_in_words(tmp_path: Path, body, at, pattern, under):
    (tmp_path / "stand.deck").write_text(GOOD + body + "\n")
    with pytest.raises(DeckError, match=pattern) as err:
        read_deck(tmp_path / "stand.deck")
    assert str(err.value).startswith(f"stand.deck:{at}: "), str(err.value)
    assert "''" not in str(err.value)
    if "DEAD" in body:
        assert "write 1.2*DEAD" in str(err.value)
    assert caret_under(err.value).startswith(under)


def test_caret_under_the_token_after_tabs(tmp_path: Path):
    (tmp_path / "stand.deck").write_text(GOOD + "member N : A -> B beam P S\troll = 3 deg\t4\n")
    with pytest.raises(DeckError, match=r"^stand.deck:7:41: unexpected number '4'") as err:
        read_deck(tmp_path / "stand.deck")
    src, caret = str(err.value).splitlines()[1:3]
    assert caret == "    " + "".join(c if c == "\t" else " " for c in src[4:44]) + "^"
    assert caret_under(err.value) == "4"


def test_syntax_error_inside_an_included_file(tmp_path: Path):
    (tmp_path / "top.deck").write_text(GOOD + 'include "loads.deck"\n')
    (tmp_path / "loads.deck").write_text("case D static {\n\tforce B = (1 kN, 0, 0))\n}\n")
    with pytest.raises(DeckError, match=r"^loads.deck:2:24: this '\)' closes nothing") as err:
        read_deck(tmp_path / "top.deck")
    assert caret_under(err.value) == ")"


def test_files_are_named_by_their_place_below_the_top_deck(tmp_path: Path):
    # two included files called legs.deck in different folders: the message says which
    (tmp_path / "east").mkdir()
    (tmp_path / "west").mkdir()
    (tmp_path / "top.deck").write_text(GOOD + 'include "east/legs.deck"\ninclude "west/legs.deck"\n')
    (tmp_path / "east" / "legs.deck").write_text("node E1 = (1 m, 1 m, 0)\n")
    (tmp_path / "west" / "legs.deck").write_text("node W1 = (2 m, 1 m, 0)\nnode W2 = (2 m, 1 m, 3 furlongs)\n")
    with pytest.raises(DeckError) as err:
        read_deck(tmp_path / "top.deck")
    assert str(err.value).startswith(f"{Path('west', 'legs.deck')}:2:"), str(err.value)


def test_bad_table_row_is_located_with_a_caret(tmp_path: Path):
    (tmp_path / "rec").mkdir()
    (tmp_path / "rec" / "g.csv").write_text("time,acc\n0,0\n0.1,zero\n")
    (tmp_path / "top.deck").write_text(GOOD + 'case M modes { count = 2 }\n'
                                       'case Q history { ground = (1 m/s^2, 0, 0), table = "rec/g.csv", '
                                       'duration = 1 s, step = 0.01 s }\n')
    with pytest.raises(DeckError) as err:
        read_deck(tmp_path / "top.deck")
    text = str(err.value).splitlines()
    assert text[0] == f"{Path('rec', 'g.csv')}:3:5: expected two numbers in this row, found 'zero'"
    assert text[1].strip() == "0.1,zero" and text[2] == " " * (text[1].index("0.1") + 4) + "^"
    assert text[3].startswith("hint: table named at top.deck:")


# ---------- 3. the caret under the token to fix, in included files too; nearest names

# (id, text of an included file (after a comment line), location, message pattern, text under the caret)
NAMES = [
    ("section parameter synonym", "section Q = pipe(od = 1 m, thick = 1 cm)", "2:28",
     r"section Q: pipe has no parameter 'thick'; did you mean 'wall'\? it takes pipe\(od, wall\)", "thick"),
    ("section parameter close", "section Q = rhs(b = 1 m, hh = 2 m, t = 1 cm)", "2:26", r"did you mean 'h'\?", "hh"),
    ("section parameter of torsion", "section Q = generic(A = 1 m^2, Iy = 1 m^4, Iz = 1 m^4, Ix = 1 m^4)", "2:56",
     r"did you mean 'J'\? it takes generic\(A, Iy, Iz, J, \[Avy\], \[Avz\], \[Wy\], \[Wz\], \[Wt\]\)", "Ix"),
    ("section parameter missing", "section Q = ishape(d = 1 m, bf = 1 m, tf = 1 cm)", "2:13",
     r"section Q: ishape needs tw", "ishape"),
    ("section shape unknown", "section Q = pipes(od = 1 m, wall = 1 cm)", "2:13", r"unknown shape 'pipes'; did you mean 'pipe'",
     "pipes"),
    ("case kind", "case X mode { count = 3 }", "2:8", r"case X: unknown kind 'mode'; did you mean 'modes'\?", "mode"),
    ("member node", "member N : A -> C beam P S", "2:17", r"member N: node 'C' is not defined", "C beam"),
    ("member section after a tab", "\tmember N : A -> B beam Q S", "2:25", r"uses section 'Q', which is not defined", "Q S"),
    ("member material", "member N : A -> B beam P T", "2:26", r"uses material 'T', which is not defined", "T"),
    ("load node in a block", "case D static {\n\tforce C = (1 kN, 0, 0)\n}", "3:8", r"node 'C' is not defined", "C ="),
    ("material E", "material T { E = -1 GPa, nu = 0.3 }", "2:14", "E must be positive", "E ="),
    ("material nu", "material T { E = 1 GPa, nu = 0.7 }", "2:25", "nu must lie between", "nu ="),
    ("unit of a coordinate", "node C = (0, 1 kN, 0)", "2:14", "needs a length, but a force was given", "1 kN"),
]


@pytest.mark.parametrize("body, at, pattern, under", [s[1:] for s in NAMES], ids=[s[0] for s in NAMES])
def test_errors_in_an_included_file_point_at_the_token(tmp_path: Path, body, at, pattern, under):
    (tmp_path / "top.deck").write_text(GOOD + 'include "parts.deck"\n')
    (tmp_path / "parts.deck").write_text("# pump stand parts\n" + body + "\n")
    with pytest.raises(DeckError, match=pattern) as err:
        read_deck(tmp_path / "top.deck")
    assert str(err.value).startswith(f"parts.deck:{at}: "), str(err.value)
    assert caret_under(err.value).startswith(under)


# ---------- 4. assume statements: one consistent set, each quantity once

def test_inconsistent_assumes_are_refused_pointing_at_both(tmp_path: Path):
    (tmp_path / "stand.deck").write_text(GOOD + "assume length in mm\nassume force in kN\nassume mass in t\n")
    with pytest.raises(DeckError) as err:
        read_deck(tmp_path / "stand.deck")
    text = str(err.value)
    # t * mm / s^2 = 1000 kg * 0.001 m / s^2 = 1 N, so kN asks for a mass unit of 1e6 kg
    assert text.startswith("stand.deck:9:1: assume mass in t (t = 1000 kg) disagrees with 'assume length in mm' at "
                           "stand.deck:7:1, 'assume force in kN' at stand.deck:8:1, time in s (the default): together "
                           "those make the unit of mass 1e+06 kg"), text
    assert caret_under(err.value).startswith("assume mass")
    (tmp_path / "stand.deck").write_text(GOOD + "assume length in mm\nassume stress in MPa\nassume force in kN\n")
    with pytest.raises(DeckError, match=r"^stand.deck:9:1: assume force in kN .* make the unit of force 1 N"):
        read_deck(tmp_path / "stand.deck")


def test_consistent_assumes_convert_derived_units():
    # N, mm, t, s with MPa: a bare spring stiffness of 5 is 5 N/mm = 5000 N/m, a bare E of
    # 200000 is 200000 MPa = 2e11 Pa, and a bare mass of 0.2 is 0.2 t = 200 kg
    from fem.deck.reader import read_text
    m = read_text("assume length in mm\nassume mass in t\nassume force in N\nassume stress in MPa\n"
                  "material S { E = 200000, nu = 0.3, density = 7850 kg/m^3 }\n"
                  "section P = pipe(od = 168.3, wall = 7.11)\nnode A = (0, 0, 0)\nnode B = (2000, 0, 0)\n"
                  "member M : A -> B beam P S\nsupport A fixed\nspring B (uy = 5)\nmass B = 0.2\n")
    assert m.springs[1, 1] == pytest.approx(5000.0, rel=1e-12)
    assert m.E[0] == pytest.approx(2e11, rel=1e-12)
    assert m.point_mass[1, 0] == pytest.approx(200.0, rel=1e-12)


def test_second_assume_of_a_quantity_is_refused(tmp_path: Path):
    (tmp_path / "stand.deck").write_text("assume length in mm\nnode A = (0, 0, 0)\nnode B = (2000, 0, 0)\n"
                                         "assume length in m\nnode C = (2, 1, 0)\n")
    with pytest.raises(DeckError, match=r"^stand.deck:4:1: assume length in m would change the unit of bare length "
                       r"numbers set by 'assume length in mm' at stand.deck:1:1"):
        read_deck(tmp_path / "stand.deck")
    # the same assume again, as an included file's header, changes nothing and is accepted
    (tmp_path / "part.deck").write_text("assume length in mm\nnode C = (2000, 1000, 0)\n")
    (tmp_path / "stand.deck").write_text("assume length in mm\nnode A = (0, 0, 0)\ninclude \"part.deck\"\n")
    assert read_deck(tmp_path / "stand.deck").coords[1, 0] == pytest.approx(2.0)


def test_a_case_reads_the_assumes_in_force_where_it_is_written():
    from fem.deck.reader import read_text
    with pytest.raises(DeckError, match="a bare number was given"):
        read_text(GOOD + "case D static { force B = (1, 0, 0) }\nassume force in kN\n")
    m = read_text(GOOD + "assume force in kN\ncase D static { force B = (1, 0, 0) }\n")
    assert m.cases[0].loads[0].vector[0] == pytest.approx(1000.0)


# ---------- 5. roll: a value, and an angle with its unit

ROLLS = [
    ("bare roll at the end", "roll", "7:28", r"'roll' needs a value: write roll = \.\.\."),
    ("bare roll before a statement", "roll\nsupport A fixed", "7:28", r"'roll' needs a value"),
    ("roll without =", "roll 30 deg", "7:28", r"'roll' needs a value"),
    ("roll as a bare number", "roll = 30", "7:35", r"member N: roll is an angle and needs its unit: write 30 deg or 30 rad"),
    ("roll as bare arithmetic", "roll = 2*15", "7:35", r"roll is an angle and needs its unit"),
    ("roll as a length", "roll = 30 mm", "7:35", r"member N: roll is an angle, e.g. 30 deg, but a length was given"),
]


@pytest.mark.parametrize("opt, at, pattern", [r[1:] for r in ROLLS], ids=[r[0] for r in ROLLS])
def test_roll_needs_an_angle(tmp_path: Path, opt, at, pattern):
    (tmp_path / "stand.deck").write_text(GOOD + "member N : A -> B beam P S " + opt + "\n")
    with pytest.raises(DeckError, match=pattern) as err:
        read_deck(tmp_path / "stand.deck")
    assert str(err.value).startswith(f"stand.deck:{at}: ")


@pytest.mark.parametrize("lets, opt", [("let a = 30\n", "roll = a"), ("let b = 2\nlet a = 15*b\n", "roll = a"),
                                       ("", "roll = 0*1 + 30")])
def test_roll_from_bare_parameters_is_refused(lets, opt):
    # a parameter written as a bare number carries no unit into roll, which would read radians
    from fem.deck.reader import read_text
    with pytest.raises(DeckError, match=r"roll is an angle and needs its unit.*write 30 deg or 30 rad"):
        read_text(lets + GOOD + "member N : A -> B beam P S " + opt + "\n")


@pytest.mark.parametrize("opt, expected", [("roll = 30 deg", 30.0), ("roll = 0", 0.0), ("roll = pi/6", 30.0),
                                           ("roll = a", 30.0), ("roll = 0.5 rad", 28.64788975654116),
                                           ("roll = b*1 deg", 30.0), ("roll = atan(1)", 45.0)])
def test_roll_angles_accepted(opt, expected):
    from fem.deck.reader import read_text
    m = read_text("let a = 30 deg\nlet b = 30\n" + GOOD + "member N : A -> B beam P S " + opt + "\n")
    assert np.degrees(m.roll[1]) == pytest.approx(expected, rel=1e-12)


# ---------- 6. rotary inertia where only truss members meet

TRIPOD = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section R = round(d = 40 mm)
node B1 = (2 m, 0, 0)
node B2 = (-1 m, 1.7320508 m, 0)
node B3 = (-1 m, -1.7320508 m, 0)
node T = (0, 0, 3 m)
member L1 : B1 -> T truss R S
member L2 : B2 -> T truss R S
member L3 : B3 -> T truss R S
support B* pinned
"""


def _tripod_modes(text):
    from fem.analysis.modes import solve_modes
    from fem.assembly import assemble
    from fem.deck.reader import read_text
    model = read_text(text)
    asm = assemble(model)
    K = asm.K[asm.free][:, asm.free]
    M = asm.M[asm.free][:, asm.free]
    return model, asm, solve_modes(K.tocsc(), M.tocsc(), n_modes=len(asm.free))


def test_rotary_inertia_on_a_truss_node_is_warned_and_changes_nothing():
    plain, asm0, modes0 = _tripod_modes(TRIPOD + "mass T = 200 kg\n")
    model, asm, modes = _tripod_modes(TRIPOD + "mass T = 200 kg inertia = (30 kg*m^2, 30 kg*m^2, 50 kg*m^2)\n")
    assert plain.warnings == []
    assert len(model.warnings) == 1
    assert str(model.warnings[0]).startswith("deck.deck:11:1: warning: the rotary inertia of this mass is left out "
                                             "at 1 node(s), T (rx, ry, rz): no beam end there keeps those rotations")
    # T's rotations are held: the model has T's three translations only, as without the inertia,
    # and no zero-frequency mode or mechanism appears
    assert len(asm.free) == len(asm0.free) == 3
    np.testing.assert_allclose(modes.omega, modes0.omega, rtol=1e-12)
    assert modes.omega.min() > 1.0


def test_rotary_inertia_on_a_truss_node_with_a_rotational_spring_is_kept():
    # a spring on rz makes rz part of the model: the inertia then acts, as a torsional oscillator
    # of frequency sqrt(k/I) (50 kN*m / 50 kg*m^2 -> omega = sqrt(1000) rad/s)
    model, asm, modes = _tripod_modes(TRIPOD + "spring T (rz = 50 kN*m)\n"
                                      "mass T = 200 kg inertia = (30 kg*m^2, 30 kg*m^2, 50 kg*m^2)\n")
    assert "(rx, ry)" in str(model.warnings[0])
    assert np.any(np.isclose(modes.omega, np.sqrt(1000.0), rtol=1e-9))


# ---------- 7. magnitudes the assembly cannot compute with are refused at the member

HUGE_INPUT = [
    ("modulus on a short member", "material H { E = 1e308 Pa, nu = 0.3 }\nmember N : A -> C beam P H",
     r"member N: its axial stiffness E\*A/L is about 1e3\d\d N/m, beyond the 1e\+150"),
    ("bending of a very short member", "member N : A -> C beam Q S",
     r"member N: its bending stiffness 12\*E\*I/L\^3 is about 1e1\d\d N/m"),
    ("density", "material H { E = 200 GPa, nu = 0.3, density = 1e200 kg/m^3 }\nmember N : A -> B beam P H",
     r"member N: its mass \(density\*A \+ carried_mass\)\*L is about 1e19\d kg"),
    ("spring", "spring B (ux = 1e200 N/m)", r"spring ux of 1e\+200 in SI units is beyond"),
    ("point mass", "mass B = 1e160 kg", r"mass of 1e\+160 in SI units is beyond"),
]


@pytest.mark.parametrize("body, pattern", [h[1:] for h in HUGE_INPUT], ids=[h[0] for h in HUGE_INPUT])
def test_huge_magnitudes_are_deck_errors(body, pattern):
    import warnings

    from fem.deck.reader import read_text
    text = (GOOD + "node C = (1 mm, 0, 0)\nnode D = (0, 1 m, 0)\nmember K : A -> D beam P S\n"
            "section Q = generic(A = 1 m^2, Iy = 1e130 m^4, Iz = 1 m^4, J = 1 m^4)\n" + body + "\n")
    with warnings.catch_warnings():
        warnings.simplefilter("error")             # no floating-point warning on the way
        with pytest.raises(DeckError, match=pattern):
            read_text(text)


# ---------- 8. the docs' example deck and the angle section's axes as documented

def test_docs_example_deck_reads(tmp_path: Path):
    import re

    doc = (Path(__file__).parents[1] / "docs" / "deck.md").read_text()
    block = re.search(r"## A complete example.*?```deck\n(.*?)```", doc, re.S)
    assert block, "docs/deck.md lost its example deck"
    (tmp_path / "ps3.deck").write_text(block.group(1))
    m = read_deck(tmp_path / "ps3.deck")
    assert m.title == "PS-3 pump stand"
    assert (m.n_nodes, m.n_members) == (10, 15)
    assert [c.kind for c in m.cases] == ["static", "static", "modes", "harmonic"]
    assert m.warnings == []
    # the point masses are the 2 x 0.8 t of the pump skid
    assert m.point_mass[:, 0].sum() == pytest.approx(1600.0)
    assert main(["check", str(tmp_path / "ps3.deck")]) == 0


@pytest.mark.parametrize("b, h, theta_deg", [(0.08, 0.08, 45.0), (0.15, 0.09, None), (0.09, 0.15, None)])
def test_angle_axes_as_documented(b, h, theta_deg):
    """docs/deck.md, Angle sections: local y is the major principal axis u at theta from leg b
    towards leg h, and roll = theta turns leg b onto the default local y, leg h onto local z."""
    import math

    from fem.geometry import local_axes
    from fem.sections import angle, angle_leg_moments, angle_principal_angle
    t = 0.008
    theta = angle_principal_angle(b, h, t)
    if theta_deg is not None:
        assert math.degrees(theta) == pytest.approx(theta_deg, abs=1e-12)
    # the docs' "about 70 deg" for 150 x 90 x 10 and "20 deg" for 90 x 150 x 10
    expected = 70.0 if b > h else 20.0 if b < h else 45.0
    assert math.degrees(angle_principal_angle(b, h, 0.01)) == pytest.approx(expected, abs=0.5)
    s = angle(b, h, t)
    # Mohr's circle: the moments about the leg-b and leg-h axes through the centroid follow from
    # the principal ones at -theta and 90 deg - theta (I(a) = Iu cos^2 a + Iv sin^2 a)
    _, _, _, I_b, I_h, _ = angle_leg_moments(b, h, t)
    assert s.Iy * math.cos(theta) ** 2 + s.Iz * math.sin(theta) ** 2 == pytest.approx(I_b, rel=1e-12)
    assert s.Iy * math.sin(theta) ** 2 + s.Iz * math.cos(theta) ** 2 == pytest.approx(I_h, rel=1e-12)
    # a horizontal member along X: default local y = global Y, local z = global Z
    R = local_axes(np.array([[0.0, 0, 0]]), np.array([[2.0, 0, 0]]), roll=np.array([theta]))[0][0]
    leg_b = math.cos(theta) * R[1] - math.sin(theta) * R[2]
    leg_h = math.sin(theta) * R[1] + math.cos(theta) * R[2]
    np.testing.assert_allclose(leg_b, [0, 1, 0], atol=1e-12)
    np.testing.assert_allclose(leg_h, [0, 0, 1], atol=1e-12)


def test_rotary_inertia_where_every_beam_end_is_released_is_warned():
    # a vertical post hinged at its top about its local y (global -Y for default axes: local z
    # is global X, y = z x x): the inertia about global Y has no stiffness at T, and the
    # assembly holds that DOF; about X and Z the post's bending and torsion hold T
    from fem.assembly import assemble
    from fem.deck.reader import read_text
    text = GOOD + "node T = (0, 0, 3 m)\nmember POST : A -> T beam P S release j (ry)\n"
    m = read_text(text + "mass T = 100 kg inertia = (5 kg*m^2, 5 kg*m^2, 5 kg*m^2)\n")
    assert len(m.warnings) == 1 and "node(s), T (ry):" in str(m.warnings[0]), m.warnings
    t = m.node_names.index("T")
    assert list(assemble(m).inert) == [6 * t + 4]
    assert read_text(text + "mass T = 100 kg\n").warnings == []
