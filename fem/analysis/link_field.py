"""The forces of rigid links as a field of combinations and envelopes ("link_force"): per node
that follows a link, the force and moment the link exerts on it (global axes, N and N m; 0 in a
direction the link does not hold), like link_forces.csv.

A static term adds its link forces exactly; a history term its forces step by step, the links'
K u - f and the inertia M a they hold (fem/analysis/link_dynamics.py), from the series basis
(fem.analysis.history_case.series_basis); spectrum and harmonic terms their peaks with both
signs, as every field (fem/analysis/combine.py). In a model with pretensioned members the
pretension state, a static term of its own, adds its link forces once. The field is left out
where a term has no link forces: a model without links.
"""

from __future__ import annotations

import numpy as np

from .combine import Field, _field_bounds, add_field

__all__ = ["COLUMNS", "followers", "linked_dofs"]

COLUMNS = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")


def linked_dofs(model) -> np.ndarray | None:
    """(d,) the DOFs the rigid links hold, sorted (as fem.assembly's `linked`), or None."""
    if not model.links:
        return None
    return np.unique(np.concatenate([((6 * np.asarray(k.dependents, np.int64))[:, None]
                                      + np.flatnonzero(k.dirs)[None, :]).ravel() for k in model.links]))


def followers(model) -> np.ndarray:
    """The nodes that follow a link, sorted: the rows the field is written for."""
    dofs = linked_dofs(model)
    return np.zeros(0, np.int64) if dofs is None else np.unique(dofs // 6)


def _has(r) -> bool:
    if r.kind == "history":
        return r.series is not None and r.series.basis is not None and "link_force" in r.series.basis
    return getattr(r, "links", None) is not None


def _bounds(terms, name, t, sizes):
    """The field's Bounds (n, 6) over the nodes, or None where a term has no link forces."""
    dofs, n = sizes.get("links"), sizes["node"]
    if dofs is None or not all(_has(r) for _, r in terms):
        return None

    def spread(v):                 # (d, ...) at the linked DOFs -> (6n, ...), zero elsewhere
        out = np.zeros((6 * n, *np.shape(v)[1:]))
        out[dofs] = v
        return out

    each = {"spectrum": lambda r: spread(r.links).reshape(n, 6), "harmonic": lambda r: spread(r.links).reshape(n, 6)}
    plain = Field(name, "node", COLUMNS, each["spectrum"], each, lambda r: spread(r.series.basis["link_force"]),
                  inertia=lambda r: spread(r.series.basis["link_inertia"]))
    return _field_bounds(plain, terms, name, t, sizes)


add_field(Field("link_force", "node", COLUMNS, None, {}, bounds=_bounds))
