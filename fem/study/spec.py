"""What a study asks for (`Study`), and the study file that writes it down.

A study names a deck and what varies in it: `let` parameters swept over ranges or lists (several
sweeps make a grid), parameters drawn at random from stated distributions (seeded), and, for a
history case, a suite of records each with its scale factor. It says which modes to follow, at
which nodes to keep their shapes, which peaks to report and where to run.

The study file, one statement a line (docs/studies.md)::

    study "PR-7 bay length against the pump"
    deck "rack.deck"
    cases MODES, PUMP
    vary bay from 5 m to 7 m points 9
    vary tier in (4 m, 4.5 m)
    draw skid normal(2.5 t, 0.1 t)
    draws 20 seed 7
    records QUAKE "suite/*.csv" scale 1.0
    record QUAKE "suite/near.csv" scale 1.3
    track 6 modes of MODES against previous
    shapes at "U*_0"
    peak drift = QUAKE displacement U5_0 y
    workers 2
    scheduler "tcp://127.0.0.1:8786"

Every mistake is a DeckError with the study file's name, line and column.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from functools import lru_cache
from importlib import resources
from pathlib import Path

from ..errors import DeckError, Location, suggest

__all__ = ["AXES", "DISTRIBUTIONS", "QUANTITIES", "Draw", "Peak", "Record", "Study", "Sweep", "read_study",
           "read_study_text"]

DISTRIBUTIONS = ("normal", "uniform", "lognormal")
QUANTITIES = ("displacement", "reaction", "acceleration")   # what a peak is the largest |value| of
AXES = ("x", "y", "z", "rx", "ry", "rz")
AGAINST = ("previous", "base")
MAX_VARIANTS = 100_000      # our choice: a study beyond this is a slip (a step of 1 mm over metres)


@dataclass(frozen=True)
class Sweep:
    """A let parameter over `values` (deck text, e.g. '5.25 m'), with `numbers` their numeric
    parts in `unit` (as written; '' for a bare number)."""

    name: str
    values: tuple[str, ...]
    numbers: tuple[float, ...]
    unit: str = ""
    where: Location | None = None


@dataclass(frozen=True)
class Draw:
    """A let parameter drawn from a distribution: normal(mean, sd), uniform(low, high) or
    lognormal(mean, sd) (mean and standard deviation of the value itself), in `unit`."""

    name: str
    distribution: str
    a: float
    b: float
    unit: str = ""
    where: Location | None = None


@dataclass(frozen=True)
class Record:
    """One record of a suite: a CSV file (time s, factor) for history case `case`, scaled."""

    case: str
    path: Path
    scale: float = 1.0
    where: Location | None = None


@dataclass(frozen=True)
class Peak:
    """The largest |value| of `quantity` (QUANTITIES) at `node` along `axis` (AXES) in `case`."""

    name: str
    case: str
    quantity: str
    node: str
    axis: str
    where: Location | None = None

    @property
    def unit(self) -> str:
        rot = self.axis.startswith("r")
        return {"displacement": "rad" if rot else "m", "reaction": "N m" if rot else "N",
                "acceleration": "rad/s^2" if rot else "m/s^2"}[self.quantity]


@dataclass(frozen=True)
class Study:
    """A study: the deck and what varies in it. `deck` is a path (its folder holds the files it
    includes and reads); `sweeps` combine as a grid, in order (the last varies fastest);
    `draws` are drawn `n_draws` times with `seed` at every grid point; `records` replace the
    time function of their history case one at a time; `track` the modes case whose modes are
    followed (None: the deck's first), `n_track` how many (None: up to 6), `against`
    'previous' (each variant against its neighbour in the sweep) or 'base'; `shapes_at` node
    name patterns where shapes are kept (empty: every node); `workers` the local cluster's
    processes; `scheduler` the address of a running Dask scheduler (None: a local cluster)."""

    deck: Path
    title: str = ""
    cases: tuple[str, ...] | None = None
    sweeps: tuple[Sweep, ...] = ()
    draws: tuple[Draw, ...] = ()
    n_draws: int = 0
    seed: int | None = None
    records: tuple[Record, ...] = ()
    track: str | None = None
    n_track: int | None = None
    against: str = "previous"
    shapes_at: tuple[str, ...] = ()
    peaks: tuple[Peak, ...] = ()
    workers: int = 2
    scheduler: str | None = None
    source: str | None = None
    lines: dict = field(default_factory=dict, repr=False)


def read_study(path) -> Study:
    """Read the study file at `path`; paths in it are relative to its folder."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise DeckError(f"study file '{path}' does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DeckError(f"study file '{path}' cannot be read: {getattr(exc, 'strerror', None) or exc}") from None
    return read_study_text(text, path.name, path.parent)


def read_study_text(text: str, name: str = "study.txt", folder=".") -> Study:
    """Read a study from its text; `name` is how messages name the file, `folder` where its
    paths are relative to."""
    from lark import Token
    from lark.exceptions import UnexpectedInput

    lines = text.splitlines()
    try:
        tree = _parser().parse(text if text.endswith("\n") else text + "\n")
    except UnexpectedInput as exc:
        raise _syntax_error(exc, text, name) from None

    def loc(item) -> Location:
        line, col = (item.line, item.column) if isinstance(item, Token) else (item.meta.line, item.meta.column)
        return Location(name, line, col, lines[line - 1] if 0 < line <= len(lines) else "")

    folder = Path(folder)
    got: dict = {"sweeps": [], "draws": [], "records": [], "peaks": [], "shapes_at": []}
    seen: dict[str, Location] = {}

    def once(key: str, where: Location) -> None:
        if key in seen:
            raise DeckError(f"'{key}' is given twice (first at {seen[key]})", where, "keep one of them")
        seen[key] = where

    names: dict[str, Location] = {}

    def parameter(tok) -> str:
        n = str(tok)
        if n in names:
            raise DeckError(f"parameter '{n}' is varied twice (first at {names[n]})", loc(tok),
                            "vary each let parameter on one line")
        names[n] = loc(tok)
        return n

    for st in tree.children:
        kind, ch, where = st.data, st.children, loc(st)
        if kind in ("title", "deck", "cases", "draws", "track", "workers", "scheduler"):
            once({"title": "study"}.get(kind, kind), where)
        if kind == "title":
            got["title"] = _string(ch[0])
        elif kind == "deck":
            got["deck"] = folder / _path(ch[0], loc(ch[0]), "deck")
        elif kind == "cases":
            got["cases"] = tuple(str(c) for c in ch)
        elif kind == "vary_range":
            got["sweeps"].append(_range(parameter(ch[0]), ch[1], ch[2], ch[3], loc))
        elif kind == "vary_list":
            qs = [_quantity(q, loc) for q in ch[1:]]
            units = {u for _, u, _ in qs}
            if len(units) > 1:
                raise DeckError(f"vary {ch[0]}: write every value in one unit (found {', '.join(sorted(units))})",
                                loc(ch[1]), "e.g. vary bay in (5 m, 5.5 m, 6 m)")
            got["sweeps"].append(Sweep(parameter(ch[0]), tuple(t for _, _, t in qs), tuple(v for v, _, _ in qs),
                                       qs[0][1], where))
        elif kind == "draw":
            got["draws"].append(_draw(parameter(ch[0]), ch[1], ch[2], ch[3], loc))
        elif kind == "draws":
            n = int(ch[0])
            if n < 1:
                raise DeckError("draws: give at least 1", loc(ch[0]))
            got["n_draws"] = n
            got["seed"] = int(ch[1]) if len(ch) > 1 else None
        elif kind in ("records", "record"):
            got["records"] += _records(kind, ch, folder, loc)
        elif kind == "track":
            n = int(ch[0])
            if n < 1:
                raise DeckError("track: follow at least 1 mode", loc(ch[0]))
            got["n_track"], got["track"] = n, str(ch[1])
            if len(ch) > 2:
                if str(ch[2]) not in AGAINST:
                    raise DeckError(f"track ... against '{ch[2]}': use previous or base", loc(ch[2]),
                                    "previous follows a sweep step by step; base matches every variant to the first")
                got["against"] = str(ch[2])
        elif kind == "shapes":
            got["shapes_at"] += [_string(c) for c in ch]
        elif kind == "peak":
            got["peaks"].append(_peak(ch, loc, where))
        elif kind == "workers":
            n = int(ch[0])
            if not 1 <= n <= 256:
                raise DeckError(f"workers {n}: give 1 to 256 worker processes", loc(ch[0]))
            got["workers"] = n
        elif kind == "scheduler":
            got["scheduler"] = _scheduler(_string(ch[0]), loc(ch[0]))
    if "deck" not in got:
        raise DeckError(f"{name}: the study names no deck", None, 'add a line: deck "rack.deck"')
    if got["draws"] and not got.get("n_draws"):
        raise DeckError("the study draws parameters but says not how many times", got["draws"][0].where,
                        "add a line: draws 20 seed 1")
    if got.get("n_draws") and not got["draws"]:
        raise DeckError("draws: the study draws no parameter", seen["draws"],
                        "add a line per parameter, e.g. draw skid normal(2.5 t, 0.1 t)")
    names_peak = [p.name for p in got["peaks"]]
    for p in got["peaks"]:
        if names_peak.count(p.name) > 1:
            raise DeckError(f"peak '{p.name}' is named twice", p.where, "name each peak: peak NAME = CASE ...")
    study = Study(**{k: (tuple(v) if isinstance(v, list) else v) for k, v in got.items()})
    _size(study)
    return study


def _size(study: Study) -> None:
    n = math.prod(len(s.values) for s in study.sweeps) * (1 + study.n_draws if study.draws else 1)
    if n > MAX_VARIANTS:
        raise DeckError(f"the study has {n} variants, above the limit of {MAX_VARIANTS}",
                        (study.sweeps or study.draws)[0].where, "use fewer points or draws")


@lru_cache(maxsize=1)
def _parser():
    from lark import Lark

    here = Path(__file__).resolve().parents[2] / "grammar" / "study.lark"
    text = here.read_text() if here.exists() else resources.files("fem.grammar").joinpath("study.lark").read_text()
    return Lark(text, parser="lalr", lexer="contextual", propagate_positions=True)


_WORDS = {"NAME": "a name", "STRING": 'a quoted text "..."', "SIGNED_NUMBER": "a number", "INT": "a whole number",
          "UNIT": "a unit", "_NL": "the end of the line", "LPAR": "'('", "RPAR": "')'", "COMMA": "','",
          "EQUAL": "'='", "$END": "the end of the file"}
_STATEMENTS = ("study", "deck", "cases", "vary", "draw", "draws", "records", "record", "track", "shapes", "peak",
               "workers", "scheduler")


def _syntax_error(exc, text: str, name: str) -> DeckError:
    from lark.exceptions import UnexpectedCharacters, UnexpectedToken

    lines = text.splitlines()
    line, col = exc.line, exc.column
    if line is None or line < 1:
        line, col = max(len(lines), 1), 1
    where = Location(name, line, col, lines[line - 1] if 0 < line <= len(lines) else "")
    expected = sorted(getattr(exc, "expected", None) or getattr(exc, "allowed", None) or ())
    words = sorted({_WORDS.get(e, f"'{e.lower()}'" if e.isupper() else e) for e in expected})
    if isinstance(exc, UnexpectedCharacters):
        found = f"'{text[exc.pos_in_stream]}'"
    elif isinstance(exc, UnexpectedToken):
        tok = exc.token
        found = "the end of the line" if tok.type == "_NL" else "the end of the file" if tok.type == "$END" \
            else f"'{tok}'"
    else:
        found = "this"
    start = where.source_line[:col - 1].strip() == ""
    hint = ("a line starts with one of: " + ", ".join(_STATEMENTS)) if start else \
        ("expected " + ", ".join(words[:8]) if words else "")
    return DeckError(f"unexpected {found} here", where, hint)


def _string(tok) -> str:
    return str(tok)[1:-1]


def _path(tok, where: Location, what: str) -> str:
    text = _string(tok)
    if not text.strip():
        raise DeckError(f"{what}: the file name is empty", where, f'write it between the quotes: {what} "rack.deck"')
    return text


def _quantity(tree, loc) -> tuple[float, str, str]:
    """(number, unit as written, deck text) of `12.5 kN/m`."""
    num, unit = tree.children[0], (str(tree.children[1]) if len(tree.children) > 1 else "")
    value = float(num)
    if not math.isfinite(value):
        raise DeckError(f"'{num}' is not a finite number", loc(num))
    if unit:
        _check_unit(unit, loc(tree.children[1]))
    return value, unit, f"{num} {unit}".strip()


def _check_unit(unit: str, where: Location) -> None:
    from ..deck.units import UNITS, unit_suggestion

    for word in re.findall(r"[A-Za-z]+", unit):
        if word not in UNITS:
            near = unit_suggestion(word)
            raise DeckError(f"unknown unit '{word}'", where, f"did you mean {near}?" if near else
                            "use the deck's units, e.g. m, mm, kN, t, kg, Hz, percent")


def _text(x: float, unit: str) -> str:
    """Deck text of a number in `unit` that reads back to the same float."""
    s = repr(float(x)) if x != int(x) or abs(x) >= 1e15 else str(int(x))
    return f"{s} {unit}".strip()


def _range(name: str, q0, q1, by, loc) -> Sweep:
    (a, ua, _), (b, ub, _) = _quantity(q0, loc), _quantity(q1, loc)
    where = loc(q0)
    if ua != ub:
        raise DeckError(f"vary {name}: write both ends in one unit (found '{ua or 'no unit'}' and "
                        f"'{ub or 'no unit'}')", loc(q1), f"e.g. vary {name} from {a:g} {ua} to ... {ua}")
    if by.data == "points":
        n = int(by.children[0])
        if n < 2:
            raise DeckError(f"vary {name}: give at least 2 points", loc(by.children[0]))
        values = [a + (b - a) * i / (n - 1) for i in range(n)]
    else:
        d, ud, _ = _quantity(by.children[0], loc)
        if ud != ua:
            raise DeckError(f"vary {name}: write the step in the unit of the ends ('{ua or 'no unit'}')",
                            loc(by.children[0]))
        if d <= 0:
            raise DeckError(f"vary {name}: the step must be above zero", loc(by.children[0]))
        n = math.floor(abs(b - a) / d * (1 + 1e-12)) + 1
        if n > MAX_VARIANTS:
            raise DeckError(f"vary {name}: {n} points, above the limit of {MAX_VARIANTS}", loc(by.children[0]))
        sign = 1 if b >= a else -1
        values = [a + sign * d * i for i in range(n)]
    if a == b:
        raise DeckError(f"vary {name}: both ends are {a:g}; a range needs two different ends", where,
                        f"for one value, use: vary {name} in ({a:g} {ua})")
    return Sweep(name, tuple(_text(v, ua) for v in values), tuple(values), ua, where)


def _draw(name: str, dist, q0, q1, loc) -> Draw:
    where = loc(dist)
    if str(dist) not in DISTRIBUTIONS:
        raise DeckError(f"draw {name}: unknown distribution '{dist}'; {suggest(str(dist), DISTRIBUTIONS)}", where,
                        "normal(mean, sd), uniform(low, high) or lognormal(mean, sd)")
    (a, ua, _), (b, ub, _) = _quantity(q0, loc), _quantity(q1, loc)
    if ua != ub:
        raise DeckError(f"draw {name}: write both values in one unit", loc(q1))
    d = str(dist)
    if d in ("normal", "lognormal") and b <= 0:
        raise DeckError(f"draw {name}: the standard deviation must be above zero", loc(q1))
    if d == "lognormal" and a <= 0:
        raise DeckError(f"draw {name}: a lognormal value has a mean above zero", loc(q0))
    if d == "uniform" and b <= a:
        raise DeckError(f"draw {name}: uniform(low, high) needs low < high", loc(q1))
    return Draw(name, d, a, b, ua, loc(q0))


def _records(kind: str, ch, folder: Path, loc) -> list[Record]:
    case, pattern = str(ch[0]), _path(ch[1], loc(ch[1]), kind)
    scale = float(ch[2]) if len(ch) > 2 else 1.0
    if not math.isfinite(scale) or scale == 0:
        raise DeckError(f"{kind}: the scale factor must be a finite number other than 0", loc(ch[2]))
    where = loc(ch[1])
    if kind == "record":
        return [Record(case, folder / pattern, scale, where)]
    paths = sorted(folder.glob(pattern)) if any(c in pattern for c in "*?[") else \
        sorted((folder / pattern).glob("*.csv")) if (folder / pattern).is_dir() else []
    paths = [p for p in paths if p.is_file()]
    if not paths:
        raise DeckError(f"records: no CSV file matches '{pattern}' (in {folder.resolve()})", where,
                        'name a folder of CSV files, "suite", or a pattern, "suite/*.csv"')
    return [Record(case, p, scale, where) for p in paths]


def _peak(ch, loc, where) -> Peak:
    named = len(ch) == 5
    name = str(ch[0]) if named else None
    case, qty, node, axis = (ch[1:] if named else ch)
    if str(qty) not in QUANTITIES:
        raise DeckError(f"peak: unknown quantity '{qty}'; {suggest(str(qty), QUANTITIES)}", loc(qty),
                        "displacement, reaction or acceleration")
    if str(axis) not in AXES:
        raise DeckError(f"peak: unknown direction '{axis}'; {suggest(str(axis), AXES)}", loc(axis),
                        "x, y, z (translations, forces) or rx, ry, rz (rotations, moments)")
    name = name or f"{case}.{qty}.{node}.{axis}"
    return Peak(name, str(case), str(qty), str(node), str(axis), where)


def _scheduler(address: str, where: Location) -> str:
    if not re.fullmatch(r"(tcp|tls|inproc|ucx|ws|wss)://\S+|[\w.\-\[\]:]+:\d+", address):
        raise DeckError(f"scheduler '{address}' is not an address", where, 'e.g. scheduler "tcp://127.0.0.1:8786"')
    return address if "://" in address else f"tcp://{address}"
