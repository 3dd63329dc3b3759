"""Combinations with dynamic cases, and envelopes: the largest and smallest value of every result
field, and what governs it.

A combination is a sum of factor * case. Its terms enter by what their results are:

static     exact and signed: the sum of factor * value (`StaticResult`).
history    a signed time series: added step by step to the static part (every history term of a
           combination must share its time grid), then the largest and smallest value over the
           steps, with their times.
spectrum   a peak with no sign (the modal combination loses it): enters with both signs,
harmonic   + |factor| * peak to the largest value and - |factor| * peak to the smallest. A
           harmonic case's peak is the largest steady-state amplitude over its frequencies,
           each quantity at its own worst frequency; s + A cos(w t - p) spans exactly
           [s - A, s + A] over a cycle, so the bound is exact for one frequency and safe
           (never low) for the sweep.

Two terms without sign add their peaks (|a| + |b|, the absolute sum): a bound that never falls
short, and larger than an SRSS or CQC sum of the two.

An envelope over cases and combinations takes, for every value, the largest of their largest
and the smallest of their smallest values, with the name of the case (or combination) that
governs each; a case enters as the combination 1.0 * case (a static case's one value is both
its largest and smallest).

The fields are named arrays of one result (`FIELDS`): "displacement" (n, 6), "reaction" (n, 6),
"end_force" (e, 12). A further field plugs in as one more `Field` (`add_field`): how to read it
from a static result, how to read its peak from a spectrum or harmonic result, and either its
history basis or how it follows from end forces (then computed, step by step, from the
combined end forces: exact for the static and history parts, even for a quantity that is not
linear in them), or its own `bounds` of a combination's terms (member stresses,
fem/analysis/stress_field.py: the "stress" field, which needs the model through `sizes`; the
rigid links' forces, fem/analysis/link_field.py, which need the linked DOFs, `sizes["links"]`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, ClassVar

import numpy as np

from ..errors import ModelError
from ..model import DIRECTIONS
from .static import StaticResult

__all__ = ["Bounds", "CombinationResult", "EnvelopeResult", "FIELDS", "Field", "add_field",
           "combine_terms", "envelope", "SIGNED", "SIGNLESS"]

SIGNED = ("static", "history")          # kinds whose results carry a sign
SIGNLESS = ("spectrum", "harmonic")     # kinds whose results are peaks with no sign
BLOCK_VALUES = 4_000_000                # values of one block of steps (32 MB of float64)


@dataclass(frozen=True)
class Field:
    """One named result field a combination or an envelope bounds.

    of : "node" or "member"; columns : the component labels of each row.
    static : StaticResult -> (rows, columns) signed values.
    peak : {kind: result -> (rows, columns) values >= 0} for spectrum and harmonic results.
    basis : HistoryResult -> (rows * columns, c) field of each column of its series, or None
        when the field follows from end forces (`of_forces`).
    of_forces : (m, e, 12) end forces -> (m, rows, columns), for a field computed from them.
    bounds : (terms, name, t, sizes) -> Bounds or None, for a field that bounds a combination
        itself (None: the field is left out, e.g. without what it needs in `sizes`).
    inertia : HistoryResult -> (rows * columns, k + 3) field per unit modal and ground
        acceleration (the series' `inertia` histories), or None: what the field adds beyond its
        basis, e.g. the inertia rigid links carry into supports in the reactions.
    """

    name: str
    of: str
    columns: tuple
    static: Callable
    peak: dict
    basis: Callable | None = None
    of_forces: Callable | None = None
    bounds: Callable | None = None
    inertia: Callable | None = None


FIELDS: dict[str, Field] = {}


def add_field(field: Field) -> None:
    """Register a result field; combinations and envelopes bound every registered field."""
    FIELDS[field.name] = field


_END = ("N", "Vy", "Vz", "T", "My", "Mz")
add_field(Field("displacement", "node", DIRECTIONS, lambda r: r.u,
                {"spectrum": lambda r: r.u, "harmonic": lambda r: r.peak},
                lambda r: r.series.basis["displacement"]))
add_field(Field("reaction", "node", ("Fx", "Fy", "Fz", "Mx", "My", "Mz"), lambda r: r.reactions,
                {"spectrum": lambda r: r.reactions, "harmonic": lambda r: r.reaction_peak},
                lambda r: r.series.basis["reaction"], inertia=lambda r: r.series.basis.get("reaction_inertia")))
add_field(Field("end_force", "member", tuple(f"{c}_{e}" for e in "ij" for c in _END), lambda r: r.member_forces,
                {"spectrum": lambda r: r.member_forces, "harmonic": lambda r: r.member_peak},
                lambda r: r.series.basis["end_force"]))


@dataclass(frozen=True)
class Bounds:
    """The largest and smallest value of one field (rows, columns) and what governs each:
    for a combination the time (s) of a history part, NaN where no time governs (no history
    term); for an envelope the index of the governing case in its `over`. point_max, point_min:
    for member stresses, the stress point of each value (fem.analysis.stress_field), else None."""

    max: np.ndarray
    min: np.ndarray
    max_by: np.ndarray
    min_by: np.ndarray
    point_max: np.ndarray | None = None
    point_min: np.ndarray | None = None


@dataclass
class CombinationResult:
    """A combination with a history, spectrum or harmonic term.

    terms : ((factor, case name, case kind), ...) as written.
    fields : field name -> Bounds (max_by/min_by: times, s, or NaN).
    static : the static part (a StaticResult summed like any static combination) or None; its
        balance is the combination's equilibrium check (peaks balance nothing: the largest
        values of different quantities come at different times or carry no sign).
    duration : (t0, t1) s of the shared time grid of its history terms, or None.
    """

    kind: ClassVar[str] = "combination"

    name: str
    terms: tuple
    fields: dict
    static: StaticResult | None = None
    duration: tuple | None = None
    warnings: tuple = ()
    springs: object = None      # fem.analysis.spring_forces.SpringForces, "bounds" (None: no springs between nodes)


@dataclass
class EnvelopeResult:
    """An envelope: over (names of its cases and combinations, deck order as written); fields
    field name -> Bounds, max_by/min_by the index into `over` of the governing one (the first
    in `over` on a tie)."""

    kind: ClassVar[str] = "envelope"

    name: str
    over: tuple
    fields: dict
    warnings: tuple = ()
    springs: object = None      # fem.analysis.spring_forces.SpringForces, "bounds" (None: no springs between nodes)


def _static_part(fld: Field, terms) -> np.ndarray | None:
    parts = [f * np.asarray(fld.static(r), float) for f, r in terms if r.kind == "static"]
    return sum(parts) if parts else None


def _peak_part(fld: Field, terms, name: str) -> np.ndarray | None:
    parts = []
    for f, r in terms:
        if r.kind in SIGNLESS:
            read = fld.peak.get(r.kind)
            got = None if read is None else read(r)
            if got is None:
                raise ModelError(f"combination {name}: case {r.name} ({r.kind}) has no peak {fld.name} to combine")
            parts.append(abs(f) * np.asarray(got, float))
    return sum(parts) if parts else None


def _grid(name: str, histories) -> np.ndarray | None:
    """The time grid the history terms share; two grids that differ are refused in words."""
    if not histories:
        return None
    t = histories[0][1].t
    for _, r in histories[1:]:
        if len(r.t) != len(t) or not np.allclose(r.t, t, rtol=0, atol=1e-9 * max(float(t[-1]), 1.0)):
            first = histories[0][1]
            raise ModelError(f"combination {name}: history cases {first.name} ({len(t)} steps of "
                             f"{t[1] - t[0] if len(t) > 1 else 0:.4g} s to {t[-1]:.4g} s) and {r.name} ({len(r.t)} "
                             f"steps of {r.t[1] - r.t[0] if len(r.t) > 1 else 0:.4g} s to {r.t[-1]:.4g} s) do not "
                             "share a time grid, so they cannot be added step by step; give both the same step "
                             "and duration, or combine each with the static cases apart and bound them with an "
                             "envelope")
    return t


def _series_bounds(fld: Field, base: np.ndarray, histories, t, shape) -> Bounds:
    """Largest and smallest of base + sum factor * history over the steps, with their times,
    through blocks of steps (the whole (steps, values) history is never held)."""
    for _, r in histories:
        if r.series.basis is None:
            raise ModelError(f"history case {r.name}: its series has no basis; give the result with "
                             "fem.analysis.history_case.series_basis (fem.solve does)")
    basis = fld.basis if fld.of_forces is None else FIELDS["end_force"].basis
    more = [(f * r.series.inertia, fld.inertia(r)) for f, r in histories
            if fld.of_forces is None and fld.inertia is not None and r.series.inertia is not None]
    more = [m for m in more if m[1] is not None]
    q = np.hstack([f * r.series.q for f, r in histories] + [m[0] for m in more])      # (m, C)
    B = np.hstack([basis(r) for _, r in histories] + [m[1] for m in more])            # (N, C)
    flat = base.ravel()
    n = int(np.prod(shape))
    hi, lo = np.full(n, -np.inf), np.full(n, np.inf)
    hi_t, lo_t = np.zeros(n), np.zeros(n)
    block = max(1, BLOCK_VALUES // max(B.shape[0], 1))
    for a in range(0, len(t), block):
        v = q[a:a + block] @ B.T + flat                                         # (b, N)
        if fld.of_forces is not None:
            v = fld.of_forces(v.reshape(len(v), -1, 12)).reshape(len(v), -1)
        k = v.argmax(axis=0)
        top = v[k, np.arange(v.shape[1])]
        up = top > hi
        hi[up], hi_t[up] = top[up], t[a + k[up]]
        k = v.argmin(axis=0)
        bot = v[k, np.arange(v.shape[1])]
        down = bot < lo
        lo[down], lo_t[down] = bot[down], t[a + k[down]]
    return Bounds(hi.reshape(shape), lo.reshape(shape), hi_t.reshape(shape), lo_t.reshape(shape))


def _field_bounds(fld: Field, terms, name: str, t, sizes: dict) -> Bounds | None:
    """Bounds of one field of a combination; `sizes` the rows of "node" and "member" fields."""
    if fld.bounds is not None:
        return fld.bounds(terms, name, t, sizes)
    histories = [(f, r) for f, r in terms if r.kind == "history"]
    if fld.of_forces is None:
        base = _static_part(fld, terms)
        value = base = np.zeros((sizes[fld.of], len(fld.columns))) if base is None else base
    else:                           # from the combined end forces, even where not linear in them
        base = _static_part(FIELDS["end_force"], terms)
        base = np.zeros((sizes["member"], 12)) if base is None else base
        value = fld.of_forces(base[None])[0]
    if histories:
        b = _series_bounds(fld, base, histories, t, value.shape)
    else:
        none = np.full(value.shape, np.nan)
        b = Bounds(value.copy(), value.copy(), none, none.copy())
    peak = _peak_part(fld, terms, name)
    return b if peak is None else Bounds(b.max + peak, b.min - peak, b.max_by, b.min_by)


def combine_terms(name: str, terms, sizes: dict, static: StaticResult | None = None) -> CombinationResult:
    """The bounds of every field of the combination `name` of `terms` [(factor, result)]
    (static, history, spectrum or harmonic results); `sizes` the rows of the fields,
    {"node": n, "member": e}; `static` its static part already summed (its checks are the
    combination's), or None.

    Examples
    --------
    >>> c = combine_terms("QD", [(1.0, results["DEAD"]), (1.0, results["QUAKE"])], sizes)  # doctest: +SKIP
    >>> c.fields["displacement"].max.shape                                          # doctest: +SKIP
    (24, 6)
    """
    for f, r in terms:
        if r.kind not in SIGNED + SIGNLESS:
            raise ModelError(f"combination {name}: case {r.name} is a {r.kind} case; a combination adds static, "
                             "history, spectrum and harmonic cases")
    histories = [(f, r) for f, r in terms if r.kind == "history"]
    t = _grid(name, histories)
    fields = {n: _field_bounds(fld, terms, name, t, sizes) for n, fld in FIELDS.items()}
    fields = {n: b for n, b in fields.items() if b is not None}
    return CombinationResult(name, tuple((f, r.name, r.kind) for f, r in terms), fields, static,
                             None if t is None else (float(t[0]), float(t[-1])))


def bounds_of(result, sizes: dict) -> dict:
    """Field name -> Bounds of one case or combination result, as an envelope reads it."""
    if result.kind == "combination":
        return result.fields
    return combine_terms(result.name, [(1.0, result)], sizes).fields


def envelope(name: str, results, sizes: dict) -> EnvelopeResult:
    """The envelope `name` over `results` (static, history, spectrum, harmonic and combination
    results, in the order given): every value's largest and smallest over them, and the index
    of the one that governs (the first on a tie).

    Examples
    --------
    >>> e = envelope("ALL", [results["ULS"], results["QD"]], sizes)   # doctest: +SKIP
    >>> e.over[e.fields["reaction"].max_by[0, 2]]              # doctest: +SKIP
    'QD'
    """
    each = [bounds_of(r, sizes) for r in results]
    fields = {}
    for n in [n for n in FIELDS if all(n in b for b in each)]:
        hi = np.stack([b[n].max for b in each])
        lo = np.stack([b[n].min for b in each])
        i, j = np.nan_to_num(hi, nan=-np.inf).argmax(axis=0), np.nan_to_num(lo, nan=np.inf).argmin(axis=0)
        pick = [None if any(b[n].point_max is None for b in each) else
                np.take_along_axis(np.stack([getattr(b[n], p) for b in each]), k[None], 0)[0]
                for p, k in (("point_max", i), ("point_min", j))]
        fields[n] = Bounds(np.take_along_axis(hi, i[None], 0)[0], np.take_along_axis(lo, j[None], 0)[0], i, j, *pick)
    return EnvelopeResult(name, tuple(r.name for r in results), fields)


from . import stress_field  # noqa: E402,F401,I001  (registers the "stress" field; it imports this module)
from . import link_field  # noqa: E402,F401,I001  (registers the "link_force" field)
