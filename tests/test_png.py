"""Pictures and plots on disk as palette PNG (fem.output.png): the same pixel size, little
difference from full colour, smaller, and embedded in the report as they are."""

import io

import numpy as np
from PIL import Image

from fem.output.png import palette_png, write_palette_png
from fem.output.report_page import encode_still


def _plot_rgb() -> np.ndarray:
    """A matplotlib plot with anti-aliased curves and a grid, as RGBA pixels."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(6, 3), dpi=100)
    t = np.linspace(0, 10, 2000)
    ax.plot(t, np.sin(3 * t) * np.exp(-t / 5), t, np.cos(2 * t))
    ax.grid(True)
    fig.canvas.draw()
    rgba = np.asarray(fig.canvas.buffer_rgba()).copy()
    plt.close(fig)
    return rgba


def test_palette_png_keeps_size_and_colours(tmp_path):
    """256 colours: same pixel size, mean absolute difference under 2 of 255 a channel (our
    bound: a difference of 2 levels is not visible on a plot), palette mode, smaller than a
    full-colour PNG of the same pixels."""
    rgba = _plot_rgb()
    full = io.BytesIO()
    Image.fromarray(rgba).convert("RGB").save(full, "PNG")
    f = write_palette_png(tmp_path / "plot.png", rgba)
    with Image.open(f) as im:
        assert im.mode == "P" and im.size == (rgba.shape[1], rgba.shape[0])
        back = np.asarray(im.convert("RGB"), float)
    assert np.abs(back - rgba[..., :3]).mean() < 2.0
    assert f.stat().st_size < len(full.getvalue())
    # PNG bytes in, the same result as the pixels
    assert palette_png(full.getvalue()) == f.read_bytes()


def test_transparent_parts_on_white():
    rgba = np.zeros((8, 8, 4), np.uint8)          # fully transparent black
    with Image.open(io.BytesIO(palette_png(rgba))) as im:
        assert (np.asarray(im.convert("RGB")) == 255).all()


def test_report_embeds_a_palette_png_as_it_is(tmp_path):
    f = write_palette_png(tmp_path / "still.png", _plot_rgb())
    data, mime = encode_still(f)
    assert mime == "image/png" and data == f.read_bytes()
    # a full-colour PNG is still re-encoded, smaller
    g = tmp_path / "full.png"
    Image.fromarray(_plot_rgb()).save(g)
    data, _ = encode_still(g)
    assert len(data) < g.stat().st_size and Image.open(io.BytesIO(data)).mode == "P"


def test_a_plot_drawn_once_gives_the_pixels_savefig_gave(tmp_path):
    # save_drawn takes the canvas's pixels after one drawing; savefig (the reference, matplotlib's
    # own writer) draws twice after tight_layout and encodes a PNG: the palette files are the same
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from fem.output.plots import save_drawn

    def figure():
        fig, ax = plt.subplots(figsize=(7, 3.6), dpi=110)
        t = np.linspace(0.0, 3.0, 1501)
        ax.plot(t, np.sin(7 * t) * np.exp(-t), label="U2 y")
        ax.set_xlabel("time [s]")
        ax.set_title("a decaying response", loc="left")
        ax.legend()
        fig.tight_layout()
        return fig

    fig = figure()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    plt.close(fig)
    drawn = save_drawn(plt, figure(), tmp_path / "drawn.png")
    assert drawn.read_bytes() == palette_png(buf.getvalue())
