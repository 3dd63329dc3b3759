"""Pictures and plots written as palette PNG (256 colours, Pillow's fast octree quantiser), the
same encoding on disk as in the report.

A still from the renderer or a matplotlib plot has flat colours and anti-aliased edges, which
a 256-colour palette keeps (mean absolute difference under 2 of 255 a channel,
`tests/test_png.py`); the files are about a third of full-colour PNGs on the demo rack.
Transparent parts are put on white paper first.
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np

__all__ = ["PNG_LEVEL", "palette_png", "write_palette_png"]

# zlib level: the rack demo's 34 stills and plots (our measurement) took 0.63 s to compress at 9
# (what optimize=True sets) and 0.09 s at 6, for 711 and 768 kB: 8 % more bytes in PNGs (0.4 %
# of its results folder) for a seventh of the time
PNG_LEVEL = 6


def palette_png(image) -> bytes:
    """The palette PNG bytes of `image`: a Pillow image, an (h, w, 3 or 4) uint8 array, or PNG
    bytes."""
    from PIL import Image

    if isinstance(image, (bytes, bytearray)):
        with Image.open(io.BytesIO(image)) as im:
            return palette_png(im.convert("RGBA"))
    if isinstance(image, np.ndarray):
        image = Image.fromarray(np.ascontiguousarray(image))
    rgba = image.convert("RGBA")
    flat = Image.new("RGB", rgba.size, "white")
    flat.paste(rgba, mask=rgba.getchannel("A"))
    q = flat.quantize(256, method=Image.Quantize.FASTOCTREE)
    buf = io.BytesIO()
    q.save(buf, "PNG", compress_level=PNG_LEVEL)
    return buf.getvalue()


def write_palette_png(path: Path, image) -> Path:
    """Write `image` (as `palette_png` takes it) to `path` as palette PNG; returns the path."""
    path = Path(path)
    path.write_bytes(palette_png(image))
    return path
