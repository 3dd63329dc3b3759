"""A study's folder: study.csv and study.parquet (one row a variant), records.csv and
records.parquet (one row a variant and record, with a suite), study.json (what ran, where,
the tracking flags) and report.html with its plots (tracked frequencies against each swept
parameter, excitation bands shaded; histograms of the frequencies for draws).

Parquet through pyarrow: a columnar file pandas and other tools read with its column types.
The folder is staged beside its place and swapped in whole (fem.output.folder), so a failed
run leaves the previous study's folder as it was.
"""

from __future__ import annotations

import csv
import html
import json
import math
from pathlib import Path

import numpy as np

from ..output import folder as fold

__all__ = ["CAUTION", "write_study"]

CAUTION = ("Results support, and never replace, the judgement of a qualified engineer; local codes and licensed "
           "practice govern.")


def _plain(x):
    if isinstance(x, (np.floating, float)):
        return float(x) if math.isfinite(x) else None
    if isinstance(x, np.integer):
        return int(x)
    return x


def write_table(columns: dict, stem: Path) -> None:
    """stem.csv and stem.parquet of `columns` (name -> list); empty cells where a value is
    missing (NaN)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    names = list(columns)
    rows = zip(*(columns[n] for n in names))
    with open(stem.with_suffix(".csv"), "w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(names)
        for row in rows:
            w.writerow(["" if v is None else (f"{v:.10g}" if isinstance(v, float) else v)
                        for v in map(_plain, row)])
    table = pa.table({n: [_plain(v) for v in columns[n]] for n in names})
    pq.write_table(table, stem.with_suffix(".parquet"))


def write_study(result, out) -> Path:
    """Write the study's folder at `out`; returns its path."""
    target, shown = fold.resolve_target(str(out), "study")
    fold.check_target(target, shown, None)
    fold.writable_parent(target, shown)
    staged = fold.stage(target)
    try:
        write_table(result.columns, staged / "study")
        if result.record_columns:
            write_table(result.record_columns, staged / "records")
        (staged / "study.json").write_text(json.dumps(_summary(result), indent=1) + "\n")
        _report(result, staged)
        fold.write_manifest(staged, target.name)
        fold.swap(staged, target, shown)
    except BaseException:
        import shutil

        shutil.rmtree(staged, ignore_errors=True)
        raise
    return target


def _summary(result) -> dict:
    s, t = result.study, result.tracked
    return {"schema": "quaver-study/1", "title": s.title, "deck": str(s.deck), "engine": result.engine,
            "variants": len(result.variants), "failed": result.failed, "seconds": round(result.seconds, 3),
            "tracked_case": None if t is None else t.case,
            "crossings": [] if t is None else [list(map(int, c)) for c in t.crossings],
            "veerings": [] if t is None else [list(map(int, c)) for c in t.veerings],
            "records": [{"case": r.case, "file": r.path.name, "scale": r.scale} for r in s.records],
            "caution": CAUTION}


def _bands(result) -> list[tuple[str, float, float, float]]:
    from ..excitation import excitation_bands

    try:
        return [(f"{b.source} {b.order}", b.low, b.high, b.margin) for b in excitation_bands(result.excitations)]
    except Exception:   # noqa: BLE001 - a plot without bands is still a plot
        return []


def _report(result, staged: Path) -> None:
    """report.html and plots/*.png."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    plots = staged / "plots"
    plots.mkdir()
    s, t = result.study, result.tracked
    pics = []
    bands = _bands(result)
    params = [(sw.name, sw.unit) for sw in s.sweeps]
    ok = np.array([r["status"] == "ok" for r in result.results])
    if t is not None:
        for name, unit in params:
            x = np.array([v.values[name] for v in result.variants], float)
            fig, ax = plt.subplots(figsize=(7, 4.5))
            for lo_name, lo, hi, m in bands:
                ax.axhspan(lo * (1 - m), hi * (1 + m), color="0.9", zorder=0)
                ax.axhspan(lo, hi, color="0.75", zorder=0)
                ax.text(x.min(), hi, f" {lo_name}", va="bottom", fontsize=7, color="0.35")
            nominal = np.array([v.draw == 0 for v in result.variants])
            for j in range(t.freq.shape[1]):
                ax.plot(x[nominal & ok], t.freq[nominal & ok, j], "o-", ms=3, label=f"mode {j + 1} of the base")
                if s.draws:
                    ax.plot(x[~nominal], t.freq[~nominal, j], ".", ms=2, alpha=0.4, color=ax.lines[-1].get_color())
            for i, a, b in t.crossings:
                ax.plot([x[i]], [t.freq[i, a - 1]], "kx", ms=8)
            top = np.nanmax(t.freq) if np.isfinite(t.freq).any() else 1.0
            ax.set_ylim(0, 1.3 * top)          # the modes followed, with the bands that reach them
            ax.set_xlabel(f"{name} [{unit}]" if unit else name)
            ax.set_ylabel("natural frequency [Hz]")
            ax.set_title(f"{t.case}: modes followed by MAC against {name}")
            ax.legend(fontsize=7, ncol=2)
            fig.tight_layout()
            png = plots / f"frequencies-{name}.png"
            fig.savefig(png, dpi=110)
            plt.close(fig)
            pics.append((png.name, f"tracked frequencies against {name}; bands: excitation (dark) and its "
                                   "margin (light); x: a crossing"))
        if s.draws:
            fig, ax = plt.subplots(figsize=(7, 4.5))
            for j in range(t.freq.shape[1]):
                f = t.freq[ok, j]
                ax.hist(f[np.isfinite(f)], bins=20, alpha=0.6, label=f"mode {j + 1}")
            ax.set_xlabel("natural frequency [Hz]")
            ax.set_ylabel("variants")
            ax.legend(fontsize=7)
            fig.tight_layout()
            png = plots / "frequencies-drawn.png"
            fig.savefig(png, dpi=110)
            plt.close(fig)
            pics.append((png.name, "tracked frequencies over the draws"))
    head = "".join(f"<th>{html.escape(c)}</th>" for c in result.columns if c != "message")
    rows = []
    for i in range(len(result.variants)):
        cells = []
        for c, col in result.columns.items():
            if c == "message":
                continue
            v = _plain(col[i])
            cells.append(f"<td>{'' if v is None else html.escape(f'{v:.5g}' if isinstance(v, float) else str(v))}</td>")
        rows.append("<tr>" + "".join(cells) + "</tr>")
    failed = "".join(f"<li>variant {r['index']}: {html.escape(r['message'])}</li>" for r in result.results
                     if r["status"] != "ok")
    body = [f"<h1>{html.escape(s.title or 'Study')} </h1>",
            f"<p class='caution'><b>Caution:</b> {CAUTION}</p>",
            f"<p>Deck {html.escape(str(s.deck))}; {len(result.variants)} variants on {html.escape(result.engine)} "
            f"in {result.seconds:.1f} s; {len(result.failed)} did not solve.</p>",
            *[f"<figure><img src='plots/{n}' alt='{html.escape(c)}'><figcaption>{html.escape(c)}</figcaption></figure>"
              for n, c in pics],
            f"<h2>Variants that did not solve</h2><ul>{failed}</ul>" if failed else "",
            f"<h2>Table</h2><table><tr>{head}</tr>{''.join(rows)}</table>"]
    (staged / "report.html").write_text(
        "<!doctype html><html><head><meta charset='utf-8'><title>study</title><style>"
        "body{font-family:sans-serif;margin:2em}table{border-collapse:collapse;font-size:12px}"
        "td,th{border:1px solid #bbb;padding:2px 5px}.caution{background:#fff4d6;padding:.5em}</style></head><body>"
        + "\n".join(body) + "</body></html>\n", encoding="utf-8")
