"""The pictures and animations of a results folder (out/pictures), drawn after the tables.

Pictures are extras: a drawing failure never loses results; half-drawn pictures are removed so
the report cannot show them as complete.
"""

from __future__ import annotations

import shutil
from pathlib import Path

__all__ = ["draw_pictures", "pictures_and_plots", "wants_pictures"]


def wants_pictures(results) -> bool:
    """Whether `results` has anything to draw (modes, buckled shapes, free or history responses)."""
    return results.model.n_members > 0 and bool(results.of_kind("modes", "buckling", "free", "history"))


def draw_pictures(results, out: Path, jobs: int, draw_modes: int = 6, fps: float = 12.0,
                  video: bool = False, pool=None) -> str:
    """Pictures of `results` into out/pictures, drawn by the processes of `pool`
    (render_pool.start_pool) when given; returns the one-line notice for the summary."""
    modes = results.of_kind("modes")
    if results.of_kind("buckling"):
        from .buckling_out import mode_view

        modes = [*modes, *map(mode_view, results.of_kind("buckling"))]
    responses = results.of_kind("free", "history")
    if not modes and not responses:
        return "no modes or responses to draw"
    if results.model.n_members == 0:       # springs and masses only: the pictures draw members
        return "pictures skipped: the model has no members to draw; results are complete"
    from . import render, render_pool
    from .vtk import shape_scale

    model = results.model
    try:
        # the drawing processes' start-up tested OpenGL, or the probe started meanwhile did
        ok, why = render_pool.ready(pool) if pool is not None else render.probed()
        if not ok:
            return f"pictures skipped: {why}; results are complete"
        files = render_pool.render_all(out / "pictures", model, modes, responses, shape_scale(model), jobs,
                                       draw_modes, fps, video, pool=pool)
    except Exception as exc:   # noqa: BLE001 - pictures are extras; a drawing failure must not lose results
        # half-drawn pictures would look complete in the report: drop them all
        shutil.rmtree(out / "pictures", ignore_errors=True)
        return f"pictures skipped: {type(exc).__name__}: {render.one_line(exc, last=False)}; results are complete"
    return f"{len(files)} pictures and animations in pictures/"


def pictures_and_plots(results, out: Path, jobs: int, draw_modes: int = 6, fps: float = 12.0,
                       video: bool = False, pool=None) -> tuple[str, dict | None]:
    """The pictures (`draw_pictures`) and, while the processes of `pool` draw them, the report's
    matplotlib plots in this process (`report.draw_plots`), which would otherwise only wait for
    the pool: (notice, plots for `report.report`). Without a pool the pictures alone, and None
    for the plots (the report draws them).

    A failure or Ctrl-C while plotting is raised at once; the caller ends the pool
    (`render_pool.stop_pool`), which ends the drawing thread with it."""
    if pool is None:
        return draw_pictures(results, out, jobs, draw_modes, fps, video), None
    import threading

    from .report import draw_plots

    got: dict = {}

    def draw():
        try:
            got["notice"] = draw_pictures(results, out, jobs, draw_modes, fps, video, pool=pool)
        except BaseException as exc:      # noqa: BLE001 - handed to the caller's thread below
            got["error"] = exc

    worker = threading.Thread(target=draw, name="quaver-pictures", daemon=True)
    worker.start()
    plotted = draw_plots(results, out)
    worker.join()
    if "error" in got:
        raise got["error"]
    return got["notice"], plotted
