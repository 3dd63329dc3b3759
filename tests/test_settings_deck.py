"""`settings { shear = on }` and `settings { mass = lumped }` end to end, from deck text through
fem.run.solve_all, against closed forms."""

import numpy as np
import pytest

from fem.deck.reader import read_text
from fem.run import solve_all

E, NU, RHO = 200e9, 0.3, 7850.0
G = E / (2 * (1 + NU))
MATERIAL = "material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }\n"


def cantilever(section, n, length, shear):
    return MATERIAL + f"""
section B = {section}
settings {{ shear = {shear} }}
for i in 0..{n} {{ node N[i] = (i*{length / n} m, 0, 0) }}
for i in 0..{n - 1} {{ member M[i] : N[i] -> N[i+1] beam B S }}
support N0 fixed
case TIP static {{ force N{n} = (0, 0, -50 kN) }}
"""


def test_shear_on_deep_cantilever_tip_deflection():
    # Roark 8th ed. Table 8.1 with the shear term (reference-values.md section 4): tip
    # deflection PL^3/(3EI) + PL/(kappa G A), kappa = 10(1+nu)/(12+11nu) for a rectangle
    # (Cowper 1966; 0.849673 at nu = 0.3). A 100 x 400 mm bar 1 m long: shear adds 12 % to the
    # bending deflection. The shear-flexible element is exact for end loads at any mesh, so
    # 3 members and round-off tolerance (1e-9).
    P, L, b, h = 50e3, 1.0, 0.1, 0.4
    A, I = b * h, b * h**3 / 12
    kappa = 10 * (1 + NU) / (12 + 11 * NU)
    assert kappa == pytest.approx(0.849673, abs=1e-6)
    bending, shear = P * L**3 / (3 * E * I), P * L / (kappa * G * A)
    on = solve_all(read_text(cantilever("rect(b = 100 mm, h = 400 mm)", 3, L, "on")))[0][0]
    off = solve_all(read_text(cantilever("rect(b = 100 mm, h = 400 mm)", 3, L, "off")))[0][0]
    assert -on.u[3, 2] == pytest.approx(bending + shear, rel=1e-9)
    assert -off.u[3, 2] == pytest.approx(bending, rel=1e-9)
    assert shear / bending == pytest.approx(0.122, abs=1e-3)
    # the root moment and shear are statics, unchanged by shear flexibility
    assert abs(on.member_forces[0, 4]) == pytest.approx(P * L, rel=1e-9)
    assert abs(on.reactions[0, 2]) == pytest.approx(P, rel=1e-12)


def test_shear_on_pipe_cantilever_reference_numbers():
    # reference-values.md section 4 (values C): NPS 6 Sch 40, L = 5 m, P = 10 kN: bending
    # 177.8160 mm and the shear addition 0.339176 mm with the hollow-circle kappa 0.53227
    # (Cowper 1966). Printed to 6-7 digits: tolerance 2e-6 (the section is computed from the
    # nominal od and wall, whose A and I the table gives to 7 digits).
    deck = cantilever("pipe(od = 168.3 mm, wall = 7.11 mm)", 5, 5.0, "%s").replace("-50 kN", "-10 kN")
    on = solve_all(read_text(deck % "on"))[0][0]
    off = solve_all(read_text(deck % "off"))[0][0]
    assert -off.u[5, 2] == pytest.approx(0.1778160, rel=2e-6)
    assert on.u[5, 2] - off.u[5, 2] == pytest.approx(-0.339176e-3, rel=2e-6)


def simply_supported(section, n, length, settings, count=3, held="ux, uy, rx, rz"):
    """A member along X on n pieces, pinned at both ends, moving only in the x-z plane (the
    other directions held at every node, and ux too unless `held` says otherwise)."""
    return MATERIAL + f"""
section B = {section}
settings {{ {settings} }}
for i in 0..{n} {{ node N[i] = (i*{length / n} m, 0, 0) }}
for i in 0..{n - 1} {{ member M[i] : N[i] -> N[i+1] beam B S }}
support N* ({held})
support N0 (ux, uy, uz)
support N{n} (uy, uz)
case MODES modes {{ count = {count} }}
"""


# A deep simply supported bar: 100 x 500 mm, 2 m long (r/L = 0.072)
DEEP_B, DEEP_H, DEEP_L = 0.1, 0.5, 2.0


def _timoshenko_ss(j, rotary=True):
    """Timoshenko beam, simply supported, mode j (reference-values.md section 3a; Timoshenko,
    Young & Weaver 1974 Ch. 5): the smaller root w^2 of
    (rho^2 I/(kappa G)) w^4 - [rho A + rho I (1 + E/(kappa G)) k^2] w^2 + E I k^4 = 0,
    k = j pi / L; without rotary inertia w^2 = E I k^4 / (rho A (1 + E I k^2/(kappa G A))). Hz."""
    A, I = DEEP_B * DEEP_H, DEEP_B * DEEP_H**3 / 12
    kappa = 10 * (1 + NU) / (12 + 11 * NU)
    k = j * np.pi / DEEP_L
    if not rotary:
        return np.sqrt(E * I * k**4 / (RHO * A * (1 + E * I * k**2 / (kappa * G * A)))) / (2 * np.pi)
    a = RHO**2 * I / (kappa * G)
    b = RHO * A + RHO * I * (1 + E / (kappa * G)) * k**2
    w2 = (b - np.sqrt(b * b - 4 * a * E * I * k**4)) / (2 * a)
    return np.sqrt(w2) / (2 * np.pi)


def _deep_frequencies(n):
    deck = simply_supported(f"rect(b = {DEEP_B * 1e3:g} mm, h = {DEEP_H * 1e3:g} mm)", n, DEEP_L, "shear = on")
    return solve_all(read_text(deck))[1][0].modes.freq


def test_shear_on_deep_simply_supported_frequencies():
    # Quaver's element mass carries no rotary inertia of bending, so with shear on the model
    # converges to the shear-deformable beam without rotary inertia (reference-values.md
    # section 3a, closed form above). Observed: convergence from above as h^2 (errors 1.3e-4,
    # 1.4e-3, 4.8e-3 for modes 1-3 on 16 pieces; 3.2e-5, 3.6e-4, 1.2e-3 on 32). Tolerances
    # sit 25 % above the observed errors on 32 pieces, and the error must fall about 4x per
    # halving. Shear lowers these modes by 7, 22 and 36 % from Euler-Bernoulli.
    exact = np.array([_timoshenko_ss(j, rotary=False) for j in (1, 2, 3)])
    err16 = _deep_frequencies(16) / exact - 1
    err32 = _deep_frequencies(32) / exact - 1
    assert np.all(err32 > 0)
    assert np.all(err32 < [4e-5, 4.5e-4, 1.5e-3])
    np.testing.assert_allclose(err16 / err32, 4.0, rtol=0.05)
    # the same mesh with shear off gives Euler-Bernoulli (reference-values.md section 1,
    # (j pi)^2): observed errors 6.4e-8, 1.0e-6, 5.2e-6 (consistent mass, h^4), tolerance 7e-6
    A, I = DEEP_B * DEEP_H, DEEP_B * DEEP_H**3 / 12
    euler = (np.array([1, 2, 3]) * np.pi / DEEP_L) ** 2 * np.sqrt(E * I / (RHO * A)) / (2 * np.pi)
    deck = simply_supported(f"rect(b = {DEEP_B * 1e3:g} mm, h = {DEEP_H * 1e3:g} mm)", 32, DEEP_L, "shear = off")
    np.testing.assert_allclose(solve_all(read_text(deck))[1][0].modes.freq, euler, rtol=7e-6)


@pytest.mark.xfail(strict=True, raises=AssertionError,
                   reason="bending rotary inertia is not in the element mass: deep beams come out "
                          "2-4 % above full Timoshenko theory")
def test_deep_simply_supported_frequencies_with_rotary_inertia():
    # full Timoshenko theory (shear and rotary inertia, reference-values.md section 3a);
    # tolerance 0.5 % on 32 pieces once rotary inertia is in the mass
    exact = np.array([_timoshenko_ss(j) for j in (1, 2, 3)])
    np.testing.assert_allclose(_deep_frequencies(32), exact, rtol=5e-3)


# the NPS 6 Sch 40 pipe as given properties, so the closed form uses the model's own numbers
PIPE = "generic(A = 3.600457e-3 m^2, Iy = 1.171623e-5 m^4, Iz = 1.171623e-5 m^4, J = 2.343246e-5 m^4)"
PIPE_A, PIPE_I, PIPE_L = 3.600457e-3, 1.171623e-5, 5.0
# (beta_n L)^2 of a pinned-pinned beam, n = 1..3 (reference-values.md section 1, roots C;
# Blevins 1979 Table 8-1)
PINNED = np.array([9.86960440, 39.4784176, 88.8264396])


def _euler_pinned():
    return PINNED * np.sqrt(E * PIPE_I / (RHO * PIPE_A * PIPE_L**4)) / (2 * np.pi)


def test_lumped_mass_frequencies_converge_to_euler_bernoulli():
    # lumped mass (half of each member's mass on its end translations, no rotary mass of
    # bending) on a pinned-pinned pipe, 5 m: modes 1-3 converge to the Euler-Bernoulli values
    # from below, as h^4. Observed with the massless rotations condensed out (an independent
    # dense solve): errors -1.7e-5, -3.1e-4, -1.8e-3 on 8 pieces; -1.0e-6, -1.7e-5, -9.1e-5 on
    # 16; -6.5e-8, -1.0e-6, -5.3e-6 on 32 (about 16x smaller per halving). Tolerances 25-30 %
    # above those.
    exact = _euler_pinned()
    errors = {}
    for n in (8, 16, 32):
        freq = solve_all(read_text(simply_supported(PIPE, n, PIPE_L, "mass = lumped")))[1][0].modes.freq
        errors[n] = freq / exact - 1
    assert all(np.all(e < 0) for e in errors.values())
    assert np.all(np.abs(errors[8]) < [2.2e-5, 3.9e-4, 2.3e-3])
    assert np.all(np.abs(errors[16]) < [1.3e-6, 2.2e-5, 1.2e-4])
    assert np.all(np.abs(errors[32]) < [8.5e-8, 1.3e-6, 6.7e-6])
    np.testing.assert_allclose(errors[16] / errors[32], 16, rtol=0.1)


def test_lumped_mass_fine_mesh_frequencies():
    # the same pinned-pinned pipe on 128 pieces, free to bend in both planes (Iy = Iz, so each
    # frequency appears twice); 640 free DOFs go to the shift-invert solver, which takes the
    # massless rotations of a lumped mass. Euler-Bernoulli values (reference-values.md section
    # 1); observed errors -1.1e-9, -4.0e-9, -2.0e-8 at this mesh, tolerance 1e-7.
    deck = simply_supported(PIPE, 128, PIPE_L, "mass = lumped", count=6, held="rx")
    model = read_text(deck)
    assert model.settings["mass"] == "lumped"
    modal = solve_all(model)[1][0]
    np.testing.assert_allclose(modal.modes.freq, np.repeat(_euler_pinned(), 2), rtol=1e-7)
    assert modal.modes.residual.max() < 1e-8
    # lumped mass: each member's mass sits at its ends, so participation sums to the free mass
    assert modal.part.total[2] == pytest.approx(RHO * PIPE_A * PIPE_L * 127 / 128, rel=1e-12)
