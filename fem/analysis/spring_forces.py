"""Forces of the springs between nodes (fem.model.NodeSprings) for every kind of case: the force
and moment each spring carries in its own axes, k d, with d the relative motion of its nodes
(fem.elements.node_spring), and the deflection d itself.

How each case kind is reduced (`SpringForces.basis`):
- static cases and combinations of them: "exact", signed, from the displacements;
- modes cases: "per mode", signed, of each mass-normalised shape (scale as the shapes);
- free and history cases: "peak over time": each component's largest magnitude over the steps,
  from the modal histories (and a history's static parts) superposed at every step, with the time
  of it; the same sampling as the displacements' peaks;
- harmonic cases: "amplitude": each component's largest amplitude over the frequencies, phases
  kept in the sum over modes, with the frequency of it;
- combinations with a history, spectrum or harmonic case: "bounds", the largest and smallest
  value of each component (fem/analysis/combine.py's rules): the static part exact, a history
  part added step by step (the time of each bound), a spectrum or harmonic part's peak added
  with both signs, |factor| times it;
- envelopes: "bounds" too, the largest of the largest and the smallest of the smallest over
  their cases and combinations (each case as the combination 1.0 * case), without times;
- spectrum cases: "combined peaks": each component of every mode's force, combined over the
  modes by the case's rule (with the CQC correlations) and over the directions by its spatial
  rule, never taken from combined displacements.
A spring force component is k_c d_c, so its peak over time or frequency is k_c times the peak of
d_c, at the same time.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from ..elements.node_spring import spring_map
from .modal_sum import combine, combine_directions

__all__ = ["SpringForces", "combination_springs", "deflection_matrix", "envelope_springs", "modal_springs",
           "peak_springs", "series_springs", "spectrum_springs", "static_springs"]

_BLOCK = 4_000_000        # values of one block of steps (32 MB of float64), as fem/analysis/combine.py


@dataclass
class SpringForces:
    """Forces of the springs between nodes in one case (s springs).

    basis : "exact", "per mode", "peak over time", "amplitude" or "combined peaks" (module docstring)
    force : (s, 6) force along and moment about the spring's x, y, z, N and N m (per mode: (k, s, 6));
        signed for "exact" and "per mode" (positive: node B moves away from A along the axis),
        magnitudes >= 0 otherwise
    deflection : the same shape, the relative motion d, m and rad
    at : (s, 6) time (s) or frequency (Hz) of each peak, or None; at_unit "s", "Hz" or ""
    """

    basis: str
    force: np.ndarray
    deflection: np.ndarray
    at: np.ndarray | None = None
    at_unit: str = ""
    force_min: np.ndarray | None = None       # "bounds" only: the smallest values, with their times
    deflection_min: np.ndarray | None = None
    at_min: np.ndarray | None = None

    def largest(self) -> tuple[int, int, float] | None:
        """(spring, component, value) of the largest |force| among the translations, or None;
        for "per mode", over every mode."""
        f = np.abs(self.force[..., :3]).reshape(-1, self.force.shape[-2], 3).max(axis=0)
        if self.force_min is not None:
            f = np.maximum(f, np.abs(self.force_min[:, :3]))
        if not f.size:
            return None
        s, c = np.unravel_index(int(f.argmax()), f.shape)
        return int(s), int(c), float(f[s, c])


def deflection_matrix(model) -> sp.csr_matrix:
    """(6 s, 6 n) the springs' deflections from all the model's DOFs (rows: spring, component)."""
    ns = model.node_springs
    D = spring_map(ns, model.coords)                           # (s, 6, 12)
    s = len(D)
    dofs = (6 * np.asarray(ns.nodes)[:, :, None] + np.arange(6)).reshape(s, 12)
    rows = np.repeat(np.arange(6 * s).reshape(s, 6), 12, axis=1).ravel()
    cols = np.repeat(dofs, 6, axis=0).ravel()
    return sp.coo_matrix((D.ravel(), (rows, cols)), shape=(6 * s, 6 * model.n_nodes)).tocsr()


def _has(model) -> bool:
    return model.node_springs is not None and len(model.node_springs) > 0


def static_springs(model, u) -> SpringForces | None:
    """Exact forces of a static state u (n, 6) or (6n,); None when the model has no springs."""
    if not _has(model):
        return None
    d = (deflection_matrix(model) @ np.asarray(u, float).ravel()).reshape(-1, 6)
    return SpringForces("exact", model.node_springs.k * d, d)


def modal_springs(model, shapes) -> SpringForces | None:
    """Per-mode forces of the shapes (n, 6, k), signed; None when the model has no springs."""
    if not _has(model):
        return None
    k = shapes.shape[-1]
    d = (deflection_matrix(model) @ shapes.reshape(-1, k)).T.reshape(k, -1, 6)
    return SpringForces("per mode", model.node_springs.k * d, d)


def peak_springs(model, peak_d, at, basis: str, unit: str) -> SpringForces:
    """From peaks of the deflections (6 s,) (magnitudes) and where they occur (6 s,)."""
    d = np.asarray(peak_d, float).reshape(-1, 6)
    return SpringForces(basis, model.node_springs.k * d, d, np.asarray(at, float).reshape(-1, 6), unit)


def series_springs(model, q, columns, t) -> SpringForces | None:
    """Peaks over time of displacements q (m, c) @ columns (6n, c)^T: a free or history case's
    modal histories (and static parts) and their shapes; None when the model has no springs."""
    if not _has(model):
        return None
    from .free_case import peaks

    pk, at = peaks(q, np.asarray(deflection_matrix(model) @ columns), t)
    return peak_springs(model, pk, at, "peak over time", "s")


def spectrum_springs(model, per_direction, rule: str, spatial: str) -> SpringForces | None:
    """Combined peaks from [(U (k, 6n) signed per-mode displacement peaks, rho)] per direction:
    each mode's spring deflection, combined over the modes and then the directions."""
    if not _has(model):
        return None
    D = deflection_matrix(model)
    parts = [combine(np.asarray(D @ np.asarray(U).T).T, rule, rho) for U, rho in per_direction]
    d = combine_directions(parts, spatial).reshape(-1, 6)
    return SpringForces("combined peaks", model.node_springs.k * d, d)


def combination_springs(model, terms) -> SpringForces | None:
    """"bounds" of a combination of [(factor, result, name)] (static, history with its series
    basis, spectrum and harmonic results); None when the model has no springs."""
    if not _has(model):
        return None
    D = deflection_matrix(model)
    s = len(model.node_springs)
    base = np.zeros(6 * s)
    for f, r, _ in terms:
        if r.kind == "static":
            base += f * (D @ np.asarray(r.u, float).ravel())
    hi, lo, hi_t, lo_t = base.copy(), base.copy(), None, None
    hist = [(f, r) for f, r, _ in terms if r.kind == "history"]
    if hist:
        q = np.hstack([f * r.series.q for f, r in hist])                                  # (m, C)
        B = np.hstack([np.asarray(D @ r.series.basis["displacement"]) for _, r in hist])  # (6 s, C)
        t = hist[0][1].t
        hi, lo = np.full(6 * s, -np.inf), np.full(6 * s, np.inf)
        hi_t, lo_t = np.zeros(6 * s), np.zeros(6 * s)
        cols = np.arange(6 * s)
        step = max(1, _BLOCK // (6 * s))
        for a in range(0, len(t), step):            # blocks of steps: the whole series is never held
            v = q[a:a + step] @ B.T + base                                                 # (b, 6 s)
            i, j = v.argmax(axis=0), v.argmin(axis=0)
            up, down = v[i, cols] > hi, v[j, cols] < lo
            hi[up], hi_t[up] = v[i, cols][up], t[a + i[up]]
            lo[down], lo_t[down] = v[j, cols][down], t[a + j[down]]
    for f, r, name in terms:
        if r.kind in ("spectrum", "harmonic"):
            peak = abs(f) * np.asarray(r.springs.deflection, float).ravel()
            hi, lo = hi + peak, lo - peak
    k = model.node_springs.k
    shape = (-1, 6)
    return SpringForces("bounds", k * hi.reshape(shape), hi.reshape(shape),
                        None if hi_t is None else hi_t.reshape(shape), "s" if hist else "",
                        k * lo.reshape(shape), lo.reshape(shape), None if lo_t is None else lo_t.reshape(shape))


def envelope_springs(parts) -> SpringForces | None:
    """"bounds" of an envelope from the "bounds" of each of its cases and combinations (None
    when the model has no springs)."""
    if not parts or parts[0] is None:
        return None
    hi = np.max([p.deflection for p in parts], axis=0)
    lo = np.min([p.deflection_min for p in parts], axis=0)
    k_hi = np.max([p.force for p in parts], axis=0)
    k_lo = np.min([p.force_min for p in parts], axis=0)
    return SpringForces("bounds", k_hi, hi, None, "", k_lo, lo, None)
