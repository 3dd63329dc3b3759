"""Deliberately unstable models: each is refused before any solution, naming the nodes and
directions that are free; DOFs that nothing resists but nothing loads are held and listed."""

import pytest

from fem.analysis.static import held_dofs, solve_static
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import MechanismError

H = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (4 m, 0, 0)
node D = (2 m, 0, 2 m)
"""

# (id, body, a (node, direction) pair that must be named)
UNSTABLE = [
    ("no supports", "member M : A -> B beam P S", ("A", None)),
    ("rollers only", "member M : A -> B beam P S\nsupport A (uz)\nsupport B (uz)", ("A", "ux")),
    ("pinned cantilever", "member M : A -> B beam P S\nsupport A pinned", ("B", "uz")),
    ("pin without torsion", "member M : A -> B beam P S\nsupport A (ux, uy, uz, ry, rz)", ("B", "rx")),
    ("collinear truss joint", "member T1 : A -> B truss P S\nmember T2 : B -> C truss P S\nsupport A pinned\nsupport C pinned", ("B", "uz")),
    ("two-bar truss on one pin", "member T1 : A -> D truss P S\nmember T2 : D -> C truss P S\nsupport A pinned", ("D", None)),
    ("truss triangle unsupported", "member T1 : A -> D truss P S\nmember T2 : D -> C truss P S\nmember T3 : A -> C truss P S", ("A", None)),
    ("released chain", "member M1 : A -> B beam P S release j (ry, rz)\nmember M2 : B -> C beam P S release i (ry, rz)\nsupport A fixed", ("C", "uz")),
    ("hinge at both ends of a cantilever", "member M : A -> B beam P S release i (ry, rz)\nsupport A fixed", ("B", "uz")),
    ("three-hinged line", "member M1 : A -> B beam P S release j (ry, rz)\nmember M2 : B -> C beam P S\nsupport A pinned\nsupport C pinned", ("B", "uz")),
    ("truss square without diagonal", "node E = (0, 0, 2 m)\nmember T1 : A -> E truss P S\nmember T2 : E -> D truss P S\nmember T3 : D -> B truss P S\nsupport A pinned\nsupport B pinned", ("E", "ux")),
    ("portal with pinned bases and column-top hinges", "node E = (0, 0, 3 m)\nnode F = (2 m, 0, 3 m)\nmember C1 : A -> E beam P S release j (ry)\nmember C2 : B -> F beam P S release j (ry)\nmember BM : E -> F beam P S\nsupport A pinned\nsupport B pinned\nsupport E (uy, rx, rz)\nsupport F (uy, rx, rz)", ("E", "ux")),
    ("portal pinned out of plane", "node E = (0, 0, 3 m)\nnode F = (2 m, 0, 3 m)\nmember C1 : A -> E beam P S\nmember C2 : B -> F beam P S\nmember BM : E -> F beam P S release i (ry) release j (ry)\nsupport A pinned\nsupport B pinned", ("E", None)),
    ("floating second part", "node X = (10 m, 0, 0)\nnode Y = (12 m, 0, 0)\nmember M : A -> B beam P S\nmember Q : X -> Y beam P S\nsupport A fixed", ("X", None)),
    ("spring only in one direction", "member M : A -> B beam P S\nspring A (uz = 1e6 N/m)", ("A", None)),
    ("load on a node only a spring holds", "member M : A -> B beam P S\nsupport A fixed\nspring C (uz = 1e6 N/m)", ("C", "ux")),
    ("vertical truss mast on a pin", "node T = (0, 0, 5 m)\nmember L : A -> T truss P S\nsupport A pinned", ("T", None)),
    ("released roll of a straight beam line", "member M1 : A -> B beam P S release j (rx)\nmember M2 : B -> C beam P S\nsupport A fixed\nsupport C (ux, uy, uz)", ("C", "rx")),
    ("symmetric two-bar without lateral support", "member T1 : A -> D truss P S\nmember T2 : C -> D truss P S\nsupport A (ux, uz)\nsupport C (ux, uz)", ("A", "uy")),
    ("beam on two rollers in x", "member M1 : A -> B beam P S\nmember M2 : B -> C beam P S\nsupport A (uy, uz, rx)\nsupport C (uy, uz)", ("A", "ux")),
]


def _load_everywhere(body):
    """A load on every node in every translation, so a mechanism cannot hide."""
    import re

    nodes = [ln.split()[1] for ln in (H + body).splitlines() if ln.startswith("node ")]
    nodes = [n for n in nodes if re.search(rf"\b{n}\b", body)]      # nodes the model uses
    loads = "; ".join(f"force {n} = (1 kN, 1 kN, 1 kN)" for n in nodes)
    return H + body + f"\ncase ALL static {{ {loads} }}\n"


@pytest.mark.parametrize("body,named", [(b, n) for _, b, n in UNSTABLE], ids=[i for i, _, _ in UNSTABLE])
def test_unstable_model_is_reported(body, named):
    m = read_text(_load_everywhere(body))
    with pytest.raises(MechanismError) as info:
        solve_static(m, assemble(m), m.cases[0])
    err = info.value
    assert err.free, "the free nodes and directions must be named"
    node, direction = named
    assert any(n == node and (direction is None or d == direction) for n, d in err.free), (str(err), named)


def test_enough_unstable_models():
    assert len(UNSTABLE) >= 20


def test_torsion_released_at_both_ends_is_held_and_listed():
    # node B's twist meets two members whose torsion is released at their far ends: nothing
    # resists it, so it is held and listed (and a torque there would be refused)
    body = "member M : A -> B beam P S release i (rx)\nmember N : B -> C beam P S release j (rx)\nsupport A fixed\nsupport C fixed"
    m = read_text(H + body + "\ncase V static { force B = (0, 0, -10 kN) }\n")
    asm = assemble(m)
    assert ("B", "rx") in held_dofs(m, asm)
    m = read_text(H + body + "\ncase V static { moment B = (1 kN*m, 0, 0) }\n")
    with pytest.raises(MechanismError, match="B rx"):
        solve_static(m, assemble(m), m.cases[0])


def test_planar_truss_out_of_plane_is_held_and_listed():
    # a planar truss in 3D: the apex has no out-of-plane stiffness; unloaded there it is held
    # and listed, loaded there it is refused
    body = "member T1 : A -> D truss P S\nmember T2 : D -> C truss P S\nmember T3 : A -> C truss P S\nsupport A pinned\nsupport C pinned"
    m = read_text(H + body + "\ncase V static { force D = (0, 0, -10 kN) }\n")
    asm = assemble(m)
    assert ("D", "uy") in held_dofs(m, asm)
    solve_static(m, asm, m.cases[0])
    m = read_text(H + body + "\ncase V static { force D = (0, 1 kN, 0) }\n")
    with pytest.raises(MechanismError, match="D uy"):
        solve_static(m, assemble(m), m.cases[0])
