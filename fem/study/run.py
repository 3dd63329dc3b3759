"""Run a study: check it against the deck once, run its variants (Dask or serial), follow the
modes, and make its table.

    >>> result = run_study("decks/rack-bay.study", serial=True)     # doctest: +SKIP
    >>> result.columns["f1 [Hz]"]                                  # doctest: +SKIP
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import DeckError
from .engine import on_dask
from .engine import serial as run_serial
from .spec import Study, read_study
from .track import Tracked, track
from .variants import Variant
from .variants import variants as all_variants
from .work import Job, bundle

__all__ = ["StudyResult", "run_study"]


@dataclass
class StudyResult:
    """What a study found.

    study : the Study; variants : its Variants; results : each variant's compact result (dict:
    status, message, modes, resonance, peaks, checks_ok, seconds); tracked : the modes followed
    (None when no variant solved the tracked case); columns : the study table, column name ->
    list (one entry a variant); record_columns : the table of single records (empty without a
    suite); engine : where the variants ran; seconds : the whole run; excitations : the deck's
    declared machines and bands (for the plots)."""

    study: Study
    variants: list
    results: list
    tracked: Tracked | None
    columns: dict
    record_columns: dict = field(default_factory=dict)
    engine: str = ""
    seconds: float = 0.0
    excitations: tuple = ()
    phases: dict = field(default_factory=dict)

    @property
    def failed(self) -> list[int]:
        """The variants that did not solve."""
        return [r["index"] for r in self.results if r["status"] != "ok"]

    def write(self, folder) -> Path:
        """Write the table (CSV and Parquet), the record table and the report into `folder`."""
        from .output import write_study

        return write_study(self, folder)


def _records(study: Study) -> tuple:
    """(case, label, scale, table (m, 2)) of every record, read with the deck's table reader."""
    from ..deck.sources import Sources
    from ..deck.tables import read_table

    out = []
    for r in study.records:
        top = r.path.parent.resolve()
        sources = Sources(top / "study")
        table = read_table(sources, r.path.name, r.where, top / "study")
        out.append((r.case, r.path.name, float(r.scale), np.asarray(table, float)))
    return tuple(out)


def _check(study: Study, model) -> None:
    """Refuse, located at the study's line, what names nothing in the deck."""
    names = [c.name for c in model.cases]
    kinds = {c.name: c.kind for c in model.cases}
    from ..errors import suggest

    for c in study.cases or ():
        if c not in names:
            raise DeckError(f"cases: the deck has no case {c}; {suggest(c, names)}")
    if study.track is not None and kinds.get(study.track) != "modes":
        modes = [n for n in names if kinds[n] == "modes"]
        raise DeckError(f"track: {study.track} is not a modes case of the deck; "
                        + (suggest(study.track, modes) if modes else "it has none"))
    cases = set(study.records and [r.case for r in study.records])
    if len(cases) > 1:
        raise DeckError(f"records: one history case a study (found {', '.join(sorted(cases))})",
                        study.records[0].where)
    for case in cases:
        if kinds.get(case) != "history":
            raise DeckError(f"records: {case} is not a history case of the deck", study.records[0].where,
                            suggest(case, [n for n in names if kinds[n] == "history"]))
    nodes = set(model.node_names)
    for p in study.peaks:
        if p.case not in names:
            raise DeckError(f"peak {p.name}: the deck has no case {p.case}; {suggest(p.case, names)}", p.where)
        if p.node not in nodes:
            raise DeckError(f"peak {p.name}: the deck has no node {p.node}; {suggest(p.node, sorted(nodes))}",
                            p.where)
        if study.cases is not None and p.case not in study.cases:
            raise DeckError(f"peak {p.name}: case {p.case} is not among the cases solved ({', '.join(study.cases)})",
                            p.where)


def run_study(study, *, serial: bool = False, workers: int | None = None, scheduler: str | None = None,
              progress: bool = True, chunk: int | None = None) -> StudyResult:
    """Run `study` (a Study, or the path of a study file) and return its StudyResult.

    serial : run every variant in this process (no Dask); workers : the local cluster's worker
    processes (default the study's, 2); scheduler : the address of a running Dask scheduler
    (default the study's; None: a local cluster); chunk : variants a Dask task (default:
    shrinking tasks, each 1/(2 x workers) of the variants left, at least 2). Nothing is written: `StudyResult.write`.
    """
    from ..deck.reader import read_deck

    t0 = time.perf_counter()
    if not isinstance(study, Study):
        study = read_study(study)
    vs = all_variants(study)
    deck = Path(study.deck)
    files = bundle(deck)                                   # the deck as written, and what it reads
    model = read_deck(deck)
    _check(study, model)
    job = Job(files, study.cases, _records(study), study.track, study.shapes_at, study.peaks)
    # the first variant read here too: an override the deck refuses for every variant is said once
    read_deck(deck, let=vs[0].let or None)
    scheduler = scheduler or study.scheduler
    phases = {"prepare": time.perf_counter() - t0}
    if serial:
        t1 = time.perf_counter()
        results, where = run_serial(job, vs, progress), "serial, in this process"
        phases.update(start=0.0, run=time.perf_counter() - t1, tasks=len(vs), workers=1)
    else:
        results, where = on_dask(job, vs, workers or study.workers, scheduler, progress, chunk, phases)
    _work_phases(phases, results, phases.get("workers", 1))
    case = study.track or next((c.name for c in model.cases if c.kind == "modes"), None)
    tracked = track(results, vs, case, study.n_track) if case else None
    columns, record_columns = _tables(study, vs, results, tracked, job)
    return StudyResult(study, vs, results, tracked, columns, record_columns, where, time.perf_counter() - t0,
                       tuple(getattr(model, "excitations", ()) or ()), phases=phases)


def _work_phases(phases: dict, results: list[dict], workers: int) -> None:
    """The variants' own reading and solving time, and the rest of the workers' time."""
    phases["read"] = float(sum(r.get("read_s", 0.0) for r in results))
    phases["solve"] = float(sum(r.get("solve_s", 0.0) for r in results))
    busy = float(sum(r.get("seconds", 0.0) for r in results))
    phases["overhead"] = max(phases.get("run", 0.0) * workers - busy, 0.0)


def _label(name: str, unit: str) -> str:
    return f"{name} [{unit}]" if unit else name


def _tables(study: Study, vs: list[Variant], results: list[dict], tracked: Tracked | None, job: Job):
    cols: dict[str, list] = {"variant": [v.index for v in vs]}
    cols["status"] = [r["status"] for r in results]
    params = [(s.name, s.unit) for s in study.sweeps] + [(d.name, d.unit) for d in study.draws]
    for name, unit in params:
        cols[_label(name, unit)] = [v.values.get(name, np.nan) for v in vs]
    if study.draws:
        cols["draw"] = [v.draw for v in vs]
    cols["self-checks"] = [("pass" if r.get("checks_ok") else "FAIL") if r["status"] == "ok" else "" for r in results]
    if tracked is not None:
        k = tracked.freq.shape[1]
        for t in range(k):
            cols[f"f{t + 1} [Hz]"] = tracked.freq[:, t].tolist()
        for t in range(k):
            cols[f"mac{t + 1}"] = tracked.mac[:, t].tolist()
        for t in range(k):
            cols[f"mode{t + 1}"] = tracked.mode[:, t].tolist()
        cols["tracking"] = [tracked.flags(v.index) for v in vs]
    checks = sorted({c for r in results for c in r.get("resonance", {})})
    for c in checks:
        cols[f"resonance {c}"] = [("pass" if r["resonance"][c]["ok"] else "FAIL") if c in r.get("resonance", {})
                                  else "" for r in results]
        cols[f"closest margin {c} [%]"] = [r["resonance"][c]["closest_percent"] if c in r.get("resonance", {})
                                           else np.nan for r in results]
    suite = {rec[0] for rec in job.records}
    recs: dict[str, list] = {}
    for p in study.peaks:
        vals = [r["peaks"][p.name] if r["status"] == "ok" else None for r in results]
        if p.case in suite:
            cols[_label(f"{p.name} mean", p.unit)] = [np.mean(x) if x else np.nan for x in vals]
            cols[_label(f"{p.name} max", p.unit)] = [np.max(x) if x else np.nan for x in vals]
        else:
            cols[_label(p.name, p.unit)] = [x[0] if x else np.nan for x in vals]
    if job.records and any(p.case in suite for p in study.peaks):
        n = len(job.records)
        recs["variant"] = [v.index for v in vs for _ in range(n)]
        for name, unit in params:
            recs[_label(name, unit)] = [v.values.get(name, np.nan) for v in vs for _ in range(n)]
        recs["record"] = [rec[1] for _ in vs for rec in job.records]
        recs["scale"] = [rec[2] for _ in vs for rec in job.records]
        for p in study.peaks:
            if p.case in suite:
                recs[_label(p.name, p.unit)] = [r["peaks"][p.name][j] if r["status"] == "ok" else np.nan
                                                for r in results for j in range(n)]
    cols["seconds"] = [r.get("seconds", np.nan) for r in results]
    cols["message"] = [r["message"] for r in results]
    return cols, recs

