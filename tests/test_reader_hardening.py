"""Deck-reader messages and bounds: units written apart from their numbers, other spellings of
units, percent signs, names of the wrong kind, deep expressions, powers of negative numbers,
underflow to zero, and files that are not regular files or are too large. Each case ends in a
located DeckError (exit 2 from the command line) or a correct value, never a traceback or a hang.
"""

import os
import sys
from pathlib import Path

import pytest

from fem.cli import main
from fem.deck import sources
from fem.deck.expressions import MAX_NESTING
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError
from fem.sections import generic, pipe

sys.path.insert(0, str(Path(__file__).parents[1] / "tools"))
import fuzz_deck  # noqa: E402

BASE = """material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section BM = pipe(od = 100 mm, wall = 5 mm)
node A = (0, 0, 0 m)
node B = (0, 0, 3 m)
member BM1: A -> B beam BM S
support A fixed
"""
AT = BASE.count("\n") + 1      # the line of the first statement after BASE


def _error(text: str, folder=".") -> DeckError:
    with pytest.raises(DeckError) as err:
        read_text(BASE + text, folder=folder)
    return err.value


def _z(text: str, node="C") -> float:
    """The z coordinate (m) of `node` in BASE + text."""
    model = read_text(BASE + text)
    return float(model.coords[model.node_names.index(node)][2])


# ---------------------------------------------------------------- messages (issue 11, section 6)

def test_spaced_unit_says_how_units_are_written():
    err = _error("case G static { gravity = (0, 0, -9.81 m / s^2) }\n")
    assert err.location.line == AT and err.location.column == 44
    assert "'s' is not defined; if the unit s is meant, write the whole unit directly after its number" \
        in err.message
    assert "9.81 m/s^2" in err.hint


@pytest.mark.parametrize("text", ["let a = 9.81 m/s ^2\n", "let a = 2 m ^2\n"], ids=["m/s ^2", "m ^2"])
def test_space_before_a_power_of_a_quantity_is_refused(text):
    with pytest.raises(DeckError, match=r"raises the number and its unit together to the power"):
        read_text(BASE + text)


def test_power_of_a_quantity_in_brackets_or_joined_is_read():
    # (2 m)^2 = 4 m^2 and 2 m^2 = 2 m^2: exact arithmetic (common practice, no source)
    z = _z("let a = (2 m)^2\nlet b = 2 m^2\nnode C = (0, 0, a/b * 1 m)\n")
    assert z == 2.0


@pytest.mark.parametrize("word, near", [("tonne", "t"), ("KN", "kN"), ("kgs", "kg"), ("sec", "s")])
def test_other_spelling_of_a_unit_suggests_the_symbol(word, near):
    err = _error(f"mass B = 5 {word}\nnode C = (1 m, 0, 0)\n")
    assert err.message == f"unknown unit '{word}'; did you mean '{near}'?"
    assert (err.location.line, err.location.column) == (AT, 12)


def test_other_spelling_at_the_end_of_the_file():
    with pytest.raises(DeckError, match=r"unknown unit 'tonne'; did you mean 't'\?"):
        read_text(BASE + "mass B = 5 tonne")


def test_percent_sign_suggests_the_percent_unit():
    err = _error("case H history { force B = (1 kN, 0, 0), time = halfsine(0.3 s), duration = 1 s, "
                 "step = 0.01 s, damping = 2% }\n")
    assert "write a percentage with the unit percent, 2 percent" in err.message
    assert err.location.column == err.location.source_line.index("%") + 1


def test_unit_after_a_name_in_a_loop_says_a_unit_follows_a_number():
    text = ("for i in 1..2 {\n"
            "  let up = i\n"
            "  mass B = 100*up kg\n"
            "  spring B (kx = 1 kN/m)\n"
            "}\n")
    err = _error(text)
    assert err.message.startswith("the unit 'kg' follows the name 'up'; a unit is written directly after a number")
    assert (err.location.line, err.location.column) == (AT + 2, 19)
    assert "up*100 kg" in err.hint
    assert "not closed" not in str(err)


def test_unit_after_a_bracket():
    with pytest.raises(DeckError, match=r"the unit 'kg' follows a bracket") as err:
        read_text(BASE + "let up = 2\nlet x = (1 + up) kg\n")
    assert "(...)*1 kg" in err.value.hint


def test_scaled_unit_written_the_right_way_is_read():
    # up*100 kg with up = 2 adds 200 kg (exact, common practice, no source)
    added = read_text(BASE + "let up = 2\nmass B = up*100 kg\n").total_mass() - read_text(BASE).total_mass()
    assert added == pytest.approx(200.0, rel=1e-12)


@pytest.mark.parametrize("text, message, hint", [
    ("case P static { line B = (0, 0, -4 kN/m) }\n", "'B' is a node, not a member; a line load acts on members",
     "force B = (fx, fy, fz)"),
    ("case P static { force BM1 = (0, 0, -4 kN) }\n", "'BM1' is a member, not a node; this statement acts on nodes",
     "member BM1 runs from node A to node B"),
    ("support BM1 fixed\n", "'BM1' is a member, not a node; this statement acts on nodes",
     "runs from node A to node B"),
    ("mass S = 3 kg\n", "'S' is a material, not a node; this statement acts on nodes", ""),
    ("let q = 3\nmass q = 3 kg\n", "'q' is a parameter, not a node; this statement acts on nodes", ""),
], ids=["node as member", "member as node", "support on member", "material", "parameter"])
def test_name_of_another_kind_says_what_it_is(text, message, hint):
    err = _error(text)
    assert err.message == message
    assert hint in err.hint
    assert "did you mean" not in err.message


# ---------------------------------------------------------------- expressions (issue 11, section 7; issue 18)

def test_long_sum_is_refused_at_its_start():
    err = _error("let x = " + "+".join(["1"] * 3000) + "\n")
    assert err.message.startswith(f"this is nested 3000 levels deep, above the limit of {MAX_NESTING}")
    assert (err.location.line, err.location.column) == (AT, 9)


@pytest.mark.parametrize("text", [
    "node C = (0, 0, " + "-" * 3000 + "1 m)\n",
    "node N[" + "+".join(["1"] * 3000) + "] = (1 m, 0, 0)\n",
    "case D static { force B = (1 kN, 0, 0) }\ncombo C = " + "+".join(["D"] * 3000) + "\n",
    "for i in 0..0 { " * 3000 + "let x = 1\n" + "}" * 3000 + "\n",
], ids=["signs", "index", "combination", "loops"])
def test_deep_nesting_is_a_deck_error(text):
    with pytest.raises(DeckError, match=r"levels deep, above the limit of 200"):
        read_text(BASE + text)


def test_sum_at_the_nesting_limit_is_read_with_room_on_the_stack():
    # 200 ones (199 levels of '+' and the numbers: 200 levels) sum to 200 exactly (common
    # practice, no source); read 300 calls deep, as from a deeper caller than pytest
    text = "let s = " + "+".join(["1"] * MAX_NESTING) + "\nnode C = (0, 0, s * 1 m)\n"
    angle = "member BM2: A -> B beam BM S roll = (" + "+".join(["1"] * (MAX_NESTING - 1)) + ") * 1 deg\n"

    def deep(k, f):
        return deep(k - 1, f) if k else f()
    assert deep(300, lambda: _z(text)) == 200.0
    assert deep(300, lambda: read_text(BASE + angle).n_members) == 2
    with pytest.raises(DeckError, match=r"nested 201 levels deep"):
        read_text(BASE + "let s = " + "+".join(["1"] * (MAX_NESTING + 1)) + "\n")


def test_fractional_power_of_a_negative_number():
    err = _error("let x = (-8)^(1/3)\n")
    assert err.message.startswith("the power 0.333333 of a negative number (-8) is not a real number")
    assert "-(8^(1/3))" in err.message
    assert err.location.line == AT
    # a whole power of a negative number, and the suggested form, are real: (-8)^2 = 64 and
    # -(8^(1/3)) = -2 (exact to one rounding, common practice, no source)
    assert _z("node C = (0, 0, (-8)^2 * 1 m)\n") == 64.0
    assert _z("node C = (0, 0, -(8^(1/3)) * 1 m)\n") == pytest.approx(-2.0, rel=1e-15)


@pytest.mark.parametrize("expr, message", [
    ("exp(-800)*1 m", r"exp\(-800\) is too small to hold \(it would become 0\)"),
    ("exp(-800)", r"exp\(-800\) is too small to hold"),
    ("exp(800)", r"exp\(\) of this value is too large to compute"),
    ("log(0)", r"log\(\) needs a positive number, got 0"),
    ("0^(-1)", r"0 to a negative power \(-1\) is a division by zero"),
    ("2^(-2000)", r"the result is too small to hold"),
    ("(1 m)^1e300", r"raised to the power 1e\+300 has no physical meaning \(the limit is 12\)"),
], ids=["exp underflow times unit", "exp underflow", "exp overflow", "log 0", "0^-1", "2^-2000", "unit^1e300"])
def test_values_are_never_turned_into_zero_or_inf(expr, message):
    with pytest.raises(DeckError, match=message) as err:
        read_text(BASE + f"let x = {expr}\n")
    assert (err.value.location.line, err.value.location.column) == (AT, 9)


def test_exp_of_a_small_negative_number_is_read():
    # exp(-700) is about 9.86e-305, a normal float (above 2.2e-308), so it is kept: the reference is
    # Python's math.exp (the C library's), to a few roundings of the product
    import math
    assert _z("node C = (0, 0, exp(-700)*1e300 m)\n") == pytest.approx(math.exp(-700) * 1e300, rel=1e-14)


# ---------------------------------------------------------------- files (issue 11, section 7; issue 18)

@pytest.fixture()
def folder(tmp_path):
    (tmp_path / "ok.deck").write_text(BASE)
    return tmp_path


@pytest.mark.parametrize("name, message", [
    ("", r"include: the file name is empty"),
    ("a\0b", r"include: the file name holds a NUL character"),
    ("x" * 300, r"include: the file name is longer than a file system allows \(300 bytes in one part"),
    (".", r"include names the deck's own folder .*, not a file"),
], ids=["empty", "NUL", "too long", "own folder"])
def test_include_of_a_name_no_file_can_have(folder, name, message):
    with pytest.raises(DeckError, match=message) as err:
        read_text(f'include "{name}"\n', folder=folder)
    assert (err.value.location.line, err.value.location.column) == (1, 9)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_include_of_a_named_pipe_is_refused_without_opening_it(folder):
    os.mkfifo(folder / "pipe.deck")      # opening it for reading would wait for a writer
    with pytest.raises(DeckError, match=r"deck '.*pipe.deck' is a named pipe, not a regular file"):
        read_text('include "pipe.deck"\n', folder=folder)
    (folder / "top.deck").write_text('include "pipe.deck"\n')
    with pytest.raises(DeckError, match=r"is a named pipe, not a regular file"):
        read_deck(folder / "top.deck")


def test_include_of_a_link_loop(folder):
    (folder / "loop.deck").symlink_to(folder / "loop.deck")
    with pytest.raises(DeckError, match=r"cannot be followed: its symbolic links form a loop"):
        read_text('include "loop.deck"\n', folder=folder)


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="named pipes need a POSIX system")
def test_table_that_is_a_pipe_or_has_no_name(folder):
    os.mkfifo(folder / "rec.csv")
    case = ('case H history {{ ground = (0.1 gee, 0, 0), table = "{}", duration = 1 s, step = 0.01 s, '
            'damping = 2 percent }}\ncase M modes {{ count = 1 }}\n')
    with pytest.raises(DeckError, match=r"table '.*rec.csv' is a named pipe, not a regular file"):
        read_text(BASE + case.format("rec.csv"), folder=folder)
    with pytest.raises(DeckError, match=r"table: the file name is empty"):
        read_text(BASE + case.format(""), folder=folder)


@pytest.mark.parametrize("deck, message", [
    ("/dev/zero", r"deck '/dev/zero' is a device, not a regular file"),
    ("x" * 300 + ".deck", r"deck: the file name is longer than a file system allows"),
], ids=["device", "too long"])
def test_check_of_a_deck_that_is_not_a_file_exits_2(deck, message, capsys):
    if deck.startswith("/dev") and not Path(deck).exists():
        pytest.skip("no such device here")
    assert main(["check", deck]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "Traceback" not in err
    import re
    assert re.search(message, err)


def test_deck_above_the_size_limit_is_refused_before_reading(folder):
    big = folder / "big.deck"
    with open(big, "wb") as f:           # sparse: nothing is written to disk, and nothing is read
        f.truncate(sources.MAX_DECK_BYTES + 1)
    with pytest.raises(DeckError, match=r"the deck 'big.deck' is 8 MB, above the limit of 8 MB of deck text"):
        read_deck(big)


def test_deck_and_includes_count_together(folder, monkeypatch):
    top = BASE + 'include "a.deck"\n'
    monkeypatch.setattr(sources, "MAX_DECK_BYTES", len(top) + 50)
    (folder / "a.deck").write_text("# " + "x" * 100 + "\n")
    (folder / "top.deck").write_text(top)
    with pytest.raises(DeckError, match=r"the deck and its includes would be over .* MB, above the limit") as err:
        read_deck(folder / "top.deck")
    assert err.value.location.line == AT
    (folder / "a.deck").write_text("# " + "x" * 40 + "\n")
    assert read_deck(folder / "top.deck").n_members == 1


def test_table_above_its_size_limit(folder, monkeypatch):
    monkeypatch.setattr(sources, "MAX_TABLE_BYTES", 100)
    (folder / "rec.csv").write_text("".join(f"{k * 0.01:.2f}, 0.1\n" for k in range(50)))
    case = ('case H history { ground = (0.1 gee, 0, 0), table = "rec.csv", duration = 1 s, step = 0.01 s, '
            'damping = 2 percent }\ncase M modes { count = 1 }\n')
    with pytest.raises(DeckError, match=r"table 'rec.csv' is 0.0005 MB, above the limit of 0.0001 MB for a table"):
        read_text(BASE + case, folder=folder)


# ---------------------------------------------------------------- sections (issue 18)

@pytest.mark.parametrize("call, message", [
    (lambda: generic(-1.0, 1.0, 1.0, 1.0), r"generic: A must be a positive area, got A=-1 m\^2"),
    (lambda: generic(1.0, -1.0, 1.0, 1.0), r"generic: Iy must be a positive second moment of area, got Iy=-1 m\^4"),
    (lambda: generic(1.0, 1.0, 1.0, 0.0), r"generic: J must be a positive torsion constant, got J=0 m\^4"),
    (lambda: generic(1.0, 1.0, 1.0, 1.0, Avz=-2.0), r"Avz must be zero or positive \(a shear area\), got Avz=-2 m\^2"),
    (lambda: pipe(-0.1, 0.01), r"pipe: od must be a positive length, got od=-0.1 m"),
], ids=["A", "Iy", "J", "Avz", "od"])
def test_section_messages_name_the_kind_of_quantity(call, message):
    with pytest.raises(ValueError, match=message):
        call()


def test_section_message_in_a_deck():
    with pytest.raises(DeckError, match=r"section G: generic: A must be a positive area"):
        read_text(BASE + "section G = generic(A = -1 mm^2, Iy = 1 mm^4, Iz = 1 mm^4, J = 1 mm^4)\n")


# ---------------------------------------------------------------- the fuzzer (issue 18)

def test_fuzzer_help_exits_cleanly(capsys):
    with pytest.raises(SystemExit) as stop:
        fuzz_deck.main(["--help"])
    assert stop.value.code == 0
    assert "cases" in capsys.readouterr().out


def test_typed_expressions_give_a_value_or_a_located_error():
    import random
    rng = random.Random(5)
    for _ in range(300):
        text = f"let x = 2\nlet y = {fuzz_deck.expression(rng)}\n"
        assert fuzz_deck.check(text, Path(".")) is None, text[:200]


def test_huge_damping_ratio_is_refused_without_a_library_warning():
    # found by tools/fuzz_deck.py: the hint computed 100 times the ratio and overflowed
    import warnings
    case = ("case H history { force B = (1 kN, 0, 0), time = halfsine(0.3 s), duration = 1 s, step = 0.01 s, "
            "damping = 1e308 }\ncase M modes { count = 1 }\n")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        with pytest.raises(DeckError, match=r"ratios lie from 0 to below 1") as err:
            read_text(BASE + case)
    assert err.value.hint == ""


def test_other_spelling_in_a_let_suggests_the_value_with_the_symbol():
    with pytest.raises(DeckError, match=r"unknown unit 'metres'; did you mean 'm'\?") as err:
        read_text("node A = (0, 0, 3 metres)\n")
    assert err.value.hint.startswith("write 3 m; the units are")


@pytest.mark.parametrize("expr", ["abs(1, 2)", "sqrt(4, 9)", "atan(1, 2)"])
def test_function_of_two_values_is_refused(expr):
    # abs(1, 2) used to give 1, silently dropping the second value
    with pytest.raises(DeckError, match=r"\(\) takes one value, 2 were given"):
        read_text(f"let x = {expr}\n")
