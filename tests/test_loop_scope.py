"""Statements inside a `for` loop use the values of their own pass: a deck with loops reads
exactly as the same deck written out flat, pass by pass (our language's rule, docs/deck.md).

The reference for every check here is the flat deck itself, read by the same reader: the two
models must be equal to the last bit (the flat decks repeat the loop's arithmetic with the
loop's values written in), and so must the solved frequencies and displacements. A property
test (hypothesis) generates loop decks with their flat unrolling and compares them."""

import dataclasses
import re

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from fem.analysis.modal_case import solve_modes_case
from fem.analysis.static import solve_static
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.deck.statements import LOOP_STATEMENTS
from fem.errors import DeckError, Location

HEAD = """\
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 114.3 mm, wall = 6 mm)
node N0 = (0, 0, 0)
node N1 = (1.5 m, 0, 0)
node N2 = (3 m, 0, 0)
node N3 = (4.5 m, 0, 0)
node N4 = (6 m, 0, 0)
member M1 : N0 -> N1 beam P S
member M2 : N1 -> N2 beam P S
member M3 : N2 -> N3 beam P S
member M4 : N3 -> N4 beam P S
support N0 fixed
case D static { gravity = (0, 0, -g0) }
case E static { force N4 = (0, 2 kN, 0) }
case MODES modes { count = 6 }
let s = 1
let i = 9
"""
# after the loop, `i` is the outer parameter again (9), not the loop's last value
TAIL = "node Z = (i*1 m, 4 m, 0)\n"

_AT = re.compile(r"deck\.deck:\d+:\d+")


def _unlocated(text: str) -> str:
    return _AT.sub("@", text)


def same(a, b, where="model"):
    """Exact recursive comparison of two models (locations aside: the flat deck has more lines)."""
    if isinstance(a, Location) or isinstance(b, Location):
        return
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        np.testing.assert_array_equal(a, b, err_msg=where)     # NaN equals NaN here
    elif dataclasses.is_dataclass(a) and not isinstance(a, type):
        assert type(a) is type(b), where
        for f in dataclasses.fields(a):
            if f.name == "warnings":
                assert [_unlocated(str(w)) for w in a.warnings] == [_unlocated(str(w)) for w in b.warnings], where
            elif f.name != "source":
                same(getattr(a, f.name), getattr(b, f.name), f"{where}.{f.name}")
    elif isinstance(a, dict):
        assert isinstance(b, dict) and list(a) == list(b), f"{where}: {list(a)} != {list(b)}"
        for k in a:
            same(a[k], b[k], f"{where}[{k!r}]")
    elif isinstance(a, (list, tuple)):
        assert type(a) is type(b) and len(a) == len(b), f"{where}: {a!r} != {b!r}"
        for k, (x, y) in enumerate(zip(a, b)):
            same(x, y, f"{where}[{k}]")
    elif isinstance(a, float) and np.isnan(a):
        assert isinstance(b, float) and np.isnan(b), where
    else:
        assert a == b, f"{where}: {a!r} != {b!r}"


def read_both(loop: str, flat: str, folder="."):
    """Both decks read, or both refused with the same message (locations aside)."""
    outcome = []
    for text in (loop, flat):
        try:
            outcome.append(read_text(text, folder=folder))
        except DeckError as exc:
            outcome.append(_unlocated(exc.message + " | " + exc.hint))
    a, b = outcome
    if isinstance(a, str) or isinstance(b, str):
        assert a == b
        return None, None
    same(a, b)
    return a, b


# Each statement kind inside a loop, with the loop variable i (shadowing the outer `let i = 9`),
# a loop-local let k = i + s and the outer let s = 1, against the same statements written flat.
KINDS = [
    ("node", "for i in 1..3 { let k = i + s\n node Q[i] = (k*1 m, i*0.5 m, 2 m) }",
     "node Q1 = (2*1 m, 1*0.5 m, 2 m)\nnode Q2 = (3*1 m, 2*0.5 m, 2 m)\nnode Q3 = (4*1 m, 3*0.5 m, 2 m)"),
    ("member", "for i in 1..3 { let k = i + s\n member B[i] : N[i - 1] -> N[k] beam P S roll = k*10 deg "
               "carried_mass = i*2 kg/m release j (rz) }",
     "member B1 : N0 -> N2 beam P S roll = 2*10 deg carried_mass = 1*2 kg/m release j (rz)\n"
     "member B2 : N1 -> N3 beam P S roll = 3*10 deg carried_mass = 2*2 kg/m release j (rz)\n"
     "member B3 : N2 -> N4 beam P S roll = 4*10 deg carried_mass = 3*2 kg/m release j (rz)"),
    ("material and section", "for i in 1..2 { let k = i + s\n material T[i] { E = k*100 GPa, nu = 0.3, "
                             "density = i*1000 kg/m^3 }\n section R[i] = rect(b = k*10 mm, h = i*20 mm)\n"
                             " member B[i] : N[i] -> N[k + 1] beam R[i] T[k - 1] }",
     "material T1 { E = 2*100 GPa, nu = 0.3, density = 1*1000 kg/m^3 }\nsection R1 = rect(b = 2*10 mm, h = 1*20 mm)\n"
     "member B1 : N1 -> N3 beam R1 T1\n"
     "material T2 { E = 3*100 GPa, nu = 0.3, density = 2*1000 kg/m^3 }\nsection R2 = rect(b = 3*10 mm, h = 2*20 mm)\n"
     "member B2 : N2 -> N4 beam R2 T2"),
    ("support", "for i in 1..3 { let k = i + s\n support N[k - 1] (ux, uy)\n support N[i] (uz) }",
     "support N1 (ux, uy)\nsupport N1 (uz)\nsupport N2 (ux, uy)\nsupport N2 (uz)\nsupport N3 (ux, uy)\nsupport N3 (uz)"),
    ("spring", "for i in 1..3 { let k = i + s\n spring N[k] (ux = k*1e5 N/m, rz = i*2e4 N*m) }",
     "spring N2 (ux = 2*1e5 N/m, rz = 1*2e4 N*m)\nspring N3 (ux = 3*1e5 N/m, rz = 2*2e4 N*m)\n"
     "spring N4 (ux = 4*1e5 N/m, rz = 3*2e4 N*m)"),
    ("mass", "for i in 1..3 { let k = i + s\n let up = i\n mass N[up] = 100 kg inertia = (k*1 kg*m^2, 0, 0) }",
     "mass N1 = 100 kg inertia = (2*1 kg*m^2, 0, 0)\nmass N2 = 100 kg inertia = (3*1 kg*m^2, 0, 0)\n"
     "mass N3 = 100 kg inertia = (4*1 kg*m^2, 0, 0)"),
    ("group", "for i in 1..2 { let k = i + s\n group G[i] = N[k], N[i]\n mass G[i] = k*10 kg }",
     "group G1 = N2, N1\nmass G1 = 2*10 kg\ngroup G2 = N3, N2\nmass G2 = 3*10 kg"),
    ("static case", "for i in 1..3 { let k = i + s\n case C[i] static { force N[k] = (0, 0, -i*1 kN)\n"
                    " moment N[i] = (k*1 kN*m, 0, 0)\n line M[i] = local(0, 0, -k*1 kN/m)\n"
                    " gravity = (0, 0, -i*1 m/s^2) } }",
     "\n".join(f"case C{i} static {{ force N{i + 1} = (0, 0, -{i}*1 kN)\n moment N{i} = ({i + 1}*1 kN*m, 0, 0)\n"
               f" line M{i} = local(0, 0, -{i + 1}*1 kN/m)\n gravity = (0, 0, -{i}*1 m/s^2) }}" for i in (1, 2, 3))),
    ("combination", "for i in 1..3 { let k = i + s\n combo K[i] = k*D + i*0.5*E }",
     "combo K1 = 2*D + 1*0.5*E\ncombo K2 = 3*D + 2*0.5*E\ncombo K3 = 4*D + 3*0.5*E"),
    ("modes case", "for i in 1..2 { let k = i + s\n case MO[i] modes { count = k + i, reference = (i*1 m, 0, 0) } }",
     "case MO1 modes { count = 2 + 1, reference = (1*1 m, 0, 0) }\n"
     "case MO2 modes { count = 3 + 2, reference = (2*1 m, 0, 0) }"),
    ("free case", "for i in 1..2 { let k = i + s\n case F[i] free { displacement N[k] = (k*1 mm, 0, 0)\n"
                  " velocity N[i] = (0, i*0.1 m/s, 0)\n duration = k*0.5 s, step = 0.01 s, damping = i*1 percent\n"
                  " start = D } }",
     "\n".join(f"case F{i} free {{ displacement N{i + 1} = ({i + 1}*1 mm, 0, 0)\n velocity N{i} = (0, {i}*0.1 m/s, 0)\n"
               f" duration = {i + 1}*0.5 s, step = 0.01 s, damping = {i}*1 percent\n start = D }}" for i in (1, 2))),
    ("history case", "for i in 1..2 { let k = i + s\n case H[i] history { force N[k] = (0, 0, -i*1 kN) times T\n"
                     " time T = halfsine(k*0.05 s)\n ground = (i*0.1 gee, 0, 0) times T\n duration = 1 s, step = 0.01 s\n"
                     " rayleigh = (i*1 Hz, 2 percent, k*10 Hz, 2 percent) } }",
     "\n".join(f"case H{i} history {{ force N{i + 1} = (0, 0, -{i}*1 kN) times T\n time T = halfsine({i + 1}*0.05 s)\n"
               f" ground = ({i}*0.1 gee, 0, 0) times T\n duration = 1 s, step = 0.01 s\n"
               f" rayleigh = ({i}*1 Hz, 2 percent, {i + 1}*10 Hz, 2 percent) }}" for i in (1, 2))),
    ("harmonic case", "for i in 1..2 { let k = i + s\n case W[i] harmonic { force N[k] = (0, i*1 kN, 0)\n"
                      " from = i*1 Hz, to = k*10 Hz, points = k*10, damping = (i*1 percent, k*1 percent) } }",
     "\n".join(f"case W{i} harmonic {{ force N{i + 1} = (0, {i}*1 kN, 0)\n from = {i}*1 Hz, to = {i + 1}*10 Hz, "
               f"points = {i + 1}*10, damping = ({i}*1 percent, {i + 1}*1 percent) }}" for i in (1, 2))),
    ("spectrum case", "for i in 1..2 { let k = i + s\n case R[i] spectrum { curve = plateau(i*0.1 gee, 1.2, "
                      "k*0.1 s, 0.5 s, 2 s)\n damping = k*1 percent, directions = (1, i*0.3, 0) } }",
     "\n".join(f"case R{i} spectrum {{ curve = plateau({i}*0.1 gee, 1.2, {i + 1}*0.1 s, 0.5 s, 2 s)\n"
               f" damping = {i + 1}*1 percent, directions = (1, {i}*0.3, 0) }}" for i in (1, 2))),
    ("nested loops", "for i in 1..2 { let k = i + s\n for j in 0..1 { mass N[i + 2*j] = (k + j)*10 kg\n"
                     " support N[k + j] (rx) } }",
     "mass N1 = (2 + 0)*10 kg\nsupport N2 (rx)\nmass N3 = (2 + 1)*10 kg\nsupport N3 (rx)\n"
     "mass N2 = (3 + 0)*10 kg\nsupport N3 (rx)\nmass N4 = (3 + 1)*10 kg\nsupport N4 (rx)"),
]


@pytest.mark.parametrize("loop,flat", [k[1:] for k in KINDS], ids=[k[0] for k in KINDS])
def test_each_statement_kind_in_a_loop_reads_as_written_flat(loop, flat):
    a, b = read_both(HEAD + loop + "\n" + TAIL, HEAD + flat + "\n" + TAIL)
    assert a is not None, "both decks were refused"
    assert a.coords[a.node_names.index("Z"), 0] == 9.0      # the outer i, restored after the loop


def test_include_inside_a_loop_reads_the_pass_values(tmp_path):
    (tmp_path / "part.deck").write_text("mass N[k] = i*10 kg\nsupport N[i] (uz)\n")
    loop = HEAD + 'for i in 1..3 { let k = i + s\n include "part.deck" }\n' + TAIL
    flat = HEAD + "".join(f"mass N{i + 1} = {i}*10 kg\nsupport N{i} (uz)\n" for i in (1, 2, 3)) + TAIL
    a, _ = read_both(loop, flat, folder=tmp_path)
    assert a is not None


def test_masses_in_a_loop_land_on_their_own_nodes_and_give_their_own_modes():
    # `let up = i  mass N[up] = 100 kg` once put all 300 kg on N3. The loop and the flat deck
    # give the same frequencies (the same matrices, so equal to round-off: rtol 1e-12).
    loop = HEAD + "for i in 1..3 { let up = i\n mass N[up] = 100 kg }\n" + TAIL
    flat = HEAD + "mass N1 = 100 kg\nmass N2 = 100 kg\nmass N3 = 100 kg\n" + TAIL
    a, b = read_both(loop, flat)
    np.testing.assert_array_equal(a.point_mass[:5, 0], [0, 100, 100, 100, 0])
    fa = solve_modes_case(a, assemble(a), a.cases[2]).modes.freq
    fb = solve_modes_case(b, assemble(b), b.cases[2]).modes.freq
    np.testing.assert_allclose(fa, fb, rtol=1e-12)


def test_supports_springs_and_loads_in_a_loop_give_the_flat_static_answer():
    body = ("for i in 1..3 { let k = i + s\n support N[i] (uz)\n spring N[k] (uy = k*1e5 N/m)\n"
            " case C[i] static { force N[k] = (0, i*1 kN, -i*1 kN) } }\n")
    flat = "".join(f"support N{i} (uz)\nspring N{i + 1} (uy = {i + 1}*1e5 N/m)\n"
                   f"case C{i} static {{ force N{i + 1} = (0, {i}*1 kN, -{i}*1 kN) }}\n" for i in (1, 2, 3))
    a, b = read_both(HEAD + body + TAIL, HEAD + flat + TAIL)
    for c in ("C1", "C2", "C3"):
        ua = solve_static(a, assemble(a), next(x for x in a.cases if x.name == c)).u
        ub = solve_static(b, assemble(b), next(x for x in b.cases if x.name == c)).u
        np.testing.assert_allclose(ua, ub, rtol=1e-12, atol=0)
        assert np.abs(ua).max() > 0


def test_a_support_may_name_its_node_with_the_loop_variable():
    # once refused with "'i' is not defined; did you mean 'pi'?"
    m = read_text(HEAD + "for i in 1..2 { support N[i] fixed }\n")
    assert m.restraint[1:3].all() and not m.restraint[3:].any()


def test_a_loop_variable_shadowing_a_parameter_uses_the_loop_value():
    m = read_text(HEAD + "for i in 3..4 { mass N[i] = 5 kg\n spring N[i] (ux = 1e5 N/m) }\n" + TAIL)
    np.testing.assert_array_equal(m.point_mass[:5, 0], [0, 0, 0, 5, 5])
    np.testing.assert_array_equal(m.springs[:5, 0], [0, 0, 0, 1e5, 1e5])


def test_a_case_uses_the_parameters_in_force_where_it_is_written():
    with pytest.raises(DeckError, match="'w' is not defined") as info:
        read_text(HEAD + "case L static { force N2 = (0, 0, -w) }\nlet w = 3 kN\n")
    assert info.value.location.line == HEAD.count("\n") + 1


def test_an_index_out_of_the_nodes_is_located_at_its_statement_in_the_loop():
    with pytest.raises(DeckError, match="node 'N5' is not defined") as info:
        read_text(HEAD + "for i in 3..5 {\n mass N[i] = 5 kg }\n")
    assert (info.value.location.line, info.value.location.column) == (HEAD.count("\n") + 2, 7)


# ---------- the limit on statements executed in loops

def test_nested_loops_past_the_limit_are_refused_at_once():
    # two nested loops of a million passes once ran on without a word
    deck = "for i in 0..999999 {\n for j in 0..999999 { let x = i + j } }\n"
    with pytest.raises(DeckError, match=f"1,000,000 passes of 1 statement\\(s\\), and again on each pass of the "
                                        f"loop at deck.deck:1:1, taking the deck's loops past {LOOP_STATEMENTS:,} "
                                        "statements in all") as info:
        read_text(deck)
    assert (info.value.location.line, info.value.location.column) == (2, 2)
    assert "check the loop ranges" in info.value.hint


def test_the_limit_counts_every_loop_of_the_deck(monkeypatch):
    import fem.deck.statements as statements

    monkeypatch.setattr(statements, "LOOP_STATEMENTS", 100)
    deck = ("for i in 1..30 { let x = i\n let z = i }\nfor j in 0..29 { let y = j }\n"
            "for q in 0..10 { let w = q }\n")
    with pytest.raises(DeckError, match=r"11 passes of 1 statement\(s\), taking the deck's loops past 100 "
                                        r"statements in all \(90 executed so far\)") as info:
        read_text(deck)
    assert info.value.location.line == 4
    read_text(deck.replace("0..10", "0..9"))              # exactly 100: allowed


def test_statements_of_an_included_file_count_towards_the_limit(tmp_path, monkeypatch):
    import fem.deck.statements as statements

    monkeypatch.setattr(statements, "LOOP_STATEMENTS", 50)
    (tmp_path / "part.deck").write_text("let a = 1\nlet b = 2\nlet c = 3\nlet d = 4\n")
    with pytest.raises(DeckError, match="more than 50 statements in all") as info:
        read_text('node A = (0, 0, 0)\nfor i in 1..20 { include "part.deck" }\n', folder=tmp_path)
    assert info.value.location.line == 2


def test_a_loop_with_an_empty_body_costs_nothing(monkeypatch):
    import fem.deck.statements as statements

    monkeypatch.setattr(statements, "LOOP_STATEMENTS", 100)
    # 100 statements (the inner loop, once a pass); its billion empty passes are never run
    m = read_text(HEAD + "for i in 0..99 { for j in 0..999999999 { } }\n")
    assert len(m.node_names) == 5


# ---------- property: random loop decks against their flat unrolling

_DIRS = ("ux", "uy", "uz", "rx", "ry", "rz")


def _fill(text: str, i: str, k: str, j: str) -> str:
    return text.replace("{i}", i).replace("{k}", k).replace("{j}", j)


# statement templates: {i} the loop variable, {k} the loop's let, {j} an inner loop's variable
# (0 when there is none), {n} the index of a name made in the loop, {a} {b} {c} node indices
_BODY = {
    "support": "support N[{a}] ({dirs})",
    "spring": "spring N[{b}] (ux = ({k} + 1)*1e5 N/m, rz = ({i} + {j} + 1)*2e4 N*m)",
    "mass": "mass N[{c}] = ({i} + {j} + s + 1)*50 kg inertia = ({k}*2 kg*m^2, 1 kg*m^2, 0)",
    "member": "member B{m}[{n}] : N[{a}] -> T beam P S roll = ({k} + {j})*15 deg carried_mass = {i}*1 kg/m",
    "group": "group G{m}[{n}] = N[{b}], N[{k}]\nmass G{m}[{n}] = ({k} + 1)*10 kg",
    "static": "case C{m}[{n}] static { force N[{c}] = (0, 0, -({k} + 1)*1 kN)\nline M* = local(0, {j}*1 kN/m, "
              "-{k}*1 kN/m) }",
    "combo": "combo K{m}[{n}] = ({k} + 1)*D + ({i} + {j})*0.5*D",
    "modes": "case Q{m}[{n}] modes { count = {k} + 1, reference = ({i}*1 m, {j}*1 m, 0) }",
    "harmonic": "case W{m}[{n}] harmonic { force N[{a}] = (0, ({i} + 1)*1 kN, 0)\nfrom = ({i} + 1)*1 Hz, "
                "to = ({k} + 2)*10 Hz, points = {k} + 5 + {j} }",
    "free": "case F{m}[{n}] free { displacement N[{b}] = ({k}*1 mm, 0, 0)\nvelocity N[{c}] = (0, ({i} + {j})*0.1 m/s, "
            "0)\nduration = ({k} + 1)*0.5 s, step = 0.01 s, damping = {i}*1 percent }",
    "history": "case H{m}[{n}] history { force N[{a}] = (0, 0, -({k} + 1)*1 kN) times T\ntime T = halfsine(({k} + 1)"
               "*0.05 s)\nground = (({i} + {j} + 1)*0.1 gee, 0, 0) times T\nduration = 1 s, step = 0.01 s }",
    "spectrum": "case R{m}[{n}] spectrum { curve = plateau(({i} + 1)*0.1 gee, 1.2, ({k} + 1)*0.1 s, 0.8 s, 2 s)\n"
                "damping = ({k} + 1)*1 percent, directions = (1, {i}*0.3, {j}) }",
}


@st.composite
def loop_and_flat(draw):
    """A deck with loops and the same deck unrolled by hand: the loop variables written as their
    values in parentheses, a loop-local let written as its expression, indexed names written
    out. Both share a header of nodes N0..Nn (made by a loop, or written flat), and a loop
    variable may hide the outer parameter i, used again after the loops."""
    n = draw(st.integers(2, 5))
    s = draw(st.integers(0, 2))
    shadow = draw(st.booleans())
    common = ("material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }\n"
              "section P = pipe(od = 114.3 mm, wall = 6 mm)\n"
              f"let s = {s}\n" + ("let i = 7\n" if shadow else ""))
    loop = [common, f"for i in 0..{n} {{ let a = i*s + 1\n node N[i] = (i*1.5 m, a*0.25 m, 0) }}\n"
                    f"for i in 1..{n} {{ member M[i] : N[i - 1] -> N[i] beam P S }}\n"]
    flat = [common] + [f"node N{i} = (({i})*1.5 m, (({i})*s + 1)*0.25 m, 0)\n" for i in range(n + 1)] + \
        [f"member M{i} : N{i - 1} -> N{i} beam P S\n" for i in range(1, n + 1)]
    both = "node T = (0, 5 m, 1 m)\ncase D static { gravity = (0, 0, -g0) }\ncase MODES modes { count = 3 }\n"
    loop.append(both)
    flat.append(both)
    for m in range(draw(st.integers(1, 3))):
        lo = draw(st.integers(0, n))
        hi = draw(st.integers(lo, n))
        c = draw(st.integers(-lo, n - hi))            # k = i + c stays within 0..n
        inner = draw(st.sampled_from([None, 0, 1]))   # passes - 1 of an inner loop over j, if any
        k = f"k{m}"
        nodes = draw(st.lists(st.sampled_from(["{i}", "{k}", f"{{k}} - ({c})"]), min_size=3, max_size=3))
        kinds = draw(st.lists(st.sampled_from(sorted(_BODY)), min_size=1, max_size=4, unique=True))
        dirs = draw(st.lists(st.sampled_from(_DIRS), min_size=1, max_size=6, unique=True))
        text = "\n".join(_BODY[kind] for kind in kinds)
        for key, tmpl in zip("abc", nodes):
            text = text.replace(f"[{{{key}}}]", f"[{tmpl}]")
        text = text.replace("{dirs}", ", ".join(dirs)).replace("{m}", str(m))
        if inner is None:
            body = _fill(text.replace("[{n}]", "[i]"), "i", k, "0")
            loop.append(f"for i in {lo}..{hi} {{ let {k} = i + ({c})\n{body} }}\n")
        else:
            body = _fill(text.replace("[{n}]", "[i, j]"), "i", k, "j")
            loop.append(f"for i in {lo}..{hi} {{ let {k} = i + ({c})\nfor j in 0..{inner} {{\n{body} }} }}\n")
        for v in range(lo, hi + 1):
            for w in range(1 if inner is None else inner + 1):
                out = text.replace("[{n}]", str(v) if inner is None else f"{v}_{w}")
                for tmpl in set(nodes) | {"{k}"}:        # node names with their values
                    out = out.replace(f"[{tmpl}]", str(v + c if tmpl == "{k}" else v))
                flat.append(_fill(out, f"({v})", f"(({v}) + ({c}))", f"({w})" if inner is not None else "0") + "\n")
    tail = "node Z = (i*1 m, 9 m, 0)\n" if shadow else "node Z = (s*1 m, 9 m, 0)\n"
    loop.append(tail)
    flat.append(tail)
    return "".join(loop), "".join(flat)


@settings(max_examples=50, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(loop_and_flat())
def test_random_loop_decks_read_as_their_flat_unrolling(decks):
    loop, flat = decks
    read_both(loop, flat)
