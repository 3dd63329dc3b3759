"""Drawing many pictures at once: the modes and responses of a run spread over processes,
each with one offscreen context that draws all of its pictures, ending with the run
(`render_all`)."""

from __future__ import annotations

import os
import sys
from dataclasses import dataclass
from pathlib import Path

from .render import FPS, GIF_SIZE, _canvas, can_render, grab, release, render_modes, render_response, start_probe

__all__ = ["PARENT_POLL", "Pool", "ready", "render_all", "start_pool", "stop_pool"]


def _render_chunk(args):
    kind, folder, model, item, extra, fps, video = args
    if kind == "modes":
        return render_modes(folder, model, item, extra, fps=fps, video=video)
    name, frame_t, frames, shown = item
    return render_response(folder, model, name, frame_t, frames, shown, fps=fps, video=video)


PROBE_WAIT = 120.0     # s the drawing processes' start-up may take (as the probe's own timeout)


@dataclass
class Pool:
    """Drawing processes (`start_pool`): the executor, and the start-up task of each process,
    which answers whether it has an OpenGL context (`ready`)."""

    executor: object
    warm: list


def _warm() -> bool:
    """A drawing process's start-up: the libraries every picture needs and its one offscreen
    plotter (render._canvas), one empty frame drawn; whether that has an OpenGL context."""
    import pyvista as pv

    from ..elements import interpolate  # noqa: F401

    p = _canvas(pv, GIF_SIZE)
    grab(p)
    return bool(p.render_window.SupportsOpenGL())


def start_pool(jobs: int) -> Pool | None:
    """The `jobs` drawing processes, started now so that their start-up (importing pyvista and
    VTK and making an offscreen context, about 1 s of CPU each) overlaps the writing of the
    tables; that start-up is also the test of whether OpenGL works here (`ready`). None for one
    job or with QUAVER_NO_GL set, when the OpenGL probe (`render.start_probe`) runs meanwhile
    instead. Hand it to `render_all`, which ends it; `stop_pool` ends it if it is not used."""
    if not _pooled(jobs):
        start_probe()
        return None
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor

    ex = ProcessPoolExecutor(max_workers=jobs, mp_context=mp.get_context("spawn"),
                             initializer=_worker_start, initargs=(os.getpid(),))
    # a process is spawned for each task submitted while none is idle
    return Pool(ex, [ex.submit(_warm) for _ in range(jobs)])


def _pooled(jobs: int) -> bool:
    """Whether `jobs` drawing processes are started (`start_pool`), rather than drawing here."""
    return jobs > 1 and not os.environ.get("QUAVER_NO_GL")


def ready(pool: Pool) -> tuple[bool, str]:
    """(True, '') once the drawing processes of `pool` have made their OpenGL contexts, else
    (False, reason): then, and only then, `render.can_render`'s probe runs, for the reason."""
    from concurrent.futures import wait

    done, pending = wait(pool.warm, timeout=PROBE_WAIT)
    if not pending and all(f.exception() is None and f.result() for f in done):
        return True, ""
    ok, why = can_render()
    return (False, why) if not ok else (False, "the drawing processes could not make an OpenGL context")


def stop_pool(pool: Pool | None) -> None:
    """End the drawing processes of `start_pool` (None: nothing to do) at once."""
    if pool is not None:
        _stop_workers(pool.executor)


def render_all(folder: Path, model, modal_cases, responses, length: float, jobs: int = 1,
               max_modes: int = 6, fps: float = FPS, video: bool = False, pool=None) -> list[Path]:
    """Pictures and animations (played at `fps` frames a second; MP4 besides WebP with
    `video`) of the first `max_modes` modes of every modes case and of every free/history
    response, in `jobs` parallel processes (each with one offscreen context for all its
    pictures), those of `pool` (`start_pool`) when given, which end with it."""
    from dataclasses import replace

    # the responses first: the longest tasks, so the processes finish together; of a response
    # only its frames are sent (the rack's QUAKE result is 7.9 MB pickled, its frames 0.3 MB)
    tasks = [("response", folder, model, (r.name, r.frame_t, r.frames, r.animated), None, fps, video)
             for r in responses]
    for m in modal_cases:
        # one task per mode so the work spreads over the processes
        for j in range(min(m.shapes.shape[2], max_modes)):
            one = replace(m, shapes=m.shapes[:, :, j:j + 1],
                          modes=replace(m.modes, freq=m.modes.freq[j:j + 1], period=m.modes.period[j:j + 1]),
                          part=replace(m.part, fraction=m.part.fraction[j:j + 1]))
            tasks.append(("modes", folder, model, replace(one, first_mode=j), length, fps, video))
    from ..progress import bar

    if pool is None and (len(tasks) <= 1 or not _pooled(jobs)):
        try:
            return [f for t in bar(tasks, len(tasks), "rendering") for f in _render_chunk(t)]
        finally:
            release()
    ex = (pool if pool is not None else start_pool(jobs)).executor
    try:
        done = bar(ex.map(_render_chunk, tasks), len(tasks), "rendering")
        files = [f for files in done for f in files]
    except BaseException:
        # Ctrl-C or a failed drawing: stop the workers now rather than wait for their chunks
        _stop_workers(ex)
        raise
    # every file is written: the processes are ended now, not left to tear VTK down (0.25 s)
    _stop_workers(ex)
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
    # the offscreen window the parent's probe (render.can_render) uses; the pool may start first
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
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
