"""The pieces the section shapes are built from: the properties record, dimension checks,
Cowper's shear coefficients, fillet and rounded-corner integrals and torsion formulas."""

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
