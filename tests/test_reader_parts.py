"""The reader in parts: its notes are data (fem.notes.Note: location, text, kind) formatted only
when shown, and the expression evaluator works on its own over the deck's sources.

The expected texts are the reader's own wording (our choice, pinned since before the split);
the numbers are exact unit conversions (1 m = 1000 mm by definition of the prefix)."""

from pathlib import Path

import pytest

from fem.deck import units as U
from fem.deck.expressions import Evaluator
from fem.deck.reader import read_text
from fem.deck.sources import Sources
from fem.errors import DeckError, Location
from fem.notes import Note

HEAD = """material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 100 mm, wall = 5 mm)
node A = (0, 0, 0)
node B = (3 m, 0, 0)
node C = (6 m, 0, 0)
member M : A -> B beam P S
member K : B -> C beam P S
support A fixed
"""
N_HEAD = HEAD.count("\n")


def test_a_reader_warning_is_a_note_with_its_location_and_the_old_text():
    m = read_text(HEAD + "member N : B -> A beam P S\n")
    assert m.warnings == [Note(Location("deck.deck", N_HEAD + 1, 1, "member N : B -> A beam P S"),
                               "member N joins the same two nodes as member M (at deck.deck:6:1); both act, "
                               "with their stiffness and mass added")]
    assert str(m.warnings[0]) == (f"deck.deck:{N_HEAD + 1}:1: warning: member N joins the same two nodes as "
                                  "member M (at deck.deck:6:1); both act, with their stiffness and mass added")


@pytest.mark.parametrize("body, line, starts", [
    ("node D = (3 m, 0, 0)\n", 1, "node D is at the same place as node B"),
    ("support A fixed\n", 1, "this support repeats an earlier one"),
    ("spring A (uz = 1e6 N/m)\n", 1, "this spring acts only where a support already holds"),
    ("node T = (3 m, 2 m, 0)\nmember TR : B -> T truss P S\nmass T = 10 kg inertia = (1 kg*m^2, 1 kg*m^2, 1 kg*m^2)\n",
     3, "the rotary inertia of this mass is left out"),
    ("for i in 2..1 { node Q[i] = (i*1 m, 1 m, 0) }\n", 1, "loop range 2..1 is empty"),
    ("case D static { force C = (1 kN, 0, 0) }\ncombo U = D + D\n", 2, "case D appears more than once"),
    ("case D static { force A = (1 kN, 0, 0) }\n", 1, "case D: this force acts only in directions a support holds"),
    ("group G = C, K\nsupport G pinned\n", 2, "group 'G' also holds 1 name(s)"),
    ("material L { E = 70 GPa, nu = 0.3 }\nmember Z : A -> C beam P L\ncase MODES modes { count = 2 }\n", 1,
     "material L has zero density"),
    ("material W { E = 210 MPa, nu = 0.3, density = 7850 kg/m^3 }\nmember Z : A -> C beam P W\n", 1,
     "material W: E = 210 MPa is outside the range of structural materials"),
], ids=["coincident", "support twice", "idle spring", "idle inertia", "empty loop", "combination", "held load",
        "mixed group", "massless", "plausibility"])
def test_every_check_of_the_reader_gives_a_located_note(body, line, starts):
    notes = [w for w in read_text(HEAD + body).warnings if starts in str(w)]
    assert len(notes) == 1, read_text(HEAD + body).warnings
    note = notes[0]
    assert isinstance(note, Note) and note.kind == "warning" and note.text.startswith(starts)
    assert (note.location.file, note.location.line) == ("deck.deck", N_HEAD + line)
    assert str(note) == f"{note.location}: warning: {note.text}"       # formatted only when shown


def _let(sources: Sources, text: str):
    """The expression tree of `let x = text` in a file of its own, and that let's location."""
    path = Path("x.deck").resolve()
    sources.lines[path] = [f"let x = {text}"]
    tree = sources.parse(f"let x = {text}\n", path)
    sources.mark(tree, path)
    let = tree.children[0]
    return let.children[1], sources.loc(let)


def test_the_evaluator_works_on_its_own_over_the_sources():
    sources = Sources(Path("x.deck"))
    ev = Evaluator(sources)
    expr, _ = _let(sources, "2 m * 3 + 500 mm")
    assert ev.value(expr, U.LENGTH, "x") == 6.5
    expr, _ = _let(sources, "12 kN")
    with pytest.raises(DeckError, match="x needs a length, but a force was given") as err:
        ev.value(expr, U.LENGTH, "x")
    assert (err.value.location.file, err.value.location.line, err.value.location.column) == ("x.deck", 1, 9)


def test_an_override_replaces_the_let_in_the_evaluator_and_is_recorded():
    sources = Sources(Path("x.deck"))
    ev = Evaluator(sources, {"x": "250 mm"})
    expr, where = _let(sources, "2 m")
    ev.let("x", expr, where)
    assert ev.vars["x"].value == 0.25 and ev.vars["x"].dim == U.LENGTH
    assert ev.overridden == {"x": "250 mm"}
    ev.unused_overrides(["x"])                           # used: nothing to refuse
    with pytest.raises(DeckError, match="--set y: the deck has no let of that name; defined: x"):
        Evaluator(Sources(Path("x.deck")), {"y": "1 m"}).unused_overrides(["x"])
