"""Cross-section properties from dimensions.

Every function takes dimensions in metres and returns a :class:`SectionProps` with SI
properties (m^2, m^4). Member local axes: x along the member, local z is the depth
direction, local y the width direction; ``Iy`` (bending about local y) is the strong axis of
an I shape. Corners are sharp (no root or toe radii) and torsion constants of open shapes use
the thin-wall sum b t^3/3, so values sit slightly below rolled-section tables.

Shear areas (for Timoshenko members) are ``kappa * A`` with Cowper's (1966) coefficients at
Poisson's ratio 0.3 for solid and hollow round and solid rectangular sections, and the usual
web/flange-area approximations (common practice) for thin-walled shapes. A shear area of 0
means the member is rigid in shear (Euler-Bernoulli).

``SHAPES`` maps each deck shape name to ``(function, required names, optional names)`` and
``make_section`` builds a section from a name and a parameter dict, as the deck parser does.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

__all__ = [
    "SHAPES",
    "SectionProps",
    "angle",
    "angle_principal_angle",
    "channel",
    "cowper_kappa_hollow_circle",
    "cowper_kappa_rectangle",
    "cowper_kappa_solid_circle",
    "generic",
    "ishape",
    "make_section",
    "pipe",
    "rect",
    "rhs",
    "round_bar",
]

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
    """

    shape: str
    A: float
    Iy: float
    Iz: float
    J: float
    Avy: float
    Avz: float


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

def pipe(od: float, wall: float) -> SectionProps:
    """Circular hollow section.

    Parameters
    ----------
    od : float
        Outside diameter, m.
    wall : float
        Wall thickness, m; less than od/2.

    Returns
    -------
    SectionProps
        J = 2I (polar moment); shear areas kappa*A with Cowper's hollow-circle kappa, nu = 0.3.

    Examples
    --------
    >>> p = pipe(0.1683, 0.00711)   # NPS 6 Sch 40
    >>> round(p.Iy * 1e8, 1)        # cm^4
    1171.6
    """
    od = _positive(od, "od", "pipe")
    wall = _positive(wall, "wall", "pipe")
    _less(wall, "wall", od / 2.0, "od/2", "pipe")
    d = od - 2.0 * wall
    A = math.pi * (od**2 - d**2) / 4.0
    I = math.pi * (od**4 - d**4) / 64.0
    Av = cowper_kappa_hollow_circle(d / od) * A
    return SectionProps("pipe", A, I, I, 2.0 * I, Av, Av)


def round_bar(d: float) -> SectionProps:
    """Solid round bar of diameter d (m); J = 2I; shear areas with Cowper's solid-circle kappa."""
    d = _positive(d, "d", "round")
    A = math.pi * d**2 / 4.0
    I = math.pi * d**4 / 64.0
    Av = cowper_kappa_solid_circle() * A
    return SectionProps("round", A, I, I, 2.0 * I, Av, Av)


def rhs(b: float, h: float, t: float) -> SectionProps:
    """Rectangular hollow section, sharp corners.

    Parameters
    ----------
    b : float
        Outside width along local y, m.
    h : float
        Outside depth along local z, m.
    t : float
        Wall thickness, m; less than min(b, h)/2.

    Returns
    -------
    SectionProps
        J by Bredt's thin-tube formula 4 A_m^2 t / p_m on the wall midline. Shear areas are the
        wall areas parallel to the shear, Avz = 2 h t and Avy = 2 b t (common practice, no
        source; an approximation that slightly overstates the exact shear stiffness).
    """
    b = _positive(b, "b", "rhs")
    h = _positive(h, "h", "rhs")
    t = _positive(t, "t", "rhs")
    _less(t, "t", min(b, h) / 2.0, "min(b, h)/2", "rhs")
    bi, hi = b - 2.0 * t, h - 2.0 * t
    A = b * h - bi * hi
    Iy = (b * h**3 - bi * hi**3) / 12.0
    Iz = (h * b**3 - hi * bi**3) / 12.0
    Am = (b - t) * (h - t)
    pm = 2.0 * ((b - t) + (h - t))
    J = 4.0 * Am**2 * t / pm
    return SectionProps("rhs", A, Iy, Iz, J, 2.0 * b * t, 2.0 * h * t)


def _rect_torsion(a: float, b: float, terms: int = 50) -> float:
    """Saint-Venant J of a solid a x b rectangle, a >= b, by the series (Roark Table 10.1)."""
    s = 0.0
    for k in range(terms):          # 50 odd terms: the n^-5 tail is below 1e-12 of the sum
        n = 2 * k + 1
        s += math.tanh(n * math.pi * a / (2.0 * b)) / n**5
    return a * b**3 / 3.0 * (1.0 - 192.0 * b / (math.pi**5 * a) * s)


def rect(b: float, h: float) -> SectionProps:
    """Solid rectangle, width b along local y and depth h along local z (m).

    J by the Saint-Venant series; shear areas kappa*A with Cowper's rectangle kappa, nu = 0.3.
    """
    b = _positive(b, "b", "rect")
    h = _positive(h, "h", "rect")
    A = b * h
    J = _rect_torsion(max(b, h), min(b, h))
    Av = cowper_kappa_rectangle() * A
    return SectionProps("rect", A, b * h**3 / 12.0, h * b**3 / 12.0, J, Av, Av)


def ishape(d: float, bf: float, tf: float, tw: float) -> SectionProps:
    """Doubly symmetric I or H section from plates, sharp corners (no root fillets).

    Parameters
    ----------
    d : float
        Overall depth along local z, m.
    bf : float
        Flange width along local y, m.
    tf : float
        Flange thickness, m; less than d/2.
    tw : float
        Web thickness, m; not more than bf.

    Returns
    -------
    SectionProps
        Iy about the strong axis. J = [2 bf tf^3 + (d - 2tf) tw^3]/3 (thin-wall sum). Shear
        areas: Avz = d tw (web, common practice), Avy = (5/3) bf tf, i.e. the two flanges as
        rectangles with kappa = 5/6 (common practice, approximate).
    """
    d = _positive(d, "d", "ishape")
    bf = _positive(bf, "bf", "ishape")
    tf = _positive(tf, "tf", "ishape")
    tw = _positive(tw, "tw", "ishape")
    _less(tf, "tf", d / 2.0, "d/2", "ishape")
    if tw > bf:
        raise ValueError(f"ishape: tw must not exceed bf (got tw={tw:g} m, bf={bf:g} m)")
    hw = d - 2.0 * tf
    A = 2.0 * bf * tf + hw * tw
    Iy = (bf * d**3 - (bf - tw) * hw**3) / 12.0
    Iz = 2.0 * tf * bf**3 / 12.0 + hw * tw**3 / 12.0
    J = (2.0 * bf * tf**3 + hw * tw**3) / 3.0
    return SectionProps("ishape", A, Iy, Iz, J, 5.0 / 3.0 * bf * tf, d * tw)


def _angle_leg_moments(b: float, h: float, t: float):
    """Area, centroid (cy, cz) from the heel, and centroidal Iyy=int z^2, Izz=int y^2, Pyz."""
    # two rectangles: leg b along y (b x t) and the rest of leg h along z (t x (h - t))
    rects = ((0.0, b, 0.0, t), (0.0, t, t, h))
    A = sum((y1 - y0) * (z1 - z0) for y0, y1, z0, z1 in rects)
    cy = sum((y1 - y0) * (z1 - z0) * (y0 + y1) / 2.0 for y0, y1, z0, z1 in rects) / A
    cz = sum((y1 - y0) * (z1 - z0) * (z0 + z1) / 2.0 for y0, y1, z0, z1 in rects) / A
    Iyy = Izz = Pyz = 0.0
    for y0, y1, z0, z1 in rects:
        y0, y1, z0, z1 = y0 - cy, y1 - cy, z0 - cz, z1 - cz
        Iyy += (y1 - y0) * (z1**3 - z0**3) / 3.0
        Izz += (z1 - z0) * (y1**3 - y0**3) / 3.0
        Pyz += (y1**2 - y0**2) * (z1**2 - z0**2) / 4.0
    return A, cy, cz, Iyy, Izz, Pyz


def _check_angle(b, h, t):
    b = _positive(b, "b", "angle")
    h = _positive(h, "h", "angle")
    t = _positive(t, "t", "angle")
    _less(t, "t", min(b, h), "min(b, h)", "angle")
    return b, h, t


def angle(b: float, h: float, t: float) -> SectionProps:
    """Equal or unequal leg angle, sharp corners, on its principal axes.

    Parameters
    ----------
    b, h : float
        Leg lengths, m (leg b lies along the first leg axis, leg h along the second).
    t : float
        Thickness of both legs, m; less than min(b, h).

    Returns
    -------
    SectionProps
        The local axes of an angle member are its principal axes: Iy = I_u (major), Iz = I_v
        (minor). See :func:`angle_principal_angle` for the orientation of u relative to the
        legs. J = (b + h - t) t^3 / 3 (thin-wall). Shear areas are 0 (rigid in shear): angle
        members are slender bracing for which shear deformation is negligible, and there is no
        well-established shear area on the principal axes.
    """
    b, h, t = _check_angle(b, h, t)
    A, _, _, Iyy, Izz, Pyz = _angle_leg_moments(b, h, t)
    mean = 0.5 * (Iyy + Izz)
    rad = math.hypot(0.5 * (Iyy - Izz), Pyz)
    J = (b + h - t) * t**3 / 3.0
    return SectionProps("angle", A, mean + rad, mean - rad, J, 0.0, 0.0)


def angle_principal_angle(b: float, h: float, t: float) -> float:
    """Angle (rad) from the leg-b axis to the major principal axis u of an angle section.

    Measured positive from leg b towards leg h, in (-pi/2, pi/2]; pi/4 for an equal angle
    (the axis of symmetry). The member's local y axis is u and local z is v.
    """
    b, h, t = _check_angle(b, h, t)
    _, _, _, Iyy, Izz, Pyz = _angle_leg_moments(b, h, t)
    # I(theta) about the axis (cos, sin) = mean + (Iyy-Izz)/2 cos 2theta - Pyz sin 2theta
    theta = 0.5 * math.atan2(-Pyz, 0.5 * (Iyy - Izz))
    return theta if theta > -math.pi / 2 else theta + math.pi


def channel(d: float, bf: float, tf: float, tw: float) -> SectionProps:
    """Channel (C) section from plates, sharp corners.

    Parameters
    ----------
    d : float
        Overall depth along local z, m.
    bf : float
        Flange width along local y (including the web thickness), m.
    tf : float
        Flange thickness, m; less than d/2.
    tw : float
        Web thickness, m; less than bf.

    Returns
    -------
    SectionProps
        Iy about the strong axis (parallel to the flanges); Iz about the weak axis through the
        centroid. J = [2 bf tf^3 + (d - 2tf) tw^3]/3 (thin-wall). Shear areas as for
        :func:`ishape` (common practice): Avz = d tw, Avy = (5/3) bf tf. The offset of the shear
        centre from the centroid is not represented.
    """
    d = _positive(d, "d", "channel")
    bf = _positive(bf, "bf", "channel")
    tf = _positive(tf, "tf", "channel")
    tw = _positive(tw, "tw", "channel")
    _less(tf, "tf", d / 2.0, "d/2", "channel")
    _less(tw, "tw", bf, "bf", "channel")
    hw = d - 2.0 * tf
    A = 2.0 * bf * tf + hw * tw
    Iy = (bf * d**3 - (bf - tw) * hw**3) / 12.0
    # y measured from the back of the web; flanges span [0, bf], web [0, tw]
    yc = (2.0 * tf * bf**2 / 2.0 + hw * tw**2 / 2.0) / A
    Iz = 2.0 * tf * bf**3 / 3.0 + hw * tw**3 / 3.0 - A * yc**2
    J = (2.0 * bf * tf**3 + hw * tw**3) / 3.0
    return SectionProps("channel", A, Iy, Iz, J, 5.0 / 3.0 * bf * tf, d * tw)


def generic(A: float, Iy: float, Iz: float, J: float,
            Avy: float = 0.0, Avz: float = 0.0) -> SectionProps:
    """Section given by its properties (m^2, m^4); shear areas default to 0 (rigid in shear)."""
    return SectionProps(
        "generic",
        _positive(A, "A", "generic", "area", "m^2"),
        _positive(Iy, "Iy", "generic", "second moment of area", "m^4"),
        _positive(Iz, "Iz", "generic", "second moment of area", "m^4"),
        _positive(J, "J", "generic", "torsion constant", "m^4"),
        _non_negative(Avy, "Avy", "generic", "shear area", "m^2"),
        _non_negative(Avz, "Avz", "generic", "shear area", "m^2"),
    )


# ----------------------------------------------------------------------------- registry

SHAPES: dict[str, tuple[Callable[..., SectionProps], tuple[str, ...], tuple[str, ...]]] = {
    "pipe": (pipe, ("od", "wall"), ()),
    "round": (round_bar, ("d",), ()),
    "rhs": (rhs, ("b", "h", "t"), ()),
    "rect": (rect, ("b", "h"), ()),
    "ishape": (ishape, ("d", "bf", "tf", "tw"), ()),
    "angle": (angle, ("b", "h", "t"), ()),
    "channel": (channel, ("d", "bf", "tf", "tw"), ()),
    "generic": (generic, ("A", "Iy", "Iz", "J"), ("Avy", "Avz")),
}


def make_section(shape: str, params: dict[str, float]) -> SectionProps:
    """Build a section from a shape name and its parameters (SI).

    Parameters
    ----------
    shape : str
        One of the keys of ``SHAPES``.
    params : dict of str to float
        Dimensions or properties by parameter name, m or m^2/m^4.

    Raises
    ------
    ValueError
        Unknown shape (the known ones are listed), missing or unknown parameters (the expected
        ones are listed), or invalid dimensions.

    Examples
    --------
    >>> make_section("rect", {"b": 0.1, "h": 0.2}).A
    0.020000000000000004
    """
    if shape not in SHAPES:
        raise ValueError(f"unknown section shape '{shape}'; known shapes: {', '.join(SHAPES)}")
    func, required, optional = SHAPES[shape]
    expected = ", ".join(required + tuple(f"[{o}]" for o in optional))
    missing = [p for p in required if p not in params]
    if missing:
        raise ValueError(f"section shape '{shape}' is missing {', '.join(missing)}; "
                         f"expected: {expected}")
    unknown = [p for p in params if p not in required and p not in optional]
    if unknown:
        raise ValueError(f"section shape '{shape}' does not take {', '.join(unknown)}; "
                         f"expected: {expected}")
    return func(**params)
