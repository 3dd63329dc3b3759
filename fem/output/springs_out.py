"""Springs between nodes in the outputs: the model's springs and each case's spring forces in
results.json (SI), a springs_<case>.csv table per case, the summary's largest spring force and
deflection per case, and the report's table (display units, fem.display).

The forces are fem.analysis.spring_forces.SpringForces: along and about each spring's own x, y, z
(global X, Y, Z unless the deck turns it), k d with d the relative motion of node B from node A."""

from __future__ import annotations

import html

import numpy as np

from ..display import SI, tidy
from ..model import DIRECTIONS
from .tables import write_csv

__all__ = ["add_spring_blocks", "report_section", "spring_symbols", "summary_lines", "write_spring_tables"]

_FORCES = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")
_BASIS = {"exact": "exact", "per mode": "per mode, of the mass-normalised shapes",
          "peak over time": "largest over time", "amplitude": "amplitudes, largest over the frequencies",
          "combined peaks": "per-mode forces combined",
          "bounds": "the larger in size of the largest and smallest of each component"}
_AT = {"s": "time_s", "Hz": "frequency_Hz"}


def _units(results):
    return results.model.settings.get("units") or SI


def _scales(units):
    """Display factors of the six forces and of the six deflections."""
    f = [units.per_si("force")] * 3 + [units.per_si("moment")] * 3
    d = [units.per_si("length")] * 3 + [1.0] * 3
    return np.array(f), np.array(d)


def _governing(s):
    """(force, deflection, time or None) (s, 6): for "bounds" the larger in size of the largest
    and smallest of each component, signed; otherwise the values as they are."""
    if s.force_min is None:
        return s.force, s.deflection, s.at
    low = np.abs(s.force_min) > np.abs(s.force)
    at = None if s.at is None else np.where(low, s.at_min, s.at)
    return np.where(low, s.force_min, s.force), np.where(low, s.deflection_min, s.deflection), at


def _bounds_table(out, case, s, results, units, fh, dh) -> None:
    """springs_<combination>.csv of "bounds": the largest, then the smallest, of each force and
    deflection, with their times where a history part gives them."""
    ns, names = results.model.node_springs, results.model.node_names
    kf, kd = _scales(units)
    times = s.at is not None
    head = ["spring", "node_a", "node_b", *(h + "_max" for h in fh), *(h + "_min" for h in fh),
            *(h + "_max" for h in dh), *(h + "_min" for h in dh),
            *([f"time_s_{q}_max" for q in _FORCES] + [f"time_s_{q}_min" for q in _FORCES] if times else [])]
    rows = ([nm, names[ns.nodes[j, 0]], names[ns.nodes[j, 1]], *map(float, s.force[j] * kf),
             *map(float, s.force_min[j] * kf), *map(float, s.deflection[j] * kd), *map(float, s.deflection_min[j] * kd),
             *([*map(float, s.at[j]), *map(float, s.at_min[j])] if times else [])] for j, nm in enumerate(ns.names))
    write_csv(out / f"springs_{case}.csv", head, rows)


def write_spring_tables(results, out) -> None:
    """springs_<case>.csv for every case with spring forces: one row per spring (per mode and
    spring for a modes case): its nodes, the six forces and the six deflections in the spring's
    axes, and the time or frequency of each peak where the case has them."""
    if not results.springs:
        return
    ns = results.model.node_springs
    names = results.model.node_names
    units = _units(results)
    kf, kd = _scales(units)
    fh = [f"{q}_{units.header('force' if j < 3 else 'moment')}" for j, q in enumerate(_FORCES)]
    dh = [f"d{d}_{units.header('length') if j < 3 else 'rad'}" for j, d in enumerate(DIRECTIONS)]
    for case, s in results.springs.items():
        if s.basis == "bounds":
            _bounds_table(out, case, s, results, units, fh, dh)
            continue
        at = _AT.get(s.at_unit) if s.at is not None else None
        athead = [f"{at}_{q}" for q in _FORCES] if at else []
        per_mode = s.basis == "per mode"
        F = s.force if per_mode else s.force[None]
        D = s.deflection if per_mode else s.deflection[None]
        rows = ([*([m + 1] if per_mode else []), nm, names[ns.nodes[j, 0]], names[ns.nodes[j, 1]],
                 *map(float, F[m, j] * kf), *map(float, D[m, j] * kd), *(map(float, s.at[j]) if at else [])]
                for m in range(len(F)) for j, nm in enumerate(ns.names))
        write_csv(out / f"springs_{case}.csv", [*(["mode"] if per_mode else []), "spring", "node_a", "node_b",
                                                *fh, *dh, *athead], rows)


def _case_block(results, s) -> dict:
    ns = results.model.node_springs
    at = _AT.get(s.at_unit) if s.at is not None else None
    out = {"basis": s.basis}
    if s.basis == "per mode":
        out["modes"] = [{name: {"force": s.force[m, j].tolist(), "deflection": s.deflection[m, j].tolist()}
                         for j, name in enumerate(ns.names)} for m in range(len(s.force))]
        return out
    force, defl, _ = _governing(s)
    out["springs"] = {name: {"force": force[j].tolist(), "deflection": defl[j].tolist(),
                             **({at: s.at[j].tolist()} if at and s.force_min is None else {})}
                      for j, name in enumerate(ns.names)}
    if s.force_min is not None:         # bounds: the largest and smallest too, with their times
        for j, name in enumerate(ns.names):
            row = out["springs"][name]
            row.update(force_max=s.force[j].tolist(), force_min=s.force_min[j].tolist(),
                       deflection_max=s.deflection[j].tolist(), deflection_min=s.deflection_min[j].tolist())
            if at:
                row.update({f"{at}_max": s.at[j].tolist(), f"{at}_min": s.at_min[j].tolist()})
    big = s.largest()
    if big is not None:
        j, c, v = big
        out["largest"] = {"spring": ns.names[j], "component": _FORCES[c], "force_N": v,
                          "deflection_m": float(abs(defl[j, c]))}
    return out


def add_spring_blocks(results, doc: dict) -> None:
    """The model's springs between nodes (`node_springs`: nodes, stiffness in N/m and N m/rad,
    axes, damping ratio) and each case's `springs` entry (SI; force [Fx, Fy, Fz, Mx, My, Mz] in
    the spring's axes, deflection [dx, dy, dz, rx, ry, rz]), when the model has such springs."""
    ns = results.model.node_springs
    if ns is None:
        return
    names = results.model.node_names
    doc["node_springs"] = {n: {"node_a": names[ns.nodes[j, 0]], "node_b": names[ns.nodes[j, 1]],
                               "stiffness": ns.k[j].tolist(), "axes": ns.axes[j].tolist(),
                               "damping_ratio": float(ns.damping[j])} for j, n in enumerate(ns.names)}
    for c in [*doc["cases"], *doc.get("demands", [])]:
        s = results.springs.get(c["name"])
        if s is not None:
            c["springs"] = _case_block(results, s)


def summary_lines(results, name: str, indent: str) -> list[str]:
    """The largest spring force of a case (a static or response case; modes cases have none):
    its spring, direction, value, deflection and, for a peak, when."""
    s = results.springs.get(name)
    if s is None or s.basis == "per mode":
        return []
    big = s.largest()
    if big is None:
        return []
    j, c, v = big
    _, defl, at = _governing(s)
    units = _units(results)
    kf, kd = _scales(units)
    flabel = units.label("force") if units.chosen else "kN"
    fk = kf[c] if units.chosen else 1e-3
    dlabel, dk = (units.label("length"), kd[c]) if units.chosen else ("mm", 1e3)
    when = f" at {at[j, c]:.4g} {s.at_unit}" if at is not None else ""
    word = {"exact": "", "peak over time": "peak ", "amplitude": "amplitude ", "combined peaks": "combined ",
            "bounds": "bounding "}[s.basis]
    return [f"{indent}springs: largest {word}force {v * fk:.4g} {flabel} along {'xyz'[c]} of "
            f"{results.model.node_springs.names[j]}, deflection {abs(defl[j, c]) * dk:.4g} {dlabel}{when}"]


REPORT_ROWS = 12     # springs per case in the report's table
SYMBOL_SIZE = 0.06   # a spring between nodes at one place is drawn this share of the model's size long
_ZIGS = 8            # zig-zag segments of a drawn spring


def spring_symbols(model) -> tuple[np.ndarray, np.ndarray]:
    """A zig-zag for each spring between nodes, for the pictures: points (p, 3) and VTK polyline
    cells [count, i0, i1, ...] indexing them. Between nodes apart it runs from A to B; at one
    place it stands centred on the node along the spring's stiffest translation, SYMBOL_SIZE of
    the model's size long. Its width is a fifth of its length."""
    ns = model.node_springs
    lo, hi = model.bounding_box()
    size = max(float(np.max(hi - lo)), 1e-9) * SYMBOL_SIZE
    a, b = model.coords[ns.nodes[:, 0]], model.coords[ns.nodes[:, 1]]
    axis = b - a
    length = np.linalg.norm(axis, axis=1)
    short = length < 1e-9 * max(size, 1.0)
    stiff = ns.axes[np.arange(len(ns)), np.argmax(ns.k[:, :3], axis=1)]       # (s, 3) stiffest axis
    axis = np.where(short[:, None], stiff * size, axis)
    start = np.where(short[:, None], a - 0.5 * axis, a)
    ref = np.where(np.abs(axis[:, [2]]) > 0.9 * np.linalg.norm(axis, axis=1, keepdims=True), [[1.0, 0, 0]], [[0, 0, 1.0]])
    side = np.cross(axis, ref)
    side *= 0.1 * np.linalg.norm(axis, axis=1, keepdims=True) / np.linalg.norm(side, axis=1, keepdims=True)
    t = np.linspace(0.0, 1.0, _ZIGS + 1)
    wave = np.r_[0.0, np.where(np.arange(1, _ZIGS) % 2, 1.0, -1.0), 0.0]
    pts = start[:, None] + t[None, :, None] * axis[:, None] + wave[None, :, None] * side[:, None]
    n = _ZIGS + 1
    cells = np.c_[np.full(len(ns), n), np.arange(len(ns) * n).reshape(-1, n)].ravel()
    return pts.reshape(-1, 3), cells


def report_section(c: dict, doc: dict, table) -> str:
    """The report's table of a case's spring forces (display units of the document)."""
    block = c.get("springs")
    if not block or "springs" not in block:
        return ""
    from .fmt import doc_units

    units = doc_units(doc)
    kf, kd = _scales(units)
    fl = units.label("force") if units.chosen else "kN"
    ml = units.label("moment") if units.chosen else "kN m"
    ll = units.label("length") if units.chosen else "mm"
    fk = kf if units.chosen else np.array([1e-3] * 6)
    dk = kd if units.chosen else np.array([1e3] * 3 + [1.0] * 3)
    rows = sorted(block["springs"].items(), key=lambda kv: -max(abs(x) for x in kv[1]["force"][:3]))
    head = ["spring", *(f"{q} {fl if j < 3 else ml}" for j, q in enumerate(_FORCES)),
            *(f"d{a} {ll}" for a in "xyz")]
    top_f = max((abs(x) for _, v in rows for x in v["force"]), default=0.0)
    top_d = max((abs(x) for _, v in rows for x in v["deflection"][:3]), default=0.0)

    def f(x, scale, k):         # round-off under ZERO_TOL of the case's largest shows as 0, never -0
        return f"{tidy([x], scale)[0] * k + 0.0:.4g}"

    body = [[html.escape(n), *(f(v["force"][j], top_f, fk[j]) for j in range(6)),
             *(f(v["deflection"][j], top_d, dk[j]) for j in range(3))] for n, v in rows[:REPORT_ROWS]]
    note = (f"<p>Springs between nodes ({html.escape(_BASIS[block['basis']])}): force along and moment about "
            f"each spring's own axes, k times the motion of its second node relative to its first; "
            f"{min(REPORT_ROWS, len(rows))} of {len(rows)}, the most loaded first; every spring is in "
            f"springs_{html.escape(c['name'])}.csv.</p>")
    return note + table(head, body)
