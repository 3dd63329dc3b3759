"""The combinations with a dynamic case and the envelopes in results.json, the CSV tables, the
summary and the report (fem/analysis/combine.py computes them).

Every field registered in `fem.analysis.combine.FIELDS` is written the same way: a node field
over the nodes (reactions over the supported and sprung nodes only), a member field over the
members; for each value its largest and smallest, and what governs each: the time (s) of a
combination's history part, or the case of an envelope. A further field (member stresses)
appears in every output without a change here; member stresses (the "stress" field) have their
own layout in fem/output/stress_demands.py (stress points, ratios, extremes_stresses.csv).
"""

from __future__ import annotations

import html
from pathlib import Path

import numpy as np

from ..analysis.combine import FIELDS
from ..analysis.link_field import followers
from . import stress_demands
from .tables import supported_nodes, write_csv

__all__ = ["json_entry", "report_block", "summary_lines", "write_extremes_tables"]

# the file of each field's table, and the unit of its values (SI, as every table)
_FILES = {"displacement": "extremes_displacements.csv", "reaction": "extremes_reactions.csv",
          "end_force": "extremes_member_forces.csv"}
UNITS = {"displacement": "m or rad", "reaction": "N or N m", "end_force": "N or N m", "link_force": "N or N m"}


def _rows(model, name: str):
    """(row indices, row names) of a field: supported nodes for reactions, else all."""
    fld = FIELDS[name]
    if fld.of == "member":
        return np.arange(model.n_members), model.member_names
    idx = supported_nodes(model) if name == "reaction" else followers(model) if name == "link_force" else \
        np.arange(model.n_nodes)
    return idx, [model.node_names[k] for k in idx]


def _by(r, by: np.ndarray):
    """What governs each value as written: times (s, None where none) or case names."""
    if r.kind == "envelope":
        return [r.over[int(i)] for i in by]
    # times on a grid of steps k * dt: 12 figures drop the round-off of k * dt (2.2800000000000002)
    return [None if np.isnan(v) else float(f"{v:.12g}") for v in by]


def _governing(model, r, name: str) -> dict:
    """Per component: the largest and the smallest value over the field's rows, where, and what
    governs it."""
    b = r.fields[name]
    idx, names = _rows(model, name)
    out = {}
    if not len(idx):
        return out
    for j, comp in enumerate(FIELDS[name].columns):
        entry = {}
        for side, vals, by, pick in (("max", b.max, b.max_by, np.argmax), ("min", b.min, b.min_by, np.argmin)):
            k = int(pick(vals[idx, j]))
            entry[side] = {"value": float(vals[idx[k], j]), FIELDS[name].of: names[k],
                           _BY[r.kind]: _by(r, by[idx[k], j:j + 1])[0]}
        out[comp] = entry
    return out


_BY = {"combination": "time_s", "envelope": "case"}
_OWN = ("stress",)      # fields written by their own module


def json_entry(results, r) -> dict:
    """The results.json entry of a combination with a dynamic case or of an envelope."""
    model = results.model
    head = ({"terms": [{"case": n, "kind": k, "factor": f} for f, n, k in r.terms],
             "time_grid_s": None if r.duration is None else list(r.duration),
             "static_part": r.static is not None}
            if r.kind == "combination" else {"over": list(r.over)})
    fields = {}
    for name, fld in FIELDS.items():
        if name not in r.fields or name in _OWN:
            if name in r.fields:
                fields[name] = stress_demands.demand_block(results, r)
            continue
        b = r.fields[name]
        idx, names = _rows(model, name)
        fields[name] = {"columns": list(fld.columns), "units": UNITS.get(name, "SI"),
                        "governing": _governing(model, r, name),
                        "values": {nm: {"max": b.max[k].tolist(), "min": b.min[k].tolist(),
                                        f"max_{_BY[r.kind]}": _by(r, b.max_by[k]),
                                        f"min_{_BY[r.kind]}": _by(r, b.min_by[k])}
                                   for k, nm in zip(idx, names)}}
    return {"name": r.name, "kind": r.kind, **head, "fields": fields, "checks": results.checks.cases[r.name]}


def write_extremes_tables(results, out: Path) -> None:
    """extremes_<field>.csv: one row per result, node or member and component, with its largest
    and smallest value and what governs each (time or case); written when the deck has a
    combination with a dynamic case or an envelope."""
    demands = results.demands
    if not demands:
        return
    model = results.model
    stress_demands.write_demand_stresses(results, out)
    for name, fld in FIELDS.items():
        if name in _OWN or any(name not in r.fields for r in demands):
            continue
        idx, names = _rows(model, name)
        head = ["result", "kind", fld.of, "component", "max", "max_time_s", "max_case", "min", "min_time_s",
                "min_case"]

        def rows(name=name, fld=fld, idx=idx, names=names):
            for r in demands:
                b = r.fields[name]
                for k, nm in zip(idx, names):
                    hi, lo = _by(r, b.max_by[k]), _by(r, b.min_by[k])
                    for j, comp in enumerate(fld.columns):
                        when = (hi[j], "", lo[j], "") if r.kind == "combination" else ("", hi[j], "", lo[j])
                        yield [r.name, r.kind, nm, comp, float(b.max[k, j]), _blank(when[0]), when[1],
                               float(b.min[k, j]), _blank(when[2]), when[3]]
        write_csv(out / _FILES.get(name, f"extremes_{name}.csv"), head, rows())


def _blank(v):
    return "" if v is None else v


def _largest(model, r, name: str, cols=None):
    """(value, row name, component, governing) of the value largest in size over the field."""
    b = r.fields[name]
    idx, names = _rows(model, name)
    cols = np.arange(len(FIELDS[name].columns)) if cols is None else np.asarray(cols)
    if not len(idx):
        return None
    hi, lo = b.max[np.ix_(idx, cols)], b.min[np.ix_(idx, cols)]
    if np.abs(hi).max() >= np.abs(lo).max():
        k, j = np.unravel_index(np.abs(hi).argmax(), hi.shape)
        by = b.max_by[idx[k], cols[j]]
        v = hi[k, j]
    else:
        k, j = np.unravel_index(np.abs(lo).argmax(), lo.shape)
        by = b.min_by[idx[k], cols[j]]
        v = lo[k, j]
    return float(v), names[k], FIELDS[name].columns[cols[j]], _by(r, np.array([by]))[0]


def _governed(r, g) -> str:
    if g is None:
        return ""
    return f" ({g})" if r.kind == "envelope" else f" (t = {g:.4g} s)"


def summary_lines(results, r, indent: str) -> list[str]:
    """The console lines of a combination with a dynamic case or an envelope: what it is, its
    largest translation, reaction, end force and force of a rigid link on the node it holds, with
    where and what governs each, and the balance of a combination's static part."""
    model = results.model
    if r.kind == "combination":
        terms = " ".join(f"{'+' if f >= 0 else '-'} {abs(f):g}*{n}" for f, n, _ in r.terms).lstrip("+ ")
        what = f"combination {terms}" + (" (by time)" if r.duration is not None else "")
    else:
        what = f"envelope over {', '.join(r.over)}"
    ch = results.checks.cases[r.name]
    lines = [f"  {r.name:<12} {what}; within the model's size "
             f"{'pass' if ch['translation_within_size_pass'] else 'FAIL'}"]
    for group in ((("displacement", "translation", (0, 1, 2), "m"), ("reaction", "reaction force", (0, 1, 2), "N"),
                   ("reaction", "reaction moment", (3, 4, 5), "N m")),
                  (("end_force", "end force", (0, 1, 2, 6, 7, 8), "N"),
                   ("end_force", "end moment", (3, 4, 5, 9, 10, 11), "N m")),
                  (("link_force", "link force", (0, 1, 2), "N"), ("link_force", "link moment", (3, 4, 5), "N m"))):
        parts = []
        for name, label, cols, unit in group:
            got = _largest(model, r, name, cols) if name in r.fields else None
            if got is not None and (name != "link_force" or got[0] != 0.0):   # a link may hold no moment
                v, where, comp, g = got
                parts.append(f"{label} {v:.4g} {unit} at {where} {comp}{_governed(r, g)}")
        if parts:
            lines.append(f"{indent}largest " + "; ".join(parts))
    if r.kind == "combination" and r.static is not None:
        ok = "pass" if results.checks.passed[r.name] else "FAIL"
        lines.append(f"{indent}static part: equilibrium {r.static.equilibrium:.1e} {ok}; peaks are bounds, "
                     "not a state in equilibrium")
    lines += stress_demands.demand_lines(results, r, indent)
    lines += [f"{indent}{w}" for w in ch["warnings"]]
    if r.kind == "envelope" and results.model.n_members:
        counts = np.bincount(r.fields["end_force"].max_by.ravel(), minlength=len(r.over))
        counts += np.bincount(r.fields["end_force"].min_by.ravel(), minlength=len(r.over))
        lines.append(f"{indent}end forces governed by: " + ", ".join(
            f"{n} {100 * c / max(counts.sum(), 1):.0f} %" for n, c in zip(r.over, counts) if c))
    return lines


def report_block(c: dict, doc: dict | None = None) -> str:
    """The report's section body of a results.json entry `c` of a combination or envelope: what
    it adds or bounds, then per field the governing largest and smallest value of each component
    (member stresses in the display units of the document `doc`, MPa without a choice)."""
    esc = html.escape
    if c["kind"] == "combination":
        head = " ".join(f"{'+' if t['factor'] >= 0 else '-'} {abs(t['factor']):g} {esc(t['case'])} ({t['kind']})"
                        for t in c["terms"]).lstrip("+ ")
        intro = f"<p>Adds {head}" + (f"; history parts by time over {c['time_grid_s'][0]:.4g} to "
                                     f"{c['time_grid_s'][1]:.4g} s" if c["time_grid_s"] else "") + \
            ". Spectrum and harmonic parts enter with both signs.</p>"
    else:
        intro = f"<p>Largest and smallest over {', '.join(esc(n) for n in c['over'])}.</p>"
    out = [intro]
    by = "time_s" if c["kind"] == "combination" else "case"
    for name, f in c["fields"].items():
        if name in _OWN:          # shown by the report in its own table (stress_demands.demand_report)
            continue
        rows = []
        for comp, g in f["governing"].items():
            cells = [esc(comp)]
            for side in ("max", "min"):
                e = g[side]
                where = e.get("node", e.get("member", ""))
                gov = e[by]
                gov = "" if gov is None else (f", t = {gov:.4g} s" if by == "time_s" else f", {esc(gov)}")
                cells.append(f"{e['value']:.4g} at {esc(where)}{gov}")
            rows.append("<tr>" + "".join(f"<td>{x}</td>" for x in cells) + "</tr>")
        if rows:
            out.append(f"<h3>{esc(name.replace('_', ' '))} ({esc(f['units'])})</h3><table><tr><th>component</th>"
                       f"<th>largest</th><th>smallest</th></tr>{''.join(rows)}</table>")
    return "\n".join(out)
