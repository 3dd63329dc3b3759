"""The vibration limits of a run's harmonic cases in its outputs: the console lines, the
results.json entry, the CSV table of each case with limits, and the report's rows.

The verdicts are the checks' own (`fem.analysis.vibration_check.LimitCheck.ok`, and
`fem.checks.SelfChecks.limits_failed` for the exit status); nothing is judged here.
"""

from __future__ import annotations

import html
import re
from pathlib import Path

from ..analysis.vibration_check import COLUMNS
from ..vibration import QUANTITIES

__all__ = ["case_entry", "report_rows", "summary_lines", "verdict_line", "write_limit_tables"]


def _file(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]", "_", name)


def summary_lines(r, node_names, indent: str) -> list[str]:
    """One line per limit of harmonic result `r`: the limit, the largest value and where, pass or FAIL."""
    return [f"{indent}{c.line(node_names)}" for c in getattr(r, "limits", ())]


def verdict_line(results) -> str | None:
    """The run's line on the vibration limits (a design check, apart from the self-checks), or
    None when no harmonic case has one."""
    cases = [r.name for r in results.of_kind("harmonic") if getattr(r, "limits", ())]
    if not cases:
        return None
    failed = results.checks.limits_failed
    if not failed:
        return "vibration limits: pass in " + ", ".join(cases)
    return ("vibration limits: FAIL in " + ", ".join(failed)
            + " (the motion at a node above its limit over the operating range); a failed design check")


def case_entry(results, r) -> dict:
    """`vibration_limits` of a harmonic case's results.json entry: each limit checked, in order
    (an empty list when the case has none)."""
    names = results.model.node_names
    return {"vibration_limits": [c.as_json(names) for c in getattr(r, "limits", ())]}


def write_limit_tables(results, out: Path) -> None:
    """limits_<case>.csv for each harmonic case with limits: a row per limit, node and direction."""
    from .tables import write_csv

    names = results.model.node_names
    for r in results.of_kind("harmonic"):
        if getattr(r, "limits", ()):
            write_csv(out / f"limits_{_file(r.name)}.csv", COLUMNS,
                      ([("" if v is None else v) for v in row.values()] for c in r.limits for row in c.rows(names)))


def report_rows(c: dict, ok) -> list[list]:
    """Rows (quantity, value, verdict) of a harmonic case's limits from its results.json entry
    `c`; `ok` is the report's pass/fail marker."""
    rows = []
    for e in c.get("vibration_limits") or []:
        _, unit, scale = QUANTITIES[e["quantity"]]
        got = e["largest_rms"] if e["value_is_rms"] else e["largest_amplitude"]
        rows.append([f"limit {e['limit']}: {html.escape(e['text'])} at {html.escape(', '.join(e['nodes'][:6]))}"
                     + (" ..." if len(e["nodes"]) > 6 else ""),
                     f"largest {scale * got:.4g} {unit}{' RMS' if e['value_is_rms'] else ''} at "
                     f"{html.escape(e['node'])} {e['direction']}, {e['frequency_Hz']:.4g} Hz "
                     f"({100 * e['ratio']:.0f} % of the limit)", ok(e["pass"])])
    return rows
