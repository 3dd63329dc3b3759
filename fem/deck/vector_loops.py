"""Loop bodies run over the loop's whole range at once, where the body is the common kind: node,
member (no options), support and mass (no options) statements whose names and values are
expressions of the loop's counter. Each expression is worked out once over an array of the
counter's values, with the evaluator's rules element by element (fem/deck/expressions.py and
compiled.py): a bare 0 (the counter's first value, a literal 0) fits any dimension, products
that overflow or underflow are refused, units convert as `si` converts them. A part it does not
vectorise (a function call, a power with a varying exponent) is worked out pass by pass by the
evaluator itself.

Nothing is recorded until every pass has been worked out and checked: names, dimensions,
coordinates, masses. Then the definitions are recorded in the order the passes would record
them. Anything else, and any pass that would fail, leaves the loop to run pass by pass
(fem/deck/statements.py, `Statements.st_loop`), which gives the located error: this reading
never raises one of its own. `pass_by_pass` turns it off (tests compare the two readings);
the reference reading (`fast_lines.lark_only`) runs every loop pass by pass.
"""

from __future__ import annotations

from contextlib import contextmanager
from contextvars import ContextVar
from itertools import repeat

import numpy as np
from lark import Token, Tree

from ..limits import HUGE
from ..model import DIRECTIONS
from . import fast_lines
from . import units as U
from .expressions import WILD

__all__ = ["pass_by_pass", "run"]

_PASSES = ContextVar("quaver_loops_pass_by_pass", default=False)
_WHOLE = 2.0 ** 53           # integers up to here are exact in a float


@contextmanager
def pass_by_pass():
    """Every loop run pass by pass while the block runs."""
    token = _PASSES.set(True)
    try:
        yield
    finally:
        _PASSES.reset(token)


class _Refused(Exception):
    """Not read here: the loop runs pass by pass."""


def run(st, var: str, first: int, last: int, body) -> bool:
    """Run the passes first..last of loop `body` (counter `var`) through Statements `st` at once;
    False, with nothing recorded, when the loop is to run pass by pass."""
    if _PASSES.get() or not fast_lines.quick() or last < first or not all(map(_plain, body)):
        return False
    try:
        with np.errstate(all="ignore"):
            body_run = _Body(st, var, np.arange(first, last + 1, dtype=float))
            for s in body:
                getattr(body_run, "st_" + s.data)(s)
            body_run.check()
    except Exception:   # noqa: BLE001 - a pass that would fail, or a form not read here: pass by pass
        return False
    body_run.record()
    st.loop_steps += len(body_run.ks) * len(body)
    return True


def _plain(s) -> bool:
    n = len(s.children)
    return (s.data == "node" or s.data == "support" or (s.data == "member" and n == 6)
            or (s.data == "mass" and n == 2))


def _depends(t, var: str) -> bool:
    return isinstance(t, Tree) and any(sub.data == "var" and str(sub.children[0]) == var for sub in t.iter_subtrees())


class _Body:
    """One loop's passes worked out together: values are (values, dimension, bare-zero mask),
    the dimension that of the elements that are not a bare 0 (None when all are)."""

    def __init__(self, st, var: str, ks: np.ndarray):
        self.st, self.ev, self.var, self.ks, self.n = st, st.ev, var, ks, len(ks)
        self.out: dict[str, list] = {"defined": [], "nodes": [], "members": [], "supports": [], "masses": []}
        self.names: list = []                      # the node and member names defined
        self.files: list = []                      # (target tokens, their file)

    # ---------- values
    def value(self, t):
        if not _depends(t, self.var):
            q = self.ev.evaluate(t)
            return (q.value, WILD, True) if q.dim is WILD else (q.value, q.dim, False)
        d, ch = t.data, t.children
        if d == "var":
            return self.ks, U.NONE, self.ks == 0
        if d == "unary" and len(ch) == 1:
            return self.value(ch[0])
        if d == "neg":
            v, dim, w = self.value(ch[0])
            return -v, dim, w
        if d in ("add", "sub"):
            (va, da, wa), (vb, db, wb) = self.value(ch[0]), self.value(ch[1])
            if da is not WILD and db is not WILD and da != db:
                raise _Refused
            return (va + vb if d == "add" else va - vb), (db if da is WILD else da), wa & wb
        if d in ("mul", "div"):
            return self._product(d, self.value(ch[0]), self.value(ch[1]))
        if d == "pow" and not _depends(ch[1], self.var):
            return self._power(self.value(ch[0]), self.ev.evaluate(ch[1]).value)
        return self.each(t)

    def _product(self, d: str, a, b):
        (va, da, wa), (vb, db, wb) = a, b
        w = wa | wb
        if d == "div" and np.any(vb == 0):
            raise _Refused                                      # division by zero
        v = va * vb if d == "mul" else va / vb
        if np.any(w):
            v = np.where(w & (va == 0), 0.0, v)                 # a bare 0's product: 0
        if not np.all(np.isfinite(v)) or np.any((v == 0) & (va != 0) & ((vb != 0) | (d == "div"))):
            raise _Refused                                      # overflow, underflow
        if da is WILD or db is WILD:
            return v, WILD, w
        return v, tuple((x + y) if d == "mul" else (x - y) for x, y in zip(da, db)), w

    def _power(self, a, p: float):
        va, da, wa = a
        if da is not WILD and da != U.NONE and (np.any(wa) or p != int(p) or abs(p) > U.MAX_UNIT_POWER):
            raise _Refused
        va = np.broadcast_to(np.asarray(va, float), (self.n,))
        if (p != int(p) and np.any(va < 0)) or (p < 0 and np.any(va == 0)):
            raise _Refused
        v = np.array([x ** p for x in va.tolist()], float)
        if not np.all(np.isfinite(v)) or np.any((v == 0) & (va != 0) & (p != 0)):
            raise _Refused
        dim = U.NONE if da is WILD else da
        return v, tuple(int(x * p) for x in dim), False

    def each(self, t):
        """`t` worked out pass by pass by the evaluator (the parts not vectorised here)."""
        ev, var = self.ev, self.var
        vals, wild, dims = [], [], set()
        for k in self.ks.tolist():
            ev.count(var, int(k))
            q = ev.evaluate(t)
            vals.append(q.value)
            wild.append(q.dim is WILD)
            if q.dim is not WILD:
                dims.add(q.dim)
        if len(dims) > 1:
            raise _Refused
        return np.array(vals, float), (dims.pop() if dims else WILD), np.array(wild)

    def si(self, t, dim) -> np.ndarray:
        """The SI values of `t` as `dim` on every pass (Evaluator.si)."""
        v, d, w = self.value(t)
        if d is not WILD and d != dim:
            f = self.ev.assumed_factor(dim) if d == U.NONE else None
            if f is None:
                raise _Refused
            v = np.where(w, v, v * f)
        v = np.broadcast_to(np.asarray(v, float), (self.n,))
        if not np.all(np.isfinite(v)):
            raise _Refused
        return v

    def name(self, t) -> list[str]:
        """The name on every pass (Evaluator.name)."""
        if isinstance(t, Token) or len(t.children) < 2 or t.children[1] is None or not _depends(t, self.var):
            return [self.ev.name(t)] * self.n
        parts = []
        for e in t.children[1].children:
            v, d, w = self.value(e)
            v = np.broadcast_to(np.asarray(v, float), (self.n,))
            if (d is not WILD and d != U.NONE) or not np.all(np.abs(v) < _WHOLE) or np.any(v != np.floor(v)):
                raise _Refused
            parts.append(list(map(str, v.astype(np.int64).tolist())))
        base = str(t.children[0])
        if len(parts) == 1:
            return [base + p for p in parts[0]]
        return [base + "_".join(p) for p in zip(*parts)]

    def target(self, t) -> list:
        """A support's or mass's target on every pass (Statements.fixed_name)."""
        if isinstance(t, Token) or len(t.children) < 2 or t.children[1] is None:
            return [t] * self.n
        first, sources = t.children[0], self.st.sources
        file = sources.token_file.get(id(first)) or sources.stack[-1]
        out = [Token("NAME", n, first.start_pos, first.line, first.column, first.end_line, first.end_column,
                     first.end_pos) for n in self.name(t)]
        self.files.append((out, file))
        return out

    # ---------- statements (Statements.st_node, st_member, st_support, st_mass)
    def st_node(self, s):
        from .statements import MAX_COORDINATE  # (statements imports this module)

        names, where = self.name(s.children[0]), self.st.loc(s)
        vec = s.children[1]
        if not (isinstance(vec, Tree) and vec.data == "vector") or len(vec.children) != 3:
            raise _Refused
        xyz = np.empty((self.n, 3))
        for c in range(3):
            xyz[:, c] = self.si(vec.children[c], U.LENGTH)
        if np.abs(xyz).max() > MAX_COORDINATE:
            raise _Refused
        self.names += names
        self.out["defined"].append(list(zip(zip(repeat("node"), names), repeat(("node", where)))))
        self.out["nodes"].append(list(zip(names, zip(list(xyz), [where] * self.n))))

    def st_member(self, s):
        ch, where = s.children, self.st.loc(s)
        kind = str(ch[3])
        if kind not in ("beam", "truss"):
            raise _Refused
        names = self.name(ch[0])
        ends = [list(zip(self.name(ch[k]), [ch[k]] * self.n)) for k in (1, 2, 4, 5)]
        plain = self.st.plain_member
        self.names += names
        self.out["defined"].append(list(zip(zip(repeat("member"), names), repeat(("member", where)))))
        self.out["members"].append([(n, plain(n, i, j, kind, sec, mat, where))
                                    for n, i, j, sec, mat in zip(names, *ends)])

    def st_support(self, s):
        target, how = s.children
        if isinstance(how, Token):
            dirs = {"fixed": DIRECTIONS, "pinned": DIRECTIONS[:3]}[str(how)]
        else:
            dirs = [str(d) for d in how.children]
            if not set(dirs) <= set(DIRECTIONS):
                raise _Refused
        where = self.st.loc(s)
        self.out["supports"].append([(t, dirs if isinstance(how, Token) else list(dirs), where)
                                     for t in self.target(target)])

    def st_mass(self, s):
        target, value = s.children
        m = self.si(value, U.MASS)
        if np.any(m < 0) or np.any(np.abs(m) > HUGE):
            raise _Refused
        vec = np.zeros((self.n, 6))
        vec[:, :3] = m[:, None]
        where = self.st.loc(s)
        self.out["masses"].append([(t, v, where) for t, v in zip(self.target(target), list(vec))])

    # ---------- checked, then recorded in the order of the passes
    def check(self) -> None:
        """Refuse a name defined twice, or already defined as a node, member or group."""
        if self.st.defs.taken(self.names):
            raise _Refused

    def record(self) -> None:
        defs, files = self.st.defs, self.st.sources.token_file
        for tokens, file in self.files:
            for tok in tokens:
                files[id(tok)] = file
        defs.defined.update(_passes(self.out["defined"]))
        defs.nodes.update(_passes(self.out["nodes"]))
        defs.members.update(_passes(self.out["members"]))
        defs.supports += _passes(self.out["supports"])
        defs.masses += _passes(self.out["masses"])


def _passes(lists: list[list]) -> list:
    """The items of the body's statements in the order of the passes: the first statement's first
    item, the second's first, ..., the first's second, ..."""
    if len(lists) == 1:
        return lists[0]
    return [x for items in zip(*lists) for x in items]
