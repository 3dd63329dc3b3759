"""The quick lines of a file (fem/deck/fast_lines.py) read a run at a time: a run is the quick
lines between two of lark's statements, so the parameters, assumed units and names in force are
the same for all of them. The node and member lines of a run are read together: their literals
converted column by column with the evaluator's rules (literals.py, Evaluator.si), their names
checked at once, their definitions recorded, each kind in the order of its lines. The support
and mass lines, and a run any line of which would be refused (a name defined twice, a unit that
does not fit, a coordinate beyond any structure), are read line by line by `fast_lines.run`,
whose refusal makes the reader read the deck again with lark alone (fem/deck/reader.py)."""

from __future__ import annotations

import re
from itertools import repeat

import numpy as np

from ..errors import Location
from . import fast_lines, literals
from . import units as U

__all__ = ["run"]

_G = {name: k - 1 for name, k in fast_lines.LINE.groupindex.items()}     # group name -> index in groups()
_NN, _MN, _MI, _MJ, _MK, _MS, _MM = (_G[g] for g in ("nn", "mn", "mi", "mj", "mk", "ms", "mm"))
_XYZ = [(_G[t + "s"], _G[t + "n"], _G[t + "u"]) for t in "xyz"]
_FEW = 16            # a shorter run is read line by line


class _Refused(Exception):
    """A line of the run would be refused: the run is read line by line."""


def run(st, items: list, path, shown: str, src: list[str]) -> None:
    """Run the quick lines `items` of file `path` (named `shown`, lines `src`), consecutive in the
    file with none of lark's statements between them, through Statements `st`."""
    rest = items
    if len(items) >= _FEW:
        try:
            with np.errstate(all="ignore"):
                rest = _together(st, items, path, shown, src)
        except _Refused:
            rest = items
    for q in rest:
        fast_lines.run(st, q, path, shown, src)


def _together(st, items: list, path, shown: str, src: list[str]) -> list:
    """Read the node and member lines of `items` together; the other lines, to be read one by one."""
    rows = [q[0].groups() for q in items]
    nodes = [k for k, g in enumerate(rows) if g[_NN] is not None]
    members = [k for k, g in enumerate(rows) if g[_MN] is not None]
    if not nodes and not members:
        return items
    cols = list(zip(*[rows[k] for k in nodes]))          # the node lines' groups, group by group
    node_names, member_names = list(cols[_NN]) if nodes else [], [rows[k][_MN] for k in members]
    xyz = np.empty((len(nodes), 3))
    if nodes:
        for c, (s, n, u) in enumerate(_XYZ):
            xyz[:, c] = _si(st.ev, cols[s], cols[n], cols[u], U.LENGTH)
        from .statements import MAX_COORDINATE  # (statements imports the reader of quick lines)
        if np.abs(xyz).max() > MAX_COORDINATE:
            raise _Refused
    if st.defs.taken(node_names + member_names):
        raise _Refused
    # every line of the run is accepted: record them, each kind in the order of its lines
    nsrc, defs = len(src), st.defs
    where = [Location(shown, line, column, src[line - 1] if 0 < line <= nsrc else "") for _, line, column in items]
    node_where, member_where = [where[k] for k in nodes], [where[k] for k in members]
    defs.defined.update(zip(zip(repeat("node"), node_names), zip(repeat("node"), node_where)))
    defs.defined.update(zip(zip(repeat("member"), member_names), zip(repeat("member"), member_where)))
    defs.nodes.update(zip(node_names, zip(list(xyz), node_where)))
    if members:
        mcols = list(zip(*[rows[k] for k in members]))
        matches, lines = zip(*[items[k][:2] for k in members])

        def ends(g: str, i: int):     # (name, its place (match, group, line, file), which Sources.loc locates)
            return zip(mcols[i], zip(matches, repeat(g), lines, repeat(path)))
        defs.members.update(zip(member_names, map(st.plain_member, member_names, ends("mi", _MI), ends("mj", _MJ),
                                                   mcols[_MK], ends("ms", _MS), ends("mm", _MM), member_where)))
    if len(nodes) + len(members) == len(items):
        return []
    done = set(nodes) | set(members)
    return [q for k, q in enumerate(items) if k not in done]


def _si(ev, signs, nums, units, dim) -> np.ndarray:
    """The SI values, as `dim`, of literals written sign, number, unit (None for a bare number),
    as fast_lines._si gives them one by one: literals.number or literals.quantity, the sign, then
    Evaluator.si (a sign commutes with the conversion's products and quotients)."""
    v = np.array(list(map(float, nums)))
    if not np.all(np.isfinite(v)):
        raise _Refused
    for text in {nums[k] for k in np.flatnonzero(v == 0).tolist()}:      # a number too small to hold
        if re.search(r"[1-9]", re.split(r"[eE]", text)[0]):
            raise _Refused
    out = np.where(np.array(signs) == "-", -v, v)
    written = np.array(units, dtype=object)
    for u in set(units):
        at = written == u if u is not None else np.equal(written, None)
        x = out[at]
        if u is None:                                    # a bare number; a bare 0 fits any dimension
            f = ev.assumed_factor(dim)
            if f is None and np.any(x != 0):
                raise _Refused
            if f is not None:
                out[at] = np.where(x == 0, x, x * f)
            continue
        try:
            steps = literals.unit_steps(u.strip())
        except Exception:   # noqa: BLE001 - an unknown unit: refused line by line
            raise _Refused from None
        d = U.NONE
        for op, base in steps:
            x = x * base.value if op == "*" else x / base.value
            d = tuple((a + b) if op == "*" else (a - b) for a, b in zip(d, base.dim))
        if d != dim or not np.all(np.isfinite(x)) or np.any((x == 0) & (v[at] != 0)):
            raise _Refused
        out[at] = x
    if not np.all(np.isfinite(out)):
        raise _Refused
    return out
