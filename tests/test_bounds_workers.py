"""Render worker processes never outlive the run that started them: a SIGKILL of the run ends
them within a few seconds (and its output pipe closes), and Ctrl-C (SIGINT to the process
group) ends the whole run within a few seconds with the interrupt message. Real processes:
`python -m fem run` on a small deck with pictures, its workers found by a marker in their
environment. Skipped where no OpenGL context can be made."""

import os
import signal
import subprocess
import sys
import threading
import time
import uuid
from pathlib import Path

import pytest
from interrupts import sigint_as_at_a_terminal

from fem.output.render import can_render

ROOT = Path(__file__).parents[1]
# a 6 m pipe cantilever with 6 modes and a free case: several seconds of drawing per worker
DECK = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..8 { node N[i] = (0, 0, i*0.75 m) }
for i in 0..7 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N8 = 300 kg
case TIP static { force N8 = (2 kN, 0, 0) }
case MODES modes { count = 6 }
case REL free { start = TIP, duration = 0.5 s, step = 0.01 s, damping = 2 percent }
"""
GONE_WITHIN = 10.0      # s; the workers check their parent every 0.5 s and the kernel acts at once
STOP_WITHIN = 5.0       # s for the run to end after Ctrl-C (the aim is 1-2 s; loaded CI machines)


def _marked(mark: str) -> list[int]:
    """Pids of live processes whose environment holds QUAVER_TEST_MARK=mark."""
    found = []
    needle = f"QUAVER_TEST_MARK={mark}".encode()
    for d in Path("/proc").iterdir():
        if not d.name.isdigit():
            continue
        try:
            env = (d / "environ").read_bytes()
            state = (d / "stat").read_text().rsplit(")", 1)[1].split()[0]
        except OSError:
            continue
        if needle in env.split(b"\0") and state != "Z":
            found.append(int(d.name))
    return found


def _workers(parent: int) -> list[int]:
    """Pids of the spawned children of `parent` (the render pool's processes)."""
    out = []
    for d in Path("/proc").iterdir():
        if not d.name.isdigit():
            continue
        try:
            ppid = int((d / "stat").read_text().rsplit(")", 1)[1].split()[1])
            cmd = (d / "cmdline").read_bytes()
        except (OSError, ValueError, IndexError):
            continue
        if ppid == parent and b"spawn_main" in cmd:
            out.append(int(d.name))
    return out


def _start(tmp_path, mark):
    deck = tmp_path / "tall.deck"
    deck.write_text(DECK)
    env = dict(os.environ, QUAVER_TEST_MARK=mark, PYTHONPATH=str(ROOT))
    env.pop("QUAVER_NO_GL", None)
    return subprocess.Popen([sys.executable, "-m", "fem", "run", str(deck), "--out", str(tmp_path / "res"),
                             "--jobs", "2"], cwd=ROOT, env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, start_new_session=True, preexec_fn=sigint_as_at_a_terminal)


def _wait_for_workers(proc, count: int = 2, timeout: float = 240.0) -> list[int]:
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if proc.poll() is not None:
            pytest.fail(f"the run ended (status {proc.returncode}) before drawing: "
                        f"{proc.stderr.read().decode()[-2000:]}")
        w = _workers(proc.pid)
        if len(w) >= count:
            time.sleep(1.0)       # past their start-up, into drawing
            return w
        time.sleep(0.05)
    pytest.fail("no render workers appeared")


def _drain(stream, done: threading.Event) -> None:
    """Read a pipe to its end (all writers closed it) and signal that."""
    while stream.read(65536):
        pass
    done.set()


@pytest.fixture
def mark():
    if not sys.platform.startswith("linux"):
        pytest.skip("finds processes through /proc")
    ok, why = can_render()
    if not ok:
        pytest.skip(why)
    m = uuid.uuid4().hex
    yield m
    for pid in _marked(m):       # never leave a process behind, whatever the outcome
        try:
            os.kill(pid, signal.SIGKILL)
        except OSError:
            pass


def test_workers_die_with_a_killed_run(tmp_path, mark):
    proc = _start(tmp_path, mark)
    workers = _wait_for_workers(proc)
    closed = threading.Event()
    threading.Thread(target=_drain, args=(proc.stdout, closed), daemon=True).start()
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=30)
    end = time.monotonic() + GONE_WITHIN
    while _marked(mark) and time.monotonic() < end:
        time.sleep(0.1)
    left = _marked(mark)
    assert not left, f"still alive {GONE_WITHIN} s after the run was killed: {left} (workers were {workers})"
    # nothing holds the run's stdout any more: a `| tee log` ends
    assert closed.wait(5.0)


@pytest.mark.parametrize("group", [True, False], ids=["ctrl-c-to-group", "sigint-to-run-only"])
def test_ctrl_c_ends_the_drawing_run_quickly(tmp_path, mark, group):
    proc = _start(tmp_path, mark)
    _wait_for_workers(proc)
    t0 = time.monotonic()
    # Ctrl-C at a terminal signals the whole process group; `kill -INT` only the run
    (os.killpg if group else os.kill)(proc.pid, signal.SIGINT)
    try:
        proc.wait(timeout=60)
    except subprocess.TimeoutExpired:
        pytest.fail("the run did not end within 60 s of Ctrl-C")
    took = time.monotonic() - t0
    err = proc.stderr.read().decode()
    assert proc.returncode == 130, err[-2000:]
    assert "interrupted" in err.splitlines()[-1], err[-4000:]
    assert took < STOP_WITHIN, f"the run took {took:.1f} s to end after Ctrl-C"
    end = time.monotonic() + GONE_WITHIN
    while _marked(mark) and time.monotonic() < end:
        time.sleep(0.1)
    assert not _marked(mark)
    assert not (tmp_path / "res").exists()        # nothing half-drawn was moved into place
