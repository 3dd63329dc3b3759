"""What a buckling case and a modes case under a preload write: results.json entries, the CSV
table buckling.csv (factors, shapes), the summary's lines and the report's section."""

from __future__ import annotations

import html
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..analysis.modal_case import ModesCaseResult
from ..model import DIRECTIONS

__all__ = ["LINEAR", "json_entry", "preload_entry", "report_section", "summary_lines", "write_tables"]

LINEAR = ("linear: the member axial forces are those of the linear static solution on the undeformed "
          "structure; no large-displacement analysis, no imperfections, no yielding")


def _definition(results, name):
    return results.definition(name)


def preload_entry(results, r) -> dict:
    """The keys a modes case adds when it is solved under a preload or the members' pretension."""
    case = _definition(results, r.name)
    out = {}
    if getattr(case, "preload", None) is not None:
        out["preload"] = case.preload
    if results.model.pretension is not None:
        out["pretension_state"] = True
    if out:
        out["preload_note"] = "modes of (K + Kg) x = w^2 M x, " + LINEAR
    return out


def json_entry(results, r) -> dict:
    return {"name": r.name, "kind": "buckling", "loading": r.loading, "solver": r.solver,
            "load_factor": r.factors.tolist(),
            "pretension_state": r.prestressed,
            "shape_scale": "largest translation 1",
            "note": "the loads of the loading case times the load factor buckle the structure; " + LINEAR,
            "checks": results.checks.cases[r.name]}


def summary_lines(results, r, continued: str) -> list[str]:
    c = results.checks.cases[r.name]
    verdict = {True: "pass", False: "FAIL", None: "not run"}
    factors = ", ".join(f"{x:.4g}" for x in r.factors[:6])
    return [f"  {r.name:<12} buckling of {r.loading}'s loads (linear); lowest load factors: {factors}",
            f"{continued}residual {c['max_residual']:.1e} {verdict[c['residual_pass']]}  "
            f"Sturm count {verdict[c['none_missed']]}"]


def write_tables(out: Path, model, buckling: list) -> None:
    """buckling.csv (case, mode, load_factor, residual) and buckled_shapes.csv (case, mode, node,
    ux .. rz, scaled to a largest translation of 1)."""
    from .tables import write_csv

    write_csv(out / "buckling.csv", ["case", "loading", "mode", "load_factor", "residual"],
              ([r.name, r.loading, j + 1, float(r.factors[j]), float(r.residual[j])]
               for r in buckling for j in range(len(r.factors))))
    write_csv(out / "buckled_shapes.csv", ["case", "mode", "node", *DIRECTIONS],
              ([r.name, j + 1, n, *map(float, r.shapes[k, :, j])]
               for r in buckling for j in range(r.shapes.shape[2]) for k, n in enumerate(model.node_names)))


def report_section(entry: dict) -> str:
    """The report's table of a buckling case's load factors, from its results.json entry."""
    rows = "".join(f"<tr><td>{j + 1}</td><td>{f:.5g}</td><td>{res:.1e}</td></tr>"
                   for j, (f, res) in enumerate(zip(entry["load_factor"], entry["checks"]["residual_per_factor"])))
    return (f"<p>Load factors of the loads of case {html.escape(entry['loading'])}: "
            f"{html.escape(entry['note'])}.</p><table><tr><th>mode</th><th>load factor</th><th>residual</th></tr>"
            f"{rows}</table>")


@dataclass
class _Buckled(ModesCaseResult):
    """A buckling result in the form the mode-shape pictures draw, with captions of its own."""

    loading: str = ""

    def caption(self, j: int, jj: int) -> str:
        return f"buckled shape {j + 1}   load factor {self.modes.freq[jj]:.4g} x {self.loading}"


def mode_view(r):
    """A buckling result seen as a modes result, for the mode-shape pictures: its shapes, and its
    load factors in the captions where a mode's frequency would be."""
    from ..analysis.modes import ModalResult, Participation

    k = len(r.factors)
    f = np.asarray(r.factors, dtype=float)
    none = np.zeros((k, 6))
    modes = ModalResult(f, f, np.full(k, np.inf), r.shapes.reshape(-1, k), r.residual, 0.0, 0.0, r.sturm_count,
                        r.sturm_shift, r.solver)
    return _Buckled(r.name, modes, Participation(none, none, np.zeros(6), none, none), r.shapes, np.zeros(3),
                    loading=r.loading)


def picture_images(pics: Path, r) -> list:
    """The report's pictures of a buckling case's shapes found in `pics`, with captions."""
    images = []
    for j in range(min(6, len(r.factors))):
        for suffix, cap in (("_plane.png", "across the main motion"), ("_iso.png", "isometric view")):
            f = pics / f"{r.name}_mode_{j + 1:03d}{suffix}"
            if f.exists():
                images.append((f, f"buckled shape {j + 1}, load factor {r.factors[j]:.4g}, {cap}"))
    return images
