"""The quick line reader (fem/deck/fast_lines.py) against the reference, lark reading every
statement (grammar/deck.lark): the same model, every array and every note, or the same error
(message, file, line, column, hint), on the example decks, on every deck text the tests write
and on generated decks with small mutations. Source of truth: the grammar file and our own
evaluator; no outside values are involved, the check is equality to the last bit."""

from __future__ import annotations

import ast
import random
from pathlib import Path

import numpy as np
import pytest
from same import assert_same as _same

import fem
from fem.deck import fast_lines
from fem.errors import DeckError

ROOT = Path(__file__).resolve().parents[1]


def _outcome(read):
    try:
        return "model", read()
    except DeckError as exc:
        loc = exc.location
        return "error", (str(exc), exc.message, exc.hint,
                         None if loc is None else (loc.file, loc.line, loc.column, loc.source_line))


def _same_outcome(got, ref):
    """Two `_outcome`s agree: the same error to its location and hint, or models equal to the bit."""
    assert got[0] == ref[0], (got, ref)
    if got[0] == "error":
        assert got[1] == ref[1]
    else:
        _same(got[1], ref[1])


def _agree(read):
    """Read with the quick reader and with lark alone; assert the outcomes agree; the kind."""
    quick = _outcome(read)
    with fast_lines.lark_only():
        ref = _outcome(read)
    _same_outcome(quick, ref)
    return quick[0]


def _text_agrees(text: str, folder) -> str:
    return _agree(lambda: fem.read_text(text, folder=folder))


# ---------- the example decks and the decks of the tests

@pytest.mark.parametrize("deck", sorted(p.relative_to(ROOT).as_posix() for p in
                                        [*ROOT.glob("decks/*.deck"), *ROOT.glob("tests/decks/*.deck")]))
def test_example_decks_read_the_same(deck):
    assert _agree(lambda: fem.read_deck(ROOT / deck)) == "model"


def _deck_texts():
    """Every string constant in the tests that reads like a deck (a node, member, support or mass
    statement at the start of a line): the decks the tests write."""
    out = {}
    for path in sorted((ROOT / "tests").glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.Constant) and isinstance(node.value, str) and "\n" in node.value and any(
                    line.lstrip().startswith(("node ", "member ", "support ", "mass ")) for line in node.value.splitlines()):
                out.setdefault(node.value, f"{path.name}:{node.lineno}")
    return out


_TEXTS = _deck_texts()


def test_the_tests_write_many_decks():
    assert len(_TEXTS) > 100        # the collection below is not silently empty


def test_every_deck_the_tests_write_reads_the_same(tmp_path):
    kinds = [_text_agrees(text, tmp_path) for text in _TEXTS]
    assert kinds.count("model") > 50          # most of them are whole decks that read


# ---------- the cut itself

FLAT = """title "flat"
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (-1.5e3 mm, +2 ft,\t.5 m)   # a comment
node C = (3 m, 0 m, 1e-1m)
member AB : A -> B beam P S
member BC: B->C truss P S
support A fixed
support B (ux, uz)
support C* pinned
mass C = 1.2 t
mass B* = 300 kg
case M modes { count = 2 }
"""


def test_the_hot_lines_are_read_quickly_and_lark_reads_the_rest():
    cut, quick = fast_lines.cut(FLAT)
    assert [line for _, line, _ in quick] == list(range(4, 14))
    assert len(cut) == len(FLAT) and cut.count("\n") == FLAT.count("\n")   # offsets, lines, columns kept
    assert cut.splitlines()[3].strip() == "" and "material" in cut and "case M" in cut
    assert _text_agrees(FLAT, ".") == "model"


@pytest.mark.parametrize("text", [
    FLAT.replace("mass C = 1.2 t\n", "mass C = 1.2 t\n* 2\n"),                 # a value continued on the next line
    FLAT.replace("member BC: B->C truss P S\n", "member BC: B->C truss P S\n  release i (rx)\n"),
    FLAT.replace("node C", "let k = 2 +\nnode C"),                              # a keyword read as a name
    FLAT.replace("node C", "for i in 1..2 {\nnode C").replace("member AB", "}\nmember AB"),   # inside a loop
    FLAT.replace("node B =", "node for ="),                                     # a keyword as a name
    FLAT.replace("node B =", "nodeB ="), FLAT.replace("support A fixed", "support A fixedx"),
    FLAT.replace("node A = (0, 0, 0)", "node A = (0, 0)"), FLAT.replace("1.2 t", "1.2 tt"),
    FLAT.replace("1.2 t", "1e400 t"), FLAT.replace("1.2 t", "1e-400 t"), FLAT.replace("1.2 t", "-1.2 t"),
    FLAT.replace("1.2 t", "1.2 m^13"), FLAT.replace("node C = (3 m", "node C = (3"),
    FLAT.replace("node C = (3 m", "node A = (3 m"), FLAT.replace("member BC", "member AB"),
    FLAT.replace("A -> B", "A -> Q"), FLAT.replace("support A fixed", "support Q fixed"),
    FLAT.replace("support A fixed", "support A (ux, ux)"), FLAT.replace("(ux, uz)", "(ux, wz)"),
    FLAT.replace("beam P S", "beam P T"), FLAT.replace("-1.5e3 mm", "1e12 m"),
    "assume length in mm\n" + FLAT.replace("(0, 0, 0)", "(10, 20, -0)"),
    FLAT.replace("node A = (0, 0, 0)", "node A = (0, 0, 0) node Z = (1 m, 1 m, 1 m)"),
    FLAT + "member CA : C -> A beam P S\n{",
])
def test_lines_that_belong_to_lark_read_the_same(text):
    _text_agrees(text, ".")


# ---------- generated decks with small mutations

_UNITS = {"m": 1, "mm": 1000, "cm": 100, "ft": 1 / 0.3048, "in": 1 / 0.0254, "km": 1e-3}


def _number(rng, x: float) -> str:
    forms = [f"{x:g}", f"{x:.3f}", f"{x:e}", f"{x:.2E}", repr(x)]
    s = rng.choice(forms)
    return s.lstrip("+") if not s.startswith("-") else s


def _literal(rng, metres: float) -> str:
    unit = rng.choice(list(_UNITS))
    text = _number(rng, metres * _UNITS[unit])
    if text.startswith("-") and rng.random() < 0.3:
        text = "- " + text[1:]
    return text + rng.choice(["", " ", "\t"]) + unit


def _generated(rng, n: int = 0) -> str:
    sp = lambda: rng.choice(["", " ", "  ", "\t"])          # noqa: E731
    n = n or rng.randint(3, 9)
    lines = ['title "generated"', "material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }",
             "section P = pipe(od = 168.3 mm, wall = 7.11 mm)"]
    if rng.random() < 0.2:
        lines.append("assume length in mm")
    for i in range(n):
        xyz = [rng.uniform(-20, 20) for _ in range(3)]
        xyz[0] += 3 * i
        vals = [_literal(rng, v) for v in xyz]
        if rng.random() < 0.1:
            vals[rng.randrange(3)] = "0"
        lines.append(f"{sp()}node N{i}{sp()}={sp()}({sp()}{(sp() + ',' + sp()).join(vals)}{sp()})"
                     + rng.choice(["", "  # a node", "\t#"]))
    for i in range(n - 1):
        lines.append(f"member M{i}{sp()}:{sp()}N{i}{sp()}->{sp()}N{i + 1} {rng.choice(['beam', 'truss'])} P S"
                     + rng.choice(["", " # m"]))
    lines.append(rng.choice(["support N0 fixed", "support N0 pinned", "support N* (ux,uy , uz)", "support N0(ux, uy, uz, rx, ry, rz)"]))
    for _ in range(rng.randint(0, 3)):
        lines.append(f"mass N{rng.randrange(n)} = {_number(rng, rng.uniform(0, 500))} {rng.choice(['kg', 't', 'lb'])}")
    if rng.random() < 0.3:
        lines.append("for i in 0..1 { mass N[i] = 5 kg }")
    lines.append("case MODES modes { count = 2 }")
    if rng.random() < 0.2:              # statements out of order (a member before its nodes)
        body = lines[3:-1]
        rng.shuffle(body)
        lines[3:-1] = body
    return "\n".join(lines) + rng.choice(["\n", "", "\r\n"])


_BITS = ["#", "*", "(", ")", ",", "-", "+", "e", "E", " ", "\t", "\n", "x", "m", "^", "[", "]", "{", "}", "=", ":",
         ".", "0", "9", "kg", "mm", "node ", "member ", "mass ", "support ", "release ", "\u00a0", "\r"]


def _mutated(rng, text: str) -> str:
    for _ in range(rng.randint(1, 3)):
        k = rng.randrange(len(text) + 1)
        how = rng.random()
        if how < 0.4:
            text = text[:k] + rng.choice(_BITS) + text[k:]
        elif how < 0.8:
            text = text[:k] + text[k + rng.randint(1, 3):]
        else:
            lines = text.split("\n")
            j = rng.randrange(len(lines))
            lines.insert(j, lines[rng.randrange(len(lines))])
            text = "\n".join(lines)
    return text


def test_generated_decks_read_the_same():
    rng = random.Random(20261204)
    kinds = [_text_agrees(_generated(rng), ".") for _ in range(100)]
    assert kinds.count("model") > 90       # the generator writes valid decks


def test_mutated_decks_read_the_same():
    rng = random.Random(17)
    kinds = [_text_agrees(_mutated(rng, _generated(rng)), ".") for _ in range(250)]
    assert 25 < kinds.count("error") < 245   # both outcomes are exercised


# ---------- long runs of quick lines, read together (fem/deck/fast_batch.py)

def test_long_generated_decks_read_the_same():
    rng = random.Random(1204)
    kinds = [_text_agrees(_generated(rng, rng.randint(12, 40)), ".") for _ in range(40)]
    assert kinds.count("model") > 35
    kinds = [_text_agrees(_mutated(rng, _generated(rng, rng.randint(12, 40))), ".") for _ in range(120)]
    assert 10 < kinds.count("error") < 115


@pytest.mark.parametrize("old, new", [
    ("node N5 = (", "node N2 = ("), ("member M7 :", "member M2 :"), ("member M7 :", "member N7 :"),
    ("node N5 = (", "assume length in mm\nnode N5 = ("), ("15 m,", "15,"), ("15 m,", "0,"), ("15 m,", "-0,"),
    ("15 m,", "-0 m,"), ("15 m,", "15 kg,"), ("15 m,", "15 mx,"), ("15 m,", "1e12 m,"), ("15 m,", "1e-400 m,"),
    ("15 m,", "1e308 km,"), ("15 m,", "1e-320 mm,"), ("15 m,", "- 15 ft,"), ("15 m,", "+15 in,"),
    ("15 m,", "15 m/s*s,"), ("15 m,", "30 deg,"), ("N9 -> N10", "N9 -> N99"), ("beam P S", "beam P Q"),
])
def test_long_runs_with_a_slip_read_the_same(old, new):
    lines = [FLAT.split("node A")[0].rstrip("\n")]
    lines += [f"node N{i} = ({3 * i} m, {i % 4}.5 m, 0)" for i in range(30)]
    lines += [f"member M{i} : N{i} -> N{i + 1} beam P S" for i in range(29)]
    lines += ["support N0 fixed", "mass N3 = 2 t", "case M modes { count = 2 }"]
    text = "\n".join(lines) + "\n"
    assert old in text
    _text_agrees(text.replace(old, new, 1), ".")
    if "assume" in new:
        _text_agrees(text.replace(old, new, 1).replace("15 m,", "15,"), ".")


def test_long_runs_are_read_together(monkeypatch):
    """Node and member lines of a long run do not go through the line reader one by one."""
    ran = []
    one = fast_lines.run
    monkeypatch.setattr(fast_lines, "run", lambda st, q, *a: (ran.append(q[1]), one(st, q, *a))[1])
    lines = [FLAT.split("node A")[0].rstrip("\n")] + [f"node N{i} = ({i} m, 0, 0)" for i in range(20)]
    lines += [f"member M{i} : N{i} -> N{i + 1} beam P S" for i in range(19)] + ["support N0 fixed"]
    text = "\n".join(lines) + "\n"
    model = fem.read_text(text)
    assert ran == [text.count("\n")] and model.coords[19].tolist() == [19.0, 0.0, 0.0] and len(model.conn) == 19


def test_solving_gives_the_same_numbers():
    """The quick reading's model solves to the same frequencies and shapes, to the last bit."""
    quick = fem.solve(fem.read_text(FLAT))["M"]
    with fast_lines.lark_only():
        ref = fem.solve(fem.read_text(FLAT))["M"]
    assert np.array_equal(quick.modes.freq, ref.modes.freq) and np.array_equal(quick.shapes, ref.shapes)


# ---------- loops: each expression compiled once (fem/deck/expressions.py) against the tree walk

_EXPRESSIONS = ["i*0.37 m + 2 ft", "(i^2)*0.01 m - 3 mm", "-(i/3) * 1 m", "i*1e-3 km + 0", "sqrt(i+1) * 1 m",
                "(i - 2) * 2 m / 3", "2^i * 1 mm", "abs(i - 3) * 1.5 m", "-i * 0.1 m + i*i * 2 cm"]


def _loop_deck(rng, unrolled: bool) -> str:
    exprs = [rng.choice(_EXPRESSIONS) for _ in range(3)]
    head = FLAT.split("node A")[0]
    if unrolled:
        body = [f"node N{i} = ({', '.join(e.replace('i', f'({i})') for e in exprs)})" for i in range(6)]
        body += [f"member M{i} : N{i} -> N{i + 1} beam P S" for i in range(5)]
    else:
        body = [f"for i in 0..5 {{ node N[i] = ({', '.join(exprs)}) }}",
                "for i in 0..4 { member M[i] : N[i] -> N[i+1] beam P S }"]
    return head + "\n".join(body) + "\nsupport N0 fixed\n"


def test_loops_give_the_values_of_the_same_statements_written_out():
    rng = random.Random(3)
    for _ in range(30):
        state = rng.getstate()
        looped = fem.read_text(_loop_deck(rng, False))
        rng.setstate(state)
        flat = fem.read_text(_loop_deck(rng, True))
        _same(looped.coords, flat.coords, "coords")
        assert looped.node_names == flat.node_names and np.array_equal(looped.conn, flat.conn)


def test_compiled_loop_expressions_are_worked_out_without_the_walk():
    """The closures compute sums, products, powers, signs, literals and counters themselves (a
    compiled expression that always fell back to the walk would pass the test above)."""
    from fem.deck.compiled import compiled
    from fem.deck.expressions import Evaluator
    from fem.deck.sources import Sources

    path = Path("x.deck").resolve()
    src = Sources(path)
    ev = Evaluator(src)
    for text in [e for e in _EXPRESSIONS if not e.startswith(("sqrt", "abs"))]:
        src.lines[path] = [f"let q = {text}"]
        tree = src.parse(f"let q = {text}\n", path).children[0].children[1]
        for k in (0, 1, 4):
            ev.count("i", k)
            with src.reading(path):
                expected = ev.walk(tree)
                fast = compiled(ev, tree)
            walk, ev.walk = ev.walk, None          # a call to the walk would fail
            try:
                with src.reading(path):
                    assert fast() == expected, text
            finally:
                ev.walk = walk


def test_included_files_read_the_same(tmp_path):
    """Quick lines in an included file are located in that file, as lark's statements are."""
    (tmp_path / "parts").mkdir()
    (tmp_path / "parts" / "legs.deck").write_text("node L1 = (0, 0, 0)\nnode L2 = (0 m, 0 m, 3 m)\n"
                                                  "member LEG : L1 -> L2 beam P S\nsupport L1 fixed\n"
                                                  "mass L2 = 2 t\nnode A = (9 m, 9 m, 9 m)\n")
    top = FLAT.replace("case M", 'include "parts/legs.deck"\ncase M')
    (tmp_path / "top.deck").write_text(top)
    assert _agree(lambda: fem.read_deck(tmp_path / "top.deck")) == "error"      # node A twice, located in the part
    (tmp_path / "parts" / "legs.deck").write_text("node L1 = (5 m, 5 m, 0)\nnode L2 = (5 m, 5 m, 3 m)\n"
                                                  "member LEG : L1 -> L2 beam P S\nsupport L1 fixed\n"
                                                  "mass L2 = 2 t\nnode Z = (1 km, 0, 0)\nmember LZ : L2 -> Z truss P S\n")
    assert _agree(lambda: fem.read_deck(tmp_path / "top.deck")) == "model"
