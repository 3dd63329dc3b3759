"""`quaver run` end to end on the demo deck: files, self-checks, no half-written results."""

import csv
import json
from pathlib import Path

import numpy as np

from fem.analysis.static import load_vector
from fem.assembly import assemble
from fem.cli import main
from fem.deck.reader import read_deck

RACK = Path(__file__).parents[1] / "decks" / "rack.deck"
ROOT = Path(__file__).parents[1]


def test_run_writes_results_and_checks(tmp_path, capsys):
    out = tmp_path / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    doc = json.loads((out / "results.json").read_text())
    assert "qualified engineer" in doc["caution"]
    assert doc["model"]["mass_check_pass"]
    assert all(c["checks"]["equilibrium_pass"] for c in doc["cases"] if c["kind"] == "static")
    modal = next(c for c in doc["cases"] if c["kind"] == "modes")
    assert modal["checks"]["residual_pass"] and modal["checks"]["none_missed"]
    # self-weight reaction = total mass x g (Newton's second law, no source needed)
    dead = next(c for c in doc["cases"] if c["name"] == "DEAD")
    assert abs(dead["reaction_sum_N"][2] - doc["model"]["total_mass_kg"] * 9.81) < 1e-6 * dead["reaction_sum_N"][2]
    rows = list(csv.DictReader((out / "member_forces.csv").open()))
    assert {"case", "member", "end", "N", "Vy", "Vz", "T", "My", "Mz"} <= set(rows[0])
    assert "qualified engineer" in capsys.readouterr().out
    # combination is the factored sum of its cases
    disp = list(csv.DictReader((out / "displacements.csv").open()))
    get = {(r["case"], r["node"]): float(r["uz"]) for r in disp}
    node = "U3_0"
    expect = 1.35 * get[("DEAD", node)] + 1.5 * get[("PIPES", node)] + 0.9 * get[("WIND", node)]
    assert abs(get[("ULS", node)] - expect) <= 1e-12 * abs(expect)


def test_failed_run_keeps_previous_results(tmp_path):
    out = tmp_path / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    before = (out / "results.json").read_text()
    bad = tmp_path / "bad.deck"
    bad.write_text(RACK.read_text().replace("support G* fixed", "support G* (uz)"))
    text = bad.read_text()
    assert main(["run", str(bad), "--out", str(out), "--no-render"]) == 2        # a mechanism
    assert (out / "results.json").read_text() == before
    assert bad.read_text() == text                                # input untouched
    assert not any(p.name.startswith(".quaver-") for p in tmp_path.iterdir())


def test_nodal_loads_stay_finite_on_repeat():
    # regression: a broadcast scatter gave intermittent NaN; repeat to make a recurrence likely
    m = read_deck(RACK)
    a = assemble(m)
    for _ in range(50):
        for case in m.cases:
            f, _ = load_vector(m, a, case)
            assert np.isfinite(f).all()


def test_mast_deck_runs_with_passing_checks(tmp_path, capsys):
    deck = Path(__file__).parents[1] / "decks" / "mast.deck"
    assert main(["run", str(deck), "--out", str(tmp_path / "m"), "--no-render"]) == 0
    assert "coarse" not in capsys.readouterr().out
    doc = json.loads((tmp_path / "m" / "results.json").read_text())
    modal = next(c for c in doc["cases"] if c["kind"] == "modes")
    # a triangular mast is symmetric about its axis: the two first bending modes share a
    # frequency (physical fact for 3-fold symmetry); tolerance from round-off of the solve
    f = modal["frequency_Hz"]
    assert abs(f[0] - f[1]) < 1e-8 * f[0]
    # the demo's release step is under a tenth of the highest retained mode's period
    free = next(c for c in doc["cases"] if c["kind"] == "free")
    assert free["checks"]["warnings"] == []


def test_interrupted_run_keeps_previous_results(tmp_path, monkeypatch, capsys):
    import fem.output.report as report
    out = tmp_path / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    before = (out / "results.json").read_text()

    def boom(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(report, "report", boom)
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 130
    assert "interrupted" in capsys.readouterr().err
    assert (out / "results.json").read_text() == before
    assert not any(p.name.startswith(".quaver-") for p in tmp_path.iterdir())


def test_refuses_a_folder_that_is_not_a_result(tmp_path, capsys):
    other = tmp_path / "mine"
    other.mkdir()
    (other / "notes.txt").write_text("keep me")
    assert main(["run", str(RACK), "--out", str(other), "--no-render"]) == 2
    assert (other / "notes.txt").read_text() == "keep me"
    assert "not Quaver results" in capsys.readouterr().err
    deck = tmp_path / "d" / "rack.deck"
    deck.parent.mkdir()
    deck.write_text(RACK.read_text().replace('"records/synthetic_ground.csv"', '"g.csv"'))
    (deck.parent / "g.csv").write_text("0,0\n1,1\n")
    assert main(["run", str(deck), "--out", str(deck.parent), "--no-render"]) == 2
    assert deck.exists()


def test_quiet_when_not_a_terminal(tmp_path):
    # progress goes to a terminal only: piped output has no progress lines or bars
    import subprocess
    import sys
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(RACK), "--out", str(tmp_path / "o"), "--no-render"],
                       capture_output=True, text=True, timeout=300, cwd=Path(__file__).parents[1])
    assert r.returncode == 0
    assert "..." not in r.stderr and "it/s" not in r.stderr


def test_killed_run_keeps_previous_results_and_is_tidied(tmp_path):
    # A run killed with SIGKILL (no clean-up code runs) while it writes its temporary folder:
    # the previous results stay byte for byte, and the next run removes the dead run's folder.
    import os
    import signal
    import subprocess
    import sys
    import time

    out = tmp_path / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    before = (out / "results.json").read_bytes()
    proc = subprocess.Popen([sys.executable, "-m", "fem", "run", str(RACK), "--out", str(out), "--no-render"],
                            cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 120
    while not any(p.name.startswith(".quaver-") and any(p.iterdir()) for p in tmp_path.iterdir()
                  if p.is_dir()):
        assert proc.poll() is None, "the run ended before it began writing"
        assert time.monotonic() < deadline
        time.sleep(0.005)
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    assert (out / "results.json").read_bytes() == before
    assert any(p.name.startswith(".quaver-") for p in tmp_path.iterdir())   # left by the killed run
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    assert not any(p.name.startswith(".quaver-") for p in tmp_path.iterdir())


def test_results_moved_aside_by_a_killed_run_are_restored(tmp_path):
    # Killed between moving the previous results aside and the new ones in: the next run
    # starts by moving them back, so a failing next run still leaves them in place.
    import subprocess
    import sys

    from fem.output.folder import tidy_after_kill

    out = tmp_path / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    before = (out / "results.json").read_bytes()
    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()
    aside = tmp_path / f".quaver-{dead.pid}-old-x1x1x1x1"
    out.rename(aside)
    tidy_after_kill(out, str(out))
    assert (out / "results.json").read_bytes() == before and not aside.exists()


def _cli(*args):
    import subprocess
    import sys

    return subprocess.run([sys.executable, "-m", "fem", *args], capture_output=True, text=True,
                          timeout=300, cwd=Path(__file__).parents[1])


def test_unwritable_out_folder_is_a_clean_error(tmp_path):
    import os

    blocker = tmp_path / "plain.txt"
    blocker.write_text("not a folder")
    cases = [(str(blocker / "res"), f"{blocker} is a file, not a folder")]
    if os.path.isdir("/proc"):
        # procfs takes no new entries, even from root (chmod cannot make a folder unwritable for root)
        cases.append(("/proc/quaver-results", "its parent folder /proc does not take new files"))
    for out, why in cases:
        r = _cli("run", str(RACK), "--out", out, "--no-render")
        assert r.returncode == 2, r.stderr
        lines = r.stderr.strip().splitlines()
        assert len(lines) == 1 and "Traceback" not in r.stderr
        assert lines[0].startswith(f"error: cannot write the results folder {out}: {why}")
        assert lines[0].endswith("choose another --out")
        assert r.stdout == ""                                 # refused before solving
    assert blocker.read_text() == "not a folder"


def test_output_cut_short_by_a_pipe_is_no_traceback(tmp_path):
    # `quaver check deck | head -1`: the reader closes the pipe after one line
    import subprocess
    import sys

    deck = tmp_path / "many.deck"
    deck.write_text("node A = (0, 0, 0)\n" + "".join(f"node B{i} = (0, 0, 0)\n" for i in range(3000)))
    p = subprocess.Popen([sys.executable, "-m", "fem", "check", str(deck)], cwd=ROOT,
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    p.stdout.readline()
    p.stdout.close()
    err = p.stderr.read().decode()
    assert p.wait(timeout=120) == 0
    assert "Traceback" not in err and "BrokenPipe" not in err


def test_exit_status_says_whether_the_checks_passed(tmp_path, capsys):
    # 0 with every check passing; 1 when an effective-mass target is not met within its cap
    deck = tmp_path / "t.deck"
    body = RACK.read_text().replace('"records/synthetic_ground.csv"', '"g.csv"')
    (tmp_path / "g.csv").write_text("0,0\n1,1\n")
    deck.write_text(body)
    assert main(["run", str(deck), "--out", str(tmp_path / "a"), "--no-render"]) == 0
    assert "self-checks: all pass" in capsys.readouterr().out
    deck.write_text(body + "case LOW modes { target = (99.9 percent, 99.9 percent, 0), max = 3 }\n")
    assert main(["run", str(deck), "--out", str(tmp_path / "b"), "--no-render"]) == 1
    assert "effective-mass target not met in LOW" in capsys.readouterr().out
