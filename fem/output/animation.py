"""Animations written once from their rendered frames: an animated WebP (Pillow), and an MP4
besides when asked for (`quaver run --video`, needs an ffmpeg encoder).

The frames are drawings (flat colours, a colour bar, anti-aliased edges and captions): they are
put on one palette of 256 colours (Pillow's fast octree quantiser, the encoding of the pictures,
`png.py`) found once from PALETTE_SAMPLES frames spread over the animation, then written as
lossless WebP, which codes a frame of few colours as palette indices and each frame against the
last. Browsers play it in an <img> like a GIF.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["ANIMATION_SUFFIX", "PALETTE_SAMPLES", "video_available", "write_animation"]

ANIMATION_SUFFIX = ".webp"
# On the rack demo's animations (our measurement, 640 x 480): the two responses (120 frames) 1.90
# and 1.66 MB as lossy WebP at quality 75, 1.05 and 0.70 MB on one palette, lossless; the mode
# cycles 80-97 kB against 71-91 kB. Mean difference from the drawing 1.07-1.09 of 255 a channel
# against 1.02 lossy, but the 99.9th percentile 7-10 against 25-28: no ringing around the lines
# and captions. Lossy at encoder effort 6 saved 6 % for 20 times the encoding time.
PALETTE_SAMPLES = 16    # frames the palette is found from; 4 or 8 left the worst frame at 2.2 of 255
# lossless encoder effort 0-6: 2; 0 gives 50 % larger files (the rack's 3211 kB against 2123 kB)
WEBP_METHOD = 2
# lossless "quality" is more encoder effort, 0-100: the rack demo's 8 animations (our measurement,
# at encoder effort 2 with the smallest-size search) took 4.96 s to encode at 100, 3.82 s at 50,
# 3.05 s at 25 and 1.89 s at 0, for 2226, 2258, 2310 and 2629 kB: 0 halves the encoding for 16 %
# more bytes in the animations (2 % of the rack's results folder); the same pixels at any setting
WEBP_EFFORT = 0


def video_available() -> bool:
    """MP4 needs imageio and an ffmpeg encoder; the optional 'video' extra ships both."""
    try:
        import imageio  # noqa: F401
        import imageio_ffmpeg  # noqa: F401
    except ImportError:
        return False
    return True


def _palette(images):
    """One 256-colour palette (a "P" image) for all the frames `images`, from PALETTE_SAMPLES of
    them spread evenly, first and last included: the frames share their colour bar and
    background, so one palette serves all and the encoder sees no colour flicker."""
    from PIL import Image

    pick = np.unique(np.linspace(0, len(images) - 1, PALETTE_SAMPLES).round().astype(int))
    sheet = np.concatenate([np.asarray(images[i])[..., :3] for i in pick], axis=0)
    return Image.fromarray(np.ascontiguousarray(sheet)).quantize(256, method=Image.Quantize.FASTOCTREE)


def write_animation(stem: Path, images: list[np.ndarray], fps: float, video: bool = False) -> list[Path]:
    """stem.webp of the RGB frames `images` (each (h, w, 3) uint8), played at `fps` frames a
    second and looping; with `video` (and an encoder) also stem.mp4. Returns the files."""
    from PIL import Image

    palette = _palette(images)
    frames = [Image.fromarray(np.ascontiguousarray(im[..., :3])).quantize(palette=palette, dither=Image.Dither.NONE)
              .convert("RGB") for im in images]
    path = stem.with_suffix(ANIMATION_SUFFIX)
    # every frame is kept, identical neighbours become one longer frame. minimize_size (the
    # encoder tries more ways of coding each frame against the last) is off: on the rack demo's
    # 8 animations (60-frame responses; our measurement) it took 1.13-1.17 s of CPU to encode
    # them against 0.90-0.94 s without, for 2123 kB against 2199 kB (3.6 % more)
    frames[0].save(path, format="WEBP", save_all=True, append_images=frames[1:], duration=round(1000 / fps),
                   loop=0, lossless=True, quality=WEBP_EFFORT, method=WEBP_METHOD, minimize_size=False)
    out = [path]
    if video and video_available():
        import imageio.v2 as imageio

        mp4 = stem.with_suffix(".mp4")
        with imageio.get_writer(mp4, fps=fps, codec="libx264", quality=7, macro_block_size=16) as w:
            for im in images:
                w.append_data(im)
        out.append(mp4)
    return out
