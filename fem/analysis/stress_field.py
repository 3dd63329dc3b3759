"""Member stresses of combinations and envelopes: the "stress" field of fem.analysis.combine.

Columns, per member: "normal" (max: the largest normal stress, tension positive; min: the
smallest), "mises" (the equivalent stress) and "ratio" (it over the material's yield strength,
a plain ratio, not a design-code check). The equivalent stress and the ratio are sizes: their
min is minus their max, as for any result without a sign, so that an envelope names the same
governing case both ways. Each value carries the stress point that governs it (`point_name`).

How a combination's terms enter, at every stress point p of the section (fem.sections.points;
a round outline as the corners of the polygon drawn around it, fem.analysis.stress):
- static terms: the summed end forces and the summed line loads; the normal stress s(x, p) is
  a quadratic in x along the member (fem.analysis.stress), so its extremes over the member are
  found in closed form: exact (the stresses of the summed forces, never a sum of stresses);
- history terms: static plus the time series, step by step (exact per step, line loads of the
  history's own loads included), then the largest and smallest over time, with their times;
- spectrum and harmonic terms: the per-point peak D(p) of each (per-mode stresses combined by
  the case's rules, or harmonic amplitudes with their phases, the largest over the
  frequencies) is added with both signs at each point: s(x, p) +/- sum |factor| D(x, p). D is
  known at the ends and eighth points of the member (fem.analysis.stress.STATIONS); between
  them it is taken on the straight line joining them. That is a bound: with no line load on the
  modal or harmonic forces, each mode's stress at a point is linear in x, so D (a norm of
  linear functions: SRSS, CQC with its correlation matrix positive semi-definite, the absolute
  sum, the 100/30 and SRSS direction rules, the largest modulus over frequencies) is convex in
  x and never above a chord. s +/- chord is again a quadratic in x on each eighth, extreme in
  closed form: exact at the stations, never short between them, and above by at most the
  chord's gap (for a modal moment changing sign along the member, |slope| L/16). (A harmonic
  case with line loads on members is known at the member ends only, as its own stresses are:
  inside such a member the line is not a proven bound.)
Equivalent stress: sqrt(sigma^2 + 3 tau^2) with sigma the larger size of the normal extremes
and tau the largest shear plus torsion at an end of the static/history part plus sum |factor|
times each dynamic case's own largest tau: each of sigma and tau bounds its value at every
point and time, and the equivalent stress grows with both, so this bounds it (conservative;
the largest normal and shear stresses may lie at different points and times).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import ModelError
from ..model import Model
from .combine import Bounds, Field, add_field
from .stress import ROUND_POINTS, point_table, section_table

__all__ = ["COLUMNS", "StressContext", "combination_stresses", "point_name", "point_namer"]

COLUMNS = ("normal", "mises", "ratio")
_BLOCK = 1_000_000        # floats of one (steps, members, points) array held at once


@dataclass
class StressContext:
    """What the stress field of a combination needs beside its terms: the model and the uniform
    line loads (e, 3) N/m, local axes, of every static case and static combination by name. The
    solve passes it as `sizes["stress"]` to fem.analysis.combine."""

    model: Model
    lines: dict
    table: object = field(default=None, repr=False)

    def tables(self):
        if self.table is None:
            tab = section_table(self.model)
            self.table = (tab, point_table(tab))
        return self.table


def _qmax(a0, a1, a2, L):
    """Largest of a0 + a1 x + a2 x^2 over x in [0, L] (closed form) and where."""
    end = a0 + a1 * L + a2 * L * L
    with np.errstate(divide="ignore", invalid="ignore"):
        xv = np.where(a2 < 0, -a1 / np.where(a2 < 0, 2 * a2, 1.0), 0.0)
    xv = np.clip(np.nan_to_num(xv), 0.0, L)
    vert = a0 + (a1 + a2 * xv) * xv
    best = np.maximum(np.maximum(a0, end), vert)
    x = np.where(best == a0, 0.0, np.where(best == end, L, xv))
    return best, x


def _step_extremes(tab, pt, F, w, D, L):
    """Per step and member: largest upper and smallest lower normal stress over the member and
    the points, their points, and the largest tau at an end. F (b, e, 12), w (b, e, 3) or None,
    D (e, 2, W) dynamic peaks at the ends (0 without dynamic terms)."""
    Fi = F[..., :6]
    A, Iy, Iz = pt.A[:, None], pt.Iy[:, None], pt.Iz[:, None]
    y, z = pt.py, pt.pz
    col = (lambda k: Fi[..., k][..., None])
    c0 = -col(0) / A - col(4) * z / Iy + col(5) * y / Iz
    c1 = -col(2) * z / Iy - col(1) * y / Iz
    c2 = np.zeros_like(c0)
    if w is not None:
        q = (lambda k: w[..., k][..., None])
        c1 = c1 - q(0) / A
        c2 = c2 - q(2) * z / (2 * Iy) - q(1) * y / (2 * Iz)
    n = D.shape[1] - 1
    h = L[:, None] / n
    up = lo = None
    for a in range(n):              # each stretch between stations: s +/- the chord of D
        xa = a * h
        b0, b1 = c0 + (c1 + c2 * xa) * xa, c1 + 2 * c2 * xa
        slope = (D[:, a + 1] - D[:, a]) / h
        u, _ = _qmax(b0 + D[:, a], b1 + slope, c2, h)
        v, _ = _qmax(-(b0 - D[:, a]), -(b1 - slope), -c2, h)
        up, lo = (u, -v) if up is None else (np.maximum(up, u), np.minimum(lo, -v))
    pu, pl = up.argmax(-1), lo.argmin(-1)
    vu = np.take_along_axis(up, pu[..., None], -1)[..., 0]
    vl = np.take_along_axis(lo, pl[..., None], -1)[..., 0]
    ends = np.stack([-F[..., :6], F[..., 6:]], axis=-2)                   # internal actions (b, e, 2, 6)
    tau = (tab.ky[:, None] * np.abs(ends[..., 1]) + tab.kz[:, None] * np.abs(ends[..., 2])
           + tab.kt[:, None] * np.abs(ends[..., 3])).max(-1)
    return vu, pu, vl, pl, tau


def _groups(tab, pt):
    """(members, their table, their points, point count): members with a round outline use all
    the columns of `point_table`, the others only their own first ones (the rest repeat them)."""
    from dataclasses import replace

    rnd = tab.radius > 0
    out = []
    for sel, n in ((~rnd, tab.py.shape[1]), (rnd, pt.py.shape[1])):
        if sel.any():
            cut = (lambda x, sel=sel: replace(x, **{k: getattr(x, k)[sel] for k in x.__dataclass_fields__}))
            sub_pt = cut(pt)
            out.append((sel, cut(tab), replace(sub_pt, py=sub_pt.py[:, :n], pz=sub_pt.pz[:, :n]), n))
    return out


def _steps(terms, t, lines, e):
    """Blocks of (times, end forces (b, e, 12), line loads (b, e, 3) or None) of the static and
    history terms: one step without history terms."""
    statics = [(f, r) for f, r in terms if r.kind == "static"]
    F0 = sum((f * np.asarray(r.member_forces, float) for f, r in statics), np.zeros((e, 12)))
    w0 = sum((f * lines.get(r.name, 0.0) for f, r in statics), np.zeros((e, 3)))    # none listed: none
    hist = [(f, r) for f, r in terms if r.kind == "history"]
    if not hist:
        yield np.array([np.nan]), F0[None], w0[None] if np.any(w0) else None
        return
    Q = np.hstack([f * r.series.q for f, r in hist])
    B = np.hstack([r.series.basis["end_force"] for _, r in hist])                # (12e, C)
    own = [r.series.statics.get("line_load") for _, r in hist]
    if any(x is None for x in own):
        raise ModelError("a history case's series has no line loads; solve it with fem.solve")
    Ql = np.hstack([f * r.series.q[:, r.series.q.shape[1] - x.shape[1]:] for (f, r), x in zip(hist, own)])
    Bl = np.hstack(own)                                                          # (3e, l)
    loaded = np.any(w0) or np.any(Bl)
    block = max(1, _BLOCK // max(1, 12 * e))
    for a in range(0, len(t), block):
        rows = slice(a, a + block)
        F = F0 + (Q[rows] @ B.T).reshape(-1, e, 12)
        w = w0 + (Ql[rows] @ Bl.T).reshape(-1, e, 3) if loaded else None
        yield t[rows], F, w


def combination_stresses(model: Model, terms, t, lines: dict, name: str = "", table=None) -> Bounds:
    """The "stress" field (columns `COLUMNS`) of the combination of `terms` [(factor, result)]
    (module docstring); `t` the history terms' shared time grid or None; `lines` the line loads
    of the static terms by name; `table` (SectionTable, its point_table) when already made.
    max_by/min_by: the time (s) of a history part, NaN where none governs; point_max, point_min:
    the governing stress point (columns of `point_table`)."""
    tab, pt = table or (lambda s: (s, point_table(s)))(section_table(model))
    e, W = pt.py.shape
    L = model.lengths
    D, tau_d = np.zeros((e, 2, W)), np.zeros(e)      # no dynamic term: one stretch, the whole member
    for f, r in terms:
        if r.kind in ("spectrum", "harmonic"):
            s = getattr(r, "stresses", None)
            if s is None or s.points is None:
                raise ModelError(f"combination {name}: case {r.name} ({r.kind}) has no per-point stress peaks to "
                                 "combine; solve it with fem.solve")
            got, D = _common(abs(f) * np.nan_to_num(s.points), D)
            D = got + D
            tau_d += abs(f) * np.nan_to_num(s.tau)
    hi, lo, vm = np.full(e, -np.inf), np.full(e, np.inf), np.full(e, -np.inf)
    t_hi, t_lo, t_vm = np.full(e, np.nan), np.full(e, np.nan), np.full(e, np.nan)
    p_hi, p_lo, p_vm = np.zeros(e, int), np.zeros(e, int), np.zeros(e, int)
    cols = np.arange(e)
    groups = _groups(tab, pt)
    for times, F, w in _steps(terms, t, lines, e):
        b = len(F)
        for a in range(0, b, max(1, _BLOCK // max(1, e * W))):
            s = slice(a, a + max(1, _BLOCK // max(1, e * W)))
            vu, pu, vl, pl, tau = (np.zeros((len(F[s]), e), int if k in (1, 3) else float) for k in range(5))
            for sel, sub, sub_pt, n in groups:
                got = _step_extremes(sub, sub_pt, F[s][:, sel], None if w is None else w[s][:, sel],
                                     D[sel][..., :n], L[sel])
                for whole, part in zip((vu, pu, vl, pl, tau), got):
                    whole[:, sel] = part
            big = np.maximum(np.abs(vu), np.abs(vl))
            mis = np.sqrt(big**2 + 3 * (tau + tau_d) ** 2)
            pb = np.where(np.abs(vu) >= np.abs(vl), pu, pl)
            tt = times[s]
            for val, pts, best, when, where, pick in ((vu, pu, hi, t_hi, p_hi, np.argmax), (vl, pl, lo, t_lo, p_lo, np.argmin),
                                                      (mis, pb, vm, t_vm, p_vm, np.argmax)):
                k = pick(val, axis=0)
                got = val[k, cols]
                new = got > best if pick is np.argmax else got < best
                best[new], when[new], where[new] = got[new], tt[k[new]], pts[k[new], cols[new]]
    known = tab.known
    hi, lo, vm = (np.where(known, v, np.nan) for v in (hi, lo, vm))
    ratio = vm / tab.fy
    return Bounds(np.stack([hi, vm, ratio], 1), np.stack([lo, -vm, -ratio], 1), np.stack([t_hi, t_vm, t_vm], 1),
                  np.stack([t_lo, t_vm, t_vm], 1), np.stack([p_hi, p_vm, p_vm], 1), np.stack([p_lo, p_vm, p_vm], 1))


def point_namer(model: Model):
    """A function (member, point) -> the stress point `point` (a column of `point_table`) of
    member `member` in words: a corner of the outline by the signs of its local y and z, or a
    round outline's angle from +y; "" for a section without stress points. The sections' points
    are read once."""
    pts = {n: s.stress_points() for n, s in model.sections.items()}
    width = max([len(s.y) for s in pts.values() if s is not None] or [1]) or 1

    def name(member: int, point: int) -> str:
        sp = pts[model.member_section[member]]
        if sp is None:
            return ""
        if sp.radius:
            return f"outline at {360 // ROUND_POINTS * (point % ROUND_POINTS)} deg from +y towards +z"
        k = (point % width) % len(sp.y)
        y, z = sp.y[k], sp.z[k]
        if len(sp.y) == 4:
            return f"corner {'+' if y > 0 else '-'}y {'+' if z > 0 else '-'}z"
        return f"outline point {k + 1} (y {1e3 * y:+.0f} mm, z {1e3 * z:+.0f} mm)"

    return name


def point_name(model: Model, member: int, point: int) -> str:
    """`point_namer(model)(member, point)`, for one name."""
    return point_namer(model)(member, point)


def _common(a, b):
    """Two per-point peaks (e, s, W) at the same stations: the coarser taken on straight lines
    between its stations at the finer's (a chord of a convex peak: still never below it)."""
    if a.shape[1] < b.shape[1]:
        return _common(b, a)[::-1]
    s0, s = b.shape[1], a.shape[1]
    pos = np.linspace(0.0, s0 - 1.0, s)
    lo = np.minimum(pos.astype(int), s0 - 2)
    w = (pos - lo)[None, :, None]
    return a, b[:, lo] * (1 - w) + b[:, lo + 1] * w


def _bounds(terms, name, t, sizes):
    ctx = sizes.get("stress")
    if ctx is None:
        return None
    return combination_stresses(ctx.model, terms, t, ctx.lines, name, ctx.tables())


add_field(Field("stress", "member", COLUMNS, None, {}, bounds=_bounds))
