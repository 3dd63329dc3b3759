"""A modes case's frequency sensitivities in the results: its block of results.json, its two CSV
tables and its report section ("to raise mode k, stiffen these parts").

The numbers are those of `fem.analysis.sensitivity.FrequencySensitivity`, unchanged: d f / d p
in Hz per unit scale of a part (p = 1 is the model as given), d ln f / d ln p (the % change of
f for a 1 % change of the part) and each part's share of the mode's strain or kinetic energy.
Rigid-body modes (f = 0) have no frequency to move: their cells are empty (CSV) or left out.
"""

from __future__ import annotations

import html

import numpy as np

from ..checks import sensitivity_checks

__all__ = ["REPORT_MODES", "sensitivity_block", "sensitivity_section", "write_sensitivity_tables"]

REPORT_MODES = 3         # "to raise mode k" tables in the report: the first elastic modes (the CSV has all)
MASS_KINDS = ("member mass", "point mass")


def _num(x) -> float | None:
    return float(x) if np.isfinite(x) else None


def _row(r: dict) -> dict:
    return {"rank": r["rank"], "kind": r["kind"], "part": r["target"], "d_freq_Hz": r["d_freq"],
            "dlnf_dlnp": r["percent"], "energy_share": r["share"]}


def _partners(s, j: int) -> list[int]:
    """Mode numbers (1-based, in the case) that share mode column j's repeated eigenvalue."""
    if not s.repeated[j]:
        return []
    return [int(s.mode[i]) + 1 for i in np.flatnonzero(s.cluster == s.cluster[j]) if i != j]


def sensitivity_block(s, case) -> dict:
    """The `sensitivity` entry of a modes case in results.json: how members are grouped, the
    energy check, and per elastic mode the `sensitivity_rows` parts whose stiffening raises it
    most and those whose lightening does (`FrequencySensitivity.rows`)."""
    modes = []
    for j in range(len(s.freq)):
        if not s.freq[j] > 0:
            continue
        modes.append({"mode": int(s.mode[j]) + 1, "frequency_Hz": float(s.freq[j]),
                      "repeated_with": _partners(s, j),
                      "stiffen": [_row(r) for r in s.rows(j, case.sensitivity_rows)],
                      "lighten": [_row(r) for r in s.rows(j, case.sensitivity_rows, kinds=MASS_KINDS)]})
    return {"grouped_by": case.sensitivity, "rows_per_mode": case.sensitivity_rows,
            "parameter": "scale factor p of one part, p = 1 as modelled; d_freq_Hz = d f / d p, "
                         "dlnf_dlnp = d ln f / d ln p",
            "tables": [f"sensitivity_{case.name}.csv", f"energy_shares_{case.name}.csv"],
            "repeated_modes": [int(s.mode[j]) + 1 for j in np.flatnonzero(s.repeated)],
            "checks": {**sensitivity_checks(s), "energy_check_per_mode": [float(x) for x in s.energy_check]},
            "modes": modes}


def write_sensitivity_tables(out, results) -> None:
    """sensitivity_CASE.csv (every parameter of every mode) and energy_shares_CASE.csv (each
    member's share of each mode's strain and kinetic energy) for each modes case with
    sensitivities."""
    from .tables import write_csv

    for name, s in results.sensitivities.items():
        logd = s.log_derivative()
        k = len(s.freq)
        write_csv(out / f"sensitivity_{name}.csv",
                  ["mode", "frequency_Hz", "kind", "part", "d_freq_Hz", "d_lambda_rad2_s2", "dlnf_dlnp", "repeated"],
                  ([int(s.mode[j]) + 1, float(s.freq[j]), s.kind[p], s.target[p], _cell(s.d_freq[p, j]),
                    float(s.d_lambda[p, j]), _cell(logd[p, j]), int(s.repeated[j])]
                   for j in range(k) for p in range(len(s.kind))))
        write_csv(out / f"energy_shares_{name}.csv",
                  ["mode", "frequency_Hz", "member", "strain_share", "kinetic_share"],
                  ([int(s.mode[j]) + 1, float(s.freq[j]), m, _cell(s.member_strain_share[e, j]),
                    float(s.member_kinetic_share[e, j])]
                   for j in range(k) for e, m in enumerate(s.member_names)))


def _cell(x) -> float | str:
    """A table cell: empty where the value is undefined (a rigid-body mode's slope)."""
    return float(x) if np.isfinite(x) else ""


def sensitivity_section(c: dict) -> str:
    """The report's HTML for a modes case entry `c` of results.json with a sensitivity block:
    a "to raise mode k" table for each of the first REPORT_MODES elastic modes, repeated pairs
    flagged; "" when the case has none."""
    from .report import _ok, _table

    block = c.get("sensitivity")
    if not block:
        return ""
    esc = html.escape
    ch = block["checks"]
    parts = [f"<h3 id='raise-{esc(c['name'])}'>Which parts move the frequencies ({esc(c['name'])}, "
             f"members grouped by {esc(block['grouped_by'])})</h3>",
             "<p>Slopes at the design as modelled: scaling one part's stiffness by 1 % changes the frequency "
             "by the '% of f' column (first order; solve the changed design for large changes). Every row is "
             f"in <code>{esc(block['tables'][0])}</code>, each member's energy share in "
             f"<code>{esc(block['tables'][1])}</code>. Energy check {ch['energy_check']:.1e} "
             f"{_ok(ch['energy_check_pass'])}.</p>"]
    for m in block["modes"][:REPORT_MODES]:
        title = f"To raise mode {m['mode']} ({m['frequency_Hz']:.4g} Hz), stiffen"
        parts.append(f"<p><b>{esc(title)}</b></p>")
        if m["repeated_with"]:
            others = ", ".join(str(x) for x in m["repeated_with"])
            parts.append(f"<p><b>Repeated frequency</b> with mode {esc(others)}: the slopes are one-sided; a part "
                         "that breaks the symmetry raises one mode of the pair and may leave the other.</p>")
        parts.append(_table(["rank", "part", "stiffness", "Hz per unit scale", "% of f per % of part",
                             "share of strain energy"],
                            [[r["rank"], esc(str(r["part"])), esc(r["kind"]), f"{r['d_freq_Hz']:.4g}",
                              f"{r['dlnf_dlnp']:.3g}", f"{100 * r['energy_share']:.1f} %"] for r in m["stiffen"]],
                            left=0))
        if m["lighten"]:
            top = m["lighten"][0]
            parts.append(f"<p>Lightening helps most at {esc(top['kind'])} {esc(str(top['part']))} "
                         f"({top['dlnf_dlnp']:.3g} % of f per % of its mass).</p>")
    return "\n".join(parts)
