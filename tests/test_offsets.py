"""Member end offsets: the elastic part of a member between offset ends, joined to its nodes by
rigid arms (its matrices and loads carried to the nodes by the arm transformation).

Sources beside each check:
- the same members modelled with extra nodes at the elastic ends and rigid links to the nodes
  (fem's own links, themselves checked in tests/test_links.py against closed forms): the two
  models are the same equations, so they agree to round-off (1e-10 relative; measured 1e-15);
- a cantilever whose end is offset beyond its elastic part, under an end load: Roark's
  Formulas for Stress and Strain, 7th ed., Table 8.1 cases 1a and 3a (end load and end moment:
  deflection P L^3/3EI + M L^2/2EI, rotation P L^2/2EI + M L/EI); exact for the cubic element;
- the statics of a rigid arm (moment M + o x F carried to the node; common practice, no source).
"""

import numpy as np
import pytest

from fem import solve
from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.geometry import local_axes

BASE = """
material ST {{ E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section P = ishape(d = 200 mm, bf = 100 mm, tf = 8 mm, tw = 5.6 mm)
node A = (0, 0, 0)
node B = (3 m, 0, 0.5 m)
node C = (3 m, 2 m, 0.5 m)
support A fixed
support C fixed
mass B = 200 kg
{members}
case LOAD static {{ force B = (1 kN, 2 kN, -3 kN), moment B = (0, 500 N*m, 0), line M* = (0, 0, -2 kN/m) }}
case DEAD static {{ gravity = (0, 0, -9.81 m/s^2) }}
case MODES modes {{ count = 6 }}
case SHAKE harmonic {{ force B = (0, 1 kN, 0), from = 5 Hz, to = 60 Hz, points = 40, damping = 2 percent,
                       modes = MODES }}
"""
OFFSET = """member M1 : A -> B beam P ST offset_i = (0.2 m, 0.1 m, 0.15 m) offset_j = local(-0.3 m, 0, 0.1 m) up = (0, 0, 1)
member M2 : B -> C beam P ST offset_i = (0, 0.25 m, 0)"""


def _extra_nodes():
    """The same members between extra nodes at their elastic ends, linked to the nodes."""
    R = local_axes(np.array([[0, 0, 0.0]]), np.array([[3, 0, 0.5]]), up=np.array([[0, 0, 1.0]]))[0][0]
    bj = np.array([3, 0, 0.5]) + R.T @ np.array([-0.3, 0, 0.1])
    return f"""node A1 = (0.2 m, 0.1 m, 0.15 m)
node B1 = ({float(bj[0])!r} m, {float(bj[1])!r} m, {float(bj[2])!r} m)
node B2 = (3 m, 0.25 m, 0.5 m)
member M1 : A1 -> B1 beam P ST up = (0, 0, 1)
member M2 : B2 -> C beam P ST
link LA: A -> A1
link LB: B -> B1, B2"""


@pytest.fixture(scope="module")
def pair():
    return solve(read_text(BASE.format(members=OFFSET))), solve(read_text(BASE.format(members=_extra_nodes())))


def test_offsets_equal_extra_nodes_and_links(pair):
    """Displacements, reactions, member end forces (at the elastic ends), frequencies and the
    harmonic response agree with the model of extra nodes and links to round-off (1e-10)."""
    off, ext = pair
    assert off.ok and ext.ok
    for c in ("LOAD", "DEAD"):
        a, b = off[c], ext[c]
        assert a.u[:3] == pytest.approx(b.u[:3], abs=1e-10 * np.abs(b.u).max())
        assert a.reactions[[0, 2]] == pytest.approx(b.reactions[[0, 2]], abs=1e-10 * np.abs(b.reactions).max())
        assert a.member_forces == pytest.approx(b.member_forces, abs=1e-10 * np.abs(b.member_forces).max())
    assert off["MODES"].modes.freq == pytest.approx(ext["MODES"].modes.freq, rel=1e-10)
    assert off["SHAKE"].peak[1] == pytest.approx(ext["SHAKE"].peak[1], rel=1e-8, abs=1e-8 * off["SHAKE"].peak.max())
    # the member mass is that of the elastic part (the arms are rigid and massless)
    assert off.model.total_mass() == pytest.approx(ext.model.total_mass(), rel=1e-14)
    assert off.assembled_mass == pytest.approx(off.model.total_mass(), rel=1e-12)


def test_end_offset_beyond_the_elastic_part_against_roark():
    """A cantilever A -> C whose elastic part ends a = 0.5 m short of C (offset_j = (-0.5, 0,
    0)): a load P at C gives the elastic tip the force P and the moment P a, and C moves by
    w + a theta (Roark, end load and end moment); exact to round-off (1e-10)."""
    deck = """
material ST { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node C = (2.5 m, 0, 0)
member AC : A -> C beam P ST offset_j = (-0.5 m, 0, 0)
support A fixed
case LOAD static { force C = (0, 0, -1 kN) }
"""
    res = solve(read_text(deck))
    model = res.model
    L, a, P = 2.0, 0.5, 1000.0
    EI = model.E[0] * model.Iy[0]
    w = P * L**3 / (3 * EI) + P * a * L**2 / (2 * EI)
    th = P * L**2 / (2 * EI) + P * a * L / EI
    assert model.lengths[0] == pytest.approx(L, rel=1e-15)
    assert res["LOAD"].u[1, 2] == pytest.approx(-(w + a * th), rel=1e-10)
    # end forces at the elastic end j: shear P and no moment there is P a... the moment at
    # the elastic end is the load's moment about it, P a; at the node C it is zero
    from fem.assembly import element_matrices
    from fem.elements.rigid import forces_at_nodes

    mf = res["LOAD"].member_forces
    R = element_matrices(model)[2]
    at_nodes = forces_at_nodes(mf, model.offsets, R)
    assert abs(mf[0, 10]) == pytest.approx(P * a, rel=1e-10)      # My at the elastic end j
    assert at_nodes[0, 10] == pytest.approx(0.0, abs=1e-9 * P * a)  # ... and at the node C
    assert abs(at_nodes[0, 4]) == pytest.approx(P * (L + a), rel=1e-10)   # My at A: P times the lever


def test_forces_at_the_nodes_balance_the_supports(pair):
    """At a support whose only member has an offset, the member's end forces carried to the
    node (global axes) are minus the support's reactions (statics of the node)."""
    from fem.assembly import element_matrices
    from fem.elements.rigid import forces_at_nodes

    off, _ = pair
    model = off.model
    R = element_matrices(model)[2]
    for c in ("LOAD", "DEAD"):
        f = forces_at_nodes(off[c].member_forces, model.offsets, R)
        # member M1's end i sits at A; member forces are the forces on the member: the node
        # pushes the member with them, so the support pushes the node with the same
        at_A = np.r_[R[0].T @ f[0, 0:3], R[0].T @ f[0, 3:6]]
        assert at_A == pytest.approx(off[c].reactions[0], abs=1e-9 * np.abs(off[c].reactions[0]).max())


def test_node_forces_table_written(pair, tmp_path):
    from fem.output.tables import write_tables

    off, _ = pair
    write_tables(off, tmp_path)
    lines = (tmp_path / "member_node_forces.csv").read_text().splitlines()
    assert lines[0] == "case,member,end,node,N,Vy,Vz,T,My,Mz"
    assert len(lines) == 1 + 2 * 2 * 2          # 2 static cases x 2 members x 2 ends


def test_local_offset_is_the_global_one_turned():
    """local(dx, dy, dz) is along the member's own axes (from its nodes, roll and up)."""
    a = read_text(BASE.format(members=OFFSET)).offsets
    R = local_axes(np.array([[0, 0, 0.0]]), np.array([[3, 0, 0.5]]), up=np.array([[0, 0, 1.0]]))[0][0]
    assert a[0, 1] == pytest.approx(R.T @ np.array([-0.3, 0, 0.1]), abs=1e-15)
    assert a[0, 0] == pytest.approx([0.2, 0.1, 0.15], abs=0)


BAD = [
    ("offset_i = (1.5 m, 0, 0) offset_j = (-1.5 m, 0, 0)", "leave its elastic part no length"),
    ("offset_i = local(1 m, 0)", "needs three lengths"),
    ("offset_i = (1, 0, 0)", "length"),
    ("offset_k = (1 m, 0, 0)", "did you mean .offset_j. or .offset_i."),
    ("offset_i = (0, 0, 1 m) offset_i = (0, 0, 1 m)", "given twice"),
    ("offset_i = (0, 0, 1 m)", "no end offsets"),
]


@pytest.mark.parametrize("opt, words", BAD, ids=[b[1][:20] for b in BAD])
def test_bad_offsets_are_refused(opt, words):
    deck = f"""
material ST {{ E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section P = rect(b = 50 mm, h = 50 mm)
node A = (0, 0, 0)
node B = (3 m, 0, 0)
member AB : A -> B {"truss" if "no end offsets" in words else "beam"} P ST {opt}
support A fixed
"""
    with pytest.raises(DeckError, match=words):
        read_text(deck)


def test_offset_with_an_end_release_equals_extra_nodes():
    """An end release acts at the elastic end: a member offset at j and hinged there equals the
    member between extra nodes, hinged at the same end, linked to the nodes (round-off, 1e-10)."""
    rel = "release j (ry, rz)"
    off = OFFSET.replace("up = (0, 0, 1)", f"up = (0, 0, 1) {rel}")
    ext = _extra_nodes().replace("up = (0, 0, 1)", f"up = (0, 0, 1) {rel}")
    a, b = (solve(read_text(BASE.format(members=m)), cases=["LOAD", "MODES"]) for m in (off, ext))
    assert a["LOAD"].u[:3] == pytest.approx(b["LOAD"].u[:3], abs=1e-10 * np.abs(b["LOAD"].u).max())
    assert a["LOAD"].member_forces == pytest.approx(b["LOAD"].member_forces,
                                                    abs=1e-10 * np.abs(b["LOAD"].member_forces).max())
    assert a["MODES"].modes.freq == pytest.approx(b["MODES"].modes.freq, rel=1e-10)
