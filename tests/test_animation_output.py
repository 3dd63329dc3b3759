"""Animations written once as animated WebP, and one offscreen plotter reused for every picture
a process draws (which frames a response animation plays: tests/test_vtk_files.py)."""


import numpy as np
from drawing import drawn

from fem.output.animation import write_animation


def test_webp_keeps_every_frame_and_its_timing(tmp_path):
    from PIL import Image

    # 7 frames of a moving dark bar, each differing from the last
    frames = []
    for k in range(7):
        im = np.full((48, 64, 3), 255, np.uint8)
        im[10:30, 5 + 6 * k:11 + 6 * k] = (20, 40, 90)
        frames.append(im)
    files = write_animation(tmp_path / "shape", frames, fps=4.0)
    assert files == [tmp_path / "shape.webp"]
    anim = Image.open(files[0])
    assert anim.format == "WEBP" and anim.n_frames == 7 and anim.size == (64, 48)
    for k in (0, 3, 6):
        anim.seek(k)
        anim.load()
        assert anim.info["duration"] == 250                       # 4 frames a second
        got = np.asarray(anim.convert("RGB"), float)
        # each frame shows its own bar where it was drawn (dark) and white elsewhere
        assert got[20, 8 + 6 * k].max() < 128 and got[40, 8 + 6 * k].min() > 200


# a 4.5 m pipe cantilever with a 300 kg head (our own scenario), two modes, released from a tip
# push; each test adds its free case REL
CANTILEVER = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..3 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N3 = 300 kg
case TIP static { force N3 = (2 kN, 0, 0) }
case MODES modes { count = 2 }
"""
# a drawing script's start: the deck of its second argument solved, its pictures' folder the first
SCRIPT = r"""
import json, sys
from pathlib import Path
from fem import read_text, solve
from fem.output import render, render_pool
from fem.output.vtk import shape_scale
res = solve(read_text(sys.argv[2]))
render.can_render()
out = Path(sys.argv[1])
"""
REUSE = SCRIPT + r"""
files = render_pool.render_all(out, res.model, res.of_kind("modes"), res.of_kind("free"),
                               shape_scale(res.model), jobs=1, max_modes=2)
print(json.dumps({"made": render.plotters_made(), "files": sorted(f.name for f in files)}))
"""


def test_one_plotter_draws_every_picture_of_a_process(tmp_path):
    got = drawn(REUSE, tmp_path, CANTILEVER + "case REL free { start = TIP, duration = 0.3 s, step = 0.01 s }")
    assert got["made"] == 1                 # two modes and a response, one context
    assert got["files"] == ["MODES_mode_001.webp", "MODES_mode_001_iso.png", "MODES_mode_001_plane.png",
                            "MODES_mode_002.webp", "MODES_mode_002_iso.png", "MODES_mode_002_plane.png",
                            "REL.webp", "REL_peak.png"]


LONG = SCRIPT + r"""
from PIL import Image
r = res["REL"]
render_pool.render_all(out, res.model, [], [r], shape_scale(res.model), jobs=1)
played = r.frame_t[r.animated]
print(json.dumps({"kept": len(r.frame_t), "played": played.tolist(), "frames": Image.open(out / "REL.webp").n_frames,
                  "freq": res["MODES"].modes.freq.tolist()}))
"""


def test_a_long_response_is_animated_around_its_largest_motion(tmp_path):
    # 20 s of free vibration of a cantilever with its head mass (2 modes): the animation plays
    # ANIMATED frames in a row from the release (the largest motion), evenly spaced, the
    # fundamental at 8 frames a period or more, not the whole run spread out
    from fem.analysis.free_case import ANIMATED, FRAMES_PER_PERIOD

    got = drawn(LONG, tmp_path, CANTILEVER + "case REL free { start = TIP, duration = 20 s, step = 0.005 s, "
                                            "damping = 1 percent }")
    played = np.array(got["played"])
    assert got["frames"] == len(played) == ANIMATED < got["kept"]
    assert played[0] == 0.0 and np.ptp(np.diff(played)) < 1e-9
    assert 1 / (got["freq"][0] * np.diff(played)[0]) >= FRAMES_PER_PERIOD


def test_webp_frames_decode_close_to_the_drawing(tmp_path):
    """On one palette, lossless: every frame kept, each within a
    mean of 3 of 255 a channel of what was drawn (the rack's responses measured 1.07-1.09; our
    bound), identical neighbours merged into one frame of their summed duration."""
    from PIL import Image

    frames = []
    for k in (0, 1, 1, 2, 3):
        im = np.full((96, 128, 3), 255, np.uint8)
        im[20:60, 10 + 12 * k:22 + 12 * k] = np.linspace(30, 220, 12, dtype=np.uint8)[None, :, None]
        frames.append(im)
    anim = Image.open(write_animation(tmp_path / "shape", frames, fps=10.0)[0])
    assert anim.n_frames == 4
    shown = [frames[0], frames[1], frames[3], frames[4]]
    for k, want in enumerate(shown):
        anim.seek(k)
        anim.load()
        assert anim.info["duration"] == (200 if k == 1 else 100)
        assert np.abs(np.asarray(anim.convert("RGB"), float) - want).mean() < 3.0


def test_fixed_captions_draw_as_the_annotation(tmp_path):
    """A long animation's captions drawn by a text actor at the font size found once are the
    same pixels as the corner annotation draws (caption.FixedCaption), the wider caption of the
    largest motion included, each frame taken as the pictures take them (grab.grab); in a child
    process (an offscreen context)."""
    code = r'''
import json, sys
import numpy as np, pyvista as pv
from fem.output.caption import FixedCaption
from fem.output.grab import grab
captions = [f"t = {0.013 * i:.4g} s" for i in range(45)]
captions[20] += "  (largest motion)"
def frames(fixed):
    p = pv.Plotter(off_screen=True, window_size=(640, 480))
    p.set_background("white")
    p.add_mesh(pv.Line((0, 0, 0), (1, 1, 0), resolution=20), line_width=6, render_lines_as_tubes=True)
    clock = p.add_text("", position="lower_left", font_size=8, color="#1d2733")
    shown = FixedCaption(p, clock, captions) if fixed else None
    out = []
    for c in captions:
        shown.show(c) if fixed else clock.set_text("lower_left", c)
        out.append(grab(p))
    info = (shown.actor is not None, shown.longest) if fixed else None
    p.close()
    return np.array(out), info
a, _ = frames(False)
b, (found, longest) = frames(True)
print(json.dumps({"same": [bool(np.array_equal(x, y)) for x, y in zip(a, b)], "found": found,
                  "longest": longest}))
'''
    got = drawn(code)
    assert got["found"] and all(got["same"])
    assert got["longest"] < len("t = 0.26 s  (largest motion)")      # that one is the annotation's


def test_webp_frames_share_one_palette_close_to_a_colour_ramp(tmp_path):
    """Frames holding more than 256 colours (a smooth ramp like a colour bar, 600 shades, and a
    bar moving across it) decode to one set of at most 256 colours shared by every frame, each
    frame within a mean of 2 of 255 a channel of the drawing (the bound the palette pictures
    keep, tests/test_png.py)."""
    from PIL import Image

    ramp = np.linspace(0, 1, 600)
    colours = (np.c_[ramp, 0.6 * ramp + 0.2, 1 - ramp] * 255).round().astype(np.uint8)     # (600, 3)
    frames = []
    for k in range(9):
        im = np.full((120, 600, 3), 255, np.uint8)
        im[:40] = colours[None, :, :]
        im[60:100, 40 + 50 * k:80 + 50 * k] = colours[60 * k]
        frames.append(im)
    anim = Image.open(write_animation(tmp_path / "ramp", frames, fps=10.0)[0])
    assert anim.n_frames == len(frames)
    seen = set()
    for k, want in enumerate(frames):
        anim.seek(k)
        anim.load()
        got = np.asarray(anim.convert("RGB"))
        assert np.abs(got.astype(float) - want).mean() < 2.0
        seen |= set(map(tuple, got.reshape(-1, 3).tolist()))
    assert len(seen) <= 256
