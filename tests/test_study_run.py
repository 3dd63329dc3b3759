"""Studies run serially through the API: modes followed across a crossing, a refused variant in
its row, a record suite's mean and max, the written table, the command line."""

import csv
import math

import numpy as np
import pytest
import scipy.linalg
from shared_decks import CROSSING_CANTILEVER

import fem
from fem.analysis.tracking import mac
from fem.cli import main
from fem.study import read_study_text, run_study

# the crossing cantilever (tests/shared_decks.py): its two first modes cross as h passes b
CANTILEVER = CROSSING_CANTILEVER + "case MODES modes { count = 3 }\n"

HISTORY = """
case QUAKE history { ground = (0, G, 0), table = "base.csv", duration = 0.6 s, step = 0.001 s,
                     damping = 5 percent, record = "N20" }
"""


def _pulse(path, period, amp=1.0):
    t = np.arange(0, 0.3001, 0.002)
    f = amp * np.sin(2 * np.pi * t / period) * (t < 2 * period)
    path.write_text("time,factor\n" + "\n".join(f"{a:.4f},{b:.8f}" for a, b in zip(t, f)) + "\n")


@pytest.fixture
def folder(tmp_path):
    (tmp_path / "cant.deck").write_text(CANTILEVER)
    (tmp_path / "quake.deck").write_text("let G = 1 m/s^2\n" + CANTILEVER + HISTORY)
    _pulse(tmp_path / "base.csv", 0.05)
    (tmp_path / "suite").mkdir()
    _pulse(tmp_path / "suite" / "r1.csv", 0.04)
    _pulse(tmp_path / "suite" / "r2.csv", 0.07, 0.6)
    return tmp_path


def study(folder, text):
    return read_study_text(text, "t.study", folder)


def test_mac_of_a_mode_with_itself_is_1_and_with_an_m_orthogonal_mode_about_0():
    """MAC = |a^T M b|^2 / ((a^T M a)(b^T M b)) (Allemang 2003, from memory); the generalised
    eigenvectors of a symmetric pencil are M-orthogonal (any linear algebra text), so the
    mass-weighted MAC of two of them is round-off (tolerance 1e-20: a square of ~1e-12)."""
    rng = np.random.default_rng(3)
    a = rng.standard_normal((8, 8))
    K, M = a @ a.T + 8 * np.eye(8), np.diag(rng.uniform(1, 3, 8))
    _, phi = scipy.linalg.eigh(K, M)
    m = mac(phi[:, :3], phi[:, :3], M)
    np.testing.assert_allclose(np.diag(m), 1.0, rtol=1e-13)
    assert np.abs(m - np.diag(np.diag(m))).max() < 1e-20
    # the same formula written out with numpy for one pair
    x, y = phi[:, 0], phi[:, 1]
    assert abs((x @ M @ y) ** 2 / ((x @ M @ x) * (y @ M @ y)) - m[0, 1]) < 1e-20


def test_a_sweep_where_two_modes_cross_keeps_their_identities(folder):
    r = run_study(study(folder, 'deck "cant.deck"\nvary h from 80 mm to 120 mm points 4\ntrack 2 modes of MODES\n'),
                  serial=True, progress=False)
    h = np.array(r.columns["h [mm]"])
    f1, f2 = np.array(r.columns["f1 [Hz]"]), np.array(r.columns["f2 [Hz]"])
    # identity 1 (bending in the plane of h) is the lower mode at h = 80 mm and the upper one
    # beyond 100 mm; followed by MAC it keeps f ~ h. Tolerance 1e-9: both planes' beams use the
    # same element, so the ratio is exact up to the eigen solver's round-off
    np.testing.assert_allclose(f1 / f1[0], h / h[0], rtol=1e-9)
    np.testing.assert_allclose(f2, f2[0], rtol=1e-9)
    assert r.columns["mode1"] == [1, 1, 2, 2] and r.columns["mode2"] == [2, 2, 1, 1]
    assert min(r.columns["mac1"] + r.columns["mac2"]) > 0.999
    assert r.tracked.crossings == [(2, 1, 2)] and r.columns["tracking"][2] == "crossing 1-2"
    # the first mode against the closed form of a cantilever, f = (1.8751^2 / 2 pi L^2) sqrt(EI / m)
    # (Blevins, Formulas for Natural Frequency and Mode Shape, 1979, table 8-1): 20 elements and
    # shear deformation of a 2 m / 80 mm beam keep it within 0.5 %
    E, rho, L, b, d = 200e9, 7850, 2.0, 0.1, 0.08
    closed = 1.87510407 ** 2 / (2 * math.pi * L ** 2) * math.sqrt(E * b * d ** 3 / 12 / (rho * b * d))
    assert abs(f1[0] / closed - 1) < 5e-3


def test_a_refused_variant_is_reported_and_the_study_goes_on(folder):
    r = run_study(study(folder, 'deck "cant.deck"\nvary h in (90 mm, -10 mm, 110 mm)\n'), serial=True, progress=False)
    assert r.columns["status"] == ["ok", "refused", "ok"]
    assert r.failed == [1] and "h" in r.columns["message"][1]
    assert math.isnan(r.columns["f1 [Hz]"][1]) and not math.isnan(r.columns["f1 [Hz]"][2])
    # the third variant is tracked from the first, the nearest that solved
    assert r.columns["mac1"][2] > 0.99


def test_a_record_suites_mean_and_max_are_those_of_single_record_runs(folder):
    """Each record run alone through fem.read_deck and fem.solve, its scale written as the
    deck's ground acceleration instead (the response is linear in it); the study's mean and max
    agree to 1e-10 relative (the same arithmetic in another order)."""
    text = ('deck "quake.deck"\nrecords QUAKE "suite"\nrecord QUAKE "suite/r2.csv" scale 1.5\n'
            'peak tip = QUAKE displacement N20 y\npeak acc = QUAKE acceleration N20 y\n')
    r = run_study(study(folder, text), serial=True, progress=False)
    assert r.columns["status"] == ["ok"]
    singles = {"tip": [], "acc": []}
    for name, scale in (("r1", 1.0), ("r2", 1.0), ("r2", 1.5)):
        deck = folder / f"single-{name}-{scale}.deck"
        deck.write_text("let G = 1 m/s^2\n" + CANTILEVER + HISTORY.replace('"base.csv"', f'"suite/{name}.csv"'))
        res = fem.solve(fem.read_deck(deck, let={"G": f"{scale} m/s^2"}))["QUAKE"]
        tip = res.record.tolist().index(20)
        singles["tip"].append(abs(res.peak[20, 1]))
        singles["acc"].append(np.abs(res.a[:, tip, 1]).max())
    for p, unit in (("tip", "m"), ("acc", "m/s^2")):
        np.testing.assert_allclose(r.columns[f"{p} mean [{unit}]"][0], np.mean(singles[p]), rtol=1e-10)
        np.testing.assert_allclose(r.columns[f"{p} max [{unit}]"][0], np.max(singles[p]), rtol=1e-10)
        np.testing.assert_allclose(r.record_columns[f"{p} [{unit}]"], singles[p], rtol=1e-10)
    assert r.record_columns["record"] == ["r1.csv", "r2.csv", "r2.csv"] and r.record_columns["scale"] == [1, 1, 1.5]
    assert len(set(singles["tip"])) == 3           # three different records: the mean is not one of them


def test_the_table_is_written_as_csv_and_parquet(folder):
    import pyarrow.parquet as pq

    r = run_study(study(folder, 'deck "cant.deck"\nvary h in (90 mm, 110 mm)\n'), serial=True, progress=False)
    out = r.write(folder / "out")
    rows = list(csv.DictReader(open(out / "study.csv")))
    assert [float(x["h [mm]"]) for x in rows] == [90, 110]
    assert np.isclose(float(rows[1]["f1 [Hz]"]), r.columns["f1 [Hz]"][1], rtol=1e-9)   # 10 digits written
    table = pq.read_table(out / "study.parquet").to_pydict()
    assert table["f1 [Hz]"] == r.columns["f1 [Hz]"] and table["status"] == ["ok", "ok"]
    html = (out / "report.html").read_text()
    assert "qualified engineer" in html and "plots/frequencies-h.png" in html
    assert (out / "plots" / "frequencies-h.png").stat().st_size > 1000


def test_the_command_line_runs_a_deck_with_study_lines(folder, capsys):
    out = folder / "cli"
    status = main(["study", str(folder / "cant.deck"), "--vary", "h in (90 mm, -10 mm)", "--serial",
                   "--out", str(out)])
    text = capsys.readouterr().out
    assert status == 1                                  # written, but a variant did not solve
    assert "variant 1 did not solve" in text and "qualified engineer" in text
    assert (out / "study.csv").exists()
    status = main(["study", str(folder / "cant.deck"), "--vary", "h in (90 mm, 2 parsecs)", "--serial"])
    assert status == 2 and "command line:" in capsys.readouterr().err


def test_a_deck_read_again_with_other_values_is_parsed_once(folder, monkeypatch):
    """While a study keeps parse trees, the deck's text is parsed once and the overrides' one-line
    lets once each; the models equal those of plain readings, and located errors still point
    into the deck."""
    from fem.deck import sources

    calls = []
    plain = sources.parse_deck_text
    monkeypatch.setattr(sources, "parse_deck_text", lambda *a: calls.append(a[2]) or plain(*a))
    monkeypatch.setattr(sources, "_KEPT", {})
    deck = folder / "cant.deck"
    with sources.parses_kept():
        kept = [fem.read_deck(deck, let={"h": h}) for h in ("90 mm", "110 mm", "90 mm")]
    assert [str(c) for c in calls].count("cant.deck") == 1 and len(calls) == 3     # deck once, two overrides
    for m, h in zip(kept, ("90 mm", "110 mm", "90 mm")):
        again = fem.read_deck(deck, let={"h": h})
        np.testing.assert_array_equal(m.Iy, again.Iy)
    assert kept[0].Iy[0] != kept[1].Iy[0]
    with sources.parses_kept(), pytest.raises(fem.DeckError, match=r"cant.deck:4:") as err:
        fem.read_deck(deck, let={"h": "-1 mm"})
    assert err.value.location.line == 4
