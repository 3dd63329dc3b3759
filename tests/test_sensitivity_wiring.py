"""Frequency sensitivities asked for by a modes case of the deck: the deck's groups reach the
model, the solve computes them, results.json, the CSV tables and the report carry the library's
numbers, option mistakes are located.

The library (fem.analysis.sensitivity) is verified in tests/test_sensitivity.py; here its
numbers are the reference for the outputs, and a deck group's rows are checked once more
against central finite differences of full solves through fem.solve, with a `let` scaling the
group's own material or section (the derivative d lambda / d p = phi^T (dK/dp - lambda dM/dp)
phi of docs/sensitivity.md, Fox and Kapoor 1968; from memory).
"""

import csv
import json

import numpy as np
import pytest

import fem
from fem.analysis.sensitivity import frequency_sensitivity
from fem.cases import ModesCase, RuleError
from fem.errors import DeckError, ModelError

# An invented analyser stand: four legs, rails, a cantilever arm (its own material ARMSTEEL and
# section ARMS, so that `let` scales the arm alone) carrying a cabinet, a braced bay, a spring
# base. Demo numbers, not a design.
STAND = """
title "Analyser stand AS-3"
let p = 1        # scale of the arm steel's E (and so G, nu fixed)
let q = 1        # scale of the arm steel's density
let r = 1        # scale of the arm section's torsion constant

material S275 { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
material ARMSTEEL { E = p*210 GPa, nu = 0.3, density = q*7850 kg/m^3 }
section LEG = rhs(b = 100 mm, h = 100 mm, t = 5 mm)
section RAIL = ishape(d = 160 mm, bf = 82 mm, tf = 7.4 mm, tw = 5 mm)
section ARMS = generic(A = 1.6e-3 m^2, Iy = 2.5e-6 m^4, Iz = 1.1e-6 m^4, J = r*6e-7 m^4)
section TIE = pipe(od = 48.3 mm, wall = 3.2 mm)

node B1 = (0, 0, 0)
node B2 = (2 m, 0, 0)
node B3 = (0, 1.5 m, 0)
node B4 = (2 m, 1.5 m, 0)
node T1 = (0, 0, 2.4 m)
node T2 = (2 m, 0, 2.4 m)
node T3 = (0, 1.5 m, 2.4 m)
node T4 = (2 m, 1.5 m, 2.4 m)
node E1 = (3.2 m, 0, 2.4 m)
node E2 = (3.2 m, 1.5 m, 2.4 m)
member L1 : B1 -> T1 beam LEG S275
member L2 : B2 -> T2 beam LEG S275
member L3 : B3 -> T3 beam LEG S275
member L4 : B4 -> T4 beam LEG S275
member R1 : T1 -> T2 beam RAIL S275
member R2 : T3 -> T4 beam RAIL S275
member R3 : T1 -> T3 beam RAIL S275
member A1 : T2 -> E1 beam ARMS ARMSTEEL
member A2 : T4 -> E2 beam ARMS ARMSTEEL
member A3 : E1 -> E2 beam ARMS ARMSTEEL release i (ry, rz)
member D1 : B1 -> T2 truss TIE S275
group ARM = A1, A2, A3
group FRAME = L*, R*, T1

support B1 fixed
support B2 fixed
support B3 fixed
spring B4 (ux = 2e7 N/m, uy = 2e7 N/m, uz = 5e8 N/m, rx = 1e6 N*m/rad, ry = 1e6 N*m/rad, rz = 1e6 N*m/rad)
mass E1 = 180 kg
mass E2 = 180 kg
"""
CASES = """
case MODES modes { count = 6, sensitivity = groups, sensitivity_rows = 5 }
case BYSECTION modes { count = 4, sensitivity = sections }
"""


def _stand(cases=CASES, let=None):
    return fem.read_text(STAND + cases, "stand.deck", let=let)


@pytest.fixture(scope="module")
def solved():
    return fem.solve(_stand())


@pytest.fixture(scope="module")
def written(solved, tmp_path_factory):
    out = tmp_path_factory.mktemp("stand") / "results"
    fem.write_results(solved, out, render=False)
    return out, json.loads((out / "results.json").read_text())


def _rows(path):
    with path.open() as fh:
        return list(csv.DictReader(fh))


def test_deck_groups_reach_the_model_as_member_groups():
    m = _stand()
    # FRAME names node T1 too: a member group keeps its members only, in deck order
    assert m.groups == {"ARM": ("A1", "A2", "A3"), "FRAME": ("L1", "L2", "L3", "L4", "R1", "R2", "R3")}
    modes = [c for c in m.cases if c.kind == "modes"]
    assert [(c.sensitivity, c.sensitivity_rows) for c in modes] == [("groups", 5), ("sections", 8)]


def test_sensitivities_are_off_unless_asked(tmp_path):
    m = _stand("case MODES modes { count = 3 }\n")
    assert m.cases[0].sensitivity is None
    r = fem.solve(m)
    assert r.sensitivities == {}
    fem.write_results(r, tmp_path / "out", render=False)
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    assert "sensitivity" not in doc["cases"][0]
    assert not list((tmp_path / "out").glob("sensitivity_*")) and not list((tmp_path / "out").glob("energy_*"))


def test_solve_holds_the_library_result(solved):
    m = solved.model
    for name, by in (("MODES", dict(m.groups)), ("BYSECTION", "section")):
        lib = frequency_sensitivity(m, solved[name], groups=by)
        got = solved.sensitivities[name]
        assert list(got.kind) == list(lib.kind) and list(got.target) == list(lib.target)
        np.testing.assert_array_equal(got.d_lambda, lib.d_lambda)    # the same computation: bit for bit
    assert set(solved.sensitivities["MODES"].target) >= {"ARM", "FRAME", "E1", "E2", "B4"}
    assert set(solved.sensitivities["BYSECTION"].target) >= {"LEG", "RAIL", "ARMS", "TIE"}


def test_results_json_rows_are_the_library_rows(solved, written):
    _, doc = written
    m = solved.model
    for name, by, top in (("MODES", dict(m.groups), 5), ("BYSECTION", "section", 8)):
        lib = frequency_sensitivity(m, solved[name], groups=by)
        block = next(c for c in doc["cases"] if c["name"] == name)["sensitivity"]
        assert block["grouped_by"] == {"MODES": "groups", "BYSECTION": "sections"}[name]
        assert block["rows_per_mode"] == top
        assert block["checks"]["energy_check_pass"] and block["checks"]["energy_check"] < 1e-10
        assert [e["mode"] for e in block["modes"]] == list(range(1, len(lib.freq) + 1))
        for j, entry in enumerate(block["modes"]):
            assert entry["frequency_Hz"] == lib.freq[j]
            for key, kinds in (("stiffen", ("bending", "axial", "torsion", "spring")),
                               ("lighten", ("member mass", "point mass"))):
                want = lib.rows(j, top, kinds=kinds)
                assert len(entry[key]) == min(top, len(lib.rows(j, None, kinds)))
                assert [(r["kind"], r["part"], r["d_freq_Hz"], r["dlnf_dlnp"], r["energy_share"])
                        for r in entry[key]] == [(w["kind"], w["target"], w["d_freq"], w["percent"], w["share"])
                                                 for w in want]
            # the strain energy shares of all stiffness parts add to 1 when every member is in a
            # part (by section); the deck's groups leave out the tie D1, which holds the rest
            rest = 0.0 if name == "BYSECTION" else lib.member_strain_share[m.member_names.index("D1"), j]
            assert sum(r["share"] for r in lib.rows(j)) + rest == pytest.approx(1.0, abs=1e-12)


def test_csv_tables_hold_every_row(solved, written):
    out, _ = written
    m = solved.model
    lib = frequency_sensitivity(m, solved["MODES"], groups=dict(m.groups))
    rows = _rows(out / "sensitivity_MODES.csv")
    P, k = lib.d_freq.shape
    assert len(rows) == P * k
    got = np.array([float(r["d_freq_Hz"]) for r in rows]).reshape(k, P).T
    np.testing.assert_array_equal(got, lib.d_freq)          # written with repr: exact
    np.testing.assert_array_equal(np.array([float(r["d_lambda_rad2_s2"]) for r in rows]).reshape(k, P).T,
                                  lib.d_lambda)
    assert [(r["kind"], r["part"]) for r in rows[:P]] == list(zip(lib.kind, lib.target))
    shares = _rows(out / "energy_shares_MODES.csv")
    assert [r["member"] for r in shares[:m.n_members]] == m.member_names
    np.testing.assert_array_equal(np.array([float(r["strain_share"]) for r in shares]).reshape(k, -1).T,
                                  lib.member_strain_share)
    np.testing.assert_array_equal(np.array([float(r["kinetic_share"]) for r in shares]).reshape(k, -1).T,
                                  lib.member_kinetic_share)
    assert (out / "sensitivity_BYSECTION.csv").exists() and (out / "energy_shares_BYSECTION.csv").exists()


def _fd(name: str, h: float) -> np.ndarray:
    """Central difference d f / d p of MODES's frequencies, the let `name` at 1 +- h."""
    f = [fem.solve(_stand(let={name: 1 + s * h}), cases=["MODES"])["MODES"].modes.freq for s in (1, -1)]
    return (f[0] - f[1]) / (2 * h)


# each let scales one part of the ARM group: E (and G) -> its bending, axial and torsion rows
# together; density -> its member mass row; J -> its torsion row
@pytest.mark.parametrize("let, kinds", [("p", ("bending", "axial", "torsion")), ("q", ("member mass",)),
                                        ("r", ("torsion",))], ids=["E", "density", "J"])
def test_group_rows_against_finite_differences_of_full_solves(solved, let, kinds):
    # Step h = 1e-4 of the scale: the central difference's truncation error is O(h^2); measured
    # on this stand the worst mode differs by 1.7e-8 of f at h = 1e-4 and 1.6e-6 at h = 1e-3
    # (the factor 100 of h^2), while round-off of the eigen solves (~1e-13 of lambda) adds
    # ~1e-9 / h. The tolerance, 2e-7 of f, leaves a margin of 10 over the measured error and
    # is far below what leaving out one kind of row would give (the arm's torsion row alone is
    # up to 6e-2 of f).
    s = solved.sensitivities["MODES"]
    f = solved["MODES"].modes.freq
    want = sum(s.d_freq[(s.kind == k) & (s.target == "ARM")][0] for k in kinds)
    assert np.all(np.abs(_fd(let, 1e-4) - want) <= 2e-7 * f)


def test_report_tables_to_raise_the_first_modes(written):
    out, doc = written
    text = (out / "report.html").read_text()
    part = text[text.index("id='raise-MODES'"):text.index("id='modes-BYSECTION'")]
    # the first three modes of MODES's six get a table each
    assert "To raise mode 1 (" in part and "To raise mode 3 (" in part and "To raise mode 4 (" not in part
    assert "Repeated frequency" not in text            # no repeated pair in this stand
    first = next(c for c in doc["cases"] if c["name"] == "MODES")["sensitivity"]["modes"][0]["stiffen"][0]
    assert f"<td class=\"\">{first['part']}</td><td class=\"\">{first['kind']}</td>" in text


# a round pipe post with a lamp at its top (invented): its two bending planes give equal frequencies
POST = """
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 114.3 mm, wall = 6.02 mm)
node A = (0, 0, 0)
node B = (0, 0, 2 m)
node C = (0, 0, 4 m)
member U : A -> B beam P S
member V : B -> C beam P S
support A fixed
mass C = 40 kg
case MODES modes { count = 4, sensitivity = members }
"""


def test_repeated_pair_is_flagged_in_results_and_report(tmp_path):
    r = fem.solve(fem.read_text(POST, "post.deck"))
    s = r.sensitivities["MODES"]
    assert s.repeated[0] and s.repeated[1]
    fem.write_results(r, tmp_path / "out", render=False)
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    block = doc["cases"][0]["sensitivity"]
    assert block["repeated_modes"][:2] == [1, 2]
    assert block["modes"][0]["repeated_with"] == [2] and block["modes"][1]["repeated_with"] == [1]
    assert "Repeated frequency</b> with mode 2" in (tmp_path / "out" / "report.html").read_text()


@pytest.mark.parametrize("option, line_col, words", [
    ("sensitivity = sectons", (2, 31), "did you mean 'sections'"),
    ("sensitivity = 3", (2, 31), "one of the words members, sections"),
    ("sensitivity = sections, sensitivity_rows = 0", (2, 55), "sensitivity_rows must be a whole number"),
    ("sensitivity = sections, sensitivity_rows = 2.5", (2, 55), "sensitivity_rows must be a whole number"),
    ("sensitivty = sections", (2, 31), "did you mean 'sensitivity'"),
], ids=["unknown word", "not a word", "zero rows", "fraction of a row", "misspelt option"])
def test_option_errors_are_located(option, line_col, words):
    with pytest.raises(DeckError, match=words) as err:
        _stand("\ncase MODES modes { count = 3, " + option + " }\n")
    loc = err.value.location
    line = STAND.count("\n") + line_col[0]
    assert (loc.file, loc.line, loc.column) == ("stand.deck", line, line_col[1])


def test_groups_need_a_group_of_members():
    deck = STAND.replace("group ARM = A1, A2, A3\n", "").replace("group FRAME = L*, R*, T1\n", "group TOPS = T*\n")
    with pytest.raises(DeckError, match="no group that holds members") as err:
        fem.read_text(deck + "case MODES modes { sensitivity = groups }\n", "stand.deck")
    assert err.value.location.line == deck.count("\n") + 1 and err.value.location.column == 20
    assert "group COLUMNS = C*" in str(err.value)


def test_rows_without_sensitivity_are_noted():
    m = _stand("case MODES modes { count = 3, sensitivity_rows = 4 }\n")
    assert any("sensitivity_rows does nothing without sensitivity" in str(w) for w in m.warnings)


def test_typed_case_rules_and_a_model_without_groups():
    with pytest.raises(RuleError, match="sensitivity is members, sections, materials or groups"):
        ModesCase(name="M", sensitivity="section")
    with pytest.raises(RuleError, match="sensitivity_rows must be a whole number"):
        ModesCase(name="M", sensitivity="members", sensitivity_rows=0)
    from dataclasses import replace

    m = fem.read_text(POST, "post.deck")
    m = replace(m, cases=[replace(m.cases[0], sensitivity="groups")])
    with pytest.raises(ModelError, match="no group of members"):
        fem.solve(m)


@pytest.mark.parametrize("word, by", [("members", "member"), ("materials", "material"), ("off", None)])
def test_each_grouping_word_is_the_librarys_grouping(word, by):
    r = fem.solve(_stand(f"case MODES modes {{ count = 3, sensitivity = {word} }}\n"))
    if by is None:
        assert r.sensitivities == {} and r.model.cases[0].sensitivity is None
        return
    lib = frequency_sensitivity(r.model, r["MODES"], groups=by)
    got = r.sensitivities["MODES"]
    assert list(got.target) == list(lib.target)
    np.testing.assert_array_equal(got.d_freq, lib.d_freq)


def test_too_many_sensitivity_rows_are_refused(monkeypatch):
    # the limit of a table's rows (fem.limits.ROWS_LIMIT, 5 million) lowered to below this
    # stand's members x kinds x modes, so the refusal is reached on a small model
    import fem.limits

    monkeypatch.setattr(fem.limits, "ROWS_LIMIT", 100)
    with pytest.raises(ModelError, match="rows of sensitivities, above the limit of 100; group the members") as err:
        fem.solve(_stand("case MODES modes { count = 6, sensitivity = members }\n"))
    assert str(err.value).startswith(f"stand.deck:{STAND.count(chr(10)) + 1}:1: case MODES")
