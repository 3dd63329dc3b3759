"""The options of a response-spectrum case: a design curve or a table of the spectrum (with its
scale and the damping it was made for), directions, the combination rules and the missing-mass
term, turned into a `SpectrumCase`."""

from __future__ import annotations

import numpy as np
from lark import Token, Tree

from ..cases import SPECTRUM_DAMPING, SpectrumCase
from ..errors import DeckError, suggest
from ..rules import g as _g
from ..spectrum import Spectrum
from . import units as U

__all__ = ["SpectrumOptions"]


class SpectrumOptions:
    """Mixed into the case options (fem/deck/case_options.py): uses their value, vector,
    read_table, note, dynamic_common, response_fields and typed."""

    def spectrum_options(self, case, nidx) -> SpectrumCase:
        """Options of a response-spectrum case: curve or table (+ scale, made_for), directions,
        combine, spatial, missing, damping, rayleigh, modes."""
        curves = {"plateau": (U.ACCEL, U.NONE, U.TIME, U.TIME, U.TIME),
                  "twoperiod": (U.ACCEL, U.ACCEL, U.TIME)}
        out = {}
        curve = table = None
        scale, made_for, made_for_where = 9.80665, None, None
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if key == "curve":
                if not (isinstance(val, Tree) and val.data == "call"):
                    raise DeckError(f"{what} is plateau(a_g, S, T_B, T_C, T_D) or twoperiod(S_DS, S_D1, T_L)", where)
                name, args = str(val.children[0]), val.children[1:]
                if name not in curves:
                    raise DeckError(f"{what}: unknown design curve '{name}'; {suggest(name, curves)}", where)
                if len(args) != len(curves[name]):
                    raise DeckError(f"{what}: {name} takes {len(curves[name])} values", where)
                params = tuple(self.value(a, d, what) for a, d in zip(args, curves[name]))
                if any(p <= 0 for p in params):
                    raise DeckError(f"{what}: every parameter must be positive", where)
                curve = (name, params)
            elif key == "table":
                if not (isinstance(val, Token) and val.type == "STRING"):
                    raise DeckError(f'{what} is a quoted CSV file name (period s, S_a)', where)
                base = self.token_file.get(id(val)) or self.stack[-1]
                table = self.read_table(str(val)[1:-1], where, base)
                if table[0, 0] < 0 or np.any(table[:, 1] < 0):
                    raise DeckError(f"{what}: periods and accelerations cannot be negative", where)
            elif key == "scale":
                scale = self.value(val, U.ACCEL, what)
                if scale <= 0:
                    raise DeckError(f"{what} must be a positive acceleration (e.g. 1 gee)", where)
            elif key == "made_for":
                made_for = self.value(val, U.NONE, what)
                if not 0 <= made_for < 1:
                    raise DeckError(f"{what}: a damping ratio from 0 to below 1 (e.g. 5 percent)", where)
                made_for_where = where
            elif key == "directions":
                out[key] = self.vector(val, U.NONE, what)
                if np.any(out[key]) and np.abs(out[key]).max() > 2:
                    self.note(where, f"case {case.name}: direction factors multiply the "
                                         f"spectrum, so {_g(np.abs(out[key]).max())} scales the response "
                                         f"{_g(np.abs(out[key]).max())}-fold; for the 100/30 rule write "
                                         "directions = (1, 1, 0) with spatial = \"100/30\"")
            elif key in ("combine", "spatial"):
                if isinstance(val, Token) and val.type == "STRING":
                    word = str(val)[1:-1]
                out[key] = word
            elif key == "missing":
                if word not in ("on", "off"):
                    raise DeckError(f"{what} is on or off", where)
                out[key] = word == "on"
            elif key == "record":
                raise DeckError(f"case {case.name}: a spectrum case has no histories to record; its peaks at "
                                "every node go to the displacement, reaction and end-force tables", where,
                                "remove record")
            elif not self.dynamic_common(case, key, val, where, out, nidx):
                known = ["curve", "table", "scale", "made_for", "directions", "combine", "spatial",
                         "missing", "damping", "rayleigh", "modes"]
                raise DeckError(f"case {case.name}: unknown option '{key}' for a spectrum case; "
                                f"{suggest(key, known)}", where)
        if (curve is None) == (table is None):
            raise DeckError(f"case {case.name}: give either curve = ... or table = \"file.csv\"", case.location)
        out = self.response_fields(case, out)
        # a design curve is evaluated at each mode's own damping by the case; the ratio kept here
        # only draws the curve
        damping = out.get("damping")
        zeta_curve = SPECTRUM_DAMPING if damping is None or damping.zeta is None else float(damping.zeta[0])
        if curve:
            if made_for is not None:
                raise DeckError(f"case {case.name}: made_for belongs to a table; a design curve is evaluated "
                                "at each mode's own damping ratio", made_for_where, "remove made_for")
            spectrum = Spectrum(curve[0], curve[1], zeta=zeta_curve)
        else:
            tab = table.copy()
            tab[:, 1] *= scale
            spectrum = Spectrum("table", table=tab, zeta=zeta_curve, made_for=made_for)
        out = self.typed(case, SpectrumCase, spectrum=spectrum, **out)
        if table is not None and made_for is None:
            self.note(case.location, f"case {case.name}: the spectrum table does not say "
                                 "the damping it was made for; it is assumed to hold for the case's damping and "
                                 "used unscaled at every mode (give made_for = ... percent to scale it per mode)")
        return out
