"""Frames read back without VTK's end-of-frame copy (grab.grab) and translucent parts blended
in drawing order (render._canvas): the same drawing as VTK's own gamma-weighted resolve and
order-independent translucency, which are the references here, apart from anti-aliased edge
pixels. In a child process (an offscreen context)."""

from drawing import drawn

CODE = r'''
import json, sys
from pathlib import Path
import numpy as np
from fem import read_text, solve
from fem.output import render
from fem.output.grab import grab
from fem.output.vtk import shape_scale
deck = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (4 m, 0, 3 m)
node D = (4 m, 0, 0)
node E = (0, 3 m, 3 m)
member AB : A -> B beam P S
member BC : B -> C beam P S
member CD : D -> C beam P S
member BE : B -> E beam P S
support A fixed
support D fixed
mass C = 500 kg
mass E = 300 kg
case MODES modes { count = 1 }
"""
res = solve(read_text(deck))
render.render_modes(Path(sys.argv[1]), res.model, res["MODES"], shape_scale(res.model), animate=False)
p = render._CANVAS["plotter"]
p.render_window.SetSwapBuffers(True)
def shot():
    p.render_window.Render()
    return p.screenshot(None, return_img=True)[..., :3]
def compare(a, b):
    d = np.abs(a.astype(int) - b.astype(int)).max(axis=2)
    return {"shape": [list(a.shape), list(b.shape)], "dtype": [str(a.dtype), str(b.dtype)],
            "differ": float((d > 0).mean()), "mean": float(np.abs(a.astype(int) - b.astype(int)).mean()),
            "white": float((a == 255).all(axis=2).mean())}
read = grab(p)
out = {"resolve": compare(read, shot()), "oit_off": not p.renderer.GetUseOIT()}
p.renderer.SetUseOIT(True)
oit = grab(p)
p.renderer.SetUseOIT(False)
out["oit"] = compare(read, oit)
out["again"] = bool(np.array_equal(read, grab(p)))
print(json.dumps(out))
'''


def test_frames_read_back_are_the_drawing(tmp_path):
    got = drawn(CODE, tmp_path)
    assert got["again"]                             # the same frame read twice: the same pixels
    assert got["oit_off"]                           # the pictures' plotter blends in drawing order
    for what in ("resolve", "oit"):
        c = got[what]
        assert c["shape"][0] == c["shape"][1] and c["shape"][0][2] == 3 and c["dtype"] == ["uint8", "uint8"]
        assert 0.5 < c["white"] < 0.995             # a picture, not an empty or unread frame
    # against VTK's own end-of-frame copy (samples averaged in linear light): only edge pixels
    # differ (the rack demo's frames: 2 % of pixels, mean 0.9 of 255; our bounds)
    assert 0 < got["resolve"]["differ"] < 0.05 and got["resolve"]["mean"] < 2.0
    # against order-independent translucency: the grey undeformed members blend to their colour
    # in any order, so only their anti-aliased edges differ (the rack's mode 2: 0.9 %, mean 0.23)
    assert got["oit"]["differ"] < 0.03 and got["oit"]["mean"] < 1.0
