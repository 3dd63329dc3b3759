"""Offscreen renders: images of the requested size that show the motion; a missing OpenGL
context is reported in one line and skipped. Rendering runs in a child process so a broken GL
stack cannot take the test session down."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from fem.output.render import can_render

ROOT = Path(__file__).parents[1]
SMALL = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N4 = 300 kg
case TIP static { force N4 = (2 kN, 0, 0) }
case MODES modes { count = 2 }
case REL free { start = TIP, duration = 0.5 s, step = 0.01 s, damping = 2 percent }
"""

CHECK = r"""
import sys, json
import numpy as np
from PIL import Image
from pathlib import Path
from fem.deck.reader import read_deck
from fem.run import solve_all
from fem.output.render import render_modes, SIZE
from fem.output.vtk import shape_scale
m = read_deck(sys.argv[1])
_, others = solve_all(m)
out = Path(sys.argv[2])
moved = render_modes(out / "a", m, others[0], shape_scale(m), gif=False)
still = render_modes(out / "b", m, others[0], 0.0, gif=False)
a = np.asarray(Image.open(moved[0]).convert("RGB"), dtype=float)
b = np.asarray(Image.open(still[0]).convert("RGB"), dtype=float)
print(json.dumps({"size": list(Image.open(moved[0]).size), "want": list(SIZE),
                  "nonwhite": float((a.sum(axis=2) < 740).mean()), "diff": float(np.abs(a - b).mean())}))
"""


@pytest.fixture(scope="module")
def deck(tmp_path_factory):
    d = tmp_path_factory.mktemp("deck") / "small.deck"
    d.write_text(SMALL)
    return d


def test_renders_show_motion(deck, tmp_path):
    ok, why = can_render()
    if not ok:
        pytest.skip(why)
    r = subprocess.run([sys.executable, "-c", CHECK, str(deck), str(tmp_path)], capture_output=True,
                       text=True, timeout=300, cwd=ROOT)
    assert r.returncode == 0, r.stderr[-2000:]
    got = json.loads(r.stdout.strip().splitlines()[-1])
    assert got["size"] == got["want"]
    assert got["nonwhite"] > 0.005          # something is drawn
    assert got["diff"] > 0.5                # the deformed picture differs from the undeformed one


def test_run_writes_pictures_and_gifs(deck, tmp_path):
    ok, why = can_render()
    if not ok:
        pytest.skip(why)
    out = tmp_path / "res"
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out), "--jobs", "1"],
                       capture_output=True, text=True, timeout=600, cwd=ROOT)
    assert r.returncode == 0, r.stderr[-2000:]
    pics = sorted(p.name for p in (out / "pictures").iterdir())
    assert "MODES_mode_001_plane.png" in pics and "MODES_mode_002.gif" in pics and "REL.gif" in pics
    from PIL import Image
    gif = Image.open(out / "pictures" / "MODES_mode_001.gif")
    assert gif.n_frames >= 12               # 24 written; identical neighbours may be merged
    from fem.output.render import video_available
    if video_available():
        import imageio.v2 as imageio
        with imageio.get_reader(out / "pictures" / "MODES_mode_001.mp4") as rd:
            assert rd.count_frames() == 24
            assert rd.get_data(0).shape[:2] == (480, 640)


def test_no_gl_is_one_line_and_results_stay(deck, tmp_path):
    env = dict(os.environ, QUAVER_NO_GL="1")
    out = tmp_path / "res"
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out)],
                       capture_output=True, text=True, timeout=300, cwd=ROOT, env=env)
    assert r.returncode == 0, r.stderr[-2000:]
    lines = [ln for ln in r.stdout.splitlines() if "pictures skipped" in ln]
    assert len(lines) == 1 and "results are complete" in lines[0]
    assert (out / "results.json").exists() and not (out / "pictures").exists()
