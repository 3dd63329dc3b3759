"""Building the Model's arrays from a deck's located definitions: node coordinates, member
connectivity and properties (releases, up vectors), supports, springs, point masses, the cases
and the combinations' factors, with the model checks run on the way."""

from __future__ import annotations

import numpy as np
from lark import Tree

from ..errors import DeckError, suggest
from ..model import COMBINABLE, DIRECTIONS, Combination, Envelope, Model
from ..notes import Note
from ..sections import make_section, shear_follows_nu
from . import model_checks
from . import units as U
from .definitions import NO_RELEASES, Definitions
from .excitations import model_excitations
from .expressions import Evaluator
from .links import check_linked_starts, end_offsets, linked_nodes, mass_coupling, read_links, supported_references
from .model_checks import COINCIDENT
from .node_springs import read_node_springs
from .plausible import model_warnings

__all__ = ["build"]

_COLUMNS = ("E", "G", "rho", "A", "Iy", "Iz", "J", "Avy", "Avz", "roll", "carried_mass")


def build(defs: Definitions, ev: Evaluator, build_case, notes: list, references: dict) -> Model:
    """The Model of the definitions; `build_case(case, nidx, midx)` makes each case from its
    statement, and the notes found on the way are added to `notes` (the model's warnings);
    `references` holds each response case's start and modes case as written (name, where)."""
    node_names = list(defs.nodes)
    nidx = {n: k for k, n in enumerate(node_names)}
    coords = np.array([defs.nodes[n][0] for n in node_names]).reshape(-1, 3)
    mems = list(defs.members.values())
    lo, hi = (coords.min(axis=0), coords.max(axis=0)) if len(coords) else (np.zeros(3), np.zeros(3))
    tol = COINCIDENT * float(np.linalg.norm(hi - lo))
    conn, cols, up, releases, truss = _members(defs, mems, node_names, nidx, coords, tol, notes)
    axis = coords[conn[:, 1]] - coords[conn[:, 0]]
    model_checks.huge_members(mems, cols, axis)
    notes.extend(model_checks.parallel_members(mems, conn))
    notes.extend(model_checks.leaning_members(mems, axis, cols, up, truss))
    restraint = _restraints(defs, nidx, notes)
    springs = _springs(defs, nidx, restraint, notes)
    links = read_links(defs, nidx, restraint)
    node_springs = read_node_springs(defs, nidx)
    held = springs if node_springs is None else springs + _spring_hold(node_springs, coords)
    linked = linked_nodes(links, len(node_names))
    on_member = np.zeros(len(node_names), bool)
    on_member[conn.ravel()] = True
    for link in links:          # a link's reference node moves with the nodes that follow it
        on_member[link.reference] = True
    turned = _rotation_stiffness(coords, conn, truss, releases, cols["roll"], up) > 0 \
        if any((vec[3:] > 0).any() for _, vec, _ in defs.masses) else np.ones((len(node_names), 3), bool)
    turned = turned | linked[:, 3:] | _turned_by_links(links, coords)
    # a follower's linked directions move with its reference node, as if held for its mass
    pmass = _masses(defs, nidx, restraint | linked, held, on_member, turned, notes)
    midx = {m["name"]: k for k, m in enumerate(mems)}
    reading = ev.scope()
    cases = [build_case(c, nidx, midx) for c in defs.cases]
    notes.extend(model_checks.loads_on_supports(cases, restraint, node_names))
    check_linked_starts(cases, linked, node_names)
    notes.extend(supported_references(links, restraint, pmass, conn, cases, node_names))
    used = on_member | restraint.any(axis=1) | (held > 0).any(axis=1) | (pmass > 0).any(axis=1)
    for c in cases:
        for item in c.loads:
            if item.kind in ("force", "moment", "displacement", "velocity"):
                used[item.targets] = True
    joined = {(min(lk.reference, d), max(lk.reference, d)) for lk in links for d in lk.dependents.tolist()}
    if node_springs is not None:        # a spring may join two nodes at one place (an isolator)
        joined |= {(min(a, b), max(a, b)) for a, b in node_springs.nodes.tolist()}
    notes.extend(model_checks.coincident_nodes(defs.nodes, node_names, coords, tol, used, joined))
    names = {c.name for c in cases if c.kind == "static"}
    combinable = {c.name for c in cases if c.kind in COMBINABLE}
    combos = []
    for nm, tree, where, scope in defs.combos:
        ev.use_scope(scope)             # the parameters where the combination is written
        combos.append(Combination(nm, _combo_factors(defs, ev, notes, tree, combinable), where))
    ev.use_scope(reading)
    envelopes = [_envelope(defs, e, combinable | {cb.name for cb in combos}) for e in defs.envelopes]
    modal = [c.name for c in cases if c.kind == "modes"]
    if modal:
        notes.extend(model_checks.massless_materials(defs.materials, defs.defined, mems, cols["carried_mass"], modal))
    statics = {cb.name for cb in combos if all(n in names for n in cb.factors)}
    _response_sources(cases, references, names | statics, names, modal)
    _static_sources(references, names | statics)
    model = Model(title=defs.title, node_names=node_names, coords=coords,
                  member_names=[m["name"] for m in mems], conn=conn, truss=truss,
                  up=up, releases=releases, restraint=restraint, springs=springs,
                  point_mass=pmass, materials=defs.materials, sections=defs.sections,
                  member_section=[m["section"][0] for m in mems],
                  member_material=[m["material"][0] for m in mems],
                  groups=member_groups(defs), excitations=model_excitations(defs, nidx),
                  cases=cases, combinations=combos, envelopes=envelopes, settings=_settings(defs.settings), warnings=notes,
                  links=links, mass_coupling=mass_coupling(defs, nidx),
                  offsets=end_offsets(mems, coords, conn, cols["roll"], up, tol), pretension=_pretensions(mems),
                  node_springs=node_springs, **cols)
    notes.extend(model_warnings(model, defs.defined, [m["loc"] for m in mems], defs.section_params,
                                ev.assume_sites.get(U.LENGTH)))
    return model


def _members(defs: Definitions, mems, node_names, nidx, coords, tol, notes):
    """(conn (e, 2), property columns (e,) each, up (e, 3) NaN where not given, releases (e, 12),
    truss (e,)), each member's nodes, section and material looked up where it names them: all
    members at once, or one by one (_each_member) when one of them is refused, so that the
    refusal is the first in the deck's order."""
    e = len(mems)
    try:
        conn = np.array([(nidx[m["i"][0]], nidx[m["j"][0]]) for m in mems], int).reshape(e, 2)
    except KeyError:
        conn = None
    pairs = dict.fromkeys((m["section"][0], m["material"][0]) for m in mems)
    if conn is None or not e or not all(s in defs.sections and t in defs.materials for s, t in pairs):
        return _each_member(defs, mems, node_names, nidx, coords, tol, notes)
    axis = coords[conn[:, 1]] - coords[conn[:, 0]]
    near = np.flatnonzero((conn[:, 0] == conn[:, 1]) | (np.sqrt((axis * axis).sum(axis=1)) <= 2 * tol))
    if any(conn[k, 0] == conn[k, 1] or float(np.linalg.norm(axis[k])) <= tol for k in near):
        return _each_member(defs, mems, node_names, nidx, coords, tol, notes)
    paired, rows = {}, []
    for s, t in pairs:
        mat = defs.materials[t]
        sp = _paired(defs, s, mat, paired, notes)
        rows.append((mat.E, mat.G, mat.density, sp.A, sp.Iy, sp.Iz, sp.J, sp.Avy, sp.Avz))
    at = {key: k for k, key in enumerate(pairs)}
    table = np.array(rows, float)[[at[(m["section"][0], m["material"][0])] for m in mems]]
    cols = {key: np.ascontiguousarray(table[:, c]) for c, key in enumerate(_COLUMNS[:9])}
    cols["roll"] = np.array([m["roll"] for m in mems], float)
    cols["carried_mass"] = np.array([m["carried_mass"] for m in mems], float)
    releases = np.zeros((e, 12), bool)
    for k in [k for k, m in enumerate(mems) if m["releases"] is not NO_RELEASES]:
        releases[k] = mems[k]["releases"]
    truss = np.array([m["kind"] == "truss" for m in mems], bool)
    up = np.full((e, 3), np.nan)
    for k, m in enumerate(mems):
        if m["up"] is not None:
            up[k] = _up_vector(m["up"], axis[k] / float(np.linalg.norm(axis[k])), m)
    return conn, cols, up, releases, truss


def _each_member(defs: Definitions, mems, node_names, nidx, coords, tol, notes):
    """_members one member after another, each refusal raised where the loop meets it."""
    e = len(mems)
    conn = np.zeros((e, 2), int)
    cols = {k: np.zeros(e) for k in _COLUMNS}
    up = np.full((e, 3), np.nan)
    releases = np.zeros((e, 12), bool)
    truss = np.zeros(e, bool)
    loc = defs.loc
    paired = {}                                   # (section, material) -> section properties
    for k, m in enumerate(mems):
        for end, col in (("i", 0), ("j", 1)):
            nm, tok = m[end]
            if nm not in nidx:
                raise DeckError(f"member {m['name']}: node '{nm}' is not defined; {suggest(nm, node_names)}", loc(tok))
            conn[k, col] = nidx[nm]
        sname, tok = m["section"]
        if sname not in defs.sections:
            raise DeckError(f"member {m['name']} uses section '{sname}', which is not defined; {suggest(sname, defs.sections)}", loc(tok))
        mname, tok = m["material"]
        if mname not in defs.materials:
            raise DeckError(f"member {m['name']} uses material '{mname}', which is not defined; {suggest(mname, defs.materials)}", loc(tok))
        mat = defs.materials[mname]
        sp = _paired(defs, sname, mat, paired, notes)
        for key, val in (("E", mat.E), ("G", mat.G), ("rho", mat.density), ("A", sp.A), ("Iy", sp.Iy),
                         ("Iz", sp.Iz), ("J", sp.J), ("Avy", sp.Avy), ("Avz", sp.Avz),
                         ("roll", m["roll"]), ("carried_mass", m["carried_mass"])):
            cols[key][k] = val
        releases[k] = m["releases"]
        truss[k] = m["kind"] == "truss"
        axis = coords[conn[k, 1]] - coords[conn[k, 0]]
        length = float(np.linalg.norm(axis))
        if conn[k, 0] == conn[k, 1] or length <= tol:
            raise DeckError(f"member {m['name']} has zero length (its ends coincide within {tol:.3g} m, "
                            f"{COINCIDENT:g} of the model size)", m["loc"])
        if m["up"] is not None:
            up[k] = _up_vector(m["up"], axis / length, m)
    return conn, cols, up, releases, truss


def _pretensions(mems) -> np.ndarray | None:
    """(e,) members' pretensions, N, or None when no member has one."""
    T = np.array([m.get("pretension", 0.0) for m in mems], dtype=float)
    return T if T.any() else None


def member_groups(defs: Definitions) -> dict[str, tuple[str, ...]]:
    """The deck's groups that hold members, name -> the member names in it (a group's nodes
    left out)."""
    out = {name: tuple(dict.fromkeys(m for m in names if m in defs.members)) for name, names in defs.groups.items()}
    return {name: names for name, names in out.items() if names}


def _paired(defs: Definitions, sname: str, mat, paired: dict, notes: list):
    """The properties of section `sname` in material `mat`: the shapes whose shear coefficient
    follows Poisson's ratio (pipe, round, rect, catalogue tubes) take nu = E/(2G) - 1 of the
    material; a nu outside the isotropic range (-1, 0.5), as of a timber with its own G, keeps
    the 0.3 of the section as written, with a note when shear deformation is on."""
    key = (sname, mat.name)
    if key not in paired:
        props = defs.sections[sname].props
        shape, params = defs.section_params[sname]
        if shear_follows_nu(shape, params):
            if -1.0 < mat.nu < 0.5:
                props = make_section(shape, params, nu=mat.nu)
            elif defs.settings.get("shear", (None,))[0] == "on":
                notes.append(Note(defs.defined[("material", mat.name)][1],
                                  f"material {mat.name}: E/(2G) - 1 = {mat.nu:.3g} is not the Poisson's ratio of an "
                                  f"isotropic material (between -1 and 0.5), so the shear areas of section {sname} "
                                  "keep Cowper's coefficients at nu = 0.3"))
        paired[key] = props
    return paired[key]


def _restraints(defs: Definitions, nidx, notes) -> np.ndarray:
    """(n, 6) bool: the directions the supports hold at each node."""
    restraint = np.zeros((len(nidx), 6), bool)
    first = {}                    # node -> (location, node count) of the first support on it
    for target, dirs, where in defs.supports:
        cols_ = [DIRECTIONS.index(d) for d in dirs]
        again = []
        hit = defs.targets(target, nidx, "node")
        for nm in hit:
            k = nidx[nm]
            # a later support as specific as the earlier one (no more nodes) means this node; a
            # wider pattern sweeping over a node supported on its own does not (pin one end, then
            # support N* (uy, uz))
            if k in first and len(hit) <= first[k][1] and \
                    model_checks.repeated_support(nm, dirs, restraint[k], where, first[k][0]):
                again.append(f"{nm} (at {first[k][0]})")
            first.setdefault(k, (where, len(hit)))
            restraint[k, cols_] = True
        if again:
            notes.append(model_checks.support_repeats(where, again))
    return restraint


def _springs(defs: Definitions, nidx, restraint, notes) -> np.ndarray:
    """(n, 6): the spring stiffness at each node and direction, N/m or N*m."""
    springs = np.zeros((len(nidx), 6))
    for target, vals, where in defs.springs:
        held, acting = [], 0
        for nm in defs.targets(target, nidx, "node"):
            for d, v in vals.items():
                springs[nidx[nm], DIRECTIONS.index(d)] += v
                if v > 0 and restraint[nidx[nm], DIRECTIONS.index(d)]:
                    held.append(f"{nm} {d}")
                acting += v > 0
        if held and len(held) == acting:           # it acts nowhere: every spring of it is held
            notes.append(model_checks.idle_spring(where, held))
    return springs


def _spring_hold(ns, coords) -> np.ndarray:
    """(n, 6) what the springs between nodes hold at each node, global directions: the
    diagonal of R^T diag(k) R for translations and for rotations (the rigid arms of nodes
    apart add rotational terms only; a direction held here is held there too)."""
    sq = ns.axes ** 2                                                   # (s, 3 local, 3 global)
    d = np.concatenate([np.einsum("sa,sag->sg", ns.k[:, :3], sq), np.einsum("sa,sag->sg", ns.k[:, 3:], sq)], axis=1)
    out = np.zeros((len(coords), 6))
    for end in (0, 1):
        np.add.at(out, ns.nodes[:, end], d)
    return out


def _masses(defs: Definitions, nidx, restraint, springs, on_member, turned, notes) -> np.ndarray:
    """(n, 6): the point masses (kg) and rotary inertias (kg*m^2) at each node; a mass on a node
    nothing holds is refused. `turned` (n, 3): the rotations some beam end keeps."""
    pmass = np.zeros((len(nidx), 6))
    for target, vec, where in defs.masses:
        idle = {}
        for nm in defs.targets(target, nidx, "node"):
            k = nidx[nm]
            pmass[k] += vec
            # rotations that no beam end, support or spring holds carry no stiffness: the
            # assembly holds them (a truss node's rotations), so inertia there does nothing
            dead = (vec[3:] > 0) & ~turned[k] & ~restraint[k, 3:] & ~(springs[k, 3:] > 0)
            if dead.any():
                idle[nm] = ", ".join(d for d, x in zip(DIRECTIONS[3:], dead) if x)
            loose = (vec[:3] > 0) & ~restraint[k, :3] & ~(springs[k, :3] > 0)
            if not on_member[k] and loose.any():
                dirs = ", ".join(d for d, x in zip(DIRECTIONS, loose) if x)
                raise DeckError(f"mass on node {nm}, which no member, support or spring holds in {dirs}: the "
                                "mass would not move with the structure and would be left out of its modes",
                                where, "connect the node with a member, or put the mass on a node of the structure")
        if idle:
            notes.append(model_checks.idle_inertia(where, idle))
    return pmass


def _response_sources(cases, references: dict, starts: set, names: set, modal: list) -> None:
    """Each response case's static start and modes case as written, checked against the deck's
    cases (the case itself already holds the names; the first modes case when it names none)."""
    for c in cases:
        if c.kind not in ("free", "history", "harmonic", "spectrum"):
            continue
        start, mref = references[c.name]
        if start and start[0] not in starts:
            raise DeckError(f"case {c.name}: start '{start[0]}' is not a static case or combination; "
                            f"{suggest(start[0], names)}", start[1])
        if mref and mref[0] not in modal:
            raise DeckError(f"case {c.name}: '{mref[0]}' is not a modes case; {suggest(mref[0], modal)}", mref[1])
        if not modal:
            raise DeckError(f"case {c.name}: this case is computed from modes; add a modes case",
                            c.location)


def _static_sources(references: dict, statics: set) -> None:
    """A modes case's preload and a buckling case's loading name a static case or combination."""
    for key, (word, where) in references.items():
        if isinstance(key, tuple) and word not in statics:
            raise DeckError(f"case {key[0]}: {key[1]} '{word}' is not a static case or combination; "
                            f"{suggest(word, statics) if statics else 'the deck has none'}", where)


def _settings(given: dict) -> dict:
    """The model settings from `settings` statements: mass (consistent or lumped), shear (on or off),
    units (the display units, fem.display.DisplayUnits)."""
    settings = {}
    for key, (val, where) in given.items():
        if key == "mass":
            if val not in ("consistent", "lumped"):
                raise DeckError("settings: mass must be 'consistent' or 'lumped'", where)
            settings[key] = val
        elif key == "shear":
            if val not in ("on", "off"):
                raise DeckError("settings: shear must be 'on' or 'off'", where)
            settings[key] = val == "on"
        elif key == "units":
            settings[key] = _display_units(val, where)
        else:
            raise DeckError(f"settings: unknown key '{key}'; {suggest(key, ['mass', 'shear', 'units'])}", where)
    return settings


def _display_units(val, where):
    """The display units a `units = ...` setting chooses (fem.display): a named set or a quoted list."""
    from lark import Token

    from ..display import UNIT_SETS, parse_units

    text = str(val)[1:-1] if isinstance(val, Token) and val.type == "STRING" else val
    if not isinstance(text, str):
        raise DeckError("settings: units must be a named set or a quoted list of units", where,
                        f'write units = engineering, or units = "mm, kN, MPa" ({", ".join(UNIT_SETS)} are named)')
    try:
        return parse_units(text)
    except ValueError as exc:
        raise DeckError(f"settings: {exc}", where, 'write e.g. units = "mm, kN, kN*m, MPa"') from None


def _rotation_stiffness(coords, conn, truss, releases, roll, up) -> np.ndarray:
    """(n, 3): for each node and global rotation, how much of it the beam ends there keep
    (sum over ends of the kept local rotation axes' squared components): 0 where only truss
    members or released ends meet, as on the diagonal of the assembled K."""
    from ..geometry import local_axes

    out = np.zeros((len(coords), 3))
    beams = np.flatnonzero(~truss)
    if not len(beams):
        return out
    xi, xj = coords[conn[beams, 0]], coords[conn[beams, 1]]
    R, _ = local_axes(xi, xj, roll=roll[beams])
    given = ~np.isnan(up[beams]).any(axis=1)
    if given.any():
        R[given] = local_axes(xi[given], xj[given], roll=roll[beams][given], up=up[beams][given])[0]
    for end, first in ((0, 3), (1, 9)):
        kept = ~releases[beams, first:first + 3]
        np.add.at(out, conn[beams, end], np.einsum("bl,blg->bg", kept.astype(float), R ** 2))
    out[out < 1e-12] = 0.0      # round-off of the axes of members along global axes
    return out


def _turned_by_links(links, coords) -> np.ndarray:
    """(n, 3) bool: the rotations of the links' reference nodes that their followers hold,
    through linked rotations or through linked translations at an arm (all three, a
    conservative reading for the inertia note)."""
    out = np.zeros((len(coords), 3), bool)
    for link in links:
        arm = np.abs(coords[link.dependents] - coords[link.reference]).max(initial=0.0) > 0
        if link.dirs[3:].any() or (arm and link.dirs[:3].any()):
            out[link.reference] = True
    return out


def _up_vector(up: np.ndarray, x: np.ndarray, m: dict) -> np.ndarray:
    """The member's `up` vector as a unit vector, refused if zero or along the member axis x."""
    big = float(np.abs(up).max())
    if big == 0:
        raise DeckError(f"member {m['name']}: the up vector is zero", m["loc"], "give a vector across the member")
    u = up / big
    u = u / np.linalg.norm(u)
    if abs(float(u @ x)) > 1 - 1e-9:
        raise DeckError(f"member {m['name']}: the up vector ({', '.join(f'{v:g}' for v in up)}) is parallel to "
                        "the member axis, so it cannot set the local axes", m["loc"],
                        "give a vector across the member (e.g. up = (1, 0, 0) for a vertical member), or leave it out")
    return u


def _envelope(defs: Definitions, entry, known: set[str]) -> Envelope:
    """An envelope statement's cases and combinations, each checked to be one of them."""
    name, over, where = entry
    seen = []
    for n, at in over:
        if n not in known:
            other = defs.defined.get(("result", n))
            if other is not None:
                kind = next((k for nm, k, *_ in defs.cases if nm == n), None)
                what = f"a {kind} case" if other[0] == "case" else f"an {other[0]}"
                raise DeckError(f"envelope {name} refers to '{n}', which is {what} (at {other[1]}); an envelope "
                                f"bounds {', '.join(COMBINABLE)} cases and combinations", at,
                                "name the cases and combinations it is made of" if other[0] == "envelope" else "")
            raise DeckError(f"envelope {name} refers to '{n}', which is not defined; {suggest(n, known)}", at)
        if n in seen:
            raise DeckError(f"envelope {name} names {n} twice", at, "keep one of them")
        seen.append(n)
    return Envelope(name, tuple(seen), where)


def _combo_factors(defs: Definitions, ev: Evaluator, notes: list, t, cases: set[str]) -> dict[str, float]:
    """A combination's expression as case name -> factor; `cases` the cases it may add."""
    if isinstance(t, Tree) and t.data == "var":
        n = str(t.children[0])
        if n not in cases:
            other = defs.defined.get(("result", n))
            if other is not None:
                kind = next((k for nm, k, *_ in defs.cases if nm == n), None)
                what = f"a {kind} case" if other[0] == "case" else f"a{'n' if other[0][0] in 'e' else ''} {other[0]}"
                raise DeckError(f"combination refers to '{n}', which is {what} (at {other[1]}); a combination "
                                f"adds {', '.join(COMBINABLE[:-1])} and {COMBINABLE[-1]} cases", ev.loc(t),
                                "write out the cases it is made of" if other[0] != "case" else "")
            raise DeckError(f"combination refers to case '{n}', which is not defined; {suggest(n, cases)}", ev.loc(t))
        return {n: 1.0}
    if isinstance(t, Tree) and t.data in ("add", "sub"):
        a, b = (_combo_factors(defs, ev, notes, c, cases) for c in t.children)
        s = 1.0 if t.data == "add" else -1.0
        for k, v in b.items():
            if k in a:
                notes.append(Note(ev.loc(t.children[1]), f"case {k} appears more than once in this combination; "
                                                         f"its factors add up to {a[k] + s * v:g}"))
            a[k] = a.get(k, 0.0) + s * v
        return a
    if isinstance(t, Tree) and t.data == "neg":
        return {k: -v for k, v in _combo_factors(defs, ev, notes, t.children[0], cases).items()}
    if isinstance(t, Tree) and t.data == "mul":
        x, y = t.children
        if isinstance(y, Tree) and y.data in ("var", "add", "sub", "neg", "mul"):
            f = ev.value(x, U.NONE, "combination factor")
            return {k: f * v for k, v in _combo_factors(defs, ev, notes, y, cases).items()}
    raise DeckError("a combination is a sum of factor*CASE terms, e.g. 1.35*DEAD + 1.5*PIPES", ev.loc(t))
