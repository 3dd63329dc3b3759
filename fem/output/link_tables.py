"""The forces of rigid links: per static case and combination, the force and moment each link
exerts on each node that follows it (results.json `link_forces`, link_forces.csv), their peaks
in spectrum cases, and in free, history and harmonic cases with when they occur
(link_force_peaks.csv); and the end forces of members with end offsets carried to their nodes
(member_node_forces.csv)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["link_entry", "write_link_peaks", "write_link_table", "write_offset_table"]

_LABELS = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")


def _rows(model, r, values=None):
    """(link, node, reference, six values with None where the link does not act) of result r,
    or of `values` (d,) at the linked DOFs in their place."""
    values = r.links if values is None else values
    if values is None:
        return
    where = {}
    k = 0
    dep = sorted((int(d), j) for j, link in enumerate(model.links) for d in link.dependents)
    # the linked DOFs are sorted, so a node's directions follow one another in r.links
    for d, j in dep:
        on = np.flatnonzero(model.links[j].dirs)
        vals = [None] * 6
        for i in on:
            vals[i] = float(values[k])
            k += 1
        where[d] = (j, vals)
    for d, (j, vals) in where.items():
        link = model.links[j]
        yield link.name, model.node_names[d], model.node_names[link.reference], vals


def link_entry(model, r) -> dict:
    """results.json's `link_forces` of a static, spectrum, free, history or harmonic result:
    link -> node -> [Fx..Mz] (N, N m; null where the link does not act; peaks >= 0 but for static
    results), with, for free and history cases, `link_force_time_s` (when each peak occurs) and,
    for harmonic cases, `link_force_frequency_Hz` and `link_force_lag_deg` in the same shape; or
    nothing for a model without links."""
    if not model.links or getattr(r, "links", None) is None:
        return {}
    entry = {}
    for key, values in (("link_forces", r.links), *_WHEN.get(r.kind, ())):
        out = {link.name: {} for link in model.links}
        for name, node, _, vals in _rows(model, r, values if isinstance(values, np.ndarray) else getattr(r, values)):
            out[name][node] = vals
        entry[key] = out
    return entry


# when a free, history or harmonic case's link force peaks occur: results.json key, result field
_WHEN = {"free": (("link_force_time_s", "link_times"),), "history": (("link_force_time_s", "link_times"),),
         "harmonic": (("link_force_frequency_Hz", "link_freq"), ("link_force_lag_deg", "link_lag"))}


def write_link_table(out: Path, results) -> None:
    """link_forces.csv: one row per static case, combination or spectrum case and node that
    follows a link (a spectrum case's rows are combined peaks, >= 0)."""
    from .tables import write_csv

    model = results.model
    if not model.links:
        return
    write_csv(out / "link_forces.csv", ["case", "link", "node", "reference", *_LABELS],
              ([r.name, name, node, ref, *("" if v is None else v for v in vals)]
               for r in [*results.statics, *results.of_kind("spectrum")] for name, node, ref, vals in _rows(model, r)))


def write_link_peaks(out: Path, results) -> None:
    """link_force_peaks.csv: per free, history and harmonic case, node that follows a link and
    linked direction, the largest force (amplitude, for a harmonic case) and when (s) or where
    (Hz, with its lag in degrees) it occurs."""
    from .tables import write_csv

    model = results.model
    rows = []
    for r in results.of_kind("free", "history", "harmonic"):
        if getattr(r, "links", None) is None:
            continue
        tuned = r.kind == "harmonic"
        at = r.link_freq if tuned else r.link_times
        lag = r.link_lag if tuned else np.zeros(len(at))
        for (name, node, ref, vals), (*_, when), (*_, lags) in zip(_rows(model, r), _rows(model, r, at),
                                                                   _rows(model, r, lag)):
            rows += [[r.name, name, node, ref, _LABELS[d], v, "" if tuned else when[d], when[d] if tuned else "",
                      lags[d] if tuned else ""] for d, v in enumerate(vals) if v is not None]
    if rows:
        write_csv(out / "link_force_peaks.csv", ["case", "link", "node", "reference", "direction", "peak", "time_s",
                                                 "frequency_Hz", "lag_deg"], rows)


def write_offset_table(out: Path, results, R: np.ndarray) -> None:
    """member_node_forces.csv: the end forces of each member with an end offset, per static case
    and combination, at its nodes (member_forces.csv has them at the elastic ends), local axes
    R (e, 3, 3) of the elastic part."""
    from ..elements.rigid import forces_at_nodes
    from .tables import END_FORCES, write_csv

    model = results.model
    if model.offsets is None:
        return
    moved = np.flatnonzero(np.abs(model.offsets).max(axis=(1, 2)) > 0)
    rows = []
    for r in results.statics:
        f = forces_at_nodes(r.member_forces[moved], model.offsets[moved], R[moved])
        for k, m in enumerate(moved):
            for e, end in enumerate("ij"):
                rows.append([r.name, model.member_names[m], end, model.node_names[model.conn[m, e]],
                             *map(float, f[k, 6 * e:6 * e + 6])])
    write_csv(out / "member_node_forces.csv", ["case", "member", "end", "node", *END_FORCES], rows)
