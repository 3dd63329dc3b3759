"""The report's matplotlib plots are drawn while the render processes draw the pictures
(fem.output.pictures.pictures_and_plots), and the report made from them is the one the report
draws for itself."""

import threading

import pytest
from shared_decks import PIPE_ARM

import fem
from fem.output import pictures, report
from fem.output.results_json import write_results_json

DECK = PIPE_ARM + """case MODES modes { count = 4 }
case PUSH static { force H = (0, 2 kN, 0) }
case KICK history { force H = (0, 2 kN, 0), time = halfsine(0.1 s), duration = 0.3 s, step = 0.005 s,
                    damping = 2 percent, record = "*" }
"""


@pytest.fixture(scope="module")
def solved():
    return fem.solve(fem.read_text(DECK))


def test_plots_are_drawn_while_the_pictures_are(solved, tmp_path, monkeypatch):
    """The pictures' step waits (up to 20 s) for the plots to start: drawn one after the other,
    it would time out and record False."""
    started, seen = threading.Event(), {}
    drawn = report.draw_plots

    def slow_pictures(results, out, *args, **kw):
        seen["plots started while drawing"] = started.wait(20)
        seen["pool"] = kw.get("pool")
        return "pictures drawn"

    def plots(results, out):
        started.set()
        return drawn(results, out)

    monkeypatch.setattr(pictures, "draw_pictures", slow_pictures)
    monkeypatch.setattr(report, "draw_plots", plots)
    pool = object()                      # stands for render_pool.start_pool's processes
    notice, plotted = pictures.pictures_and_plots(solved, tmp_path, 2, pool=pool)
    assert seen == {"plots started while drawing": True, "pool": pool} and notice == "pictures drawn"
    assert {"MODES", "PUSH", "KICK"} <= set(plotted)
    assert all(f.is_file() and f.parent == tmp_path / "plots" for v in plotted.values() for f, _ in v)


def test_without_a_pool_the_report_draws_its_plots(solved, tmp_path, monkeypatch):
    monkeypatch.setattr(pictures, "draw_pictures", lambda *a, **k: "pictures drawn")
    assert pictures.pictures_and_plots(solved, tmp_path, 1, pool=None) == ("pictures drawn", None)


def test_a_failure_while_drawing_is_raised(solved, tmp_path, monkeypatch):
    def broken(*a, **k):
        raise RuntimeError("drawing failed")

    monkeypatch.setattr(pictures, "draw_pictures", broken)
    with pytest.raises(RuntimeError, match="drawing failed"):
        pictures.pictures_and_plots(solved, tmp_path, 2, pool=object())


def test_report_from_plots_drawn_before_is_the_same(solved, tmp_path):
    a, b = tmp_path / "a", tmp_path / "b"
    for out in (a, b):
        out.mkdir()
    doc = write_results_json(solved, a)
    report.report(solved, doc, a)
    report.report(solved, doc, b, plotted=report.draw_plots(solved, b))
    assert (a / "report.html").read_bytes() == (b / "report.html").read_bytes()
    assert sorted(p.name for p in (a / "plots").iterdir()) == sorted(p.name for p in (b / "plots").iterdir())


def test_gl_probe_starts_with_the_pool_and_runs_once(monkeypatch):
    """render.start_probe runs the OpenGL probe in a thread (while the tables are written);
    render.probed waits for that one instead of starting a second."""
    import subprocess
    import time

    from fem.output import render

    calls = []

    def fake_run(cmd, **kw):
        calls.append(cmd)
        time.sleep(0.3)
        return subprocess.CompletedProcess(cmd, 0, "", "")

    monkeypatch.delenv("QUAVER_NO_GL", raising=False)
    monkeypatch.setattr(render, "_PROBING", [])
    monkeypatch.setattr(render.subprocess, "run", fake_run)
    render.can_render.cache_clear()
    try:
        render.start_probe()
        render.start_probe()               # once a process
        assert render.probed() == (True, "")
        assert render.can_render() == (True, "")
    finally:
        render.can_render.cache_clear()
    assert len(calls) == 1
