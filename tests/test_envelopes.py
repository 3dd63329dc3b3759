"""Envelopes over cases and combinations (fem/analysis/combine.py): max and min of every field
against max/min taken by hand (numpy) over the component cases, the governing case, the deck
statement and its refusals, and a further field plugged into the same machinery."""

import numpy as np
import pytest
from test_combine_dynamic import FRAME, RTOL, with_basis

from fem import solve
from fem.analysis import combine as cb
from fem.case_selection import select_cases
from fem.deck.reader import read_text
from fem.errors import DeckError

EXTRA = """
combo ULS = 1.35*DEAD + 1.5*WIND
combo DS = 1.0*DEAD + 1.0*SHAKE
combo DK = 1.0*DEAD + 1.0*KNOCK
envelope ALL over DEAD, WIND, ULS, DS, DK, HUM
"""


@pytest.fixture(scope="module")
def res():
    return solve(read_text(FRAME + EXTRA))


def _by_hand(res, name):
    """(max, min) stacks over ALL's members by numpy: a static case's value is both, a spectrum
    or harmonic case's peak enters with both signs, a history case's series gives its own (the
    displacements from its saved series; its reactions and end forces, saved as peaks only, from
    the combination DK, checked by hand in test_combine_dynamic)."""
    d, w, u, s, k, h = (res[n] for n in ("DEAD", "WIND", "ULS", "SHAKE", "KNOCK", "HUM"))
    get = {"displacement": lambda r: r.u, "reaction": lambda r: r.reactions, "end_force": lambda r: r.member_forces}[name]
    peak = {"displacement": "peak", "reaction": "reaction_peak", "end_force": "member_peak"}[name]
    ds = get(d) + get(s)
    his = {"displacement": d.u[None] + k.u}
    dk_max = his[name].max(0) if name in his else res["DK"].fields[name].max
    dk_min = his[name].min(0) if name in his else res["DK"].fields[name].min
    hp = getattr(h, peak)
    hi = np.stack([get(d), get(w), get(u), ds, dk_max, hp])
    lo = np.stack([get(d), get(w), get(u), get(d) - get(s), dk_min, -hp])
    return hi, lo


@pytest.mark.parametrize("name", ["displacement", "reaction", "end_force"])
def test_envelope_by_hand(res, name):
    e = res["ALL"]
    assert e.over == ("DEAD", "WIND", "ULS", "DS", "DK", "HUM")
    hi, lo = _by_hand(res, name)
    b = e.fields[name]
    scale = np.abs(hi).max()
    np.testing.assert_allclose(b.max, hi.max(0), rtol=0, atol=RTOL * scale)
    np.testing.assert_allclose(b.min, lo.min(0), rtol=0, atol=RTOL * scale)
    # the governing case holds the value it is said to give (ties are resolved to the first)
    picked = np.take_along_axis(hi, b.max_by[None], 0)[0]
    np.testing.assert_allclose(picked, b.max, rtol=0, atol=RTOL * scale)
    picked = np.take_along_axis(lo, b.min_by[None], 0)[0]
    np.testing.assert_allclose(picked, b.min, rtol=0, atol=RTOL * scale)


def test_governing_cases_are_the_expected_ones(res):
    """The tip's sway (uy of H) is governed by the spectrum combination (the only case that moves
    it both ways by more than the wind); the vertical reaction at the support's upward side by the
    largest gravity (ULS, 1.35 * DEAD), checked against numpy's argmax over the same stacks."""
    e = res["ALL"]
    node = res.model.node_names.index("N0")
    hi, lo = _by_hand(res, "reaction")
    assert e.over[e.fields["reaction"].max_by[node, 2]] == e.over[int(hi[:, node, 2].argmax())]
    assert e.over[e.fields["reaction"].max_by[node, 2]] in ("ULS", "DS", "DK")


def test_envelope_of_ties_picks_the_first():
    """Two static cases with the same loads tie everywhere: the first named governs."""
    r = solve(read_text(FRAME + "case DEAD2 static { gravity = (0, 0, -9.81 m/s^2) }\n"
                                "envelope E over DEAD2, DEAD\n"))
    b = r["E"].fields["end_force"]
    assert np.all(b.max_by == 0) and np.all(b.min_by == 0)


def test_selecting_an_envelope_brings_its_cases(res):
    only, added = select_cases(read_text(FRAME + EXTRA), ["ALL"])
    assert set(added) >= {"DEAD", "WIND", "ULS", "DS", "DK", "HUM", "SHAKE", "KNOCK", "MODES"}
    assert [e.name for e in only.envelopes] == ["ALL"]


@pytest.mark.parametrize("extra, message", [
    ("envelope E over DEAD, MODES", r"envelope E refers to 'MODES', which is a modes case"),
    ("envelope E over DEAD, WINDS", r"envelope E refers to 'WINDS', which is not defined; did you mean 'WIND'"),
    ("envelope E over DEAD, WIND, DEAD", r"envelope E names DEAD twice"),
    ("envelope E over DEAD\nenvelope F over E", r"'E', which is an envelope"),
    ("envelope DEAD over WIND", r"envelope DEAD has the same name as case DEAD"),
    ("combo C = 1.0*DEAD\nenvelope E over DEAD, C\ncombo D = 1.0*E", r"'E', which is an envelope"),
    ("envelope E DEAD, WIND", r"deck.deck:20:12: unexpected name 'DEAD'; expected 'over'"),
    ("envelope E over", r"the file ends in the middle of a statement; expected a name"),
], ids=["modes", "unknown", "twice", "nested", "clash", "in-combo", "no-over", "no-cases"])
def test_envelope_refusals(extra, message):
    with pytest.raises(DeckError, match=message):
        read_text(FRAME + extra)


def test_a_field_from_end_forces_plugs_in(res):
    """A further field computed from end forces (as member stresses will be): |N| at end i, not
    linear in the forces. For static cases it is |combined N|; over a history, per step from the
    combined forces, so its largest value is the larger size of the end-force bounds."""
    fld = cb.Field("axial_size", "member", ("absN_i",), None,
                   {"spectrum": lambda r: np.abs(r.member_forces[:, :1]),
                    "harmonic": lambda r: np.abs(r.member_peak[:, :1])},
                   of_forces=lambda F: np.abs(F[..., :1]))
    cb.add_field(fld)
    try:
        sizes = {"node": 5, "member": 4}
        d, w, k = res["DEAD"], res["WIND"], with_basis(res, "KNOCK")
        c = cb.combine_terms("S", [(1.0, d), (-0.5, w)], sizes)
        want = np.abs(d.member_forces[:, :1] - 0.5 * w.member_forces[:, :1])
        np.testing.assert_allclose(c.fields["axial_size"].max, want, rtol=1e-14)
        c = cb.combine_terms("H", [(1.0, d), (1.0, k)], sizes)
        ef = c.fields["end_force"]
        np.testing.assert_allclose(c.fields["axial_size"].max, np.maximum(ef.max[:, :1], -ef.min[:, :1]), rtol=1e-14)
    finally:
        del cb.FIELDS["axial_size"]


def test_outputs_hold_the_bounds(res, tmp_path, capsys):
    """results.json `demands`, the extremes_*.csv tables and the summary lines carry the same
    numbers as the results (round trip through the files; equality to the printed digits)."""
    import csv
    import json

    from fem.output.report import write_report
    from fem.output.results_json import write_results_json
    from fem.output.summary import print_solved
    from fem.output.tables import write_tables

    (tmp_path / "out").mkdir()
    write_tables(res, tmp_path / "out")              # the writers of write_results, without the plots
    write_report(tmp_path / "out" / "report.html", write_results_json(res, tmp_path / "out"), {})
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    assert [c["name"] for c in doc["demands"]] == ["DS", "DK", "ALL"]
    assert all(c["kind"] != "combination" for c in doc["cases"])       # the list of cases is as before
    ds, env = doc["demands"][0], doc["demands"][2]
    assert ds["terms"] == [{"case": "DEAD", "kind": "static", "factor": 1.0},
                           {"case": "SHAKE", "kind": "spectrum", "factor": 1.0}]
    assert ds["checks"]["static_part"]["equilibrium_pass"] is True
    b = res["ALL"].fields["end_force"]
    got = env["fields"]["end_force"]["values"]["M0"]
    assert got["max"] == b.max[0].tolist() and got["min"] == b.min[0].tolist()
    assert got["max_case"] == [res["ALL"].over[i] for i in b.max_by[0]]
    g = env["fields"]["end_force"]["governing"]["My_i"]["max"]
    assert g["value"] == b.max[:, 4].max() and g["member"] == res.model.member_names[int(b.max[:, 4].argmax())]
    assert doc["demands"][1]["fields"]["displacement"]["values"]["H"]["max_time_s"][0] is not None
    assert ds["fields"]["displacement"]["values"]["H"]["max_time_s"] == [None] * 6
    rows = list(csv.DictReader((tmp_path / "out" / "extremes_member_forces.csv").open()))
    assert len(rows) == 3 * 4 * 12
    row = next(r for r in rows if r["result"] == "ALL" and r["member"] == "M1" and r["component"] == "Mz_j")
    assert float(row["max"]) == b.max[1, 11] and float(row["min"]) == b.min[1, 11]
    assert row["max_case"] == res["ALL"].over[b.max_by[1, 11]] and row["max_time_s"] == ""
    reactions = list(csv.DictReader((tmp_path / "out" / "extremes_reactions.csv").open()))
    assert {r["node"] for r in reactions} == {"N0"}
    report = (tmp_path / "out" / "report.html").read_text()
    assert "<h2 id='case-ALL'>envelope ALL</h2>" in report and "equilibrium of its static part" in report
    capsys.readouterr()
    print_solved(res)
    out = capsys.readouterr().out
    assert "  DK           combination 1*DEAD + 1*KNOCK (by time)" in out
    assert "  ALL          envelope over DEAD, WIND, ULS, DS, DK, HUM" in out
    assert "static part: equilibrium" in out and "end forces governed by:" in out


def test_no_demands_no_tables(tmp_path):
    """A deck without such combinations or envelopes writes no extremes table, and `demands` is []."""

    from fem.output.results_json import write_results_json
    from fem.output.tables import write_tables

    r = solve(read_text(FRAME.split("case MODES")[0]))
    write_tables(r, tmp_path)
    assert not list(tmp_path.glob("extremes_*.csv"))
    assert write_results_json(r, tmp_path)["demands"] == []


def test_an_implausible_bound_fails_the_size_check():
    """A combination whose largest translation exceeds the model's size (a unit slip in a factor)
    fails the plausibility check like a static case would (analysis/plausible.py, SIZE_FAIL)."""
    r = solve(read_text(FRAME + "combo SLIP = 1.0*DEAD + 1e6*SHAKE\n"))
    ch = r.checks.cases["SLIP"]
    assert not ch["translation_within_size_pass"] and not r.checks.passed["SLIP"] and not r.ok
    assert "times the model's size" in ch["warnings"][0]
    ok = solve(read_text(FRAME + "combo FINE = 1.0*DEAD + 1.0*SHAKE\n"))
    assert ok.checks.cases["FINE"]["translation_within_size_pass"] and ok.ok
