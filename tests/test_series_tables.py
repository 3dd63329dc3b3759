"""Long series tables (free_, history_, frf_ ...) as gzip-compressed CSV: numpy and pandas read
them directly, and the numbers equal the data to SERIES_DIGITS (9) significant digits."""

import csv
import gzip

import numpy as np
import pytest
from shared_decks import PIPE_ARM

from fem import read_text, solve, write_results
from fem.output.tables import SERIES_DIGITS, write_series


def _data(rng):
    t = np.arange(5) * 0.013
    nodes = ["A", "B_1", "C"]
    # magnitudes from 1e-12 to 1e6 and both signs, an exact zero and values that need all 17 digits
    v = rng.standard_normal((5, 3, 4)) * 10.0 ** rng.integers(-12, 7, size=(5, 3, 4))
    v[0, 0, 0] = 0.0
    v[1, 1, 1] = 1 / 3
    return t, nodes, v


def test_series_round_trip_to_nine_digits(tmp_path):
    rng = np.random.default_rng(7)
    t, nodes, v = _data(rng)
    path = tmp_path / "history_X.csv.gz"
    cols = [np.repeat(t, 3), np.tile(np.array(nodes, dtype=object), 5), *v.reshape(15, 4).T]
    write_series(path, ["time_s", "node", "a", "b", "c", "d"], cols)
    with gzip.open(path, "rt", newline="") as fh:
        rows = list(csv.reader(fh))
    assert rows[0] == ["time_s", "node", "a", "b", "c", "d"] and len(rows) == 16
    assert [r[1] for r in rows[1:]] == nodes * 5
    # numpy reads the file as it is (gzip recognised from the name)
    got = np.loadtxt(path, delimiter=",", skiprows=1, usecols=(0, 2, 3, 4, 5))
    assert SERIES_DIGITS == 9
    # rounding to 9 significant digits moves a number by at most half a unit in its 9th digit
    want = v.reshape(15, 4)
    np.testing.assert_allclose(got[:, 1:], want, rtol=5e-9, atol=0)
    np.testing.assert_array_equal(got[:, 1:], np.char.mod("%.9g", want).astype(float))
    np.testing.assert_allclose(got[:, 0], np.repeat(t, 3), rtol=5e-9, atol=0)
    assert got[0, 1] == 0.0 and rows[5][3] == "0.333333333"
    # the same numbers give the same bytes (no time stamp in the gzip header)
    again = tmp_path / "again.csv.gz"
    write_series(again, ["time_s", "node", "a", "b", "c", "d"], cols)
    assert again.read_bytes() == path.read_bytes()


def test_pandas_reads_a_series_table(tmp_path):
    pd = pytest.importorskip("pandas")
    rng = np.random.default_rng(3)
    t, nodes, v = _data(rng)
    path = tmp_path / "s.csv.gz"
    write_series(path, ["time_s", "node", "a", "b", "c", "d"],
                 [np.repeat(t, 3), np.tile(np.array(nodes, dtype=object), 5), *v.reshape(15, 4).T])
    df = pd.read_csv(path)
    assert list(df["node"]) == nodes * 5
    np.testing.assert_allclose(df[["a", "b", "c", "d"]].to_numpy(), v.reshape(15, 4), rtol=5e-9, atol=0)


def test_a_run_writes_its_history_compressed_and_equal_to_the_result(tmp_path):
    # a pipe with an arm and a head mass (shared_decks), a short half-sine pulse on the head
    model = read_text(PIPE_ARM + """case MODES modes { count = 4 }
case KICK history { force H = (0, 2 kN, 0), time = halfsine(0.05 s), duration = 0.1 s, step = 0.002 s,
                    record = "*" }
""")
    results = solve(model)
    write_results(results, tmp_path / "out", render=False, write="tables")
    files = {p.name for p in (tmp_path / "out").iterdir()}
    assert "history_KICK.csv.gz" in files and "history_KICK.csv" not in files
    (h,) = results.of_kind("history")
    got = np.loadtxt(tmp_path / "out" / "history_KICK.csv.gz", delimiter=",", skiprows=1,
                     usecols=(0, *range(2, 14)))
    m, r = len(h.t), len(h.record)
    want = np.concatenate([h.u, h.v[:, :, :3], h.a[:, :, :3]], axis=2).reshape(m * r, 12)
    np.testing.assert_allclose(got[:, 0], np.repeat(h.t, r), rtol=5e-9, atol=0)
    np.testing.assert_allclose(got[:, 1:], want, rtol=5e-9, atol=0)
