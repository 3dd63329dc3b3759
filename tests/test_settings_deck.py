"""`settings { shear = on }` and `settings { mass = lumped }` end to end, from deck text through
fem.solve, against closed forms."""

import numpy as np
import pytest
import scipy.linalg
import scipy.optimize

from fem import solve
from fem.deck.reader import read_text

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
    on = solve(read_text(cantilever("rect(b = 100 mm, h = 400 mm)", 3, L, "on"))).statics[0]
    off = solve(read_text(cantilever("rect(b = 100 mm, h = 400 mm)", 3, L, "off"))).statics[0]
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
    on = solve(read_text(deck % "on")).statics[0]
    off = solve(read_text(deck % "off")).statics[0]
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


def _deep_frequencies(n, settings="shear = on"):
    deck = simply_supported(f"rect(b = {DEEP_B * 1e3:g} mm, h = {DEEP_H * 1e3:g} mm)", n, DEEP_L, settings)
    return solve(read_text(deck)).modal[0].modes.freq


def test_shear_on_deep_simply_supported_frequencies():
    # with shear on, the member mass is the consistent mass of the shear-flexible element with
    # the rotary inertia of the section, so the model converges to full Timoshenko theory
    # (reference-values.md section 3a, exact simply supported frequencies, closed form above).
    # Observed: convergence from above (consistent mass, Rayleigh-Ritz) as h^2, since the
    # element's shear strain is constant along it: errors 2.06e-4, 2.18e-3, 7.33e-3 for modes
    # 1-3 on 16 pieces; 5.13e-5, 5.44e-4, 1.83e-3 on 32. Tolerances sit 25 % above the observed
    # errors on 32 pieces, and the error must fall 4x per halving.
    exact = np.array([_timoshenko_ss(j) for j in (1, 2, 3)])
    err16 = _deep_frequencies(16) / exact - 1
    err32 = _deep_frequencies(32) / exact - 1
    assert np.all(err32 > 0)
    assert np.all(err32 < [6.5e-5, 6.8e-4, 2.3e-3])
    np.testing.assert_allclose(err16 / err32, 4.0, rtol=0.02)
    # rotary inertia matters here: in the closed form it lowers the frequencies by 1.9, 3.8 and
    # 4.1 % below shear alone, 18-290 times the tolerances above (shear and rotary inertia
    # together: 8.8, 24.7 and 38.3 % below Euler-Bernoulli)
    shear_only = np.array([_timoshenko_ss(j, rotary=False) for j in (1, 2, 3)])
    assert np.all(exact / shear_only - 1 < -0.018)
    # the same mesh with shear off gives Euler-Bernoulli (reference-values.md section 1,
    # (j pi)^2): observed errors 6.4e-8, 1.0e-6, 5.2e-6 (consistent mass, h^4), tolerance 7e-6
    A, I = DEEP_B * DEEP_H, DEEP_B * DEEP_H**3 / 12
    euler = (np.array([1, 2, 3]) * np.pi / DEEP_L) ** 2 * np.sqrt(E * I / (RHO * A)) / (2 * np.pi)
    np.testing.assert_allclose(_deep_frequencies(32, "shear = off"), euler, rtol=7e-6)


def test_shear_on_lumped_mass_converges_to_shear_only_theory():
    # lumped mass puts no rotary inertia of bending on the nodes, with shear on or off, so a
    # lumped shear-flexible model converges to the shear-deformable beam without rotary inertia
    # (reference-values.md section 3a, shear-only closed form): this checks the shear stiffness
    # on its own. Observed: convergence from below as h^2, errors -2.20e-4, -2.50e-3, -8.55e-3
    # for modes 1-3 on 16 pieces; -5.47e-5, -6.22e-4, -2.12e-3 on 32. Tolerances 25 % above
    # those on 32 pieces, and 4x per halving.
    exact = np.array([_timoshenko_ss(j, rotary=False) for j in (1, 2, 3)])
    err16 = _deep_frequencies(16, "shear = on, mass = lumped") / exact - 1
    err32 = _deep_frequencies(32, "shear = on, mass = lumped") / exact - 1
    assert np.all(err32 < 0)
    assert np.all(np.abs(err32) < [6.9e-5, 7.8e-4, 2.7e-3])
    np.testing.assert_allclose(err16 / err32, 4.0, rtol=0.02)


def _timoshenko_transfer(omega, length, A, I, kGA, rotary=True):
    """Transfer matrices (..., 4, 4) over `length` of a uniform Timoshenko beam vibrating at
    omega (rad/s, scalar or array), from the equations of motion of Timoshenko 1921
    (reference-values.md section 3a) as a first-order system in (w, psi, M = EI psi',
    Q = kGA (w' - psi)): w' = psi + Q/kGA, psi' = M/EI, M' = -Q - rho I omega^2 psi,
    Q' = -rho A omega^2 w. The state is scaled to (w/L, psi, M L/EI, Q L^2/EI) along x/L so that
    expm sees entries of order one. kGA = inf and rotary=False give the Euler-Bernoulli beam."""
    EI, w2 = E * I, np.square(np.asarray(omega, dtype=float))
    system = np.zeros(w2.shape + (4, 4))
    system[..., 0, 1] = system[..., 1, 2] = 1.0
    system[..., 0, 3] = EI / (kGA * length**2)
    system[..., 2, 3] = -1.0
    system[..., 2, 1] = -(RHO * I * length**2 / EI if rotary else 0.0) * w2
    system[..., 3, 0] = -RHO * A * length**4 / EI * w2
    return scipy.linalg.expm(system)


def _timoshenko_roots(ends, count, fmax, *args, **kw):
    """Lowest `count` natural frequencies (Hz) of the exact beam: zeros of the 2x2 determinant
    that the end conditions leave of the transfer matrix ('pinned': w = M = 0 at both ends;
    'cantilever': w = psi = 0 at x = 0, M = Q = 0 at x = L), bracketed on a fine grid."""
    rows, cols = {"pinned": ([0, 2], [1, 3]), "cantilever": ([2, 3], [2, 3])}[ends]
    det = lambda f: np.linalg.det(_timoshenko_transfer(2 * np.pi * f, *args, **kw)[..., rows, :][..., cols])
    grid = np.linspace(fmax / 1000, fmax, 1000)
    d = det(grid)
    brackets = np.flatnonzero(np.sign(d[:-1]) != np.sign(d[1:]))[:count]
    assert len(brackets) == count
    return np.array([scipy.optimize.brentq(det, grid[i], grid[i + 1], xtol=1e-12, rtol=1e-14)
                     for i in brackets])


def test_shear_on_deep_cantilever_frequencies_both_planes():
    # a deep 300 x 500 mm cantilever 2 m long (r/L = 0.072 and 0.043 in its two planes), bending
    # in both planes, axial and torsion held. Reference: the exact Timoshenko beam, frequencies
    # found as the zeros of the clamped-free determinant of its transfer matrix (scipy expm and
    # brentq on the equations of reference-values.md section 3a, which cites Huang 1961 for the
    # closed-form frequency equations of other ends; no numbers there to compare with). The
    # solver is checked first: simply supported it
    # reproduces the closed form of section 3a, and without shear and rotary inertia the
    # cantilever roots (beta L)^2 of section 1 (Blevins 1979 Table 8-1, roots computed).
    b, h, length = 0.3, 0.5, 2.0
    A, Iy, Iz = b * h, b * h**3 / 12, h * b**3 / 12
    kGA = 10 * (1 + NU) / (12 + 11 * NU) * G * A        # Cowper 1966, rectangle
    DA, DI = DEEP_B * DEEP_H, DEEP_B * DEEP_H**3 / 12
    pinned = _timoshenko_roots("pinned", 3, 2000.0, DEEP_L, DA, DI, 10 * (1 + NU) / (12 + 11 * NU) * G * DA)
    np.testing.assert_allclose(pinned, [_timoshenko_ss(j) for j in (1, 2, 3)], rtol=1e-11)
    euler_scale = np.sqrt(E * Iy / (RHO * A)) / (2 * np.pi * length**2)
    euler = _timoshenko_roots("cantilever", 3, 3000.0, length, A, Iy, np.inf, rotary=False) / euler_scale
    np.testing.assert_allclose(euler, [3.51601527, 22.0344916, 61.6972144], rtol=1e-8)

    exact = np.sort(np.r_[_timoshenko_roots("cantilever", 3, 2500.0, length, A, Iy, kGA),
                          _timoshenko_roots("cantilever", 3, 2500.0, length, A, Iz, kGA)])[:5]

    def model(n):
        deck = MATERIAL + f"""
section B = rect(b = {b * 1e3:g} mm, h = {h * 1e3:g} mm)
settings {{ shear = on }}
for i in 0..{n} {{ node N[i] = (i*{length / n} m, 0, 0) }}
for i in 0..{n - 1} {{ member M[i] : N[i] -> N[i+1] beam B S }}
support N* (ux, rx)
support N0 fixed
case MODES modes {{ count = 5 }}
"""
        return solve(read_text(deck)).modal[0].modes.freq

    # Observed: from above as h^2, errors 4.61e-5, 1.17e-4, 1.44e-3, 2.81e-3, 8.71e-3 on 8
    # pieces and 1.12e-5, 2.89e-5, 3.55e-4, 7.03e-4, 2.16e-3 on 16 (x-y, x-z, x-y, x-z, x-y
    # plane modes). Tolerances 25 % above those on 16 pieces, and 4x per halving.
    err8, err16 = model(8) / exact - 1, model(16) / exact - 1
    assert np.all(err16 > 0)
    assert np.all(err16 < [1.4e-5, 3.6e-5, 4.4e-4, 8.8e-4, 2.7e-3])
    np.testing.assert_allclose(err8 / err16, 4.0, rtol=0.05)
    # the Timoshenko effects are far above those tolerances: the exact first modes of the two
    # planes lie 1.7 % (x-y) and 4.5 % (x-z) below Euler-Bernoulli, the third modes 20 and 37 %
    eb = np.sort(np.r_[np.sqrt(Iy), np.sqrt(Iz)]) * np.sqrt(E / (RHO * A)) * 3.51601527 / (2 * np.pi * length**2)
    assert np.all(exact[:2] / eb - 1 < [-0.015, -0.04])


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
        freq = solve(read_text(simply_supported(PIPE, n, PIPE_L, "mass = lumped"))).modal[0].modes.freq
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
    modal = solve(model).modal[0]
    np.testing.assert_allclose(modal.modes.freq, np.repeat(_euler_pinned(), 2), rtol=1e-7)
    assert modal.modes.residual.max() < 1e-8
    # lumped mass: each member's mass sits at its ends, so participation sums to the free mass
    assert modal.part.total[2] == pytest.approx(RHO * PIPE_A * PIPE_L * 127 / 128, rel=1e-12)
