"""Rigid link forces in free, history and harmonic cases, against single-DOF closed forms.

The model: node A on a spring k in X (its other directions held), a rigid link carrying a
100 kg mass at B, 1 m above A; a massless truss below A keeps the model a frame. One mode,
w = sqrt(k / m). The link's force on B is what moves the mass: p = m a (absolute) minus the
load applied at B, i.e. minus the force k u + c u' the spring and damper pass to the ground.
"""

import json

import numpy as np
import pytest
from shared_decks import COUNTERWEIGHT_FRAME

import fem

K, M = 1e5, 100.0
W = np.sqrt(K / M)
DECK = """
material S { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = round(d = 20 mm)
node A = (0, 0, 0)
node B = (0, 0, 1 m)
node G = (0, 0, -1 m)
member T : G -> A truss P S
support G fixed
spring A (ux = 1e5 N/m)
support A (uy, uz, rx, ry, rz)
link R: A -> B
mass B = 100 kg
case MO modes { count = 1 }
case FR free { displacement A = (2 mm, 0, 0), duration = 0.5 s, step = 0.001 s }
case HI history { force B = (1 kN, 0, 0), time = step, duration = 0.5 s, step = 0.0005 s }
case GR history { ground = (1 m/s^2, 0, 0), time = step, duration = 0.5 s, step = 0.0005 s }
case H3 harmonic { force B = (1 kN, 0, 0), at = (3 Hz, 7 Hz), damping = 2 percent }
case HG harmonic { ground = (1 m/s^2, 0, 0), at = (4 Hz), damping = 5 percent }
"""


@pytest.fixture(scope="module")
def results():
    return fem.solve(fem.read_text(DECK))


def test_free_vibration_link_force_is_the_mass_times_its_acceleration(results):
    """Released from u0: u = u0 cos wt, so p = m u'' = -k u0 cos wt, largest k u0 at t = 0
    (Chopra, Dynamics of Structures, sec. 2.1, free vibration of an undamped SDOF; exact at the
    samples: round-off tolerance). No moment: the mass has no rotary inertia and sits on X's
    line of action through B."""
    r = results["FR"]
    assert r.links[0] == pytest.approx(K * 2e-3, rel=1e-9)
    assert r.link_times[0] == 0.0
    assert np.abs(r.links[1:]).max() < 1e-9 * r.links[0]


def test_step_force_and_step_ground_acceleration_double_the_static_force(results):
    """A step force F at B: u = (F / k)(1 - cos wt) (Chopra sec. 4.3, step force), p = m u'' - F =
    -F (1 - cos wt), largest 2F at odd multiples of T / 2. A step ground acceleration a_g:
    u'' + a_g = a_g (1 - cos wt) absolute, p = m a_g (1 - cos wt), largest 2 m a_g. Sampled at
    dt = 0.0005 s: the sample nearest the crest misses it by at most 1 - cos(w dt / 2) ~ 4e-5
    relative; tolerance 1e-4. The time must be a crest: within dt of an odd multiple of T / 2."""
    half = np.pi / W
    for name, expect in (("HI", 2e3), ("GR", 2 * M * 1.0)):
        r = results[name]
        assert r.links[0] == pytest.approx(expect, rel=1e-4)
        crest = r.link_times[0] / half
        assert abs(crest - round(crest)) < 0.0005 / half and round(crest) % 2 == 1


def test_harmonic_link_force_is_the_force_transmissibility(results):
    """Steady force F cos(Wt) at B: the link passes the spring's and damper's force, |p| = F TR,
    TR = sqrt(1 + (2 zeta r)^2) / sqrt((1 - r^2)^2 + (2 zeta r)^2) (Chopra sec. 3.5, force
    transmissibility; shared/reference-values.md sec. 5, H); the larger of 3 and 7 Hz is 3 Hz here.
    For a ground acceleration a_g the link moves the mass: |p| = m a_g TR (the same ratio for the
    total acceleration). Modal superposition of one exact mode: round-off tolerance."""
    def tr(f, z):
        r = 2 * np.pi * f / W
        return np.hypot(1, 2 * z * r) / np.hypot(1 - r ** 2, 2 * z * r)

    r = results["H3"]
    assert tr(3, 0.02) > tr(7, 0.02)
    assert r.links[0] == pytest.approx(1e3 * tr(3, 0.02), rel=1e-9)
    assert r.link_freq[0] == 3.0
    g = results["HG"]
    assert g.links[0] == pytest.approx(M * tr(4, 0.05), rel=1e-9)


def test_link_force_peaks_are_written(tmp_path):
    """results.json carries the peaks and their times (frequencies, lags); link_force_peaks.csv a
    row per case, follower and linked direction."""
    results = fem.solve(fem.read_text(DECK))
    fem.write_results(results, tmp_path / "out", write="tables")
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    cases = {c["name"]: c for c in doc["cases"]}
    assert cases["HI"]["link_forces"]["R"]["B"][0] == pytest.approx(2e3, rel=1e-4)
    assert cases["HI"]["link_force_time_s"]["R"]["B"][0] > 0
    assert cases["H3"]["link_force_frequency_Hz"]["R"]["B"][0] == 3.0
    assert "link_force_lag_deg" in cases["H3"]
    rows = (tmp_path / "out" / "link_force_peaks.csv").read_text().splitlines()
    assert rows[0] == "case,link,node,reference,direction,peak,time_s,frequency_Hz,lag_deg"
    assert len(rows) == 1 + 5 * 6


def test_link_on_an_eccentric_mass_carries_what_a_stiff_member_would():
    """A 300 kg mass with rotary inertia 0.9 m off a cantilever's top, on a rigid link or on a
    massless member about 10^5 times stiffer than the cantilever; steady force at the top, 3 Hz,
    every mode kept. The link's force and moment on the mass must equal the member's end force
    and moment at it (compared as vector norms, which do not depend on the member's axes). The
    member's finite stiffness leaves a gap of about 4e-7 (1e-5 with a 100 times softer member):
    tolerance 1e-5. Damping 0.01 %: modal damping puts non-nodal forces at the mass that the
    member's elastic end force leaves out (5e-4 of it at 2 %); the link's force excludes them by
    definition, so a light damping keeps the comparison about the inertia."""
    def run(arm):
        text = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
material H { E = 200 GPa, nu = 0.3, density = 0 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.1 mm)
section Q = generic(A = 1 m^2, Iy = 1 m^4, Iz = 1 m^4, J = 1 m^4)
for i in 0..4 { node N[i] = (0, 0, i*1 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node B = (0.8 m, 0.3 m, 4.5 m)
mass B = 300 kg inertia = (5 kg*m^2, 6 kg*m^2, 7 kg*m^2)
support N[0] fixed
case MO modes { count = 40 }
case HA harmonic { force N4 = (1 kN, 2 kN, -0.5 kN), at = (3 Hz), damping = 0.01 percent, record = "B" }
""" + arm
        return fem.solve(fem.read_text(text))["HA"]

    a = run("link R: N[4] -> B")
    b = run("member Z : N[4] -> B beam Q H")
    f = b.member_forces[0, list(b.members).index(4)]          # member Z's end forces, end j at B
    assert np.linalg.norm(a.links[:3]) == pytest.approx(np.linalg.norm(f[6:9]), rel=1e-5)
    assert np.linalg.norm(a.links[3:]) == pytest.approx(np.linalg.norm(f[9:12]), rel=1e-5)
    assert np.linalg.norm(a.links[3:]) > 1e-3 * np.linalg.norm(a.links[:3])   # the link carries a moment


COUNTERWEIGHT = COUNTERWEIGHT_FRAME + """
case MODES modes { count = 30 }
case ST static { force T = (6 kN, 0, 0) }
case KNOCK history { force T = (6 kN, 0, 0), time = halfsine(0.05 s), duration = 0.2 s, step = 0.001 s,
                     damping = 0.01 percent }
case FREE free { start = ST, duration = 0.2 s, step = 0.001 s, damping = 0.01 percent }
case SHAKE history { ground = (0, 0, 2 m/s^2), time = halfsine(0.05 s), duration = 0.2 s, step = 0.001 s,
                     damping = 0.01 percent }
case HUM harmonic { force T = (6 kN, 0, 0), at = (2 Hz, 9 Hz), damping = 0.01 percent, correction = on }
"""


def test_reactions_take_the_inertia_a_link_carries_into_a_supported_reference():
    """A pinned column foot carrying an 800 kg counterweight 0.8 m out on a rigid link: the
    vertical reaction at the foot holds the counterweight's inertia as it swings with the foot's
    rotation. Against the same arm as a massless member 10^5 times stiffer, whose elastic end
    force brings that inertia to the support: every mode kept, so the two differ by the member's
    flexibility and its own fast modes (measured below 1e-4 for every case here); tolerance
    1e-3. Without the carried inertia the link model's peaks were 0.4 % (history) to 14 %
    (free) off. Damping 0.01 %: modal damping forces are not nodal (see above)."""
    link = fem.solve(fem.read_text(COUNTERWEIGHT + "link ARM: B -> F"))
    stiff = fem.solve(fem.read_text(COUNTERWEIGHT + "member ARM : B -> F beam Q H"))
    b = link.model.node_names.index("B")
    for case in ("KNOCK", "FREE", "SHAKE", "HUM"):
        a, s = link[case].reaction_peak[b, [0, 2]], stiff[case].reaction_peak[b, [0, 2]]
        np.testing.assert_allclose(a, s, rtol=1e-3, err_msg=case)
    k = list(link["HUM"].support).index(b)
    np.testing.assert_allclose(link["HUM"].reactions[:, k, 2], stiff["HUM"].reactions[:, k, 2], rtol=1e-3)


def test_a_mass_off_a_supported_node_acts_as_the_same_mass_on_a_link():
    """The counterweight above written as a mass 0.8 m off the pinned foot itself: one model with
    the link's (a rigid body either way), so the reaction peaks at the foot of the force and free
    cases agree to round-off (1e-8: different summation orders). Under a ground motion they
    differ by design: the mass's own translation with the support, like any mass at a support,
    is not in the reactions, whereas the link's follower is another node."""
    deck = COUNTERWEIGHT.replace("node F = (0.8 m, 0, 0)\n", "").replace(
        "mass F = 800 kg", "mass B = 800 kg offset = (0.8 m, 0, 0)")
    off = fem.solve(fem.read_text(deck))
    link = fem.solve(fem.read_text(COUNTERWEIGHT + "link ARM: B -> F"))
    b, c = off.model.node_names.index("B"), link.model.node_names.index("B")
    t, u = off.model.node_names.index("T"), link.model.node_names.index("T")
    # the motion under the ground acceleration is the same: the offset mass is pushed round too
    np.testing.assert_allclose(off["SHAKE"].peak[t], link["SHAKE"].peak[u], rtol=1e-8,
                               atol=1e-8 * np.abs(link["SHAKE"].peak[u]).max())
    assert link["SHAKE"].peak[u, 4] > 1e-5         # the foot's vertical ground motion turns the column
    for case in ("KNOCK", "FREE", "HUM"):
        np.testing.assert_allclose(off[case].reaction_peak[b], link[case].reaction_peak[c], rtol=1e-8,
                                   atol=1e-8 * np.abs(link[case].reaction_peak[c]).max(), err_msg=case)


def test_spectrum_reactions_take_the_inertia_a_link_carries_with_the_missing_mass_term():
    """The counterweight model under a design spectrum in X and Z with the missing-mass term on:
    the link model's reaction peaks at the foot against the stiff-member model's (whose fast arm
    modes hold what, on the link, rides with the support as part of the rigid term). Measured gap
    2.5e-3 in X (the arm's modes have periods just off zero, where the curve is not quite its
    zero-period value, and are combined by CQC rather than by the rigid term's rule) and 1e-6 in
    Z; tolerance 5e-3. Before, the link model's were 32 N and 153 N against 2781 N and 4728 N.
    The displacements (no inertia term in them, only the carried load) agree to 1e-5."""
    sp = ("case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 1), "
          "missing = on }\n")
    link = fem.solve(fem.read_text(COUNTERWEIGHT + sp + "link ARM: B -> F"))
    stiff = fem.solve(fem.read_text(COUNTERWEIGHT + sp + "member ARM : B -> F beam Q H"))
    b, t = link.model.node_names.index("B"), link.model.node_names.index("T")
    np.testing.assert_allclose(link["EQ"].reactions[b, [0, 2]], stiff["EQ"].reactions[b, [0, 2]], rtol=5e-3)
    np.testing.assert_allclose(link["EQ"].u[t, [0, 2, 4]], stiff["EQ"].u[t, [0, 2, 4]], rtol=1e-5)
