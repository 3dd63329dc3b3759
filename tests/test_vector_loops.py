"""Loops run at once over their range (fem/deck/vector_loops.py) against the same loops run pass
by pass and against the reference reading (lark for every statement, loops pass by pass): the
same model, every array and every note, or the same error (message, file, line, column, hint),
on the example decks, on every deck text of the tests and on generated loop decks with small
mutations. Source of truth: our own evaluator pass by pass; the check is equality to the last
bit."""

from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest
from same import assert_same as _same
from test_fast_reader import _TEXTS, _mutated, _outcome, _same_outcome

import fem
from fem.deck import fast_lines
from fem.deck.statements import Statements
from fem.deck.vector_loops import pass_by_pass

ROOT = Path(__file__).resolve().parents[1]


def _three(read) -> str:
    """Read at once, pass by pass and by the reference; assert the three agree; the kind."""
    fast = _outcome(read)
    with pass_by_pass():
        slow = _outcome(read)
    with fast_lines.lark_only():
        ref = _outcome(read)
    for other in (slow, ref):
        _same_outcome(fast, other)
    return fast[0]


def _text(text: str, folder=".") -> str:
    return _three(lambda: fem.read_text(text, folder=folder))


HEAD = """title "loops"
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
let h = 2.5 m
let n = 3
"""

_VALUES = ["i*0.5 m", "(i - 3) * 2 m / 3", "-i * 0.1 m + i*i * 2 cm", "(i^2)*0.01 m - 3 mm", "2^i * 1 mm",
           "sqrt(i+1) * 1 m", "abs(i - 3) * 1.5 m", "i * h", "h + i * 1 ft", "0", "i * 0", "0 * i * 1 m",
           "(i - i) * 1 m", "i / n * 1 m", "1 m * i / 1", "- (i * 2 mm)", "+i * 1 m", "n * h - i * 1 m",
           "i^2 * 1 mm", "i^0.5 * 1 m", "(i - 2)^3 * 1 cm"]
_BAD = ["1 m + i", "i + 1 m", "i * 2 kg", "1 m / i", "i * 1e300 m * 1e10", "i * 1e-320 * 1e-10 m", "1e9 m * (i + 2)",
        "(i * 1 m)^0.5", "(i - 2)^0.5 * 1 m", "i^(-1) * 1 m", "(i * 1 m)^13", "i * q", "sin(i) * 1 m", "i kg",
        "i * 1.5", "(i * 1 m)^2 / 1 m"]
_INDICES = ["i", "i + 1", "2*i", "i, 2", "n - i", "i, i", "i - 1"]


def _loop_body(rng, bad: bool) -> list[str]:
    """Nodes N along x, each with a node Q beside it and a member between them, supports and masses."""
    pick = lambda: rng.choice(_BAD if bad and rng.random() < 0.3 else _VALUES)     # noqa: E731
    idx = rng.choice(_INDICES[:4] if not bad else _INDICES)
    body = [f"node N[{idx}] = (i * 3 m, {pick()}, {pick()})"]
    if rng.random() < 0.8:
        body.append(f"node Q[{idx}] = (i * 3 m + 1 m, {pick()}, h)")
        body.append(f"member M[{idx}] : N[{idx}] -> Q[{idx}] {rng.choice(['beam', 'truss'])} P S"
                    + (" roll = 10 deg" if rng.random() < 0.1 else ""))
    if rng.random() < 0.6:
        body.append(rng.choice([f"support N[{idx}] fixed", f"support N[{idx}] (ux, uy)", f"support N[{idx}] pinned",
                                "support N* (uz)"]))
    if rng.random() < 0.5:
        mass = rng.choice(["i * 2 kg + 1 kg", "5 kg", "(i + 1) * 0.1 t", "i * 3 lb"] + (["(i - 2) * 1 kg"] if bad else []))
        body.append(f"mass {rng.choice('NQ')}[{idx}] = {mass}")
    if bad and rng.random() < 0.1:
        body.append("let z = i * 1 m")
    rng.shuffle(body) if rng.random() < 0.3 else None
    return body


def _loop_deck(rng, bad: bool = False) -> str:
    lines = [HEAD.strip()]
    if rng.random() < 0.2:
        lines.insert(1, "assume length in mm")
    lo = rng.choice([0, 0, 1, 3])
    hi = lo + rng.choice([0, 1, 4, 7]) - (1 if bad and rng.random() < 0.1 else 0)
    body = _loop_body(rng, bad)
    sep = rng.choice(["\n  ", " ", "\n"])
    if rng.random() < 0.2:          # nested: the outer counter a parameter of the inner loop
        body = [b.replace("N[", "N[j, ").replace("Q[", "Q[j, ").replace("M[", "M[j, ").replace("3 m", "3 m + j * 50 m")
                for b in body]
        lines.append(f"for j in 0..2 {{\n for i in {lo}..{hi} {{{sep}{sep.join(body)}\n }}\n}}")
    else:
        lines.append(f"for i in {lo}..{hi} {{{sep}{sep.join(body)}\n}}")
    if bad and rng.random() < 0.3:
        lines.append("node N99 = (0, 0, 9 m)" if rng.random() < 0.5 else "node N0 = (0, 0, 9 m)")
    lines.append("case MODES modes { count = 2 }")
    return "\n".join(lines) + "\n"


def test_generated_loop_decks_read_the_same():
    rng = random.Random(2026)
    kinds = [_text(_loop_deck(rng)) for _ in range(120)]
    assert kinds.count("model") > 60          # the generator writes decks that read


def test_loop_decks_with_mistakes_read_the_same():
    rng = random.Random(17)
    kinds = [_text(_loop_deck(rng, bad=True)) for _ in range(150)]
    assert 20 < kinds.count("error") < 140    # both outcomes are exercised


def test_mutated_loop_decks_read_the_same():
    rng = random.Random(5)
    kinds = [_text(_mutated(rng, _loop_deck(rng))) for _ in range(150)]
    assert 15 < kinds.count("error") < 140


@pytest.mark.parametrize("deck", sorted(p.relative_to(ROOT).as_posix() for p in
                                        [*ROOT.glob("decks/*.deck"), *ROOT.glob("tests/decks/*.deck")]
                                        if "for " in p.read_text()))
def test_example_decks_with_loops_read_the_same(deck):
    assert _three(lambda: fem.read_deck(ROOT / deck)) == "model"


def test_every_deck_the_tests_write_with_a_loop_reads_the_same(tmp_path):
    texts = [t for t in _TEXTS if "for " in t]
    assert len(texts) > 5
    for text in texts:
        _text(text, tmp_path)


def test_common_loops_are_read_at_once(monkeypatch):
    """The statements of a loop of the common kind do not run one by one (a vectorised reading
    that always gave up would pass the tests above)."""
    ran = []
    one = Statements.statement
    monkeypatch.setattr(Statements, "statement", lambda self, s: (ran.append(s.data), one(self, s))[1])
    text = HEAD + ("for i in 0..99 {\n  node N[i] = (i * 0.5 m, (i - 50)^2 * 1 mm, h)\n"
                   "  member M[i] : N[i] -> N[i+1] beam P S\n  mass N[i] = (i + 1) * 2 kg\n}\n"
                   "node N100 = (50 m, 2.5 m, 2.5 m)\nfor i in 0..3 { support N[i*33] fixed }\n")
    model = fem.read_text(text)
    assert "node" not in ran and "member" not in ran and "support" not in ran and ran.count("loop") == 2
    with pass_by_pass():
        slow = fem.read_text(text)
    _same(model, slow)
    assert model.node_names[:3] == ["N0", "N1", "N2"] and len(model.node_names) == 101
    assert model.coords[7].tolist() == [3.5, (7 - 50) ** 2 * 1e-3, 2.5]       # the values as written
    ran.clear()
    with pass_by_pass():
        fem.read_text(text)
    assert ran.count("node") == 100 and ran.count("support") == 4      # (node N100 is a quick line)


def test_a_nested_loop_reads_its_inner_loops_at_once_in_the_order_of_the_passes():
    text = HEAD + ("for j in 0..2 {\n for i in 0..3 {\n  node A[i, j] = (i * 1 m, j * 1 m, 0)\n"
                   "  node B[i, j] = (i * 1 m, j * 1 m, 1 m)\n  member M[i, j] : A[i, j] -> B[i, j] truss P S\n }\n}\n"
                   "support A* fixed\n")
    model = fem.read_text(text)
    assert model.node_names[:4] == ["A0_0", "B0_0", "A1_0", "B1_0"] and model.node_names[8] == "A0_1"
    assert np.array_equal(model.coords[9], [0.0, 1.0, 1.0])
    assert _text(text) == "model"
