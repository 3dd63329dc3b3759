"""Studies on dask.distributed: a local cluster of worker processes, and a scheduler and two
workers started here as separate processes on 127.0.0.1, give the serial path's numbers."""

import os
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest
from same import assert_same_columns as _same
from shared_decks import STUDY_CANTILEVER

from fem.study import read_study_text, run_study

distributed = pytest.importorskip("distributed", reason="dask.distributed is not installed")

# the studies' cantilever (tests/shared_decks.py) with a tip load; -1 mm is refused by the deck
CANTILEVER = STUDY_CANTILEVER + "case TIP static { force N6 = (0, 1 kN, -2 kN) }\n"
STUDY = 'deck "cant.deck"\nvary h in (80 mm, 95 mm, 105 mm, -1 mm, 120 mm)\npeak tip = TIP displacement N6 z\n'


@pytest.fixture(scope="module")
def serial_result(tmp_path_factory):
    folder = tmp_path_factory.mktemp("study")
    (folder / "cant.deck").write_text(CANTILEVER)
    s = read_study_text(STUDY, "t.study", folder)
    return s, run_study(s, serial=True, progress=False)


def test_a_local_cluster_gives_the_serial_numbers(serial_result):
    s, serial = serial_result
    local = run_study(s, workers=2, progress=False)
    assert local.engine.startswith("local cluster of 2")
    assert local.columns["status"] == ["ok", "ok", "ok", "refused", "ok"]
    _same(serial, local)


def _free_port() -> int:
    with socket.socket() as so:
        so.bind(("127.0.0.1", 0))
        return so.getsockname()[1]


@pytest.fixture(scope="module")
def scheduler(tmp_path_factory):
    """`dask scheduler` and two `dask worker` processes on 127.0.0.1 (random free ports, no
    dashboard), stopped at teardown. The workers import fem from this checkout (PYTHONPATH)."""
    logs = tmp_path_factory.mktemp("dask")
    port = _free_port()
    address = f"tcp://127.0.0.1:{port}"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(Path(__file__).resolve().parents[1]),
                                                      os.environ.get("PYTHONPATH", "")]),
               TMPDIR=str(logs))            # where the workers write their copies of the deck
    cmd = [sys.executable, "-m", "dask"]
    procs = [subprocess.Popen(cmd + ["scheduler", "--host", "127.0.0.1", "--port", str(port), "--no-dashboard"],
                              stdout=subprocess.DEVNULL, stderr=open(logs / "scheduler.log", "w"), env=env)]
    for k in range(2):
        procs.append(subprocess.Popen(cmd + ["worker", address, "--host", "127.0.0.1", "--nthreads", "1",
                                             "--no-dashboard", "--name", f"w{k}"],
                                      stdout=subprocess.DEVNULL, stderr=open(logs / f"worker{k}.log", "w"), env=env))
    try:
        from distributed import Client

        deadline = time.monotonic() + 90
        client = None
        while client is None:
            try:
                client = Client(address, timeout="5s")
            except OSError:
                if time.monotonic() > deadline or procs[0].poll() is not None:
                    pytest.skip(f"the dask scheduler did not start: {(logs / 'scheduler.log').read_text()[-500:]}")
        try:
            client.wait_for_workers(2, timeout=90)
        except TimeoutError:
            pytest.skip("the two dask workers did not join: " + (logs / "worker0.log").read_text()[-500:])
        finally:
            client.close()
        yield address
    finally:
        # the workers first, and only then the scheduler: a worker whose scheduler goes away
        # while it closes hangs until its nanny kills it (measured 8 s), skipping its teardown
        for group in (procs[1:], procs[:1]):
            for p in group:
                p.terminate()
            for p in group:
                try:
                    p.wait(timeout=20)
                except subprocess.TimeoutExpired:
                    p.kill()
                    p.wait()
    # the workers, ended by SIGTERM, closed and removed their copies of the deck (the finalizer
    # in fem.study.work._folder runs as a worker process ends)
    assert not list(logs.glob("quaver-study-*"))


def test_a_started_scheduler_and_two_workers_give_the_local_numbers(serial_result, scheduler):
    s, serial = serial_result
    remote = run_study(s, scheduler=scheduler, progress=False)
    assert remote.engine == f"scheduler {scheduler} (2 workers)"
    _same(serial, remote)


def test_the_rack_on_a_local_cluster_gives_the_serial_numbers_to_the_bit():
    # a demo-sized model (the rack, its 46 modes and the pump's sweep) at two bay lengths: the
    # serial run's solve holds OpenBLAS to one thread as the workers hold their BLAS, so the two
    # agree to the bit (before, the serial run's two BLAS threads left 1.8e-12 relative)
    text = ('study "bay"\ndeck "rack.deck"\ncases MODES, PUMP\nvary bay in (5 m, 7 m)\n'
            'track 6 modes of MODES against previous\npeak skid = PUMP displacement L2_0 y\n')
    s = read_study_text(text, "bay.study", Path(__file__).parents[1] / "decks")
    serial = run_study(s, serial=True, progress=False)
    assert serial.columns["status"] == ["ok", "ok"]
    _same(serial, run_study(s, workers=2, progress=False))
