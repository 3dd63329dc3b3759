"""Modes through the deck: beam frequency constants, convergence, effective-mass sum."""

import numpy as np
import pytest

from fem.analysis.modal_case import solve_modes_case
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import DeckError

CANTILEVER = """
material S {{ E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
settings {{ mass = {mass} }}
let n = {n}
for i in 0..n {{ node N[i] = (i*5 m/n, 0, 0) }}
for i in 0..n-1 {{ member M[i] : N[i] -> N[i+1] beam P S }}
support N0 fixed
case MODES modes {{ count = {count} }}
"""


def modes(n, count=8, mass="consistent"):
    m = read_text(CANTILEVER.format(n=n, count=count, mass=mass))
    return m, solve_modes_case(m, assemble(m), m.cases[0])


def test_cantilever_bending_axial_torsion():
    # reference-values.md section 1 (Blevins 1979 Table 8-1; values C): NPS 6 Sch 40, L = 5 m,
    # E = 200 GPa, rho = 7850: bending 6.44505, 40.3904, 113.094 Hz (each twice, round section);
    # torsion (2n-1)/(4L) sqrt(G/rho) = 156.518 Hz, axial (2n-1)/(4L) sqrt(E/rho) = 252.377 Hz.
    # Cubic consistent-mass elements converge as h^4 (from above); with 20 elements the third
    # bending mode is within 1e-5, the linear axial/torsion elements (error ~ (pi/2n)^2/12 for
    # mode 1 ~ 5e-4 at n = 20) within 1e-3.
    _, r = modes(20, count=10)
    f = r.modes.freq
    np.testing.assert_allclose(f[[0, 1]], 6.44505, rtol=2e-6)
    np.testing.assert_allclose(f[[2, 3]], 40.3904, rtol=1e-5)
    np.testing.assert_allclose(f[[4, 5]], 113.094, rtol=2e-5)
    assert np.isclose(f, 156.518, rtol=1e-3).sum() == 1
    assert np.isclose(f, 252.377, rtol=1e-3).sum() == 1
    assert r.modes.sturm_count == len(f)


def test_mesh_convergence_is_monotone_from_above():
    # consistent mass gives an upper bound (Rayleigh-Ritz) that decreases as the mesh is refined
    errs = [modes(n, count=6).__getitem__(1).modes.freq[4] / 113.094 - 1 for n in (4, 8, 16)]
    assert errs[0] > errs[1] > errs[2] > -1e-6
    # h^4 convergence: halving h divides the error by about 16 (8 to 24 allowed)
    assert 8 < errs[0] / errs[1] < 24


def test_effective_masses_sum_to_free_mass():
    # with every mode kept, sum of effective masses = participating mass (a physical fact)
    m, r = modes(4, count=24)
    assert r.part.cumulative[-1, :3] == pytest.approx([1, 1, 1], abs=1e-10)
    # participating mass in X: all member mass except the share lumped on the fixed node
    assert r.part.total[0] < m.total_mass()


def test_modes_option_errors():
    with pytest.raises(DeckError, match="unknown option 'cout'.*did you mean 'count'"):
        read_text(CANTILEVER.format(n=2, count=4, mass="consistent").replace("count =", "cout ="))
    with pytest.raises(DeckError, match="whole number"):
        read_text(CANTILEVER.format(n=2, count=2.5, mass="consistent"))


def test_mass_participation_target():
    # the solver adds modes until the cumulative effective mass reaches the target, and keeps
    # just enough; checked against the cumulative fractions of a plain count request
    text = CANTILEVER.format(n=20, count=40, mass="consistent")
    _, full = modes(20, count=40)
    cum = full.part.cumulative[:, 2]                 # Z: bending in x-z
    need = int(np.argmax(cum >= 0.9)) + 1
    m = read_text(text.replace("count = 40", "target = (0, 0, 90 percent), max = 40"))
    r = solve_modes_case(m, assemble(m), m.cases[0])
    assert r.target_met and len(r.modes.freq) == need
    assert r.part.cumulative[-1, 2] >= 0.9 > r.part.cumulative[-2, 2]
    # an unreachable cap is reported, not hidden
    m = read_text(text.replace("count = 40", "target = (0, 0, 99.9 percent), max = 3"))
    r = solve_modes_case(m, assemble(m), m.cases[0])
    assert r.target_met is False and len(r.modes.freq) == 3


def test_modal_mass_and_stiffness_of_a_tip_mass_on_a_massless_cantilever(tmp_path):
    # a point mass on a massless cantilever is a single-DOF system per bending plane: with the
    # shape scaled to a unit tip translation the modal mass is the point mass and the modal
    # stiffness the tip stiffness 3EI/L^3 (Roark 7th ed. Table 8.1); omega^2 = k/m. With every
    # finite mode computed the effective masses add up to the total mass (physical fact).
    import json

    from fem.cli import run_deck
    deck = tmp_path / "tip.deck"
    deck.write_text("""
material LIGHT { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (i*1.25 m, 0, 0) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P LIGHT }
support N0 fixed
mass N4 = 500 kg
case MODES modes { count = 50 }
""")
    assert run_deck(str(deck), str(tmp_path / "out"), render=False) == 0
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    c = next(c for c in doc["cases"] if c["name"] == "MODES")
    k_tip = 3 * 200e9 * 1.171623e-5 / 5.0**3           # NPS 6 Sch 40, I from reference-values §4
    assert len(c["frequency_Hz"]) == 3                 # three translations of the one mass
    np.testing.assert_allclose(c["modal_mass_kg"][:2], 500.0, rtol=1e-12)
    np.testing.assert_allclose(c["modal_stiffness_N_per_m"][:2], k_tip, rtol=1e-6)   # I to 7 digits
    assert c["checks"]["all_modes_computed"] and c["checks"]["effective_mass_sum_pass"]
    assert c["checks"]["effective_mass_sum_error"] < 1e-12


@pytest.mark.parametrize("ends,constants,rigid", [
    # reference-values.md section 1 (Blevins 1979 Table 8-1; roots C): (beta_n L)^2 per end
    # condition; free-free adds six rigid-body modes at zero frequency
    ("support N0 pinned\nsupport N24 (uy, uz)\nsupport N0 (rx)", [9.86960440, 39.4784176, 88.8264396], 0),
    ("support N0 fixed\nsupport N24 fixed", [22.3732854, 61.6728229, 120.903392], 0),
    ("", [22.3732854, 61.6728229, 120.903392], 6),
], ids=["pinned-pinned", "clamped-clamped", "free-free"])
def test_beam_frequency_constants_other_ends(ends, constants, rigid):
    # NPS 6 Sch 40 pipe, L = 5 m, E = 200 GPa, rho = 7850 (round: each bending mode twice);
    # 24 cubic elements converge from above as h^4 (checked on the cantilever above): the third
    # clamped-clamped mode is 3.0e-5 high here, so 5e-5
    deck = CANTILEVER.replace("support N0 fixed\n", ends + "\n").format(n=24, count=rigid + 8, mass="consistent")
    m = read_text(deck)
    r = solve_modes_case(m, assemble(m), m.cases[0])
    f = r.modes.freq
    assert np.all(f[:rigid] < 1e-6) and (rigid == 0 or f[rigid] > 1.0)
    EI, mass = 200e9 * 1.171623e-5, 7850 * 3.600457e-3
    ref = np.array(constants) * np.sqrt(EI / (mass * 5.0**4)) / (2 * np.pi)
    bending = f[rigid:]
    for fn in ref:
        assert np.isclose(bending, fn, rtol=5e-5).sum() == 2
    assert r.modes.sturm_count == r.modes.sturm_expected


RELEASED = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
let n = %d
for i in 0..n { node N[i] = (i*5 m/n, 0, 0) }
for i in 0..n-2 { member M[i] : N[i] -> N[i+1] beam P S }
member LAST : N[n-1] -> N[n] beam P S release j (ry, rz)
support N0 fixed
support N[n] pinned
case MODES modes { count = 4 }
"""


def test_hinge_by_release_converges_to_clamped_pinned_constants():
    # a clamped beam whose last member is released at the pinned end: reference-values.md
    # section 1 (Blevins 1979 Table 8-1; roots C) clamped-pinned (beta L)^2 = 15.4182057,
    # 49.9648620. The released end's mass is condensed with the stiffness's static transform, so
    # the error falls as h^4 (observed 4.1e-5, 2.6e-6 for mode 1 and 4.3e-4, 2.7e-5 for mode 2 on
    # 8 and 16 members: about 16x per halving; an uncondensed mass gave only 8x, 20-80x larger)
    EI, mass = 200e9 * 1.171623e-5, 7850 * 3.600457e-3
    ref = np.array([15.4182057, 49.9648620]) * np.sqrt(EI / (mass * 5.0**4)) / (2 * np.pi)
    err = []
    for n in (8, 16):
        m = read_text(RELEASED % n)
        f = solve_modes_case(m, assemble(m), m.cases[0]).modes.freq
        err.append(f[[0, 2]] / ref - 1)            # each bending mode twice (round section)
    err = np.array(err)
    assert np.all(err > 0)                                       # from above (consistent mass)
    assert np.all(err[1] < [3.3e-6, 3.4e-5])
    assert np.all(err[0] / err[1] > 12)                          # about h^4


def _frequencies(text):
    m = read_text(text)
    return solve_modes_case(m, assemble(m), m.cases[0]).modes


INCLINED = """
material S {{ E = 200 GPa, nu = 0.3, density = {rho} }}
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
settings {{ mass = {mass} }}
node A = (0, 0, 0)
node B = ({b})
node C = ({c})
member M1 : A -> B beam P S carried_mass = 50 kg/m
member M2 : B -> C beam P S
support A fixed
case MODES modes {{ count = 40 }}
"""


@pytest.mark.parametrize("rho,mass", [("0 kg/m^3", "consistent"), ("7850 kg/m^3", "lumped")],
                         ids=["translational-mass-only", "lumped"])
def test_massless_directions_across_dofs_and_frame_invariance(rho, mass):
    # an inclined member with mass only in translation (or lumped mass) leaves M singular along
    # its axial rotation, a direction that is no single DOF; those directions carry no inertia
    # and are condensed exactly. Rotating the whole model leaves the frequencies unchanged
    # (a physical fact): the same two members laid along X and Y, and tilted in space.
    aligned = INCLINED.format(rho=rho, mass=mass, b="5 m, 0, 0", c="5 m, 4 m, 0")
    # the same geometry rotated: B = R (5, 0, 0), C = R (5, 4, 0) with R about (1, 1, 1)/sqrt 3 by 50 deg
    ax = np.ones(3) / np.sqrt(3)
    t = np.radians(50)
    K = np.array([[0, -ax[2], ax[1]], [ax[2], 0, -ax[0]], [-ax[1], ax[0], 0]])
    R = np.eye(3) + np.sin(t) * K + (1 - np.cos(t)) * K @ K
    b, c = R @ [5, 0, 0], R @ [5, 4, 0]
    tilted = INCLINED.format(rho=rho, mass=mass, b=", ".join(f"{v:.15g} m" for v in b),
                             c=", ".join(f"{v:.15g} m" for v in c))
    fa, ft = _frequencies(aligned), _frequencies(tilted)
    assert len(ft.freq) == len(fa.freq) < 12                       # fewer modes than free DOFs
    np.testing.assert_allclose(ft.freq, fa.freq, rtol=1e-9)
    assert ft.residual.max() < 1e-12 and ft.orth_mass < 1e-10


def test_low_frequency_modes_are_not_rounded_to_zero():
    # a 20 t platform on four soft mounts (4 x 5 kN/m per direction) bounces at
    # f = sqrt(4 k / m) / 2 pi = 0.159 Hz (rigid body on springs, common practice, no source);
    # the stiff members put the largest eigenvalue near 1e9 rad^2/s^2, so zeroing "small"
    # eigenvalues relative to it must not touch these modes
    deck = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (0.5 m, 0, 0)
node C = (0.5 m, 0.5 m, 0)
node D = (0, 0.5 m, 0)
member M1 : A -> B beam P S
member M2 : B -> C beam P S
member M3 : C -> D beam P S
member M4 : D -> A beam P S
member M5 : A -> C beam P S
spring A (ux = 5e3 N/m, uy = 5e3 N/m, uz = 5e3 N/m)
spring B (ux = 5e3 N/m, uy = 5e3 N/m, uz = 5e3 N/m)
spring C (ux = 5e3 N/m, uy = 5e3 N/m, uz = 5e3 N/m)
spring D (ux = 5e3 N/m, uy = 5e3 N/m, uz = 5e3 N/m)
mass A = 5 t
mass B = 5 t
mass C = 5 t
mass D = 5 t
case MODES modes { count = 6 }
"""
    m = read_text(deck)
    r = solve_modes_case(m, assemble(m), m.cases[0])
    total = m.total_mass()
    f_bounce = np.sqrt(4 * 5e3 / total) / (2 * np.pi)
    assert np.all(r.modes.freq > 0.1)
    # the vertical bounce (largest effective mass in Z) at the rigid-body value; the members
    # are 1e6 times stiffer than the mounts, so 1e-5
    z = np.argmax(r.part.effective_mass[:, 2])
    assert r.modes.freq[z] == pytest.approx(f_bounce, rel=1e-5)
    assert r.modes.residual.max() < 1e-12


@pytest.mark.parametrize("kind", ["band", "superlu"])
def test_free_free_beam_sparse_path_finds_all_rigid_modes(kind):
    # 150 elements (906 DOFs) take the sparse shift-invert path. The six rigid-body modes share
    # one eigenvalue exactly, so a Lanczos run from a single start vector sees only some of them
    # (4 of 6 with 12 modes asked, before deflation was added); the Sturm count shows the
    # missing ones and deflated re-runs find them. Elastic modes: free-free constants of
    # reference-values.md section 1 (Blevins 1979 Table 8-1), each twice (round section);
    # 150 cubic elements are exact to ~1e-9 for the first two (h^4), so 1e-6.
    from fem.analysis.modes import solve_modes

    m = read_text(CANTILEVER.replace("support N0 fixed\n", "").format(n=150, count=12, mass="consistent"))
    asm = assemble(m)
    f = asm.free
    r = solve_modes(asm.K[f][:, f], asm.M[f][:, f], n_modes=12, factor_kind=kind)
    assert r.solver != "dense"
    assert np.all(r.freq[:6] < 1e-6) and r.freq[6] > 1.0
    EI, mass = 200e9 * 1.171623e-5, 7850 * 3.600457e-3
    ref = np.array([22.3732854, 61.6728229, 120.903392]) * np.sqrt(EI / (mass * 5.0**4)) / (2 * np.pi)
    np.testing.assert_allclose(r.freq[6:12], np.repeat(ref[:3], 2), rtol=1e-6)
    assert r.sturm_count == r.sturm_expected
    assert r.orth_mass < 1e-8 and r.residual.max() < 1e-10
