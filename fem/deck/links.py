"""Rigid links, masses placed off their nodes and member end offsets, from a deck's definitions
to the Model's `links`, `mass_coupling` and `offsets`, with the checks that keep them meaningful."""

from __future__ import annotations

import numpy as np
from lark import Tree

from ..errors import DeckError, suggest
from ..geometry import local_axes, offset_mass
from ..model import DIRECTIONS, Link
from ..notes import Note
from . import units as U
from .definitions import Definitions

__all__ = ["check_linked_starts", "end_offset", "end_offsets", "link_statement", "linked_nodes", "mass_coupling",
           "read_links", "supported_references"]


def link_statement(st, s) -> None:
    """link NAME: REF -> targets [(dirs)]: nodes that follow REF as one rigid body, recorded
    in the definitions of the statements `st` (fem.deck.statements.Statements)."""
    name_t, ref, *rest = s.children
    dirs = rest.pop() if rest and (rest[-1] is None or (isinstance(rest[-1], Tree) and rest[-1].data == "dirs")) \
        else None
    name = st.ev.name(name_t)
    st.defs.define("link", "link", name, st.loc(s))
    chosen = np.ones(6, bool)
    if dirs is not None:
        chosen[:] = False
        for d in dirs.children:
            if str(d) not in DIRECTIONS:
                raise DeckError(f"link {name}: unknown direction '{d}'; {suggest(str(d), DIRECTIONS)}", st.loc(d))
            chosen[DIRECTIONS.index(str(d))] = True
    st.defs.links.append((name, st.fixed_name(ref), [st.fixed_name(t) for t in rest], chosen, st.loc(s)))


def end_offset(st, val, what: str) -> tuple[np.ndarray, bool]:
    """A member end offset: (dx, dy, dz) in global axes, or local(dx, dy, dz) along the
    member's own axes (taken from its nodes); returns (vector, local?)."""
    from .statements import MAX_COORDINATE

    local = isinstance(val, Tree) and val.data == "call" and str(val.children[0]) == "local"
    if local:
        args = val.children[1:]
        if len(args) != 3:
            raise DeckError(f"{what}: local(...) needs three lengths along the member's x, y and z, found "
                            f"{len(args)}", st.loc(val), "e.g. local(150 mm, 0, 0)")
        vec = np.array([st.ev.value(a, U.LENGTH, what) for a in args])
    else:
        vec = st.ev.vector(val, U.LENGTH, what)
    if np.abs(vec).max() > MAX_COORDINATE:
        raise DeckError(f"{what}: an offset of {np.abs(vec).max():.3g} m is beyond any structure", st.loc(val),
                        "check the units of the offset")
    return vec, local


def read_links(defs: Definitions, nidx: dict, restraint: np.ndarray) -> tuple[Link, ...]:
    """The deck's rigid links. A node follows one link at most and a node that follows a link
    leads none (chains are written as one link from the first node), and a support cannot
    hold a linked direction of a dependent node (the reference node is supported instead)."""
    links, follows, leads = [], {}, {}
    for name, ref_t, targets, dirs, where in defs.links:
        ref = defs.targets(ref_t, nidx, "node")
        if len(ref) != 1:
            raise DeckError(f"link {name}: the reference must be one node, not a group or pattern of {len(ref)}",
                            defs.loc(ref_t), "name the node the others follow")
        ref = ref[0]
        deps = list(dict.fromkeys(n for t in targets for n in defs.targets(t, nidx, "node")))
        if ref in deps:
            raise DeckError(f"link {name}: node {ref} is both the reference and a node that follows it", where,
                            "leave the reference out of the nodes after the arrow")
        for nm in deps:
            if nm in follows:
                raise DeckError(f"link {name}: node {nm} already follows link {follows[nm][0]} (at {follows[nm][1]}); "
                                "a node follows one link at most", where,
                                "join the two links into one, or link the node to one reference only")
            if nm in leads:
                raise DeckError(f"link {name}: node {nm} is the reference of link {leads[nm][0]} (at {leads[nm][1]}), "
                                "so it cannot follow another node", where,
                                f"link the nodes of {leads[nm][0]} to {ref} directly (one link for the rigid body)")
            held = restraint[nidx[nm]] & dirs
            if held.any():
                shown = ", ".join(d for d, h in zip(DIRECTIONS, held) if h)
                raise DeckError(f"link {name}: node {nm} follows {ref}, but a support holds it in {shown}", where,
                                f"support the reference node {ref} instead, or leave {shown} out of the link")
            follows[nm] = (name, where)
        if ref in follows:
            first = follows[ref]
            raise DeckError(f"link {name}: its reference {ref} follows link {first[0]} (at {first[1]})", where,
                            f"link these nodes to the reference of {first[0]} directly")
        leads.setdefault(ref, (name, where))
        links.append(Link(name, nidx[ref], np.array([nidx[n] for n in deps], dtype=np.int64), dirs.copy(), where))
    return tuple(links)


def linked_nodes(links, n_nodes: int) -> np.ndarray:
    """(n, 6) bool: the directions in which a node follows a link."""
    out = np.zeros((n_nodes, 6), bool)
    for link in links:
        out[link.dependents] |= link.dirs
    return out


def mass_coupling(defs: Definitions, nidx: dict) -> np.ndarray | None:
    """(n, 6, 6) off-diagonal terms of the nodal mass blocks of masses placed off their nodes
    (fem.geometry.offset_mass; the diagonal goes into the point masses), or None."""
    if not defs.off_masses:
        return None
    out = np.zeros((len(nidx), 6, 6))
    for target, m, inertia, offset, _ in defs.off_masses:
        block = offset_mass([m], [inertia], [offset])[0]
        block[np.arange(6), np.arange(6)] = 0.0
        for nm in defs.targets(target, nidx, "node"):
            out[nidx[nm]] += block
    return out


def check_linked_starts(cases, linked: np.ndarray, node_names) -> None:
    """Refuse an initial displacement or velocity of a free case at a linked direction of a
    node: it moves with its reference node, which is where the start is given."""
    for c in cases:
        for item in c.loads:
            if item.kind in ("displacement", "velocity"):
                hit = linked[item.targets, :3] & (np.asarray(item.vector) != 0)
                if hit.any():
                    k, d = np.argwhere(hit)[0]
                    raise DeckError(f"case {c.name}: initial {item.kind} in {DIRECTIONS[d]} at node "
                                    f"{node_names[item.targets[k]]}, which follows a rigid link there",
                                    item.location, "give the initial values at the link's reference node")


def end_offsets(mems, coords, conn, roll, up, tol: float) -> np.ndarray | None:
    """(e, 2, 3) global offsets of the members' elastic ends from their nodes, or None when no
    member has one. An offset in local(...) is along the member's axes from its nodes (with its
    roll and up vector). A member whose elastic part would be shorter than `tol` is refused."""
    if not any("offsets" in m for m in mems):
        return None
    out = np.zeros((len(mems), 2, 3))
    for k, m in enumerate(mems):
        for end, (vec, local) in m.get("offsets", {}).items():
            if local:
                xi, xj = coords[conn[k, 0]][None], coords[conn[k, 1]][None]
                given = None if np.isnan(up[k]).any() else up[k][None]
                R = local_axes(xi, xj, roll=roll[k:k + 1], up=given)[0][0]
                vec = R.T @ vec
            out[k, "ij".index(end)] = vec
    axis = coords[conn[:, 1]] + out[:, 1] - coords[conn[:, 0]] - out[:, 0]
    short = np.flatnonzero(np.linalg.norm(axis, axis=1) <= tol)
    if short.size:
        m = mems[short[0]]
        raise DeckError(f"member {m['name']}: its end offsets leave its elastic part no length", m["loc"],
                        "an offset goes from the node to where the member's elastic part starts")
    return out


def supported_references(links, restraint, pmass, conn, cases, node_names) -> list[Note]:
    """A note for each link whose reference node a support holds while mass follows it (a point
    mass or a member at a follower) in a deck with spectrum cases without the missing-mass term:
    their reactions there leave out the inertia of the followers' masses moving with the support,
    which no mode holds (free, history and harmonic cases, and spectrum cases with `missing = on`,
    add it: fem.analysis.link_dynamics.carried_inertia)."""
    dynamic = [c.name for c in cases if c.kind == "spectrum" and not c.missing]
    if not dynamic:
        return []
    out = []
    carried = (pmass > 0).any(axis=1)
    carried[conn.ravel()] = True
    for link in links:
        held = restraint[link.reference]
        if held.any() and carried[link.dependents].any():
            dirs = ", ".join(d for d, h in zip(DIRECTIONS, held) if h)
            out.append(Note(link.location, f"link {link.name}: its reference node {node_names[link.reference]} is "
                            f"supported ({dirs}) and mass follows the link, so the reactions of the spectrum cases "
                            f"({', '.join(dynamic)}) at that node leave out the inertia of that mass moving with the "
                            "support, which no mode holds; set missing = on in them to add it (the rigid response "
                            "of what the modes leave out)"))
    return out
