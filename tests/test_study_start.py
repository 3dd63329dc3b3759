"""How a local cluster's workers start (forked on Linux unless the user chose otherwise in Dask's
configuration), and what a study leaves behind: the temporary folder holding a worker's copy of
the deck goes with the process, forked or spawned, while its parent's copy stays; the study's
process keeps its environment."""

import multiprocessing as mp
import os
import subprocess
import sys
import time
from pathlib import Path

import pytest
from same import assert_same_columns as _same
from shared_decks import STUDY_CANTILEVER

from fem.study import engine, read_study_text, run_study
from fem.study.engine import START_ENV, start_method, wait_closed
from fem.study.work import Bundle, _folder

distributed = pytest.importorskip("distributed", reason="dask.distributed is not installed")

STUDY = 'deck "cant.deck"\nvary h in (80 mm, 90 mm, -1 mm, 100 mm, 110 mm)\n'
BUNDLE = Bundle("cant.deck", {"cant.deck": STUDY_CANTILEVER.encode()}, "0123456789abcdef")


def test_workers_fork_on_linux_unless_the_user_chose(monkeypatch):
    monkeypatch.delenv(START_ENV, raising=False)
    assert start_method() == ("fork" if sys.platform.startswith("linux") else "spawn")
    for method in ("spawn", "forkserver"):
        monkeypatch.setenv(START_ENV, method)
        assert start_method() == method


def _child_folder(q):
    q.put(str(_folder(BUNDLE)))


@pytest.mark.parametrize("method", ["fork", "spawn"])
def test_a_child_process_removes_its_own_copy_of_the_deck(method, tmp_path, monkeypatch):
    if method not in mp.get_all_start_methods():
        pytest.skip(f"no {method} on this platform")
    monkeypatch.setenv("TMPDIR", str(tmp_path))
    monkeypatch.setattr("tempfile.tempdir", None)
    mine = _folder(BUNDLE)
    ctx = mp.get_context(method)
    q = ctx.Queue()
    p = ctx.Process(target=_child_folder, args=(q,))
    p.start()
    theirs = q.get(timeout=60)
    p.join(60)
    assert p.exitcode == 0
    assert theirs != str(mine) and theirs.startswith(str(tmp_path))     # a copy of its own
    assert not (tmp_path / theirs).exists()                             # gone with the child
    assert (mine / "cant.deck").read_text() == STUDY_CANTILEVER         # the parent's stays


@pytest.mark.parametrize("method", [None, "spawn"])
def test_forked_and_spawned_workers_give_the_serial_numbers_and_leave_nothing_behind(method, tmp_path, monkeypatch):
    folder = tmp_path / "study"
    folder.mkdir()
    (folder / "cant.deck").write_text(STUDY_CANTILEVER)
    s = read_study_text(STUDY, "t.study", folder)
    serial = run_study(s, serial=True, progress=False)
    scratch = tmp_path / "tmp"
    scratch.mkdir()
    if method:
        monkeypatch.setenv(START_ENV, method)
    monkeypatch.setenv("TMPDIR", str(scratch))          # the workers' temporary folders
    monkeypatch.setattr("tempfile.tempdir", None)
    for name in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "PYTHONHASHSEED"):
        monkeypatch.delenv(name, raising=False)
    environment = dict(os.environ)
    local = run_study(s, workers=2, progress=False)
    wait_closed()
    # the nanny sets its workers' variables (BLAS threads 1 ...) here too: they are taken back
    assert dict(os.environ) == environment
    assert local.columns["status"] == ["ok", "ok", "refused", "ok", "ok"]
    _same(serial, local)
    assert (scratch / "dask-scratch-space").is_dir()     # the workers did use this folder
    assert not list(scratch.glob("quaver-study-*"))


STUCK = [False]        # while set, a process forked from this one hangs at once (see below)
if hasattr(os, "register_at_fork"):
    os.register_at_fork(after_in_child=lambda: STUCK[0] and time.sleep(3600))


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="workers are forked on Linux only")
def test_forked_workers_that_never_start_are_given_up_and_spawned(tmp_path, monkeypatch):
    # a worker stuck right after the fork, as a lock held at the fork by another thread of this
    # process would leave it: the cluster gives it up after FORK_TIMEOUT and spawns its workers
    folder = tmp_path / "study"
    folder.mkdir()
    (folder / "cant.deck").write_text(STUDY_CANTILEVER)
    s = read_study_text(STUDY, "t.study", folder)
    serial = run_study(s, serial=True, progress=False)
    monkeypatch.delenv(START_ENV, raising=False)
    monkeypatch.setattr(engine, "FORK_TIMEOUT", 3)        # the spawned ones keep START_TIMEOUT
    STUCK[0] = True
    try:
        t0 = time.perf_counter()
        local = run_study(s, workers=2, progress=False)
    finally:
        STUCK[0] = False
    wait_closed()
    assert local.engine.startswith("local cluster of 2 worker processes, spawned (forked ones did not start: "
                                   "a worker did not reach the scheduler within 3 s)")
    assert local.phases["start"] >= 3 and time.perf_counter() - t0 < 60
    _same(serial, local)


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="workers are forked on Linux only")
def test_a_script_without_a_main_guard_runs_its_study_once(tmp_path):
    # forked workers do not import the script that started them, so a study at a script's top
    # level runs once (spawned workers would each import it and start it again)
    (tmp_path / "cant.deck").write_text(STUDY_CANTILEVER)
    (tmp_path / "top.py").write_text(
        "from pathlib import Path\nfrom fem.study import read_study_text, run_study\n"
        "print('started')\n"
        "s = read_study_text('deck \"cant.deck\"\\nvary h in (80 mm, 90 mm)\\n', 't.study', Path('.'))\n"
        "r = run_study(s, workers=2, progress=False)\nprint(r.engine, r.columns['status'])\n")
    env = {k: v for k, v in os.environ.items() if k != START_ENV}
    env["PYTHONPATH"] = str(Path(__file__).resolve().parents[1])
    r = subprocess.run([sys.executable, "top.py"], cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)
    assert r.returncode == 0, r.stderr[-2000:]
    assert r.stdout.splitlines() == ["started", "local cluster of 2 worker processes ['ok', 'ok']"]
