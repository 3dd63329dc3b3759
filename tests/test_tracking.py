"""Modes tracked across variants by the modal assurance criterion (MAC).

MAC(a, b) = |a^T W b|^2 / ((a^T W a)(b^T W b)) (Allemang 2003, "The modal assurance criterion -
twenty years of use and abuse", Sound and Vibration 37(8); from memory): 1 for one shape, and
with W = M exactly 0 for two modes of one model (M-orthogonality).
"""

import numpy as np
import pytest
from shared_decks import CROSSING_CANTILEVER

from fem.analysis.modal_case import solve_modes_case
from fem.analysis.tracking import common_dofs, mac, match_modes, track_sweep
from fem.assembly import assemble
from fem.deck.reader import read_text

FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section R = rect(b = 100 mm, h = 160 mm)
section P = pipe(od = 88.9 mm, wall = 5.49 mm)
node A = (0, 0, 0)
node B = (0, 0, 3 m)
node C = (4 m, 0, 3 m)
node D = (4 m, 0, 0)
member C1 : A -> B beam R S
member B1 : B -> C beam R S
member C2 : D -> C beam R S
member T1 : A -> C truss P S
support A fixed
support D fixed
mass C = 200 kg
case MODES modes { count = 6 }
"""

# the crossing cantilever (tests/shared_decks.py): the two bending planes' frequencies pass each
# other as h passes b
CANTILEVER = CROSSING_CANTILEVER + "case MODES modes { count = 4 }\n"


def solved(text, **let):
    m = read_text(text, let=let or None)
    asm = assemble(m)
    return m, asm, solve_modes_case(m, asm, m.cases[0])


def test_mac_of_a_mode_with_itself_and_with_another():
    m, asm, r = solved(FRAME)
    f = asm.free
    phi, M = r.modes.phi, asm.M[f][:, f]
    np.testing.assert_allclose(np.diag(mac(phi, phi)), 1.0, rtol=1e-14)
    np.testing.assert_allclose(np.diag(mac(phi, phi, M)), 1.0, rtol=1e-14)
    # mass-weighted: distinct modes are M-orthogonal, MAC = (phi_i^T M phi_j)^2 at round-off
    off = mac(phi, phi, M)[~np.eye(phi.shape[1], dtype=bool)]
    assert np.abs(off).max() < 1e-20
    # the plain form is not zero for them (the members' and the point mass's mass differ)
    assert (mac(phi, phi) - np.eye(phi.shape[1])).max() > 1e-4
    # scale and sign do not matter; a zero shape matches nothing
    np.testing.assert_allclose(mac(phi[:, :2], -3.0 * phi[:, :2]), mac(phi[:, :2], phi[:, :2]), rtol=1e-14)
    assert mac(np.zeros(len(f)), phi[:, 0]).item() == 0.0
    with pytest.raises(ValueError, match="different DOFs"):
        mac(phi[:-6], phi)


def test_modes_matched_on_the_nodes_two_models_share():
    # the variant adds a light bracket at C (a new node): its modes are matched on the four
    # nodes both have; the bracket barely changes them
    m0, _, r0 = solved(FRAME)
    text = FRAME.replace("support A fixed", "node X = (4.3 m, 0, 3 m)\nmember K1 : C -> X beam P S\n"
                         "support A fixed")
    m1, _, r1 = solved(text)
    ia, ib = common_dofs(m0.node_names, m1.node_names)
    assert len(ia) == 6 * 4
    np.testing.assert_array_equal(m0.coords[ia[::6] // 6], m1.coords[ib[::6] // 6])
    a = r0.shapes.reshape(-1, r0.shapes.shape[2])[ia]
    b = r1.shapes.reshape(-1, r1.shapes.shape[2])[ib]
    match = match_modes(a, b, freq=r1.modes.freq, ref_freq=r0.modes.freq)
    assert match.index[:4].tolist() == [0, 1, 2, 3]
    assert match.mac[:4].min() > 0.99
    assert match.crossings == [] and match.veerings == []


def test_sweep_through_a_crossing_keeps_identities():
    # h from 70 to 130 mm (b = 100 mm): bending in Y (E h b^3/12) and in Z (E b h^3/12) change
    # order at h = b. Each tracked identity must follow one plane's closed form
    # f = (beta L)^2 / (2 pi L^2) sqrt(E I / (rho A)), (beta L)^2 = 3.51601527 and 22.0344916
    # (cantilever, Blevins 1979 Table 8-1 (from memory); roots in reference-values.md section 1);
    # 20 cubic members: within 1e-6 and 2e-5 for the first and second bending modes
    hs = [70, 76, 82, 88, 94, 97, 103, 106, 112, 118, 124, 130]
    runs = [solved(CANTILEVER, h=f"{h} mm") for h in hs]
    shapes = [r.shapes.reshape(-1, 4) for _, _, r in runs]
    freqs = [r.modes.freq for _, _, r in runs]
    # the sorted order does swap: mode 0 moves in Z below the crossing and in Y above it
    z_motion = [np.abs(r.shapes[:, 2, 0]).sum() > np.abs(r.shapes[:, 1, 0]).sum() for _, _, r in runs]
    assert z_motion[0] and not z_motion[-1]
    for against in ("previous", "base"):
        t = track_sweep(shapes, freqs, against=against)
        assert (t.mac > 0.999).all()
        # one crossing per pair of planes, at the step from 97 to 103 mm (variant 6)
        assert sorted(t.crossings) == [(6, 0, 1), (6, 2, 3)]
        assert t.veerings == []
        b, E, rho = 0.1, 200e9, 7850.0
        for v, h in enumerate(hs):
            h = h / 1000
            for ident, in_z, c, tol in ((0, True, 3.51601527, 1e-6), (1, False, 3.51601527, 1e-6),
                                        (2, True, 22.0344916, 2e-5), (3, False, 22.0344916, 2e-5)):
                inertia = b * h ** 3 / 12 if in_z else h * b ** 3 / 12
                exact = c / (2 * np.pi * 2.0 ** 2) * np.sqrt(E * inertia / (rho * b * h))
                assert t.freq[v, ident] == pytest.approx(exact, rel=tol)
    # the identities are shapes: identity 0 moves in Z all along
    t = track_sweep(shapes, freqs)
    for (_, _, r), k in zip(runs, t.index[:, 0]):
        assert np.abs(r.shapes[:, 2, k]).sum() > 100 * np.abs(r.shapes[:, 1, k]).sum()


def two_dof(k1, c, k2=1.0):
    """Two unit masses on springs k1, k2 to ground, coupled by c: K = [[k1 + c, -c], [-c, k2 + c]]."""
    lam, phi = np.linalg.eigh(np.array([[k1 + c, -c], [-c, k2 + c]]))
    return np.sqrt(lam) / (2 * np.pi), phi


def test_veering_flagged_and_crossing_without_coupling():
    # closed form (H): lambda = (k1 + k2)/2 + c -+ sqrt(((k1 - k2)/2)^2 + c^2), so with c = 0 the
    # frequencies sqrt(k1), sqrt(k2) / 2 pi cross at k1 = k2 with the shapes e1, e2 unchanged,
    # and with c > 0 they veer: the smallest gap 2c in lambda at k1 = k2, where the shapes are
    # (1, 1) and (1, -1) / sqrt(2) (MAC 1/2 with either uncoupled shape)
    k1 = np.linspace(0.8, 1.2, 9)
    sweep = [two_dof(k, 0.01) for k in k1]
    t = track_sweep([p for _, p in sweep], [f for f, _ in sweep])
    assert t.veerings and all(v in (4, 5) for v, _, _ in t.veerings)
    mid = match_modes(np.eye(2), sweep[4][1], freq=sweep[4][0])
    np.testing.assert_allclose(mid.matrix, 0.5, rtol=1e-12)
    assert mid.veerings == [(0, 1)] and mid.crossings == []
    lam = (2 * np.pi * sweep[4][0]) ** 2
    assert lam[1] - lam[0] == pytest.approx(0.02, rel=1e-12)
    # without coupling the same sweep is a clean crossing, identities kept (k1 = 1 left out:
    # there the two frequencies are equal and any pair of shapes is a pair of modes)
    k1 = np.r_[0.8:0.99:0.05, 1.05:1.21:0.05]
    sweep = [two_dof(k, 0.0) for k in k1]
    t = track_sweep([p for _, p in sweep], [f for f, _ in sweep])
    assert t.crossings == [(4, 0, 1)] and t.veerings == []
    np.testing.assert_allclose(t.freq[:, 0], np.sqrt(k1) / (2 * np.pi), rtol=1e-14)
    np.testing.assert_allclose(t.freq[:, 1], 1 / (2 * np.pi), rtol=1e-14)


def test_sweep_runs_both_ways_from_its_base_and_reports_lost_modes():
    k1 = np.r_[0.8:0.99:0.05, 1.05:1.21:0.05]
    sweep = [two_dof(k, 0.0) for k in k1]
    t = track_sweep([p for _, p in sweep], [f for f, _ in sweep], base=4)
    np.testing.assert_allclose(t.freq[:, 1], np.sqrt(k1) / (2 * np.pi), rtol=1e-14)  # mode 1 at the base
    # a variant with fewer modes: the reference mode without a partner is marked lost
    shapes = [np.eye(2), np.eye(2)[:, :1]]
    t = track_sweep(shapes, [np.array([1.0, 2.0]), np.array([1.0])])
    assert t.index[1].tolist() == [0, -1] and np.isnan(t.freq[1, 1])
    with pytest.raises(ValueError, match="against"):
        track_sweep(shapes, against="first")
