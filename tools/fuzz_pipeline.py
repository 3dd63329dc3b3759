"""Pipeline fuzzing: small valid decks, mutated semantically, run end to end.

Every outcome of `fem.cli.run_deck` (pictures off, into a temporary folder) must be a finished
run or a QuaverError with a message; never another exception, never NaN or infinity in
results.json or the CSV tables, never a library's warning text or a traceback in what the user
sees, never a finished run whose stiffness condition estimate is above the refusal level, and a
refused run leaves no results folder behind. Mutations include short stiff links, released ends
on inclined members with modes-only cases, and hostile expressions (long sums, deep
parentheses, fractional powers of negative numbers).

PYTHONPATH=. python tools/fuzz_pipeline.py [cases] [seed] [--keep DIR] [--checks] (default 2000
cases) prints the failures; about 0.5-1.5 s a case, plots every tenth. tests/test_fuzz_pipeline.py
runs a few seeded stacks of mutations on a lean frame.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import random
import re
import sys
import tempfile
import traceback
from pathlib import Path

from fem.cli import run_deck
from fem.errors import DeckError, QuaverError

ROOT = Path(__file__).resolve().parents[1]

# a small 3D frame with every case kind; one statement per line so mutations can work on lines
FRAME = """\
title "fuzz frame"
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
material SOFT { E = 70 GPa, nu = 0.33, density = 2700 kg/m^3 }
section COL = ishape(d = 200 mm, bf = 200 mm, tf = 15 mm, tw = 9 mm)
section BM = rhs(b = 100 mm, h = 200 mm, t = 8 mm)
section BR = pipe(od = 60.3 mm, wall = 4 mm)
node A0 = (0, 0, 0)
node A1 = (4 m, 0, 0)
node A2 = (4 m, 3 m, 0)
node A3 = (0, 3 m, 0)
node B0 = (0, 0, 3.5 m)
node B1 = (4 m, 0, 3.5 m)
node B2 = (4 m, 3 m, 3.5 m)
node B3 = (0, 3 m, 3.5 m)
node TIP = (2 m, 1.5 m, 5 m)
member C0 : A0 -> B0 beam COL S
member C1 : A1 -> B1 beam COL S
member C2 : A2 -> B2 beam COL S
member C3 : A3 -> B3 beam COL S
member G0 : B0 -> B1 beam BM S
member G1 : B1 -> B2 beam BM S roll = 90 deg
member G2 : B2 -> B3 beam BM SOFT
member G3 : B3 -> B0 beam BM S up = (0, 0, 1)
member X0 : A0 -> B1 truss BR S
member X1 : A2 -> B3 truss BR S
member R0 : B0 -> TIP truss BR S
member R1 : B1 -> TIP truss BR S
member R2 : B2 -> TIP truss BR S
member R3 : B3 -> TIP beam BR S carried_mass = 5 kg/m
support A* fixed
spring TIP (uz = 1e6 N/m)
mass B1 = 400 kg
mass B2 = 300 kg inertia = (10 kg*m^2, 10 kg*m^2, 20 kg*m^2)
group TOP = B0, B1, B2, B3
case DEAD static { gravity = (0, 0, -9.81 m/s^2) }
case WIND static { force TOP = (2 kN, 1 kN, 0) ; line G0 = (0, 0, -1 kN/m) }
combo ULS = 1.35*DEAD + 1.5*WIND
case MODES modes { count = 10 }
case REL free { start = WIND, duration = 2 s, step = 0.005 s, damping = 2 percent, record = "B*" }
case KICK free { velocity TIP = (0.1 m/s, 0, 0), duration = 1 s, step = 0.01 s }
case SURGE history { force B1 = (5 kN, 0, 0), time = halfsine(0.2 s), duration = 2 s, step = 0.002 s, damping = 3 percent, correction = on, record = "B1" }
case QUAKE history { ground = (0.2 gee, 0, 0), table = "ground.csv", duration = 3 s, step = 0.005 s, damping = 5 percent }
case MIXED history { time HUM = harmonic(9 Hz), time HIT = rect(0.013 s), force B1 = (2 kN, 0, 0) times HUM, force TIP = (0, 0, -1 kN) times HIT, ground = (0, 0.05 gee, 0) times HIT, duration = 1 s, step = 0.004 s }
case PUMP harmonic { force B2 = (0, 1 kN, 0), from = 1 Hz, to = 40 Hz, points = 60, damping = 2 percent, correction = on }
case SHAKE harmonic { ground = (0, 0.1 gee, 0), from = 0.5 Hz, to = 30 Hz, points = 40, spacing = log, rayleigh = (2 Hz, 2 percent, 20 Hz, 3 percent) }
case SEISMIC spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 1, 0.3), missing = on }
case SITE spectrum { table = "site.csv", scale = 1 gee, directions = (0, 1, 0), combine = srss, spatial = "100/30" }
"""

TABLES = {
    "ground.csv": "time_s,factor\n0,0\n0.1,1\n0.2,-0.8\n0.3,0.5\n0.5,-0.2\n1.0,0\n",
    "site.csv": "period_s,sa_g\n0.05,0.4\n0.2,0.9\n0.6,0.9\n2.0,0.2\n",
}


def _cut_demo(name: str, edits: list[tuple[str, str]]) -> str:
    text = (ROOT / "decks" / name).read_text()
    for old, new in edits:
        text = text.replace(old, new)
    return text


def lean_frame() -> str:
    """The frame with one case of each kind and short histories: quick enough for the suite."""
    drop = ("case KICK", "case QUAKE", "case SHAKE", "case SITE")
    text = "\n".join(ln for ln in FRAME.split("\n") if not ln.startswith(drop))
    return text.replace("duration = 2 s, step = 0.005 s", "duration = 0.4 s, step = 0.01 s") \
               .replace("duration = 2 s, step = 0.002 s", "duration = 0.4 s, step = 0.01 s")


def base_decks() -> dict[str, str]:
    """The small frame, and the demo decks cut down (fewer panels, bays and steps)."""
    mast = _cut_demo("mast.deck", [("let panels = 10", "let panels = 3"), ("P10_*", "P3_*"),
                                   ("max = 60", "max = 30"), ("step = 0.01 s", "step = 0.02 s")])
    rack = _cut_demo("rack.deck", [("for i in 0..5", "for i in 0..2"), ("for i in 0..4", "for i in 0..1"),
                                   ("G[5,s] -> L[4,s]", "G[2,s] -> L[1,s]"), ('"records/synthetic_ground.csv"',
                                   '"ground.csv"'), ("duration = 12 s", "duration = 2 s"),
                                   ("duration = 3 s", "duration = 1 s"), ("points = 300", "points = 50")])
    return {"frame": FRAME, "mast": mast, "rack": rack}


# ----------------------------------------------------------------------------- mutations
# each takes (text, rng) and returns the mutated text (or the text unchanged if it does not apply)

def _sub_value(key: str, choices: list[str]):
    """Replace the value of one `key = value` (up to , ; } or end of line) with a choice."""
    pat = re.compile(rf"\b{re.escape(key)}\s*=\s*([^,;{{}}\n]+)")

    def mutate(text, rng):
        hits = list(pat.finditer(text))
        if not hits:
            return text
        m = rng.choice(hits)
        return text[:m.start(1)] + rng.choice(choices) + " " + text[m.end(1):]
    mutate.__name__ = f"value_{key}"
    return mutate


def _lines(text):
    return text.split("\n")


def drop_supports(text, rng):
    return "\n".join(ln for ln in _lines(text) if not ln.startswith("support") or rng.random() < 0.3)


def fix_everything(text, rng):
    return text + "\nsupport * fixed\n"


def drop_member(text, rng):
    lines = _lines(text)
    idx = [k for k, ln in enumerate(lines) if ln.lstrip().startswith("member")]
    if idx:
        del lines[rng.choice(idx)]
    return "\n".join(lines)


def releases_everywhere(text, rng):
    dirs = rng.choice(["(rx, ry, rz)", "(ry, rz)", "(rx)", "(ux, uy, uz, rx, ry, rz)"])
    ends = rng.choice([" release i " + dirs, " release j " + dirs, f" release i {dirs} release j {dirs}"])
    return re.sub(r"^(\s*member .* beam \S+ \S+.*)$", lambda m: m.group(1) + ends, text, flags=re.M)


def all_truss(text, rng):
    out = re.sub(r"(member [^\n]*) beam ", r"\1 truss ", text)
    return re.sub(r"(member [^\n]* truss [^\n]*?) (roll|up|release)[^\n]*", r"\1", out)


def all_beam(text, rng):
    return text.replace(" truss ", " beam ")


def duplicate_node(text, rng):
    """A second node at the place of an existing one, and one member end moved to it."""
    nodes = re.findall(r"^node (\w+) = (\(.*\))$", text, flags=re.M)
    if not nodes:
        return text
    name, pos = rng.choice(nodes)
    text += f"\nnode {name}DUP = {pos}\n"
    ends = [m for m in re.finditer(rf"(member \w+ : )({name})( -> )|( -> )({name})( )", text)]
    if ends:
        m = rng.choice(ends)
        g = 2 if m.group(2) else 5
        text = text[:m.start(g)] + name + "DUP" + text[m.end(g):]
    return text


def move_node_onto_another(text, rng):
    nodes = re.findall(r"^node (\w+) = (\(.*\))$", text, flags=re.M)
    if len(nodes) < 2:
        return text
    (a, _), (_, pb) = rng.sample(nodes, 2)
    return re.sub(rf"^node {a} = \(.*\)$", f"node {a} = {pb}", text, flags=re.M)


def no_mass(text, rng):
    text = re.sub(r"density = [^,}\n]+", "density = 0 kg/m^3", text)
    text = re.sub(r" carried_mass = [^\s]+ kg/m", "", text)
    return "\n".join(ln for ln in _lines(text) if not ln.startswith("mass"))


def rotary_mass_only(text, rng):
    text = re.sub(r"density = [^,}\n]+", "density = 0 kg/m^3", text)
    text = "\n".join(ln for ln in _lines(text) if not ln.startswith("mass"))
    node = rng.choice(re.findall(r"^node (\w+)", text, flags=re.M) or ["A"])
    return text + f"\nmass {node} = 0 kg inertia = (1 kg*m^2, 1 kg*m^2, 1 kg*m^2)\n"


def mass_on_loose_node(text, rng):
    return text + "\nnode LOOSE = (9 m, 9 m, 9 m)\nmass LOOSE = 100 kg\n"


def lumped_shear(text, rng):
    return text + "\nsettings { mass = lumped, shear = on }\n"


def far_node(text, rng):
    return text + "\nnode FAR = (1e7 m, 0, 0)\n"


def springs_for_supports(text, rng):
    """Every support replaced by springs in all six directions (soft or stiff)."""
    k = rng.choice(["1 N/m", "1e5 N/m", "1e12 N/m"])
    kr = rng.choice(["0", "1 N*m", "1e9 N*m"])
    springs = f"(ux = {k}, uy = {k}, uz = {k}, rx = {kr}, ry = {kr}, rz = {kr})"
    return re.sub(r"^support (\S+) .*$", rf"spring \1 {springs}", text, flags=re.M)


def isolate_a_mass(text, rng):
    """A point mass moved onto a new node at its place, joined to the old one by a spring between
    the nodes: some of the six directions (a mechanism when a moving one is left out), soft,
    ordinary or stiff, sometimes turned or damped."""
    found = re.findall(r"^mass (\w+) = ", text, flags=re.M)
    if not found:
        return text
    node = rng.choice(found)
    dirs = rng.sample(["ux", "uy", "uz", "rx", "ry", "rz"], rng.randint(1, 6))
    k = rng.choice(["1e-6 N/m", "2e5 N/m", "1e13 N/m"])
    kr = rng.choice(["1e-6 N*m", "5e4 N*m", "1e12 N*m"])
    stiff = ", ".join(f"{d} = {k if d[0] == 'u' else kr}" for d in dirs)
    extra = rng.choice(["", " damping = 5 percent", " along = (1, 1, 0)", " along = (0, 0, 1) up = (1, 0, 0)",
                        " damping = 50 percent along = (1, 2, 3)"])
    text = re.sub(rf"^mass {node} = ", "mass ISO_N = ", text, count=1, flags=re.M)
    at = re.search(rf"^node {node} = (.*)$", text, flags=re.M)
    where = at.group(1) if at else "(0, 0, 0)"
    return text + f"\nnode ISO_N = {where}\nspring ISO_S: {node} -> ISO_N ({stiff}){extra}\n"


def heavy_or_light_mass(text, rng):
    node = rng.choice(re.findall(r"^node (\w+)", text, flags=re.M) or ["A"])
    mass = rng.choice(["1e-9 kg", "1e12 kg", "1 kg"])
    inertia = rng.choice(["", " inertia = (1e9 kg*m^2, 0, 0)", " inertia = (0, 0, 1e-9 kg*m^2)"])
    return text + f"\nmass {node} = {mass}{inertia}\n"


def unsupported_in_a_plane(text, rng):
    """Supports only across one axis: rigid-body modes in the other two."""
    text = "\n".join(ln for ln in _lines(text) if not ln.startswith("support"))
    return text + f"\nsupport * ({rng.choice(['uz', 'ux', 'uy'])})\n"


def far_reference(text, rng):
    return re.sub(r"case (\w+) modes \{", r"case \1 modes { reference = (1e8 m, 0, -1e8 m),", text)


def repeat_statement(text, rng):
    """A definition repeated further down (a copied line): must be a located error."""
    lines = [ln for ln in _lines(text) if re.match(r"(material|section|member|node|case|combo|group|let) ", ln)]
    return text + "\n" + rng.choice(lines) + "\n" if lines else text


def drop_cases_but(text, rng):
    """Keep one response case kind only (and what it needs)."""
    kind = rng.choice(["free", "history", "harmonic", "spectrum", "static", "modes"])
    keep = {"modes", "static", kind}
    out = []
    for ln in _lines(text):
        m = re.match(r"\s*case \w+ (\w+)", ln)
        if m and m.group(1) not in keep:
            continue
        out.append(ln)
    return "\n".join(out)


def _node_coords(text: str) -> dict[str, tuple[float, float, float]]:
    """Node names and coordinates (m) of a deck, read by Quaver's own reader (loops and
    expressions evaluated); empty when the deck does not read."""
    from fem.deck.reader import read_deck

    with tempfile.TemporaryDirectory(prefix="quaver-fuzz-read-") as tmp:
        (Path(tmp) / "d.deck").write_text(text)
        for name, t in TABLES.items():
            (Path(tmp) / name).write_text(t)
        try:
            with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):
                m = read_deck(str(Path(tmp) / "d.deck"))
        except Exception:  # noqa: BLE001 - a deck broken by an earlier mutation: nothing to add to
            return {}
    return {n: tuple(map(float, x)) for n, x in zip(m.node_names, m.coords)}


def _fresh(text: str, stem: str) -> str:
    """A node or member name not yet in the deck."""
    k = 0
    while re.search(rf"\b{stem}{k}\b", text):
        k += 1
    return f"{stem}{k}"


def _section_material(text: str, rng) -> tuple[str, str] | None:
    sections = re.findall(r"^section (\w+)", text, flags=re.M)
    materials = re.findall(r"^material (\w+)", text, flags=re.M)
    return (rng.choice(sections), rng.choice(materials)) if sections and materials else None


def short_stiff_link(text, rng):
    """A short link member (0.1 mm to 100 mm) from a node to a new one that carries a mass, leads
    on to another node, or both: stiffer than the rest of the model by the ratio of lengths
    cubed, the contrast that once zeroed real modes."""
    coords, props = _node_coords(text), _section_material(text, rng)
    if not coords or props is None:
        return text
    name = rng.choice(sorted(coords))
    d = rng.choice([1e-4, 5e-4, 5e-3, 2e-2, 0.1])
    axis = rng.choice([(1, 0, 0), (0, 1, 0), (0, 0, 1), (0.6, 0, 0.8), (0.57735, 0.57735, 0.57735)])
    x = [c + d * a for c, a in zip(coords[name], axis)]
    node, link = _fresh(text, "LNK"), _fresh(text, "LINK")
    text += (f"\nnode {node} = ({x[0]!r} m, {x[1]!r} m, {x[2]!r} m)\n"
             f"member {link} : {name} -> {node} beam {props[0]} {props[1]}\n")
    tail = rng.choice(["mass", "member", "both"])
    if tail in ("mass", "both"):
        text += f"mass {node} = 50 kg\n"
    if tail in ("member", "both"):
        other = rng.choice(sorted(set(coords) - {name}) or [name])
        text += f"member {_fresh(text, 'ONWARD')} : {node} -> {other} beam {props[0]} {props[1]}\n"
    return text


def released_inclined_member(text, rng):
    """A member from a node to a new free end released about both cross axes, inclined in plan,
    in elevation or both, and (mostly) only the modes cases kept: the end rotation about the
    member's local z meets no stiffness and no mass, a mechanism on every path."""
    coords, props = _node_coords(text), _section_material(text, rng)
    if not coords or props is None:
        return text
    name = rng.choice(sorted(coords))
    off = rng.choice([(1.2, 0, 0.9), (0.8, 0.6, 0), (0.5, 0.7, 1.1), (2, 0, 2), (0, 0, 1.5)])
    x = [c + o for c, o in zip(coords[name], off)]
    node, mem = _fresh(text, "RLS"), _fresh(text, "RLM")
    text += (f"\nnode {node} = ({x[0]!r} m, {x[1]!r} m, {x[2]!r} m)\n"
             f"member {mem} : {name} -> {node} beam {props[0]} {props[1]} release j (ry, rz)\n")
    if rng.random() < 0.7:
        text = re.sub(r"^case \w+ (?!modes\b)\w+ \{[^}]*\}[ \t]*\n?", "", text, flags=re.M)
        text = re.sub(r"^combo .*\n?", "", text, flags=re.M)
    return text


def expression(text, rng):
    """An expression a hostile or careless deck might hold, as a parameter or in a mass: a long
    sum, deep parentheses, a fractional power of a negative number."""
    n = rng.choice([20, 3000, 30000])
    expr = rng.choice(["+".join(["1"] * n), "(" * min(n, 5000) + "1" + ")" * min(n, 5000),
                       "(-8)^(1/3)", "(-2)^0.5", "(-1)^(2/3)", "-8^(1/3)", "(-8)^3", "(-0.5)^(-1.5)",
                       "0^(-1)", "(-8)^(1/3) - (-8)^(1/3)"])
    if rng.random() < 0.5:
        return text + f"\nlet {_fresh(text, 'EXPR')} = {expr}\n"
    node = rng.choice(re.findall(r"^node (\w+)", text, flags=re.M) or ["A0"])
    return text + f"\nmass {node} = ({expr}) * 1 kg\n"


MUTATIONS = [
    drop_supports, fix_everything, drop_member, releases_everywhere, all_truss, all_beam,
    duplicate_node, move_node_onto_another, no_mass, rotary_mass_only, mass_on_loose_node,
    lumped_shear, far_node, drop_cases_but, springs_for_supports, isolate_a_mass, heavy_or_light_mass,
    unsupported_in_a_plane, far_reference, repeat_statement, short_stiff_link, released_inclined_member,
    expression,
    _sub_value("E", ["1 Pa", "1e-9 Pa", "1e6 GPa", "1e300 Pa", "0", "-1 GPa"]),
    _sub_value("nu", ["0", "0.4999999", "-0.99", "0.5", "-1"]),
    _sub_value("density", ["0 kg/m^3", "1e-9 kg/m^3", "1e9 kg/m^3", "-1 kg/m^3"]),
    _sub_value("wall", ["1e-6 mm", "30.15 mm", "1 mm"]),
    _sub_value("od", ["1e-3 mm", "10 m", "60.3 mm"]),
    _sub_value("t", ["1e-5 mm", "49.9 mm"]),
    _sub_value("tw", ["1e-5 mm", "199 mm"]),
    _sub_value("carried_mass", ["0 kg/m", "1e9 kg/m", "-5 kg/m"]),
    _sub_value("roll", ["1e6 deg", "-90 deg", "0"]),
    _sub_value("up", ["(0, 0, 0)", "(1, 0, 0)", "(0, 1e-12, 1)", "(0, 0, -1)"]),
    _sub_value("step", ["1e-5 s", "0.5 s", "10 s", "0.3 s", "1e-4 s"]),
    _sub_value("duration", ["1e-4 s", "0.001 s", "100 s", "0.01 s"]),
    _sub_value("count", ["1", "2", "10000", "200"]),
    _sub_value("fmax", ["1e-3 Hz", "1e6 Hz", "5 Hz"]),
    _sub_value("from", ["1e-6 Hz", "1000 Hz", "39.9 Hz", "5000 Hz"]),
    _sub_value("to", ["1e-5 Hz", "1e5 Hz", "1.0001 Hz", "6000 Hz"]),
    _sub_value("points", ["2", "3", "100000"]),
    _sub_value("damping", ["0", "99 percent", "1e-9", "(0, 50 percent)", "(0, 0, 0)"]),
    _sub_value("rayleigh", ["(1 Hz, 0, 2 Hz, 0)", "(1 Hz, -5 percent, 10 Hz, 2 percent)",
                            "(0.01 Hz, 90 percent, 1e4 Hz, 90 percent)", "(1 Hz, 2 percent, 1.000001 Hz, 3 percent)"]),
    _sub_value("ground", ["(0, 0, 0)", "(1e9 gee, 0, 0)", "(0, 0, 1 gee)"]),
    _sub_value("gravity", ["(0, 0, 0)", "(1e12 m/s^2, 0, 0)"]),
    _sub_value("directions", ["(0, 0, 1)", "(1e-300, 0, 0)", "(1e300, 1, 1)", "(-1, 0, 0)"]),
    _sub_value("missing", ["on", "off"]),
    _sub_value("combine", ["abs", "srss", "cqc"]),
    _sub_value("correction", ["on", "off"]),
    _sub_value("record", ['"A0"', '"TIP"', '"*"']),
    _sub_value("time", ["step", "ramp(1e-9 s)", "harmonic(1e4 Hz)", "rect(100 s)", "decay(1e-3 s)"]),
    _sub_value("time HIT", ["rect(1e-9 s)", "rect(0.004 s)", "decay(0.004000000001 s)", "halfsine(100 s)", "step"]),
    _sub_value("curve", ["twoperiod(1 gee, 0.4 gee, 4 s)", "plateau(1e-9 gee, 1, 1e-6 s, 2e-6 s, 3e-6 s)",
                         "plateau(0.3 gee, 1, 10 s, 20 s, 30 s)"]),
    _sub_value("target", ["(100 percent, 100 percent, 100 percent)", "(0, 0, 0)", "(99.9 percent, 0, 0)"]),
    _sub_value("start", ["DEAD", "ULS"]),
    _sub_value("max", ["1", "2", "1000"]),
    _sub_value("scale", ["1e-12 gee", "1e6 gee", "0"]),
    _sub_value("spacing", ["log", "linear"]),
    _sub_value("spatial", ['"100/30"', "srss"]),
    _sub_value("force B1", ["(0, 0, 0)", "(1e30 N, 0, 0)"]),
    _sub_value("velocity TIP", ["(0, 0, 0)", "(1e9 m/s, 0, 0)"]),
    _sub_value("spring TIP (uz", ["1e30 N/m)", "1e-30 N/m)", "-1e6 N/m)"]),
]

TABLE_MUTATIONS = {
    "ground.csv": ["t,f\n0,1\n", "t,f\n0,0\n1e-9,1\n", "t,f\n0,0\n100,1e12\n", "t,f\n5,1\n6,1\n",
                   "t,f\n0,0\n1,0\n"],
    "site.csv": ["T,sa\n0.5,1\n", "T,sa\n0,0\n0.01,0\n", "T,sa\n0,1\n1e6,1\n", "T,sa\n100,1\n200,1\n",
                 "T,sa\n1e-9,1\n2e-9,1\n"],
}


# ----------------------------------------------------------------------------- checking

# a library's own words on the user's screen: a warning class with its source line, a traceback
_LIBRARY_TEXT = re.compile(r"\b[A-Z]\w*Warning\b|^\s*File \"|\.py:\d+|Traceback", re.M)
COND_REFUSE = 1e16       # fem.analysis.soundness: a run above it must have been refused


@contextlib.contextmanager
def _warnings_as_a_user_sees_them():
    """Python's default warning filters of a fresh process (each warning shown once per place,
    deprecations hidden), whatever earlier cases of this process showed."""
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("default")
        for cat in (DeprecationWarning, PendingDeprecationWarning, ImportWarning, ResourceWarning):
            warnings.filterwarnings("ignore", category=cat)
        yield


def _leaked(text: str) -> str | None:
    m = _LIBRARY_TEXT.search(text)
    if m is None:
        return None
    line = text[text.rfind("\n", 0, m.start()) + 1:].split("\n")[0]
    return f"library text reached the user: {line.strip()[:200]}"


_BAD_NUMBER = re.compile(r"(?i)(?<![a-z_])(nan|-?inf(inity)?)(?![a-z_])")


def _finite_json(text: str) -> str | None:
    try:
        json.loads(text, parse_constant=lambda c: (_ for _ in ()).throw(ValueError(c)))
    except ValueError as exc:
        return f"results.json holds a non-finite number ({exc})"
    return None


@contextlib.contextmanager
def _without_report():
    """Plots and report.html take most of a small run's time; leave them out when asked."""
    import fem.output.report

    saved = fem.output.report.report
    fem.output.report.report = lambda *args, **kwargs: None
    try:
        yield
    finally:
        fem.output.report.report = saved


def check(deck_text: str, tables: dict[str, str], work: Path, report: bool = True,
          flag_checks: bool = False) -> str | None:
    """Run the deck end to end (plots and report too if `report`); None if the outcome is
    acceptable, else what went wrong. A run whose self-checks fail says so to the user; with
    `flag_checks` it is returned as well, to look into."""
    work.mkdir(parents=True, exist_ok=True)
    deck = work / "fuzz.deck"
    deck.write_text(deck_text)
    for name, text in tables.items():
        (work / name).write_text(text)
    out = work / "out"
    sink = io.StringIO()
    try:
        with contextlib.redirect_stdout(sink), contextlib.redirect_stderr(sink), _warnings_as_a_user_sees_them(), \
                (contextlib.nullcontext() if report else _without_report()):
            code = run_deck(str(deck), str(out), render=False, jobs=1)
    except QuaverError as exc:
        msg = str(exc)
        leaked = _leaked(sink.getvalue() + "\n" + msg)
        if leaked:
            return leaked
        if "non-finite number" in msg:
            return f"a non-finite result reached the writer (the backstop refused it): {msg}"
        if not msg.strip():
            return f"empty {type(exc).__name__} message"
        if isinstance(exc, DeckError) and exc.location is None and not re.search(r"table|csv|deck '", msg):
            return f"deck error without a location: {msg}"
        if out.exists():
            return f"a refused run left a results folder: {msg}"
        if any(p.name.startswith(".quaver-") for p in work.iterdir()):
            return f"a refused run left a temporary folder: {msg}"
        return None
    except Exception:  # noqa: BLE001 - the point is to catch everything else
        return traceback.format_exc(limit=-4)
    leaked = _leaked(sink.getvalue())
    if leaked:
        return leaked
    raw = (out / "results.json").read_text()
    why = _finite_json(raw)
    if why:
        return why
    cond = json.loads(raw)["model"].get("stiffness_condition_estimate")
    if cond is not None and cond > COND_REFUSE:
        return f"a run with a stiffness condition estimate of {cond:.1e} (above {COND_REFUSE:.0e}) was not refused"
    for f in out.glob("*.csv"):
        with f.open(newline="") as fh:
            rows = csv.reader(fh)
            head = next(rows)
            for k, row in enumerate(rows, 2):
                for col, cell in zip(head, row):
                    # a rigid-body mode's period is infinite, and that is what the table says
                    if _BAD_NUMBER.fullmatch(cell) and not (col == "period_s" and cell == "inf"):
                        return f"{f.name}:{k} holds a non-finite {col}: {','.join(row)[:120]}"
    if code != 0 and flag_checks:
        return "a self-check failed:\n" + "\n".join(ln for ln in sink.getvalue().splitlines() if "FAIL" in ln)
    return None


def mutated(rng: random.Random, depth: int = 2, bases: dict[str, str] | None = None
            ) -> tuple[str, str, dict[str, str], list[str]]:
    """A base deck with `depth` random mutations (and sometimes a mutated table)."""
    bases = bases or base_decks()
    name = rng.choice(sorted(bases))
    text, tables, done = bases[name], dict(TABLES), [name]
    for _ in range(depth):
        if rng.random() < 0.12:
            t = rng.choice(sorted(TABLE_MUTATIONS))
            tables[t] = rng.choice(TABLE_MUTATIONS[t])
            done.append(f"table {t}")
            continue
        mut = rng.choice(MUTATIONS)
        text = mut(text, rng)
        done.append(mut.__name__)
    return name, text, tables, done


# failures already reported where they belong, kept apart so that new ones stand out
KNOWN: list[tuple[str, str]] = [
    (r"RecursionError", "a long sum in an expression exhausts the reader's recursion (issue 11, item 7)"),
    (r"TypeError: must be real number, not complex",
     "a fractional power of a negative number gives a complex value in the reader (issue 11, item 7)"),
]


def known(why: str) -> str | None:
    return next((note for pattern, note in KNOWN if re.search(pattern, why)), None)


def run(cases: int, seed: int = 1, depth: int = 2, verbose: bool = False, report_every: int = 10,
        keep: Path | None = None, flag_checks: bool = False) -> list[str]:
    """`cases` random stacks of up to `depth` mutations; returns the new failures (and prints
    them when verbose). With `keep`, each failing deck and its tables are saved there; with
    `flag_checks`, runs whose self-checks fail are listed too."""
    rng = random.Random(seed)
    bad, seen_known = [], 0
    with tempfile.TemporaryDirectory(prefix="quaver-fuzz-") as tmp:
        for k in range(cases):
            _, text, tables, done = mutated(rng, rng.randint(1, depth))
            why = check(text, tables, Path(tmp) / f"c{k}", report=report_every > 0 and k % report_every == 0,
                        flag_checks=flag_checks)
            if not why:
                continue
            if known(why):
                seen_known += 1
                continue
            bad.append(f"case {k} ({', '.join(done)}):\n{why}")
            if keep:
                (keep / f"c{k}").mkdir(parents=True, exist_ok=True)
                (keep / f"c{k}" / "fuzz.deck").write_text(text)
                for name, t in tables.items():
                    (keep / f"c{k}" / name).write_text(t)
            if verbose:
                print(bad[-1], flush=True)
    if verbose and seen_known:
        print(f"({seen_known} known failures left out: {'; '.join(n for _, n in KNOWN)})")
    return bad


if __name__ == "__main__":
    import argparse

    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("cases", type=int, nargs="?", default=2000)
    p.add_argument("seed", type=int, nargs="?", default=1)
    p.add_argument("--keep", type=Path, help="save each failing deck (and its tables) here")
    p.add_argument("--report-every", type=int, default=10, help="draw plots and report.html every Nth run")
    p.add_argument("--checks", action="store_true", help="also list runs whose self-checks fail")
    a = p.parse_args()
    bad = run(a.cases, a.seed, depth=3, verbose=True, report_every=a.report_every, keep=a.keep,
              flag_checks=a.checks)
    print(f"{a.cases} cases, {len(bad)} failures")
    sys.exit(1 if bad else 0)
