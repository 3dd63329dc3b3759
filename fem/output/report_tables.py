"""The report's tables of demands: the at-a-glance table at the top, reactions per node and the
governing member end forces of each case, combination and envelope, and the modes table with
the rotational participation.

Values are shown in the display units the deck or the command line chose (fem.display); without
a choice in the report's usual units (m, kN, kN m, MPa). Values under fem.display.ZERO_TOL of
the largest of the same quantity in the same table show as 0, so round-off (a -9e-16 beside
270 kN) never reads as a result.
"""

from __future__ import annotations

import html

import numpy as np

from ..analysis.modal_case import AXES
from ..display import tidy
from .fmt import doc_units, percent
from .report_page import ok as _ok
from .report_page import table as _table
from .tables import END_FORCES, REACTIONS, supported_nodes

__all__ = ["demand_tables", "glance_rows", "modes_table", "reaction_table", "shown_units", "end_force_table"]

_DEFAULT = {"length": (1.0, "m"), "force": (1e-3, "kN"), "moment": (1e-3, "kN m"), "stress": (1e-6, "MPa")}
# the field a result of each kind shows as its reactions and end forces, and what the values are
_FIELDS = {"static": ("reactions", "member_forces", "signed"), "spectrum": ("reactions", "member_forces", "combined peaks"),
           "free": ("reaction_peak", "member_peak", "peaks over time"),
           "history": ("reaction_peak", "member_peak", "peaks over time"),
           "harmonic": ("reaction_peak", "member_peak", "amplitudes, largest over the frequencies")}


def shown_units(doc: dict) -> dict[str, tuple[float, str]]:
    """quantity -> (display units per SI unit, label) of the report."""
    units = doc_units(doc)
    if not units.chosen:
        return dict(_DEFAULT)
    return {q: (units.per_si(q), units.label(q)) for q in _DEFAULT}


def _cells(values, scale) -> list[str]:
    return [f"{v:.4g}" for v in tidy(values, scale)]


def reaction_table(results, r, units) -> str:
    """Reactions at every supported node of a static, spectrum or response result `r`, with their
    sums; signed for a static case, peaks (>= 0) otherwise."""
    field, _, what = _FIELDS[r.kind]
    values = getattr(r, field, None)
    sup = supported_nodes(results.model)
    if values is None or not len(sup):
        return ""
    (kf, lf), (km, lm) = units["force"], units["moment"]
    v = np.asarray(values, float)[sup] * np.r_[[kf] * 3, [km] * 3]
    sf, sm = np.abs(v[:, :3]).max(initial=0.0), np.abs(v[:, 3:]).max(initial=0.0)
    names = results.model.node_names
    rows = [[html.escape(names[k]), *_cells(row[:3], sf), *_cells(row[3:], sm)] for k, row in zip(sup, v)]
    if what == "signed":
        total = v.sum(axis=0)
        rows.append(["<b>sum of forces</b>", *_cells(total[:3], sf), "", "", ""])   # nodal moments do not add
    head = ["node", *(f"{c} {lf}" for c in REACTIONS[:3]), *(f"{c} {lm}" for c in REACTIONS[3:])]
    return f"<div><h3>Reactions ({what})</h3>{_table(head, rows)}</div>"


def end_force_table(results, r, units) -> str:
    """The governing member end force of each component: the largest (and for a static case
    the smallest) over the members' ends, with the member and end."""
    _, field, what = _FIELDS[r.kind]
    values = getattr(r, field, None)
    if values is None or not len(values):
        return ""
    mf = np.asarray(values, float).reshape(-1, 2, 6)                     # (member, end, component)
    names = results.model.member_names
    rows = []
    for j, comp in enumerate(END_FORCES):
        k, unit = units["moment" if comp in ("T", "My", "Mz") else "force"]
        col = mf[:, :, j] * k
        scale = np.abs(mf[:, :, (j // 3) * 3:(j // 3) * 3 + 3]).max(initial=0.0) * k   # the quantity's largest
        cells = [comp]
        for pick in ((np.argmax, np.argmin) if what == "signed" else (np.argmax,)):
            m, e = np.unravel_index(pick(col), col.shape)
            cells += [f"{tidy([col[m, e]], scale)[0]:.4g} {unit}", f"{html.escape(names[m])} {'ij'[e]}"]
        rows.append(cells)
    head = (["component", "largest", "member end", "smallest", "member end"] if what == "signed"
            else ["component", "largest", "member end"])
    return f"<div><h3>Governing member end forces ({what})</h3>{_table(head, rows)}</div>"


def demand_tables(c: dict, units) -> str:
    """A combination's or envelope's results.json entry `c`: reactions per node (largest and
    smallest, with what governs each) and the governing end force of each component."""
    by = "case" if c["kind"] == "envelope" else "time_s"
    parts = []
    reac = c["fields"].get("reaction")
    if reac and reac["values"]:
        cols = reac["columns"]
        ks = [units["force" if j < 3 else "moment"][0] for j in range(len(cols))]
        rows = []
        every = np.abs([np.asarray(v[side], float) * ks for v in reac["values"].values() for side in ("max", "min")])
        scale_f, scale_m = every[:, :3].max(initial=0.0), every[:, 3:].max(initial=0.0)
        for node, v in reac["values"].items():
            for side in ("max", "min"):
                vals = np.asarray(v[side], float) * ks
                gov = v[f"{side}_{by}"]
                shown = np.r_[tidy(vals[:3], scale_f), tidy(vals[3:], scale_m)]     # each quantity on its own scale
                cells = [f"{x:.4g}" + _gov(g, by) for x, g in zip(shown, gov)]
                rows.append([html.escape(node) if side == "max" else "", "largest" if side == "max" else "smallest",
                             *cells])
        head = ["node", "bound", *(f"{cname} {units['force' if j < 3 else 'moment'][1]}" for j, cname in enumerate(cols))]
        timed = any(g is not None for v in reac["values"].values() for side in ("max", "min") for g in v[f"{side}_{by}"])
        note = ("governing case in brackets" if by == "case" else "time in brackets") if timed else "peaks, no time"
        parts.append(f"<div><h3>Reactions (largest and smallest, {note})</h3>{_table(head, rows, left=2)}</div>")
    ends = c["fields"].get("end_force")      # member stresses: their own table, stress_demands.demand_report
    if ends and ends["governing"]:
        rows = []
        for comp, g in ends["governing"].items():
            k, unit = units["moment" if comp.split("_")[0] in ("T", "My", "Mz") else "force"]
            cells = [html.escape(comp)]
            for side in ("max", "min"):
                e = g[side]
                cells += [f"{e['value'] * k:.4g} {unit}", html.escape(str(e.get("member", ""))) + _gov(e[by], by)]
            rows.append(cells)
        parts.append("<div><h3>Governing member end forces</h3>"
                     f"{_table(['component', 'largest', 'member', 'smallest', 'member'], rows)}</div>")
    return "\n".join(parts)


def _gov(g, by: str) -> str:
    if g is None:
        return ""
    return f" ({html.escape(str(g))})" if by == "case" else f" (t = {g:.4g} s)"


def modes_table(c: dict) -> str:
    """Frequencies, periods, effective-mass fractions in the six directions (rotations about the
    case's reference point), the cumulative translational fractions and each mode's motion."""
    eff = np.array(c["effective_mass_kg"], float)
    tot = np.array(c["participating_total_kg"], float)
    frac = np.divide(eff, tot, out=np.full_like(eff, np.nan), where=tot > 0)   # n/a where no mass moves
    cum = np.cumsum(frac, axis=0)
    labels = [m.get("label", "") for m in c.get("mode_character") or []]

    def pc(v):
        return percent(v).rstrip("%")

    n_dir = frac.shape[1]
    rows = [[j + 1, f"{f:.4g}", "rigid" if p is None or not np.isfinite(p) else f"{p:.4g}",
             *(pc(v) for v in frac[j]), *(pc(v) for v in cum[j, :3]),
             html.escape(labels[j]) if j < len(labels) else ""]
            for j, (f, p) in enumerate(zip(c["frequency_Hz"], c["period_s"]))]
    head = ["mode", "frequency Hz", "period s", *(f"{a} %" for a in AXES[:n_dir]), "cum. X %", "cum. Y %",
            "cum. Z %", "motion"]
    return _table(head, rows, left=0, last_left=True)


def glance_rows(doc: dict, check_rows: list, units) -> list[list]:
    """The at-a-glance rows: frequencies, self-checks, resonance and vibration limits, the
    largest translation and the governing stress of each case (item, value, verdict)."""
    rows = []
    passed = sum('class="pass"' in r[2] for r in check_rows)
    failed = [html.escape(r[0]) for r in check_rows if 'class="fail"' in r[2]]
    rows.append(["self-checks", f"{passed} of {len(check_rows)} pass" + (f"; failing: {'; '.join(failed)}" if failed else ""),
                 _ok(not failed)])
    kl, ll = units["length"]
    ks, ls = units["stress"]
    for c in doc["cases"]:
        if c["kind"] == "modes":
            f = c["frequency_Hz"][:4]
            rows.append([f"{html.escape(c['name'])}: lowest natural frequencies",
                         ", ".join(f"{v:.4g}" for v in f) + f" Hz ({len(c['frequency_Hz'])} modes)", ""])
            if c.get("resonance"):
                res = c["resonance"]
                bad = sum(r["verdict"] == "FAIL" for r in res["rows"])
                rows.append([f"{html.escape(c['name'])}: resonance check",
                             f"{bad} of {len(res['rows'])} mode-band pairs inside the margin", _ok(res["ok"])])
        for e in c.get("vibration_limits") or []:
            rows.append([f"{html.escape(c['name'])}: vibration limit {html.escape(str(e['limit']))}",
                         f"{100 * e['ratio']:.0f} % of the limit", _ok(e["pass"])])
    for c in [*doc["cases"], *doc.get("demands", [])]:
        top = next((c[k] for k in ("max_translation_m", "peak_translation_m", "peak_amplitude_m", "max_displacement_m")
                    if c.get(k) is not None), None)
        s = (c.get("stresses") or {}).get("governing")
        if top is None and s is None:
            continue
        text = [] if top is None else [f"translation {top * kl:.4g} {ll}"]
        if s is not None:
            ratio = "" if s["ratio_to_yield"] is None else f", {s['ratio_to_yield']:.3g} of yield"
            text.append(f"equivalent stress {s['mises_Pa'] * ks:.4g} {ls} in {html.escape(s['member'])}{ratio}")
        rows.append([f"{html.escape(c['name'])} ({c['kind']}): largest", "; ".join(text), ""])
    return rows
