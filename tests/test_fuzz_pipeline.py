"""Bounded pipeline fuzz (tools/fuzz_pipeline.py runs the long version): small valid decks,
mutated semantically, run end to end without pictures; each outcome is a finished run with
finite, strict results or a QuaverError with a message and no results folder left behind."""

import random
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parents[1] / "tools"))
import fuzz_pipeline  # noqa: E402


def test_base_decks_run_clean(tmp_path):
    # the unmutated bases must pass, or every mutation result would mean nothing
    assert fuzz_pipeline.check(fuzz_pipeline.lean_frame(), fuzz_pipeline.TABLES, tmp_path / "lean",
                               report=False) is None


@pytest.mark.parametrize("seed", range(10))
def test_mutated_decks(tmp_path, seed):
    # report and plots left out here (most of a small run's time); the long run draws them
    rng = random.Random(seed)
    _, text, tables, done = fuzz_pipeline.mutated(rng, rng.randint(1, 3), {"lean": fuzz_pipeline.lean_frame()})
    why = fuzz_pipeline.check(text, tables, tmp_path, report=False)
    assert why is None or fuzz_pipeline.known(why), f"{done}: {why}"
