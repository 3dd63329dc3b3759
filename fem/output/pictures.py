"""The pictures and animations of a results folder (out/pictures), drawn after the tables.

Pictures are extras: a drawing failure never loses results; half-drawn pictures are removed so
the report cannot show them as complete.
"""

from __future__ import annotations

import shutil
from pathlib import Path

__all__ = ["draw_pictures", "wants_pictures"]


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
        ok, why = render.can_render()
        if not ok:
            return f"pictures skipped: {why}; results are complete"
        files = render_pool.render_all(out / "pictures", model, modes, responses, shape_scale(model), jobs,
                                       draw_modes, fps, video, pool=pool)
    except Exception as exc:   # noqa: BLE001 - pictures are extras; a drawing failure must not lose results
        # half-drawn pictures would look complete in the report: drop them all
        shutil.rmtree(out / "pictures", ignore_errors=True)
        return f"pictures skipped: {type(exc).__name__}: {render.one_line(exc, last=False)}; results are complete"
    return f"{len(files)} pictures and animations in pictures/"
