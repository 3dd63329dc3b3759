"""Errors and warnings that arise while solving one case point at that case in the deck."""

import pytest

from fem.deck.reader import read_text
from fem.errors import ModelError
from fem.run import solve_all

FRAME = """
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (2 m, 0, 3 m)
member U : A -> B beam P S
member V : B -> C beam P S
support A fixed
"""


def test_modes_case_error_carries_its_location():
    m = read_text(FRAME + "case M modes { fmax = 0.001 Hz }\n", "frame.deck")
    with pytest.raises(ModelError) as err:
        solve_all(m)
    text = str(err.value)
    assert text.startswith("frame.deck:10:1: case M: no mode lies at or below fmax")
    assert text.splitlines()[1].strip() == "case M modes { fmax = 0.001 Hz }"
    assert text.splitlines()[2].strip() == "^"


def test_more_modes_than_the_model_has_is_warned():
    # 3 nodes, one fixed: 12 free DOFs, all with mass (consistent mass), so 12 modes at most
    m = read_text(FRAME + "case M modes { count = 50 }\n", "frame.deck")
    _, modal = solve_all(m)
    assert len(modal[0].modes.omega) == 12
    assert any("frame.deck:10:1" in w and "asks for 50 modes" in w and "only 12" in w for w in m.warnings)
