"""Standard rolled and hollow sections by designation.

Each family is a CSV table in ``fem/sections/data`` holding, per row, the dimensions and the
published properties, in the units of its source; the comment lines at the top of each file name
the product standard and the source of its numbers. Sections are built from the dimensions by the
shape functions of :mod:`fem.sections.shapes` (with root fillets and corner radii), so a
catalogue section is exactly the section a user would get by typing its dimensions; the
published properties are kept beside them for the checks in tests/test_sections_catalogue.py.

Families (table files in fem/sections/data; each header names the standard and the source):

- IPE, e.g. ``IPE 300``: en10365_ipe.csv (EN 10365)
- HEB, e.g. ``HEB 300`` or ``HE 300 B``: en10365_heb.csv (EN 10365)
- W, e.g. ``W14X90``: aisc_w.csv (ASTM A6; AISC Shapes Database v15.0)
- square and rectangular HSS, e.g. ``HSS4X4X1/4``: aisc_hss_rect.csv (ASTM A500; AISC v15.0)
- round HSS and pipe, e.g. ``HSS4X.250``, ``Pipe6SCH40``: aisc_round.csv (ASTM A500,
  ASME B36.10M; AISC v15.0)
- equal angles, e.g. ``L4X4X1/2``: aisc_l_equal.csv (ASTM A6; AISC v15.0)
- equal angles with root and toe radii, e.g. ``L 100x100x10``: en10056_l_equal.csv (EN 10056-1)

Designations are matched without regard to case or spaces ("heb300", "HEB 300", "W14x90");
"HE 300 B" is read as "HEB 300".
"""

from __future__ import annotations

import csv
import functools
import re
from collections.abc import Callable
from dataclasses import dataclass
from importlib import resources
from types import MappingProxyType

from ..errors import suggest
from .formulas import _el_darwish_johnston
from .shapes import _NU, SectionProps, _ishape, make_section

__all__ = ["CatalogueEntry", "catalogue_designations", "catalogue_entry", "catalogue_section"]

IN = 0.0254   # m in one inch (exact by definition)
CM = 0.01


@dataclass(frozen=True)
class CatalogueEntry:
    """One row of a section table.

    Attributes
    ----------
    designation : str
        As printed in the table, e.g. ``"HEB 300"``.
    family : str
        ``"IPE"``, ``"HEB"``, ``"W"``, ``"HSS rectangular"``, ``"HSS round / pipe"`` or ``"L equal"``.
    standard : str
        Product standard of the dimensions.
    table : str
        File name of the table in fem/sections/data (its header names the source).
    shape : str
        The ``make_section`` shape the section is built with.
    dims : mapping of str to float (read-only)
        Parameters of that shape, SI (m).
    published : mapping of str to float (read-only)
        Published properties, SI: A (m^2), Iy, Iz, J (m^4), Wy, Wz (m^3) where the table gives
        them, on the member axes of ``shape`` (Iy strong axis; angles: principal axes), and for
        angles I_leg, W_leg about an axis parallel to a leg.
    """

    designation: str
    family: str
    standard: str
    table: str
    shape: str
    dims: dict
    published: dict


@dataclass(frozen=True)
class _Family:
    name: str
    table: str
    standard: str
    build: Callable[[dict], tuple[str, dict, dict]]   # row (floats) -> shape, dims, published


def _european_i(row):
    mm = {k: row[k] * CM for k in ("h", "b", "tw", "tf", "r")}
    dims = {"d": mm["h"], "bf": mm["b"], "tf": mm["tf"], "tw": mm["tw"], "r": mm["r"]}
    pub = {"A": row["A"] * CM**2, "Iy": row["Iy"] * CM**4, "Iz": row["Iz"] * CM**4,
           "Wy": row["Wely"] * CM**3, "Wz": row["Welz"] * CM**3, "J": row["It"] * CM**4}
    return "ishape", dims, pub


def _w_shape(row):
    dims = {"d": row["d"] * IN, "bf": row["bf"] * IN, "tf": row["tf"] * IN, "tw": row["tw"] * IN,
            "r": (row["kdes"] - row["tf"]) * IN}
    pub = {"A": row["A"] * IN**2, "Iy": row["Ix"] * IN**4, "Iz": row["Iy"] * IN**4,
           "Wy": row["Sx"] * IN**3, "Wz": row["Sy"] * IN**3, "J": row["J"] * IN**4}
    return "ishape", dims, pub


def _hss_rect(row):
    # AISC's property basis: design wall tdes, outside corner radius 2 tdes, inside tdes
    t = row["tdes"] * IN
    dims = {"b": row["B"] * IN, "h": row["Ht"] * IN, "t": t, "ro": 2.0 * t, "ri": t}
    pub = {"A": row["A"] * IN**2, "Iy": row["Ix"] * IN**4, "Iz": row["Iy"] * IN**4,
           "Wy": row["Sx"] * IN**3, "Wz": row["Sy"] * IN**3, "J": row["J"] * IN**4}
    return "rhs", dims, pub


def _round(row):
    dims = {"od": row["OD"] * IN, "wall": row["tdes"] * IN}
    pub = {"A": row["A"] * IN**2, "Iy": row["I"] * IN**4, "Iz": row["I"] * IN**4,
           "Wy": row["S"] * IN**3, "Wz": row["S"] * IN**3, "J": row["J"] * IN**4}
    return "pipe", dims, pub


def _en_equal_angle(row):
    mm = 0.001
    dims = {"b": row["b"] * mm, "h": row["b"] * mm, "t": row["t"] * mm, "r": row["r1"] * mm, "r2": row["r2"] * mm}
    pub = {"A": row["A"] * CM**2, "Iy": row["Iu"] * CM**4, "Iz": row["Iv"] * CM**4, "J": row["It"] * CM**4,
           "I_leg": row["Iy"] * CM**4, "W_leg": row["Wy"] * CM**3}
    return "angle", dims, pub


def _equal_angle(row):
    dims = {"b": row["b"] * IN, "h": row["b"] * IN, "t": row["t"] * IN, "r": (row["kdes"] - row["t"]) * IN}
    pub = {"A": row["A"] * IN**2, "Iy": row["Iw"] * IN**4, "Iz": row["Iz"] * IN**4,
           "J": row["J"] * IN**4, "I_leg": row["Ix"] * IN**4, "W_leg": row["Sx"] * IN**3}
    return "angle", dims, pub


_FAMILIES = (
    _Family("IPE", "en10365_ipe.csv", "EN 10365", _european_i),
    _Family("HEB", "en10365_heb.csv", "EN 10365", _european_i),
    _Family("W", "aisc_w.csv", "ASTM A6/A6M", _w_shape),
    _Family("HSS rectangular", "aisc_hss_rect.csv", "ASTM A500", _hss_rect),
    _Family("HSS round / pipe", "aisc_round.csv", "ASTM A500 (HSS), ASME B36.10M (pipe)", _round),
    _Family("L equal", "aisc_l_equal.csv", "ASTM A6/A6M", _equal_angle),
    _Family("L equal EN", "en10056_l_equal.csv", "EN 10056-1", _en_equal_angle),
)


def _key(designation: str) -> str:
    """Matching key: upper case without spaces; 'HE300B' -> 'HEB300'."""
    k = re.sub(r"\s+", "", designation).upper()
    m = re.fullmatch(r"HE(\d+)([ABM])", k)
    return f"HE{m.group(2)}{m.group(1)}" if m else k


def _read(family: _Family) -> list[CatalogueEntry]:
    text = resources.files("fem.sections").joinpath("data", family.table).read_text(encoding="utf-8")
    lines = [ln for ln in text.splitlines() if ln.strip() and not ln.startswith("#")]
    out = []
    for rec in csv.DictReader(lines):
        name = rec.pop("designation")
        shape, dims, pub = family.build({k: float(v) for k, v in rec.items()})
        out.append(CatalogueEntry(name, family.name, family.standard, family.table, shape,
                                  MappingProxyType(dims), MappingProxyType(pub)))
    return out


@functools.cache
def _index() -> dict[str, CatalogueEntry]:
    index = {}
    for family in _FAMILIES:
        for entry in _read(family):
            key = _key(entry.designation)
            assert key not in index, f"designation {entry.designation} is listed twice"
            index[key] = entry
    return index


def _series(key: str) -> str:
    """The letters a matching key starts with: 'HEB300' -> 'HEB', 'HSS4X4X1/4' -> 'HSS'."""
    return re.match(r"[A-Z]*", key).group(0)


def catalogue_designations(family: str | None = None) -> list[str]:
    """Designations in the catalogue, as printed, in table order (one family or all)."""
    return [e.designation for e in _index().values() if family is None or e.family == family]


def catalogue_entry(designation: str) -> CatalogueEntry:
    """The table row of a designation (dimensions, published properties, source).

    Raises
    ------
    ValueError
        Unknown designation, with the nearest ones.
    """
    if not isinstance(designation, str):
        raise ValueError(f"a section designation must be text such as 'HEB 300', got {designation!r}")
    index = _index()
    key = _key(designation)
    if key in index:
        return index[key]
    printed = {k: e.designation for k, e in index.items()}
    m = re.fullmatch(r"([A-Z]+)(\d+)", key)
    same = [k for k in index if m and re.fullmatch(m.group(1) + r"\d+", k)]
    if _series(key) not in {_series(k) for k in index}:    # "HEA 300", "UPN 200": a family we lack
        near = "families: " + ", ".join(f.name for f in _FAMILIES)
    elif same:    # "IPE 290": the sizes of that series nearest in number
        same.sort(key=lambda k: abs(int(k[len(m.group(1)):]) - int(m.group(2))))
        near = "did you mean " + " or ".join(f"'{printed[k]}'" for k in same[:3]) + "?"
    else:
        near = suggest(key, index)
        if near.startswith("did you mean"):
            near = re.sub(r"'([^']*)'", lambda m: f"'{printed.get(m.group(1), m.group(1))}'", near)
        else:
            near = "families: " + ", ".join(f.name for f in _FAMILIES)
    raise ValueError(f"unknown section designation '{designation}'; {near}")


def catalogue_section(designation: str, *, nu: float = _NU) -> SectionProps:
    """Section properties of a standard section, built from its tabulated dimensions.

    Parameters
    ----------
    designation : str
        E.g. ``"HEB 300"``, ``"IPE 300"``, ``"W14X90"``, ``"HSS4X4X1/4"``, ``"Pipe6SCH40"``,
        ``"L4X4X1/2"``; case and spaces do not matter.
    nu : float, keyword-only
        Poisson's ratio for the shear coefficient of round tubes (default 0.3).

    Returns
    -------
    SectionProps
        With the ``shape`` of the family's builder (``ishape``, ``rhs``, ``pipe``, ``angle``),
        exactly what that shape gives for the table's dimensions, except the J of W shapes:
        El Darwish & Johnston's closed form, which the AISC table's J follows (the Saint-Venant J
        of the modelled outline is up to 1.1 % from it; docs/sections.md).

    Raises
    ------
    ValueError
        Unknown designation; the message names the nearest ones.

    Examples
    --------
    >>> s = catalogue_section("heb300")
    >>> round(s.Iy * 1e8), round(s.J * 1e8, 1)        # cm^4
    (25166, 187.4)
    """
    entry = catalogue_entry(designation)
    if entry.family == "W":     # J on the AISC table's own basis, the closed form (docs/sections.md)
        return _ishape(**entry.dims, fillet_j=_el_darwish_johnston)
    return make_section(entry.shape, entry.dims, nu=nu)
