"""Member stresses in the outputs: a stresses_<case>.csv table per case, a `stresses` block in
each case's results.json entry (SI), the summary's governing member per case and the report's
table of the most stressed members (display units, fem.display)."""

from __future__ import annotations

import html
import math

import numpy as np

from ..display import SI, DisplayUnits, tidy
from .tables import write_csv

__all__ = ["RATIO_NOTE", "REPORT_ROWS", "report_section", "stress_block", "summary_lines", "write_stress_tables"]

RATIO_NOTE = ("stress ratio: the equivalent (von Mises) stress over the yield strength the material declares; "
              "a plain ratio, not a design-code check (no buckling, no partial factors, no fatigue)")
REPORT_ROWS = 10      # members per case in the report's table, the most stressed first

# the stress quantities of fem.analysis.stress.MemberStresses, in table order
_STRESSES = ("sigma_max", "sigma_min", "axial", "bending_y", "bending_z", "shear", "torsion", "tau", "mises")
_BASIS = {"exact": "exact", "peak over time": "largest over time", "amplitude": "amplitudes, largest over the frequencies",
          "combined peaks": "per-mode stresses combined"}


def units_of(results) -> DisplayUnits:
    """The display units of a run: the deck's or the command line's choice, else SI."""
    return results.model.settings.get("units") or SI


def _at_key(s) -> str | None:
    return {"s": "time_s", "Hz": "frequency_Hz"}.get(s.at_unit) if s.at is not None else None


def _num(x) -> float | str:
    return float(x) if np.isfinite(x) else ""


def write_stress_tables(results, out) -> None:
    """stresses_<case>.csv for every case with member stresses: one row per member, stresses in
    the display unit (Pa by default) named in the header, values under fem.display.ZERO_TOL of
    the case's largest shown as 0 when units are chosen; empty cells where a section has no
    stress points."""
    units = units_of(results)
    model = results.model
    k = units.per_si("stress")
    for name, s in results.stresses.items():
        scale = np.nanmax(np.abs(np.r_[s.sigma_max, s.sigma_min, s.mises]), initial=0.0)
        cols = [np.asarray(getattr(s, q), float) * k for q in _STRESSES]
        if units.chosen:
            cols = [tidy(c, scale * k) for c in cols]
        x = np.asarray(s.x, float) * units.per_si("length")
        at = _at_key(s)
        head = ["member", "section", *(f"{q}_{units.header('stress')}" for q in _STRESSES),
                f"x_{units.header('length')}", "ratio_to_yield", *([at] if at else [])]
        rows = ([m, model.member_section[j], *(_num(c[j]) for c in cols), _num(x[j]), _num(s.ratio[j]),
                 *([_num(s.at[j])] if at else [])] for j, m in enumerate(model.member_names))
        write_csv(out / f"stresses_{name}.csv", head, rows)


def _none(x):
    return float(x) if x is not None and math.isfinite(x) else None


def stress_block(results, name: str) -> dict | None:
    """The `stresses` entry of a case in results.json (SI): how it was found, the governing
    member and every member's values; null for a section without stress points."""
    s = results.stresses.get(name)
    if s is None:
        return None
    model = results.model
    g = s.governing()
    at = _at_key(s)
    members = {}
    for j, m in enumerate(model.member_names):
        row = {f"{q}_Pa": _none(getattr(s, q)[j]) for q in _STRESSES}
        row["x_m"] = _none(s.x[j])
        row["ratio_to_yield"] = _none(s.ratio[j])
        if at:
            row[at] = _none(s.at[j])
        members[m] = row
    missing = sorted({model.member_section[j] for j in np.flatnonzero(np.isnan(s.mises))})
    return {"basis": s.basis, "ratio_note": RATIO_NOTE,
            "governing": None if g is None else {"member": model.member_names[g], "section": model.member_section[g],
                                                 "point": _point(model, s, g), **members[model.member_names[g]]},
            "sections_without_stress_points": missing, "members": members}


def _point(model, s, j: int) -> str | None:
    """The governing stress point of member j in words (the largest |sigma|), None if not known."""
    if s.point is None:
        return None
    from ..analysis.stress_field import point_name

    return point_name(model, j, int(s.point[j])) or None


def summary_lines(results, name: str, indent: str) -> list[str]:
    """The governing member of a case: its equivalent stress, normal stress range and ratio
    (MPa unless display units are chosen)."""
    s = results.stresses.get(name)
    if s is None:
        return []
    model = results.model
    units = units_of(results)
    k, unit = (units.per_si("stress"), units.label("stress")) if units.chosen else (1e-6, "MPa")
    g = s.governing()
    if g is None:
        return [f"{indent}stresses: no member has stress points (declare Wy, Wz of generic sections)"]
    where = ""
    if s.at is not None and np.isfinite(s.at[g]):
        where = f" at {s.at[g]:.4g} {s.at_unit}"
    ratio = f", {s.ratio[g]:.3g} of yield (a plain ratio, not a code check)" if np.isfinite(s.ratio[g]) else ""
    sign = "+/-" if s.basis in ("amplitude", "combined peaks") else ""
    rng = (f"normal {sign}{s.sigma_max[g] * k:.4g} {unit}" if sign else
           f"normal {s.sigma_min[g] * k:.4g} to {s.sigma_max[g] * k:.4g} {unit}")
    pt = _point(model, s, g)
    lines = [f"{indent}stresses ({_BASIS[s.basis]}): governing member {model.member_names[g]} "
             f"({model.member_section[g]}{', ' + pt if pt else ''}), equivalent {s.mises[g] * k:.4g} {unit}{where}; {rng}{ratio}"]
    missing = sorted({model.member_section[j] for j in np.flatnonzero(np.isnan(s.mises))})
    if missing:
        lines.append(f"{indent}no stresses in the members of section(s) {', '.join(missing)}: a generic section "
                     "needs Wy and Wz for them")
    return lines


def report_section(c: dict, doc: dict, table) -> str:
    """The report's table of a case's most stressed members (display units of the document)."""
    block = c.get("stresses")
    if not block or block["governing"] is None:
        return ""
    from .fmt import doc_units

    units = doc_units(doc)
    k, unit = (units.per_si("stress"), units.label("stress")) if units.chosen else (1e-6, "MPa")
    rows = [(m, v) for m, v in block["members"].items() if v["mises_Pa"] is not None]
    rows.sort(key=lambda mv: -mv[1]["mises_Pa"])
    at = next((key for key in ("time_s", "frequency_Hz") if key in rows[0][1]), None) if rows else None

    top = rows[0][1]["mises_Pa"] if rows else 0.0

    def f(v):       # round-off under ZERO_TOL of the case's largest stress shows as 0
        return "" if v is None else f"{tidy([v], top)[0] * k:.4g}"

    head = ["member", f"sigma max {unit}", f"sigma min {unit}", f"shear {unit}", f"torsion {unit}",
            f"equivalent {unit}", "ratio to yield", *(["at " + at.replace("_", " ")] if at else [])]
    body = [[html.escape(m), f(v["sigma_max_Pa"]), f(v["sigma_min_Pa"]), f(v["shear_Pa"]), f(v["torsion_Pa"]),
             f(v["mises_Pa"]), "" if v["ratio_to_yield"] is None else f"{v['ratio_to_yield']:.3g}",
             *([f"{v[at]:.4g}" if v[at] is not None else ""] if at else [])] for m, v in rows[:REPORT_ROWS]]
    note = (f"<p>Member stresses ({html.escape(_BASIS[block['basis']])}), the {min(REPORT_ROWS, len(rows))} most "
            f"stressed of {len(block['members'])}; every member is in stresses_{html.escape(c['name'])}.csv. "
            f"The equivalent stress is sqrt(sigma^2 + 3 tau^2) of the largest of each (an upper bound). "
            f"{html.escape(RATIO_NOTE[0].upper() + RATIO_NOTE[1:])}.</p>")
    return note + table(head, body)
