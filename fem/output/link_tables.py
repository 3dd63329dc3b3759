"""The forces of rigid links: per static case and combination, the force and moment each link
exerts on each node that follows it (results.json `link_forces`, link_forces.csv); and the end
forces of members with end offsets carried to their nodes (member_node_forces.csv)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["link_entry", "write_link_table", "write_offset_table"]

_LABELS = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")


def _rows(model, r):
    """(link, node, reference, six values with None where the link does not act) of result r."""
    if r.links is None:
        return
    where = {}
    k = 0
    dep = sorted((int(d), j) for j, link in enumerate(model.links) for d in link.dependents)
    # the linked DOFs are sorted, so a node's directions follow one another in r.links
    for d, j in dep:
        on = np.flatnonzero(model.links[j].dirs)
        vals = [None] * 6
        for i in on:
            vals[i] = float(r.links[k])
            k += 1
        where[d] = (j, vals)
    for d, (j, vals) in where.items():
        link = model.links[j]
        yield link.name, model.node_names[d], model.node_names[link.reference], vals


def link_entry(model, r) -> dict:
    """results.json's `link_forces` of a static or spectrum result: link -> node -> [Fx..Mz]
    (N, N m; null where the link does not act), or nothing for a model without links."""
    if not model.links or getattr(r, "links", None) is None:
        return {}
    out = {link.name: {} for link in model.links}
    for name, node, _, vals in _rows(model, r):
        out[name][node] = vals
    return {"link_forces": out}


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
