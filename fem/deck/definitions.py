"""What a deck's statements define, each with where it is written, and the name spaces that
keep the names apart; the statement handlers fill it in, the model is built from it."""

from __future__ import annotations

import fnmatch
from itertools import repeat

import numpy as np
from lark import Token

from ..errors import DeckError, Location, suggest
from ..model import Material, Section
from ..notes import Note

__all__ = ["Definitions", "NO_RELEASES"]

# A member without releases (most of them) shares this read-only row; a release makes its own.
NO_RELEASES = np.zeros(12, bool)
NO_RELEASES.flags.writeable = False


class Definitions:
    """The located definitions of one deck. `name` works out a written name (its indices),
    `loc` locates a tree or token, `notes` collects what is worth saying without refusing."""

    def __init__(self, name, loc, notes: list):
        self.name, self.loc, self.notes = name, loc, notes
        self.title = ""
        self.nodes: dict[str, tuple] = {}              # name -> (coordinates, where)
        self.members: dict[str, dict] = {}
        self.materials: dict[str, Material] = {}
        self.sections: dict[str, Section] = {}
        self.section_params: dict[str, tuple[str, dict]] = {}   # name -> (shape, SI dimensions)
        self.groups: dict[str, list[str]] = {}
        self.supports: list = []                       # (target, directions, where)
        self.springs: list = []                        # (target, {direction: stiffness}, where)
        self.masses: list = []                         # (target, (m, m, m, Ixx, Iyy, Izz), where)
        self.off_masses: list = []                     # (target, m, inertia (3,), offset (3,), where)
        self.links: list = []                          # (name, reference token, [targets], dirs, where)
        self.node_springs: list = []                   # (name, node A, node B, k (6,), axes (3, 3), zeta, where)
        self.cases: list = []                          # (name, kind, items, where, assumed, scope)
        self.combos: list = []                         # (name, tree, where, scope)
        self.envelopes: list = []                      # (name, [(case name, where)], where)
        self.excitations: list = []                    # (Machine or FrequencyBand, where, node token or None)
        self.settings: dict = {}                       # key -> (value, where)
        self.defined: dict[tuple[str, str], tuple[str, Location]] = {}   # (space, name) -> (kind, where)
        self.mixed_seen: set[tuple[str, str]] = set()   # (group, kind) already warned as mixed

    def define(self, space: str, kind: str, name: str, where: Location) -> None:
        """Record where `name` is defined in its name space; a second definition is an error
        naming the first (cases and combinations share one space: both are result names)."""
        first = self.defined.get((space, name))
        if first is not None:
            fkind, fwhere = first
            what = "is defined twice" if fkind == kind else f"has the same name as {fkind} {name}"
            raise DeckError(f"{kind} {name} {what} (first at {fwhere})", where,
                            "give one of them another name")
        self.defined[(space, name)] = (kind, where)

    def once(self, seen: set, key: str, where: Location, what: str) -> None:
        """A key given twice in one statement is an error rather than the last one winning."""
        if key in seen:
            raise DeckError(f"{what}: '{key}' is given twice", where, "keep one of them")
        seen.add(key)

    def not_a_group(self, name: str, kind: str, where: Location) -> None:
        """A group and a node or member of one name would make every reference ambiguous."""
        for space in ("group", "node", "member"):
            first = self.defined.get((space, name))
            if first is not None and first[0] != kind:
                raise DeckError(f"{kind} {name} has the same name as {first[0]} {name} (at {first[1]}); "
                                "a name in a support, load or group could then mean either", where,
                                "give one of them another name")

    def taken(self, names: list[str]) -> bool:
        """True when node and member `names`, defined together, hold a name twice or one already
        defined as a node, member or group (what `define` and `not_a_group` refuse one by one)."""
        unique = set(names)
        if len(unique) != len(names):
            return True
        spaces, defined = ("node", "member", "group"), self.defined
        if len(defined) < 3 * len(names):
            return any(space in spaces and n in unique for space, n in defined)
        return any(any(map(defined.__contains__, zip(repeat(space), names))) for space in spaces)

    def targets(self, t, table: dict, what: str) -> list[str]:
        """Resolve a name, group or glob pattern to names defined in `table`."""
        if isinstance(t, Token) and t.type == "PATTERN":
            hit = [n for n in table if fnmatch.fnmatchcase(n, str(t))]
            if not hit:
                raise DeckError(f"pattern '{t}' matches no {what}", self.loc(t))
            return hit
        n = self.name(t)
        if n in self.groups:
            out = [m for m in self.groups[n] if m in table]
            if not out:
                raise DeckError(f"group '{n}' holds no {what}", self.loc(t))
            left = len(self.groups[n]) - len(out)
            if left and (n, what) not in self.mixed_seen:
                # a group of nodes and members: this statement takes only its kind
                self.mixed_seen.add((n, what))
                self.notes.append(Note(self.loc(t), f"group '{n}' also holds {left} name(s) that are not a {what}, "
                                                    "which this statement leaves out"))
            return out
        if n not in table:
            self.other_kind(n, what, t)
            raise DeckError(f"{what} '{n}' is not defined; {suggest(n, list(table) + list(self.groups))}", self.loc(t))
        return [n]

    def other_kind(self, n: str, what: str, t) -> None:
        """Refuse a name of another kind (a node where a member is wanted) by what it is."""
        kinds = ("node", "member", "material", "section", "result", "let")
        kind = next((self.defined[(k, n)][0] for k in kinds if (k, n) in self.defined), None)
        if kind is None or kind in what.split(" or "):
            return
        acts = {"member": "a line load acts on members", "node": "this statement acts on nodes"}.get(
            what, f"this statement takes a {what}")
        hint = ""
        if kind == "member" and n in self.members:
            m = self.members[n]
            hint = f"member {n} runs from node {m['i'][0]} to node {m['j'][0]}"
        elif kind == "node" and what == "member":
            hint = f"for a load at the node write force {n} = (fx, fy, fz)"
        article = "an" if kind[0] in "aeiou" else "a"
        raise DeckError(f"'{n}' is {article} {kind}, not a {what}; {acts}", self.loc(t), hint)
