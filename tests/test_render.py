"""Offscreen renders: images of the requested size that show the motion; a missing OpenGL
context is reported in one line and skipped. Rendering runs in a child process so a broken GL
stack cannot take the test session down."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from drawing import drawn

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
from fem import solve
from fem.output.render import render_modes, PICTURE_FIELD
from fem.output.vtk import shape_scale
m = read_deck(sys.argv[1])
others = solve(m).modal
out = Path(sys.argv[2])
moved = render_modes(out / "a", m, others[0], shape_scale(m), animate=False)
still = render_modes(out / "b", m, others[0], 0.0, animate=False)
a = np.asarray(Image.open(moved[0]).convert("RGB"), dtype=float)
b = np.asarray(Image.open(still[0]).convert("RGB"), dtype=float)
h, w, _ = a.shape
x0, y0, x1, y1 = PICTURE_FIELD
field = np.zeros((h, w), bool)
field[int((1 - y1) * h):int((1 - y0) * h), int(x0 * w):int(x1 * w)] = True
drawn = ((a.sum(axis=2) < 740) | (b.sum(axis=2) < 740)) & field      # the model, either state
rows, cols = np.nonzero(drawn)
box = (slice(rows.min(), rows.max() + 1), slice(cols.min(), cols.max() + 1))
diff = np.abs(a - b).sum(axis=2)
edge = a[: int(0.8 * h), -3:]                  # right edge above the axes marker
print(json.dumps({"size": list(Image.open(moved[0]).size),
                  "nonwhite": float((a.sum(axis=2) < 740).mean()),
                  "model_changed": float((diff[box] > 30).mean()),
                  "outside_model": float(diff[~field].mean()),
                  "edge_white": bool((edge > 250).all()),
                  "bar_colours": int(((a[:, int(x1 * w):, 2] - a[:, int(x1 * w):, 0]) > 60).sum())}))
"""


@pytest.fixture(scope="module")
def deck(tmp_path_factory):
    d = tmp_path_factory.mktemp("deck") / "small.deck"
    d.write_text(SMALL)
    return d


def test_renders_show_motion(deck, tmp_path):
    got = drawn(CHECK, deck, tmp_path)
    assert got["size"] == [720, 960]        # a 6 m cantilever is tall: portrait
    assert got["nonwhite"] > 0.005          # something is drawn
    # inside the model's region the deformed picture differs from the undeformed one (the
    # tip moves 5 % of the height, several member widths); outside it (caption, colour bar,
    # axes marker) the two are the same picture
    assert got["model_changed"] > 0.02
    assert got["outside_model"] < 1.0
    # the colour bar (cividis blues, right of the model's field) is drawn and ends inside the frame
    assert got["bar_colours"] > 200 and got["edge_white"]


def test_run_writes_pictures_and_animations(deck, tmp_path):
    ok, why = can_render()
    if not ok:
        pytest.skip(why)
    out = tmp_path / "res"
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out), "--jobs", "1",
                        "--fps", "5", "--video"], capture_output=True, text=True, timeout=600, cwd=ROOT)
    assert r.returncode == 0, r.stderr[-2000:]
    pics = sorted(p.name for p in (out / "pictures").iterdir())
    assert "MODES_mode_001_plane.png" in pics and "MODES_mode_002.webp" in pics and "REL.webp" in pics
    assert not any(p.endswith(".gif") for p in pics)            # each animation is written once, as WebP
    import h5py
    import numpy as np
    from PIL import Image

    from fem.analysis.free_case import ANIMATED
    from fem.output.render import MODE_FRAMES
    anim = Image.open(out / "pictures" / "MODES_mode_001.webp")
    assert anim.n_frames == MODE_FRAMES == 16    # each frame's time caption differs, so none is merged
    # the colour bar stays inside the smaller animation frames too: the right edge is white
    # above the axes marker
    frame = np.asarray(anim.convert("RGB"), dtype=float)
    assert (frame[: int(0.8 * frame.shape[0]), -3:] > 250).all()
    assert ((frame[:, int(0.8 * frame.shape[1]):, 2] - frame[:, int(0.8 * frame.shape[1]):, 0]) > 60).sum() > 100
    report = (out / "report.html").read_text(encoding="utf-8")
    assert "mode 1, " in report and "isometric view" in report and "one cycle" in report
    rel = Image.open(out / "pictures" / "REL.webp")
    rel.seek(1)
    rel.load()
    assert rel.info["duration"] == 200      # --fps 5: 200 ms a frame
    doc = json.loads((out / "results.json").read_text())
    with h5py.File(out / "response" / "REL.vtkhdf") as h5:     # one file, a step per frame
        assert rel.n_frames == len(h5["VTKHDF/Steps/Values"]) <= ANIMATED    # a short run: played whole
    # the time caption sits in the lower-left corner (bottom 12 % of the height, left third);
    # it changes from frame to frame while the structure above it is drawn elsewhere
    caps = []
    for k in (0, 1, rel.n_frames - 1):
        rel.seek(k)
        im = np.asarray(rel.convert("L"), dtype=float)
        h, w = im.shape
        caps.append(im[int(0.88 * h):, : w // 3])
    assert (caps[0] < 128).any()                                # dark text on the white ground
    assert np.abs(caps[0] - caps[1]).mean() > 0.5 and np.abs(caps[1] - caps[2]).mean() > 0.5
    assert doc["cases"][-1]["name"] == "REL"
    # the response picture carries its colour bar (true displacement, m) at the right, inside
    # the frame: the bar's dark-blue foot shows there and the right edge stays white
    peak = np.asarray(Image.open(out / "pictures" / "REL_peak.png").convert("RGB"), dtype=float)
    right = peak[: int(0.8 * peak.shape[0]), int(0.8 * peak.shape[1]):]
    assert ((right[..., 2] - right[..., 0]) > 60).sum() > 100
    assert (peak[: int(0.8 * peak.shape[0]), -3:] > 250).all()
    from fem.output.animation import video_available
    if video_available():
        import imageio.v2 as imageio
        with imageio.get_reader(out / "pictures" / "MODES_mode_001.mp4") as rd:
            assert rd.count_frames() == MODE_FRAMES
            assert rd.get_data(0).shape[:2] == (640, 480)     # portrait, rows x columns


def test_no_gl_is_one_line_and_results_stay(deck, tmp_path):
    env = dict(os.environ, QUAVER_NO_GL="1")
    out = tmp_path / "res"
    r = subprocess.run([sys.executable, "-m", "fem", "run", str(deck), "--out", str(out)],
                       capture_output=True, text=True, timeout=300, cwd=ROOT, env=env)
    assert r.returncode == 0, r.stderr[-2000:]
    lines = [ln for ln in r.stdout.splitlines() if "pictures skipped" in ln]
    assert len(lines) == 1 and "results are complete" in lines[0]
    assert (out / "results.json").exists() and not (out / "pictures").exists()


# what a machine without a usable OpenGL stack prints: VTK's coloured log lines, an object
# address, then the Python error of the probe
NOISY_PROBE = r"""
import sys
sys.stderr.write("\x1b[0m\x1b[31m2026-12-03 05:00:00.000 (   0.120s) [    7F3A2B1C0740]"
                 "vtkEGLRenderWindow.cxx:382    ERR| vtkEGLRenderWindow (0x55d0c0ffee00): "
                 "Could not initialize a device. Exiting...\x1b[0m\n\n")
sys.stderr.write("RuntimeError: \x1b[1mno EGL display\x1b[0m\r\n")
sys.exit(1)
"""

RESULT_FILES = ("results.json", "displacements.csv", "reactions.csv", "member_forces.csv", "modes.csv",
                "mode_shapes.csv", "free_REL.csv.gz", "report.html", "modes/MODES_modes.vtkhdf", "response/REL.vtkhdf")


def _run_in_process(deck, out, capsys):
    from fem.cli import main

    assert main(["run", str(deck), "--out", str(out), "--jobs", "1"]) == 0
    return capsys.readouterr().out


def _assert_complete(out, notice):
    for f in RESULT_FILES:
        assert (out / f).is_file(), f
    doc = json.loads((out / "results.json").read_text())
    assert {c["kind"] for c in doc["cases"]} == {"static", "modes", "free"}
    assert not (out / "pictures").exists()          # no half-drawn pictures left behind
    report = (out / "report.html").read_text(encoding="utf-8")
    warn = report.split("id='warnings'", 1)[1].split("<h2", 1)[0]
    assert "pictures skipped" in warn and notice.split(":", 1)[1][:20].strip() in warn


def test_failed_gl_probe_is_one_clean_line(deck, tmp_path, monkeypatch, capsys):
    from fem.output import render

    monkeypatch.delenv("QUAVER_NO_GL", raising=False)
    monkeypatch.setattr(render, "_PROBE", NOISY_PROBE)
    render.can_render.cache_clear()
    try:
        out = tmp_path / "res"
        text = _run_in_process(deck, out, capsys)
    finally:
        render.can_render.cache_clear()
    lines = [ln for ln in text.splitlines() if "pictures skipped" in ln]
    assert len(lines) == 1
    line = lines[0].strip()
    assert line == "pictures skipped: no OpenGL context could be created (RuntimeError: no EGL display); " \
                   "results are complete"
    assert "\x1b" not in text and "\r" not in text
    _assert_complete(out, line)


def test_noisy_probe_reason_keeps_the_message_only():
    from fem.output.render import one_line

    vtk_only = ("\x1b[31m2026-12-03 05:00:00.000 (   0.120s) [    7F3A2B1C0740]vtkEGLRenderWindow.cxx:382"
                "    ERR| vtkEGLRenderWindow (0x55d0c0ffee00): Could not initialize a device.\x1b[0m\n")
    assert one_line(vtk_only) == "vtkEGLRenderWindow: Could not initialize a device."
    assert one_line("") == "no message"
    assert len(one_line("x" * 500)) == 160


def test_failure_while_drawing_keeps_results(deck, tmp_path, monkeypatch, capsys):
    from fem.output import render, render_pool

    def broken(*args, **kwargs):
        (args[0]).mkdir(parents=True, exist_ok=True)
        (args[0] / "MODES_mode_001_plane.png").write_bytes(b"half")     # a picture cut short
        raise RuntimeError("\x1b[31mvtkOpenGLRenderWindow: failed\nto make current\x1b[0m")

    monkeypatch.setattr(render, "can_render", lambda: (True, ""))
    monkeypatch.setattr(render_pool, "render_all", broken)
    out = tmp_path / "res"
    text = _run_in_process(deck, out, capsys)
    lines = [ln.strip() for ln in text.splitlines() if "pictures skipped" in ln]
    assert lines == ["pictures skipped: RuntimeError: vtkOpenGLRenderWindow: failed to make current; "
                     "results are complete"]
    assert "\x1b" not in text
    _assert_complete(out, lines[0])


# a symmetric table: four equal columns at the corners of a 4 m square, a stiff top frame and
# equal corner masses; the centre lies on the vertical axis through the origin
TABLE = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section C = pipe(od = 114.3 mm, wall = 6 mm)
section B = pipe(od = 273 mm, wall = 10 mm)
node A0 = (-2 m, -2 m, 0)
node B0 = (2 m, -2 m, 0)
node C0 = (2 m, 2 m, 0)
node D0 = (-2 m, 2 m, 0)
node A1 = (-2 m, -2 m, 3 m)
node B1 = (2 m, -2 m, 3 m)
node C1 = (2 m, 2 m, 3 m)
node D1 = (-2 m, 2 m, 3 m)
member CA : A0 -> A1 beam C S
member CB : B0 -> B1 beam C S
member CC : C0 -> C1 beam C S
member CD : D0 -> D1 beam C S
member AB : A1 -> B1 beam B S
member BC : B1 -> C1 beam B S
member CDt : C1 -> D1 beam B S
member DA : D1 -> A1 beam B S
support A0 fixed
support B0 fixed
support C0 fixed
support D0 fixed
mass A1 = 2 t
mass B1 = 2 t
mass C1 = 2 t
mass D1 = 2 t
case MODES modes { count = 3, reference = (0, 0, 0) }
"""


def test_torsional_mode_is_named_a_twist(tmp_path):
    """The table's three lowest modes are two equal sways and a twist about the vertical
    axis: its plan is symmetric about both axes through the centre of mass, so lateral and
    torsional motions uncouple (a symmetry argument, no source needed). The solver's own
    participations confirm which mode is the twist: all the RZ effective mass about the
    centre and none in X or Y; the sways none in RZ."""
    import numpy as np

    from fem import solve
    from fem.analysis.motion import dominant_direction
    from fem.deck.reader import read_deck

    d = tmp_path / "table.deck"
    d.write_text(TABLE)
    model = read_deck(d)
    (modes,) = solve(model).modal
    names = [dominant_direction(modes.shapes[:, :, j], model.coords)[0] for j in range(3)]
    frac = np.nan_to_num(modes.part.fraction)
    twist = int(np.argmax(frac[:, 5]))
    assert frac[twist, 5] > 0.99 and frac[twist, :2].max() < 1e-8   # a pure torsional mode
    assert names[twist] == "twist about z"
    sways = [j for j in range(3) if j != twist]
    assert all(names[j] in ("X", "Y") for j in sways)
    assert all(frac[j, 5] < 1e-8 for j in sways)


def test_twist_of_a_shaft_on_its_own_axis():
    """Nodes on one vertical line: no translation, rotation about z only: still a twist; the
    same line swaying in Y is 'Y'."""
    import numpy as np

    from fem.analysis.motion import dominant_direction

    coords = np.c_[np.zeros(5), np.zeros(5), np.linspace(0, 4, 5)]
    shape = np.zeros((5, 6))
    shape[:, 5] = np.linspace(0, 1, 5)
    assert dominant_direction(shape, coords)[0] == "twist about z"
    shape[:, 5] = 0
    shape[:, 1] = np.linspace(0, 1, 5) ** 2
    assert dominant_direction(shape, coords)[0] == "Y"


def test_the_gl_probe_needs_vtk_alone_and_says_why_it_fails(monkeypatch):
    # the probe opens the kind of offscreen window the pictures use, on VTK alone (pyvista's
    # import and a plotter tripled its cost); an X window without an X server cannot be made,
    # and the probe's one line says so
    from fem.output import render

    assert "pyvista" not in render._PROBE
    monkeypatch.delenv("QUAVER_NO_GL", raising=False)
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.setenv("VTK_DEFAULT_OPENGL_WINDOW", "vtkXOpenGLRenderWindow")
    render.can_render.cache_clear()
    try:
        ok, why = render.can_render()
    finally:
        render.can_render.cache_clear()
    if ok:
        pytest.skip("this machine makes an offscreen window without an X server (an OSMesa fallback)")
    assert why.startswith("no OpenGL context could be created (") and "\n" not in why and "\x1b" not in why


def test_the_drawing_processes_test_opengl_themselves(monkeypatch):
    # with a pool, its processes' start-up (each makes its offscreen context) answers whether
    # OpenGL works: the probe's own process is not started
    from fem.output import render, render_pool

    if not can_render()[0]:
        pytest.skip(can_render()[1])
    calls = []
    monkeypatch.delenv("QUAVER_NO_GL", raising=False)
    monkeypatch.setattr(render.subprocess, "run", lambda *a, **k: calls.append(a))
    render.can_render.cache_clear()
    pool = render_pool.start_pool(2)
    try:
        assert isinstance(pool, render_pool.Pool) and len(pool.warm) == 2
        assert render_pool.ready(pool) == (True, "")
    finally:
        render_pool.stop_pool(pool)
        render.can_render.cache_clear()
    assert calls == []


def test_drawing_processes_without_opengl_give_the_probes_reason(monkeypatch):
    # an X window without an X server cannot be made (as in the probe's own test): the
    # processes' start-up fails, and only then the probe runs, for its one-line reason
    from fem.output import render, render_pool

    monkeypatch.delenv("QUAVER_NO_GL", raising=False)
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.setenv("VTK_DEFAULT_OPENGL_WINDOW", "vtkXOpenGLRenderWindow")
    render.can_render.cache_clear()
    pool = render_pool.start_pool(2)
    try:
        ok, why = render_pool.ready(pool)
    finally:
        render_pool.stop_pool(pool)
        render.can_render.cache_clear()
    if ok:
        pytest.skip("this machine makes an offscreen window without an X server (an OSMesa fallback)")
    assert why.startswith("no OpenGL context could be created (") and "\n" not in why


def test_no_pool_with_quaver_no_gl(monkeypatch):
    from fem.output import render, render_pool

    monkeypatch.setenv("QUAVER_NO_GL", "1")
    monkeypatch.setattr(render, "_PROBING", [])
    render.can_render.cache_clear()
    try:
        assert render_pool.start_pool(2) is None
        assert render.probed() == (False, "QUAVER_NO_GL is set")
    finally:
        render.can_render.cache_clear()
