"""Layout of the result files against docs/results.md: order of cases, the missing-mass rule."""

import csv
import json

import numpy as np

from fem.deck.reader import read_text
from fem.run import _write, solve_all

# cases written deliberately out of the documented order
MIXED = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..3 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N3 = 200 kg
case RS spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s) }
case HA harmonic { force N3 = (1 kN, 0, 0), from = 1 Hz, to = 5 Hz, points = 5,
                   damping = 2 percent }
case TH history { force N3 = (1 kN, 0, 0), time = halfsine(0.3 s), duration = 1 s, step = 0.01 s }
case ST1 static { force N3 = (1 kN, 0, 0) }
case MODES modes { count = 3 }
case FV free { start = ST1, duration = 1 s, step = 0.01 s }
combo C1 = 2*ST1
case ST2 static { force N3 = (0, 1 kN, 0) }
"""


def test_cases_are_written_in_the_documented_order(tmp_path):
    # docs/results.md: results.json groups static, combinations, modes, free and history (as in
    # the deck), harmonic, spectrum; the peak tables: static, combinations, spectrum, then the
    # free, history and harmonic envelopes as in the deck
    m = read_text(MIXED)
    doc = _write(m, *solve_all(m), tmp_path)
    assert [c["name"] for c in doc["cases"]] == ["ST1", "ST2", "C1", "MODES", "TH", "FV", "HA", "RS"]
    assert json.loads((tmp_path / "results.json").read_text())["cases"][0]["name"] == "ST1"
    with (tmp_path / "displacements.csv").open() as fh:
        order = list(dict.fromkeys(row["case"] for row in csv.DictReader(fh)))
    assert order == ["ST1", "ST2", "C1", "RS", "HA", "TH", "FV"]
