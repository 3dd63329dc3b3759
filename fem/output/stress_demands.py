"""Member stresses of combinations with a dynamic case and of envelopes in the outputs (the
"stress" field of fem.analysis.combine, computed by fem.analysis.stress_field): the
`fields.stress` block of their results.json entries (SI), extremes_stresses.csv (display
units), the summary's governing member and the report's table of the most stressed members."""

from __future__ import annotations

import html
import math

import numpy as np

from ..analysis.stress_field import COLUMNS, point_namer
from .stress_out import RATIO_NOTE, REPORT_ROWS, units_of
from .tables import write_csv

__all__ = ["BASIS", "demand_block", "demand_lines", "demand_report", "write_demand_stresses"]

BASIS = ("static and history parts exact (history per time step, then the largest over time); spectrum and "
         "harmonic peaks added with both signs at each stress point, between the ends and eighth points of a "
         "member on straight lines between their values (a bound, never below); the equivalent stress sqrt(sigma^2 + 3 tau^2) from the largest "
         "normal and shear stresses (an upper bound)")
EXACT = ("static and history parts exact (history per time step, then the largest over time); the equivalent "
         "stress sqrt(sigma^2 + 3 tau^2) from the largest normal and shear stresses (an upper bound)")
GOVERNING = 5          # members listed as governing in results.json, by ratio (or equivalent stress)


def _by(r, v):
    if r.kind == "envelope":
        return r.over[int(v)]
    return None if not np.isfinite(v) else float(f"{v:.12g}")


def _f(x):
    return float(x) if x is not None and math.isfinite(x) else None


def _member(results, r, j: int, name_of) -> dict:
    """One member's stress bounds (SI) with the governing point and time or case of each;
    `name_of` a `point_namer` of the model."""
    b, model = r.fields["stress"], results.model
    key = "time_s" if r.kind == "combination" else "case"
    row = {"section": model.member_section[j]}
    for name, vals, by, pts, c in (("normal_max", b.max, b.max_by, b.point_max, 0),
                                   ("normal_min", b.min, b.min_by, b.point_min, 0),
                                   ("mises", b.max, b.max_by, b.point_max, 1)):
        v = _f(vals[j, c])
        row[f"{name}_Pa"] = v
        row[f"{name}_point"] = None if v is None else name_of(j, int(pts[j, c]))
        row[f"{name}_{key}"] = None if v is None else _by(r, by[j, c])
    row["ratio_to_yield"] = _f(b.max[j, 2])
    return row


def _ranked(r) -> np.ndarray:
    """Members by ratio to yield where any member has one, else by equivalent stress, largest first."""
    b = r.fields["stress"]
    key = b.max[:, 2] if np.isfinite(b.max[:, 2]).any() else b.max[:, 1]
    key = np.where(np.isfinite(key), key, -np.inf)
    order = np.argsort(-key, kind="stable")
    return order[np.isfinite(key[order])]


def demand_block(results, r) -> dict:
    """The `fields.stress` entry of a combination or envelope in results.json (SI)."""
    model = results.model
    ranked = _ranked(r)
    b = r.fields["stress"]
    name_of = point_namer(model)
    rows = {j: _member(results, r, j, name_of) for j in range(model.n_members)}
    gov = {}
    for name, vals in (("mises", b.max[:, 1]), ("ratio", b.max[:, 2]), ("normal_max", b.max[:, 0]),
                       ("normal_min", -b.min[:, 0])):
        if np.isfinite(vals).any():
            j = int(np.nanargmax(vals))
            gov[name] = {"member": model.member_names[j], **rows[j]}
    signless = r.kind == "envelope" or any(k in ("spectrum", "harmonic") for _, _, k in r.terms)
    return {"columns": list(COLUMNS), "units": "Pa (ratio: none)", "basis": BASIS if signless else EXACT,
            "ratio_note": RATIO_NOTE,
            "governing": gov,
            "governing_members": [{"member": model.member_names[j], **rows[j]} for j in ranked[:GOVERNING]],
            "members": {m: rows[j] for j, m in enumerate(model.member_names)}}


def write_demand_stresses(results, out) -> None:
    """extremes_stresses.csv: a row per combination or envelope and member: the largest and
    smallest normal stress, the equivalent stress, each with its stress point and its time or
    governing case, and the ratio to yield; stresses in the display unit (Pa by default)."""
    demands = [r for r in results.demands if "stress" in r.fields]
    if not demands:
        return
    units = units_of(results)
    k, u = units.per_si("stress"), units.header("stress")
    head = ["result", "kind", "member", "section"]
    for name in ("normal_max", "normal_min", "mises"):
        head += [f"{name}_{u}", f"{name}_point", f"{name}_time_s", f"{name}_case"]
    head.append("ratio_to_yield")

    name_of = point_namer(results.model)

    def rows():
        for r in demands:
            for j, m in enumerate(results.model.member_names):
                row = _member(results, r, j, name_of)
                cells = [r.name, r.kind, m, row["section"]]
                for name in ("normal_max", "normal_min", "mises"):
                    v, by = row[f"{name}_Pa"], row.get(f"{name}_time_s", row.get(f"{name}_case"))
                    when = (by, "") if r.kind == "combination" else ("", by)
                    cells += ["" if v is None else v * k, row[f"{name}_point"] or "",
                              "" if when[0] is None else when[0], "" if when[1] is None else when[1]]
                cells.append("" if row["ratio_to_yield"] is None else row["ratio_to_yield"])
                yield cells
    write_csv(out / "extremes_stresses.csv", head, rows())


def demand_lines(results, r, indent: str) -> list[str]:
    """The summary's lines: the governing member (largest ratio, else equivalent stress) with its
    equivalent and normal stresses, point and time or case; then the next most stressed."""
    if "stress" not in r.fields:
        return []
    ranked = _ranked(r)
    if not len(ranked):
        return [f"{indent}stresses: no member has stress points (declare Wy, Wz of generic sections)"]
    units, model = units_of(results), results.model
    k, unit = (units.per_si("stress"), units.label("stress")) if units.chosen else (1e-6, "MPa")
    j = int(ranked[0])
    row = _member(results, r, j, point_namer(model))
    by = row.get("mises_case") if r.kind == "envelope" else row.get("mises_time_s")
    when = "" if by is None else (f" in {by}" if r.kind == "envelope" else f" at {by:.4g} s")
    ratio = "" if row["ratio_to_yield"] is None else \
        f", {row['ratio_to_yield']:.3g} of yield (a plain ratio, not a code check)"
    lines = [f"{indent}stresses: governing member {model.member_names[j]} ({row['section']}, {row['mises_point']}), "
             f"equivalent {row['mises_Pa'] * k:.4g} {unit}{when}; normal {row['normal_min_Pa'] * k:.4g} to "
             f"{row['normal_max_Pa'] * k:.4g} {unit}{ratio}"]
    if len(ranked) > 1:
        b = r.fields["stress"]
        c = 2 if np.isfinite(b.max[:, 2]).any() else 1
        nxt = ", ".join(f"{model.member_names[i]} {b.max[i, c] * (1 if c == 2 else k):.3g}" for i in ranked[1:4])
        lines.append(f"{indent}next by {'ratio' if c == 2 else 'equivalent stress (' + unit + ')'}: {nxt}")
    return lines


def demand_report(block: dict, by: str, doc: dict | None = None) -> str:
    """The report's table of the most stressed members of a results.json `fields.stress` block,
    in the display units of the document `doc` (MPa without a choice); `by` "time_s" or "case"."""
    from .fmt import doc_units

    units = doc_units(doc or {})
    k, unit = (units.per_si("stress"), units.label("stress")) if units.chosen else (1e-6, "MPa")
    esc = html.escape
    rows = sorted(((m, v) for m, v in block["members"].items() if v["mises_Pa"] is not None),
                  key=lambda mv: -mv[1]["mises_Pa"])[:REPORT_ROWS]
    if not rows:
        return ""

    def when(v, name):
        g = v.get(f"{name}_{by}")
        return "" if g is None else (f"t = {g:.4g} s" if by == "time_s" else esc(str(g)))

    body = "".join(
        "<tr>" + "".join(f"<td>{x}</td>" for x in (
            esc(m), esc(v["section"]), f"{v['normal_max_Pa'] * k:.4g}", f"{v['normal_min_Pa'] * k:.4g}",
            f"{v['mises_Pa'] * k:.4g}", "" if v["ratio_to_yield"] is None else f"{v['ratio_to_yield']:.3g}",
            esc(v["mises_point"] or ""), when(v, "mises"))) + "</tr>" for m, v in rows)
    return (f"<h3>member stresses ({esc(unit)})</h3><p>The {len(rows)} most stressed members; all in extremes_stresses.csv. "
            f"{esc(block['basis'][0].upper() + block['basis'][1:])}. {esc(RATIO_NOTE[0].upper() + RATIO_NOTE[1:])}.</p>"
            "<table><tr><th>member</th><th>section</th><th>sigma max</th><th>sigma min</th><th>equivalent</th>"
            f"<th>ratio to yield</th><th>point</th><th>{'time' if by == 'time_s' else 'case'}</th></tr>{body}</table>")
