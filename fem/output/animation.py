"""Animations written once from their rendered frames: an animated WebP (Pillow), and an MP4
besides when asked for (`quaver run --video`, needs an ffmpeg encoder).

WebP keeps the frames' full colour (a GIF has 256 colours, quantised frame by frame at about
16 ms a frame) in smaller files (about half on the demo decks); browsers play it in an <img>
like a GIF.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["ANIMATION_SUFFIX", "WEBP_QUALITY", "video_available", "write_animation"]

ANIMATION_SUFFIX = ".webp"
# lossy WebP at this quality keeps the members, the colour bar and the captions sharp (looked at
# side by side); the rack demo's 120-frame response: 2.2 MB, against 3.4 MB lossless and 2.6 MB
# at quality 85 (our measurement)
WEBP_QUALITY = 75
# encoder effort 0-6: on that response 2 takes half the CPU time of Pillow's default 4 (1.3 s
# against 2.6 s) for files 5 % larger; 0 and 1 save little more time for 15-25 % larger files
WEBP_METHOD = 2


def video_available() -> bool:
    """MP4 needs imageio and an ffmpeg encoder; the optional 'video' extra ships both."""
    try:
        import imageio  # noqa: F401
        import imageio_ffmpeg  # noqa: F401
    except ImportError:
        return False
    return True


def write_animation(stem: Path, images: list[np.ndarray], fps: float, video: bool = False) -> list[Path]:
    """stem.webp of the RGB frames `images` (each (h, w, 3) uint8), played at `fps` frames a
    second and looping; with `video` (and an encoder) also stem.mp4. Returns the files."""
    from PIL import Image

    frames = [Image.fromarray(np.ascontiguousarray(im[..., :3])) for im in images]
    path = stem.with_suffix(ANIMATION_SUFFIX)
    # minimize_size: the encoder tries more ways of coding each frame against the last; every
    # frame is kept (identical neighbours become one longer frame either way) and decodes as
    # close to the drawing as without it (mean 1.02 of 255 a channel on the rack's QUAKE
    # response), in 12 % smaller files (2.16 -> 1.90 MB) for 10 % more encoding time
    frames[0].save(path, format="WEBP", save_all=True, append_images=frames[1:], duration=round(1000 / fps),
                   loop=0, quality=WEBP_QUALITY, method=WEBP_METHOD, minimize_size=True)
    out = [path]
    if video and video_available():
        import imageio.v2 as imageio

        mp4 = stem.with_suffix(".mp4")
        with imageio.get_writer(mp4, fps=fps, codec="libx264", quality=7, macro_block_size=16) as w:
            for im in images:
                w.append_data(im)
        out.append(mp4)
    return out
