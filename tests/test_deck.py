"""Deck reader: units, generators, patterns and located error messages."""

import math
from pathlib import Path

import numpy as np
import pytest

from fem.cli import main
from fem.deck.reader import read_deck, read_text
from fem.errors import DeckError

HEAD = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
"""


def test_units_convert_to_si():
    # Conversion factors: NIST SP 811 (2008), Appendix B (1 in = 0.0254 m exactly, 1 lbf = 4.4482216152605 N).
    m = read_text(HEAD + """
let a = 12 in
node N1 = (0, 0, 0)
node N2 = (a, 2 ft, 250 mm)
member M : N1 -> N2 beam P S
case C static { force N2 = (1 kip, 0, 0) ; line M = (0, 0, -2 kN/m) }
""")
    np.testing.assert_allclose(m.coords[1], [0.3048, 0.6096, 0.25], rtol=1e-15)
    np.testing.assert_allclose(m.cases[0].loads[0].vector, [4448.2216152605, 0, 0])
    np.testing.assert_allclose(m.cases[0].loads[1].vector, [0, 0, -2000.0])
    assert math.isclose(m.G[0], 200e9 / 2.6)


def test_generators_patterns_and_mass():
    m = read_text(HEAD + """
for i in 0..3 { node N[i] = (i*2 m, 0, 0) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
support N3 (uy, uz)
mass N3 = 1.5 t inertia = (10 kg*m^2, 0, 0)
""")
    assert m.node_names == ["N0", "N1", "N2", "N3"]
    assert m.restraint[0].all() and m.restraint[3].tolist() == [False, True, True, False, False, False]
    # total mass = rho A L + point mass; A of NPS 6 Sch 40 from reference-values.md section 9
    a = math.pi * (0.1683**2 - (0.1683 - 2 * 0.00711) ** 2) / 4
    assert math.isclose(m.total_mass(), 7850 * a * 6 + 1500, rel_tol=1e-12)


def test_combination_factors():
    m = read_text(HEAD + """
node A = (0, 0, 0)
node B = (1 m, 0, 0)
member M : A -> B beam P S
case D static { gravity = (0, 0, -9.81 m/s^2) }
case L static { force B = (0, 0, -1 kN) }
combo U = 1.35*D + 1.5*L - 0.5*(D + L)
""")
    assert m.combinations[0].factors == pytest.approx({"D": 0.85, "L": 1.0})


def test_assume_allows_bare_numbers():
    m = read_text(HEAD + "assume length in mm\nnode A = (0, 0, 0)\nnode B = (1000, 0, 0)\n")
    assert m.coords[1, 0] == pytest.approx(1.0)


BROKEN = [
    ("node A = (0, 0, 0)\nnode B = (1 m, 0, 0)\nmember M : A -> C beam P S\n", 3, "node 'C' is not defined"),
    ("node A = (1 kN, 0, 0)\n", 1, "needs a length, but a force was given"),
    ("node A = (1, 0, 0)\n", 1, "bare number"),
    ("node A = (0, 0, 0)\nnode A = (1 m, 0, 0)\n", 2, "defined twice"),
    ("node A = (0, 0 0)\n", 1, "unexpected"),
    ("let x = 3 furlong\n", 1, "unknown unit .furlong."),
    ("node A = (0, 0, 0)\nnode B = (1 m, 0, 0)\nmember M : A -> B beam Q S\n", 3, "section 'Q'"),
    ("node Alpha1 = (0, 0, 0)\nsupport Alpha2 fixed\n", 2, "did you mean 'Alpha1'"),
    ("node A = (0, 0, 0)\nsupport A clamped\n", 2, "'fixed', 'pinned'"),
    ("material T { E = 1 GPa }\n", 1, "needs G or nu"),
    ("section X = pipe(od = 100 mm, wall = 60 mm)\n", 1, "wall"),
    ("node A = (0, 0, 0)\nnode B = (0, 0, 0)\nmember M : A -> B beam P S\n", 3, "zero length"),
    ("let y = sqrt(2 m)\n", 1, "sqrt"),
]


@pytest.mark.parametrize("body,line,text", BROKEN, ids=[b[2][:20] for b in BROKEN])
def test_errors_are_located(body, line, text):
    head_lines = HEAD.count("\n")
    with pytest.raises(DeckError, match=text) as info:
        read_text(HEAD + body)
    assert info.value.location is not None
    assert info.value.location.line == head_lines + line
    assert "^" in str(info.value)     # caret under the column


def test_include_rules(tmp_path: Path):
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "mat.deck").write_text(HEAD)
    (tmp_path / "top.deck").write_text('include "sub/mat.deck"\nnode A = (0, 0, 0)\n')
    assert read_deck(tmp_path / "top.deck").n_nodes == 1
    (tmp_path / "loop.deck").write_text('include "loop.deck"\n')
    with pytest.raises(DeckError, match="includes itself"):
        read_deck(tmp_path / "loop.deck")
    (tmp_path / "out.deck").write_text('include "../elsewhere.deck"\n')
    with pytest.raises(DeckError, match="outside"):
        read_deck(tmp_path / "out.deck")


def test_cli_check_exit_codes(tmp_path: Path, capsys):
    deck = Path(__file__).parents[1] / "decks" / "rack.deck"
    assert main(["check", str(deck)]) == 0
    assert "qualified engineer" in capsys.readouterr().out
    bad = tmp_path / "bad.deck"
    bad.write_text("node A = (1 kN, 0, 0)\n")
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "bad.deck:1:" in err and "Traceback" not in err


def test_grammar_knows_every_unit():
    from fem.deck.reader import read_text as rt
    from fem.deck.units import UNITS
    for sym in UNITS:
        rt(f"let x = 2 {sym}\n")          # every table unit lexes as part of a quantity


def test_unit_followed_by_operator_and_name():
    # '5 m/n' divides 5 m by the parameter n; '2 m*cos(a)' multiplies (units are known symbols)
    m = read_text(HEAD + "let n = 4\nlet a = 60 deg\nnode A = (5 m/n, 2 m*cos(a), 0)\n")
    np.testing.assert_allclose(m.coords[0], [1.25, 1.0, 0.0], rtol=1e-15)


def test_include_refuses_absolute_paths_and_links_outside(tmp_path: Path):
    outside = tmp_path / "outside.deck"
    outside.write_text(HEAD)
    top = tmp_path / "proj"
    top.mkdir()
    (top / "abs.deck").write_text(f'include "{outside}"\n')
    with pytest.raises(DeckError, match="outside"):
        read_deck(top / "abs.deck")
    (top / "link.deck").symlink_to(outside)
    (top / "via_link.deck").write_text('include "link.deck"\n')
    with pytest.raises(DeckError, match="outside"):
        read_deck(top / "via_link.deck")


def test_readme_sketch_reads():
    # the deck sketch in README.md stays a valid deck
    from pathlib import Path

    from fem.deck.reader import read_text
    text = (Path(__file__).parents[1] / "README.md").read_text()
    block = text.split("## The deck language (sketch)")[1].split("```")[1]
    m = read_text(block)
    assert m.n_nodes == 10 and m.n_members == 5 and [c.name for c in m.combinations] == ["ULS"]
