"""Member stresses from member end forces: normal stress at the section's stress points along
the member, shear and torsional stress, an equivalent (von Mises) stress and a plain ratio to
the material's yield strength, for every kind of case.

Internal actions at a distance x from end i, from the end forces F_i (forces on the member,
local axes) and a uniform line load q (N/m, local axes) by equilibrium of the part [0, x]:
N = -N_i - q_x x, V_y = -V_yi - q_y x, V_z = -V_zi - q_z x, T = -T_i,
M_y = -M_yi - V_zi x - q_z x^2/2, M_z = -M_zi + V_yi x + q_y x^2/2 (at x = L these are the
end forces at j). The normal stress at a point (y, z) of the section, sigma = N/A + M_y z/I_y
- M_z y/I_z (fem.sections.points), is then a quadratic in x for every point, largest at an
end or where its derivative vanishes: those stations are evaluated in closed form, so the
largest normal stress of a static case is exact. A round section's extremes are
N/A +/- sqrt(M_y^2 + M_z^2) c/I, exact at each station; under a line load its stations add the
eighth points of the member (sampled, not closed form). Where stresses are summed over modes or
harmonics point by point, a round outline is taken as the `ROUND_POINTS` corners of the polygon
drawn around it (every 5 degrees, at r / cos 2.5 deg): such a sum is a convex function of the
point (y, z) (a norm of terms linear in y, z), so its largest over the polygon, which holds the
circle, is at a corner and is never below the true one; above it by at most 1/cos 2.5 deg - 1
= 0.1 % of the bending part. The per-point peaks of amplitudes and combined peaks at `STATIONS`
equally spaced stations along each member (`MemberStresses.points`, in `point_table`'s order)
are kept for combinations (fem.analysis.stress_field): without a line load in the modal or
harmonic forces, each mode's or harmonic's actions are linear along the member, so they are
interpolated from the ends exactly.
Shear and torsion are largest at an end (V linear, T constant).

The equivalent stress sqrt(sigma^2 + 3 tau^2) takes the largest |sigma| and the largest tau of
the member (tau the sum of the shear from V_y, from V_z and from T, each at its largest), which
may lie at different points: an upper bound, conservative. The stress ratio is that stress over
the yield strength the material declares: a plain ratio, not a design-code check (no buckling,
no partial factors, no fatigue).

How each case kind is reduced (`MemberStresses.basis`):
- static cases and combinations: exact, from their end forces and line loads;
- history and free cases: the stresses of every step from the member forces of that step, then
  the largest over time of each quantity, with the time of the largest equivalent stress;
- harmonic cases: amplitudes; the stress at each point is a sum of harmonics at one frequency,
  so its amplitude is |sum of the complex terms| (closed form, phases kept); the largest over
  the frequencies, with where; at the member ends (a harmonic line load's field inside the
  member is not sampled);
- spectrum cases: the stress of every mode at every point and end, combined over the modes by
  the case's rule and over the directions by its spatial rule (never from combined forces);
  shear and torsion likewise; at the member ends (modal forces carry no line load).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..model import Model
from .modal_sum import combine, combine_directions

__all__ = ["MemberStresses", "ROUND_POINTS", "STATIONS", "harmonic_stresses", "member_stresses", "point_table", "section_table",
           "series_stresses", "spectrum_stresses"]

ROUND_POINTS = 72          # points around a round outline (every 5 degrees)
STATIONS = 9               # stations along a member (its ends and eighth points) of the per-point peaks
_BLOCK = 100_000           # floats of (steps, members, stations, points) held at once: cache-sized blocks, and
                           # little beside the memory a history or free case holds (history_bytes, free_bytes)


@dataclass(frozen=True)
class SectionTable:
    """The stress data of each member (e members, P points, padded by repeating a point).

    A, Iy, Iz (e,) m^2, m^4; py, pz (e, P) stress points, m (a round section's: its centroid);
    radius (e,) outer radius of round sections, m (0 for others); ymax, zmax (e,) the largest
    distances of the outline from the z and y axes, m; ky, kz (e,) 1/m^2 and kt (e,) 1/m^3 shear
    and torsion stress per unit force; known (e,) whether the section has stress points; fy (e,)
    yield strength, Pa (nan: not declared)."""

    A: np.ndarray
    Iy: np.ndarray
    Iz: np.ndarray
    py: np.ndarray
    pz: np.ndarray
    radius: np.ndarray
    ymax: np.ndarray
    zmax: np.ndarray
    ky: np.ndarray
    kz: np.ndarray
    kt: np.ndarray
    known: np.ndarray
    fy: np.ndarray


def section_table(model: Model) -> SectionTable:
    """The stress points and factors of every member, from its section (fem.sections.points)."""
    e = model.n_members
    points = {name: sec.stress_points() for name, sec in model.sections.items()}
    width = max([len(s.y) for s in points.values() if s is not None] or [1]) or 1
    py, pz = np.zeros((e, width)), np.zeros((e, width))
    ky, kz, kt, radius = np.zeros(e), np.zeros(e), np.zeros(e), np.zeros(e)
    known = np.zeros(e, bool)
    names = np.array(model.member_section, dtype=object)
    for name, s in points.items():
        hit = names == name
        if s is None or not hit.any():
            continue
        if s.radius:
            radius[hit] = s.radius
        else:
            py[hit], pz[hit] = np.resize(np.array(s.y), width), np.resize(np.array(s.z), width)
        ky[hit], kz[hit], kt[hit] = s.shear_y, s.shear_z, s.torsion
        known[hit] = True
    fy = np.array([getattr(model.materials.get(m), "yield_strength", None) or np.nan
                   for m in model.member_material], float).reshape(e)
    return SectionTable(model.A, model.Iy, model.Iz, py, pz, radius, np.maximum(np.abs(py).max(axis=1), radius),
                        np.maximum(np.abs(pz).max(axis=1), radius), ky, kz, kt, known, fy)


def _groups(tab: SectionTable):
    """The members as (mask, table of those members with their points): round members with
    their outline as `ROUND_POINTS` points (every 5 degrees), the others with their own, for the
    stresses that need a sum over points (amplitudes, combined peaks)."""
    from dataclasses import replace

    out = []
    rnd = tab.radius > 0
    theta = np.arange(ROUND_POINTS) * 2 * np.pi / ROUND_POINTS
    for sel in (~rnd, rnd):
        if not sel.any():
            continue
        sub = replace(tab, **{k: getattr(tab, k)[sel] for k in tab.__dataclass_fields__})
        if sel is rnd:
            r = sub.radius[:, None] / np.cos(np.pi / ROUND_POINTS)
            sub = replace(sub, py=r * np.cos(theta), pz=r * np.sin(theta), radius=np.zeros_like(sub.radius))
        out.append((sel, sub))
    return out


def _width(tab: SectionTable) -> int:
    """Points per member in `point_table`'s order."""
    return max(tab.py.shape[1], ROUND_POINTS if tab.radius.any() else 0)


def point_table(tab: SectionTable) -> SectionTable:
    """`tab` with every member's points in one (e, W) array and no radius: a round outline as
    the corners of the polygon around it (module docstring), other sections' points repeated
    to the width W. Point k of a member is column k % P of its group (P its group's count)."""
    from dataclasses import replace

    e, W = len(tab.A), _width(tab)
    py, pz = np.zeros((e, W)), np.zeros((e, W))
    for sel, sub in _groups(tab):
        k = np.arange(W) % sub.py.shape[1]
        py[sel], pz[sel] = sub.py[:, k], sub.pz[:, k]
    return replace(tab, py=py, pz=pz, radius=np.zeros_like(tab.radius))


@dataclass
class MemberStresses:
    """Stresses of every member of one case (e members), Pa; nan where the section has no
    stress points (a generic section without Wy, Wz).

    basis : "exact", "peak over time", "amplitude" or "combined peaks" (module docstring)
    sigma_max, sigma_min : largest and smallest normal stress (tension positive); for
        amplitudes and combined peaks, +/- the largest
    axial, bending_y, bending_z : largest |N|/A, |M_y| z_max/I_y, |M_z| y_max/I_z
    shear, torsion : largest shear stress from V_y and V_z, and from T
    tau : largest shear + torsion at an end; mises : sqrt(max|sigma|^2 + 3 tau^2) (upper bound)
    x : where along the member (m from end i) the largest |sigma| is (nan: not known)
    at : time (s) or frequency (Hz) of the largest equivalent stress, or None; at_unit "s"/"Hz"
    ratio : mises / yield strength (nan where the material declares none)
    points : (e, S, W) the normal stress peak (>= 0) at each stress point at S stations
        L j/(S - 1) along the member (S = STATIONS, or 2 for a harmonic case no combination adds),
        in `point_table`'s order, for amplitudes and combined peaks (None for the others)
    point : (e,) the stress point of the largest |sigma|, a column of `point_table` (a round
        outline's extreme fibre to the nearest 5 degrees), or None
    """

    basis: str
    sigma_max: np.ndarray
    sigma_min: np.ndarray
    axial: np.ndarray
    bending_y: np.ndarray
    bending_z: np.ndarray
    shear: np.ndarray
    torsion: np.ndarray
    tau: np.ndarray
    mises: np.ndarray
    x: np.ndarray
    ratio: np.ndarray
    at: np.ndarray | None = None
    at_unit: str = ""
    points: np.ndarray | None = None
    point: np.ndarray | None = None

    def governing(self) -> int | None:
        """Index of the member with the largest equivalent stress (None if no member has one)."""
        m = np.where(np.isfinite(self.mises), self.mises, -1.0)
        return int(m.argmax()) if m.size and m.max() >= 0 else None


def _end_actions(F):
    """Internal actions (..., e, 2, 6) at x = 0 and x = L from end forces F (..., e, 12)."""
    return np.stack([-F[..., :6], F[..., 6:]], axis=-2)


def _along(ends, stations: int = STATIONS):
    """Internal actions (..., e, stations, 6) along members without a line load, from those at
    the ends (..., e, 2, 6): linear between them."""
    f = np.linspace(0.0, 1.0, stations)[:, None]
    return ends[..., :1, :] * (1.0 - f) + ends[..., 1:, :] * f


def _shear(tab: SectionTable, ends):
    """Shear (from V) and torsional stress magnitudes (..., e, 2) at the ends."""
    v = tab.ky[:, None] * np.abs(ends[..., 1]) + tab.kz[:, None] * np.abs(ends[..., 2])
    return v, tab.kt[:, None] * np.abs(ends[..., 3])


def _normal(tab: SectionTable, N, My, Mz):
    """Normal stress (..., e, s, P) at every point from actions (..., e, s); a round section's
    extremes N/A +/- sqrt(My^2 + Mz^2) c/I as two more points (real actions only)."""
    n = N / tab.A[:, None]
    sig = n[..., None] + (My / tab.Iy[:, None])[..., None] * tab.pz[:, None, :] \
        - (Mz / tab.Iz[:, None])[..., None] * tab.py[:, None, :]
    if not tab.radius.any():
        return sig
    b = np.hypot(My, Mz) * (tab.radius / tab.Iy)[:, None]
    return np.concatenate([sig, (n + b)[..., None], (n - b)[..., None]], axis=-1)


def _stations(F, w, L, tab: SectionTable):
    """Stations x (..., e, s): both ends and, under a line load, where M_y, M_z and the normal
    stress of each point are extreme (clipped into the member)."""
    shape = F.shape[:-1]
    ends = np.stack([np.zeros(shape), np.broadcast_to(L, shape)], axis=-1)
    if w is None:
        return ends
    qx, qy, qz = w[..., 0], w[..., 1], w[..., 2]
    with np.errstate(divide="ignore", invalid="ignore"):
        xy = -F[..., 2] / qz
        xz = -F[..., 1] / qy
        a = (qx / tab.A)[..., None] + (F[..., 2] / tab.Iy)[..., None] * tab.pz + (F[..., 1] / tab.Iz)[..., None] * tab.py
        b = (qz / tab.Iy)[..., None] * tab.pz + (qy / tab.Iz)[..., None] * tab.py
        xp = -a / b
    x = [ends, xy[..., None], xz[..., None], xp]
    if tab.radius.any():        # |M(x)| of a round section: its extreme is sampled at eighth points
        x.append(np.multiply.outer(np.ones(shape), np.arange(1, 8) / 8) * L[:, None])
    x = np.concatenate(x, axis=-1)
    return np.clip(np.nan_to_num(x, nan=0.0, posinf=0.0, neginf=0.0), 0.0, L[:, None])


def _actions_at(F, w, x):
    """N, My, Mz (..., e, s) at stations x (..., e, s)."""
    Fi = F[..., None, :6]
    qx, qy, qz = (0.0, 0.0, 0.0) if w is None else (w[..., c][..., None] for c in range(3))
    N = -Fi[..., 0] - qx * x
    My = -Fi[..., 4] - Fi[..., 2] * x - qz * x * x / 2
    Mz = -Fi[..., 5] + Fi[..., 1] * x + qy * x * x / 2
    return N, My, Mz


def _finish(tab, basis, smax, smin, axial, by, bz, v, t, x, at=None, at_unit="", points=None, point=None):
    tau = np.max(v + t, axis=-1) if v.ndim > axial.ndim else v + t
    big = np.maximum(np.abs(smax), np.abs(smin))
    mises = np.sqrt(big**2 + 3 * tau**2)
    nan = ~tab.known
    out = [np.where(nan, np.nan, a) for a in (smax, smin, axial, by, bz, np.max(v, axis=-1) if v.ndim > axial.ndim else v,
                                              np.max(t, axis=-1) if t.ndim > axial.ndim else t, tau, mises, x)]
    return MemberStresses(basis, *out, out[8] / tab.fy, at, at_unit, points, point)


def member_stresses(model: Model, forces, w_local=None, *, table: SectionTable | None = None,
                    where: bool = True) -> MemberStresses:
    """Stresses of a static result (exact): end forces `forces` (e, 12) in the layout of
    `StaticResult.member_forces` (N, Vy, Vz, T, My, Mz at i then j, forces on the member,
    local axes) and the uniform line loads `w_local` (e, 3) N/m in local axes (None: none).
    A combination passes the factored sums of both. The actions along the member follow from
    the forces at end i and the load by equilibrium (those at end j are what they reach for a
    solved member), so forces and loads must belong together. `where=False` leaves `x` out."""
    tab = table or section_table(model)
    F = np.asarray(forces, float)
    w = None if w_local is None or not np.any(w_local) else np.asarray(w_local, float)
    L = model.lengths
    x = _stations(F, w, L, tab)
    N, My, Mz = _actions_at(F, w, x)
    sig = _normal(tab, N, My, Mz)                            # (e, s, P)
    flat = sig.reshape(*sig.shape[:-2], -1)
    point = None
    if where:
        big = np.abs(flat).argmax(axis=-1)
        k, p = big // sig.shape[-1], big % sig.shape[-1]
        xs = np.take_along_axis(x, k[..., None], axis=-1)[..., 0]
        # a round outline's extreme fibre: along (-Mz, My) for N/A + b, opposite for N/A - b
        at = (lambda a: np.take_along_axis(a, k[..., None], axis=-1)[..., 0])
        deg = np.degrees(np.arctan2(at(My), -at(Mz))) + np.where(p == tab.py.shape[-1] + 1, 180.0, 0.0)
        point = np.where(tab.radius > 0, np.rint(deg / (360 / ROUND_POINTS)).astype(int) % ROUND_POINTS, p)
    else:
        xs = np.full(flat.shape[:-1], np.nan)
    v, t = _shear(tab, _end_actions(F))
    out = _finish(tab, "exact", flat.max(axis=-1), flat.min(axis=-1), np.abs(N).max(axis=-1) / tab.A,
                  np.abs(My).max(axis=-1) * tab.zmax / tab.Iy, np.abs(Mz).max(axis=-1) * tab.ymax / tab.Iz,
                  v, t, xs)
    out.point = point
    return out


class _Projected:
    """The stresses of a block of steps from end forces that are q @ columns (no line load):
    every end action and the normal stress at every point are linear in q, so one product per
    block gives them all (the columns' stresses made once); a round section's extremes after."""

    def __init__(self, tab: SectionTable, columns):
        c = len(columns)
        ends = _end_actions(np.asarray(columns, float).reshape(c, -1, 12))           # (c, e, 2, 6)
        from dataclasses import replace

        sig = _normal(replace(tab, radius=np.zeros_like(tab.radius)), ends[..., 0], ends[..., 4], ends[..., 5])
        self.P, self.tab = sig.shape[-1], tab
        self.lin = np.concatenate([sig, ends], axis=-1).reshape(c, -1)               # (c, e*2*(P+6))

    def __call__(self, q):
        tab, P = self.tab, self.P
        Y = (q @ self.lin).reshape(len(q), len(tab.A), 2, P + 6)
        N, Vy, Vz, T, My, Mz = (Y[..., P + j] for j in range(6))
        smax, smin = Y[..., :P].max(axis=(-1, -2)), Y[..., :P].min(axis=(-1, -2))
        if tab.radius.any():
            n, b = N / tab.A[:, None], np.hypot(My, Mz) * (tab.radius / tab.Iy)[:, None]
            smax, smin = np.maximum(smax, (n + b).max(-1)), np.minimum(smin, (n - b).min(-1))
        v = tab.ky[:, None] * np.abs(Vy) + tab.kz[:, None] * np.abs(Vz)
        t = tab.kt[:, None] * np.abs(T)
        return _finish(tab, "exact", smax, smin, np.abs(N).max(-1) / tab.A, np.abs(My).max(-1) * tab.zmax / tab.Iy,
                       np.abs(Mz).max(-1) * tab.ymax / tab.Iz, v, t, np.full(smax.shape, np.nan))


def series_stresses(model: Model, forces, times, w_local=None, unit: str = "s", linear=None) -> MemberStresses | None:
    """Peaks over a series of static-like states (a history's steps): `forces(rows)` gives the
    end forces (b, e, 12) of the steps `rows` (a slice), `w_local(rows)` their line loads
    (b, e, 3) or is None; `times` (m,) labels the steps. `linear` = (q (m, c), columns (c, e*12))
    says the forces are q @ columns, which lets a series without line loads be done by
    projection (the same numbers, fewer operations). Each quantity is its largest over the steps
    (sigma_min its smallest); `at` is the time of the largest equivalent stress, `x` where
    |sigma| was then."""
    if model.n_members == 0:      # springs and masses only: no member, no stress
        return None
    tab = section_table(model)
    e, m = model.n_members, len(times)
    width = (tab.py.shape[1] + 8) * ((11 + tab.py.shape[1]) if w_local is not None else 2)
    block = max(1, _BLOCK // max(1, e * width))
    projected = _Projected(tab, linear[1]) if linear is not None and w_local is None else None
    best = None
    step = np.full(e, -1)
    for a in range(0, m, block):
        rows = slice(a, min(m, a + block))
        if projected is not None:
            s = projected(linear[0][rows])
        else:
            s = member_stresses(model, forces(rows), None if w_local is None else w_local(rows), table=tab, where=False)
        if best is None:
            best = {k: np.full(e, -np.inf) for k in ("sigma_max", "axial", "bending_y", "bending_z", "shear",
                                                      "torsion", "tau", "mises")}
            best["sigma_min"], best["x"], best["at"] = np.full(e, np.inf), np.full(e, np.nan), np.full(e, np.nan)
        for k in best:
            if k in ("x", "at", "sigma_min"):
                continue
            best[k] = np.fmax(best[k], np.nanmax(getattr(s, k), axis=0, initial=-np.inf))
        best["sigma_min"] = np.fmin(best["sigma_min"], np.nanmin(s.sigma_min, axis=0, initial=np.inf))
        i = np.nan_to_num(s.mises, nan=-1.0).argmax(axis=0)
        top = s.mises[i, np.arange(e)]
        new = top >= best["mises"]
        best["at"][new] = times[a + i[new]]
        step[new] = a + i[new]
    point = np.zeros(e, int)
    for k in np.unique(step[step >= 0]):        # where along each member and at which point, at its peak step
        rows = slice(k, k + 1)
        got = member_stresses(model, forces(rows), None if w_local is None else w_local(rows), table=tab)
        best["x"][step == k] = got.x[0, step == k]
        point[step == k] = got.point[0, step == k]
    keys = ("sigma_max", "sigma_min", "axial", "bending_y", "bending_z", "shear", "torsion", "tau", "mises", "x")
    vals = {k: np.where(tab.known, best[k], np.nan) for k in keys}
    return MemberStresses("peak over time", **vals, ratio=vals["mises"] / tab.fy, at=best["at"], at_unit=unit,
                          point=point)


def harmonic_stresses(model: Model, forces, freq, stations: int = 2) -> MemberStresses | None:
    """Amplitudes of a harmonic case: `forces(rows)` gives the complex end-force amplitudes
    (b, e, 12) at the frequencies `rows` (a slice) of `freq` (m,) Hz; `points` at `stations`
    along each member (2: the ends; `STATIONS` for a case a combination adds: each station
    costs a pass over the frequencies). At each frequency the stress at a
    point is |sum of the complex terms| (phases kept); the largest over the frequencies, with
    the frequency of the largest equivalent stress."""
    if model.n_members == 0:      # springs and masses only: no member, no stress
        return None
    tab = section_table(model)
    e, m = model.n_members, len(freq)
    block = max(1, _BLOCK // max(1, e * stations * (ROUND_POINTS if tab.radius.any() else tab.py.shape[1])))
    keys = ("sigma_max", "axial", "bending_y", "bending_z", "shear", "torsion", "tau", "mises")
    best = {k: np.zeros(e) for k in keys}
    at = np.full(e, np.nan)
    W = _width(tab)
    points = np.zeros((e, stations, W))
    for a in range(0, m, block):
        rows = slice(a, min(m, a + block))
        F = forces(rows)
        ends = _end_actions(F)                                     # (b, e, 2, 6) complex
        smax = np.zeros(ends.shape[:-2])
        for sel, sub in _groups(tab):
            g = _along(ends[:, sel], stations)
            amp = np.abs(_normal(sub, g[..., 0], g[..., 4], g[..., 5]))        # (b, e_g, STATIONS, P)
            smax[:, sel] = amp.reshape(*amp.shape[:-2], -1).max(axis=-1)
            points[sel] = np.maximum(points[sel], amp.max(axis=0)[..., np.arange(W) % amp.shape[-1]])
        v, t = _shear(tab, ends)
        got = {"sigma_max": smax, "axial": np.abs(ends[..., 0]).max(-1) / tab.A,
               "bending_y": np.abs(ends[..., 4]).max(-1) * tab.zmax / tab.Iy,
               "bending_z": np.abs(ends[..., 5]).max(-1) * tab.ymax / tab.Iz,
               "shear": v.max(-1), "torsion": t.max(-1), "tau": (v + t).max(-1)}
        got["mises"] = np.sqrt(smax**2 + 3 * got["tau"] ** 2)
        i = got["mises"].argmax(axis=0)
        new = got["mises"][i, np.arange(e)] >= best["mises"]
        at[new] = freq[a + i[new]]
        for k in keys:
            best[k] = np.maximum(best[k], got[k].max(axis=0))
    vals = {k: np.where(tab.known, best[k], np.nan) for k in keys}
    return MemberStresses("amplitude", vals["sigma_max"], -vals["sigma_max"], vals["axial"], vals["bending_y"],
                          vals["bending_z"], vals["shear"], vals["torsion"], vals["tau"], vals["mises"],
                          np.full(e, np.nan), vals["mises"] / tab.fy, np.where(tab.known, at, np.nan), "Hz",
                          np.where(tab.known[:, None, None], points, np.nan), _peak_point(points))


def _peak_point(points):
    """The point (a column of `point_table`) of the largest per-point peak of each member."""
    return points.max(axis=1).argmax(axis=-1)


def spectrum_stresses(model: Model, per_direction, rule: str, spatial: str) -> MemberStresses | None:
    """Combined peaks of a spectrum case: `per_direction` [(F (k, e, 12) signed per-mode end
    forces, rho (k, k) or None)] for each direction; every stress quantity is computed per mode
    and combined over the modes by `rule` ('srss', 'cqc', 'abs') and over the directions by
    `spatial` ('srss', '100/30')."""
    if model.n_members == 0:      # springs and masses only: no member, no stress
        return None
    tab = section_table(model)
    e = model.n_members
    ends = [(_end_actions(np.asarray(F, float)), rho) for F, rho in per_direction]     # (k, e, 2, 6)
    parts = {k: [combine(a[..., j], rule, rho) for a, rho in ends]
             for k, j in (("N", 0), ("My", 4), ("Mz", 5), ("Vy", 1), ("Vz", 2), ("T", 3))}
    c = {k: combine_directions(v, spatial) for k, v in parts.items()}   # (e, 2)
    # the normal stress at each point: per mode, combined over the modes, then the directions
    smax, W = np.zeros(e), _width(tab)
    points = np.zeros((e, STATIONS, W))
    from dataclasses import replace

    modes = max([len(a) for a, _ in ends] or [1])
    for sel, sub in _groups(tab):
        idx = np.flatnonzero(sel)
        step = max(1, 10 * _BLOCK // (modes * STATIONS * sub.py.shape[1]))   # members per block
        for first in range(0, len(idx), step):
            part = replace(sub, **{f: getattr(sub, f)[first:first + step] for f in sub.__dataclass_fields__})
            rows = idx[first:first + step]
            per_dir = [combine(_normal(part, g[..., 0], g[..., 4], g[..., 5]), rule, rho)
                       for g, rho in ((_along(a[:, rows]), rho) for a, rho in ends)]
            got = combine_directions(per_dir, spatial)                          # (rows, STATIONS, P)
            smax[rows] = got.reshape(len(rows), -1).max(axis=-1)
            points[rows] = got[..., np.arange(W) % got.shape[-1]]
    v = tab.ky[:, None] * c["Vy"] + tab.kz[:, None] * c["Vz"]
    t = tab.kt[:, None] * c["T"]
    return _finish(tab, "combined peaks", smax, -smax, c["N"].max(-1) / tab.A, c["My"].max(-1) * tab.zmax / tab.Iy,
                   c["Mz"].max(-1) * tab.ymax / tab.Iz, v, t, np.full(e, np.nan),
                   points=np.where(tab.known[:, None, None], points, np.nan), point=_peak_point(points))
