"""`fem.solve` is pure: the model it is given is not changed, and solving twice gives the
same results, to the last bit. A `Results` holds every case by name with its kind, the model's
checks, the self-checks and the solve's notes."""

import copy
from pathlib import Path

import numpy as np
import pytest
from same import assert_same as _same

from fem import solve
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError
from fem.notes import Note

ROOT = Path(__file__).resolve().parents[1]


# every kind of case: static, a combination, modes, free, history, harmonic, spectrum; and a
# count above what the model has, so the solve has a note of its own to say
MIXED = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..3 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N3 = 200 kg
case ST static { force N3 = (1 kN, 0, -2 kN) }
case WIND static { force N2 = (0, 1 kN, 0) }
combo C1 = 1.35*ST + 1.5*WIND
case MODES modes { count = 40 }
case FV free { start = ST, duration = 1 s, step = 0.01 s }
case TH history { force N3 = (1 kN, 0, 0), time = halfsine(0.3 s), duration = 1 s, step = 0.01 s,
                  correction = on }
case HA harmonic { force N3 = (1 kN, 0, 0), from = 1 Hz, to = 5 Hz, points = 5, damping = 2 percent }
case RS spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s) }
"""


@pytest.fixture(scope="module")
def mixed():
    return read_text(MIXED, "mixed.deck")


def test_the_mixed_deck_reads_every_kind(mixed):
    assert {c.kind for c in mixed.cases} == {"static", "modes", "free", "history", "harmonic", "spectrum"}


@pytest.mark.parametrize("source", ["mixed", "rack.deck", "mast.deck"])
def test_solving_twice_gives_identical_results_and_leaves_the_model_as_it_was(source, mixed):
    model = mixed if source == "mixed" else read_deck(ROOT / "decks" / source)
    before = copy.deepcopy(model)
    first = solve(model)
    _same(before, model)                  # every array, dict, list and case option as it was
    second = solve(model)
    _same(before, model)
    _same(first.cases, second.cases, "cases")
    _same(first.notes, second.notes, "notes")
    _same(first.checks, second.checks, "checks")
    _same(first.assembled_mass, second.assembled_mass, "assembled_mass")
    assert (first.soundness.held, first.soundness.condition, first.soundness.rigid) == \
        (second.soundness.held, second.soundness.condition, second.soundness.rigid)
    assert first.ok == second.ok


def test_results_hold_every_case_by_name_in_order_with_its_kind(mixed):
    r = solve(mixed)
    # static cases in deck order, combinations, modes cases, then response cases in deck order
    assert list(r.cases) == ["ST", "WIND", "C1", "MODES", "FV", "TH", "HA", "RS"]
    assert [x.kind for x in r] == ["static", "static", "static", "modes", "free", "history", "harmonic", "spectrum"]
    assert len(r) == 8 and "C1" in r and "NOPE" not in r
    assert r["MODES"] is r.cases["MODES"] and [x.name for x in r.statics] == ["ST", "WIND", "C1"]
    assert [x.name for x in r.modal] == ["MODES", "FV", "TH", "HA", "RS"]
    assert all(r.modes_of(n) is r["MODES"] for n in ("FV", "TH", "HA", "RS"))
    with pytest.raises(KeyError, match="no result named 'NOPE'"):
        r["NOPE"]
    # a combination is the factored sum of its cases (linear statics)
    np.testing.assert_allclose(r["C1"].u, 1.35 * r["ST"].u + 1.5 * r["WIND"].u, rtol=1e-12, atol=1e-15)
    assert r.cases_asked is None and r.soundness.rigid == [] and r.soundness.condition > 1
    assert repr(r) == ("<Results of a model: ST (static), WIND (static), C1 (static), MODES (modes), FV (free), "
                       f"TH (history), HA (harmonic), RS (spectrum); ok={r.ok}>")


def test_the_solves_notes_are_notes_not_model_warnings(mixed):
    r = solve(mixed)
    asked = [n for n in r.notes if "asks for 40 modes" in n.text]
    assert len(asked) == 1 and isinstance(asked[0], Note) and asked[0].kind == "warning"
    assert str(asked[0]).startswith("mixed.deck:10:1: warning: case MODES asks for 40 modes")
    assert not any("asks for 40 modes" in str(w) for w in mixed.warnings)
    assert r.warnings == [str(w) for w in [*mixed.warnings, *r.notes]]


def test_a_free_structures_note_is_in_the_soundness_not_the_model():
    deck = MIXED.split("support N0 fixed")[0] + "case MODES modes { count = 8 }\n"
    m = read_text(deck)
    r = solve(m)
    assert len(r.soundness.rigid) == 6 and r.soundness.notes[0].kind == "note"
    assert r.notes[0] is r.soundness.notes[0] and "rigid-body modes at 0 Hz" in r.notes[0].text
    assert m.warnings == read_text(deck).warnings


def test_the_self_checks_are_those_of_each_result(mixed):
    from fem.checks import modal_checks, static_ok

    r = solve(mixed)
    for x in r.statics:
        assert r.checks.cases[x.name] == x.checks(mixed.coords)
        assert r.checks.passed[x.name] == static_ok(x.checks(mixed.coords))
    for x in r.modal:
        assert r.checks.cases[x.name] == modal_checks(x)
    assert r.checks.mass_pass and r.ok == r.checks.ok
    np.testing.assert_allclose(r.assembled_mass, mixed.total_mass(), rtol=1e-10)


def test_asking_for_cases_solves_them_and_what_they_need(mixed):
    r = solve(mixed, ["HA", "C1"])
    assert list(r.cases) == ["ST", "WIND", "C1", "MODES", "HA"]
    assert r.cases_asked == {"asked": ["HA", "C1"], "needed": ["ST", "WIND", "MODES"]}
    assert [c.name for c in mixed.cases] == ["ST", "WIND", "MODES", "FV", "TH", "HA", "RS"]   # untouched
    with pytest.raises(DeckError, match="--case NOPE: the deck has no case or combination of that name"):
        solve(mixed, ["NOPE"])


def test_a_case_built_on_a_missing_case_is_refused_in_words():
    # cases built in Python are not checked by the reader: the solve names what is missing
    from dataclasses import replace

    from fem import ModelError

    model = read_deck(Path(__file__).resolve().parents[1] / "decks" / "mast.deck")
    release = next(c for c in model.cases if c.name == "RELEASE")
    for wrong, said in ((replace(release, modes="MODSE"), r"case RELEASE: 'MODSE' is not a modes case of the "
                         r"model; its modes cases: MODES"),
                        (replace(release, start="WIND"), r"case RELEASE: start 'WIND' is not a static case")):
        cases = [c if c.name != "RELEASE" else wrong for c in model.cases]
        with pytest.raises(ModelError, match=said):
            solve(replace(model, cases=cases))
