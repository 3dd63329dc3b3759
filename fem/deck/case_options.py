"""Case options: a case's located option trees and loads turned into the case the analyses read,
each rule checked where it is written."""

from __future__ import annotations

import fnmatch

import numpy as np
from lark import Token, Tree

from ..errors import DeckError, suggest
from ..limits import ROWS_LIMIT
from ..model import LoadCase, LoadItem
from . import units as U

__all__ = ["CaseOptions"]


class CaseOptions:
    """Mixed into the reader: building each case from its statement. Uses the reader's loc, value,
    vector, name, targets, once, use_scope, read_table, token_file, stack, assumed and warnings."""

    def build_case(self, c, nidx, midx) -> LoadCase:
        name, kind, items, where, assumed, scope = c
        self.assumed = assumed             # the assumes in force where the case is written
        self.use_scope(scope)              # and its parameters (in a loop, those of its pass)
        case = LoadCase(name, kind, location=where)
        seen = set()
        functions, timed = [], []     # a history case's named time functions, ground = (..) times F
        for it in items:
            if it.data == "option":
                key, val = str(it.children[0]), it.children[1]
                self.once(seen, key, self.loc(it), f"case {name}")
                if key == "gravity":
                    case.gravity = self.vector(val, U.ACCEL, f"case {name}: gravity")
                else:
                    case.options[key] = (val, self.loc(it))
                continue
            if it.data == "timed":
                key, val, fn = it.children
                if kind != "history" or str(key) != "ground":
                    raise DeckError(f"case {name}: '{key} = ... times {fn}' is not available here; a time function "
                                    "scales the loads and ground accelerations of a history case", self.loc(it))
                timed.append((val, str(fn), self.loc(fn), self.loc(it)))
                continue
            kindname, target, val, fn = it.children
            kindname = str(kindname)
            if kind == "history" and kindname in ("time", "table"):
                functions.append((kindname, self.name(target), val, self.loc(it)))
                continue
            if fn is not None and kind != "history":
                raise DeckError(f"case {name}: 'times {fn}' is for the loads of a history case; a {kind} case "
                                "has none", self.loc(fn))
            spec = {"force": (U.FORCE, nidx, "node"), "moment": (U.MOMENT, nidx, "node"),
                    "line": ((1, 0, -2), midx, "member")}
            if kind in ("history", "harmonic"):
                spec.pop("line")
                spec["line"] = ((1, 0, -2), midx, "member")
            if kind == "free":
                spec = {"displacement": (U.LENGTH, nidx, "node"), "velocity": ((0, 1, -1), nidx, "node")}
            if kindname not in spec:
                raise DeckError(f"case {name}: unknown load '{kindname}'; {suggest(kindname, spec)}", self.loc(it))
            dim, table, what = spec[kindname]
            names = self.targets(target, table, what)
            vec, axes = self.load_value(val, dim, f"case {name}: {kindname}", member=kindname == "line")
            case.loads.append(LoadItem(kindname, np.array([table[n] for n in names]), vec, self.loc(it), axes,
                                       None if fn is None else (str(fn), self.loc(fn))))
        if case.gravity is not None and kind in ("free", "harmonic"):
            raise DeckError(f"case {name}: gravity belongs to static and history cases, not to a {kind} case",
                            next(self.loc(it) for it in items if it.data == "option"
                                                 and str(it.children[0]) == "gravity"),
                            "release from the deflection under gravity with start = a static case"
                            if kind == "free" else "remove it: the sweep's loads are harmonic amplitudes")
        if kind == "modes":
            self.modes_options(case)
        elif kind == "free":
            self.free_options(case, nidx)
        elif kind == "history":
            self.history_options(case, nidx, functions, timed)
        elif kind == "harmonic":
            self.harmonic_options(case, nidx)
        elif kind == "spectrum":
            self.spectrum_options(case, nidx)
        elif kind != "static":
            raise DeckError(f"case {name}: kind '{kind}' is not available yet; use static, modes, "
                            "free, history, harmonic or spectrum", where)
        else:
            for key, (_, at) in case.options.items():
                raise DeckError(f"case {name}: unknown option '{key}' for a static case; {suggest(key, ['gravity'])}",
                                at, "a static case takes force, moment and line loads and gravity = (gx, gy, gz)")
            if not case.loads and case.gravity is None:
                raise DeckError(f"case {name}: this static case has no loads, so every result would be zero", where,
                                "give force, moment or line loads, or gravity = (0, 0, -g0)")
        return case

    def load_value(self, val, dim, what: str, member: bool) -> tuple[np.ndarray, str]:
        """A load's three components and their axes: (x, y, z) in global axes, or, for member
        loads, local(x, y, z) along the member's own x, y, z (docs/deck.md, Axes)."""
        if not (isinstance(val, Tree) and val.data == "call"):
            return self.vector(val, dim, what), "global"
        form, args = str(val.children[0]), val.children[1:]
        where = self.loc(val)
        if form != "local":
            near = suggest(form, ["local"])
            near = f"; {near}" if near.startswith("did you mean") else ""
            hint = "(x, y, z) in global axes" + (" or local(x, y, z) in member axes" if member else "")
            raise DeckError(f"{what}: '{form}(...)' is not a way to give a load{near}", where, f"write {hint}")
        if not member:
            raise DeckError(f"{what}: local(...) gives a load in a member's axes, so it applies to line "
                            "loads on members only; node loads and initial values are in global axes",
                            where, "write (x, y, z) in global axes")
        if len(args) != 3:
            raise DeckError(f"{what}: local(...) needs three values along the member's x, y and z, "
                            f"found {len(args)}", where, "e.g. local(0, 0, -2 kN/m)")
        return np.array([self.value(a, dim, what) for a in args]), "local"

    def time_function(self, key: str, val, where, what: str):
        """A time function from `time = shape(...)` or `table = "file.csv"`: (TimeFunction, the
        table's file name or None)."""
        from ..timefn import SHAPES, TimeFunction

        if key == "table":
            if not (isinstance(val, Token) and val.type == "STRING"):
                raise DeckError(f'{what} is a quoted CSV file name, e.g. table = "record.csv"', where)
            base = self.token_file.get(id(val)) or self.stack[-1]
            return TimeFunction("table", table=self.read_table(str(val)[1:-1], where, base)), str(val)[1:-1]
        if isinstance(val, Tree) and val.data == "var":
            name, args = str(val.children[0]), []
        elif isinstance(val, Tree) and val.data == "call":
            name, args = str(val.children[0]), val.children[1:]
        else:
            raise DeckError(f"{what} is a shape like halfsine(0.2 s) or step", where)
        if name not in SHAPES:
            raise DeckError(f"{what}: unknown time function '{name}'; {suggest(name, SHAPES)}", where)
        if len(args) != SHAPES[name]:
            raise DeckError(f"{what}: {name} takes {SHAPES[name]} value(s)", where)
        param = 0.0
        if args:
            dim = U.FREQ if name == "harmonic" else U.TIME
            param = self.value(args[0], dim, what)
            if param <= 0:
                raise DeckError(f"{what}: the {name} parameter must be positive", where)
        return TimeFunction(name, param), None

    def history_options(self, case: LoadCase, nidx, functions=(), timed=()) -> None:
        """Options of a time-history case: the free-case options plus time, table, ground,
        correction; `functions` the named time functions (kind, name, value, location) and
        `timed` the ground accelerations with their own function (value, name, name's location,
        location)."""
        extra = {}
        rest = {}
        tables = []                   # (function, file, location) of the tables the case reads
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            if key in ("time", "table"):
                if "time" in extra:
                    raise DeckError(f"case {case.name}: give time = ... or table = ..., not both", where,
                                    "name further functions, e.g. time KNOCK = halfsine(0.02 s), and use "
                                    "them with 'times KNOCK' after a load")
                extra["time"], rel = self.time_function(key, val, where, what)
                time_where = where
                if rel is not None:
                    tables.append((extra["time"], rel, where))
            elif key == "ground":
                extra["ground"] = self.vector(val, U.ACCEL, what)
            elif key == "correction":
                word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
                if word not in ("on", "off"):
                    raise DeckError(f"{what} is on or off", where)
                extra["correction"] = word == "on"
            else:
                rest[key] = (val, where)
        named, first = {}, {}
        for kindname, fname, val, where in functions:
            if fname in named:
                raise DeckError(f"case {case.name}: time function {fname} is defined twice; the first is at "
                                f"{first[fname]}", where)
            named[fname], rel = self.time_function(kindname, val, where, f"case {case.name}: {kindname} {fname}")
            first[fname] = where
            if rel is not None:
                tables.append((named[fname], rel, where))

        def known(fname, where, what):
            if fname not in named:
                hint = suggest(fname, named) if named else "this case names none"
                raise DeckError(f"case {case.name}: {what} follows time function '{fname}', which is not defined "
                                f"in the case; {hint}", where,
                                f"define it in the case, e.g. time {fname} = halfsine(0.05 s) or "
                                f'table {fname} = "record.csv"')
            return fname

        grounds = [(self.vector(val, U.ACCEL, f"case {case.name}: ground"), known(fname, floc, "ground"))
                   for val, fname, floc, _ in timed]
        for item in case.loads:
            if item.time is not None:
                item.time = known(*item.time, item.kind)
            elif "time" not in extra:
                raise DeckError(f"case {case.name}: this {item.kind} has no time function", item.location,
                                "add 'times NAME' after it, with NAME defined in the case (time NAME = ...), "
                                "or give the case one time = shape(...) for all such loads")
        case.options = rest
        self.free_options(case, nidx, history=True)
        case.options.update(extra)
        case.options["functions"] = named
        case.options["grounds"] = grounds
        if "ground" in extra and "time" not in extra:
            raise DeckError(f"case {case.name}: ground = ... needs the case's time = shape(...) or "
                            "table = \"file.csv\", or its own function: ground = (...) times NAME", case.location)
        if case.gravity is not None and "time" not in case.options:
            raise DeckError(f"case {case.name}: gravity follows the case's time = shape(...); give one",
                            case.location)
        if "time" not in case.options and not named:
            raise DeckError(f"case {case.name}: a history case needs time = shape(...) or table = \"file.csv\"",
                            case.location)
        if not case.loads and "ground" not in case.options and not grounds:
            raise DeckError(f"case {case.name}: give loads or a ground acceleration", case.location)
        if case.options.get("correction") and ("ground" in case.options or grounds):
            raise DeckError(f"case {case.name}: the static correction applies to force loads only",
                            case.location)
        used = {item.time for item in case.loads} | {name for _, name in grounds}
        for fname in named:
            if fname not in used:
                self.warnings.append(f"{first[fname]}: warning: case {case.name}: time function {fname} is defined "
                                     f"but no load or ground follows it; add 'times {fname}' after one, or remove it")
        self.table_step_warnings(case, tables)
        if "time" in case.options:
            named = {None: case.options["time"], **named}
            first[None] = time_where
        for fname, fn in named.items():
            self.long_function_warning(case, fn, first[fname])

    def long_function_warning(self, case: LoadCase, fn, where) -> None:
        """Warn when a pulse or a table runs past the case's duration: only its start is seen
        (often a unit slip, 30 s for 30 ms, or a duration cut short of a record)."""
        knots = fn.knots()[0]                 # a pulse's or table's last knot is its end
        if not len(knots) or knots.max() <= case.options["duration"] * (1 + 1e-9):
            return
        what = "table runs" if fn.shape == "table" else f"{fn.shape} lasts"
        self.warnings.append(f"{where}: warning: case {case.name}: the {what} to {_g(knots.max())} s, past the duration "
                             f"{_g(case.options['duration'])} s, so only its start is seen; check the units, or "
                             "lengthen the duration")

    def table_step_warnings(self, case: LoadCase, tables) -> None:
        """Warn when a history case's step is longer than the row spacing of a table it reads:
        the load is read at the steps, so the rows between them are skipped."""
        dt = case.options["step"]
        for fn, rel, where in tables:
            h = fn.spacing()
            if dt > h * (1 + 1e-9):
                self.warnings.append(
                    f"{where}: warning: case {case.name}: step {dt:.3g} s is longer than the {h:.3g} s row "
                    f"spacing of table '{rel}', so rows between steps are skipped (the load is read at the "
                    f"steps only); use step <= {h:.3g} s")

    def harmonic_options(self, case: LoadCase, nidx) -> None:
        """Options of a harmonic sweep: from, to, points, spacing, ground, correction, damping,
        rayleigh, modes, record."""
        out = {"damping": np.zeros(1), "record": None, "points": 200, "spacing": "linear"}
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if key in ("from", "to"):
                out[key] = self.value(val, U.FREQ, what)
                if out[key] <= 0:
                    raise DeckError(f"{what} must be a positive frequency", where)
            elif key == "points":
                v = self.value(val, U.NONE, what)
                if v != int(v) or not 2 <= v <= 1_000_000:
                    raise DeckError(f"{what} is a whole number from 2 to a million", where)
                out[key] = int(v)
            elif key == "spacing":
                if word not in ("linear", "log"):
                    raise DeckError(f"{what} is linear or log", where)
                out[key] = word
            elif key == "ground":
                out[key] = self.vector(val, U.ACCEL, what)
            elif key == "correction":
                if word not in ("on", "off"):
                    raise DeckError(f"{what} is on or off", where)
                out[key] = word == "on"
            elif key == "modes":
                if word is None:
                    raise DeckError(f"{what} names a modes case", where)
                out[key] = (word, where)
            elif not self.dynamic_common(case, key, val, where, out, nidx):
                known = ["from", "to", "points", "spacing", "ground", "correction", "damping",
                         "rayleigh", "modes", "record"]
                raise DeckError(f"case {case.name}: unknown option '{key}' for a harmonic case; "
                                f"{suggest(key, known)}", where)
        for key in ("from", "to"):
            if key not in out:
                raise DeckError(f"case {case.name}: a harmonic case needs {key} = ... Hz", case.location)
        if out["to"] <= out["from"]:
            raise DeckError(f"case {case.name}: 'to' must be above 'from'", case.location)
        self.table_rows(case, out["points"], "frequencies", out["record"], nidx, "fewer points")
        if not case.loads and "ground" not in out:
            raise DeckError(f"case {case.name}: give force amplitudes or a ground acceleration", case.location)
        if out.get("correction") and "ground" in out:
            raise DeckError(f"case {case.name}: the static correction applies to force loads only", case.location)
        case.options = out

    def spectrum_options(self, case: LoadCase, nidx) -> None:
        """Options of a response-spectrum case: curve or table (+ scale, made_for), directions,
        combine, spatial, missing, damping, rayleigh, modes."""
        from ..spectrum import Spectrum

        curves = {"plateau": (U.ACCEL, U.NONE, U.TIME, U.TIME, U.TIME),
                  "twoperiod": (U.ACCEL, U.ACCEL, U.TIME)}
        out = {"damping": np.array([0.05]), "record": None, "combine": "cqc", "spatial": "srss",
               "missing": False, "directions": np.array([1.0, 0.0, 0.0])}
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
                if not np.any(out[key]):
                    raise DeckError(f"{what}: at least one direction factor must be non-zero", where)
                if np.abs(out[key]).max() > 2:
                    self.warnings.append(f"{where}: warning: case {case.name}: direction factors multiply the "
                                         f"spectrum, so {_g(np.abs(out[key]).max())} scales the response "
                                         f"{_g(np.abs(out[key]).max())}-fold; for the 100/30 rule write "
                                         "directions = (1, 1, 0) with spatial = \"100/30\"")
            elif key in ("combine", "spatial"):
                if isinstance(val, Token) and val.type == "STRING":
                    word = str(val)[1:-1]
                allowed = ("cqc", "srss", "abs") if key == "combine" else ("srss", "100/30")
                if word not in allowed:
                    raise DeckError(f"{what} is one of {', '.join(allowed)} (write \"100/30\" in quotes)", where)
                out[key] = word
            elif key == "missing":
                if word not in ("on", "off"):
                    raise DeckError(f"{what} is on or off", where)
                out[key] = word == "on"
            elif key == "modes":
                if word is None:
                    raise DeckError(f"{what} names a modes case", where)
                out[key] = (word, where)
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
        if case.loads or case.gravity is not None:
            raise DeckError(f"case {case.name}: a spectrum case takes no loads", case.location)
        # a design curve is evaluated at each mode's own damping by the case; the ratio kept here
        # only draws the curve
        zeta_curve = float(out["damping"][0])
        if curve:
            if made_for is not None:
                raise DeckError(f"case {case.name}: made_for belongs to a table; a design curve is evaluated "
                                "at each mode's own damping ratio", made_for_where, "remove made_for")
            out["spectrum"] = Spectrum(curve[0], curve[1], zeta=zeta_curve)
        else:
            tab = table.copy()
            tab[:, 1] *= scale
            out["spectrum"] = Spectrum("table", table=tab, zeta=zeta_curve, made_for=made_for)
            if made_for is None:
                self.warnings.append(f"{case.location}: warning: case {case.name}: the spectrum table does not say "
                                     "the damping it was made for; it is assumed to hold for the case's damping and "
                                     "used unscaled at every mode (give made_for = ... percent to scale it per mode)")
        case.options = out

    def dynamic_common(self, case, key, val, where, out, nidx) -> bool:
        """Options every modal response case shares: damping, rayleigh, record. True if handled."""
        what = f"case {case.name}: {key}"
        if key in ("damping", "rayleigh") and {"damping", "rayleigh"} <= set(case.options):
            raise DeckError(f"case {case.name}: give damping = ... or rayleigh = ..., not both", where)
        if key == "damping":
            if isinstance(val, Tree) and val.data == "vector":
                z = np.array([self.value(c, U.NONE, what) for c in val.children])
            else:
                z = np.array([self.value(val, U.NONE, what)])
            if np.any(z < 0) or np.any(z >= 1):
                big = z[z >= 1]
                raise DeckError(f"{what}: ratios lie from 0 to below 1 (e.g. 2 percent)", where,
                                f"{_g(big[0])} is {_g(100 * big[0])} %; for {_g(big[0])} % write {_g(big[0])} percent"
                                if len(big) and big[0] < 1e300 else "")
            out["damping"] = z
        elif key == "rayleigh":
            form = "(f1, ratio1, f2, ratio2), e.g. (1 Hz, 2 percent, 10 Hz, 2 percent), or the coefficients " \
                   "(a0, a1) of C = a0 M + a1 K, e.g. (0.3 Hz, 0.002 s)"
            if not (isinstance(val, Tree) and val.data == "vector" and len(val.children) in (2, 4)):
                raise DeckError(f"{what} is {form}", where)
            c = val.children
            if len(c) == 2:
                a0, a1 = self.value(c[0], U.FREQ, what + " a0"), self.value(c[1], U.TIME, what + " a1")
                if a0 < 0 or a1 < 0 or a0 + a1 == 0:
                    raise DeckError(f"{what}: the coefficients cannot be negative and not both zero", where)
                out["rayleigh"] = (a0, a1)
            else:
                part = f"{what} (f1, ratio1, f2, ratio2)"
                f1, f2 = self.value(c[0], U.FREQ, part + ": f1"), self.value(c[2], U.FREQ, part + ": f2")
                z1, z2 = self.value(c[1], U.NONE, part + ": ratio1"), self.value(c[3], U.NONE, part + ": ratio2")
                if not (f1 > 0 and f2 > 0 and f1 != f2):
                    raise DeckError(f"{what}: two different positive frequencies are needed", where)
                if not (0 <= z1 < 1 and 0 <= z2 < 1):
                    raise DeckError(f"{what}: ratios lie from 0 to below 1 (e.g. 2 percent)", where,
                                    "write the ratios with their unit, e.g. 2 percent")
                out["rayleigh"] = (f1, z1, f2, z2)
        elif key == "record":
            if not (isinstance(val, Token) and val.type == "STRING"):
                raise DeckError(f'{what} is a quoted node name or pattern, e.g. record = "P10_*"', where)
            pat = str(val)[1:-1]
            hit = [n for n in nidx if fnmatch.fnmatchcase(n, pat)]
            if not hit:
                raise DeckError(f"{what}: '{pat}' matches no node; {suggest(pat, nidx)}", where)
            out[key] = np.array([nidx[n] for n in hit])
        else:
            return False
        return True

    def table_rows(self, case, samples: int, what: str, record, nidx, remedy: str) -> None:
        """Refuse a response table (samples x recorded nodes rows, held in memory as well) too
        large to write or hold: ROWS_LIMIT rows are about 0.7 GB of CSV."""
        nodes = len(nidx) if record is None else len(record)
        if samples * nodes > ROWS_LIMIT:
            raise DeckError(f"case {case.name}: {samples} {what} x {nodes} recorded nodes = {samples * nodes:.3g} rows "
                            f"of results, above the limit of {ROWS_LIMIT:.0e}", case.location,
                            f'record fewer nodes (record = "NAME*"), or use {remedy}')

    def free_options(self, case: LoadCase, nidx, history: bool = False) -> None:
        """Options of a free-vibration case: duration, step, damping, start, modes, record."""
        out = {"damping": np.zeros(1), "record": None}
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if key in ("duration", "step"):
                out[key] = self.value(val, U.TIME, what)
                if out[key] <= 0:
                    raise DeckError(f"{what} must be positive", where)
            elif key in ("modes",) or (key == "start" and not history):
                if word is None:
                    raise DeckError(f"{what} names a case, e.g. {key} = WIND", where)
                out[key] = (word, where)
            elif self.dynamic_common(case, key, val, where, out, nidx):
                pass
            else:
                known = ["duration", "step", "damping", "rayleigh", "modes", "record"]
                known += ["time", "table", "ground", "correction"] if history else ["start"]
                raise DeckError(f"case {case.name}: unknown option '{key}' for a {case.kind} case; "
                                f"{suggest(key, known)}", where)
        for key in ("duration", "step"):
            if key not in out:
                raise DeckError(f"case {case.name}: a {case.kind} case needs {key} = ... s", case.location)
        if out["duration"] < out["step"]:
            raise DeckError(f"case {case.name}: duration {_g(out['duration'])} s is shorter than the step "
                            f"{_g(out['step'])} s, so the {case.kind} case would hold its start only",
                            case.options["duration"][1], "check the units of duration and step")
        if out["duration"] / out["step"] > 1e6:
            raise DeckError(f"case {case.name}: more than a million time steps; use a longer step", case.location)
        self.table_rows(case, int(out["duration"] / out["step"]) + 1, "time steps", out["record"], nidx, "a longer step")
        if not history and not case.loads and "start" not in out:
            raise DeckError(f"case {case.name}: give a start (a static case) or initial displacement/velocity",
                            case.location)
        case.options = out

    def modes_options(self, case: LoadCase) -> None:
        """Turn a modes case's option trees into plain values: count, fmax (Hz), reference (m)."""
        out = {}
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            if key == "count":
                v = self.value(val, U.NONE, what)
                if v != int(v) or v < 1:
                    raise DeckError(f"{what} must be a whole number of at least 1", where)
                out[key] = int(v)
            elif key == "fmax":
                out[key] = self.value(val, U.FREQ, what)
                if out[key] <= 0:
                    raise DeckError(f"{what} must be positive", where)
            elif key == "reference":
                out[key] = self.vector(val, U.LENGTH, what)
            elif key == "target":
                out[key] = self.vector(val, U.NONE, what)
                if np.any(out[key] < 0) or np.any(out[key] > 1):
                    raise DeckError(f"{what}: fractions of the mass from 0 to 100 percent", where,
                                    "write them with their unit, e.g. target = (90 percent, 90 percent, 0)")
            elif key == "max":
                v = self.value(val, U.NONE, what)
                if v != int(v) or v < 1:
                    raise DeckError(f"{what} must be a whole number of at least 1", where)
                out[key] = int(v)
            else:
                raise DeckError(f"case {case.name}: unknown option '{key}' for modes; "
                                f"{suggest(key, ['count', 'fmax', 'reference', 'target', 'max'])}", where)
        if case.loads or case.gravity is not None:
            raise DeckError(f"case {case.name}: a modes case takes no loads", case.location)
        if "target" in out and ("count" in out or "fmax" in out):
            raise DeckError(f"case {case.name}: give a mass target or count/fmax, not both", case.location)
        out.setdefault("count", None if ("fmax" in out or "target" in out) else 12)
        case.options = out


def _g(v: float) -> str:
    return f"{v:g}"
