"""Statement handlers: each statement of a deck checked where it is written and recorded, with
its location, in the deck's Definitions; loops run their bodies (at once, or pass by pass)
under a cap on the statements they execute in all."""

from __future__ import annotations

import difflib
import math
from pathlib import Path

import numpy as np
from lark import Token, Tree

from ..errors import DeckError, Location, suggest
from ..geometry import offset_mass
from ..model import DIRECTIONS, Material, Section
from ..notes import Note
from ..sections import CATALOGUE, SHAPES, catalogue_designations, catalogue_entry, make_section
from . import fast_batch, fast_lines, vector_loops
from . import units as U
from .definitions import NO_RELEASES, Definitions
from .excitations import excitation_statement
from .expressions import WILD, Evaluator
from .links import end_offset, link_statement
from .model_checks import released_motion
from .node_springs import node_spring_statement
from .sources import Sources, file_name

__all__ = ["CASE_KINDS", "LOOP_STATEMENTS", "MAX_COORDINATE", "Statements"]

# A million kilometres: beyond any structure, and it keeps products of coordinates (lengths
# cubed in the stiffness) well inside the floating-point range.
MAX_COORDINATE = 1e9
# Statements a deck's loops may execute in all, nested loops and included files counted pass by
# pass (our choice): a node or member in a loop reads in about 20 us (deck_reading.py, load 8-12),
# so this bounds a deck's loops to a minute or less, while a model of a hundred thousand members
# and nodes is far inside it. A mistyped range (0..999999 nested twice) is refused at once.
LOOP_STATEMENTS = 1_000_000
CASE_KINDS = ("static", "modes", "free", "history", "harmonic", "spectrum", "buckling")


class Statements:
    """Runs a deck's statements in order into `defs`, values through `ev`, files through
    `sources`; `notes` collects what is worth saying without refusing."""

    def __init__(self, sources: Sources, ev: Evaluator, defs: Definitions, notes: list):
        self.sources, self.ev, self.defs, self.notes = sources, ev, defs, notes
        self.loc = sources.loc
        self.let_sites: dict[str, tuple] = {}     # parameter -> (file, line, column) of its let
        self.loop_sites: list[Location] = []      # the enclosing loops, outermost first
        self.loop_steps = 0                       # statements executed inside loops so far

    def read_file(self, path: Path, where: Location | None = None) -> None:
        """Run the statements of the deck file at `path` (an include when `where` names it)."""
        path, tree, quick = self.sources.load(path, where)
        with self.sources.reading(path):
            self.run(tree.children, quick, path)

    def run(self, stmts, quick: list, path: Path) -> None:
        """Run a file's statements, lark's `stmts` and the `quick` lines, in the file's order."""
        shown, src = self.sources.shown(path), self.sources.lines[path]
        for item in fast_lines.in_order(stmts, quick):
            if isinstance(item, Tree):
                self.statement(item)
            else:
                fast_batch.run(self, item, path, shown, src)

    def statement(self, s: Tree) -> None:
        if self.loop_sites:
            self.loop_steps += 1
            if self.loop_steps > LOOP_STATEMENTS:
                raise DeckError(f"the deck's loops execute more than {LOOP_STATEMENTS:,} statements in all "
                                "(nested loops multiply their passes)", self.loop_sites[0], _LOOP_HINT)
        getattr(self, "st_" + s.data)(s)

    def fixed_name(self, t):
        """A support's, spring's or mass's target with its indices worked out now, in this pass
        of a loop: a token of the whole name at the same place (N[up] -> N3); a pattern or a
        plain name as written. The node table is searched when the model is built."""
        if isinstance(t, Token) or len(t.children) < 2 or t.children[1] is None:
            return t
        first = t.children[0]
        tok = Token("NAME", self.ev.name(t), first.start_pos, first.line, first.column, first.end_line,
                    first.end_column, first.end_pos)
        token_file = self.sources.token_file
        token_file[id(tok)] = token_file.get(id(first)) or self.sources.stack[-1]
        return tok

    # ---------- parameters, units, files, settings
    def st_title(self, s):
        self.defs.title = str(s.children[0])[1:-1]

    def st_let(self, s):
        name, where = str(s.children[0]), self.loc(s)
        site = (str(self.sources.stack[-1]), where.line, where.column)
        self.ev.let_name(name, where)
        # a let inside a loop is re-evaluated on every pass; a second let elsewhere would change
        # the parameter for the statements after it only, silently, so it is refused
        first = self.let_sites.get(name)
        if first is not None and first != site:
            raise DeckError(f"parameter '{name}' is defined twice (first at {self.defs.defined[('let', name)][1]})",
                            where, "give the new value another name")
        if first is None:
            self.defs.defined[("let", name)] = ("parameter", where)
        self.let_sites[name] = site
        if name in self.ev.overrides and self.loop_sites:
            raise DeckError(f"--set {name}: the let of {name} at {where} is inside the loop at {self.loop_sites[-1]}, "
                            "which works it out again on every pass, so one value cannot replace it",
                            None, "move the let out of the loop if it is the same on every pass")
        self.ev.let(name, s.children[1], where)

    def st_assume(self, s):
        self.ev.assume(s.children[0], s.children[1], self.loc(s))

    def st_include(self, s):
        rel = str(s.children[0])[1:-1]
        file_name(rel, "include", self.loc(s.children[0]))
        self.read_file(self.sources.stack[-1].parent / rel, self.loc(s.children[0]))

    def st_settings(self, s):
        settings = self.defs.settings
        for opt in s.children:
            if opt is None:
                continue
            key, val = str(opt.children[0]), opt.children[1]
            if key in settings:
                raise DeckError(f"settings: '{key}' is given twice (first at {settings[key][1]})",
                                self.loc(opt), "keep one of them")
            word = str(val.children[0]) if isinstance(val, Tree) and val.data == "var" else None
            settings[key] = (word if word is not None else val, self.loc(opt))

    # ---------- materials and sections
    def st_material(self, s):
        name = self.ev.name(s.children[0])
        self.defs.define("material", "material", name, self.loc(s))
        props, seen, at = {}, set(), {}
        for opt in s.children[1:]:
            if opt is None:
                continue
            key = str(opt.children[0])
            self.defs.once(seen, key, self.loc(opt), f"material {name}")
            at[key] = self.loc(opt)
            dims = {"E": U.PRESSURE, "G": U.PRESSURE, "nu": U.NONE, "density": U.DENSITY, "yield": U.PRESSURE}
            if key not in dims:
                raise DeckError(f"material {name}: unknown property '{key}'; {suggest(key, dims)}", self.loc(opt))
            props[key] = self.ev.value(opt.children[1], dims[key], f"material {name}: {key}")
        where = self.loc(s)
        if "E" not in props:
            raise DeckError(f"material {name} needs E (Young's modulus)", where)
        if props["E"] <= 0:
            raise DeckError(f"material {name}: E must be positive", at["E"])
        if "G" not in props:
            if "nu" not in props:
                raise DeckError(f"material {name} needs G or nu", where)
            if not -1 < props["nu"] < 0.5:
                raise DeckError(f"material {name}: nu must lie between -1 and 0.5", at["nu"])
            props["G"] = props["E"] / (2 * (1 + props["nu"]))
        if props["G"] <= 0:
            raise DeckError(f"material {name}: G must be positive", at.get("G", where))
        dens = props.get("density", 0.0)
        if dens < 0:
            raise DeckError(f"material {name}: density cannot be negative", at["density"])
        if props.get("yield", 1.0) <= 0:
            raise DeckError(f"material {name}: yield (the yield strength) must be positive", at["yield"])
        self.defs.materials[name] = Material(name, props["E"], props["G"], dens, props.get("yield"))

    def st_section(self, s):
        name = self.ev.name(s.children[0])
        self.defs.define("section", "section", name, self.loc(s))
        shape = str(s.children[1])
        kws = [kw for kw in s.children[2:] if kw is not None]
        self.section_names(name, s.children[1], kws)
        params, seen = {}, set()
        for kw in kws:
            key = str(kw.children[0])
            self.defs.once(seen, key, self.loc(kw), f"section {name}")
            dim = {"A": (0, 2, 0), "Avy": (0, 2, 0), "Avz": (0, 2, 0), "Iy": (0, 4, 0),
                   "Iz": (0, 4, 0), "J": (0, 4, 0), "Wy": (0, 3, 0), "Wz": (0, 3, 0),
                   "Wt": (0, 3, 0)}.get(key, U.LENGTH)
            params[key] = self.ev.value(kw.children[1], dim, f"section {name}: {key}")
        try:
            props = make_section(shape, params)
        except ValueError as exc:
            raise DeckError(f"section {name}: {exc}", self.loc(s)) from None
        except ArithmeticError:
            raise DeckError(f"section {name}: the dimensions are too large to compute with", self.loc(s)) from None
        vals = [props.A, props.Iy, props.Iz, props.J, props.Avy, props.Avz]
        if not all(math.isfinite(v) for v in vals) or min(vals[:4]) <= 0:
            raise DeckError(f"section {name}: its properties are not finite and positive "
                            f"(A={props.A:.3g}, Iy={props.Iy:.3g}, Iz={props.Iz:.3g}, J={props.J:.3g})", self.loc(s))
        self.defs.sections[name] = Section(name, props, shape=shape, dims=tuple(params.items()))
        self.defs.section_params[name] = (shape, params)

    def st_section_listed(self, s):
        """section NAME = catalogue "HEB 300": a standard section by its designation."""
        name = self.ev.name(s.children[0])
        self.defs.define("section", "section", name, self.loc(s))
        word, text = s.children[1], s.children[2]
        if str(word) != CATALOGUE:
            raise DeckError(f"section {name}: a quoted designation follows the word '{CATALOGUE}', not '{word}'",
                            self.loc(word), f"write section {name} = {CATALOGUE} {text}")
        try:
            entry = catalogue_entry(str(text)[1:-1])
        except ValueError as exc:
            hint = "designations ignore case and spaces; docs/sections.md lists the catalogue"
            if "; families:" in str(exc):
                hint = ("the catalogue holds " + _family_ranges()
                        + "; a section it lacks is built from its dimensions, e.g. ishape(d, bf, tf, tw, r)")
            raise DeckError(f"section {name}: {exc}", self.loc(text), hint) from None
        params = {"designation": entry.designation}
        self.defs.sections[name] = Section(name, make_section(CATALOGUE, params), entry.designation,
                                           CATALOGUE, tuple(params.items()))
        self.defs.section_params[name] = (CATALOGUE, params)

    def section_names(self, name: str, shape_tok, kws) -> None:
        """Refuse an unknown shape or parameter name at its token, with the names that fit."""
        shape = str(shape_tok)
        if shape == CATALOGUE:
            raise DeckError(f"section {name}: a {CATALOGUE} section is named by its designation in double quotes, "
                            "not by parameters in brackets", self.loc(shape_tok),
                            f'write section {name} = {CATALOGUE} "HEB 300"')
        if shape not in SHAPES:
            near = suggest(shape, SHAPES)
            near = "; " + near if near.startswith("did you mean") else ""
            raise DeckError(f"section {name}: unknown shape '{shape}'{near}", self.loc(shape_tok),
                            "shapes: " + ", ".join(f"{k}({', '.join(v[1] + v[2])})" for k, v in SHAPES.items()))
        required, optional = SHAPES[shape][1:]
        allowed = required + optional
        form = f"{shape}({', '.join(required + tuple(f'[{o}]' for o in optional))})"
        given = {str(kw.children[0]) for kw in kws}
        for kw in kws:
            key = str(kw.children[0])
            if key in allowed:
                continue
            near = [a for a in _PARAM_WORDS.get(key.lower(), ()) if a in allowed and a not in given]
            near = near or difflib.get_close_matches(key, [a for a in allowed if a not in given], n=2, cutoff=0.5)
            missing = [a for a in required if a not in given]
            if not near and len(missing) == 1:
                near = missing
            tip = "did you mean " + " or ".join(f"'{a}'" for a in near) + "? " if near else ""
            raise DeckError(f"section {name}: {shape} has no parameter '{key}'; {tip}it takes {form}",
                            self.loc(kw.children[0]))
        missing = [a for a in required if a not in given]
        if missing:
            raise DeckError(f"section {name}: {shape} needs {', '.join(missing)}; it takes {form}", self.loc(shape_tok))

    # ---------- nodes and members
    def st_node(self, s):
        name = self.ev.name(s.children[0])
        where = self.loc(s)
        self.new_name("node", name, where)
        self.place_node(name, self.ev.vector(s.children[1], U.LENGTH, f"node {name}"), where)

    def new_name(self, kind: str, name: str, where: Location) -> None:
        """A node's or member's name defined at `where` (once, and not a group's)."""
        self.defs.define(kind, kind, name, where)
        self.defs.not_a_group(name, kind, where)

    def place_node(self, name: str, xyz: np.ndarray, where: Location) -> None:
        if max(map(abs, xyz.tolist())) > MAX_COORDINATE:     # finite values: as np.abs(xyz).max()
            raise DeckError(f"node {name}: a coordinate of {np.abs(xyz).max():.3g} m is beyond any structure "
                            f"(the limit is {MAX_COORDINATE:g} m)", where, "check the units of the coordinates")
        self.defs.nodes[name] = (xyz, where)

    @staticmethod
    def plain_member(name: str, i, j, kind: str, section, material, where: Location) -> dict:
        """A member's record before its options: ends, section and material as (name, token)."""
        return dict(name=name, i=i, j=j, kind=kind, section=section, material=material, roll=0.0, up=None,
                    carried_mass=0.0, releases=NO_RELEASES, loc=where, pretension=0.0)

    def st_member(self, s):
        ch = s.children
        ev = self.ev
        name = ev.name(ch[0])
        where = self.loc(s)
        self.new_name("member", name, where)
        kind = str(ch[3])
        if kind not in ("beam", "truss"):
            raise DeckError(f"member {name}: kind must be 'beam' or 'truss', not '{kind}'", self.loc(ch[3]))
        m = self.plain_member(name, (ev.name(ch[1]), ch[1]), (ev.name(ch[2]), ch[2]), kind,
                              (ev.name(ch[4]), ch[4]), (ev.name(ch[5]), ch[5]), where)
        seen = set()
        for opt in ch[6:]:
            if opt.data == "release":
                end = str(opt.children[0])
                if end not in ("i", "j"):
                    raise DeckError(f"member {name}: release end must be 'i' or 'j', not '{end}'", self.loc(opt))
                if kind == "truss":
                    raise DeckError(f"member {name}: a truss member carries axial force only, so a release does "
                                    "nothing", self.loc(opt), "remove the release, or make the member a beam")
                for d in opt.children[1].children:
                    if str(d) not in DIRECTIONS:
                        raise DeckError(f"unknown direction '{d}'; {suggest(str(d), DIRECTIONS)}", self.loc(d))
                    m["releases"] = m["releases"] | (np.arange(12) == DIRECTIONS.index(str(d)) + 6 * (end == "j"))
                continue
            key, val = str(opt.children[0]), opt.children[1]
            self.defs.once(seen, key, self.loc(opt), f"member {name}")
            if key == "roll":
                m["roll"] = ev.angle(val, f"member {name}: roll")
            elif key == "up":
                m["up"] = ev.vector(val, U.NONE, f"member {name}: up")
            elif key == "carried_mass":
                m["carried_mass"] = ev.value(val, (1, -1, 0), f"member {name}: carried_mass")
                if m["carried_mass"] < 0:
                    raise DeckError(f"member {name}: carried_mass (mass per length) cannot be negative", self.loc(opt))
            elif key in ("offset_i", "offset_j"):
                m.setdefault("offsets", {})[key[-1]] = end_offset(self, val, f"member {name}: {key}")
            elif key == "pretension":
                m["pretension"] = ev.value(val, U.FORCE, f"member {name}: pretension")
                if kind != "truss" or not m["pretension"] >= 0:
                    raise DeckError(f"member {name}: pretension is the initial tension of a truss member (a guy or "
                                    "cable), a force of zero or more", self.loc(opt), "e.g. pretension = 12 kN")
            elif key == "nsm":
                raise DeckError(f"member {name}: 'nsm' is not an option here; the mass per length a member carries "
                                "without stiffening it (contents, insulation, trays) is written carried_mass",
                                self.loc(opt.children[0]), "e.g. carried_mass = 12 kg/m")
            else:
                raise DeckError(f"member {name}: unknown option '{key}'; "
                                f"{suggest(key, ['roll', 'up', 'carried_mass', 'offset_i', 'offset_j', 'pretension'])}", self.loc(opt))
        if kind == "truss" and "offsets" in m:
            raise DeckError(f"member {name}: a truss member carries its force along the line between its nodes, so "
                            "it takes no end offsets", self.loc(s), "make it a beam, or move its nodes")
        motion = released_motion(m["releases"]) if kind == "beam" else None
        if motion:
            raise DeckError(f"member {name}: its end releases let it {motion} with nothing to resist it", self.loc(s),
                            "release a direction at one end only (a hinge keeps the other end's rotations)")
        self.defs.members[name] = m

    # ---------- supports, springs, masses, groups
    def st_support(self, s):
        target, how = s.children
        if isinstance(how, Token):
            fixes = {"fixed": DIRECTIONS, "pinned": DIRECTIONS[:3]}
            if str(how) not in fixes:
                raise DeckError(f"support must be 'fixed', 'pinned' or a list like (ux, uy); {suggest(str(how), fixes)}", self.loc(how))
            dirs = fixes[str(how)]
        else:
            dirs = []
            for d in how.children:
                if str(d) not in DIRECTIONS:
                    raise DeckError(f"unknown direction '{d}'; {suggest(str(d), DIRECTIONS)}", self.loc(d))
                dirs.append(str(d))
        self.defs.supports.append((self.fixed_name(target), dirs, self.loc(s)))

    def st_spring(self, s):
        target, *kws = s.children
        vals = {}
        for kw in kws:
            d = str(kw.children[0])
            if d not in DIRECTIONS:
                raise DeckError(f"unknown direction '{d}'; {suggest(d, DIRECTIONS)}", self.loc(kw))
            if d in vals:
                raise DeckError(f"spring: '{d}' is given twice", self.loc(kw), "keep one of them")
            dim = (1, 0, -2) if d.startswith("u") else U.MOMENT
            vals[d] = self.ev.value(kw.children[1], dim, f"spring {d}")
            if vals[d] < 0:
                raise DeckError(f"spring {d}: a stiffness cannot be negative", self.loc(kw))
            not_huge(vals[d], f"spring {d}", self.loc(kw))
        self.defs.springs.append((self.fixed_name(target), vals, self.loc(s)))

    st_node_spring = node_spring_statement      # fem/deck/node_springs.py
    def st_mass(self, s):
        target, value, *opts = s.children
        m = self.ev.value(value, U.MASS, "mass")
        inertia = np.zeros(3)
        offset = None
        seen = set()
        for opt in opts:
            self.defs.once(seen, str(opt.children[0]), self.loc(opt), "mass")
            if str(opt.children[0]) == "offset":
                offset = self.ev.vector(opt.children[1], U.LENGTH, "mass offset")
                if np.abs(offset).max() > MAX_COORDINATE:
                    raise DeckError(f"mass offset of {np.abs(offset).max():.3g} m is beyond any structure",
                                    self.loc(opt), "check the units of the offset")
                continue
            if str(opt.children[0]) != "inertia":
                raise DeckError(f"mass: unknown option '{opt.children[0]}'; use inertia = (Ixx, Iyy, Izz) or "
                                "offset = (dx, dy, dz)", self.loc(opt))
            inertia = self.ev.vector(opt.children[1], (1, 2, 0), "mass inertia")
        self.add_mass(target, m, inertia, offset, self.loc(s))

    def add_mass(self, target, m: float, inertia: np.ndarray, offset, where: Location) -> None:
        """A point mass `m` with its `inertia` (3,) about its centre, `offset` (3,) from its node or None,
        at `target` as written (its indices worked out now)."""
        if m < 0 or (inertia < 0).any():
            raise DeckError("a mass or inertia cannot be negative", where)
        for v in (m, *inertia):
            not_huge(v, "mass", where)
        target = self.fixed_name(target)
        about_node = inertia
        if offset is not None and offset.any():
            # the inertia about the node (parallel axes); the coupling terms are built with the model
            about_node = np.diagonal(offset_mass([m], [inertia], [offset])[0])[3:]
            self.defs.off_masses.append((target, m, inertia, offset, where))
        self.defs.masses.append((target, np.r_[m, m, m, about_node], where))

    st_link = link_statement                    # fem/deck/links.py
    def st_group(self, s):
        defs = self.defs
        name = self.ev.name(s.children[0])
        defs.define("group", "group", name, self.loc(s))
        defs.not_a_group(name, "group", self.loc(s))
        members = []
        for t in s.children[1:]:
            table = {**{k: 1 for k in defs.nodes}, **{k: 1 for k in defs.members}}
            members += defs.targets(t, table, "node or member")
        defs.groups[name] = members

    # ---------- cases and combinations (their values are worked out when the model is built)
    def st_case(self, s):
        name, kind, *items = s.children
        if str(kind) not in CASE_KINDS:
            raise DeckError(f"case {self.ev.name(name)}: unknown kind '{kind}'; {suggest(str(kind), CASE_KINDS)}",
                            self.loc(kind), "kinds: " + ", ".join(CASE_KINDS))
        self.defs.define("result", "case", self.ev.name(name), self.loc(s))
        self.defs.cases.append((self.ev.name(name), str(kind), [i for i in items if i is not None], self.loc(s),
                                dict(self.ev.assumed), self.ev.scope()))

    def st_combo(self, s):
        self.defs.define("result", "combination", self.ev.name(s.children[0]), self.loc(s))
        self.defs.combos.append((self.ev.name(s.children[0]), s.children[1], self.loc(s), self.ev.scope()))

    def st_envelope(self, s):
        name, *over = s.children
        self.defs.define("result", "envelope", self.ev.name(name), self.loc(s))
        self.defs.envelopes.append((self.ev.name(name), [(self.ev.name(o), self.loc(o)) for o in over], self.loc(s)))

    # ---------- machines and bands of excitation frequencies (fem/deck/excitations.py)
    def st_machine(self, s):
        excitation_statement(self, s, "machine")

    def st_band(self, s):
        excitation_statement(self, s, "band")

    # ---------- loops
    def st_loop(self, s):
        var, lo, hi, *body = s.children
        ev = self.ev
        a, b = ev.evaluate(lo), ev.evaluate(hi)
        for q in (a, b):
            if q.dim not in (U.NONE, WILD) or q.value != int(q.value):
                raise DeckError("loop bounds must be whole numbers", self.loc(s))
        passes = max(int(b.value) - int(a.value) + 1, 0)
        for sub in (x for st in body for x in st.iter_subtrees()):
            if sub.data == "let" and str(sub.children[0]) in ev.overrides:
                raise DeckError(f"--set {(nm := str(sub.children[0]))}: the let of {nm} at {self.loc(sub)} is inside "
                                f"the loop at {self.loc(s)}, which works it out again on every pass, so one value "
                                "cannot replace it", None,
                                "move the let out of the loop if it is the same on every pass")
        if not body:                    # nothing to repeat
            return
        if self.loop_steps + passes * len(body) > LOOP_STATEMENTS:
            again = f", and again on each pass of the loop at {self.loop_sites[-1]}" if self.loop_sites else ""
            raise DeckError(f"this loop would execute {passes:,} passes of {len(body)} statement(s){again}, taking "
                            f"the deck's loops past {LOOP_STATEMENTS:,} statements in all"
                            + (f" ({self.loop_steps:,} executed so far)" if self.loop_steps else ""),
                            self.loc(s), _LOOP_HINT)
        if b.value < a.value:
            w = Note(self.loc(s), f"loop range {a.value:g}..{b.value:g} is empty (a range counts up), so its "
                                  f"statements are skipped; write {b.value:g}..{a.value:g} to run them")
            if w not in self.notes:          # once, though an enclosing loop reads it again
                self.notes.append(w)
        name, first, last = str(var), int(a.value), int(b.value)
        with ev.counter(name):
            self.loop_sites.append(self.loc(s))
            self.sources.repeating += 1
            try:        # the common kind of body at once (fem/deck/vector_loops.py), else pass by pass
                for k in range(first, last + 1) if not vector_loops.run(self, name, first, last, body) else ():
                    ev.count(name, k)
                    for st in body:
                        self.statement(st)
            finally:
                self.loop_sites.pop()
                self.sources.repeating -= 1


def not_huge(v: float, what: str, where: Location) -> None:
    from ..limits import HUGE

    if abs(v) > HUGE:
        raise DeckError(f"{what} of {v:.3g} in SI units is beyond the {HUGE:.0e} that can be computed with", where,
                        "check the units")


_LOOP_HINT = (f"check the loop ranges: a deck's loops may execute at most {LOOP_STATEMENTS:,} statements, "
              "which keeps a mistyped range from running for hours")


def _family_ranges() -> str:
    """The catalogue's families with their first and last rows: 'IPE: IPE 80 to IPE 600; ...'."""
    families = dict.fromkeys(catalogue_entry(d).family for d in catalogue_designations())
    return "; ".join(f"{f}: {catalogue_designations(f)[0]} to {catalogue_designations(f)[-1]}" for f in families)


# words a user may write for a shape's parameters -> the names the shapes use
_PARAM_WORDS = {"thick": ("wall", "t"), "thickness": ("wall", "t"), "t": ("wall",), "wt": ("wall", "t"),
                "diameter": ("od", "d"), "dia": ("od", "d"), "d": ("od",), "outside": ("od",),
                "width": ("b", "bf"), "w": ("b", "bf"), "height": ("h", "d"), "depth": ("d", "h"),
                "flange": ("tf",), "web": ("tw",), "area": ("A",), "a": ("A",), "ix": ("J",), "it": ("J",)}
