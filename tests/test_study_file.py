"""The study file and the variants it makes: parsing, located errors, grids, seeded draws."""

import math

import numpy as np
import pytest

from fem.errors import DeckError
from fem.study.spec import read_study_text
from fem.study.variants import draw_values, variants

GOOD = """\
# a study of our own
study "bay"
deck "rack.deck"
cases MODES, PUMP
vary bay from 5 m to 6 m step 0.25 m
vary tier in (4 m, 4.5 m)
track 3 modes of MODES against previous
shapes at "U*_0", "L2_*"
peak drift = PUMP displacement U5_0 y
workers 3
scheduler "127.0.0.1:8786"
"""


def test_a_study_file_reads():
    s = read_study_text(GOOD, folder="decks")
    assert s.title == "bay" and s.deck.name == "rack.deck" and s.cases == ("MODES", "PUMP")
    assert s.sweeps[0].values == ("5 m", "5.25 m", "5.5 m", "5.75 m", "6 m")
    assert s.sweeps[1].values == ("4 m", "4.5 m") and s.sweeps[1].unit == "m"
    assert (s.track, s.n_track, s.against, s.workers) == ("MODES", 3, "previous", 3)
    assert s.shapes_at == ("U*_0", "L2_*")
    assert s.peaks[0].name == "drift" and s.peaks[0].unit == "m"
    assert s.scheduler == "tcp://127.0.0.1:8786"


def test_a_grid_runs_the_last_sweep_fastest_and_tracks_from_neighbours():
    s = read_study_text(GOOD, folder="decks")
    vs = variants(s)
    assert len(vs) == 10
    assert [v.let for v in vs[:3]] == [{"bay": "5 m", "tier": "4 m"}, {"bay": "5 m", "tier": "4.5 m"},
                                       {"bay": "5.25 m", "tier": "4 m"}]
    # tier steps back to the row's first point; a row's first point steps back in bay
    assert [v.parent for v in vs[:4]] == [None, 0, 0, 2]


def test_ranges_by_points_read_back_to_the_same_numbers():
    s = read_study_text('deck "a.deck"\nvary k from 1 kN/mm to 2 kN/mm points 4\n')
    sw = s.sweeps[0]
    assert sw.unit == "kN/mm" and sw.numbers[1] == 1 + 1 / 3
    assert float(sw.values[1].split()[0]) == sw.numbers[1]      # repr: the float itself, not a rounding


@pytest.mark.parametrize("text, line, column, words", [
    ('deck "a.deck"\nvary h in (2 m, 3 x)\n', 2, 19, "unknown unit 'x'"),
    ('deck "a.deck"\nvary h from 2 m to 3 mm points 3\n', 2, 20, "one unit"),
    ('deck "a.deck"\nvary h in (2 m)\nvary h in (3 m)\n', 3, 6, "varied twice"),
    ('deck "a.deck"\nvarry h in (2 m)\n', 2, 1, "unexpected"),
    ('deck "a.deck"\ndraw m gauss(1 t, 0.1 t)\ndraws 3\n', 2, 8, "unknown distribution 'gauss'"),
    ('deck "a.deck"\ndraw m normal(1 t, -0.1 t)\ndraws 3\n', 2, 20, "standard deviation"),
    ('deck "a.deck"\npeak QUAKE velocity N1 y\n', 2, 12, "unknown quantity"),
    ('deck "a.deck"\ntrack 2 modes of MODES against first\n', 2, 32, "previous or base"),
    ('deck "a.deck"\ndraw m normal(1 t, 0.1 t)\n', 2, 15, "not how many"),
], ids=["unit", "mixed-units", "twice", "statement", "distribution", "negative-sd", "quantity", "against",
        "no-draws"])
def test_mistakes_are_located(text, line, column, words):
    with pytest.raises(DeckError, match=words) as err:
        read_study_text(text, "s.study")
    loc = err.value.location
    assert (loc.file, loc.line, loc.column) == ("s.study", line, column)


def test_a_study_without_a_deck_is_refused():
    with pytest.raises(DeckError, match="names no deck"):
        read_study_text('vary h in (2 m)\n')


def test_draws_follow_their_distributions_and_their_seed():
    """Sample moments against the stated ones. Tolerance: 5 standard errors of the sample mean
    (sd / sqrt(n)) and of the sample sd (about sd / sqrt(2 n) for a normal; 5x that for the
    skewed lognormal), so a correct sampler fails about once in a million runs."""
    n = 20000
    s = read_study_text(f'deck "a.deck"\ndraw a normal(10 kN, 2 kN)\ndraw b uniform(1 m, 3 m)\n'
                        f'draw c lognormal(2.5 t, 0.5 t)\ndraws {n} seed 11\n')
    x = draw_values(s)
    assert x.shape == (n, 3)
    se = 1 / math.sqrt(n)
    # normal(mean, sd)
    assert abs(x[:, 0].mean() - 10) < 5 * 2 * se and abs(x[:, 0].std() - 2) < 5 * 2 * se / math.sqrt(2)
    # uniform(low, high): mean (a + b)/2, sd (b - a)/sqrt(12) (any probability text)
    assert abs(x[:, 1].mean() - 2) < 5 * (2 / math.sqrt(12)) * se and x[:, 1].min() >= 1 and x[:, 1].max() < 3
    assert abs(x[:, 1].std() - 2 / math.sqrt(12)) < 5 * se
    # lognormal given by its own mean and sd (the moments of the lognormal, from memory)
    assert abs(x[:, 2].mean() - 2.5) < 5 * 0.5 * se and abs(x[:, 2].std() - 0.5) < 25 * 0.5 * se
    assert (x[:, 2] > 0).all()
    np.testing.assert_array_equal(x, draw_values(s))                       # the seed makes them again
    vs = variants(read_study_text('deck "a.deck"\nvary h in (1 m, 2 m)\ndraw a normal(1 kN, 0.1 kN)\n'
                                  'draws 3 seed 2\n'))
    assert [(v.point, v.draw, v.parent) for v in vs] == [(0, 0, None), (0, 1, 0), (0, 2, 0), (0, 3, 0),
                                                         (1, 0, 0), (1, 1, 4), (1, 2, 4), (1, 3, 4)]
    assert vs[1].let["a"] == vs[5].let["a"] and "a" not in vs[0].let      # nominal: the deck's own value
