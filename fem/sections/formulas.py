"""The pieces the section shapes are built from: the properties record, dimension checks,
Cowper's shear coefficients, fillet and rounded-corner integrals and torsion formulas (the
numerical Saint-Venant solver is :mod:`.torsion`)."""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["SectionProps", "cowper_kappa_hollow_circle", "cowper_kappa_rectangle", "cowper_kappa_solid_circle"]

# Poisson's ratio at which the Cowper shear coefficients are evaluated (structural steel).
_NU = 0.3


@dataclass(frozen=True)
class SectionProps:
    """Cross-section properties, SI units.

    Attributes
    ----------
    shape : str
        Shape name, e.g. ``"pipe"``.
    A : float
        Area, m^2.
    Iy : float
        Second moment of area about local y (local z is the depth direction), m^4.
    Iz : float
        Second moment of area about local z, m^4.
    J : float
        Torsion constant, m^4.
    Avy : float
        Shear area for shear along local y, m^2; 0 means rigid in shear.
    Avz : float
        Shear area for shear along local z, m^2; 0 means rigid in shear.
    Wy : float
        Elastic section modulus about local y, Iy / (largest distance of the outline from the
        y axis), m^3; 0 where not known (a ``generic`` section).
    Wz : float
        Elastic section modulus about local z, m^3; 0 where not known.
    """

    shape: str
    A: float
    Iy: float
    Iz: float
    J: float
    Avy: float
    Avz: float
    Wy: float = 0.0
    Wz: float = 0.0


# ----------------------------------------------------------------------------- validation

def _positive(value, name: str, shape: str, kind: str = "length", unit: str = "m") -> float:
    """Return value as float; ValueError unless finite and > 0 (`kind` and `unit` name the quantity)."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{shape}: {name} must be a number, got {value!r}") from None
    if not math.isfinite(v) or v <= 0.0:
        raise ValueError(f"{shape}: {name} must be a positive {kind}, got {name}={v:g} {unit}")
    return v


def _non_negative(value, name: str, shape: str, kind: str = "length", unit: str = "m") -> float:
    """Return value as float; ValueError unless finite and >= 0 (`kind` and `unit` name the quantity)."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ValueError(f"{shape}: {name} must be a number, got {value!r}") from None
    if not math.isfinite(v) or v < 0.0:
        raise ValueError(f"{shape}: {name} must be zero or positive (a {kind}), got {name}={v:g} {unit}")
    return v


def _less(a: float, a_name: str, limit: float, limit_text: str, shape: str) -> None:
    """ValueError unless a < limit."""
    if not a < limit:
        raise ValueError(f"{shape}: {a_name} must be less than {limit_text} "
                         f"(got {a_name}={a:g} m, {limit_text}={limit:g} m)")


def _poisson(nu, shape: str) -> float:
    """Return nu as float; ValueError unless -1 < nu < 0.5 (the range of an isotropic solid)."""
    try:
        v = float(nu)
    except (TypeError, ValueError):
        raise ValueError(f"{shape}: Poisson's ratio nu must be a number, got {nu!r}") from None
    if not -1.0 < v < 0.5:
        raise ValueError(f"{shape}: Poisson's ratio nu must lie between -1 and 0.5, got nu={v:g}")
    return v


# ----------------------------------------------------------------------------- rounded corners

def _fillet(r: float) -> tuple[float, float, float]:
    """Area, centroid offset and own second moment of a fillet (spandrel) of radius r.

    The spandrel is an r x r square less the quarter disc centred on its far corner. Exact by
    integration: area (1 - pi/4) r^2; centroid (10 - 3 pi)/(12 - 3 pi) r from each straight side;
    second moment about a straight side (1 - 5 pi/16) r^4, moved to the centroid by the parallel
    axis rule (the same about both centroidal axes parallel to the sides, by symmetry).
    """
    a = (1.0 - math.pi / 4.0) * r * r
    c = (10.0 - 3.0 * math.pi) / (12.0 - 3.0 * math.pi) * r
    return a, c, (1.0 - 5.0 * math.pi / 16.0) * r**4 - a * c * c


def _rounded_rect(b: float, h: float, R: float) -> tuple[float, float, float]:
    """Area and centroidal Iy (int z^2), Iz (int y^2) of a b x h rectangle with corner radius R.

    The full rectangle less its four corner spandrels (:func:`_fillet`), each centred c in from
    both sides; exact.
    """
    a, c, I0 = _fillet(R)
    A = b * h - 4.0 * a
    Iy = b * h**3 / 12.0 - 4.0 * (I0 + a * (h / 2.0 - c) ** 2)
    Iz = h * b**3 / 12.0 - 4.0 * (I0 + a * (b / 2.0 - c) ** 2)
    return A, Iy, Iz


def _el_darwish_johnston(d: float, bf: float, tf: float, tw: float, r: float) -> float:
    """Saint-Venant J of a rolled I shape with parallel flanges and root fillets r.

    El Darwish & Johnston (1965), "Torsion of structural shapes", J. Struct. Div. ASCE 91(ST1),
    in the form given by AISC Design Guide 9 (Seaburg & Carter 1997), Appendix A (from memory;
    confirmed here against the tabulated J of the AISC Shapes Database v15.0 and the EN 10365
    table in fem/sections/data, see tests/test_sections_catalogue.py):
    J = 2 J1 + J2 + 2 alpha D^4, with the flange J1 = bf tf^3 [1/3 - 0.21 (tf/bf)(1 - tf^4/(12 bf^4))],
    the web J2 = (d - 2 tf) tw^3 / 3, the junction factor
    alpha = -0.042 + 0.2204 tw/tf + 0.1355 r/tf - 0.0865 r tw/tf^2 - 0.0725 tw^2/tf^2 and the
    diameter of the circle inscribed at the junction D = [(tf + r)^2 + tw (r + tw/4)] / (2 r + tf).
    """
    J1 = bf * tf**3 * (1.0 / 3.0 - 0.21 * tf / bf * (1.0 - tf**4 / (12.0 * bf**4)))
    J2 = (d - 2.0 * tf) * tw**3 / 3.0
    alpha = (-0.042 + 0.2204 * tw / tf + 0.1355 * r / tf - 0.0865 * r * tw / tf**2
             - 0.0725 * tw**2 / tf**2)
    D = ((tf + r) ** 2 + tw * (r + tw / 4.0)) / (2.0 * r + tf)
    return 2.0 * J1 + J2 + 2.0 * alpha * D**4


def _spandrel_raw(py: float, pz: float, sy: float, sz: float, r: float) -> tuple:
    """Raw moments (A, int y, int z, int z^2, int y^2, int yz) about the origin of a fillet
    (spandrel, :func:`_fillet`) whose right-angle corner is at (py, pz) and whose straight sides
    run from it along sy*y and sz*z (sy, sz = +/-1).

    Exact: about its corner the spandrel has int u^2 = (1 - 5 pi/16) r^4 along each side and
    int u w = (19/24 - pi/4) r^4 (the r x r square's r^4/4 less the quarter disc's
    (pi/4 - 2/3 + 1/8) r^4, integrated about the disc's centre), moved to the origin.
    """
    a, c, _ = _fillet(r)
    i_side = (1.0 - 5.0 * math.pi / 16.0) * r**4
    p_corner = sy * sz * (19.0 / 24.0 - math.pi / 4.0) * r**4
    gy, gz = sy * c, sz * c                      # centroid from the corner
    return (a, a * (py + gy), a * (pz + gz), i_side + 2.0 * pz * gz * a + pz * pz * a,
            i_side + 2.0 * py * gy * a + py * py * a, p_corner + (py * gz + pz * gy) * a + py * pz * a)


def _angle_moments(b: float, h: float, t: float, r: float = 0.0, r2: float = 0.0) -> tuple:
    """Area, centroid (cy, cz) from the heel and centroidal int z^2, int y^2, int yz of an angle
    with legs b (along y) and h (along z), thickness t, root fillet r and toe radius r2 (exact).

    Heel at the origin, legs along +y and +z; the leg rectangles b x t and t x (h - t) plus the
    fillet in the re-entrant corner at (t, t), less a spandrel of radius r2 at the inner corner
    of each toe, (b, t) and (t, h).
    """
    rects = ((0.0, b, 0.0, t), (0.0, t, t, h))
    parts = []                                   # (sign, raw moments about the heel)
    if r > 0.0:
        parts.append((1.0, _spandrel_raw(t, t, 1.0, 1.0, r)))
    if r2 > 0.0:
        parts += [(-1.0, _spandrel_raw(b, t, -1.0, -1.0, r2)), (-1.0, _spandrel_raw(t, h, -1.0, -1.0, r2))]
    fil = [sum(sg * m[k] for sg, m in parts) for k in range(6)]
    A = sum((y1 - y0) * (z1 - z0) for y0, y1, z0, z1 in rects) + fil[0]
    cy = (sum((y1 - y0) * (z1 - z0) * (y0 + y1) / 2.0 for y0, y1, z0, z1 in rects) + fil[1]) / A
    cz = (sum((y1 - y0) * (z1 - z0) * (z0 + z1) / 2.0 for y0, y1, z0, z1 in rects) + fil[2]) / A
    Iyy = Izz = Pyz = 0.0
    for y0, y1, z0, z1 in rects:             # each rectangle about the centroid (no cancellation)
        y0, y1, z0, z1 = y0 - cy, y1 - cy, z0 - cz, z1 - cz
        Iyy += (y1 - y0) * (z1**3 - z0**3) / 3.0
        Izz += (z1 - z0) * (y1**3 - y0**3) / 3.0
        Pyz += (y1**2 - y0**2) * (z1**2 - z0**2) / 4.0
    if parts:                                # the spandrels' heel moments moved to the centroid
        Iyy += fil[3] - 2.0 * cz * fil[2] + fil[0] * cz * cz
        Izz += fil[4] - 2.0 * cy * fil[1] + fil[0] * cy * cy
        Pyz += fil[5] - cy * fil[2] - cz * fil[1] + fil[0] * cy * cz
    return A, cy, cz, Iyy, Izz, Pyz


def _angle_outline(b: float, h: float, t: float, r: float = 0.0, r2: float = 0.0) -> list:
    """Points of an angle's outline from the heel (y along leg b, z along leg h), in order: heel,
    the toes' outer and inner corners and the re-entrant corner. A root fillet r splits the
    re-entrant corner into its two tangent points (t + r, t) and (t, t + r); a toe radius r2
    replaces each toe's inner corner by its arc, given as points every 15 degrees (tangent points
    included), so a linear function's largest value on the arc is found within r2 (1 - cos 7.5 deg)
    = 0.009 r2 of the exact one (see :func:`_angle_far` for the exact distance)."""
    inner = [(t, t)] if r == 0.0 else [(t + r, t), (t, t + r)]
    if r2 == 0.0:
        return [(0.0, 0.0), (b, 0.0), (b, t), *inner, (t, h), (0.0, h)]
    phi = [k * math.pi / 12.0 for k in range(7)]
    toe_b = [(b - r2 + r2 * math.cos(f), t - r2 + r2 * math.sin(f)) for f in phi]
    toe_h = [(t - r2 + r2 * math.cos(f), h - r2 + r2 * math.sin(f)) for f in phi]
    return [(0.0, 0.0), (b, 0.0), *toe_b, *inner, *toe_h, (0.0, h)]


def _angle_far(b: float, h: float, t: float, r: float, r2: float, cy: float, cz: float, ny: float, nz: float) -> float:
    """Largest |n . (p - centroid)| over an angle's outline, n = (ny, nz) a unit vector: the
    corners, and on each toe arc (which spans 0 to 90 degrees about its centre) the point whose
    normal is +/-n where that lies on the arc (exact)."""
    inner = [(t, t)] if r == 0.0 else [(t + r, t), (t, t + r)]
    pts = [(0.0, 0.0), (b, 0.0), (b, t - r2), (b - r2, t), *inner, (t, h - r2), (t - r2, h), (0.0, h)]
    for oy, oz in ((b - r2, t - r2), (t - r2, h - r2)) if r2 > 0.0 else ():   # the toe arcs' centres
        pts += [(oy + r2 * sy, oz + r2 * sz) for sy, sz in ((ny, nz), (-ny, -nz)) if sy >= 0.0 and sz >= 0.0]
    return max(abs(ny * (y - cy) + nz * (z - cz)) for y, z in pts)


# ----------------------------------------------------------------------------- shear coefficients

def cowper_kappa_rectangle(nu: float = _NU) -> float:
    """Cowper (1966) shear coefficient of a solid rectangle, 10(1+nu)/(12+11nu)."""
    return 10.0 * (1.0 + nu) / (12.0 + 11.0 * nu)


def cowper_kappa_solid_circle(nu: float = _NU) -> float:
    """Cowper (1966) shear coefficient of a solid circle, 6(1+nu)/(7+6nu)."""
    return 6.0 * (1.0 + nu) / (7.0 + 6.0 * nu)


def cowper_kappa_hollow_circle(m: float, nu: float = _NU) -> float:
    """Cowper (1966) shear coefficient of a hollow circle with bore ratio m = d/D.

    kappa = 6(1+nu)(1+m^2)^2 / [(7+6nu)(1+m^2)^2 + (20+12nu)m^2]; m = 0 gives the solid
    circle, m -> 1 the thin tube 2(1+nu)/(4+3nu).
    """
    s = (1.0 + m * m) ** 2
    return 6.0 * (1.0 + nu) * s / ((7.0 + 6.0 * nu) * s + (20.0 + 12.0 * nu) * m * m)


# ----------------------------------------------------------------------------- shapes

def _rect_torsion(a: float, b: float, terms: int = 50) -> float:
    """Saint-Venant J of a solid a x b rectangle, a >= b, by the series (Roark Table 10.1)."""
    s = 0.0
    for k in range(terms):          # 50 odd terms: the n^-5 tail is below 1e-12 of the sum
        n = 2 * k + 1
        s += math.tanh(n * math.pi * a / (2.0 * b)) / n**5
    return a * b**3 / 3.0 * (1.0 - 192.0 * b / (math.pi**5 * a) * s)
