"""A picture's frame rendered and read back as pixels, without VTK's end-of-frame copy.

Every VTK render ends (`vtkOpenGLRenderWindow::Frame`) by copying the multisampled drawing to
the window's display buffer through a shader that averages each pixel's samples in linear
light (`pow(c, 2.2)` per sample and back). On Mesa's software renderer (llvmpipe) that copy is
about half the CPU of one of our frames (640 x 480, 4 samples: 26.5 ms a frame with it, 14.3
ms without, the rack demo's SURGE animation; an empty frame 13 ms against 0.2 ms without
multisampling). Our pictures never show the window, so `grab` renders with that copy off and
reads the drawing buffer, which VTK resolves with OpenGL's own blit: the plain average of the
samples, as graphics hardware resolves by default. The drawing is the same; only edge pixels
differ (about 2 % of a frame's pixels, anti-aliased without the gamma weighting).

The same measurements led the pictures' plotter to blend translucent parts in drawing order
instead of VTK's order-independent translucency pass (`render._canvas`): with it a 960 x 720
frame of the rack's mode 2 took 32.3 ms of CPU, without it 16.7 ms; 0.9 % of the pixels differ
(mean 0.23 of 255), at the edges of the grey undeformed members, which are drawn at 40 %
opacity in one colour and so blend to the same colour in any order. `tests/test_grab.py`
checks both against VTK's own way.
"""

from __future__ import annotations

import numpy as np

__all__ = ["grab"]


def grab(p) -> np.ndarray:
    """Render pyvista plotter `p`'s window and return its pixels, (height, width, 3) uint8 from
    the top row down, as `p.screenshot` returns them."""
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkCommonCore import vtkUnsignedCharArray

    window = p.render_window
    window.SetSwapBuffers(False)        # no end-of-frame copy to the display buffer
    try:
        window.Render()
    finally:
        window.SetSwapBuffers(True)
    w, h = window.GetSize()
    data = vtkUnsignedCharArray()
    if window.GetPixelData(0, 0, w - 1, h - 1, 0, data, 0) != 1:      # 0: the drawing (back) buffer
        raise RuntimeError("the rendered frame could not be read back")
    return np.ascontiguousarray(vtk_to_numpy(data).reshape(h, w, 3)[::-1])
