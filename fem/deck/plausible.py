"""Plausibility of a built model: numbers that read and solve but cannot be meant.

A unit slip (E = 210 MPa for 210 GPa, a density of 7.85 kg/m^3, coordinates in metres under
`assume length in mm`, one node at 6000 m for 6 m) gives a model that the reader accepts and
the solver solves. These checks look at the sizes of things instead: materials against the
range of structural materials, sections against the length of their members, members against
the model's typical member. Each finding is a located warning that says what was probably
meant; none refuses the deck (an unusual model may be meant). Work is on the model's arrays
(one pass over the members, vectorised) and on the locations the reader kept.

Thresholds and their origin
---------------------------
E_RANGE        0.5 GPa .. 1.2 TPa. Structural materials run from timber (softwood class C14,
               E_0,mean = 7 GPa; EN 338:2016 Table 1, from memory) through concrete (27-44 GPa;
               EN 1992-1-1:2004 Table 3.1, from memory) and aluminium alloys (70 GPa;
               EN 1999-1-1:2007 3.2.5, from memory) to steel (210 GPa; EN 1993-1-1:2005 3.2.6,
               from memory). The band is widened by our choice: down to 0.5 GPa so that plastics
               such as polyethylene pipe (about 1 GPa, common practice, no source) pass, up to
               the stiffest solid, diamond, about 1.05-1.2 TPa (common practice, no source). Any of
               those materials typed with a prefix off by 1000 (MPa for GPa) falls outside.
DENSITY_RANGE  100 .. 23 000 kg/m^3. From light timber (EN 338 C14 characteristic density
               290 kg/m^3, from memory; balsa lower, about 150, common practice) to above lead
               (11 340) and the densest element, osmium (22 590; common practice, no source),
               which covers ballast and members made heavy on purpose to carry attached mass.
               Our choice. Zero is allowed (a massless member, warned about elsewhere).
EG_RANGE       2 .. 30 for E/G. An isotropic material has E/G = 2(1 + nu), 2 to 3 for
               0 <= nu <= 0.5 (steel nu = 0.3, EN 1993-1-1 3.2.6; concrete 0.2, or 0 cracked,
               EN 1992-1-1 3.1.3; from memory); timber has E/G about 16 (EN 338: G_mean =
               E_0,mean / 16, from memory). Below 2 means a negative Poisson's ratio; far above
               16, a G typed in the wrong unit. The upper 30 is our choice.
Section size   a section whose largest outer dimension exceeds the length of its member (the
               check asked for; a beam model needs a member longer than its section is deep:
               common practice, no source). Sections given by their properties use
               2 sqrt(max(Iy, Iz) / A), a lower bound of the extent of any section (a variance
               on an interval of length d is at most d^2 / 4: Popoviciu's inequality on
               variances, 1935). The section must also be wider than SECTION_OF_MODEL = 1/2 of
               the model's size (its bounding box's largest extent): the elements of a finely
               meshed beam are shorter than its section on purpose (a deep cantilever of span 4
               depths meshed in 8 is an ordinary shear-deformation model), and a short stiff link
               is an ordinary detail; but a section half as large as the whole structure is a unit
               slip (coordinates in m read as mm make it several times the model). Our choice.
SLENDER        2000 for the ratio of a beam member's length to its section's largest dimension:
               ordinary beams and columns lie between about 5 and 40 (common practice, no
               source), so 2000 is 50 times the usual top; coordinates in mm read as metres make
               it 1000 times the true one. Truss members are not checked (rods and cables are
               slender by design), nor generic sections (their properties give only a lower
               bound of the depth; a huge A for an axially rigid member makes it tiny). Our choice.
LENGTH_OUTLIER 300: a member more than 300 times longer, or shorter, than the median member
               length. Guys of a tall mast reach about 100 times its panel height, short link
               members about 1/100 of a bay; a length off by 1000 (6000 m for 6 m) falls outside.
               Our choice.
"""

from __future__ import annotations

import math

import numpy as np

from ..model import Model
from ..notes import Note
from ..sections import CATALOGUE, catalogue_entry

__all__ = ["DENSITY_RANGE", "EG_RANGE", "E_RANGE", "LENGTH_OUTLIER", "SECTION_OF_MODEL", "SLENDER", "model_warnings",
           "section_extent"]

E_RANGE = (0.5e9, 1.2e12)            # Pa
DENSITY_RANGE = (100.0, 23_000.0)    # kg/m^3
EG_RANGE = (2.0, 30.0)
SECTION_OF_MODEL = 0.5
SLENDER = 2000.0
LENGTH_OUTLIER = 300.0
SHOWN = 5                            # members named per warning; the rest are counted

_TYPICAL_E = 40e9                    # log-middle of timber (7 GPa) and steel (210 GPa)
_TYPICAL_DENSITY = 2500.0            # log-middle of timber (about 500) and steel (7850)
_OUTER = {"pipe": ("od",), "round": ("d",), "rhs": ("b", "h"), "rect": ("b", "h"),
          "ishape": ("d", "bf"), "angle": ("b", "h"), "channel": ("d", "bf")}


def section_extent(shape: str, params: dict, props) -> tuple[float, str]:
    """Largest outer dimension of a section, m, and how it was found ('d', 'od', ... or a
    lower bound from the properties for a generic section); a catalogue section by its table's
    dimensions ('HEB 300 d')."""
    if shape == CATALOGUE:
        entry = catalogue_entry(params["designation"])
        size, how = section_extent(entry.shape, entry.dims, props)
        return size, f"{entry.designation} {how.split()[-1]}"
    keys = _OUTER.get(shape)
    if keys:
        k = max(keys, key=lambda key: params[key])
        return float(params[k]), f"{shape} {k}"
    return 2.0 * math.sqrt(max(props.Iy, props.Iz) / props.A), "at least, from 2 sqrt(I/A)"


def _size(model: Model) -> float:
    lo, hi = model.bounding_box()
    return float((hi - lo).max())


def _g(v: float) -> str:
    return f"{v:.4g}"


def _pressure(v: float) -> str:
    for unit, f in (("TPa", 1e12), ("GPa", 1e9), ("MPa", 1e6), ("kPa", 1e3)):
        if abs(v) >= f:
            return f"{_g(v / f)} {unit}"
    return f"{_g(v)} Pa"


def _length(v: float) -> str:
    if v >= 1000:
        return f"{_g(v / 1000)} km"
    return f"{_g(v)} m" if v >= 1 else f"{_g(v * 1000)} mm"


def _rescue(value: float, band: tuple, typical: float, factors) -> tuple[float, str] | None:
    """The (value, reason) among value * factor that lands in band, nearest to typical (log)."""
    fits = [(value * f, why) for f, why in factors if band[0] <= value * f <= band[1]]
    return min(fits, key=lambda c: abs(math.log(c[0] / typical)), default=None)


_THOUSANDS = [(1000.0 ** n, f"a unit prefix off by {1000 ** abs(n):g}") for n in (1, -1, 2, -2, 3, -3)]


def _materials(model: Model, defined: dict) -> list[Note]:
    used = set(model.member_material)
    out = []
    for name, mat in model.materials.items():
        if name not in used:
            continue
        where = defined.get(("material", name), (None, None))[1]
        head = f"material {name}: "
        if not E_RANGE[0] <= mat.E <= E_RANGE[1]:
            fix = _rescue(mat.E, E_RANGE, _TYPICAL_E, _THOUSANDS)
            out.append(Note(where, head + f"E = {_pressure(mat.E)} is outside the range of structural materials "
                            f"({_pressure(E_RANGE[0])} to {_pressure(E_RANGE[1])}; timber about 7-20 GPa, concrete "
                            "27-44 GPa, aluminium 70 GPa, steel 210 GPa)"
                            + (f"; did you mean {_pressure(fix[0])}?" if fix else "; check its unit")))
        if mat.density > 0 and not DENSITY_RANGE[0] <= mat.density <= DENSITY_RANGE[1]:
            g = 9.80665               # standard gravity, m/s^2
            # a prefix off by 1000 first (t/m^3 or g/cm^3 for kg/m^3), then a unit weight typed
            # as a density (78.5 kN/m^3, 77000 N/m^3)
            fix = (_rescue(mat.density, DENSITY_RANGE, _TYPICAL_DENSITY, _THOUSANDS)
                   or _rescue(mat.density, DENSITY_RANGE, _TYPICAL_DENSITY,
                              [(1 / g, "a unit weight in N/m^3 written as a density"),
                               (1000 / g, "a unit weight in kN/m^3 written as a density")]))
            out.append(Note(where, head + f"density = {_g(mat.density)} kg/m^3 is outside the range of structural materials "
                            f"({_g(DENSITY_RANGE[0])} to {_g(DENSITY_RANGE[1])} kg/m^3; timber about 350-700, concrete "
                            "2400, aluminium 2700, steel 7850)"
                            + (f"; did you mean {_g(fix[0])} kg/m^3 ({fix[1]})?" if fix else "; check its unit")))
        ratio = mat.E / mat.G
        if not EG_RANGE[0] <= ratio <= EG_RANGE[1]:
            fix = _rescue(ratio, EG_RANGE, 2.6, [(1 / f, why) for f, why in _THOUSANDS])
            nu = ratio / 2 - 1
            what = (f"means a Poisson's ratio nu = E/(2G) - 1 = {nu:.3g} below 0, which no structural material "
                    "has (steel 0.3, concrete 0.2)" if ratio < EG_RANGE[0] else
                    "is more than any structural material has (steel 2.6, timber about 16)")
            out.append(Note(where, head + f"E/G = {_g(ratio)} {what}"
                            + (f"; did you mean G = {_pressure(mat.E / fix[0])}?" if fix else "; check G or nu")))
    return out


def _members(model: Model, mem_loc: list, sections: dict, assume_length) -> list[Note]:
    """Sections against their members' length; members against the median member length."""
    e = model.n_members
    if not e:
        return []
    L = model.lengths
    names, which = np.unique(model.member_section, return_inverse=True)     # per section, not per member
    ext = {s: section_extent(*sections[s], model.sections[s].props) if s in sections
           else section_extent("generic", {}, model.sections[s].props) for s in names}
    size = np.array([ext[s][0] for s in names])[which]
    shaped = np.array([model.sections[s].props.shape in _OUTER for s in names])[which]
    whole = _size(model)
    out = []

    def report(bad, text, alike: str):
        """The first member in full; the rest named on one line."""
        if not len(bad):
            return
        k = bad[0]
        out.append(Note(mem_loc[k], f"member {model.member_names[k]}: {text(k)}"))
        if len(bad) > 1:
            names = ", ".join(model.member_names[j] for j in bad[1:1 + SHOWN])
            more = f" and {len(bad) - 1 - SHOWN} more" if len(bad) > 1 + SHOWN else ""
            out.append(Note(mem_loc[bad[1]], f"{len(bad) - 1} more members {alike}: {names}{more}"))

    slip = ""
    if assume_length is not None and assume_length[1] < 1:
        slip = (f"; if the coordinates are written in metres, '{assume_length[0]}' (at {assume_length[2]}) "
                "reads them in its unit")
    deep = np.flatnonzero((size > L) & (size > SECTION_OF_MODEL * whole))
    report(deep, lambda k: (f"its section {model.member_section[k]} is {_length(size[k])} across "
                            f"({ext[model.member_section[k]][1]}), more than the member is long "
                            f"({_length(L[k])}) and half the whole model ({_length(whole)} across): check the "
                            f"coordinates' and the section's units{slip}"), "are shorter than their sections are deep")
    typical = float(np.median(L))
    outlier = (L > LENGTH_OUTLIER * typical) | (L < typical / LENGTH_OUTLIER)
    lean = np.flatnonzero(~model.truss & shaped & (L > SLENDER * size) & ~outlier)
    report(lean, lambda k: (f"it is {_length(L[k])} long with a section {_length(size[k])} across "
                            f"({model.member_section[k]}), {_g(L[k] / size[k])} times its depth, where beams "
                            f"run 5 to 40 (warned above {SLENDER:g}): check the coordinates' units (coordinates "
                            "in mm read as metres make every member 1000 times too long; write the unit, or "
                            "'assume length in mm')"), f"are over {SLENDER:g} times longer than their sections are deep")
    far = np.flatnonzero(outlier)

    def odd(k):
        big = L[k] > typical
        near = L[k] / 1000 if big else L[k] * 1000
        guess = (f"; did you mean {_length(near)}?" if abs(math.log10(near / typical)) < 1.5 else "")
        return (f"it is {_length(L[k])} long, {_g(L[k] / typical if big else typical / L[k])} times "
                f"{'longer' if big else 'shorter'} than the model's median member ({_length(typical)}): check "
                f"the coordinates of its nodes {model.node_names[model.conn[k, 0]]} and "
                f"{model.node_names[model.conn[k, 1]]}{guess}")
    report(far, odd, f"are over {LENGTH_OUTLIER:g} times longer or shorter than the median member")
    return out


def model_warnings(model: Model, defined: dict, mem_loc: list, sections: dict,
                   assume_length=None) -> list[Note]:
    """Located plausibility warnings of a built model, as Notes.

    defined: (space, name) -> (kind, Location) as the reader keeps it (materials are located
    at their statement); mem_loc: the Location of each member's statement, in model order;
    sections: section name -> (shape, params in SI) as written; assume_length: the reader's
    (statement text, factor to m, Location) of `assume length`, or None.
    """
    return _materials(model, defined) + _members(model, mem_loc, sections, assume_length)
