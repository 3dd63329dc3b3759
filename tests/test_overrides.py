"""Overrides of a deck's let parameters (read_deck(let=...), --set NAME=VALUE) and running only
some cases (--case NAME).

The reference for an override is the same deck edited by hand: the two models must be the same
to the last bit, since the override is read by the deck's own evaluator.
"""

import dataclasses
import json
from pathlib import Path

import numpy as np
import pytest

from fem.case_selection import select_cases
from fem.cli import main
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError

DECKS = Path(__file__).parents[1] / "decks"
RACK = DECKS / "rack.deck"
MAST = DECKS / "mast.deck"

# a small frame: a bare count of bays in a loop range, lengths, a load and a modes case
FRAME = """title "test frame"
let n = 3
let bay = 4 m
let h = 3 m
let p = 5 kN
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 114.3 mm, wall = 6 mm)
for i in 0..n {
  node B[i] = (i*bay, 0, 0)
  node T[i] = (i*bay, 0, h)
  member C[i] : B[i] -> T[i] beam P S
  support B[i] fixed
}
for i in 0..n-1 {
  member R[i] : T[i] -> T[i+1] beam P S
}
case PUSH static { force T0 = (p, 0, 0) }
case DOWN static { gravity = (0, 0, -9.81 m/s^2) }
combo BOTH = 1.2*DOWN + 1.5*PUSH
case MODES modes { count = 4 }
case SHAKE spectrum { curve = plateau(0.2 gee, 1.0, 0.1 s, 0.4 s, 2 s), modes = MODES }
case RING free { start = PUSH, duration = 1 s, step = 0.01 s, damping = 2 percent, record = "T*" }
"""


def _same_model(a, b):
    """Every field of two models equal, arrays bit for bit (NaN where NaN)."""
    for f in dataclasses.fields(a):
        if f.name in ("source", "overrides", "warnings"):
            continue
        x, y = getattr(a, f.name), getattr(b, f.name)
        if isinstance(x, np.ndarray):
            assert x.dtype == y.dtype and np.array_equal(x, y, equal_nan=x.dtype.kind == "f"), f.name
        elif f.name == "cases":
            assert [c.name for c in x] == [c.name for c in y]
            for c, d in zip(x, y):
                assert c == d, c.name      # typed cases: every option and load, arrays by value
        elif f.name == "combinations":
            assert [(c.name, c.factors) for c in x] == [(c.name, c.factors) for c in y]
        else:
            assert x == y, f.name


def _edited(text, old, new):
    assert text.count(old) == 1
    return text.replace(old, new)


@pytest.mark.parametrize("let, old, new", [
    ({"bay": "7.5 m"}, "let bay  = 6 m", "let bay  = 7.5 m"),
    ({"tier": "4500 mm"}, "let tier = 4.5 m", "let tier = 4500 mm"),
    ({"width": "5 m + 250 mm"}, "let width = 5 m", "let width = 5 m + 250 mm"),
], ids=["metres", "millimetres", "expression"])
def test_override_is_the_hand_edited_deck(let, old, new):
    model = read_deck(RACK, let=let)
    hand = read_text(_edited(RACK.read_text(), old, new), name="rack.deck", folder=DECKS)
    _same_model(model, hand)
    assert model.overrides == let
    assert read_deck(RACK).overrides == {}


def test_bare_parameter_and_plain_numbers():
    """A bare count given as text or as a Python number; a float reads back to the same bits."""
    hand = read_text(_edited(FRAME, "let n = 3", "let n = 5"))
    for value in ("5", 5, np.int64(5)):
        model = read_text(FRAME, let={"n": value})
        _same_model(model, hand)
        assert model.n_members == 11 and model.overrides == {"n": "5"}
    x = 0.1 + 0.2                             # 0.30000000000000004: repr keeps every bit
    deck = FRAME.replace("let p = 5 kN", "let p = 5 kN\nlet f = 0.5")
    deck = deck.replace("1.5*PUSH", "f*PUSH")
    got = read_text(deck, let={"f": x})
    assert got.combinations[0].factors["PUSH"] == x


def test_override_may_use_earlier_parameters_and_changes_every_use():
    model = read_text(FRAME, let={"h": "bay/2"})
    assert model.coords[:, 2].max() == 2.0
    hand = read_text(_edited(FRAME, "let h = 3 m", "let h = bay/2"))
    _same_model(model, hand)


@pytest.mark.parametrize("let, message", [
    ({"bay": "30 kN"}, r"--set bay: a length is expected \(the deck's let at deck.deck:3:1 gives 4 m\), "
                       r"got 30 kN \(a force\)"),
    ({"bay": "4"}, r"--set bay: a length is expected .* got the bare number 4"),
    ({"n": "4 m"}, r"--set n: a bare number is expected \(the deck's let at deck.deck:2:1 gives 3, a bare "
                   r"number\), got 4 m"),
    ({"nn": "4"}, r"--set nn: the deck has no let of that name; did you mean 'n'\?"),
    ({"bya": "4 m"}, r"did you mean 'bay'\?"),
    ({"bay": "__import__('os')"}, r"--set bay:1:"),
    ({"bay": "4 m\nnode X = (0, 0, 0)"}, r"--set bay: the value is empty or spans lines"),
    ({"bay": "4 m } node X = (0, 0, 0)"}, r"--set bay:1:"),
    ({"bay": ""}, r"--set bay: the value is empty"),
    ({"bay": "width"}, r"--set bay:1:11: 'width' is not defined"),
    ({"bay": [4]}, r"--set bay: the value is deck text .* not list"),
    ({"bay": True}, r"--set bay: the value is deck text"),
    ({"b-y": "4 m"}, r"'b-y' is not a parameter name"),
], ids=["force-for-length", "bare-for-length", "unit-for-bare", "unknown", "unknown-near", "python",
        "two-lines", "statement", "empty", "later-parameter", "list", "bool", "bad-name"])
def test_bad_overrides_are_refused(let, message):
    with pytest.raises(DeckError, match=message):
        read_text(FRAME, let=let)


def test_let_inside_a_loop_cannot_be_overridden():
    deck = FRAME.replace("  member C[i]", "  let c = i*1 m\n  member C[i]")
    with pytest.raises(DeckError, match=r"--set c: the let of c at deck.deck:11:3 is inside the loop at "
                                        r"deck.deck:8:1, which works it out again on every pass"):
        read_text(deck, let={"c": "2 m"})
    # also when the loop never runs its body
    deck = FRAME + "for k in 1..0 {\n  let d = 1 m\n}\n"
    with pytest.raises(DeckError, match=r"--set d: the let of d .* is inside the loop"):
        read_text(deck, let={"d": "2 m"})


def test_check_and_run_with_set(tmp_path, capsys):
    deck = tmp_path / "frame.deck"
    deck.write_text(FRAME)
    assert main(["check", str(deck), "--set", "n=2", "--set", "bay = 5 m"]) == 0
    out = capsys.readouterr().out
    assert "6 nodes, 5 members" in out and "overrides: n = 2, bay = 5 m" in out
    res = tmp_path / "res"
    assert main(["run", str(deck), "--out", str(res), "--no-render", "--set", "h=4 m", "--case", "PUSH"]) == 0
    out = capsys.readouterr().out
    assert "overrides: h = 4 m" in out
    doc = json.loads((res / "results.json").read_text())
    assert doc["model"]["overrides"] == {"h": "4 m"}
    assert doc["model"]["bounding_box_m"][1][2] == 4.0


@pytest.mark.parametrize("argv, message", [
    (["--set", "bay"], "is not NAME=VALUE"),
    (["--set", "bay="], "is not NAME=VALUE"),
    (["--set", "bay=5 m", "--set", "bay=6 m"], "--set bay is given twice"),
    (["--set", "bay=5 kN"], "--set bay: a length is expected"),
], ids=["no-equals", "no-value", "twice", "wrong-unit"])
@pytest.mark.parametrize("command", ["check", "run"])
def test_set_mistakes_exit_2(tmp_path, capsys, argv, message, command):
    deck = tmp_path / "frame.deck"
    deck.write_text(FRAME)
    args = [command, str(deck)] + (["--out", str(tmp_path / "r")] if command == "run" else []) + argv
    try:
        status = main(args)
    except SystemExit as exc:          # argparse refuses a malformed option itself
        status = exc.code
    assert status == 2
    assert message in capsys.readouterr().err
    assert not (tmp_path / "r").exists()


# ---------- --case
@pytest.mark.parametrize("asked, kept, added", [
    (["PUSH"], ["PUSH"], []),
    (["BOTH"], ["PUSH", "DOWN", "BOTH"], ["PUSH", "DOWN"]),
    (["SHAKE"], ["MODES", "SHAKE"], ["MODES"]),
    (["RING"], ["PUSH", "MODES", "RING"], ["PUSH", "MODES"]),
    (["RING", "MODES"], ["PUSH", "MODES", "RING"], ["PUSH"]),
    (["DOWN", "DOWN"], ["DOWN"], []),
], ids=["static", "combination", "spectrum", "free", "needed-and-asked", "twice"])
def test_cases_and_what_they_need(asked, kept, added):
    model = read_text(FRAME)
    only, extra = select_cases(model, asked)
    assert [c.name for c in only.cases] + [c.name for c in only.combinations] == \
        [c for c in ["PUSH", "DOWN", "MODES", "SHAKE", "RING", "BOTH"] if c in kept]
    assert extra == added
    assert len(model.cases) == 5 and len(model.combinations) == 1      # the model given is not changed
    assert only.settings is not model.settings


def test_history_case_needs_its_modes_case():
    only, added = select_cases(read_deck(RACK), ["SURGE"])
    assert [c.name for c in only.cases] == ["MODES", "SURGE"] and added == ["MODES"]
    only, added = select_cases(read_deck(MAST), ["RELEASE"])
    assert [c.name for c in only.cases] == ["ICEWIND", "MODES", "RELEASE"]


def test_unknown_case_is_refused_with_the_nearest():
    with pytest.raises(DeckError, match=r"--case PUHS: the deck has no case or combination of that name; "
                                        r"did you mean 'PUSH'\?"):
        select_cases(read_text(FRAME), ["PUHS"])


def test_run_only_the_named_cases(tmp_path, capsys):
    """The tables hold only the asked cases and those they need, with the numbers of a full run."""
    deck = tmp_path / "frame.deck"
    deck.write_text(FRAME)
    full, part = tmp_path / "full", tmp_path / "part"
    assert main(["run", str(deck), "--out", str(full), "--no-render"]) == 0
    assert main(["run", str(deck), "--out", str(part), "--no-render", "--case", "BOTH", "--case", "SHAKE"]) == 0
    out = capsys.readouterr().out
    assert "cases solved: BOTH, SHAKE as asked (--case), with PUSH, DOWN, MODES which they need" in out
    doc, ref = (json.loads((f / "results.json").read_text()) for f in (part, full))
    assert [c["name"] for c in doc["cases"]] == ["PUSH", "DOWN", "BOTH", "MODES", "SHAKE"]
    assert doc["model"]["cases_asked"] == {"asked": ["BOTH", "SHAKE"], "needed": ["PUSH", "DOWN", "MODES"]}
    assert ref["model"]["cases_asked"] is None
    by_name = {c["name"]: c for c in ref["cases"]}
    for c in doc["cases"]:
        assert c == by_name[c["name"]]             # the same numbers as when every case is solved
    lines = (part / "displacements.csv").read_text().splitlines()
    assert {ln.split(",")[0] for ln in lines[1:]} == {"PUSH", "DOWN", "BOTH", "SHAKE"}
    full_lines = set((full / "displacements.csv").read_text().splitlines())
    assert set(lines) <= full_lines
    assert not (part / "free_RING.csv.gz").exists() and (full / "free_RING.csv.gz").exists()
    # into a folder of a run of every case: the files of the cases not solved go (no stale tables)
    assert main(["run", str(deck), "--out", str(full), "--no-render", "--case", "PUSH"]) == 0
    assert not (full / "free_RING.csv.gz").exists() and not (full / "modes.csv").exists()
    assert [c["name"] for c in json.loads((full / "results.json").read_text())["cases"]] == ["PUSH"]


def test_unknown_case_on_the_command_line_exits_2(tmp_path, capsys):
    deck = tmp_path / "frame.deck"
    deck.write_text(FRAME)
    assert main(["run", str(deck), "--out", str(tmp_path / "r"), "--no-render", "--case", "SHAEK"]) == 2
    assert "did you mean 'SHAKE'?" in capsys.readouterr().err
    assert not (tmp_path / "r").exists()


# ---------- carried_mass: the mass per length a member carries without stiffening it
ONE_MEMBER = """material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 114.3 mm, wall = 6 mm)
node A = (0, 0, 0)
node B = (5 m, 0, 0)
member M : A -> B beam P S {option}
support A fixed
"""


def test_carried_mass_adds_to_the_member_mass():
    """Member mass (rho A + carried mass) L: the definition of a mass per length, no source needed."""
    bare = read_text(ONE_MEMBER.replace("{option}", ""))
    model = read_text(ONE_MEMBER.replace("{option}", "carried_mass = 12 kg/m"))
    assert model.carried_mass.tolist() == [12.0]
    rho_a = 7850 * bare.A[0]
    assert model.total_mass() == pytest.approx((rho_a + 12.0) * 5.0, rel=1e-15)
    assert bare.total_mass() == pytest.approx(rho_a * 5.0, rel=1e-15)
    assert np.array_equal(model.Iy, bare.Iy) and np.array_equal(model.E, bare.E)   # no stiffness added


def test_old_keyword_points_to_the_new_name():
    with pytest.raises(DeckError, match=r"deck.deck:5:28: member M: 'nsm' is not an option here; the mass per "
                                        r"length a member carries without stiffening it .* is written carried_mass"):
        read_text(ONE_MEMBER.replace("{option}", "nsm = 12 kg/m"))
