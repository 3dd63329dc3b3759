"""The resonance checks of a run in its outputs: the console lines, results.json entries, the
CSV table of each checked modes case, and the report's section with the diagrams.

The verdicts are the checks' own (`fem.analysis.resonance.ResonanceCheck.ok`, and
`fem.checks.SelfChecks.resonance_failed` for the exit status); nothing is judged here.
"""

from __future__ import annotations

import html
import re
from pathlib import Path

from ..analysis.resonance import COLUMNS

__all__ = ["SUMMARY_ROWS", "case_entry", "excitations_entry", "report_section", "summary_lines",
           "verdict_line", "write_resonance_tables"]

SUMMARY_ROWS = 8         # failing rows printed per modes case; every row is in the CSV table


def _band(low: float, high: float) -> str:
    return f"{low:.4g}" if low == high else f"{low:.4g}-{high:.4g}"


def summary_lines(check, indent: str) -> list[str]:
    """The console lines of one check: its verdict, then a short table of the failures,
    closest to their excitation first, then a line when the modes stop short."""
    fails = check.ranked_failures()
    if not fails:
        lines = [f"{indent}resonance: every mode clear of {_sources(check)} by the required margin"]
    else:
        lines = [f"{indent}resonance: {len(fails)} mode-band pair{'s' if len(fails) != 1 else ''} inside the "
                 f"required margin (closest first):",
                 f"{indent}  {'mode':>4}  {'Hz':>8}  {'source':<10} {'order':<14} {'band Hz':>13}  "
                 f"{'margin':>8}  {'needs':>6}  motion at the source's node"]
        for r in fails[:SUMMARY_ROWS]:
            margin = "inside" if r.margin == 0 else f"{r.margin:+.1f} %"
            at = "" if r.node is None else f"{r.node} {100 * r.node_share:.0f} % of the mode's largest"
            lines.append(f"{indent}  {r.mode:>4}  {r.freq:>8.4g}  {r.source:<10} {r.order:<14} "
                         f"{_band(r.low, r.high):>13}  {margin:>8}  {r.required:>4.3g} %  {at}".rstrip())
        if len(fails) > SUMMARY_ROWS:
            lines.append(f"{indent}  ... and {len(fails) - SUMMARY_ROWS} more in resonance_{check.case}.csv")
    if not check.complete:
        lines.append(f"{indent}resonance: the modes reach only {check.complete_to:.4g} Hz, below the top of the "
                     f"bands' margins ({check.needed_to:.4g} Hz): modes above were not checked; ask the modes "
                     "case for more (a higher fmax or count)")
    return lines


def _sources(check) -> str:
    names = list(dict.fromkeys(b.source for b in check.bands))
    return ", ".join(names)


def verdict_line(results) -> str | None:
    """The run's line on the resonance checks (a design check, apart from the self-checks), or
    None when no modes case checks excitations."""
    if not results.resonance:
        return None
    failed = results.checks.resonance_failed
    if not failed:
        return "resonance check: pass in " + ", ".join(results.resonance)
    return ("resonance check: FAIL in " + ", ".join(failed)
            + " (a mode within the required margin of an excitation, or modes not computed high enough); "
              "a failed design check")


def excitations_entry(model) -> list[dict]:
    """The model's machines and bands for results.json (speeds in Hz and rpm, margins in percent)."""
    return [e.as_json() for e in model.excitations]


def case_entry(results, name: str) -> dict | None:
    """A modes case's resonance check for results.json, or None when it checks no excitation."""
    check = results.resonance.get(name)
    return None if check is None else check.as_json()


def _file(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9_.-]", "_", name)


def write_resonance_tables(results, out: Path) -> None:
    """resonance_<case>.csv for each checked modes case: every (mode, band) row, COLUMNS."""
    from .tables import write_csv

    for name, check in results.resonance.items():
        write_csv(out / f"resonance_{_file(name)}.csv", COLUMNS,
                  ([("" if v is None else v) for v in row.values()] for row in check.table()))


def report_images(pdir: Path, results) -> dict[str, list]:
    """The frequency-vs-speed diagram of each machine of each check, by modes case name."""
    from .resonance_plot import plot_resonance

    out = {}
    for name, check in results.resonance.items():
        machines = list(dict.fromkeys(b.source for b in check.bands if b.speed is not None))
        out[name] = [(plot_resonance(pdir / f"{_file(name)}_resonance_{_file(m)}.png", check, m),
                      f"{m}: natural frequencies against running speed") for m in machines]
    return out


def report_section(c: dict, table) -> list[str]:
    """HTML parts of a modes case's resonance check from its results.json entry `c` (with
    `resonance` and `mode_character`); `table` is the report's table helper."""
    check = c.get("resonance")
    if not check:
        return []
    labels = [m.get("label", "") for m in c.get("mode_character") or []]
    fails = [r for r in check["rows"] if r["verdict"] == "FAIL"]
    # as ResonanceCheck.ranked_failures: closest first, then the mode moving the source's node most
    fails.sort(key=lambda r: (abs(r["margin_percent"]) - r["required_percent"], -(r["node_share_percent"] or 0.0),
                              r["mode"]))
    verdict = ('<span class="pass">pass</span>' if check["ok"] else '<span class="fail">FAIL</span>')
    parts = [f"<h3 id='resonance-{html.escape(c['name'])}'>Resonance check: {verdict}</h3>",
             f"<p>{len(fails)} of {len(check['rows'])} mode-band pairs inside the required margin; every pair is "
             f"in <code>resonance_{html.escape(_file(c['name']))}.csv</code>. The check compares frequencies only; "
             "it does not say how large the response is.</p>"]
    if not check["complete"]:
        parts.append(f"<p class='fail'>The modes reach only {check['modes_complete_to_Hz']:.4g} Hz, below the top of "
                     f"the bands' margins ({check['modes_needed_to_Hz']:.4g} Hz): modes above were not checked.</p>")
    if fails:
        rows = []
        for r in fails:
            share = "" if r["node_share_percent"] is None else f"{r['node']} {r['node_share_percent']:.0f} %"
            motion = labels[r["mode"] - 1] if r["mode"] - 1 < len(labels) else r["motion"]
            rows.append([r["mode"], f"{r['frequency_Hz']:.4g}", html.escape(r["source"]), html.escape(r["order"]),
                         _band(r["band_low_Hz"], r["band_high_Hz"]),
                         "inside" if r["margin_percent"] == 0 else f"{r['margin_percent']:+.1f} %",
                         f"{r['required_percent']:.3g} %", html.escape(share), html.escape(motion)])
        parts.append(table(["mode", "frequency Hz", "source", "order", "band Hz", "margin", "required",
                            "source's node moves", "motion"], rows, left=0))
    return parts
