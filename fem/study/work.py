"""One variant's work, the same on a Dask worker and in the serial path: read the deck with the
variant's overrides, solve, and keep what the study table needs.

The deck travels as text: `bundle` gathers the deck and every file it reads (includes, tables)
once in the study's process; a worker writes them into a private temporary folder of its own
the first time it meets that bundle (by digest) and reads the deck from there, so the deck's
messages name the same files, and no disk is shared. Each variant then costs a read of the deck
(its parse trees kept for the next variant: only values change) and a solve.

A variant that the reader or the solve refuses (a QuaverError: a value out of range, a
mechanism) comes back with status 'refused' and the message; anything else, status 'error'
with the exception's type and text. Neither stops the study.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import tempfile
import time
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from ..deck.reader import _Reader
from ..errors import DeckError, QuaverError

__all__ = ["Bundle", "Job", "bundle", "run_chunk", "run_variant"]

_AXIS = {"x": 0, "y": 1, "z": 2, "rx": 3, "ry": 4, "rz": 5}


@dataclass(frozen=True)
class Bundle:
    """The deck `name` (relative to its folder) and `files` (relative path -> bytes): the deck
    and every file it read; `digest` names the set."""

    name: str
    files: dict
    digest: str


@dataclass(frozen=True)
class Job:
    """What every variant of a study shares, sent to each worker once: the deck's bundle, the
    cases to solve (None: all), the record suite [(case, label, scale, table (m, 2))], the modes
    case to track, the node patterns of kept shapes and the peaks."""

    bundle: Bundle
    cases: tuple | None = None
    records: tuple = ()
    track: str | None = None
    shapes_at: tuple = ()
    peaks: tuple = ()
    extra: dict = field(default_factory=dict)


class _Recording(_Reader):
    """A deck reading that remembers the tables it reads."""

    def __init__(self, top, let=None):
        super().__init__(top, let)
        self.tables: list[Path] = []

    def read_table(self, rel, where, deck_file):
        table = super().read_table(rel, where, deck_file)
        self.tables.append((deck_file.parent / rel).resolve())
        return table


def bundle(deck, let: dict | None = None) -> Bundle:
    """Read the deck once (with `let`) and gather it and the files it read into a Bundle."""
    deck = Path(deck)
    if not deck.is_file():
        raise DeckError(f"deck '{deck}' does not exist" if not deck.exists() else f"deck '{deck}' is not a file")
    r = _Recording(deck, let)
    r.statements.read_file(deck)
    r.model()
    top = deck.resolve().parent
    files = {}
    for p in [*r.sources.lines, *r.tables]:
        p = Path(p)
        if p.is_absolute() and top in p.parents and p.is_file():
            files[str(p.relative_to(top))] = p.read_bytes()
    h = hashlib.sha256()
    for k in sorted(files):
        h.update(k.encode() + b"\0" + hashlib.sha256(files[k]).digest())
    return Bundle(str(deck.resolve().relative_to(top)), files, h.hexdigest()[:16])


_FOLDERS: dict[str, Path] = {}      # bundle digest -> where this process wrote it
if hasattr(os, "register_at_fork"):     # a forked worker writes its own (its parent removes these)
    os.register_at_fork(after_in_child=_FOLDERS.clear)


def _folder(b: Bundle) -> Path:
    where = _FOLDERS.get(b.digest)
    if where is None:
        from multiprocessing.util import Finalize

        where = Path(tempfile.mkdtemp(prefix="quaver-study-"))
        # removed when this process ends: multiprocessing runs these finalizers both at an
        # interpreter's exit and at the end of a forked child, which skips the atexit handlers
        Finalize(None, shutil.rmtree, args=(where, True), exitpriority=0)
        for rel, data in b.files.items():
            p = where / rel
            p.parent.mkdir(parents=True, exist_ok=True)
            p.write_bytes(data)
        _FOLDERS[b.digest] = where
    return where


def run_variant(job: Job, index: int, let: dict) -> dict:
    """Variant `index` of the study with overrides `let`: a dict of plain values and small
    arrays (see the module docstring)."""
    from ..deck.reader import read_deck
    from ..deck.sources import parses_kept

    out = {"index": index, "status": "ok", "message": ""}
    t0 = time.perf_counter()
    try:
        with parses_kept():
            model = read_deck(_folder(job.bundle) / job.bundle.name, let=let or None)
        t1 = time.perf_counter()
        model, names = _with_records(model, job)
        out.update(_solved(model, names, job))
        out["read_s"], out["solve_s"] = t1 - t0, time.perf_counter() - t1
    except QuaverError as exc:
        out.update(status="refused", message=str(exc).splitlines()[0])
    except Exception as exc:   # noqa: BLE001 - one variant's fault is reported in its row, not the study's end
        out.update(status="error", message=f"{type(exc).__name__}: {exc}")
    out["seconds"] = time.perf_counter() - t0
    return out


def run_chunk(job: Job, items) -> list[dict]:
    """The variants `items` [(index, let)] one after another, as one task of a worker, BLAS on
    one thread (a worker process shares the cores with the others; Dask's nanny sets this in the
    environment, a worker started without one may not): a row each, a failure in its own row."""
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:                 # a dependency; without it the environment's setting stands
        return [run_variant(job, i, let) for i, let in items]
    with threadpool_limits(limits=1, user_api="blas"):
        return [run_variant(job, i, let) for i, let in items]


def record_case_name(case: str, r: int) -> str:
    return f"{case}~{r + 1}"


def _with_records(model, job: Job):
    """The model with the suite's history case replaced by one copy per record (its time
    function the record times its scale), and the case names to solve."""
    from ..timefn import TimeFunction

    names = list(job.cases) if job.cases else None
    if not job.records:
        return model, names
    case = job.records[0][0]
    own = next((c for c in model.cases if c.name == case), None)
    if own is None or own.kind != "history":
        raise DeckError(f"records: the deck has no history case '{case}'")
    if own.time is None:
        raise DeckError(f"records: case {case} has no time = ... or table = ... of its own for a record to replace")
    copies = [replace(own, name=record_case_name(case, r), time=TimeFunction("table", table=table * [1.0, scale]))
              for r, (_, _, scale, table) in enumerate(job.records)]
    cases = []
    for c in model.cases:
        cases += copies if c is own else [c]
    model = replace(model, cases=cases)
    if names is not None:
        names = [n for n in names if n != case] + [c.name for c in copies]
    return model, names


def _solved(model, names, job: Job) -> dict:
    from ..solver import solve

    results = solve(model, names)
    out = {"checks_ok": bool(results.checks.all_pass), "modes": {}, "resonance": {}, "peaks": {}}
    nodes = list(model.node_names)
    if job.shapes_at:
        import fnmatch

        keep = [i for i, n in enumerate(nodes) if any(fnmatch.fnmatchcase(n, p) for p in job.shapes_at)]
    else:
        keep = list(range(len(nodes)))
    for name, r in results.cases.items():
        if r.kind == "modes" and (job.track is None or name == job.track):
            out["modes"][name] = {"freq": np.asarray(r.modes.freq, float),
                                  "shapes": np.ascontiguousarray(r.shapes[keep, :3, :]),
                                  "nodes": [nodes[i] for i in keep]}
            if job.track is None:
                break
    for name, check in results.resonance.items():
        closest = check.margin.flat[np.argmin(np.abs(check.margin))] if check.margin.size else np.nan
        out["resonance"][name] = {"ok": bool(check.ok), "failures": int((~check.passed).sum()),
                                  "closest_percent": float(closest)}
    for p in job.peaks:
        out["peaks"][p.name] = _peak(results, model, p, job)
    return out


def _peak(results, model, p, job: Job) -> list[float]:
    """The peak asked for, once per record of the suite when its case is the suite's."""
    try:
        node = list(model.node_names).index(p.node)
    except ValueError:
        raise DeckError(f"peak {p.name}: the deck has no node '{p.node}'", p.where) from None
    suite = [record_case_name(p.case, r) for r in range(len(job.records))] if job.records and \
        job.records[0][0] == p.case else [p.case]
    return [_largest(results[c], node, _AXIS[p.axis], p) for c in suite]


def _largest(r, node: int, axis: int, p) -> float:
    if p.quantity == "acceleration":
        if r.kind != "history":
            raise DeckError(f"peak {p.name}: accelerations are kept by history cases; {p.case} is a {r.kind} case",
                            p.where)
        where = np.flatnonzero(np.asarray(r.record) == node)
        if not len(where):
            raise DeckError(f"peak {p.name}: case {p.case} does not record node {p.node}", p.where,
                            "add it to the case's record = ... option")
        return float(np.abs(r.a[:, where[0], axis]).max())
    if r.kind == "modes":
        raise DeckError(f"peak {p.name}: {p.case} is a modes case, which has no peaks", p.where)
    if p.quantity == "displacement":
        field_ = r.u if r.kind in ("static", "spectrum") else r.peak
    else:
        field_ = r.reactions if r.kind in ("static", "spectrum") else r.reaction_peak
    return float(np.abs(field_[node, axis]))
