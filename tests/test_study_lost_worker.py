"""A worker process lost while it runs a chunk of variants: the study finishes, every variant
either solved on another worker (to the bit of the serial path) or reported as failed in its own
row. The worker is killed from inside a variant (os._exit in a hook a worker plugin installs in
every worker process, restarted ones too), as the kernel's out-of-memory killer would."""

import logging
import warnings

import numpy as np
import pytest
from shared_decks import STUDY_CANTILEVER

from fem.study import read_study_text, run_study
from fem.study.engine import QUIET_CLUSTER

distributed = pytest.importorskip("distributed", reason="dask.distributed is not installed")

CANTILEVER = STUDY_CANTILEVER           # tests/shared_decks.py


def _study(folder, values):
    return read_study_text(f'deck "cant.deck"\nvary h in ({", ".join(values)})\n', "t.study", folder)


@pytest.fixture(scope="module")
def setup(tmp_path_factory):
    """The study's folder, the marker file, and a local cluster of two workers with the engine's own
    settings (a chunk lost with its worker is sent again one variant a task) whose workers die in the
    variant h = 120 mm always, and in h = 110 mm the first time only (a marker file says so)."""
    import dask
    from distributed import Client, LocalCluster
    from distributed.diagnostics.plugin import WorkerPlugin

    folder = tmp_path_factory.mktemp("lost")
    (folder / "cant.deck").write_text(CANTILEVER)
    marker = folder / "died-once"

    class Killer(WorkerPlugin):
        def setup(self, worker):
            import os

            import fem.deck.reader as reader

            original = reader.read_deck

            def dying(path, let=None, **kw):
                h = (let or {}).get("h")
                if h == "120 mm" or (h == "110 mm" and not marker.exists()):
                    marker.touch()
                    os._exit(3)
                return original(path, let=let, **kw)

            reader.read_deck = dying

    with dask.config.set(QUIET_CLUSTER), warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)
        # the workers' temporary folders (the deck's copies a killed worker leaves) in pytest's
        cluster = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=None, silence_logs=logging.CRITICAL,
                               env={"TMPDIR": str(folder)})
    with cluster, Client(cluster) as client:
        client.register_plugin(Killer())
        yield folder, marker, cluster.scheduler_address


def _freqs(result, i):
    return result.results[i]["modes"]["MODES"]["freq"]


def test_a_chunk_whose_worker_dies_once_is_solved_on_another(setup):
    folder, marker, address = setup
    marker.unlink(missing_ok=True)
    study = _study(folder, ["70 mm", "80 mm", "90 mm", "100 mm", "110 mm", "130 mm"])
    got = run_study(study, scheduler=address, chunk=3, progress=False)
    assert marker.exists()                                  # a worker did die, in the chunk of h = 110 mm
    assert got.columns["status"] == ["ok"] * 6 and got.phases["tasks"] == 2
    serial = run_study(study, serial=True, progress=False)
    for i in range(6):
        np.testing.assert_array_equal(_freqs(got, i), _freqs(serial, i))


def test_a_variant_that_kills_every_worker_is_reported_and_its_chunk_solves(setup):
    folder, marker, address = setup
    marker.touch()
    study = _study(folder, ["80 mm", "90 mm", "120 mm", "100 mm"])
    got = run_study(study, scheduler=address, chunk=4, progress=False)
    assert got.columns["status"] == ["ok", "ok", "error", "ok"] and got.failed == [2]
    assert got.results[2]["message"].startswith("its worker was lost while it ran (KilledWorker")
    serial = run_study(_study(folder, ["80 mm", "90 mm", "100 mm"]), serial=True, progress=False)
    for i, j in ((0, 0), (1, 1), (3, 2)):
        np.testing.assert_array_equal(_freqs(got, i), _freqs(serial, j))
