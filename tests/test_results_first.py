"""Results first: `quaver run` prints the summary's numbers before any picture is drawn, while
the results folder still moves into place only when everything is written."""

import os
import subprocess
import sys
from pathlib import Path

import pytest
from shared_decks import TINY_CANTILEVER

import fem.output.folder as folder
import fem.output.pictures as pictures
import fem.output.render as render
import fem.output.render_pool as render_pool
from fem.cli import main

ROOT = Path(__file__).parents[1]

# a one-member cantilever with a static and a modes case: fast enough for several runs
TINY = TINY_CANTILEVER


@pytest.fixture
def deck(tmp_path):
    d = tmp_path / "decks" / "tiny.deck"
    d.parent.mkdir()
    d.write_text(TINY)
    return d


def _state(path: Path) -> dict:
    return {p.relative_to(path).as_posix(): p.read_bytes() for p in sorted(path.rglob("*"))
            if p.is_file() and p.name != folder.MANIFEST}


def _leftovers(parent: Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if p.name.startswith(".quaver-"))


# ---------------------------------------------------------------- the numbers before the pictures

def test_the_numbers_are_printed_before_the_pictures_are_drawn(tmp_path, deck, capsys, monkeypatch):
    out = tmp_path / "proj"
    seen = {}

    def draw(results, staged, jobs, draw_modes=6, fps=12.0, video=False, pool=None):
        seen["printed"] = capsys.readouterr().out
        seen["in place"] = out.exists()
        seen["staged"] = sorted(p.name for p in staged.iterdir())
        return "2 pictures and animations in pictures/"
    monkeypatch.setattr(pictures, "draw_pictures", draw)
    assert main(["run", str(deck), "--out", str(out)]) == 0
    first = seen["printed"].splitlines()
    # every number and verdict of the summary is out while the pictures are being drawn ...
    assert first[0].startswith("tiny cantilever: 2 nodes, 1 members")
    assert any(" LOAD " in line and "max translation" in line for line in first)
    assert any(" MODES " in line and "first Hz" in line for line in first)
    assert first[-1] == "  self-checks: all pass"
    # ... results.json and then the tables are written (staged), and nothing is in place yet
    assert {"results.json", "modes.csv", "displacements.csv"} <= set(seen["staged"])
    assert not seen["in place"]
    # the closing lines follow once the folder is in place: the pictures' notice first
    assert capsys.readouterr().out.splitlines() == [
        "  2 pictures and animations in pictures/", f"results in {out}/",
        "Caution: Results support, and never replace, the judgement of a qualified engineer; local codes and "
        "licensed practice govern."]
    assert (out / "results.json").exists() and not _leftovers(tmp_path)


def test_the_summary_waits_for_results_json_alone(tmp_path, deck):
    # the caller's summary (staged) comes once results.json is written, before the tables, the
    # files for viewers and the rest (on the rack demo they take about a second, mostly gzip)
    from fem import read_deck, solve, write_results

    seen = {}

    def staged(doc):
        here = next(tmp_path.glob(".quaver-*"))
        seen["files"] = sorted(p.relative_to(here).as_posix() for p in here.rglob("*") if p.is_file())
        seen["cases"] = sorted(c["name"] for c in doc["cases"])
    written = write_results(solve(read_deck(deck)), tmp_path / "proj", render=False, staged=staged)
    assert seen["files"] == ["results.json"] and seen["cases"] == ["LOAD", "MODES"]
    assert (written.path / "modes.csv").is_file() and (written.path / "modes").is_dir()


def test_the_summary_is_one_text_whatever_the_pictures(tmp_path, deck, capsys, monkeypatch):
    # --no-render prints the same lines as a run that draws, bar the pictures' notice
    assert main(["run", str(deck), "--out", str(tmp_path / "a"), "--no-render"]) == 0
    plain = capsys.readouterr().out.splitlines()
    monkeypatch.setattr(pictures, "draw_pictures", lambda *a, **k: "2 pictures and animations in pictures/")
    assert main(["run", str(deck), "--out", str(tmp_path / "a")]) == 0
    drawn = capsys.readouterr().out.splitlines()
    assert plain.index("  pictures skipped (--no-render)") == drawn.index("  2 pictures and animations in pictures/")
    assert [x for x in plain if "pictures" not in x] == [x for x in drawn if "pictures" not in x]


def test_an_interrupt_while_drawing_keeps_the_earlier_results(tmp_path, deck, capsys, monkeypatch):
    out = tmp_path / "proj"
    assert main(["run", str(deck), "--out", str(out), "--no-render"]) == 0
    earlier = _state(out)
    deck.write_text(TINY.replace("1 kN", "2 kN"))

    def interrupted(*a, **k):
        raise KeyboardInterrupt
    monkeypatch.setattr(pictures, "draw_pictures", interrupted)
    capsys.readouterr()
    assert main(["run", str(deck), "--out", str(out)]) == 130
    got = capsys.readouterr()
    assert "first Hz" in got.out and "results in" not in got.out       # the numbers were shown
    assert got.err == f"interrupted: no results were written; the earlier results in {out} are as they were\n"
    assert _state(out) == earlier and not _leftovers(tmp_path)


def test_a_picture_failure_loses_no_results(tmp_path, deck, capsys, monkeypatch):
    def broken(*a, **k):
        raise RuntimeError("no context")
    monkeypatch.setattr(render, "can_render", lambda: (True, ""))
    monkeypatch.setattr(render_pool, "render_all", broken)
    out = tmp_path / "proj"
    assert main(["run", str(deck), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "  pictures skipped: RuntimeError: no context; results are complete\n" in text
    assert text.index("self-checks: all pass") < text.index("pictures skipped")
    assert (out / "results.json").exists() and (out / "report.html").exists() and not (out / "pictures").exists()


def _cli(*args, code=None):
    cmd = [sys.executable, "-c", code, *args] if code else [sys.executable, "-m", "fem", *args]
    return subprocess.Popen(cmd, cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT)), stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE)


def test_a_reader_that_stops_after_the_first_line_costs_no_results(tmp_path, deck):
    # `quaver run deck | head -1`: the reader goes away while the folder is still being written
    out = tmp_path / "proj"
    p = _cli("run", str(deck), "--out", str(out), "--no-render")
    assert p.stdout.readline().startswith(b"tiny cantilever")
    p.stdout.close()
    err = p.stderr.read().decode()
    assert p.wait(timeout=300) == 0
    assert "Traceback" not in err and "BrokenPipe" not in err and err == ""
    assert (out / "results.json").exists() and not _leftovers(tmp_path)


def test_a_pipe_broken_while_the_numbers_are_printed_costs_no_results(tmp_path, deck):
    # the numbers' printing meets a closed pipe: the rest of the text goes nowhere, the folder is written
    code = ("import sys, fem.output.summary as s\n"
            "def gone(*a, **k):\n    raise BrokenPipeError(32, 'Broken pipe')\n"
            "s.print_solved = gone\nfrom fem.cli import main\nsys.exit(main(sys.argv[1:]))\n")
    out = tmp_path / "proj"
    p = _cli("run", str(deck), "--out", str(out), "--no-render", code=code)
    stdout, stderr = p.communicate(timeout=300)
    assert p.returncode == 0 and stdout == b"" and stderr == b""
    assert (out / "results.json").exists() and not _leftovers(tmp_path)
