"""Case options: a case's located option trees and loads mapped onto the typed cases of
fem.cases. The rules of the values are the constructors'; a rule they refuse is reported here
at the option it concerns. The rules that need the deck stay here: the form an option is written
in, node names in `record`, tables, time functions named in the case, rows of results per node."""

from __future__ import annotations

import fnmatch
from dataclasses import dataclass, field

import numpy as np
from lark import Token, Tree

from ..cases import (
    CASE_TYPES,
    BucklingCase,
    Damping,
    FreeCase,
    HistoryCase,
    LoadItem,
    ModesCase,
    RuleError,
    StaticCase,
    function_not_defined,
    no_time_function,
)
from ..errors import DeckError, Location, suggest
from ..limits import ROWS_LIMIT
from ..rules import g as _g
from . import units as U
from .excitations import resonance_names
from .limit_items import read_limit
from .load_forms import UNBALANCE, HarmonicOptions, load_forms
from .spectrum_options import SpectrumOptions

__all__ = ["CaseOptions"]


@dataclass
class _Draft:
    """A case as written, before its typed case is built: options key -> (tree, location), and
    `at` key -> location of every option (gravity too)."""

    name: str
    kind: str
    location: Location
    loads: list = field(default_factory=list)
    gravity: np.ndarray | None = None
    options: dict = field(default_factory=dict)
    at: dict = field(default_factory=dict)
    limits: list = field(default_factory=list)     # a harmonic case's VibrationLimits


class CaseOptions(HarmonicOptions, SpectrumOptions):
    """Mixed into the reader: building each case from its statement. Uses the reader's loc, value,
    vector, name, targets, once, use_scope, read_table, token_file, stack, assumed, note, cases, references, defs."""

    def build_case(self, c, nidx, midx):
        """The typed case (fem.cases) of a case statement; `self.references[name]` keeps the
        names a response case gives for its modes case and start, with their locations."""
        name, kind, items, where, assumed, scope = c
        self.assumed = assumed             # the assumes in force where the case is written
        self.use_scope(scope)              # and its parameters (in a loop, those of its pass)
        case = _Draft(name, kind, where)
        seen = set()
        functions, timed = [], []     # a history case's named time functions, ground = (..) times F
        for it in items:
            if it.data == "option":
                key, val = str(it.children[0]), it.children[1]
                self.once(seen, key, self.loc(it), f"case {name}")
                case.at[key] = self.loc(it)
                if key == "gravity":
                    case.gravity = self.vector(val, U.ACCEL, f"case {name}: gravity")
                else:
                    case.options[key] = (val, self.loc(it))
                continue
            if it.data == "limit":
                case.limits.append(read_limit(self, name, kind, it, nidx))
                continue
            if it.data == "timed":
                key, val, fn = it.children
                if kind != "history" or str(key) != "ground":
                    raise DeckError(f"case {name}: '{key} = ... times {fn}' is not available here; a time function "
                                    "scales the loads and ground accelerations of a history case", self.loc(it))
                timed.append((val, str(fn), self.loc(fn), self.loc(it)))
                continue
            kindname, target, val, fn, *extra = it.children
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
            spec.update({"unbalance": (UNBALANCE, nidx, "node")} if kind == "harmonic" else {})
            if kind == "free":
                spec = {"displacement": (U.LENGTH, nidx, "node"), "velocity": ((0, 1, -1), nidx, "node")}
            if kindname not in spec:
                raise DeckError(f"case {name}: unknown load '{kindname}'; {suggest(kindname, spec)}", self.loc(it))
            dim, table, what = spec[kindname]
            names = self.targets(target, table, what)
            forms = load_forms(self, name, kind, kindname, val, extra, self.loc(it))
            vec, axes = (forms.pop("vector"), "global") if "vector" in forms else \
                self.load_value(val, dim, f"case {name}: {kindname}", member=kindname == "line")
            case.loads.append(LoadItem(kindname, np.array([table[n] for n in names]), vec, self.loc(it), axes,
                                       None if fn is None else (str(fn), self.loc(fn)), **forms))
        if kind not in CASE_TYPES:
            raise DeckError(f"case {name}: kind '{kind}' is not available yet; use static, modes, "
                            "free, history, harmonic or spectrum", where)
        if kind == "history":
            return self.history_options(case, nidx, functions, timed)
        return {"static": self.static_options, "modes": self.modes_options, "free": self.free_options,
                "harmonic": self.harmonic_options, "spectrum": self.spectrum_options,
                "buckling": self.buckling_options}[kind](case, nidx)

    def typed(self, case: _Draft, cls, **fields):
        """`cls` built from the draft's name, loads, gravity and location and `fields`; a rule it
        refuses becomes a DeckError at the first option the rule concerns that the deck writes
        (else at the case), with the same text and hint."""
        try:
            return cls(name=case.name, loads=tuple(case.loads), gravity=case.gravity, location=case.location,
                       **fields)
        except RuleError as exc:
            raise self.located(case, exc) from None

    def located(self, case: _Draft, exc: RuleError, prefix: str = "") -> DeckError:
        where = next((at for key, at in case.at.items() if key in exc.options), case.location)
        return DeckError(prefix + exc.message, where, exc.hint)

    def static_options(self, case: _Draft, nidx) -> StaticCase:
        for key, (_, at) in case.options.items():
            raise DeckError(f"case {case.name}: unknown option '{key}' for a static case; {suggest(key, ['gravity'])}",
                            at, "a static case takes force, moment and line loads and gravity = (gx, gy, gz)")
        return self.typed(case, StaticCase)

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

    def history_options(self, case: _Draft, nidx, functions=(), timed=()) -> HistoryCase:
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
                message, hint = function_not_defined(case.name, what, fname, named)
                raise DeckError(message, where, hint)
            return fname

        grounds = [(self.vector(val, U.ACCEL, f"case {case.name}: ground"), known(fname, floc, "ground"))
                   for val, fname, floc, _ in timed]
        for item in case.loads:
            if item.time is not None:
                item.time = known(*item.time, item.kind)
            elif "time" not in extra:
                message, hint = no_time_function(case.name, item.kind)
                raise DeckError(message, item.location, hint)
        out = self.timed_options(case, rest, nidx, history=True)
        out = self.typed(case, HistoryCase, **out, **extra, functions=named, grounds=tuple(grounds))
        self.table_rows(out, out.steps, "time steps", out.record, nidx, "a longer step")
        used = {item.time for item in out.loads} | {name for _, name in grounds}
        for fname in named:
            if fname not in used:
                self.note(first[fname], f"case {case.name}: time function {fname} is defined "
                                     f"but no load or ground follows it; add 'times {fname}' after one, or remove it")
        self.table_step_warnings(out, tables)
        if out.time is not None:
            named = {None: out.time, **named}
            first[None] = time_where
        for fname, fn in named.items():
            self.long_function_warning(out, fn, first[fname])
        return out

    def long_function_warning(self, case: HistoryCase, fn, where) -> None:
        """Warn when a pulse or a table runs past the case's duration: only its start is seen
        (often a unit slip, 30 s for 30 ms, or a duration cut short of a record)."""
        knots = fn.knots()[0]                 # a pulse's or table's last knot is its end
        if not len(knots) or knots.max() <= case.duration * (1 + 1e-9):
            return
        what = "table runs" if fn.shape == "table" else f"{fn.shape} lasts"
        self.note(where, f"case {case.name}: the {what} to {_g(knots.max())} s, past the duration "
                             f"{_g(case.duration)} s, so only its start is seen; check the units, or "
                             "lengthen the duration")

    def table_step_warnings(self, case: HistoryCase, tables) -> None:
        """Warn when a history case's step is longer than the row spacing of a table it reads:
        the load is read at the steps, so the rows between them are skipped."""
        dt = case.step
        for fn, rel, where in tables:
            h = fn.spacing()
            if dt > h * (1 + 1e-9):
                self.note(where, f"case {case.name}: step {dt:.3g} s is longer than the {h:.3g} s row "
                    f"spacing of table '{rel}', so rows between steps are skipped (the load is read at the "
                    f"steps only); use step <= {h:.3g} s")

    def dynamic_common(self, case, key, val, where, out, nidx) -> bool:
        """Options every modal response case shares: damping, rayleigh, modes, record. True if
        handled; the values go to `out` (damping as "zeta", rayleigh as "rayleigh" (a0, a1) or
        "anchors" (f1, z1, f2, z2), modes as (name, location))."""
        what = f"case {case.name}: {key}"
        if key == "damping":
            if isinstance(val, Tree) and val.data == "vector":
                out["zeta"] = np.array([self.value(c, U.NONE, what) for c in val.children])
            else:
                out["zeta"] = np.array([self.value(val, U.NONE, what)])
        elif key == "rayleigh":
            form = "(f1, ratio1, f2, ratio2), e.g. (1 Hz, 2 percent, 10 Hz, 2 percent), or the coefficients " \
                   "(a0, a1) of C = a0 M + a1 K, e.g. (0.3 Hz, 0.002 s)"
            if not (isinstance(val, Tree) and val.data == "vector" and len(val.children) in (2, 4)):
                raise DeckError(f"{what} is {form}", where)
            c = val.children
            if len(c) == 2:
                out["rayleigh"] = (self.value(c[0], U.FREQ, what + " a0"), self.value(c[1], U.TIME, what + " a1"))
            else:
                part = f"{what} (f1, ratio1, f2, ratio2)"
                f1, f2 = self.value(c[0], U.FREQ, part + ": f1"), self.value(c[2], U.FREQ, part + ": f2")
                z1, z2 = self.value(c[1], U.NONE, part + ": ratio1"), self.value(c[3], U.NONE, part + ": ratio2")
                out["anchors"] = (f1, z1, f2, z2)
        elif key == "modes":
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if word is None:
                raise DeckError(f"{what} names a modes case", where)
            out[key] = (word, where)
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

    def response_fields(self, case: _Draft, out: dict) -> dict:
        """`out` of dynamic_common with the damping built (a rule it breaks located at its
        option) and the modes case named: the one given, else the deck's first modes case ("" when
        there is none, which build() refuses); the names given for modes and start are kept in
        self.references with their locations for build() to check."""
        damping = {k: out.pop(k) for k in ("zeta", "rayleigh", "anchors") if k in out}
        if damping:
            try:
                out["damping"] = Damping(**damping)
            except RuleError as exc:
                raise self.located(case, exc, f"case {case.name}: ") from None
        mref, start = out.pop("modes", None), out.get("start")
        self.references[case.name] = (start, mref)
        if start is not None:
            out["start"] = start[0]
        out["modes"] = mref[0] if mref else next((n for n, k, *_ in self.cases if k == "modes"), "")
        return out

    def table_rows(self, case, samples: int, what: str, record, nidx, remedy: str) -> None:
        """Refuse a response table (samples x recorded nodes rows, held in memory as well) too
        large to write or hold: ROWS_LIMIT rows are about 0.7 GB of CSV."""
        nodes = len(nidx) if record is None else len(record)
        if samples * nodes > ROWS_LIMIT:
            raise DeckError(f"case {case.name}: {samples} {what} x {nodes} recorded nodes = {samples * nodes:.3g} rows "
                            f"of results, above the limit of {ROWS_LIMIT:.0e}", case.location,
                            f'record fewer nodes (record = "NAME*"), or use {remedy}')

    def timed_options(self, case: _Draft, options: dict, nidx, history: bool = False) -> dict:
        """The fields of the options a free and a history case share: duration, step, damping,
        rayleigh, modes, record, and a free case's start."""
        out = {}
        for key, (val, where) in options.items():
            what = f"case {case.name}: {key}"
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            if key in ("duration", "step"):
                out[key] = self.value(val, U.TIME, what)
            elif key == "start" and not history:
                if word is None:
                    raise DeckError(f"{what} names a case, e.g. {key} = WIND", where)
                out[key] = (word, where)
            elif key == "modes" and word is None:
                raise DeckError(f"{what} names a case, e.g. {key} = WIND", where)
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
        return self.response_fields(case, out)

    def free_options(self, case: _Draft, nidx) -> FreeCase:
        """Options of a free-vibration case: duration, step, damping, start, modes, record."""
        out = self.typed(case, FreeCase, **self.timed_options(case, case.options, nidx))
        self.table_rows(out, out.steps, "time steps", out.record, nidx, "a longer step")
        return out

    def modes_options(self, case: _Draft, nidx) -> ModesCase:
        """A modes case's option trees as values: count, fmax (Hz), reference (m), target, max,
        sensitivity, sensitivity_rows."""
        out = {}
        for key, (val, where) in case.options.items():
            what = f"case {case.name}: {key}"
            if key in ("count", "max"):
                out["max_count" if key == "max" else key] = self.value(val, U.NONE, what)
            elif key == "fmax":
                out[key] = self.value(val, U.FREQ, what)
            elif key == "reference":
                out[key] = self.vector(val, U.LENGTH, what)
            elif key == "target":
                out[key] = self.vector(val, U.NONE, what)
            elif key == "sensitivity":
                out[key] = self.sensitivity_grouping(case.name, val, where)
            elif key == "sensitivity_rows":
                out[key] = self.value(val, U.NONE, what)
            elif key == "resonance":
                out[key] = resonance_names(val, where, case.name, [e.name for e, *_ in self.defs.excitations], self.loc)
            elif key == "preload":
                out[key] = self.static_reference(case.name, key, val, where)
            else:
                known = ['count', 'fmax', 'reference', 'target', 'max', 'sensitivity', 'sensitivity_rows', 'resonance',
                         'preload']
                raise DeckError(f"case {case.name}: unknown option '{key}' for modes; {suggest(key, known)}", where)
        if "sensitivity_rows" in out and out.get("sensitivity") is None:
            self.note(case.at["sensitivity_rows"], f"case {case.name}: sensitivity_rows does nothing without sensitivity")
        return self.typed(case, ModesCase, **out)

    def static_reference(self, name: str, key: str, val, where) -> str:
        """The static case (or combination) named by option `key` of case `name`; kept in
        self.references[(name, key)] with its location for build() to check."""
        word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
        if word is None:
            raise DeckError(f"case {name}: {key} names a static case, e.g. {key} = HEAD", where)
        self.references[(name, key)] = (word, where)
        return word

    def buckling_options(self, case: _Draft, nidx) -> BucklingCase:
        """A buckling case's options: loading (a static case), count."""
        out = {}
        for key, (val, where) in case.options.items():
            if key == "loading":
                out[key] = self.static_reference(case.name, key, val, where)
            elif key == "count":
                out[key] = self.value(val, U.NONE, f"case {case.name}: count")
            else:
                raise DeckError(f"case {case.name}: unknown option '{key}' for a buckling case; "
                                f"{suggest(key, ['loading', 'count'])}", where)
        if "loading" not in out:
            raise DeckError(f"case {case.name}: a buckling case needs loading = NAME, the static case whose loads "
                            "are scaled", case.location, "e.g. loading = HEAD")
        return self.typed(case, BucklingCase, **out)

    def sensitivity_grouping(self, name: str, val, where) -> str | None:
        """`sensitivity = WORD` of a modes case: how members are grouped (None: off)."""
        words = ("members", "sections", "materials", "groups", "off")
        word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
        if word is None:
            raise DeckError(f"case {name}: sensitivity is one of the words {', '.join(words)}", where,
                            "e.g. sensitivity = sections (one row per section for each mode)")
        if word not in words:
            raise DeckError(f"case {name}: sensitivity '{word}' is not a way to group members; "
                            f"{suggest(word, words)}", where, "use one of " + ", ".join(words))
        if word == "groups" and not any(m in self.defs.members for g in self.defs.groups.values() for m in g):
            raise DeckError(f"case {name}: sensitivity = groups, but the deck defines no group that holds members",
                            where, "define one, e.g. group COLUMNS = C*, or use sensitivity = sections")
        return None if word == "off" else word
