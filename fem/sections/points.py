"""Where a section's stresses are largest: its stress points and the factors that turn member
forces into shear and torsional stresses.

Normal stress at a point (y, z) of the section, tension positive, local axes of the member
(x along it, y the width, z the depth; angles on their principal axes):
sigma = N/A + My z/Iy - Mz y/Iz (Gere & Goodno, Mechanics of Materials, 8th ed., ch. 6,
doubly symmetric beams with inclined loads, with the sign of Mz for a right-handed x, y, z). Its extremes lie at the
corners of the outline for rectangles, tubes, I shapes, channels and angles (the points
listed), and on the circle for round bars and pipes: N/A +/- sqrt(My^2 + Mz^2) c/I.

Shear stress from a shear force V, the largest on the section: V Q/(I t) at the neutral axis
(Gere & Goodno ch. 5, shear stresses in beams) with the Q and t of each shape below, except angles (no
closed form on the principal axes is used here: 1.5 V/(t min(b, h)), each leg as a rectangle
carrying the whole shear; conservative, common practice, no source) and generic sections (the
average V/Av over the shear area they declare). Torsion: T r/J for round bars and pipes
(Gere & Goodno ch. 3), Bredt's T/(2 A_m t) for rectangular tubes (Roark, Formulas for
Stress and Strain, 7th ed., Table 10.1, thin-walled closed sections), T t_max/J for open
thin-walled shapes (Roark Table 10.1, open sections of thin plates: the thickest plate), the
Saint-Venant series for a solid rectangle (Timoshenko & Goodier, Theory of Elasticity, 3rd ed.,
sec. 109) and T/Wt for a generic section that declares its torsional modulus Wt (table and
section numbers from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .formulas import SectionProps

__all__ = ["StressPoints", "stress_points"]


@dataclass(frozen=True)
class StressPoints:
    """What the stresses of one section need besides A, Iy, Iz.

    Attributes
    ----------
    y, z : tuple of float
        The stress points, m, from the centroid on the member's local axes (empty for a round
        section, whose extreme fibre is on a circle of radius `radius`).
    radius : float
        Outer radius of a round bar or pipe, m; 0 for other shapes.
    shear_y, shear_z : float
        Largest shear stress per unit shear force along local y and z, 1/m^2 (0: not known).
    torsion : float
        Largest torsional shear stress per unit torque, 1/m^3 (0: not known).
    shear_form, torsion_form : str
        The formulas behind those factors, in words.
    """

    y: tuple
    z: tuple
    radius: float
    shear_y: float
    shear_z: float
    torsion: float
    shear_form: str
    torsion_form: str

    def as_dict(self) -> dict:
        """The points and factors for results.json (SI)."""
        return {"points_y_m": list(self.y), "points_z_m": list(self.z), "radius_m": self.radius,
                "shear_per_force_y_1_per_m2": self.shear_y, "shear_per_force_z_1_per_m2": self.shear_z,
                "torsion_per_torque_1_per_m3": self.torsion, "shear_form": self.shear_form,
                "torsion_form": self.torsion_form}


def _corners(b: float, h: float) -> tuple[tuple, tuple]:
    return (b / 2, -b / 2, -b / 2, b / 2), (h / 2, h / 2, -h / 2, -h / 2)


def _rect_tau_factor(a: float, b: float, terms: int = 50) -> float:
    """k in tau_max = k T b/J of a solid a x b rectangle, a >= b (Timoshenko & Goodier sec. 109):
    1 - 8/pi^2 sum over odd n of 1/(n^2 cosh(n pi a/(2b)))."""
    s = 0.0
    for k in range(terms):
        n = 2 * k + 1
        x = n * math.pi * a / (2.0 * b)
        s += 0.0 if x > 700 else 1.0 / (n * n * math.cosh(x))
    return 1.0 - 8.0 / math.pi**2 * s


_VQIT = "V Q/(I t) at the neutral axis"


def stress_points(shape: str, dims: dict, props: SectionProps) -> StressPoints | None:
    """The stress points and stress factors of a section built by `make_section(shape, dims)`
    (a catalogue section by its designation too); None for a generic section that declares no
    section moduli Wy, Wz (its stresses cannot be found from A, I and J alone)."""
    if shape == "catalogue":
        from .catalogue import catalogue_entry

        entry = catalogue_entry(dims["designation"])
        shape, dims = entry.shape, dict(entry.dims)
    p = props
    if shape in ("pipe", "round"):
        od = dims["od"] if shape == "pipe" else dims["d"]
        c = od / 2.0
        if shape == "pipe":
            d = od - 2.0 * dims["wall"]
            shear = (od**3 - d**3) / 12.0 / (p.Iy * (od - d))
        else:
            shear = 4.0 / (3.0 * p.A)
        return StressPoints((), (), c, shear, shear, c / p.J, _VQIT, "T r/J")
    if shape == "rect":
        b, h = dims["b"], dims["h"]
        y, z = _corners(b, h)
        long, short = max(b, h), min(b, h)
        return StressPoints(y, z, 0.0, 1.5 / p.A, 1.5 / p.A, _rect_tau_factor(long, short) * short / p.J,
                            _VQIT + " (1.5 V/A)", "Saint-Venant rectangle: k T b/J")
    if shape == "rhs":
        b, h, t = dims["b"], dims["h"], dims["t"]
        bi, hi = b - 2 * t, h - 2 * t
        ro = dims.get("ro", 0.0)
        ri = dims.get("ri", max(ro - t, 0.0))
        rm = 0.5 * (ro + ri)
        Am = (b - t) * (h - t) - (4.0 - math.pi) * rm * rm
        y, z = _corners(b, h)
        return StressPoints(y, z, 0.0, (h * b**2 - hi * bi**2) / 8.0 / (p.Iz * 2 * t),
                            (b * h**2 - bi * hi**2) / 8.0 / (p.Iy * 2 * t), 1.0 / (2.0 * Am * t),
                            _VQIT + " (two walls, sharp corners)", "T/(2 A_m t)")
    if shape in ("ishape", "channel"):
        d, bf, tf, tw = dims["d"], dims["bf"], dims["tf"], dims["tw"]
        hw = d - 2 * tf
        qz = (bf * tf * (d - tf) / 2.0 + tw * (hw / 2.0) ** 2 / 2.0) / (p.Iy * tw)
        if shape == "ishape":
            y, z = _corners(bf, d)
            qy = bf**2 / (8.0 * p.Iz)
        else:
            # web back at y = -yc, flange toes at bf - yc (toes towards +y); yc from Wz = Iz/max(yc, bf - yc)
            yc = _channel_centroid(bf, tf, tw, d, dims.get("r", 0.0))
            y = (-yc, bf - yc, bf - yc, -yc)
            z = (d / 2, d / 2, -d / 2, -d / 2)
            qy = (bf - yc) ** 2 / (2.0 * p.Iz)
        return StressPoints(y, z, 0.0, qy, qz, max(tf, tw) / p.J, _VQIT + " (web for Vz, flanges for Vy)",
                            "T t_max/J (open thin-walled)")
    if shape == "angle":
        b, h, t, r, r2 = dims["b"], dims["h"], dims["t"], dims.get("r", 0.0), dims.get("r2", 0.0)
        from .formulas import _angle_outline
        from .shapes import angle_leg_moments, angle_principal_angle

        _, cy, cz, _, _, _ = angle_leg_moments(b, h, t, r, r2)
        th = angle_principal_angle(b, h, t, r, r2)
        cu, su = math.cos(th), math.sin(th)
        pts = [(yy - cy, zz - cz) for yy, zz in _angle_outline(b, h, t, r, r2)]
        y = tuple(cu * a + su * c for a, c in pts)          # along u (local y)
        z = tuple(-su * a + cu * c for a, c in pts)         # along v (local z)
        f = 1.5 / (t * min(b, h))
        return StressPoints(y, z, 0.0, f, f, t / p.J, "1.5 V/(t min(b, h)), each leg carrying the whole shear",
                            "T t/J (open thin-walled)")
    if shape == "generic":
        if not (p.Wy > 0 and p.Wz > 0):
            return None
        y, z = _corners(2 * p.Iz / p.Wz, 2 * p.Iy / p.Wy)
        Wt = dims.get("Wt", 0.0)
        return StressPoints(y, z, 0.0, 1.0 / p.Avy if p.Avy > 0 else 0.0, 1.0 / p.Avz if p.Avz > 0 else 0.0,
                            1.0 / Wt if Wt > 0 else 0.0, "V/Av (average over the declared shear area)",
                            "T/Wt" if Wt > 0 else "none (declare Wt)")
    return None


def _channel_centroid(bf, tf, tw, d, r) -> float:
    """Distance of a channel's centroid from the back of its web, m (as in shapes.channel)."""
    from .formulas import _fillet

    hw = d - 2.0 * tf
    A = 2.0 * bf * tf + hw * tw
    Sy = tf * bf**2 + hw * tw**2 / 2.0
    if r > 0.0:
        a, c, _ = _fillet(r)
        A += 2.0 * a
        Sy += 2.0 * a * (tw + c)
    return Sy / A
