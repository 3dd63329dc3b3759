"""Bounded fuzzing of the deck reader (tools/fuzz_deck.py runs the long version): every
mutated demo deck and token soup gives either a model or the one deck error type with a
location inside the file, never another exception."""

import sys
from pathlib import Path

from hypothesis import given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).parents[1] / "tools"))
import fuzz_deck  # noqa: E402


def test_mutated_demo_decks():
    bad = fuzz_deck.run(400, seed=11)
    assert bad == [], bad[:3]


@settings(max_examples=150, deadline=None)
@given(st.text(alphabet=st.sampled_from(list("node member ( ) { } = , : -> 0 1 2.5 m kN A B [ ] * # \" \n")),
               max_size=120))
def test_random_text(text):
    assert fuzz_deck.check(text, Path(".")) is None


@settings(max_examples=100, deadline=None)
@given(st.text(max_size=200))
def test_arbitrary_unicode(text):
    assert fuzz_deck.check(text, Path(".")) is None


def test_huge_section_dimensions_are_a_deck_error():
    # found by tools/fuzz_deck.py: d**3 overflowed inside the section formulas
    text = ("material S { E = 200 GPa, nu = 0.3 }\n"
            "section X = ishape(d = 1e308 mm, bf = 300 mm, tf = 19 mm, tw = 11 mm)\n")
    assert fuzz_deck.check(text, Path(".")) is None
    import pytest

    from fem.deck.reader import read_text
    from fem.errors import DeckError
    with pytest.raises(DeckError, match="section X"):
        read_text(text)
