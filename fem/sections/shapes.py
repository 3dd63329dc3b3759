"""Cross-section properties from dimensions.

Every function takes dimensions in metres and returns a :class:`SectionProps` with SI
properties (m^2, m^3, m^4). Member local axes: x along the member, local z is the depth
direction, local y the width direction; ``Iy`` (bending about local y) is the strong axis of
an I shape. By default corners are sharp (no root or corner radii) and torsion constants of
open shapes use the thin-wall sum b t^3/3, so values sit slightly below rolled-section tables.
Optional radii make rolled shapes match their tables: the root fillet ``r`` of I shapes,
channels and angles, the corner radii ``ro``/``ri`` of hollow rectangles (see each function).

Shear areas (for Timoshenko members) are ``kappa * A`` with Cowper's (1966) coefficients at
Poisson's ratio ``nu`` (default 0.3, pass the material's) for solid and hollow round and solid
rectangular sections, and the usual web/flange-area approximations (common practice) for
thin-walled shapes. A shear area of 0 means the member is rigid in shear (Euler-Bernoulli).

``SHAPES`` maps each deck shape name to ``(function, required names, optional names)`` and
``make_section`` builds a section from a name and a parameter dict, as the deck parser does.
"""

from __future__ import annotations

import math
from collections.abc import Callable

from .formulas import (  # noqa: F401 (SectionProps and the kappas are re-exported)
    _NU,
    SectionProps,
    _angle_far,
    _angle_moments,
    _fillet,
    _less,
    _non_negative,
    _poisson,
    _positive,
    _rect_torsion,
    _rounded_rect,
    cowper_kappa_hollow_circle,
    cowper_kappa_rectangle,
    cowper_kappa_solid_circle,
)
from .torsion import angle_torsion_constant, channel_torsion_constant, ishape_torsion_constant

__all__ = [
    "CATALOGUE",
    "SHAPES",
    "SectionProps",
    "angle",
    "angle_leg_moments",
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
    "shear_follows_nu",
]

def pipe(od: float, wall: float, *, nu: float = _NU) -> SectionProps:
    """Circular hollow section.

    Parameters
    ----------
    od : float
        Outside diameter, m.
    wall : float
        Wall thickness, m; less than od/2.
    nu : float, keyword-only
        Poisson's ratio for the shear coefficient (default 0.3).

    Returns
    -------
    SectionProps
        J = 2I (polar moment); W = 2I/od; shear areas kappa*A with Cowper's hollow-circle kappa.

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
    Av = cowper_kappa_hollow_circle(d / od, _poisson(nu, "pipe")) * A
    W = 2.0 * I / od
    return SectionProps("pipe", A, I, I, 2.0 * I, Av, Av, W, W)


def round_bar(d: float, *, nu: float = _NU) -> SectionProps:
    """Solid round bar of diameter d (m); J = 2I; shear areas with Cowper's solid-circle kappa
    at Poisson's ratio nu (default 0.3)."""
    d = _positive(d, "d", "round")
    A = math.pi * d**2 / 4.0
    I = math.pi * d**4 / 64.0
    Av = cowper_kappa_solid_circle(_poisson(nu, "round")) * A
    W = 2.0 * I / d
    return SectionProps("round", A, I, I, 2.0 * I, Av, Av, W, W)


def rhs(b: float, h: float, t: float, ro: float = 0.0, ri: float | None = None) -> SectionProps:
    """Rectangular hollow section, sharp or with rounded corners.

    Parameters
    ----------
    b : float
        Outside width along local y, m.
    h : float
        Outside depth along local z, m.
    t : float
        Wall thickness, m; less than min(b, h)/2.
    ro : float, optional
        Outside corner radius, m (default 0: sharp corners). Cold-formed tubes are often
        rounded with ro of 2 to 3 t, hot-finished ones with 1.5 t (check the product standard).
    ri : float, optional
        Inside corner radius, m; by default max(ro - t, 0) (concentric corners).

    Returns
    -------
    SectionProps
        A, Iy, Iz exact for the outline (outer rounded rectangle less the inner one). J by
        Bredt's thin-tube formula 4 A_m^2 t / p_m on the wall midline, whose corners have the
        mean radius (ro + ri)/2: A_m = (b - t)(h - t) - (4 - pi) r_m^2,
        p_m = 2(b - t) + 2(h - t) - 2(4 - pi) r_m (the midline form of the EN 10219-2 / EN 10210-2
        property formulas, from memory, without their small open-wall term t^3 p_m/3, which sharp
        sections never had here either). Shear areas are the wall areas parallel to the shear,
        Avz = 2 h t and Avy = 2 b t (common practice, no source; an approximation that slightly
        overstates the exact shear stiffness).
    """
    b = _positive(b, "b", "rhs")
    h = _positive(h, "h", "rhs")
    t = _positive(t, "t", "rhs")
    _less(t, "t", min(b, h) / 2.0, "min(b, h)/2", "rhs")
    ro = _non_negative(ro, "ro", "rhs")
    ri = max(ro - t, 0.0) if ri is None else _non_negative(ri, "ri", "rhs")
    bi, hi = b - 2.0 * t, h - 2.0 * t
    if ro > 0.0 or ri > 0.0:
        if ri > ro:
            raise ValueError(f"rhs: the inside corner radius ri must not exceed the outside one ro "
                             f"(got ri={ri:g} m, ro={ro:g} m)")
        if ro > min(b, h) / 2.0:
            raise ValueError(f"rhs: the outside corner radius ro must not exceed min(b, h)/2 "
                             f"(got ro={ro:g} m, min(b, h)/2={min(b, h) / 2.0:g} m)")
        if ri > min(bi, hi) / 2.0:
            raise ValueError(f"rhs: the inside corner radius ri must not exceed min(b, h)/2 - t "
                             f"(got ri={ri:g} m, min(b, h)/2 - t={min(bi, hi) / 2.0:g} m)")
        Ao, Iyo, Izo = _rounded_rect(b, h, ro)
        Ai, Iyi, Izi = _rounded_rect(bi, hi, ri)
        A, Iy, Iz = Ao - Ai, Iyo - Iyi, Izo - Izi
    else:
        A = b * h - bi * hi
        Iy = (b * h**3 - bi * hi**3) / 12.0
        Iz = (h * b**3 - hi * bi**3) / 12.0
    rm = 0.5 * (ro + ri)
    Am = (b - t) * (h - t) - (4.0 - math.pi) * rm * rm
    pm = 2.0 * ((b - t) + (h - t)) - 2.0 * (4.0 - math.pi) * rm
    J = 4.0 * Am**2 * t / pm
    return SectionProps("rhs", A, Iy, Iz, J, 2.0 * b * t, 2.0 * h * t, 2.0 * Iy / h, 2.0 * Iz / b)


def rect(b: float, h: float, *, nu: float = _NU) -> SectionProps:
    """Solid rectangle, width b along local y and depth h along local z (m).

    J by the Saint-Venant series; shear areas kappa*A with Cowper's rectangle kappa at Poisson's
    ratio nu (default 0.3).
    """
    b = _positive(b, "b", "rect")
    h = _positive(h, "h", "rect")
    A = b * h
    J = _rect_torsion(max(b, h), min(b, h))
    Av = cowper_kappa_rectangle(_poisson(nu, "rect")) * A
    return SectionProps("rect", A, b * h**3 / 12.0, h * b**3 / 12.0, J, Av, Av, b * h**2 / 6.0, h * b**2 / 6.0)


def ishape(d: float, bf: float, tf: float, tw: float, r: float = 0.0) -> SectionProps:
    """Doubly symmetric I or H section, from plates or rolled with root fillets.

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
    r : float, optional
        Root fillet radius between web and flanges, m (default 0: sharp corners, as plates).
        Flanges are parallel (no slope, no toe radius), as in IPE, HE and W shapes.

    Returns
    -------
    SectionProps
        Iy about the strong axis; A, Iy, Iz exact with the four fillets (see :func:`_fillet`);
        Wy = 2 Iy/d, Wz = 2 Iz/bf. J: without fillets the thin-wall sum
        [2 bf tf^3 + (d - 2tf) tw^3]/3; with fillets the Saint-Venant J of the outline, solved
        numerically (:func:`fem.sections.torsion.ishape_torsion_constant`, within about 1e-4),
        which also has the flange ends' loss, so J jumps by a few percent between r = 0 and a
        small r > 0. Shear areas: Avz = d tw (web, common practice),
        Avy = (5/3) bf tf, i.e. the two flanges as rectangles with kappa = 5/6 (common practice,
        approximate); the fillets are not counted in them.

    Examples
    --------
    >>> s = ishape(0.300, 0.300, 0.019, 0.011, r=0.027)   # HEB 300, EN 10365 dimensions
    >>> round(s.A * 1e4, 1), round(s.Iy * 1e8), round(s.J * 1e8)   # cm^2, cm^4, cm^4
    (149.1, 25166, 187)
    """
    return _ishape(d, bf, tf, tw, r, ishape_torsion_constant)


def _ishape(d, bf, tf, tw, r, fillet_j: Callable[..., float]) -> SectionProps:
    """:func:`ishape`, with the J of a filleted shape (r > 0) from fillet_j(d, bf, tf, tw, r)."""
    d = _positive(d, "d", "ishape")
    bf = _positive(bf, "bf", "ishape")
    tf = _positive(tf, "tf", "ishape")
    tw = _positive(tw, "tw", "ishape")
    r = _non_negative(r, "r", "ishape")
    _less(tf, "tf", d / 2.0, "d/2", "ishape")
    if tw > bf:
        raise ValueError(f"ishape: tw must not exceed bf (got tw={tw:g} m, bf={bf:g} m)")
    hw = d - 2.0 * tf
    if r > min(hw, bf - tw) / 2.0:
        raise ValueError(f"ishape: the root radius r must fit between web and flange tips and between "
                         f"the flanges, r <= min(d - 2tf, bf - tw)/2 (got r={r:g} m, "
                         f"limit {min(hw, bf - tw) / 2.0:g} m)")
    A = 2.0 * bf * tf + hw * tw
    Iy = (bf * d**3 - (bf - tw) * hw**3) / 12.0
    Iz = 2.0 * tf * bf**3 / 12.0 + hw * tw**3 / 12.0
    if r > 0.0:
        a, c, I0 = _fillet(r)
        A += 4.0 * a
        Iy += 4.0 * (I0 + a * (hw / 2.0 - c) ** 2)
        Iz += 4.0 * (I0 + a * (tw / 2.0 + c) ** 2)
        J = fillet_j(d, bf, tf, tw, r)
    else:
        J = (2.0 * bf * tf**3 + hw * tw**3) / 3.0
    return SectionProps("ishape", A, Iy, Iz, J, 5.0 / 3.0 * bf * tf, d * tw, 2.0 * Iy / d, 2.0 * Iz / bf)


def angle_leg_moments(b: float, h: float, t: float, r: float = 0.0, r2: float = 0.0):
    """Area, centroid (cy, cz) from the heel, and centroidal Iyy=int z^2, Izz=int y^2, Pyz of an
    angle (legs b along y and h along z, thickness t, root fillet r, toe radius r2; exact)."""
    return _angle_moments(b, h, t, r, r2)


def _check_angle(b, h, t, r=0.0, r2=0.0):
    b, h, t = (_positive(v, n, "angle") for v, n in ((b, "b"), (h, "h"), (t, "t")))
    _less(t, "t", min(b, h), "min(b, h)", "angle")
    r, r2 = _non_negative(r, "r", "angle"), _non_negative(r2, "r2", "angle")
    if r + r2 > min(b, h) - t:
        raise ValueError(f"angle: the root radius r and the toe radius r2 must fit along the inner faces "
                         f"of the legs, r + r2 <= min(b, h) - t (got r={r:g} m, r2={r2:g} m, "
                         f"limit {min(b, h) - t:g} m)")
    if r2 > t:
        raise ValueError(f"angle: the toe radius r2 must not exceed the thickness t (got r2={r2:g} m, t={t:g} m)")
    return b, h, t, r, r2


def angle(b: float, h: float, t: float, r: float = 0.0, r2: float = 0.0) -> SectionProps:
    """Equal or unequal leg angle on its principal axes, sharp or with root and toe radii.

    Parameters
    ----------
    b, h : float
        Leg lengths, m (leg b lies along the first leg axis, leg h along the second).
    t : float
        Thickness of both legs, m; less than min(b, h).
    r : float, optional
        Root fillet radius between the legs' inner faces, m (default 0: sharp corners).
    r2 : float, optional
        Toe radius at the inner corner of each leg's end, m (default 0: square toes); at most t,
        and r + r2 <= min(b, h) - t. EN 10056-1 angles have r2 = r/2.

    Returns
    -------
    SectionProps
        The local axes of an angle member are its principal axes: Iy = I_u (major), Iz = I_v
        (minor), from the moments and the product of inertia about the leg axes through the
        centroid, exact with the radii. See :func:`angle_principal_angle` for the orientation of
        u relative to the legs. J: without a root fillet the thin-wall (b + h - t) t^3 / 3; with
        one the Saint-Venant J of the outline (toe radii included), solved numerically
        (:func:`fem.sections.torsion.angle_torsion_constant`, within about 1e-4), so J jumps by a
        few percent between r = 0 and a small r. Wy, Wz divide I_u, I_v by the largest distance
        of the outline from the u and v axes (a corner, or a point of a toe arc). Shear areas are
        0 (rigid in shear): angle members are slender bracing for which shear deformation is
        negligible, and there is no well-established shear area on the principal axes.
    """
    b, h, t, r, r2 = _check_angle(b, h, t, r, r2)
    A, cy, cz, Iyy, Izz, Pyz = _angle_moments(b, h, t, r, r2)
    mean = 0.5 * (Iyy + Izz)
    rad = math.hypot(0.5 * (Iyy - Izz), Pyz)
    J = angle_torsion_constant(b, h, t, r, r2) if r > 0.0 else (b + h - t) * t**3 / 3.0
    theta = 0.5 * math.atan2(-Pyz, 0.5 * (Iyy - Izz))        # as in angle_principal_angle
    cu, su = math.cos(theta), math.sin(theta)
    far_v = _angle_far(b, h, t, r, r2, cy, cz, -su, cu)       # distance from the u axis
    far_u = _angle_far(b, h, t, r, r2, cy, cz, cu, su)        # distance from the v axis
    return SectionProps("angle", A, mean + rad, mean - rad, J, 0.0, 0.0, (mean + rad) / far_v, (mean - rad) / far_u)


def angle_principal_angle(b: float, h: float, t: float, r: float = 0.0, r2: float = 0.0) -> float:
    """Angle (rad) from the leg-b axis to the major principal axis u of an angle section.

    Measured positive from leg b towards leg h, in (-pi/2, pi/2]; pi/4 for an equal angle
    (the axis of symmetry). The member's local y axis is u and local z is v.
    """
    b, h, t, r, r2 = _check_angle(b, h, t, r, r2)
    _, _, _, Iyy, Izz, Pyz = _angle_moments(b, h, t, r, r2)
    # I(theta) about the axis (cos, sin) = mean + (Iyy-Izz)/2 cos 2theta - Pyz sin 2theta
    theta = 0.5 * math.atan2(-Pyz, 0.5 * (Iyy - Izz))
    return theta if theta > -math.pi / 2 else theta + math.pi


def channel(d: float, bf: float, tf: float, tw: float, r: float = 0.0) -> SectionProps:
    """Channel (C) section with parallel flanges, from plates or with root fillets.

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
    r : float, optional
        Root fillet radius between web and flanges, m (default 0: sharp corners). No flange
        slope or toe radius (a parallel-flange channel such as UPE).

    Returns
    -------
    SectionProps
        Iy about the strong axis (parallel to the flanges); Iz about the weak axis through the
        centroid; A, Iy, Iz exact with the two fillets. Wz uses the farther of the web back and
        the flange tips. J: without fillets the thin-wall sum [2 bf tf^3 + (d - 2tf) tw^3]/3;
        with fillets the Saint-Venant J of the outline, solved numerically
        (:func:`fem.sections.torsion.channel_torsion_constant`, within about 1e-4; the thin-wall
        sum is 4-14 % under the published J of UPE channels, the outline's within their printed
        figures). Shear areas as for :func:`ishape`
        (common practice): Avz = d tw, Avy = (5/3) bf tf. The offset of the shear centre from
        the centroid is not represented.
    """
    d = _positive(d, "d", "channel")
    bf = _positive(bf, "bf", "channel")
    tf = _positive(tf, "tf", "channel")
    tw = _positive(tw, "tw", "channel")
    r = _non_negative(r, "r", "channel")
    _less(tf, "tf", d / 2.0, "d/2", "channel")
    _less(tw, "tw", bf, "bf", "channel")
    hw = d - 2.0 * tf
    if r > min(hw / 2.0, bf - tw):
        raise ValueError(f"channel: the root radius r must fit between the flanges and along them, "
                         f"r <= min((d - 2tf)/2, bf - tw) (got r={r:g} m, limit {min(hw / 2.0, bf - tw):g} m)")
    A = 2.0 * bf * tf + hw * tw
    Iy = (bf * d**3 - (bf - tw) * hw**3) / 12.0
    # y measured from the back of the web; flanges span [0, bf], web [0, tw]
    Sy = 2.0 * tf * bf**2 / 2.0 + hw * tw**2 / 2.0
    Iz0 = 2.0 * tf * bf**3 / 3.0 + hw * tw**3 / 3.0          # about the web back
    if r > 0.0:
        a, c, I0 = _fillet(r)
        A += 2.0 * a
        Iy += 2.0 * (I0 + a * (hw / 2.0 - c) ** 2)
        Sy += 2.0 * a * (tw + c)
        Iz0 += 2.0 * (I0 + a * (tw + c) ** 2)
    yc = Sy / A
    Iz = Iz0 - A * yc**2
    J = channel_torsion_constant(d, bf, tf, tw, r) if r > 0.0 else (2.0 * bf * tf**3 + hw * tw**3) / 3.0
    return SectionProps("channel", A, Iy, Iz, J, 5.0 / 3.0 * bf * tf, d * tw, 2.0 * Iy / d, Iz / max(yc, bf - yc))


def generic(A: float, Iy: float, Iz: float, J: float,
            Avy: float = 0.0, Avz: float = 0.0, Wy: float = 0.0, Wz: float = 0.0, Wt: float = 0.0) -> SectionProps:
    """Section given by its properties (m^2, m^4); shear areas default to 0 (rigid in shear).
    The elastic section moduli Wy, Wz and the torsional modulus Wt (m^3, default 0: not given)
    are only needed for member stresses (fem.sections.points); Wt is kept with the dimensions."""
    _non_negative(Wt, "Wt", "generic", "torsional modulus", "m^3")
    return SectionProps(
        "generic",
        _positive(A, "A", "generic", "area", "m^2"),
        _positive(Iy, "Iy", "generic", "second moment of area", "m^4"),
        _positive(Iz, "Iz", "generic", "second moment of area", "m^4"),
        _positive(J, "J", "generic", "torsion constant", "m^4"),
        _non_negative(Avy, "Avy", "generic", "shear area", "m^2"),
        _non_negative(Avz, "Avz", "generic", "shear area", "m^2"),
        _non_negative(Wy, "Wy", "generic", "section modulus", "m^3"),
        _non_negative(Wz, "Wz", "generic", "section modulus", "m^3"),
    )


# ----------------------------------------------------------------------------- registry

SHAPES: dict[str, tuple[Callable[..., SectionProps], tuple[str, ...], tuple[str, ...]]] = {
    "pipe": (pipe, ("od", "wall"), ()),
    "round": (round_bar, ("d",), ()),
    "rhs": (rhs, ("b", "h", "t"), ("ro", "ri")),
    "rect": (rect, ("b", "h"), ()),
    "ishape": (ishape, ("d", "bf", "tf", "tw"), ("r",)),
    "angle": (angle, ("b", "h", "t"), ("r", "r2")),
    "channel": (channel, ("d", "bf", "tf", "tw"), ("r",)),
    "generic": (generic, ("A", "Iy", "Iz", "J"), ("Avy", "Avz", "Wy", "Wz", "Wt")),
}

# Shapes whose shear coefficient follows Poisson's ratio (they take the keyword nu).
_TAKES_NU = frozenset({"pipe", "round", "rect"})

# make_section's name for a section taken from the catalogue by its designation
CATALOGUE = "catalogue"


def shear_follows_nu(shape: str, params: dict) -> bool:
    """Whether the shear areas of a section (shape and parameters as for :func:`make_section`)
    follow Poisson's ratio: Cowper's coefficients of pipe, round, rect and catalogue tubes."""
    if shape == CATALOGUE:
        from .catalogue import catalogue_entry

        shape = catalogue_entry(params["designation"]).shape
    return shape in _TAKES_NU


def make_section(shape: str, params: dict, *, nu: float | None = None) -> SectionProps:
    """Build a section from a shape name and its parameters (SI), or from the catalogue.

    Parameters
    ----------
    shape : str
        One of the keys of ``SHAPES``, or ``"catalogue"`` with ``params = {"designation": ...}``
        (see :func:`fem.sections.catalogue_section`).
    params : dict
        Dimensions or properties by parameter name, m or m^2/m^4.
    nu : float, optional, keyword-only
        Poisson's ratio of the member's material, for the shear coefficients of the shapes that
        use one (pipe, round, rect and catalogue tubes); None means 0.3. Other shapes ignore it.

    Raises
    ------
    ValueError
        Unknown shape (the known ones are listed), missing or unknown parameters (the expected
        ones are listed), invalid dimensions, or an unknown designation (the nearest are named).

    Examples
    --------
    >>> make_section("rect", {"b": 0.1, "h": 0.2}).A
    0.020000000000000004
    >>> round(make_section("catalogue", {"designation": "HEB 300"}).A * 1e4, 1)   # cm^2
    149.1
    """
    if shape == CATALOGUE:
        if set(params) != {"designation"}:
            raise ValueError(f"section shape '{CATALOGUE}' takes exactly one parameter, designation "
                             f"(got {', '.join(params) or 'none'})")
        from .catalogue import catalogue_section

        return catalogue_section(params["designation"], nu=_NU if nu is None else nu)
    if shape not in SHAPES:
        raise ValueError(f"unknown section shape '{shape}'; known shapes: {', '.join(SHAPES)} "
                         f"(and '{CATALOGUE}' with a designation)")
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
    if nu is not None and shape in _TAKES_NU:
        return func(**params, nu=nu)
    return func(**params)
