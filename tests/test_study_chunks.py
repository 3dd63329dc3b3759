"""Variants sent to Dask in chunks (several a task): the same rows as one variant a task and as
the serial path, to the bit, and a variant refused inside a chunk reported in its own row while
the rest of its chunk solves. The reference is the serial path in this process."""

import numpy as np
import pytest
from same import assert_same_columns as _same
from shared_decks import STUDY_CANTILEVER

from fem.study import read_study_text, run_study
from fem.study.engine import GUIDED, MIN_CHUNK, chunks

distributed = pytest.importorskip("distributed", reason="dask.distributed is not installed")

# the studies' cantilever (tests/shared_decks.py) with a tip load; -1 mm is refused by the deck
CANTILEVER = STUDY_CANTILEVER + "case TIP static { force N6 = (0, 1 kN, -2 kN) }\n"
STUDY = ('deck "cant.deck"\nvary h in (80 mm, 90 mm, -1 mm, 100 mm, 110 mm, 120 mm, 130 mm)\n'
         'peak tip = TIP displacement N6 z\n')
STATUS = ["ok", "ok", "refused", "ok", "ok", "ok", "ok"]


def test_chunks_cover_the_variants_in_order_once():
    vs = list(range(23))
    for size in (1, 2, 5, 23, 40):
        got = chunks(vs, 2, size)
        assert [v for g in got for v in g] == vs
        assert all(len(g) == size for g in got[:-1]) and 0 < len(got[-1]) <= size
    # by default shrinking chunks, each 1/(GUIDED x workers) of the variants left and at least
    # MIN_CHUNK (the last may be shorter), in order, never an empty one
    for n, workers in ((200, 2), (1000, 3), (5, 2), (1, 4)):
        got = chunks(list(range(n)), workers)
        assert [v for g in got for v in g] == list(range(n))
        sizes = [len(g) for g in got]
        assert sizes == sorted(sizes, reverse=True) and sizes[-1] >= 1
        left = n
        for s in sizes[:-1]:
            assert s == max(-(-left // (GUIDED * workers)), MIN_CHUNK)
            left -= s
    assert [len(g) for g in chunks(list(range(200)), 2)] == [50, 38, 28, 21, 16, 12, 9, 7, 5, 4, 3, 2, 2, 2, 1]
    assert chunks([], 2) == []
    assert chunks(vs, 0, 0) == [[v] for v in vs]                # nonsense sizes fall back to one a task


@pytest.fixture(scope="module")
def study(tmp_path_factory):
    folder = tmp_path_factory.mktemp("chunks")
    (folder / "cant.deck").write_text(CANTILEVER)
    return read_study_text(STUDY, "t.study", folder)


@pytest.fixture(scope="module")
def cluster():
    """One local cluster of two worker processes for every chunk size (started once: 2-5 s)."""
    import logging
    import warnings

    from distributed import LocalCluster

    with warnings.catch_warnings():         # "port 8787 in use" when another cluster runs on this machine
        warnings.simplefilter("ignore", UserWarning)
        c = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                         dashboard_address=None, silence_logs=logging.ERROR)
    with c:
        yield c.scheduler_address


def test_chunked_unchunked_and_serial_rows_agree_to_the_bit(study, cluster):
    serial = run_study(study, serial=True, progress=False)
    assert serial.columns["status"] == STATUS
    assert serial.phases["tasks"] == 7 and serial.phases["solve"] > 0
    for size in (1, 3, 7):                  # one variant a task; the refused one mid-chunk; one task
        got = run_study(study, scheduler=cluster, chunk=size, progress=False)
        assert got.phases["tasks"] == -(-7 // size) and got.phases["workers"] == 2
        _same(serial, got)
        # the refusal is the variant's own, with the deck's message; its chunk's others solved
        row = got.results[2]
        assert row["status"] == "refused" and "h must be a positive length" in row["message"] and row["index"] == 2
        assert all(r["status"] == "ok" and r["modes"]["MODES"]["freq"].size == 3
                   for i, r in enumerate(got.results) if i != 2)
        assert got.phases["run"] > 0 and got.phases["overhead"] >= 0


def test_an_unexpected_failure_inside_a_chunk_is_that_variants_row_only(study, cluster):
    # a fault of our own code (not a refusal) in one variant, injected on the workers: the row of
    # that variant says 'error' with the exception, the other variants of its chunk solve
    from distributed import Client

    def inject(fail: bool):
        import fem.deck.reader as reader

        if fail:
            original = reader.read_deck

            def faulty(path, let=None, **kw):
                if let and let.get("h") == "110 mm":
                    raise ZeroDivisionError("injected")
                return original(path, let=let, **kw)

            faulty.original = original
            reader.read_deck = faulty
        else:
            reader.read_deck = getattr(reader.read_deck, "original", reader.read_deck)

    with Client(cluster) as client:
        client.run(inject, True)
        try:
            got = run_study(study, scheduler=cluster, chunk=7, progress=False)
        finally:
            client.run(inject, False)
    assert got.phases["tasks"] == 1
    assert got.columns["status"] == ["ok", "ok", "refused", "ok", "error", "ok", "ok"]
    assert got.results[4]["message"] == "ZeroDivisionError: injected"
    serial = run_study(study, serial=True, progress=False)
    for i in (0, 1, 3, 5, 6):
        np.testing.assert_array_equal(got.results[i]["modes"]["MODES"]["freq"],
                                      serial.results[i]["modes"]["MODES"]["freq"])


def test_the_command_line_sets_the_variants_a_task(study, cluster, capsys):
    from fem.cli import main

    deck = study.deck
    status = main(["study", str(deck), "--vary", "h in (80 mm, 90 mm, 100 mm, 110 mm, 120 mm)", "--scheduler",
                   cluster, "--chunk", "2", "--out", str(deck.parent / "cli")])
    text = capsys.readouterr().out
    assert status == 0 and "5 variants on scheduler" in text and "(3 tasks)" in text     # 2 + 2 + 1
    rows = (deck.parent / "cli" / "study.csv").read_text().splitlines()
    assert len(rows) == 6 and all(",ok," in r for r in rows[1:])
    for bad, said in ((["--chunk", "0"], "--chunk 0: give 1 or more"), (["--chunk", "2", "--serial"], "--serial")):
        status = main(["study", str(deck), "--vary", "h in (80 mm, 90 mm)", *bad])
        assert status == 2 and said in capsys.readouterr().err
