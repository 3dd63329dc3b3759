"""Springs between two nodes: the deck statement

    spring ISO1: SKID1 -> BASE1 (uz = 180 kN/m, ux = 60 kN/m, uy = 60 kN/m) damping = 5 percent
    spring PAD: A -> B (ux = 2 MN/m, rz = 40 kN*m/rad) along = (1, 1, 0) up = (0, 0, 1)

checked where it is written and recorded in the definitions, and the Model's `NodeSprings` built
from them. The stiffnesses act along and about the spring's axes: global X, Y, Z unless `along`
gives its x (and `up` its x-z plane, as a member's up vector; without it the member rule). The two
nodes may coincide (the usual isolator model: a skid node above its base node)."""

from __future__ import annotations

import numpy as np

from ..errors import DeckError, suggest
from ..geometry import local_axes
from ..model import DIRECTIONS, NodeSprings
from . import units as U
from .definitions import Definitions

__all__ = ["MAX_SPRING_DAMPING", "node_spring_statement", "read_node_springs"]

# A discrete damper's ratio at or beyond critical cannot be carried by the modal cases'
# equivalent ratio (fem/analysis/spring_damping.py); our limit, below one.
MAX_SPRING_DAMPING = 0.5
_OPTIONS = ("damping", "along", "up")


def node_spring_statement(st, s) -> None:
    """spring NAME: A -> B (stiffnesses) [along = (..)] [up = (..)] [damping = ..], recorded in
    the definitions of the statements `st` (fem.deck.statements.Statements)."""
    from .statements import not_huge

    name_t, a, b, *rest = s.children
    name = st.ev.name(name_t)
    where = st.loc(s)
    st.defs.define("spring", "spring", name, where)
    kws = [c for c in rest if c.data == "kwarg"]
    opts = [c for c in rest if c.data == "option"]
    k = np.zeros(6)
    seen: set = set()
    for kw in kws:
        d = str(kw.children[0])
        if d not in DIRECTIONS:
            raise DeckError(f"spring {name}: unknown direction '{d}'; {suggest(d, DIRECTIONS)}", st.loc(kw))
        st.defs.once(seen, d, st.loc(kw), f"spring {name}")
        dim = (1, 0, -2) if d.startswith("u") else U.MOMENT     # N/m, or N m/rad
        v = st.ev.value(kw.children[1], dim, f"spring {name} {d}")
        if v < 0:
            raise DeckError(f"spring {name} {d}: a stiffness cannot be negative", st.loc(kw),
                            "give its size; the spring pulls its nodes together either way")
        not_huge(v, f"spring {name} {d}", st.loc(kw))
        k[DIRECTIONS.index(d)] = v
    if not k.any():
        raise DeckError(f"spring {name}: every stiffness is zero, so it joins nothing", where,
                        "give at least one stiffness, e.g. (uz = 200 kN/m)")
    given: dict = {}
    for opt in opts:
        key = str(opt.children[0])
        if key not in _OPTIONS:
            raise DeckError(f"spring {name}: unknown option '{key}'; {suggest(key, _OPTIONS)}", st.loc(opt))
        st.defs.once(seen, key, st.loc(opt), f"spring {name}")
        val = opt.children[1]
        if key == "damping":
            z = st.ev.value(val, U.NONE, f"spring {name} damping")
            if not 0 <= z <= MAX_SPRING_DAMPING:
                raise DeckError(f"spring {name}: a damping ratio of {z:g} is outside 0 to {MAX_SPRING_DAMPING:g}",
                                st.loc(opt), "write it as a fraction of critical, e.g. damping = 5 percent")
            given[key] = z
        else:
            vec = st.ev.vector(val, U.NONE, f"spring {name} {key}")
            if not np.linalg.norm(vec) > 0:
                raise DeckError(f"spring {name}: '{key}' is a zero vector", st.loc(opt), "give a direction, e.g. (1, 0, 0)")
            given[key] = (vec, st.loc(opt))
    if "up" in given and "along" not in given:
        raise DeckError(f"spring {name}: 'up' sets the spring's x-z plane about its x, which 'along' gives", where,
                        "add along = (x, y, z), the direction of the spring's own x")
    axes = np.eye(3)
    if "along" in given:
        vec, loc = given["along"]
        up = given.get("up")
        try:
            axes = local_axes(np.zeros(3), vec, up=None if up is None else up[0])[0][0]
        except ValueError:
            raise DeckError(f"spring {name}: 'up' is parallel to 'along'", up[1],
                            "give an up vector across the spring's x") from None
    st.defs.node_springs.append((name, st.fixed_name(a), st.fixed_name(b), k, axes, given.get("damping", 0.0), where))


def read_node_springs(defs: Definitions, nidx: dict) -> NodeSprings | None:
    """The deck's springs between nodes, their nodes looked up; None when there are none."""
    if not defs.node_springs:
        return None
    names, nodes, ks, axes, zetas, wheres = [], [], [], [], [], []
    for name, a_t, b_t, k, R, zeta, where in defs.node_springs:
        ends = []
        for t in (a_t, b_t):
            hit = defs.targets(t, nidx, "node")
            if len(hit) != 1:
                raise DeckError(f"spring {name}: each end is one node, not a group or pattern of {len(hit)}",
                                defs.loc(t), "write one spring statement per pair of nodes (a loop helps)")
            ends.append(hit[0])
        if ends[0] == ends[1]:
            raise DeckError(f"spring {name}: both ends are node {ends[0]}", where,
                            f"join two different nodes (they may be at the same place), or for a spring to the "
                            f"ground write spring {ends[0]} (uz = ...)")
        names.append(name)
        nodes.append([nidx[ends[0]], nidx[ends[1]]])
        ks.append(k)
        axes.append(R)
        zetas.append(zeta)
        wheres.append(where)
    return NodeSprings(tuple(names), np.array(nodes, dtype=np.int64), np.array(ks), np.array(axes), np.array(zetas),
                       tuple(wheres))
