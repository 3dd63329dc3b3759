"""Pictures of a mode of rotations: the rolling motor of tests/test_mode_shapes_drawn.py is drawn
with a ribbon on the twisting channel; its sway mode has none. Rendered in a child process (as
in test_render) so a broken GL stack cannot take the session down."""


from drawing import drawn

CHECK = r"""
import sys, json
from dataclasses import replace
import numpy as np
from PIL import Image
from pathlib import Path
from fem.deck.reader import read_deck
from fem import solve
from fem.output.render import render_modes, PICTURE_FIELD
from fem.output.vtk import shape_scale
m = read_deck(sys.argv[1])
(modes,) = solve(m).modal
out = Path(sys.argv[2])
got = {}
for j in (0, 3):
    one = replace(modes, shapes=modes.shapes[:, :, j:j + 1], first_mode=j,
                  modes=replace(modes.modes, freq=modes.modes.freq[j:j + 1], period=modes.modes.period[j:j + 1]),
                  part=replace(modes.part, fraction=modes.part.fraction[j:j + 1]))
    files = render_modes(out, m, one, shape_scale(m), animate=False)
    a = np.asarray(Image.open(files[1]).convert("RGB"), dtype=float)      # isometric
    h, w, _ = a.shape
    x0, y0, x1, y1 = PICTURE_FIELD
    a = a[int((1 - y1) * h):int((1 - y0) * h), int(x0 * w):int(x1 * w)]
    r, g, b = a[..., 0], a[..., 1], a[..., 2]
    # the ribbon's rust (over white at 0.7 opacity about (212, 137, 109)); cividis yellows have
    # green close to red, its blues more blue than red
    got[j + 1] = int(((r - b > 60) & (g < r - 40)).sum())
print(json.dumps(got))
"""


def test_a_twisting_member_carries_a_ribbon(tmp_path):
    from tests.test_mode_shapes_drawn import MAT, MOTOR

    deck = tmp_path / "motor.deck"
    deck.write_text(MAT + MOTOR)
    got = drawn(CHECK, deck, tmp_path, timeout=600)
    assert got["1"] > 500          # the rolling mode: the channel's ribbon is drawn
    assert got["4"] == 0           # the sway: no member twists enough to carry one
