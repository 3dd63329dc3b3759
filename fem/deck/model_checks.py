"""Model checks of the reader: what a deck defines that reads but is probably not meant (two
nodes at one place, members too stiff to compute with, joining the same nodes or leaning a
little, massless materials, supports given twice, springs and inertia that act nowhere, loads
straight into supports). Each finding is a located Note, or a DeckError where the model could
not mean anything; the plausibility of sizes and units is in deck.plausible."""

from __future__ import annotations

import math

import numpy as np

from ..errors import DeckError
from ..model import DIRECTIONS
from ..notes import Note

__all__ = ["COINCIDENT", "close_pairs", "coincident_nodes", "huge_members", "idle_inertia", "idle_spring",
           "leaning_members", "loads_on_supports", "massless_materials", "parallel_members", "repeated_support", "support_repeats"]

# Nodes (and member ends) closer than this fraction of the model's size (bounding-box diagonal)
# are one place: 0.03 mm on a 30 m mast, far below any dimension that can be built or typed on
# purpose, and far above the round-off of computed coordinates (1e-16). A member that short
# would also be ~1e18 times stiffer in bending than its neighbours.
COINCIDENT = 1e-6


def huge_members(mems, cols, axis) -> None:
    """Refuse a member whose stiffness or mass entries would be beyond what the assembly can
    compute with (limits.HUGE): E = 1e308 Pa on a 1 mm member overflows E A / L to inf and
    the transforms to NaN. Worked in log10 so the check itself cannot overflow."""
    from ..limits import HUGE

    if not len(mems):
        return
    with np.errstate(divide="ignore"):          # log10(0) = -inf: a zero term is no risk
        lg = {k: np.log10(np.abs(cols[k])) for k in ("E", "G", "rho", "A", "Iy", "Iz", "J", "carried_mass")}
        lL = np.log10(np.linalg.norm(axis, axis=1))
    lI = np.maximum(lg["Iy"], lg["Iz"])
    terms = {
        "axial stiffness E*A/L": (lg["E"] + lg["A"] - lL, "N/m"),
        "torsional stiffness G*J/L": (lg["G"] + lg["J"] - lL, "N*m"),
        "bending stiffness 12*E*I/L^3": (np.log10(12) + lg["E"] + lI - 3 * lL, "N/m"),
        "bending stiffness 4*E*I/L": (np.log10(4) + lg["E"] + lI - lL, "N*m"),
        "mass (density*A + carried_mass)*L": (np.log10(2) + np.maximum(lg["rho"] + lg["A"], lg["carried_mass"]) + lL, "kg"),
        "rotary mass density*(Iy + Iz)*L": (np.log10(2) + lg["rho"] + lI + lL, "kg*m^2"),
    }
    limit = math.log10(HUGE)
    for what, (x, unit) in terms.items():
        over = np.flatnonzero(x > limit)
        if len(over):
            k = int(over[0])
            m = mems[k]
            raise DeckError(f"member {m['name']}: its {what} is about 1e{x[k]:.0f} {unit}, beyond the "
                            f"{HUGE:.0e} that can be computed with (length {10 ** lL[k]:.3g} m)", m["loc"],
                            "check the units of the material and section values and the member length")


def parallel_members(mems, conn) -> list[Note]:
    """Two members joining the same two nodes: both act, which a copied line does silently
    (built-up members may be meant, so it is not refused)."""
    if len(conn) < 2:
        return []
    ends = np.sort(conn, axis=1)
    order = np.lexsort((ends[:, 1], ends[:, 0]))
    same = np.flatnonzero((np.diff(ends[order], axis=0) == 0).all(axis=1))
    out = []
    for k in same[:20]:
        a, b = mems[order[k]], mems[order[k + 1]]
        if b["loc"].line < a["loc"].line and b["loc"].file == a["loc"].file:
            a, b = b, a
        out.append(Note(b["loc"], f"member {b['name']} joins the same two nodes as member {a['name']} "
                                  f"(at {a['loc']}); both act, with their stiffness and mass added"))
    return out


def leaning_members(mems, axis, cols, up, truss) -> list[Note]:
    """Members a little off vertical (1 % to 10 % horizontal projection) with a section that is
    not the same about both axes and no `up`: the default axes follow the inclined-member rule
    there, which can turn the section 90 degrees from a plumb neighbour's (members under 1 %
    count as vertical; see elements.frame.LEAN_VERTICAL)."""
    from ..geometry import LEAN_VERTICAL

    length = np.linalg.norm(axis, axis=1)
    lean = np.hypot(axis[:, 0], axis[:, 1]) / np.where(length > 0, length, 1.0)
    unequal = np.abs(cols["Iy"] - cols["Iz"]) > 1e-3 * np.maximum(cols["Iy"], cols["Iz"])
    odd = np.flatnonzero((lean >= LEAN_VERTICAL) & (lean < 0.1) & unequal & np.isnan(up).any(axis=1) & ~truss)
    out = []
    for k in odd[:10]:
        m = mems[k]
        out.append(Note(
            m["loc"], f"member {m['name']} leans {np.degrees(np.arcsin(lean[k])):.2g} deg from vertical, more than "
            f"the {np.degrees(np.arcsin(LEAN_VERTICAL)):.2g} deg within which members count as vertical, so its "
            "section axes follow the rule for inclined members and may be turned 90 deg from those of a plumb "
            "column; give `up` to set them"))
    if len(odd) > 10:
        out.append(Note(mems[odd[10]]["loc"], f"{len(odd) - 10} more members lean like this"))
    return out


def repeated_support(nm, dirs, held, where, first) -> bool:
    """A second support statement on a node: supports add up. Asking for less than is already
    held (fixed, then pinned) is refused, since the earlier support would silently win; True
    for the same directions again (a warning)."""
    if not held[[DIRECTIONS.index(d) for d in dirs]].all():
        return False                                   # it adds directions: they add up
    have = ", ".join(d for d, x in zip(DIRECTIONS, held) if x)
    if held.sum() > len(set(dirs)):
        raise DeckError(f"support on node {nm} ({', '.join(dirs)}) conflicts with the support at {first}, "
                        f"which already holds {have} there: supports add up, so the node would stay held "
                        f"in {have}", where,
                        f"give node {nm} one support: leave it out of the earlier one (e.g. a group or "
                        "pattern without it)")
    return True


def support_repeats(where, again: list[str]) -> Note:
    """A support that repeats earlier ones at the nodes `again` ("N3 (at rack.deck:12:1)")."""
    shown = ", ".join(again[:3]) + (", ..." if len(again) > 3 else "")
    return Note(where, f"this support repeats an earlier one at {len(again)} node(s), {shown}; remove one of them")


def idle_spring(where, held: list[str]) -> Note:
    """A spring every direction of which a support already holds ("N3 uz")."""
    shown = ", ".join(held[:5]) + (", ..." if len(held) > 5 else "")
    return Note(where, f"this spring acts only where a support already holds the node ({len(held)}: {shown}), "
                       "so it has no effect; to model a flexible support, leave those directions out of the support")


def idle_inertia(where, idle: dict[str, str]) -> Note:
    """Rotary inertia of a mass at nodes whose rotations nothing keeps (node -> directions)."""
    shown = "; ".join(f"{nm} ({d})" for nm, d in list(idle.items())[:5]) + (", ..." if len(idle) > 5 else "")
    return Note(where, f"the rotary inertia of this mass is left out at {len(idle)} node(s), {shown}: no beam end "
                       "there keeps those rotations (truss members and released ends carry no moment), so they have "
                       "no stiffness and are held; connect a beam member without that release (or a rotational "
                       "spring) if the inertia matters")


def loads_on_supports(cases, restraint, node_names) -> list[Note]:
    """Node loads that act only in held directions (a warning) and initial values at held
    nodes (refused)."""
    out = []
    for c in cases:
        for item in c.loads:
            if item.kind in ("force", "moment"):
                first = 0 if item.kind == "force" else 3
                acts = np.asarray(item.vector) != 0
                held = restraint[item.targets, first:first + 3] & acts
                if acts.any() and (held == acts).all():          # at every node it names
                    at = [f"{node_names[item.targets[k]]} {DIRECTIONS[first + d]}" for k, d in np.argwhere(held)]
                    shown = ", ".join(at[:4]) + (", ..." if len(at) > 4 else "")
                    out.append(Note(item.location, f"case {c.name}: this {item.kind} acts only in directions a "
                                                   f"support holds ({shown}), so it goes straight into the support "
                                                   "and moves nothing; check the node names or pattern"))
            if item.kind in ("displacement", "velocity"):
                held = restraint[item.targets, :3] & (item.vector != 0)
                if held.any():
                    k, d = np.argwhere(held)[0]
                    raise DeckError(f"case {c.name}: initial {item.kind} in {DIRECTIONS[d]} at node "
                                    f"{node_names[item.targets[k]]}, which is restrained there and cannot move",
                                    item.location, "give initial values at free nodes only")
    return out


# Our choice: below this many nodes all pairwise distances (in blocks of about 1e6) cost a few
# milliseconds, less than importing scipy.spatial (0.1-0.3 s of `quaver check`'s start-up)
_ALL_PAIRS_NODES = 2000


def close_pairs(coords, tol: float) -> np.ndarray:
    """The pairs (i, j), i < j, of points `coords` (n, 3) at most `tol` apart, (k, 2) in no
    particular order: every distance on small models, a k-d tree on large ones."""
    coords = np.asarray(coords, dtype=float)
    n = len(coords)
    if n > _ALL_PAIRS_NODES:
        from scipy.spatial import cKDTree

        return cKDTree(coords).query_pairs(tol, output_type="ndarray").reshape(-1, 2)
    found = []
    step = max(1, 1_000_000 // max(n, 1))
    for i0 in range(0, n, step):
        block = coords[i0:i0 + step]
        d = np.sqrt(((block[:, None, :] - coords[None, :, :]) ** 2).sum(axis=2))
        i, j = np.nonzero(d <= tol)
        keep = j > i + i0
        found.append(np.column_stack([i[keep] + i0, j[keep]]))
    return np.concatenate(found).astype(np.intp).reshape(-1, 2)


def coincident_nodes(nodes: dict, names, coords, tol, used, joined=frozenset()) -> list[Note]:
    """Distinct nodes at one place are not connected: an error when both carry something
    (members, supports, springs, masses, loads), a warning when one of them is bare.
    `nodes` maps a name to (coordinates, where); `joined` holds the pairs (i, j), i < j, that a
    rigid link connects (a hinge between two nodes at one place), which are meant."""
    if len(coords) < 2:
        return []
    out = []
    for a, b in sorted(close_pairs(coords, tol).tolist(), key=lambda p: (max(p), min(p))):
        a, b = min(a, b), max(a, b)           # b is the one defined later
        if (a, b) in joined:
            continue
        first, where = nodes[names[a]][1], nodes[names[b]][1]
        text = (f"node {names[b]} is at the same place as node {names[a]} (at {first}), within {tol:.3g} m "
                f"({COINCIDENT:g} of the model size); distinct nodes are not connected")
        if used[a] and used[b]:
            raise DeckError(text + ", so the members, supports or loads on them act on separate parts",
                            where, f"use one name for both (refer to {names[a]} everywhere)")
        bare = names[b] if not used[b] else names[a]
        out.append(Note(where, f"{text}; {bare} carries nothing (remove it, or use one name)"))
    return out


def massless_materials(materials: dict, defined: dict, mems, carried_mass, modal) -> list[Note]:
    """Materials of zero density whose members carry no mass in the modes."""
    out = []
    for name, mat in materials.items():
        if mat.density != 0:
            continue
        count = sum(1 for k, m in enumerate(mems) if m["material"][0] == name and carried_mass[k] == 0)
        if count:
            where = defined[("material", name)][1]
            out.append(Note(where, f"material {name} has zero density, so {count} member(s) of it carry no mass in "
                                   f"modes case {', '.join(modal)}; give its density if their mass matters"))
    return out


def released_motion(released: np.ndarray) -> str | None:
    """A rigid motion of a member that its end releases (12,) leave free, in words, or None.

    The member's rigid motions (translation a, rotation t; end j moves by a + t x L e_x) must
    each move some end DOF that is kept, else the released block of its stiffness is singular."""
    if not released.any():
        return None                       # no releases: every rigid motion moves a kept DOF
    G = np.zeros((12, 6))
    G[0:3, 0:3] = G[6:9, 0:3] = G[3:6, 3:6] = G[9:12, 3:6] = np.eye(3)
    G[7, 5], G[8, 4] = 1.0, -1.0          # t_z moves end j along local y, t_y against local z
    kept = G[~released]
    if len(kept) >= 6 and np.linalg.matrix_rank(kept) == 6:
        return None
    v = np.linalg.svd(np.vstack([kept, np.zeros((6, 6))]))[2][-1]
    words = ["slide along its axis", "move along its local y", "move along its local z",
             "twist about its axis", "turn about its local y", "turn about its local z"]
    return words[int(np.argmax(np.abs(v)))]
