"""Offscreen pictures and animations of mode shapes and responses (pyvista on the CPU).

pyvista/VTK are imported only here and only when rendering. Whether an OpenGL context can be
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

__all__ = ["can_render", "render_all", "render_modes", "render_response", "dominant_direction", "one_line"]

_PROBE = ("import pyvista as pv; p = pv.Plotter(off_screen=True, window_size=(64, 64)); "
          "p.add_mesh(pv.Sphere()); p.screenshot(None); p.close()")
COLORMAP = "cividis"        # perceptually uniform, readable in grey and by colour-blind readers
SIZE = (960, 720)           # still pictures
GIF_SIZE = (640, 480)       # animations: smaller frames keep files and the report light
FPS = 12.0                  # animation frames a second (quaver run --fps)


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


def dominant_direction(shape: np.ndarray, coords: np.ndarray | None = None) -> tuple[str, np.ndarray]:
    """Name of the main motion of a mode, 'X', 'Y', 'Z' or 'twist about z', and the share of
    each translation (3,).

    shape (n, 6) one mode at every node; coords (n, 3) m. The plan motion is fitted by a rigid
    one, a translation (a, b) plus a turn theta about the vertical axis through the nodes'
    centroid, in least squares over the nodes' horizontal translations and their rotations
    about z (weighted by the nodes' mean plan radius rho, so both count as lengths). The mode
    is a twist when the turn moves the nodes more (|theta| rho) than the translation does and
    more than their mean vertical motion: rotations dominate and the translations circulate."""
    tr = np.abs(shape[:, :3]).sum(axis=0)
    share = tr / max(tr.sum(), 1e-300)
    name = "XYZ"[int(np.argmax(share))]
    if coords is None or not len(shape):
        return name, share
    r = coords[:, :2] - coords[:, :2].mean(axis=0)
    rho = float(np.sqrt((r ** 2).sum(axis=1).mean()))
    ext = float(np.ptp(coords, axis=0).max()) if len(coords) > 1 else 0.0
    if rho <= 1e-6 * max(ext, 1e-300):
        rho = ext / 2                     # every node on one vertical line: its length is the lever
    if rho <= 0:
        return name, share
    n = len(shape)
    turn = (np.sum(r[:, 0] * shape[:, 1] - r[:, 1] * shape[:, 0]) + rho ** 2 * shape[:, 5].sum()) / (2 * n * rho ** 2)
    mean = shape[:, :3].mean(axis=0)
    if abs(turn) * rho > max(np.hypot(mean[0], mean[1]), abs(mean[2])):
        return "twist about z", share
    return name, share


def _view_vector(shape: np.ndarray, extent: np.ndarray) -> np.ndarray:
    """Look along an axis across the main motion, choosing the one that shows the structure
    largest, so the motion lies in the picture plane."""
    tr = np.abs(shape[:, :3]).sum(axis=0)
    main = int(np.argmax(tr))
    area = [extent[(a + 1) % 3] * extent[(a + 2) % 3] if a != main else -1 for a in range(3)]
    v = np.zeros(3)
    v[int(np.argmax(area))] = 1.0
    return v


def _scene(model, radius):
    import pyvista as pv

    lines = np.c_[np.full(len(model.conn), 2), model.conn].ravel()
    poly = pv.PolyData(model.coords.astype(float), lines=lines)
    return pv, poly


def _sizes(model) -> tuple[tuple[int, int], tuple[int, int]]:
    """(still, animation) window sizes: portrait for a tall model (a mast), else landscape."""
    lo, hi = model.bounding_box()
    ext = hi - lo
    if ext[2] > 1.5 * max(ext[0], ext[1]):
        return SIZE[::-1], GIF_SIZE[::-1]
    return SIZE, GIF_SIZE


def _setup(pv, poly, caption, size=SIZE):
    p = pv.Plotter(off_screen=True, window_size=size)
    p.set_background("white")
    p.add_mesh(poly.copy(), color="#b8bcc4", opacity=0.4, line_width=3, render_lines_as_tubes=True)
    p.add_text(caption, position="upper_left", font_size=11 if size[0] >= size[1] else 9, color="#1d2733")
    # a small orientation marker in the lower right corner, clear of captions and colour bar
    p.add_axes(line_width=2, color="#1d2733", viewport=(0.86, 0.0, 1.0, 0.14 * size[0] / size[1]))
    return p


# the part of the frame the model is fitted into (fractions of width and height, from the
# lower left): clear of the caption above and of the colour bar and axes marker on the right
_FIELD = (0.02, 0.03, 0.80, 0.88)


ISO = ((1.0, 1.0, 1.0), (0.0, 0.0, 1.0))      # isometric: looking from (1, 1, 1), z up


def _fit(p, points: np.ndarray, toward, up) -> None:
    """Parallel projection looking from direction `toward` (to the camera) with `up` as near
    vertical as it can be, fitted tightly to `points` (undeformed and deformed), the model
    inside _FIELD. The camera is set here in full (pyvista's view presets keep state that
    spoils a later parallel fit)."""
    cam = p.camera
    d = -np.asarray(toward, float)
    d /= np.linalg.norm(d)
    up = np.asarray(up, float)
    up = up - (up @ d) * d
    up /= np.linalg.norm(up)
    right = np.cross(d, up)
    u, v = points @ right, points @ up
    w, h = p.window_size
    x0, y0, x1, y1 = _FIELD
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
    p.render()                   # a screenshot reuses the last rendered image otherwise


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
               scalar_bar_args=_bar(size, title, fmt))
    for bar in p.scalar_bars.values():
        bar.SetVerticalTitleSeparation(8)          # keeps the title clear of the top label


def _bar_fonts(p, size) -> None:
    """Colour bar fonts for a new frame size (the animations are smaller than the stills)."""
    cfg = _bar(size)
    for bar in p.scalar_bars.values():
        bar.GetTitleTextProperty().SetFontSize(cfg["title_font_size"])
        bar.GetLabelTextProperty().SetFontSize(cfg["label_font_size"])


def _deformed(poly, disp):
    """Deformed copy whose points are later updated in place for animation frames."""
    moved = poly.copy()
    moved.points = poly.points + disp
    moved["motion (m)"] = np.linalg.norm(disp, axis=1)
    return moved


def _frame(p, mesh, base, disp, recolour: bool = True, scale: float = 1.0):
    """Move the mesh to base + disp; colour by the true motion |disp| / scale when recolouring."""
    mesh.points = base + disp
    if recolour:
        mesh["motion (m)"] = np.linalg.norm(disp, axis=1) / scale
    p.render()


def _clock(p, text: str):
    """The frame's time caption, lower left; its text is replaced frame by frame."""
    return p.add_text(text, position="lower_left", font_size=8, color="#1d2733")


def _cycle_captions(period: float, frames: int) -> list[str]:
    if not np.isfinite(period) or period <= 0:
        return [f"phase {k}/{frames} of one cycle" for k in range(frames)]
    return [f"t = {k * period / frames:.3g} s of one period ({period:.3g} s)" for k in range(frames)]


def render_modes(folder: Path, model, modal, length: float, frames: int = 24,
                 gif: bool = True, fps: float = FPS) -> list[Path]:
    """Per mode: PNG in the plane of largest motion, an isometric PNG, and a GIF of one cycle,
    all from one plotter whose points are updated in place. Colour: the shape's displacement
    relative to its largest (0 to 1)."""
    pv, poly = _scene(model, None)
    lo, hi = model.bounding_box()
    still, moving = _sizes(model)
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    first = modal.first_mode
    for jj in range(modal.shapes.shape[2]):
        j = first + jj
        s = modal.shapes[:, :, jj]
        peak = np.abs(s[:, :3]).max()
        disp = s[:, :3] * (length / peak if peak > 0 else 0.0)
        d, share = dominant_direction(s, model.coords)
        eff = modal.part.fraction[jj, :3]
        caption = (f"mode {j + 1}   {modal.modes.freq[jj]:.4g} Hz   period {modal.modes.period[jj]:.4g} s\n"
                   f"main motion {d}\neffective mass X {percent(eff[0])}  Y {percent(eff[1])}  "
                   f"Z {percent(eff[2])}")
        mag = np.linalg.norm(disp, axis=1)
        p = _setup(pv, poly, caption, still)
        mesh = _deformed(poly, disp)
        mesh[RELATIVE] = mag / mag.max() if mag.max() > 0 else mag
        _add_coloured(p, mesh, RELATIVE, [0.0, 1.0], still)
        # a twist about z is seen from above; other motions across their main direction
        vv = np.array([0.0, 0.0, 1.0]) if d.startswith("twist") else _view_vector(s, hi - lo)
        view = (vv, (0, 0, 1) if vv[2] == 0 else (0, 1, 0))
        span = np.r_[poly.points, poly.points + disp, poly.points - disp]   # the whole cycle
        _fit(p, span, *view)
        stem = folder / f"{modal.name}_mode_{j + 1:03d}"
        p.screenshot(str(stem) + "_plane.png")
        _fit(p, span, *ISO)
        p.screenshot(str(stem) + "_iso.png")
        out += [Path(str(stem) + "_plane.png"), Path(str(stem) + "_iso.png")]
        if gif:
            base = poly.points.copy()
            shots = (disp * np.sin(2 * np.pi * k / frames) for k in range(frames))
            p.window_size = moving
            _fit(p, span, *view)
            out += _animate(p, mesh, base, shots, stem, fps, _clock(p, ""),
                            _cycle_captions(float(modal.modes.period[jj]), frames), size=moving,
                            recolour=False)
        p.close()
    return out


def video_available() -> bool:
    """MP4 needs an ffmpeg encoder; the optional 'video' extra (imageio-ffmpeg) ships one."""
    try:
        import imageio_ffmpeg  # noqa: F401
    except ImportError:
        return False
    return True


def _animate(p, mesh, base, displacements, stem: Path, fps: float = FPS, clock=None,
             captions=(), size=GIF_SIZE, recolour: bool = True, scale: float = 1.0) -> list[Path]:
    """Render each displacement field once, with its caption in the `clock` text actor; write
    stem.gif always and stem.mp4 when an encoder is available. Frames are taken from the live
    plotter (points updated in place), so one context serves every frame and both files."""
    import imageio.v2 as imageio

    p.window_size = size
    _bar_fonts(p, size)
    images = []
    for i, d in enumerate(displacements):
        if clock is not None:
            clock.set_text("lower_left", captions[i])
        _frame(p, mesh, base, d, recolour, scale)
        images.append(p.screenshot(None, return_img=True))
    gif = stem.with_suffix(".gif")
    imageio.mimsave(gif, images, duration=1000 / fps, loop=0)
    out = [gif]
    if video_available():
        mp4 = stem.with_suffix(".mp4")
        with imageio.get_writer(mp4, fps=fps, codec="libx264", quality=7, macro_block_size=16) as w:
            for im in images:
                w.append_data(im)
        out.append(mp4)
    return out


def render_response(folder: Path, model, name: str, frame_t, frames, gif: bool = True,
                    fps: float = FPS) -> list[Path]:
    """GIF of a free or history response at an exaggerated but constant scale, each frame
    captioned with its time, and a PNG of the frame with the largest motion."""
    pv, poly = _scene(model, None)
    lo, hi = model.bounding_box()
    extent = float(max(np.max(hi - lo), 1e-9))
    peak = np.abs(frames[:, :, :3]).max()
    k = 0.05 * extent / peak if peak > 0 else 0.0
    folder.mkdir(parents=True, exist_ok=True)
    worst = int(np.argmax(np.abs(frames[:, :, :3]).max(axis=(1, 2))))
    disp = frames[worst, :, :3] * k
    caption = f"{name}   largest motion {peak:.3g} m\nat t = {frame_t[worst]:.4g} s (drawn x{k:.3g})"
    still, moving = _sizes(model)
    p = _setup(pv, poly, caption, still)
    mesh = _deformed(poly, disp)
    # coloured by the true displacement (m) on one scale for every frame, with its bar
    mesh["motion (m)"] = np.linalg.norm(frames[worst, :, :3], axis=1)
    top = max(float(np.linalg.norm(frames[:, :, :3], axis=2).max()), 1e-12)
    _add_coloured(p, mesh, "motion (m)", [0, top], still, "displacement\n(m)", "%.2g")
    clock = _clock(p, f"t = {frame_t[worst]:.4g} s (largest motion)")
    some = frames[::max(1, len(frames) // 20), :, :3] * k          # enough frames to bound the motion
    span = np.r_[poly.points, poly.points + disp, (poly.points[None] + some).reshape(-1, 3)]
    _fit(p, span, *ISO)
    png = folder / f"{name}_peak.png"
    p.screenshot(str(png))
    out = [png]
    if gif:
        base = poly.points.copy()
        marks = [f"t = {x:.4g} s" + ("  (largest motion)" if i == worst else "") for i, x in enumerate(frame_t)]
        p.window_size = moving
        _fit(p, span, *ISO)
        out += _animate(p, mesh, base, (frames[i, :, :3] * k for i in range(len(frame_t))), folder / name,
                        fps, clock, marks, size=moving, scale=k if k > 0 else 1.0)
    p.close()
    return out


def _render_chunk(args):
    kind, folder, model, item, extra, fps = args
    if kind == "modes":
        return render_modes(folder, model, item, extra, fps=fps)
    return render_response(folder, model, item.name, item.frame_t, item.frames, fps=fps)


def render_all(folder: Path, model, modal_cases, responses, length: float, jobs: int = 1,
               max_modes: int = 6, fps: float = FPS) -> list[Path]:
    """Pictures and animations (played at `fps` frames a second) of the first `max_modes` modes
    of every modes case and of every free/history response, in `jobs` parallel processes (each
    with its own offscreen context)."""
    from dataclasses import replace

    tasks = []
    for m in modal_cases:
        # one task per mode so the work spreads over the processes
        for j in range(min(m.shapes.shape[2], max_modes)):
            one = replace(m, shapes=m.shapes[:, :, j:j + 1],
                          modes=replace(m.modes, freq=m.modes.freq[j:j + 1], period=m.modes.period[j:j + 1]),
                          part=replace(m.part, fraction=m.part.fraction[j:j + 1]))
            tasks.append(("modes", folder, model, replace(one, first_mode=j), length, fps))
    tasks += [("response", folder, model, r, None, fps) for r in responses]
    from ..progress import bar

    if jobs <= 1 or len(tasks) <= 1:
        return [f for t in bar(tasks, len(tasks), "rendering") for f in _render_chunk(t)]
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor

    ex = ProcessPoolExecutor(max_workers=jobs, mp_context=mp.get_context("spawn"),
                             initializer=_worker_start, initargs=(os.getpid(),))
    try:
        done = bar(ex.map(_render_chunk, tasks), len(tasks), "rendering")
        files = [f for files in done for f in files]
    except BaseException:
        # Ctrl-C or a failed drawing: stop the workers now rather than wait for their chunks
        _stop_workers(ex)
        raise
    ex.shutdown(wait=True)
    return files


PARENT_POLL = 0.5     # s between a render worker's checks that its parent is alive (our choice)


def _worker_start(parent: int) -> None:
    """Initialiser of a render process: it ends with its parent and holds none of its output.

    Ctrl-C is left to the parent, which stops the workers at once; their stdout and stderr go
    to the null device, so a pipe from the run (`quaver run ... | tee log`) ends with the run;
    on Linux the kernel kills the worker when its parent dies (PR_SET_PDEATHSIG), and a
    thread checking the parent's pid does the same elsewhere or if that call fails."""
    import signal
    import threading

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, 1)
    os.dup2(null, 2)
    os.close(null)
    if sys.platform.startswith("linux"):
        try:
            import ctypes

            ctypes.CDLL(None, use_errno=True).prctl(1, int(signal.SIGKILL), 0, 0, 0)   # 1 = PR_SET_PDEATHSIG
        except (OSError, AttributeError):
            pass
    if os.getppid() != parent:      # the parent died before the death signal was armed
        os._exit(1)
    threading.Thread(target=_watch_parent, args=(parent,), name="parent-watch", daemon=True).start()


def _watch_parent(parent: int) -> None:
    """End this process as soon as its parent is gone (it is then re-parented)."""
    import time

    while os.getppid() == parent:
        time.sleep(PARENT_POLL)
    os._exit(1)


def _stop_workers(ex) -> None:
    """Cancel the chunks not started and end the render processes at once (SIGTERM, then
    SIGKILL after a second), instead of waiting for the chunks being drawn."""
    # the executor's own list of its processes (private before Python 3.14's terminate_workers)
    procs = list((getattr(ex, "_processes", None) or {}).values())
    ex.shutdown(wait=False, cancel_futures=True)
    for p in procs:
        if p.is_alive():
            p.terminate()
    for p in procs:
        p.join(1.0)
        if p.is_alive():
            p.kill()
            p.join(1.0)
