"""Free-vibration case through the deck against the full system's exact solution."""

import numpy as np
import pytest
import scipy.linalg as sla

from fem import solve
from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.geometry import local_axes

DECK = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (i*1.25 m, 0, 0) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N4 = 50 kg
case TIP static { force N4 = (0, 0, -10 kN) }
case ALL modes { count = %d }
case REL free { start = TIP, duration = 0.2 s, step = 0.005 s, damping = 0, record = "N4" }
"""


def test_release_matches_full_system_expm():
    # all 24 modes kept: modal superposition is exact, so the recorded tip history must equal
    # x(t) = expm(A t) x0 of the full undamped system built from the same K and M
    # (scipy.linalg.expm); tolerance 1e-9 of the initial deflection covers round-off.
    from fem.assembly import assemble
    m = read_text(DECK % 24)
    solved = solve(m)
    statics, others = solved.statics, solved.modal
    free = others[-1]
    u_tip0 = statics[0].u[4, 2]
    assert free.u[0, 0, 2] == pytest.approx(u_tip0, rel=1e-10)
    asm = assemble(m)
    f = asm.free
    K, M = asm.K[f][:, f].toarray(), asm.M[f][:, f].toarray()
    n = len(f)
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-np.linalg.solve(M, K), np.zeros((n, n))]])
    x0 = np.r_[statics[0].u.ravel()[f], np.zeros(n)]
    tip = list(f).index(6 * 4 + 2)
    for i in (10, 25, 40):
        x = sla.expm(A * free.t[i]) @ x0
        assert free.u[i, 0, 2] == pytest.approx(x[tip], abs=1e-9 * abs(u_tip0))
    assert free.captured == pytest.approx(1.0, abs=1e-12)


def test_truncated_modes_capture_less():
    m = read_text(DECK % 2)
    others = solve(m).modal
    assert 0.9 < others[-1].captured < 1.0


@pytest.mark.parametrize("change,text", [
    ("start = TIP", "start = TOP", ),
    ("duration = 0.2 s", "duration = 0.2 m"),
    ('record = "N4"', 'record = "Q*"'),
], ids=["unknown start", "duration unit", "record pattern"])
def test_free_case_errors(change, text):
    with pytest.raises(DeckError):
        read_text((DECK % 4).replace(change, text))


# A small 3D frame: two columns in two pieces, a girder in two pieces with a mass at midspan,
# and an arm with a tip mass; 36 free DOFs
FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section C = rhs(b = 150 mm, h = 250 mm, t = 8 mm)
section B = ishape(d = 300 mm, bf = 150 mm, tf = 10.7 mm, tw = 7.1 mm)
node B1 = (0, 0, 0)
node B2 = (4 m, 0, 0)
node C1 = (0, 0, 1.5 m)
node C2 = (4 m, 0, 1.5 m)
node T1 = (0, 0, 3 m)
node T2 = (4 m, 0, 3 m)
node MID = (2 m, 0, 3 m)
node TIP = (4 m, 1.5 m, 3 m)
member K1 : B1 -> C1 beam C S
member K2 : C1 -> T1 beam C S
member K3 : B2 -> C2 beam C S
member K4 : C2 -> T2 beam C S
member G1 : T1 -> MID beam B S
member G2 : MID -> T2 beam B S
member ARM : T2 -> TIP beam B S roll = 90 deg
support B* fixed
mass TIP = 300 kg
mass MID = 500 kg
case PUSH static { force T1 = (4 kN, 1 kN, 0), force TIP = (0, 0, -2 kN) }
case ALL modes { count = 36 }
case REL free { start = PUSH, velocity MID = (0, 0.05 m/s, -0.02 m/s), duration = 0.25 s,
                step = 0.001 s, %s }
"""


def _full_system_force_peaks(m, t, a0, a1):
    """Peak |reaction| (n, 6) and |member end force| (e, 12) over the times t of the released
    frame, from the whole system x' = A x with C = a0 M + a1 K stepped by expm(A dt)
    (scipy.linalg.expm), reactions K u at the supports, end forces k T u_e of each member."""
    from fem import elements as el
    from fem.analysis.static import solve_static
    from fem.assembly import assemble

    asm = assemble(m)
    f = asm.free
    K, M = asm.K[f][:, f].toarray(), asm.M[f][:, f].toarray()
    n = len(f)
    Minv = np.linalg.inv(M)
    A = np.block([[np.zeros((n, n)), np.eye(n)], [-Minv @ K, -Minv @ (a0 * M + a1 * K)]])
    u0 = solve_static(m, asm, m.cases[0]).u.ravel()
    v0 = np.zeros(6 * m.n_nodes)
    v0[6 * m.node_names.index("MID") + np.arange(3)] = [0, 0.05, -0.02]
    x = np.r_[u0[f], v0[f]]
    P = sla.expm(A * (t[1] - t[0]))
    R, L = local_axes(m.coords[m.conn[:, 0]], m.coords[m.conn[:, 1]], roll=m.roll)
    k = el.frame_stiffness(L, m.E, m.G, m.A, m.Iy, m.Iz, m.J)
    T = el.transform_matrix(R)
    dofs = (6 * m.conn[:, :, None] + np.arange(6)).reshape(-1, 12)
    r_peak = np.zeros(6 * m.n_nodes)
    m_peak = np.zeros((m.n_members, 12))
    for _ in t:
        u = np.zeros(6 * m.n_nodes)
        u[f] = x[:n]
        r = asm.K @ u
        r[f] = 0.0
        r_peak = np.maximum(r_peak, np.abs(r))
        m_peak = np.maximum(m_peak, np.abs(np.einsum("eab,ebc,ec->ea", k, T, u[dofs])))
        x = P @ x
    return r_peak.reshape(-1, 6), m_peak


@pytest.mark.parametrize("damping,a0a1", [
    ("damping = 0", (0.0, 0.0)),
    ("rayleigh = (4 Hz, 2 percent, 100 Hz, 3 percent)", None),
    ("rayleigh = (0.6 Hz, 0.0001 s)", (0.6, 1e-4)),
], ids=["undamped", "rayleigh", "rayleigh-coefficients"])
def test_free_case_force_peaks_match_full_system(damping, a0a1):
    # all 36 modes kept, so modal superposition is exact: the peak reactions and member end
    # forces over the time grid must equal those of the whole system integrated exactly in time
    # (matrix exponential) with the same classical damping. Rayleigh coefficients from the
    # two-anchor formula (Chopra 2017 Sec. 11.4; reference-values.md section 8). Tolerance 1e-8
    # of the largest value: round-off of 250 expm steps and of the eigenvectors.
    if a0a1 is None:
        wi, wj, zi, zj = 2 * np.pi * 4, 2 * np.pi * 100, 0.02, 0.03
        a0a1 = (2 * wi * wj * (zi * wj - zj * wi) / (wj**2 - wi**2), 2 * (zj * wj - zi * wi) / (wj**2 - wi**2))
    m = read_text(FRAME % damping)
    fr = solve(m).modal[-1]
    r_ref, m_ref = _full_system_force_peaks(m, fr.t, *a0a1)
    np.testing.assert_allclose(fr.reaction_peak, r_ref, atol=1e-8 * r_ref.max())
    np.testing.assert_allclose(fr.member_peak, m_ref, atol=1e-8 * m_ref.max())
    assert fr.reaction_peak[[0, 1]].max() > 1e3          # the supports do carry the motion
    assert fr.inertia_balance < 1e-10


CANTILEVER = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = generic(A = 3.600457e-3 m^2, Iy = 1.171623e-5 m^4, Iz = 4e-5 m^4, J = 2.343246e-5 m^4)
for i in 0..20 { node N[i] = (i*0.25 m, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
case TIP static { force N20 = (0, 0, -10 kN) }
case ONE modes { count = 1 }
case REL free { start = TIP, duration = 0.3 s, step = 0.001 s, damping = 0, modes = ONE }
"""


def test_released_cantilever_single_mode_base_forces():
    # A cantilever vibrating in its first mode alone: w(x, t) = a Y(x) cos(w1 t) with
    # Y = cosh bx - cos bx - s (sinh bx - sin bx), b L = 1.87510407, s = 0.734095514 (Blevins
    # 1979 Table 8-1; reference-values.md section 1, roots computed). Y(L) = 2, Y''(0) = 2 b^2,
    # Y'''(0) = -2 s b^3, so the base moment amplitude is EI b^2 times the tip amplitude and the
    # base shear EI s b^3 times it. The section is the NPS 6 Sch 40 pipe about y (f1 =
    # 6.44505 Hz, reference-values.md section 1), stiffer about z so mode 1 bends in x-z. Only
    # mode 1 is kept; undamped from rest, every peak is at t = 0. Tolerances from the observed
    # convergence with 20 members (moment error falls as h^4: 6e-7 here; shear as h^3: 4e-5).
    E, I, L = 200e9, 1.171623e-5, 5.0
    b, s = 1.87510407 / L, 0.734095514
    m = read_text(CANTILEVER)
    others = solve(m).modal
    modes, fr = others
    assert modes.modes.freq[0] == pytest.approx(6.44505, rel=2e-6)
    tip = fr.peak[20, 2]
    assert tip > 0.1                                       # most of the 178 mm static deflection
    assert fr.member_peak[0, 4] == pytest.approx(E * I * b**2 * tip, rel=2e-6)
    assert fr.reaction_peak[0, 4] == pytest.approx(E * I * b**2 * tip, rel=2e-6)
    assert fr.member_peak[0, 2] == pytest.approx(E * I * s * b**3 * tip, rel=1e-4)
    assert fr.reaction_peak[0, 2] == pytest.approx(E * I * s * b**3 * tip, rel=1e-4)
    # the other directions stay at rest
    np.testing.assert_allclose(fr.reaction_peak[0, [0, 1, 3, 5]], 0, atol=1e-9 * fr.reaction_peak[0, 4])


def test_inertia_balance_check_sees_springs():
    # a cantilever with a spring to ground at the tip: per mode the support reactions and the
    # spring force together hold the inertia forces (r^T K = spring part only); the check passes
    # with the springs' forces among the reactions and fails (well above its tolerance) without
    from fem.analysis.free_case import inertia_balance
    from fem.analysis.modal_case import field_responses
    from fem.assembly import assemble
    from fem.checks import BALANCE_TOL
    m = read_text((DECK % 24).replace("mass N4 = 50 kg", "mass N4 = 50 kg\nspring N4 (uz = 2e6 N/m)"))
    modal, fr = solve(m).modal
    assert fr.inertia_balance < 1e-10
    asm = assemble(m)
    m.springs[:] = 0.0          # reactions without the spring's force (K keeps the spring)
    Rm, _ = field_responses(m, asm, modal.shapes.reshape(6 * m.n_nodes, -1).T)
    assert inertia_balance(m, asm, modal, Rm) > 100 * BALANCE_TOL


def test_free_case_rows_in_the_tables(tmp_path):
    # quaver run writes the free case's peaks into displacements, reactions and member forces
    # (read back with csv and compared to the result arrays) and results.json
    import csv
    import json

    from fem.cli import run_deck
    deck = tmp_path / "c.deck"
    deck.write_text(DECK % 24)
    assert run_deck(str(deck), str(tmp_path / "out"), render=False) == 0
    fr = solve(read_text(DECK % 24)).modal[-1]
    out = tmp_path / "out"
    rows = [r for r in csv.DictReader((out / "reactions.csv").open()) if r["case"] == "REL"]
    assert [r["node"] for r in rows] == ["N0"]
    np.testing.assert_allclose([float(rows[0][c]) for c in ("Fx", "Fy", "Fz", "Mx", "My", "Mz")],
                               fr.reaction_peak[0], rtol=1e-12)
    rows = [r for r in csv.DictReader((out / "member_forces.csv").open()) if r["case"] == "REL"]
    assert len(rows) == 8
    got = np.array([[float(r[c]) for c in ("N", "Vy", "Vz", "T", "My", "Mz")] for r in rows])
    np.testing.assert_allclose(got.reshape(4, 12), fr.member_peak, rtol=1e-12)
    rows = [r for r in csv.DictReader((out / "displacements.csv").open()) if r["case"] == "REL"]
    assert float(rows[4]["uz"]) == pytest.approx(fr.peak[4, 2], rel=1e-12)
    doc = json.loads((out / "results.json").read_text())
    case = next(c for c in doc["cases"] if c["name"] == "REL")
    np.testing.assert_allclose(case["reaction_peaks"]["N0"], fr.reaction_peak[0], rtol=1e-12)
    assert case["member_force_peak_max"]["My"]["member"] == "M0"
    assert case["member_force_peak_max"]["My"]["value"] == pytest.approx(fr.member_peak[:, [4, 10]].max())
    assert case["checks"]["inertia_balance_pass"] is True
    report = (out / "report.html").read_text()
    assert "REL: reactions hold the inertia forces, mode by mode" in report
    assert f"{fr.member_peak[:, [4, 10]].max() / 1e3:.4g} kN m at M0 end i" in report


@pytest.mark.parametrize("damping,message", [
    ("damping = 2 percent, rayleigh = (4 Hz, 2 percent, 100 Hz, 3 percent)", "not both"),
    ("rayleigh = (4 Hz, 2 percent, 100 Hz)", r"\(a0, a1\)"),
    ("rayleigh = (0.6 Hz, 1 kN)", "needs a time"),
    ("rayleigh = (4 Hz, 120 percent, 100 Hz, 3 percent)", "ratios lie from 0"),
], ids=["both", "three-values", "a1-unit", "ratio"])
def test_damping_mistakes_are_located(damping, message):
    with pytest.raises(DeckError, match=message) as info:
        read_text(FRAME % damping)
    assert info.value.location is not None


@pytest.mark.parametrize("count", [4, 24])
def test_start_support_forces_held_by_the_modes(count):
    # an axial pull at the tip is held by the bar's axial modes, above the first bending ones:
    # with 4 modes the support forces at the start, K Phi q0, miss the axial reaction, and the
    # case says so. Reference: K u0 and K Phi Phi^T M u0 at the root from scipy.linalg.eigh of
    # the dense free K, M (1e-9 relative); with all 24 modes Phi Phi^T M = I, nothing is missed.
    from fem.assembly import assemble
    m = read_text((DECK % count).replace("(0, 0, -10 kN)", "(10 kN, 0, -10 kN)"))
    solved = solve(m)
    statics, others = solved.statics, solved.modal
    free = others[-1]
    asm = assemble(m)
    f = asm.free
    K, M = asm.K.toarray(), asm.M.toarray()
    w2, V = sla.eigh(K[np.ix_(f, f)], M[np.ix_(f, f)], subset_by_index=[0, count - 1])
    u0 = statics[0].u.ravel()
    u_modes = np.zeros_like(u0)
    u_modes[f] = V @ (V.T @ M[np.ix_(f, f)] @ u0[f])
    root = slice(0, 6)
    R0, Rq = (K @ u0)[root], (K @ u_modes)[root]
    expected = np.abs(Rq - R0).max() / np.abs(R0).max()
    assert free.start_force_error == pytest.approx(expected, rel=1e-9, abs=1e-12)
    warned = any("support force at the start" in w.text for w in free.warnings)
    assert warned == (count == 4) and (expected > 0.02) == (count == 4)
