"""Load cases as typed, frozen definitions: one class per kind of analysis and one for damping.

Every option of a case is a field with its default here, and every rule that needs no deck text
(positive durations, a step within the duration, ratios from 0 to below 1, a sweep's 'to' above
its 'from', ...) is checked on construction, so a case built in Python obeys the same rules as
one read from a deck, and ``dataclasses.replace(case, points=400)`` checks them again. A broken
rule raises `RuleError` (a ValueError); the deck reader adds the location of the option it
concerns. Rules that need the deck (node names in `record`, tables, which case a name refers to)
stay in the reader.

Units are SI: s, Hz, m/s^2; damping as ratios (0.02, not 2 %). Fields holding arrays make
the types unhashable; equality compares every field but `location` value by value.

::

    StaticCase      loads and gravity, solved with K
    ModesCase       count / fmax / target: the modes the response cases use
    FreeCase        release from a static case and/or initial displacement and velocity
    HistoryCase     loads and ground acceleration times time functions
    HarmonicCase    a frequency sweep of harmonic loads or ground acceleration
    SpectrumCase    peaks from a response spectrum
    BucklingCase    the lowest linear buckling load factors of a static case's loads

Examples
--------
>>> from dataclasses import replace
>>> modes = ModesCase(name="MODES", fmax=40.0)
>>> modes.n_modes is None             # every mode up to 40 Hz
True
>>> ModesCase(name="MODES").n_modes   # neither count, fmax nor target: the default count
12
>>> sweep = HarmonicCase(name="SWEEP", modes="MODES", fmin=2.0, fmax=30.0,
...                      ground=(1.0, 0.0, 0.0), damping=Damping(zeta=0.02))
>>> sweep.points, replace(sweep, points=400).points
(200, 400)
>>> replace(sweep, fmin=40.0)
Traceback (most recent call last):
...
fem.rules.RuleError: case SWEEP: 'to' must be above 'from'
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar, Union

import numpy as np

from .damping import Damping
from .errors import Location, suggest
from .harmonic_forms import frequency_problem, load_problem
from .rules import RuleError  # noqa: F401 (re-exported)
from .rules import g as _g
from .rules import same_fields as _same
from .rules import vector as _vector
from .spectrum import Spectrum
from .timefn import TimeFunction
from .vibration import VibrationLimit, range_problem

__all__ = ["BucklingCase", "CASE_TYPES", "Case", "Damping", "FreeCase", "HarmonicCase", "HistoryCase", "LoadItem", "ModesCase",
           "RuleError", "SpectrumCase", "StaticCase"]

MODES_COUNT = 12           # modes a modes case finds when it gives neither count, fmax nor target
MODES_MAX = 300            # most modes a mass target may add
SWEEP_POINTS = 200         # frequencies of a sweep, before the points added around resonances
SPECTRUM_DAMPING = 0.05    # a spectrum case's damping ratio when none is given (the design spectra's own)
MAX_STEPS = 1e6            # time steps of a free or history case
BUCKLING_COUNT = 4         # load factors a buckling case finds when it gives no count


@dataclass(eq=False)
class LoadItem:
    kind: str                 # "force", "moment", "line", "unbalance"; a free case's "displacement", "velocity"
    targets: np.ndarray       # node or member indices
    vector: np.ndarray        # (3,) SI, in the axes below
    location: Location | None = field(default=None, compare=False)
    axes: str = "global"      # "global", or "local": member x, y, z (line loads only)
    time: str | None = None   # history cases: the name of the case's time function it follows
                              # (None: the case's time = ...)
    lag: float = 0.0          # harmonic cases: rad, the load acts as P cos(W t - lag) (fem/harmonic_forms.py)
    like: tuple[float, float] | None = None   # harmonic cases: (n, f0 Hz), amplitude x (f / f0)^n

    __eq__ = _same        # arrays by value; fields marked compare=False (locations) left out
    __hash__ = None


@dataclass(frozen=True, kw_only=True, eq=False)
class _Case:
    """Fields every case has: name; loads (LoadItem, ...); gravity (3,) m/s^2 or None; location
    where the deck defines it (None for a case built in Python)."""

    kind: ClassVar[str]
    name: str
    loads: tuple[LoadItem, ...] = ()
    gravity: np.ndarray | None = None
    location: Location | None = field(default=None, compare=False)

    def __post_init__(self):
        object.__setattr__(self, "loads", tuple(self.loads))
        if self.gravity is not None:
            object.__setattr__(self, "gravity", _vector(self.gravity))
        if problem := load_problem(self):
            raise RuleError(problem.message, *problem.options, hint=problem.hint)
        self._check()

    def _check(self) -> None:
        """Raise RuleError for the first rule the case breaks."""

    @property
    def needs(self) -> tuple[str, ...]:
        """The names of the cases (or combinations) this case is computed from."""
        return ()

    @property
    def static_part(self) -> bool:
        """Whether solving the case takes a static solve with K (a factor of K^-1)."""
        return False

    __eq__ = _same        # arrays by value; fields marked compare=False (locations) left out
    __hash__ = None

    def _no_loads(self) -> None:
        if self.loads or self.gravity is not None:
            raise RuleError(f"case {self.name}: a {self.kind} case takes no loads")


def _whole(v, at_least: int, most: float, message: str, option: str) -> int:
    if not (np.isfinite(v) and v == int(v) and at_least <= v <= most):
        raise RuleError(message, option)
    return int(v)


@dataclass(frozen=True, kw_only=True, eq=False)
class StaticCase(_Case):
    """Force, moment and line loads and gravity, solved with K."""

    kind: ClassVar[str] = "static"

    @property
    def static_part(self) -> bool:
        return True

    def _check(self) -> None:
        if not self.loads and self.gravity is None:
            raise RuleError(f"case {self.name}: this static case has no loads, so every result would be zero",
                            hint="give force, moment or line loads, or gravity = (0, 0, -g0)")


@dataclass(frozen=True, kw_only=True, eq=False)
class ModesCase(_Case):
    """The lowest modes: `count` of them, those up to `fmax` Hz (both: the fewer), or as many as
    reach the cumulative effective-mass fractions `target` (X, Y, Z) in every direction, at most
    `max_count`. None of count, fmax, target: MODES_COUNT modes. `reference` (3,) m is the point
    rotational participation is taken about. `sensitivity` asks for frequency sensitivities, members grouped by
    "members", "sections", "materials" or the deck's "groups"; `sensitivity_rows` ranked rows per mode.
    `resonance`: names of the model's excitations its resonance check takes (None: every one; () none).
    `preload`: the name of a static case whose member axial forces stiffen (tension) or soften
    (compression) the structure: the modes of (K + Kg) x = w^2 M x (linear; fem/analysis/buckling.py).
    Deck options: count, fmax, target, max, reference, sensitivity, sensitivity_rows, resonance, preload."""

    kind: ClassVar[str] = "modes"
    count: int | None = None
    fmax: float | None = None
    target: np.ndarray | None = None
    max_count: int = MODES_MAX
    reference: np.ndarray = (0.0, 0.0, 0.0)
    sensitivity: str | None = None
    sensitivity_rows: int = 8      # rows per mode of the ranked tables (results.json, report)
    resonance: tuple[str, ...] | None = None
    preload: str | None = None

    @property
    def needs(self) -> tuple[str, ...]:
        return () if self.preload is None else (self.preload,)

    @property
    def n_modes(self) -> int | None:
        """The number of modes asked for: count, MODES_COUNT when nothing else bounds the solve,
        None when fmax or the mass target does."""
        if self.count is None and self.fmax is None and self.target is None:
            return MODES_COUNT
        return self.count

    def _check(self) -> None:
        name = self.name
        object.__setattr__(self, "reference", _vector(self.reference))
        if self.resonance is not None:
            object.__setattr__(self, "resonance", tuple(str(n) for n in self.resonance))
        if self.count is not None:
            object.__setattr__(self, "count", _whole(self.count, 1, np.inf,
                                                     f"case {name}: count must be a whole number of at least 1",
                                                     "count"))
        if self.fmax is not None and not self.fmax > 0:
            raise RuleError(f"case {name}: fmax must be positive", "fmax")
        if self.target is not None:
            object.__setattr__(self, "target", _vector(self.target))
            if not np.all((self.target >= 0) & (self.target <= 1)):
                raise RuleError(f"case {name}: target: fractions of the mass from 0 to 100 percent", "target",
                                hint="write them with their unit, e.g. target = (90 percent, 90 percent, 0)")
        object.__setattr__(self, "max_count", _whole(self.max_count, 1, np.inf,
                                                     f"case {name}: max must be a whole number of at least 1",
                                                     "max"))
        if self.sensitivity not in (None, "members", "sections", "materials", "groups"):
            raise RuleError(f"case {name}: sensitivity is members, sections, materials or groups", "sensitivity")
        object.__setattr__(self, "sensitivity_rows", _whole(self.sensitivity_rows, 1, np.inf, f"case {name}: "
                           "sensitivity_rows must be a whole number of at least 1", "sensitivity_rows"))
        self._no_loads()
        if self.preload is not None and self.sensitivity is not None:
            raise RuleError(f"case {name}: frequency sensitivities are not available under a preload (they "
                            "take the members' elastic stiffness only)", "sensitivity", "preload")
        if self.target is not None and (self.count is not None or self.fmax is not None):
            raise RuleError(f"case {name}: give a mass target or count/fmax, not both")


@dataclass(frozen=True, kw_only=True, eq=False)
class _Response(_Case):
    """A case computed from the modes of the modes case named `modes`, damped by `damping`."""

    modes: str
    damping: Damping = field(default_factory=Damping)

    @property
    def needs(self) -> tuple[str, ...]:
        return (self.modes,)

    def _check(self) -> None:
        if not isinstance(self.damping, Damping):
            raise RuleError(f"case {self.name}: damping is a Damping, not {type(self.damping).__name__}",
                            "damping")


def _record(record) -> np.ndarray | None:
    return None if record is None else np.array(record, dtype=int).reshape(-1)


@dataclass(frozen=True, kw_only=True, eq=False)
class _Timed(_Response):
    """A response in time: `duration` and `step` s; `record` the node indices whose histories
    are kept (None: every node)."""

    duration: float
    step: float
    record: np.ndarray | None = None

    def _check(self) -> None:
        super()._check()
        object.__setattr__(self, "record", _record(self.record))
        name = self.name
        for key in ("duration", "step"):
            if not getattr(self, key) > 0:
                raise RuleError(f"case {name}: {key} must be positive", key)
        if self.duration < self.step:
            raise RuleError(f"case {name}: duration {_g(self.duration)} s is shorter than the step "
                            f"{_g(self.step)} s, so the {self.kind} case would hold its start only", "duration",
                            hint="check the units of duration and step")
        if self.duration / self.step > MAX_STEPS:
            raise RuleError(f"case {name}: more than a million time steps; use a longer step")

    @property
    def steps(self) -> int:
        """The number of output times, t = 0 included."""
        return int(self.duration / self.step) + 1


@dataclass(frozen=True, kw_only=True, eq=False)
class FreeCase(_Timed):
    """Free vibration released from the deflection of the static case or combination `start`
    (None: from rest, undeflected) plus the initial 'displacement' and 'velocity' loads."""

    kind: ClassVar[str] = "free"
    start: str | None = None

    @property
    def needs(self) -> tuple[str, ...]:
        return (self.modes,) + ((self.start,) if self.start else ())

    def _check(self) -> None:
        if self.gravity is not None:
            raise RuleError(f"case {self.name}: gravity belongs to static and history cases, not to a free case",
                            "gravity", hint="release from the deflection under gravity with start = a static case")
        super()._check()
        if not self.loads and self.start is None:
            raise RuleError(f"case {self.name}: give a start (a static case) or initial displacement/velocity")


@dataclass(frozen=True, kw_only=True, eq=False)
class HistoryCase(_Timed):
    """Loads and ground accelerations times time functions. `time` scales the loads and `ground`
    (3,) m/s^2 that name no function of their own, and gravity; `functions` are the case's named
    time functions, followed by loads whose `time` names them and by the `grounds`
    ((3,) m/s^2, name); `correction`: the static correction of the modes left out (force
    loads only)."""

    kind: ClassVar[str] = "history"
    time: TimeFunction | None = None
    functions: dict[str, TimeFunction] = field(default_factory=dict)
    ground: np.ndarray | None = None
    grounds: tuple[tuple[np.ndarray, str], ...] = ()
    correction: bool = False

    @property
    def static_part(self) -> bool:
        return self.correction

    def _check(self) -> None:
        super()._check()
        name = self.name
        object.__setattr__(self, "functions", dict(self.functions))
        object.__setattr__(self, "grounds", tuple((_vector(v), str(f)) for v, f in self.grounds))
        if self.ground is not None:
            object.__setattr__(self, "ground", _vector(self.ground))
        if self.ground is not None and self.time is None:
            raise RuleError(f"case {name}: ground = ... needs the case's time = shape(...) or "
                            "table = \"file.csv\", or its own function: ground = (...) times NAME")
        if self.gravity is not None and self.time is None:
            raise RuleError(f"case {name}: gravity follows the case's time = shape(...); give one")
        if self.time is None and not self.functions:
            raise RuleError(f"case {name}: a history case needs time = shape(...) or table = \"file.csv\"")
        if not self.loads and self.ground is None and not self.grounds:
            raise RuleError(f"case {name}: give loads or a ground acceleration")
        if self.correction and (self.ground is not None or self.grounds):
            raise RuleError(f"case {name}: the static correction applies to force loads only")
        for what, fname in [(item.kind, item.time) for item in self.loads] + [("ground", f) for _, f in self.grounds]:
            if fname is None and self.time is None:
                message, hint = no_time_function(name, what)
                raise RuleError(message, hint=hint)
            if fname is not None and fname not in self.functions:
                message, hint = function_not_defined(name, what, fname, self.functions)
                raise RuleError(message, hint=hint)


def function_not_defined(case: str, what: str, fname: str, named) -> tuple[str, str]:
    """The message and hint for a load or ground of history case `case` that follows a time
    function the case does not define (the deck reader points them at the name)."""
    near = suggest(fname, named) if named else "this case names none"
    return (f"case {case}: {what} follows time function '{fname}', which is not defined in the case; {near}",
            f'define it in the case, e.g. time {fname} = halfsine(0.05 s) or table {fname} = "record.csv"')


def no_time_function(case: str, what: str) -> tuple[str, str]:
    """The message and hint for a load of history case `case` with no time function to follow."""
    return (f"case {case}: this {what} has no time function",
            "add 'times NAME' after it, with NAME defined in the case (time NAME = ...), "
            "or give the case one time = shape(...) for all such loads")


@dataclass(frozen=True, kw_only=True, eq=False)
class HarmonicCase(_Response):
    """A sweep from `fmin` to `fmax` Hz (deck: from, to) over `points` frequencies spaced 'linear'
    or 'log' (points added around each resonance in the band), or the frequencies `at` (Hz), of the
    loads (P cos(W t - lag), forms in fem/harmonic_forms.py) or a `ground` acceleration amplitude
    (3,) m/s^2; `correction`: the static correction of the modes left out (force loads only);
    `record` the node indices whose responses are kept (None: every node); `limits` the
    vibration limits checked on its response (fem/vibration.py)."""

    kind: ClassVar[str] = "harmonic"
    fmin: float | None = None
    fmax: float | None = None
    points: int = SWEEP_POINTS
    spacing: str = "linear"
    at: np.ndarray | None = None
    ground: np.ndarray | None = None
    correction: bool = False
    record: np.ndarray | None = None
    limits: tuple = ()        # VibrationLimit, ...: the motion allowed at named nodes (fem/vibration.py)

    @property
    def static_part(self) -> bool:
        return self.correction

    def _check(self) -> None:
        name = self.name
        if self.gravity is not None:
            raise RuleError(f"case {name}: gravity belongs to static and history cases, not to a harmonic case",
                            "gravity", hint="remove it: the sweep's loads are harmonic amplitudes")
        super()._check()
        object.__setattr__(self, "record", _record(self.record))
        if self.ground is not None:
            object.__setattr__(self, "ground", _vector(self.ground))
        object.__setattr__(self, "at", None if self.at is None else np.sort(np.array(self.at, float).reshape(-1)))
        if problem := frequency_problem(self):
            raise RuleError(problem.message, *problem.options, hint=problem.hint)
        object.__setattr__(self, "points", int(self.points))
        if not self.loads and self.ground is None:
            raise RuleError(f"case {name}: give force amplitudes or a ground acceleration")
        if self.correction and self.ground is not None:
            raise RuleError(f"case {name}: the static correction applies to force loads only")
        object.__setattr__(self, "limits", tuple(self.limits))
        for limit in self.limits:
            if not isinstance(limit, VibrationLimit):
                raise RuleError(f"case {name}: a limit is a VibrationLimit, not {type(limit).__name__}")
            if problem := range_problem(self, limit):
                raise RuleError(problem)


@dataclass(frozen=True, kw_only=True, eq=False)
class SpectrumCase(_Response):
    """Peak responses to the response `spectrum` applied in X, Y, Z with the factors
    `directions` (3,); modal peaks combined by `combine` ('cqc', 'srss' or 'abs'), directions
    by `spatial` ('srss' or '100/30'); `missing`: the missing-mass term of the modes left out.
    Damping SPECTRUM_DAMPING unless given."""

    kind: ClassVar[str] = "spectrum"
    spectrum: Spectrum
    directions: np.ndarray = (1.0, 0.0, 0.0)
    combine: str = "cqc"
    spatial: str = "srss"
    missing: bool = False
    damping: Damping = field(default_factory=lambda: Damping(zeta=SPECTRUM_DAMPING))

    @property
    def static_part(self) -> bool:
        return self.missing

    def _check(self) -> None:
        super()._check()
        name = self.name
        object.__setattr__(self, "directions", _vector(self.directions))
        if not np.any(self.directions):
            raise RuleError(f"case {name}: directions: at least one direction factor must be non-zero",
                            "directions")
        for key, allowed in (("combine", ("cqc", "srss", "abs")), ("spatial", ("srss", "100/30"))):
            if getattr(self, key) not in allowed:
                raise RuleError(f"case {name}: {key} is one of {', '.join(allowed)} (write \"100/30\" in quotes)",
                                key)
        self._no_loads()


@dataclass(frozen=True, kw_only=True, eq=False)
class BucklingCase(_Case):
    """The lowest `count` load factors lambda at which the loads of the static case `loading`,
    times lambda, buckle the structure: (K + lambda Kg) x = 0, with Kg of that case's member
    axial forces (linear buckling of the perfect structure; fem/analysis/buckling.py).
    Deck options: loading, count."""

    kind: ClassVar[str] = "buckling"
    loading: str
    count: int = BUCKLING_COUNT

    @property
    def needs(self) -> tuple[str, ...]:
        return (self.loading,)

    @property
    def static_part(self) -> bool:
        return True

    def _check(self) -> None:
        object.__setattr__(self, "count", _whole(self.count, 1, 100, f"case {self.name}: count must be a whole "
                                                 "number from 1 to 100", "count"))
        if self.loads or self.gravity is not None:
            raise RuleError(f"case {self.name}: a buckling case takes no loads of its own; name the static case "
                            "whose loads are scaled", hint="e.g. loading = HEAD")


Case = Union[StaticCase, ModesCase, FreeCase, HistoryCase, HarmonicCase, SpectrumCase, BucklingCase]

CASE_TYPES: dict[str, type] = {c.kind: c for c in (StaticCase, ModesCase, FreeCase, HistoryCase, HarmonicCase,
                                                    SpectrumCase, BucklingCase)}
