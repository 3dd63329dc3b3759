"""Offscreen pictures and animations of mode shapes and responses (pyvista on the CPU).

The processes that draw many of them at once are in `render_pool`. pyvista/VTK are imported
only here and only when rendering. Whether an OpenGL context can be
made is first probed in a child process, so a machine without one skips the pictures with a
one-line notice instead of crashing (results stay complete).
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from functools import lru_cache
from pathlib import Path

import numpy as np

from .fmt import percent
from .grab import grab
from .vtk import MAX_TURN, drawing_scale

__all__ = ["MODE_FRAMES", "can_render", "drawing_scale", "one_line", "plotters_made", "probed", "release",
           "render_modes", "render_response", "start_probe"]

# the pictures' kind of offscreen window, rendered once on VTK alone (0.3 s of CPU; 1.0 s via pyvista)
_PROBE = ("import vtkmodules.vtkRenderingOpenGL2\nfrom vtkmodules.vtkRenderingCore import vtkRenderWindow, vtkRenderer\n"
          "w = vtkRenderWindow(); w.SetOffScreenRendering(1); w.SetSize(64, 64); w.AddRenderer(vtkRenderer())\n"
          "w.Render()\nif not w.SupportsOpenGL(): raise SystemExit('the render window has no OpenGL context')\n")
COLORMAP = "cividis"        # perceptually uniform, readable in grey and by colour-blind readers
SIZE = (960, 720)           # still pictures
GIF_SIZE = (640, 480)       # animations: smaller frames keep files and the report light
FPS = 12.0                  # animation frames a second (quaver run --fps)
MODE_FRAMES = 16            # frames of a mode's cycle: a sine at 16 points reads as smooth motion


_ANSI = re.compile(r"\x1b\[[0-9;?]*[ -/]*[@-~]|\x1b[@-_]")
# VTK's log prefix: "2026-01-01 12:00:00.000 (   0.1s) [thread  ]  file.cxx:123   ERR| "
_VTK_PREFIX = re.compile(r"^.*?\b(?:ERR|WARN|INFO)\s*\|\s*")
_ADDRESS = re.compile(r"\s*\(0x[0-9a-fA-F]+\)")


def one_line(text: str, limit: int = 160, last: bool = True) -> str:
    """A message cut down to one plain line: no ANSI escapes, no VTK log prefix or object
    addresses, no control characters; the last non-empty line (a child's stderr ends with its
    error) or, with last=False, all lines joined (an exception's own message)."""
    lines = []
    for ln in _ANSI.sub("", str(text)).splitlines():
        ln = _ADDRESS.sub("", _VTK_PREFIX.sub("", ln))
        ln = " ".join("".join(ch for ch in ln if ch.isprintable()).split())
        if ln:
            lines.append(ln)
    if not lines:
        return "no message"
    msg = lines[-1] if last else " ".join(lines)
    return msg if len(msg) <= limit else msg[:limit - 3].rstrip() + "..."


def _env() -> dict:
    env = dict(os.environ)
    env.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    return env


@lru_cache(maxsize=1)
def can_render() -> tuple[bool, str]:
    """(True, '') if an offscreen OpenGL context works here, else (False, reason)."""
    if os.environ.get("QUAVER_NO_GL"):
        return False, "QUAVER_NO_GL is set"
    try:
        r = subprocess.run([sys.executable, "-c", _PROBE], env=_env(), capture_output=True,
                           timeout=120, text=True)
    except (OSError, subprocess.TimeoutExpired) as exc:
        return False, f"the render probe did not finish ({exc.__class__.__name__})"
    if r.returncode != 0:
        last = one_line(r.stderr) if r.stderr.strip() else f"exit status {r.returncode}"
        return False, f"no OpenGL context could be created ({last})"
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    return True, ""


_PROBING: list = []


def start_probe() -> None:
    """Start `can_render`'s probe (a child process of about 1 s) in a thread now, so that its
    answer is ready when the pictures start (`probed`); once a process."""
    if not _PROBING:
        import threading

        _PROBING.append(threading.Thread(target=can_render, name="quaver-gl-probe", daemon=True))
        _PROBING[0].start()


def probed() -> tuple[bool, str]:
    """`can_render`, after the probe `start_probe` began has finished (one probe, not two)."""
    if _PROBING:
        _PROBING[0].join()
    return can_render()


def _view_vector(main: int, extent: np.ndarray) -> np.ndarray:
    """Look along an axis across the main motion (global axis `main`, of the translation or of
    the rotation), choosing the one that shows the structure largest, so the motion lies in
    the picture plane."""
    area = [extent[(a + 1) % 3] * extent[(a + 2) % 3] if a != main else -1 for a in range(3)]
    v = np.zeros(3)
    v[int(np.argmax(area))] = 1.0
    return v


RIBBON_TURN = 0.05   # rad: a ribbon is drawn on a member whose drawn twist reaches this and
RIBBON_SHARE = 0.1   # whose twist holds this share of the mode's strain or kinetic energy (our choice)


def _scene(model, radius):
    import pyvista as pv

    lines = np.c_[np.full(len(model.conn), 2), model.conn].ravel()
    points = model.coords.astype(float)
    if model.node_springs is not None:            # springs between nodes: a zig-zag each
        from .springs_out import spring_symbols

        extra, cells = spring_symbols(model)
        cells[np.arange(len(cells)) % (cells[0] + 1) != 0] += len(points)
        points, lines = np.vstack([points, extra]), np.r_[lines, cells]
    poly = pv.PolyData(points, lines=lines)
    if model.node_springs is not None:
        poly.cell_data["spring"] = np.r_[np.zeros(len(model.conn)), np.ones(len(model.node_springs))]
    return pv, poly


class _Drawn:
    """The deformed members: tubes along each member's interpolated curve, and a ribbon across
    the members whose drawn twist shows (its width turns with the twist, so a member twisting
    between its ends is seen to). Points are updated in place for animation frames."""

    def __init__(self, pv, model, prepared, ribbons=(), lever: float = 0.0):
        e, q = prepared.base.shape[:2]
        self.base = prepared.base
        lines = np.c_[np.full(e, q), np.arange(e * q).reshape(e, q)].ravel()
        self.mesh = pv.PolyData(prepared.base.reshape(-1, 3).copy(), lines=lines)
        self.lever = lever
        self.ribbon = None
        self.twisted = np.asarray(ribbons, int)
        if len(self.twisted):
            lo, hi = model.bounding_box()
            ext = float(max(np.max(hi - lo), 1e-9))
            r = self.twisted
            L = np.linalg.norm(self.base[r, -1] - self.base[r, 0], axis=1)
            self.half = np.minimum(0.25 * L, 0.04 * ext)[:, None, None]
            self.ey, self.ez = prepared.R[r, 1][:, None, :], prepared.R[r, 2][:, None, :]
            a = (np.arange(len(r))[:, None] * q + np.arange(q - 1)[None, :]).ravel() * 2
            faces = np.c_[np.full(len(a), 4), a, a + 2, a + 3, a + 1].ravel()
            self.ribbon = pv.PolyData(np.zeros((len(r) * q * 2, 3)), faces=faces)

    def move(self, disp: np.ndarray, twist: np.ndarray, colour: str | None = None, norm: float = 1.0):
        """Members to base + disp (e, p, 3), ribbons turned by twist (e, p); with `colour`, the
        point data of that name set to the drawn motion / norm."""
        self.mesh.points = (self.base + disp).reshape(-1, 3)
        if colour:
            m = np.linalg.norm(disp, axis=-1)
            if self.lever:
                m = np.hypot(m, twist * self.lever)
            self.mesh[colour] = (m / norm).ravel()
        if self.ribbon is not None:
            self.ribbon.points = self.ribbon_points(disp, twist)

    def ribbon_points(self, disp: np.ndarray, twist: np.ndarray) -> np.ndarray:
        """The ribbons' corner points for a shape (none without ribbons), (k, 3)."""
        r = self.twisted
        if not len(r):
            return np.zeros((0, 3))
        t = twist[r][:, :, None]
        across = self.half * (np.cos(t) * self.ey + np.sin(t) * self.ez)
        c = self.base[r] + disp[r]
        return np.stack([c - across, c + across], axis=2).reshape(-1, 3)


def _sizes(model) -> tuple[tuple[int, int], tuple[int, int]]:
    """(still, animation) window sizes: portrait for a tall model (a mast), else landscape."""
    lo, hi = model.bounding_box()
    ext = hi - lo
    if ext[2] > 1.5 * max(ext[0], ext[1]):
        return SIZE[::-1], GIF_SIZE[::-1]
    return SIZE, GIF_SIZE


_CANVAS = {"plotter": None, "made": 0}


def plotters_made() -> int:
    """How many plotters (offscreen contexts) this process has made: one serves every picture."""
    return _CANVAS["made"]


def release() -> None:
    """Close this process's plotter (the next picture makes a new one)."""
    p, _CANVAS["plotter"] = _CANVAS["plotter"], None
    if p is not None:
        p.close()


def _canvas(pv, size):
    """This process's one offscreen plotter, emptied of the last picture's actors, colour bars
    and texts (its lights and render window kept): making a context costs about 0.4 s."""
    p = _CANVAS["plotter"]
    if p is None or p._closed:
        p = _CANVAS["plotter"] = pv.Plotter(off_screen=True, window_size=size)
        # translucent parts blended in drawing order, not VTK's order-independent pass (half of
        # a frame's CPU on the software renderer): the grey undeformed members are one colour,
        # whose layers blend to the same colour in any order (grab.py has the measurements)
        p.renderer.SetUseOIT(False)
        _CANVAS["made"] += 1
        _CANVAS["axes"] = None
    else:
        for title in list(p.scalar_bars.keys()):
            p.remove_scalar_bar(title, render=False)
        p.renderer.clear_actors()
        p.render_window.SetSize(*size)          # pyvista's window_size setter also renders
    return p


def _setup(pv, poly, caption, size=SIZE):
    p = _canvas(pv, size)
    p.set_background("white")
    # render=False here and below: pyvista renders on every actor added otherwise, an image nobody takes
    p.add_mesh(poly.copy(), color="#b8bcc4", opacity=0.4, line_width=3, render_lines_as_tubes=True, render=False)
    if "spring" in poly.cell_data:         # springs between nodes, in their undeformed places
        p.add_mesh(poly.extract_cells(np.flatnonzero(poly.cell_data["spring"])), color="#2a7f62", line_width=3,
                   render=False)
    p.add_text(caption, position="upper_left", font_size=11 if size[0] >= size[1] else 9, color="#1d2733", render=False)
    # a small orientation marker in the lower right corner, clear of captions and colour bar
    # (kept from the plotter's last picture when in the same place: it draws the same)
    viewport = (0.86, 0.0, 1.0, 0.14 * size[0] / size[1])
    if _CANVAS.get("axes") != viewport:
        p.add_axes(line_width=2, color="#1d2733", viewport=viewport)
        _CANVAS["axes"] = viewport
    return p


# the part of the frame the model is fitted into (fractions of width and height, from the
# lower left): clear of the caption above and of the colour bar and axes marker on the right
PICTURE_FIELD = (0.02, 0.03, 0.80, 0.88)


ISO = ((1.0, 1.0, 1.0), (0.0, 0.0, 1.0))      # isometric: looking from (1, 1, 1), z up


def _fit(p, points: np.ndarray, toward, up) -> None:
    """Parallel projection looking from direction `toward` (to the camera) with `up` as near
    vertical as it can be, fitted tightly to `points` (undeformed and deformed), the model
    inside PICTURE_FIELD. The camera is set here in full (pyvista's view presets keep state that
    spoils a later parallel fit); the picture is rendered when taken (`grab`)."""
    cam = p.camera
    d = -np.asarray(toward, float)
    d /= np.linalg.norm(d)
    up = np.asarray(up, float)
    up = up - (up @ d) * d
    up /= np.linalg.norm(up)
    right = np.cross(d, up)
    u, v = points @ right, points @ up
    w, h = p.window_size
    x0, y0, x1, y1 = PICTURE_FIELD
    half_h = max(np.ptp(v) / (2 * (y1 - y0)), np.ptp(u) * h / w / (2 * (x1 - x0)), 1e-9)
    half_w = half_h * w / h
    # the screen centre sits where the field's centre must fall on the model's centre
    cu = 0.5 * (u.min() + u.max()) + (0.5 - 0.5 * (x0 + x1)) * 2 * half_w
    cv = 0.5 * (v.min() + v.max()) + (0.5 - 0.5 * (y0 + y1)) * 2 * half_h
    centre = cu * right + cv * up + (points @ d).mean() * d
    dist = max(np.ptp(points, axis=0).max(), 1e-9) * 3
    cam.focal_point = centre
    cam.position = centre - dist * d
    cam.up = up
    cam.parallel_projection = True
    cam.parallel_scale = half_h
    p.renderer.ResetCameraClippingRange()


RELATIVE = "relative displacement"
# a relative scale 0-1 (mode shapes have no absolute size), wholly inside the frame on the right
def _bar(size, title: str = "relative\ndisplacement", fmt: str = "%.1f") -> dict:
    """Colour bar settings; fonts in pixels scaled with the frame so the bar fits any size."""
    k = min(size) / 720
    return dict(title=title, color="#1d2733", vertical=True, n_labels=3, fmt=fmt,
                position_x=0.84, position_y=0.3, width=0.045, height=0.45, title_font_size=round(13 * k),
                label_font_size=round(12 * k), unconstrained_font_size=True)


def _add_coloured(p, mesh, scalars: str, clim, size, title: str = "relative\ndisplacement",
                  fmt: str = "%.1f") -> None:
    """The members as tubes coloured by `scalars` over `clim`, with the colour bar on the right."""
    p.add_mesh(mesh, scalars=scalars, cmap=COLORMAP, clim=clim, line_width=6, render_lines_as_tubes=True,
               scalar_bar_args=_bar(size, title, fmt), render=False)
    for bar in p.scalar_bars.values():
        bar.SetVerticalTitleSeparation(8)          # keeps the title clear of the top label


def _bar_fonts(p, size) -> None:
    """Colour bar fonts for a new frame size (the animations are smaller than the stills)."""
    cfg = _bar(size)
    for bar in p.scalar_bars.values():
        bar.GetTitleTextProperty().SetFontSize(cfg["title_font_size"])
        bar.GetLabelTextProperty().SetFontSize(cfg["label_font_size"])


RIBBON = "#c2562e"       # the twist ribbons: a warm accent apart from the colour map


def _deformed(p, drawn: _Drawn) -> None:
    """Add the ribbons, if any, to the plotter (the tubes go in with their colour bar)."""
    if drawn.ribbon is not None:
        # the quads' edges mark cross-sections along the member, turned by the twist
        p.add_mesh(drawn.ribbon, color=RIBBON, opacity=0.7, show_edges=True, edge_color="#5a2410",
                   line_width=1, render=False)


def _still(p, path: Path) -> Path:
    """The plotter's picture as a palette PNG file (`png`)."""
    from .png import write_palette_png

    return write_palette_png(path, grab(p))


def _clock(p, text: str):
    """The frame's time caption, lower left; its text is replaced frame by frame."""
    return p.add_text(text, position="lower_left", font_size=8, color="#1d2733", render=False)


def _cycle_captions(period: float, frames: int) -> list[str]:
    if not np.isfinite(period) or period <= 0:
        return [f"phase {k}/{frames} of one cycle" for k in range(frames)]
    return [f"t = {k * period / frames:.3g} s of one period ({period:.3g} s)" for k in range(frames)]


def _mode_caption(j: int, modal, jj: int, character) -> str:
    if hasattr(modal, "caption"):          # a buckled shape (output/buckling_out.py)
        return f"{modal.caption(j, jj)}\n{character.label}\n{character.where(2)}"
    eff = modal.part.fraction[jj, :3]
    return (f"mode {j + 1}   {modal.modes.freq[jj]:.4g} Hz   period {modal.modes.period[jj]:.4g} s\n"
            f"{character.label}\n{character.where(2)}\n"
            f"effective mass X {percent(eff[0])}  Y {percent(eff[1])}  Z {percent(eff[2])}")


def render_modes(folder: Path, model, modal, length: float, frames: int = MODE_FRAMES,
                 animate: bool = True, fps: float = FPS, video: bool = False) -> list[Path]:
    """Per mode: PNG in the plane of largest motion, an isometric PNG, and an animation of one
    cycle (WebP; MP4 too with `video`), all from this process's one plotter, its points updated
    in place. Members are drawn along their own
    interpolated shapes (several points each), twisting members with a ribbon; the shape is
    scaled by drawing_scale. Colour: the drawn motion (translation, and twist times the lever
    length / MAX_TURN) relative to its largest, 0 to 1. Caption: what the mode does and where
    its energy is (character.describe_mode)."""
    from ..analysis.energy import field_energies
    from ..assembly import element_matrices
    from ..elements.interpolate import member_curves, points_per_member, prepare_curves
    from .character import describe_mode

    pv, poly = _scene(model, None)
    lo, hi = model.bounding_box()
    still, moving = _sizes(model)
    folder.mkdir(parents=True, exist_ok=True)
    prepared = prepare_curves(model, points_per_member(model.n_members))
    matrices = element_matrices(model)
    lever = length / MAX_TURN
    out = []
    first = modal.first_mode
    for jj in range(modal.shapes.shape[2]):
        j = first + jj
        s = modal.shapes[:, :, jj]
        curves = member_curves(model, s, prepared=prepared)
        k = drawing_scale(curves, s, length)
        disp, twist = curves.disp * k, curves.twist * k
        energies = field_energies(model, s, matrices)
        character = describe_mode(model, s, energies, prepared=prepared)
        p = _setup(pv, poly, _mode_caption(j, modal, jj, character), still)
        # ribbons where the twist shows and matters: its share of the strain or kinetic energy
        share = np.maximum(energies.member_strain[:, 1] / max(energies.strain, 1e-300),
                           energies.member_kinetic[:, 1] / max(energies.kinetic, 1e-300))
        ribbons = np.flatnonzero((np.abs(twist).max(axis=1) >= RIBBON_TURN) & (share >= RIBBON_SHARE))
        drawn = _Drawn(pv, model, prepared, ribbons, lever)
        motion = np.hypot(np.linalg.norm(disp, axis=-1), twist * lever)
        drawn.move(disp, twist, RELATIVE, max(float(motion.max()), 1e-300))
        _add_coloured(p, drawn.mesh, RELATIVE, [0.0, 1.0], still, "relative\nmotion")
        _deformed(p, drawn)
        # a twist in plan is seen from above, a mode of rotations along its axis of rotation
        # (a twisting member's ribbon fans out around it); other motions across their main direction
        if character.motion.startswith("twist in plan"):
            vv = np.array([0.0, 0.0, 1.0])
        elif character.rotational:
            vv = np.eye(3)[character.axis]
        else:
            vv = _view_vector(character.axis, hi - lo)
        view = (vv, (0, 0, 1) if vv[2] == 0 else (0, 1, 0))
        pts = prepared.base.reshape(-1, 3)
        span = np.r_[poly.points, pts + disp.reshape(-1, 3), pts - disp.reshape(-1, 3),    # the whole cycle
                     drawn.ribbon_points(disp, twist), drawn.ribbon_points(-disp, -twist)]
        _fit(p, span, *view)
        stem = folder / f"{modal.name}_mode_{j + 1:03d}"
        _still(p, Path(str(stem) + "_plane.png"))
        _fit(p, span, *ISO)
        _still(p, Path(str(stem) + "_iso.png"))
        out += [Path(str(stem) + "_plane.png"), Path(str(stem) + "_iso.png")]
        if animate:
            def show(i, drawn=drawn, disp=disp, twist=twist):
                a = np.sin(2 * np.pi * i / frames)
                drawn.move(disp * a, twist * a)
            p.render_window.SetSize(*moving)
            _fit(p, span, *view)
            out += _animate(p, show, frames, stem, fps, _clock(p, ""),
                            _cycle_captions(float(modal.modes.period[jj]), frames), size=moving, video=video)
    return out


def _animate(p, show, count: int, stem: Path, fps: float = FPS, clock=None,
             captions=(), size=GIF_SIZE, video: bool = False) -> list[Path]:
    """Render frames 0..count-1 once each (show(i) moves the drawing to frame i), with its
    caption in the `clock` text actor; write them once as stem.webp (and stem.mp4 with `video`,
    `animation.write_animation`). Frames are taken from the live plotter (points updated in
    place), so one context serves every frame."""
    from .animation import write_animation
    from .caption import FIXED_FROM, FixedCaption

    p.render_window.SetSize(*size)
    _bar_fonts(p, size)
    images = []
    if clock is not None and count >= FIXED_FROM:       # the captions' font size found once
        show(0)
        clock = FixedCaption(p, clock, captions[:count])
    for i in range(count):
        if isinstance(clock, FixedCaption):
            clock.show(captions[i])
        elif clock is not None:
            clock.set_text("lower_left", captions[i])
        show(i)
        images.append(grab(p))
    return write_animation(stem, images, fps, video)


def render_response(folder: Path, model, name: str, frame_t, frames, shown=None, animate: bool = True,
                    fps: float = FPS, video: bool = False) -> list[Path]:
    """Animation (WebP; MP4 too with `video`) of a free or history response at an exaggerated
    but constant scale, of the frames at positions `shown` (the result's `animated`, frames in
    a row around the largest motion; None: all), each captioned with its time, and a PNG of
    the frame with the largest motion. Members follow
    their interpolated shapes; the scale makes the largest translation 5 % of the model's size
    unless the rotations would then pass MAX_TURN (as for mode shapes)."""
    from ..elements.interpolate import member_curves, points_per_member, prepare_curves

    pv, poly = _scene(model, None)
    lo, hi = model.bounding_box()
    extent = float(max(np.max(hi - lo), 1e-9))
    peak = np.abs(frames[:, :, :3]).max()
    prepared = prepare_curves(model, points_per_member(model.n_members))
    folder.mkdir(parents=True, exist_ok=True)
    worst = int(np.argmax(np.abs(frames[:, :, :3]).max(axis=(1, 2))))
    some = range(0, len(frames), max(1, len(frames) // 20))       # enough frames to bound the motion
    curves = member_curves(model, frames[sorted({worst, *some})], prepared=prepared)
    k = drawing_scale(curves, frames, 0.05 * extent)
    caption = f"{name}   largest motion {peak:.3g} m\nat t = {frame_t[worst]:.4g} s (drawn x{k:.3g})"
    still, moving = _sizes(model)
    p = _setup(pv, poly, caption, still)
    # ribbons on the members whose twist sets the drawing scale (within half of MAX_TURN of it)
    drawn = _Drawn(pv, model, prepared, np.flatnonzero(np.abs(curves.twist * k).max(axis=(0, 2)) >= MAX_TURN / 2))
    # coloured by the true displacement (m) on one scale for every frame, with its bar
    one = member_curves(model, frames[worst], prepared=prepared)
    drawn.move(one.disp * k, one.twist * k, "motion (m)", k if k > 0 else 1.0)
    top = max(float(np.linalg.norm(curves.disp, axis=-1).max()), 1e-12)
    _add_coloured(p, drawn.mesh, "motion (m)", [0, top], still, "displacement\n(m)", "%.2g")
    _deformed(p, drawn)
    clock = _clock(p, f"t = {frame_t[worst]:.4g} s (largest motion)")
    pts = prepared.base.reshape(-1, 3)
    span = np.r_[poly.points, (pts[None] + k * curves.disp.reshape(len(curves.disp), -1, 3)).reshape(-1, 3)]
    _fit(p, span, *ISO)
    png = folder / f"{name}_peak.png"
    _still(p, png)
    out = [png]
    if animate:
        shown = np.arange(len(frame_t)) if shown is None else np.asarray(shown)

        def show(i):
            c = member_curves(model, frames[shown[i]], prepared=prepared)
            drawn.move(c.disp * k, c.twist * k, "motion (m)", k if k > 0 else 1.0)
        marks = [f"t = {frame_t[i]:.4g} s" + ("  (largest motion)" if i == worst else "") for i in shown]
        p.render_window.SetSize(*moving)
        _fit(p, span, *ISO)
        out += _animate(p, show, len(shown), folder / name, fps, clock, marks, size=moving, video=video)
    return out
