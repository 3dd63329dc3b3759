"""Frequency sensitivities checked against finite differences of full solves and closed forms.

The derivative of a simple eigenvalue of K phi = lambda M phi (phi mass-normalised) is
phi^T (dK/dp - lambda dM/dp) phi (Fox and Kapoor 1968, AIAA J. 6(12); from memory). The finite
differences here re-read nothing: they scale the model's arrays (dataclasses.replace), assemble
and solve again, so they share only the element matrices with the code under test.

Step and tolerance: a central difference of step h has a truncation error h^2/6 lambda''' (relative
~1e-8 at h = 1e-4 for these smooth, well separated eigenvalues) and a rounding error of the solve's
~1e-13 lambda divided by h (~1e-9 lambda); derivatives are compared to 1e-6 of the mode's own
lambda, which bounds both with margin (measured: at most 3.5e-8 at h = 1e-4, 3.5e-6 at h = 1e-3,
the factor 100 of an h^2 truncation; relative to the derivative itself at most 1.1e-7).
"""

from dataclasses import replace

import numpy as np
import pytest

from fem.analysis.energy import field_energies
from fem.analysis.modal_case import solve_modes_case
from fem.analysis.sensitivity import frequency_sensitivity, member_groups
from fem.assembly import assemble
from fem.deck.reader import read_text

H = 1e-4        # finite-difference step on a scale factor
TOL = 1e-6      # of the mode's lambda (see the module docstring)

# a portal with a hinged beam end, a truss brace, an arm with a spring at its tip and a mass
FRAME = """
material S {{ E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section R = rect(b = 100 mm, h = 160 mm)
section P = pipe(od = 88.9 mm, wall = 5.49 mm)
settings {{ shear = {shear} }}
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (4 m, 0, 3 m)
node D = (4 m, 0, 0)
node E = (2 m, 1 m, 3 m)
member C1 : A -> B beam R S
member B1 : B -> C beam R S release j (ry)
member C2 : D -> C beam R S
member T1 : A -> C truss P S
member X1 : B -> E beam P S
support A fixed
support D fixed
spring E (uy = 2e5 N/m, rz = 3e4 N*m)
mass C = 200 kg
case MODES modes {{ count = 6 }}
"""

# a table whose four legs (rectangles, each turned 90 degrees from the last) make the structure
# symmetric under a quarter turn: its two sway modes have one repeated frequency
TABLE = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section LEG = rect(b = 80 mm, h = 160 mm)
section BM = rect(b = 100 mm, h = 200 mm)
node A0 = (1 m, 1 m, 0)
node A1 = (-1 m, 1 m, 0)
node A2 = (-1 m, -1 m, 0)
node A3 = (1 m, -1 m, 0)
node T0 = (1 m, 1 m, 3 m)
node T1 = (-1 m, 1 m, 3 m)
node T2 = (-1 m, -1 m, 3 m)
node T3 = (1 m, -1 m, 3 m)
member L0 : A0 -> T0 beam LEG S
member L1 : A1 -> T1 beam LEG S roll = 90 deg
member L2 : A2 -> T2 beam LEG S roll = 180 deg
member L3 : A3 -> T3 beam LEG S roll = 270 deg
member B0 : T0 -> T1 beam BM S
member B1 : T1 -> T2 beam BM S
member B2 : T2 -> T3 beam BM S
member B3 : T3 -> T0 beam BM S
support A* fixed
mass T* = 500 kg
case MODES modes { count = 6 }
"""

# a simply supported beam, 6 m, 20 members, held to bending in x-z (uy, rx restrained);
# optionally a slender strut from midspan (node N10) to the ground
BEAM = """
material S {{ E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section R = rect(b = 200 mm, h = 100 mm)
section W = round(d = 4 mm)
for i in 0..20 {{ node N[i] = (i*0.3 m, 0, 0) }}
for i in 0..19 {{ member M[i] : N[i] -> N[i+1] beam R S }}
support N* (uy, rx)
support N0 (ux, uy, uz, rx)
support N20 (uy, uz, rx)
{strut}
case MODES modes {{ count = 3 }}
"""
STRUT = """node G = (3 m, 0, -2 m)
member S1 : N10 -> G truss W S
support G fixed"""


def solve(model):
    return solve_modes_case(model, assemble(model), model.cases[0])


def lam(model):
    return solve(model).modes.omega ** 2


def scaled(model, changes, p):
    """The model with the arrays `changes` {field: (index, power)} multiplied by p**power at index."""
    new = {}
    for name, (idx, power) in changes.items():
        a = getattr(model, name).astype(float).copy()
        a[idx] *= p ** power
        new[name] = a
    return replace(model, **new)


def central(model, changes, h=H):
    return (lam(scaled(model, changes, 1 + h)) - lam(scaled(model, changes, 1 - h))) / (2 * h)


def agree(pred, fd, lam, tol=TOL):
    """Each mode's derivative within tol of its own lambda."""
    err = np.abs(np.asarray(pred) - fd) / lam
    assert err.max() <= tol, f"relative to lambda: {err}"


def row(s, kind, target):
    hit = np.flatnonzero((s.kind == kind) & (s.target == target))
    return s.d_lambda[hit[0]] if len(hit) else np.zeros(s.d_lambda.shape[1])


@pytest.fixture(scope="module")
def frame():
    m = read_text(FRAME.format(shear="off"))
    r = solve(m)
    return m, r, frequency_sensitivity(m, r)


def test_energy_split_matches_the_solve_and_homogeneity(frame):
    # phi^T K phi = lambda and phi^T M phi = 1 for mass-normalised modes, so the members' and
    # springs' strain energies sum to lambda / 2 and the kinetic ones to 1 / 2; scaling all of K
    # gives d lambda / d p = lambda, all of M -lambda (lambda is homogeneous of degree 1 in K
    # and -1 in M; Euler's theorem on homogeneous functions)
    m, r, s = frame
    assert not s.repeated.any()
    assert s.energy_check.max() < 1e-12
    stiff = np.isin(s.kind, ["bending", "axial", "torsion", "spring"])
    mass = np.isin(s.kind, ["member mass", "point mass"])
    np.testing.assert_allclose(s.d_lambda[stiff].sum(0), s.lam, rtol=1e-12)
    np.testing.assert_allclose(s.d_lambda[mass].sum(0), -s.lam, rtol=1e-12)
    np.testing.assert_allclose(s.member_kinetic_share.sum(0) + 2 * s.d_lambda[s.kind == "point mass"].sum(0)
                               / -(2 * s.lam), 1.0, rtol=1e-12)
    # d ln f / d ln p is half the part's energy share
    np.testing.assert_allclose(s.log_derivative()[stiff].sum(0), 0.5, rtol=1e-12)


MEMBER_CASES = [
    # (member, arrays scaled {field: power}, parameters the change moves)
    ("C1", {"E": 1}, ["bending", "axial"]),
    ("B1", {"E": 1}, ["bending", "axial"]),       # hinged end: condensed matrices
    ("X1", {"E": 1}, ["bending", "axial"]),
    ("T1", {"E": 1}, ["axial"]),                  # truss member
    ("C2", {"G": 1}, ["torsion"]),
    ("X1", {"G": 1}, ["torsion"]),
    ("B1", {"rho": 1}, ["member mass"]),
    ("T1", {"rho": 1}, ["member mass"]),
    ("C1", {"rho": 1}, ["member mass"]),
]


@pytest.mark.parametrize("member, change, kinds", MEMBER_CASES,
                         ids=[f"{m}-{'+'.join(c)}" for m, c, _ in MEMBER_CASES])
def test_member_parameters_against_central_differences(frame, member, change, kinds):
    m, r, s = frame
    i = m.member_names.index(member)
    fd = central(m, {f: (i, pw) for f, pw in change.items()})
    pred = sum(row(s, k, member) for k in kinds)
    agree(pred, fd, s.lam)


@pytest.mark.parametrize("member", ["C1", "B1", "X1"])
def test_bending_alone_against_central_differences(frame, member):
    # E x p with A / p keeps E A, and rho x p keeps rho A: only E I changes in the stiffness,
    # and in the mass only the twist inertia rho (Iy + Iz) L of the member (consistent mass),
    # whose derivative is -lambda 2 T_twist (its share of the kinetic energy, energy.py)
    m, r, s = frame
    i = m.member_names.index(member)
    fd = central(m, {"E": (i, 1), "A": (i, -1), "rho": (i, 1)})
    twist = np.array([field_energies(m, r.shapes[:, :, j]).member_kinetic[i, 1] for j in range(len(s.lam))])
    agree(row(s, "bending", member) - 2 * s.lam * twist, fd, s.lam)


def test_springs_and_point_masses_against_central_differences(frame):
    m, r, s = frame
    e, c = m.node_names.index("E"), m.node_names.index("C")
    agree(row(s, "spring", "E"), central(m, {"springs": (e, 1)}), s.lam)
    agree(row(s, "point mass", "C"), central(m, {"point_mass": (c, 1)}), s.lam)
    # per kg of mass and per N/m of spring added at a node, against central differences of
    # +-1 kg at C (200 kg there) and +-1e3 N/m at B (none there; members of ~1e6 N/m)
    def freq_with(field, node, dirs, step):
        a = getattr(m, field).copy()
        a[node, dirs] += step
        return np.sqrt(lam(replace(m, **{field: a}))) / (2 * np.pi)

    fd = (freq_with("point_mass", c, [0, 1, 2], 1.0) - freq_with("point_mass", c, [0, 1, 2], -1.0)) / 2.0
    np.testing.assert_allclose(s.added_mass("C"), fd, rtol=1e-5)
    b = m.node_names.index("B")
    fd = (freq_with("springs", b, [2], 1e3) - freq_with("springs", b, [2], -1e3)) / 2e3
    np.testing.assert_allclose(s.added_spring(b, 2), fd, rtol=1e-5, atol=1e-12 * s.freq.max())


def test_shear_flexible_members_scale_bending_and_shear_together():
    # with shear = on, the bending parameter scales E I and G As of each plane together (the
    # shear ratio, and so the consistent mass, unchanged): scaling both E and G of a member
    # therefore moves exactly its bending, axial and torsion parameters
    m = read_text(FRAME.format(shear="on"))
    r = solve(m)
    s = frequency_sensitivity(m, r)
    assert s.energy_check.max() < 1e-12
    for member in ("C1", "B1"):
        i = m.member_names.index(member)
        fd = central(m, {"E": (i, 1), "G": (i, 1)})
        pred = row(s, "bending", member) + row(s, "axial", member) + row(s, "torsion", member)
        agree(pred, fd, s.lam)


def test_groups_sum_their_members(frame):
    # the derivative is linear in the parts: a group's is the sum of its members'
    m, r, s = frame
    by_section = frequency_sensitivity(m, r, groups="section")
    for kind in ("bending", "axial", "torsion", "member mass"):
        np.testing.assert_allclose(row(by_section, kind, "R"),
                                   sum(row(s, kind, x) for x in ("C1", "B1", "C2")), rtol=1e-12, atol=1e-9)
    cols = frequency_sensitivity(m, r, groups={"COLS": ["C1", "C2"], "ARM": ["X1"]})
    i = [m.member_names.index(x) for x in ("C1", "C2")]
    fd = central(m, {"E": (i, 1)})
    agree(row(cols, "bending", "COLS") + row(cols, "axial", "COLS"), fd, s.lam)
    # a truss-only group has no bending or torsion rows
    by_mat = frequency_sensitivity(m, r, groups={"BRACE": ["T1"]})
    assert set(by_mat.kind[by_mat.target == "BRACE"]) == {"axial", "member mass"}
    names, inc = member_groups(m, "material")
    assert names == ["S"] and inc.sum() == m.n_members
    with pytest.raises(ValueError, match="group 'G' names member.*XX"):
        member_groups(m, {"G": ["C1", "XX"]})


def test_ranked_rows_for_raising_a_mode(frame):
    m, r, s = frame
    rows = s.rows(0)
    d = [x["d_freq"] for x in rows]
    assert d == sorted(d, reverse=True)
    assert [x["rank"] for x in rows] == list(range(1, len(rows) + 1))
    # the stiffness shares of one mode add up to all its strain energy
    assert sum(x["share"] for x in rows) == pytest.approx(1.0, rel=1e-12)
    assert len(s.rows(0, top=3)) == 3
    # percent: % change of f for 1 % more of the part, against the difference of two solves
    top = rows[0]
    i = m.member_names.index(top["target"])
    fields = {"bending": {"E": (i, 1), "A": (i, -1), "rho": (i, 1)}, "axial": {"E": (i, 1)}}[top["kind"]]
    f0, f1 = (np.sqrt(lam(scaled(m, fields, p))[0]) for p in (1.0, 1.01))
    assert 100 * (f1 / f0 - 1) == pytest.approx(top["percent"], rel=0.02)   # 1 % step: first order


def test_repeated_pair_one_sided_differences():
    # two sway modes of one frequency: for each parameter the one-sided derivatives are the
    # eigenvalues of the pair's matrix Phi^T (dK - lambda dM) Phi (Seyranian, Lund and Olhoff
    # 1994; from memory), whatever basis of the pair the solver returned; checked with the
    # one-sided second-order difference (-3 l(1) + 4 l(1+h) - l(1+2h)) / 2h of sorted eigenvalues.
    # E I of one leg changed alone, as above (the pair carries no twist: measured < 1e-10 of 1/2)
    m = read_text(TABLE)
    r = solve(m)
    s = frequency_sensitivity(m, r)
    assert s.repeated.tolist()[:3] == [True, True, False]
    assert r.modes.freq[1] / r.modes.freq[0] - 1 < 1e-9
    for leg in ("L0", "L1"):
        i = m.member_names.index(leg)
        change = {"E": (i, 1), "A": (i, -1), "rho": (i, 1)}
        ls = [lam(scaled(m, change, 1 + q * H)) for q in range(3)]
        fd = (-3 * ls[0] + 4 * ls[1] - ls[2]) / (2 * H)
        d = row(s, "bending", leg)
        agree(d[:2], fd[:2], s.lam[:2])
        assert d[1] - d[0] > 0.5 * d[1]          # the leg is stiffer one way: the pair splits
    # the same numbers from any basis of the pair
    c, sn = np.cos(0.7), np.sin(0.7)
    shapes = r.shapes.copy()
    shapes[:, :, 0], shapes[:, :, 1] = c * r.shapes[:, :, 0] + sn * r.shapes[:, :, 1], \
        -sn * r.shapes[:, :, 0] + c * r.shapes[:, :, 1]
    s2 = frequency_sensitivity(m, replace(r, shapes=shapes))
    np.testing.assert_allclose(s2.d_lambda, s.d_lambda, rtol=0, atol=1e-9 * s.lam.max())
    with pytest.raises(ValueError, match="repeat the eigenvalue"):
        frequency_sensitivity(m, r, modes=[1, 2])


def test_mass_at_a_node_point_leaves_the_mode_unchanged():
    # simply supported beam (Blevins 1979 Table 8-1, from memory; shape sin(n pi x / L), values in
    # reference-values.md section 1): mode 2 has a node at midspan, so a mass there does not move
    # it (d f / d m = 0); for mode 1 the mass-normalised shape at midspan is sqrt(2 / (m L)), so
    # d f / d M = -f phi^2 / 2 = -f1 / (m L). 20 cubic members: shapes at the nodes to ~1e-6.
    m = read_text(BEAM.format(strut=""))
    r = solve(m)
    s = frequency_sensitivity(m, r)
    mL = float(m.member_mass().sum())
    f = s.freq
    EI, mu = 200e9 * 0.2 * 0.1 ** 3 / 12, 7850 * 0.02
    np.testing.assert_allclose(f[:2], np.array([9.86960440, 39.4784176]) / (2 * np.pi * 6.0 ** 2)
                               * np.sqrt(EI / mu), rtol=1e-5)
    dm = s.added_mass("N10")
    assert abs(dm[1]) < 1e-10 * f[1] / mL
    assert dm[0] == pytest.approx(-f[0] / mL, rel=1e-4)
    # and a full solve with 50 kg at midspan: mode 2 unchanged to round-off
    pm = m.point_mass.copy()
    pm[m.node_names.index("N10"), :3] = 50.0
    f_new = solve(replace(m, point_mass=pm)).modes.freq
    assert f_new[1] == pytest.approx(f[1], rel=1e-10)
    assert f_new[0] < f[0] * (1 - 1e-2)


def test_stiffening_a_member_without_strain_energy_leaves_the_mode_unchanged():
    # a strut at midspan of the simply supported beam: mode 2 has a node there, so the strut
    # neither strains nor moves in it; its frequency stays the beam's own (closed form above)
    # however stiff the strut, while mode 1 rises with it
    m = read_text(BEAM.format(strut=STRUT))
    r = solve(m)
    s = frequency_sensitivity(m, r)
    d_axial = row(s, "axial", "S1")
    assert abs(d_axial[1]) < 1e-12 * s.lam[1]
    assert d_axial[0] > 1e-3 * s.lam[0]
    EI, mu = 200e9 * 0.2 * 0.1 ** 3 / 12, 7850 * 0.02
    assert s.freq[1] == pytest.approx(39.4784176 / (2 * np.pi * 36.0) * np.sqrt(EI / mu), rel=1e-5)
    i = m.member_names.index("S1")
    f10 = solve(scaled(m, {"E": (i, 1)}, 10.0)).modes.freq
    assert f10[1] == pytest.approx(s.freq[1], rel=1e-10)
    assert f10[0] > s.freq[0] * 1.01


def test_lumped_mass_and_released_end():
    # lumped mass is not condensed at a released end (assembly's rule); the energies follow it
    m = read_text(FRAME.format(shear="off").replace("settings { shear = off }",
                                                    "settings { shear = off, mass = lumped }"))
    assert m.settings.get("mass") == "lumped"
    r = solve(m)
    s = frequency_sensitivity(m, r)
    assert s.energy_check.max() < 1e-12
    i = m.member_names.index("B1")
    agree(row(s, "member mass", "B1"), central(m, {"rho": (i, 1)}), s.lam)
    agree(row(s, "bending", "B1") + row(s, "axial", "B1"), central(m, {"E": (i, 1)}), s.lam)


def test_repeated_pair_added_mass_and_spring():
    # a mass moving in X only, or a spring in Y, at one corner of the symmetric table splits its
    # sway pair: one-sided derivatives from the pair's matrix, against the one-sided second-order
    # difference in the added amount (steps of 2 kg on 2000 kg, 2e4 N/m on a ~1e6 N/m frame;
    # measured 3.5e-6 and 2.9e-5 of the larger derivative, 100 times less at a tenth of the step:
    # the h^2 error of the difference)
    m = read_text(TABLE)
    s = frequency_sensitivity(m, solve(m))
    t0 = m.node_names.index("T0")
    for field_, d, step, got in (("point_mass", 0, 2.0, s.added_mass("T0", directions=(0,))),
                                 ("springs", 1, 2e4, s.added_spring("T0", 1))):
        fs = []
        for q in range(3):
            a = getattr(m, field_).copy()
            a[t0, d] += q * step
            fs.append(np.sqrt(lam(replace(m, **{field_: a}))) / (2 * np.pi))
        fd = (-3 * fs[0] + 4 * fs[1] - fs[2]) / (2 * step)
        np.testing.assert_allclose(got[:2], fd[:2], rtol=0, atol=1e-4 * np.abs(fd[:2]).max())
        assert abs(got[1] - got[0]) > 0.5 * np.abs(got[:2]).max()     # one of the pair moves, not both
