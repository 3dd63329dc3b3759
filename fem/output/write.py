"""`write_results`: a results folder that loses nothing, holding exactly what `quaver run` writes
(all of it, or by `write` the tables alone or the tables and the files for viewers).

The tables, files for viewers, results.json, pictures and report go to a folder staged beside the
target and are swapped into place only when everything succeeded (`fem.output.folder`), so a
failed or interrupted run leaves the previous results as they were. The numbers come first:
the tables and results.json are staged (and `staged` is told) before any picture is drawn.
"""

from __future__ import annotations

import shutil
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import ResultsError
from ..progress import stage
from . import folder as _folder
from . import pictures, report, viewer
from .results_json import write_results_json
from .tables import write_tables

__all__ = ["WRITE_CHOICES", "Written", "prepare_folder", "write_results"]

# what a results folder holds, from least to most: results.json and the CSV tables; those and the
# files for VTK viewers (modes/, response/); everything (also plots, pictures and the report)
WRITE_CHOICES = ("tables", "viewers", "all")


@dataclass(frozen=True)
class Written:
    """What `write_results` did.

    Attributes
    ----------
    folder : str
        The results folder as given (as the summary shows it).
    path : Path
        The results folder, absolute, links resolved.
    doc : dict
        The results document written to results.json.
    notice : str
        One line on the pictures (drawn, skipped and why).
    notes : tuple of str
        What the folder's safety steps did worth saying (items of the user's kept, a folder
        left by a killed run tidied).
    """

    folder: str
    path: Path
    doc: dict
    notice: str
    notes: tuple[str, ...] = field(default_factory=tuple)


def _deck(results) -> Path | None:
    return Path(results.model.source) if results.model.source else None


def prepare_folder(folder, deck: Path | None) -> tuple[Path, str, list[str]]:
    """Check that `folder` can take results (from `deck`, which it may not hold) before any
    solve, so an unusable folder fails at once; tidy what a killed run left there. Returns the
    folder resolved, as given, and the notes of the tidying."""
    target, shown = _folder.resolve_target(None if folder is None else str(folder), str(deck or "results"))
    _folder.check_target(target, shown, deck)
    _folder.writable_parent(target, shown)
    notes = _folder.tidy_after_kill(target, shown)
    _folder.begin(target, shown)
    return target, shown, notes


def write_results(results, folder, *, render: bool = True, jobs: int = 2, draw_modes: int = 6,
                  fps: float = 12.0, staged: Callable[[dict], None] | None = None,
                  write: str = "all", video: bool = False) -> Written:
    """Write the results folder of `results` (a `fem.results.Results`): CSV tables, files for
    VTK viewers (one VTKHDF file per modes case and per free or history case), results.json,
    pictures and the 3D view viewer.html (unless `render` is False) and the report, or less as
    `write` says, staged and swapped in only when all succeeded.

    Parameters
    ----------
    results : Results
        From `fem.solve`.
    folder : str or Path
        The results folder; a Quaver results folder there is replaced, items in it that Quaver
        did not write are kept; a folder of other files is refused.
    render : bool
        Draw pictures and animations (pyvista, off screen).
    jobs : int
        Processes for drawing.
    draw_modes : int
        Draw the first `draw_modes` modes of each modes case.
    fps : float
        Frames a second of the animations.
    video : bool
        Also write each animation as MP4 (when an ffmpeg encoder is installed); WebP always.
    staged : callable, optional
        Called with the results document once results.json is written (staged, not yet in
        place), before the tables, viewer files, pictures and report: `quaver run` prints the
        summary there, so the first numbers wait for none of them. What it raises fails the
        write as any other error does (nothing is moved into place).
    write : {'tables', 'viewers', 'all'}
        What the folder holds: 'tables' results.json and the CSV tables; 'viewers' those and
        the files for VTK viewers (modes/, response/); 'all' (default) also the plots, pictures
        (unless `render` is False) and the report.

    Returns
    -------
    Written
        The folder, the results document, the pictures' notice and the folder's notes.

    Raises
    ------
    ResultsError
        The folder cannot take results (nothing is written, earlier results are kept).

    Examples
    --------
    >>> written = write_results(solve(read_deck("decks/rack.deck")), "results/rack")  # doctest: +SKIP
    """
    from ..threads import openblas_limited

    with openblas_limited():        # one BLAS thread: the drawing processes have the other cores
        return _write(results, folder, render, jobs, draw_modes, fps, staged, write, video)


def _write(results, folder, render, jobs, draw_modes, fps, staged, write, video) -> Written:
    from .vtk import write_mode_files, write_response_files

    if write not in WRITE_CHOICES:
        raise ValueError(f"write = {write!r}: choose one of {', '.join(WRITE_CHOICES)}")
    deck = _deck(results)
    target, shown, notes = prepare_folder(folder, deck)
    tmp = _folder.stage(target)
    model = results.model
    pool = None
    try:
        if write == "all" and render and pictures.wants_pictures(results):
            from . import render_pool

            # the drawing processes start while the tables are written
            pool = render_pool.start_pool(jobs)
        # results.json first and the caller's summary at once: the tables and viewer files
        # (a second on the rack demo, mostly gzip) follow while it is read
        doc = write_results_json(results, tmp)
        if staged is not None:
            staged(doc)
        write_tables(results, tmp)
        if write != "tables":
            for r in results.of_kind("modes"):
                write_mode_files(tmp / "modes", model, r)
            for r in results.of_kind("free", "history"):
                write_response_files(tmp / "response", model, r.name, r.frame_t, r.frames)
        if write == "all":
            # the report's plots are drawn while the pool draws the pictures
            notice, plotted = (pictures.pictures_and_plots(results, tmp, jobs, draw_modes, fps, video, pool=pool)
                               if render else ("pictures skipped (--no-render)", None))
            if render:      # the interactive 3D view (viewer.html), whole or not at all
                failed = viewer.write_viewer(results, tmp)
                notice += f"; {failed}" if failed else ""
            with stage("writing the report"):
                report.report(results, doc, tmp, notice, plotted)
        else:
            notice = f"pictures, plots and report not written (--write {write})"
        _folder.write_manifest(tmp, target.name)
        notes += _folder.swap(tmp, target, shown)
    except ResultsError:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    except OSError as exc:
        shutil.rmtree(tmp, ignore_errors=True)
        raise ResultsError(f"could not write results to {shown}: {exc}") from None
    except BaseException:
        # interrupted (Ctrl-C) or failed part-way: folder.where() says where the results are
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    finally:
        if pool is not None:                # not used (nothing drawable, no OpenGL) or failed
            from . import render_pool

            render_pool.stop_pool(pool)
    return Written(shown, target, doc, notice, tuple(notes))
