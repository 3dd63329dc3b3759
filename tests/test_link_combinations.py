"""Reactions of combinations that add a dynamic case to a static one, in a model whose rigid link
(or mass off its node) carries inertia into a support (fem/analysis/link_dynamics.py).

The model is the counterweight of tests/test_link_dynamics.py: an 800 kg mass 0.8 m out from a
pinned column foot. The foot's reaction holds the counterweight's inertia (the dynamic
equilibrium of the supported rigid body, Chopra, Dynamics of Structures, 4th ed., sec. 1.4 and
1.7: the elastic forces plus the inertia forces m (u'' + u_g'')); a combination adds it step by
step like every other part. Checked two ways: against the history case's own reaction peaks,
and against an independent model, the same arm as a massless member 10^5 times stiffer, whose
elastic end force brings the inertia to the support with no carried-inertia term at all.
"""

import numpy as np
import pytest
from shared_decks import COUNTERWEIGHT_FRAME

import fem

BASE = COUNTERWEIGHT_FRAME + """
case MODES modes { count = 30 }
case ST static { force T = (6 kN, 0, -20 kN) }
case KNOCK history { force T = (6 kN, 0, 0), time = halfsine(0.05 s), duration = 0.2 s, step = 0.001 s,
                     damping = 0.01 percent }
case SHAKE history { ground = (0, 0, 2 m/s^2), time = halfsine(0.05 s), duration = 0.2 s, step = 0.001 s,
                     damping = 0.01 percent }
case HUM harmonic { force T = (6 kN, 0, 0), at = (2 Hz, 9 Hz), damping = 0.01 percent, correction = on }
case EQ spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 0, 1), missing = on }
combo CK = 1.0*ST + 1.0*KNOCK
combo CS = 1.0*ST + 1.0*SHAKE
combo CH = 1.0*ST + 1.0*HUM
combo CE = 1.0*ST + 1.0*EQ
"""
AT_F = """
case SF static { force F = (1 kN, 0, -5 kN) }
combo CF = 1.0*SF + 1.0*KNOCK
combo CG = 1.0*SF - 2.0*SHAKE
combo CFH = 1.0*SF + 1.0*HUM
combo CFE = 1.0*SF - 1.5*EQ
envelope ALL over CF, CG, CFH
"""
LINK = BASE + AT_F + "link ARM: B -> F\n"
STIFF = BASE + AT_F + "member ARM : B -> F beam Q H\n"
OFF = BASE.replace("node F = (0.8 m, 0, 0)\n", "").replace(
    "mass F = 800 kg", "mass B = 800 kg offset = (0.8 m, 0, 0)")
PAIRS = (("CK", "KNOCK"), ("CS", "SHAKE"))
FOLLOWER = slice(0, 6)       # the link holds all six directions of F, its only follower


@pytest.fixture(scope="module")
def link():
    return fem.solve(fem.read_text(LINK))


@pytest.fixture(scope="module")
def stiff():
    return fem.solve(fem.read_text(STIFF))


def _foot(res):
    return res.model.node_names.index("B")


@pytest.mark.parametrize("combo, case", PAIRS)
def test_history_combination_holds_the_history_case_reaction_peaks(link, combo, case):
    """1 * ST + 1 * history: the combination's largest and smallest reaction by time, less the
    static reaction, is the history's reaction series; its larger size is the history case's own
    reaction peak |R(t)| (which holds the carried inertia). Both sum the same products of doubles
    at the same steps in another order: tolerance 1e-9 of the largest peak. Without the carried
    inertia the combination's vertical foot reaction less the static one reached 345 N under
    SHAKE against the case's own 2966 N (measured)."""
    b, s, h = link[combo].fields["reaction"], link["ST"].reactions, link[case]
    own = np.maximum(b.max - s, s - b.min)
    np.testing.assert_allclose(own, h.reaction_peak, rtol=0, atol=1e-9 * h.reaction_peak.max())
    assert h.reaction_peak[_foot(link), 2] > 100.0      # a dynamic part that matters: 163 N and 2966 N


@pytest.mark.parametrize("combo", ["CK", "CS", "CH", "CE"])
def test_combination_reactions_match_the_stiff_member_model(link, stiff, combo):
    """The foot's largest and smallest reactions X and Z of every combination (static plus a
    force history, a ground-motion history, a harmonic sweep, a spectrum with the missing-mass
    term) against the stiff-member model's, less each model's static reaction (equal in both:
    the arm carries no static load), so the tolerance bears on the dynamic part. Every mode kept;
    the two models differ by the member's flexibility and its own fast modes (measured below 1e-4
    of the largest dynamic part for the time and frequency cases, 2.5e-3 for the spectrum, see
    tests/test_link_dynamics.py); tolerance 1e-3 (5e-3 for the spectrum) of the largest dynamic
    part in the component."""
    a, s = link[combo].fields["reaction"], stiff[combo].fields["reaction"]
    i, j = _foot(link), _foot(stiff)
    sa, ss = link["ST"].reactions[i], stiff["ST"].reactions[j]
    np.testing.assert_allclose(sa, ss, rtol=0, atol=1e-9 * np.abs(ss).max())
    tol = 5e-3 if combo == "CE" else 1e-3
    for c in (0, 2):
        got = np.array([a.max[i, c], a.min[i, c]]) - sa[c]
        want = np.array([s.max[j, c], s.min[j, c]]) - ss[c]
        np.testing.assert_allclose(got, want, rtol=0, atol=tol * np.abs(want).max(), err_msg=f"{combo} {c}")


def test_history_combination_times_follow_the_stiff_member_model(link, stiff):
    """The time of the foot's largest vertical reaction under static plus the force history: the
    same step in both models (the responses agree to 1e-4, far closer than one step's change)."""
    i, j = _foot(link), _foot(stiff)
    assert link["CK"].fields["reaction"].max_by[i, 2] == stiff["CK"].fields["reaction"].max_by[j, 2]


def test_mass_off_the_supported_node_combines_as_the_link(link):
    """The counterweight as a mass off the pinned foot: one rigid body with the link's, so the
    force history's combination gives the link model's reactions at the foot (round-off: 1e-8)."""
    off = fem.solve(fem.read_text(OFF))
    a, b = off["CK"].fields["reaction"], link["CK"].fields["reaction"]
    i, j = _foot(off), _foot(link)
    scale = np.abs(b.max[j]).max()
    np.testing.assert_allclose(a.max[i], b.max[j], rtol=0, atol=1e-8 * scale)
    np.testing.assert_allclose(a.min[i], b.min[j], rtol=0, atol=1e-8 * scale)


def test_static_link_force_holds_the_load_on_its_follower(link):
    """A load on the massless follower F only: the link holds it, p = -f (equilibrium of the node,
    any statics text); exact to round-off of the static solve (1e-9 of the load)."""
    f = link["CF"].fields["link_force"]
    np.testing.assert_allclose(link["SF"].links, [-1e3, 0, 5e3, 0, 0, 0], rtol=0, atol=1e-6)
    assert f.max.shape == (4, 6)


@pytest.mark.parametrize("combo, case, factor", [("CF", "KNOCK", 1.0), ("CG", "SHAKE", -2.0)])
def test_link_force_combination_by_time_holds_the_history_case_peaks(link, combo, case, factor):
    """Static + factor * history, link forces step by step (K u - f and the inertia M a the link
    holds): less the static link force, the larger size of the largest and smallest is |factor|
    times the history case's own link force peak (fem/analysis/link_dynamics.py, checked against
    closed forms in tests/test_link_dynamics.py). The same products summed in another order:
    tolerance 1e-9 of the largest peak."""
    f, s, h = link[combo].fields["link_force"], link["SF"].links, link[case]
    F = link.model.node_names.index("F")
    own = np.maximum(f.max[F] - s, s - f.min[F])
    np.testing.assert_allclose(own, abs(factor) * h.links, rtol=0, atol=1e-9 * np.abs(h.links).max())
    assert h.links[2] > 50.0                 # the link swings the 800 kg counterweight vertically
    assert np.all(np.isfinite(f.max_by[F]))  # a history part governs: times, s
    others = [i for i in range(4) if i != F]
    assert not np.any(f.max[others]) and not np.any(f.min[others])


@pytest.mark.parametrize("combo, case, factor", [("CFH", "HUM", 1.0), ("CFE", "EQ", -1.5)])
def test_link_force_peaks_enter_with_both_signs(link, combo, case, factor):
    """Spectrum and harmonic terms: static +/- |factor| * the case's link force peaks (the usual
    treatment of a result without sign; common practice, no source), exact to round-off."""
    f, s, p = link[combo].fields["link_force"], link["SF"].links, link[case].links
    F = link.model.node_names.index("F")
    np.testing.assert_allclose(f.max[F], s + abs(factor) * p, rtol=0, atol=1e-12 * np.abs(s).max())
    np.testing.assert_allclose(f.min[F], s - abs(factor) * p, rtol=0, atol=1e-12 * np.abs(s).max())


def test_link_force_combination_matches_the_stiff_member_end_force(link, stiff):
    """Static + force history: the link's force on F in X and Z against the stiff member's end
    force at F. The member B -> F lies along X with its local z along Z, and its end force at j
    is what the node exerts on the member, so the link's largest force is minus the member's
    smallest: (Fx, Fz) max = -(N_j, Vz_j) min and min = -max (the static part shows the
    convention: the link holds -1 kN X, the member's N_j is +1 kN). Less the static part, which
    is equal in both; the models differ by the member's flexibility and fast modes (measured
    8e-5 of the history's largest link force): tolerance 1e-3 of it."""
    F = link.model.node_names.index("F")
    a = link["CF"].fields["link_force"]
    e = stiff["CF"].fields["end_force"]
    arm = stiff.model.member_names.index("ARM")
    s = link["SF"].links[[0, 2]]
    got = np.r_[a.max[F, [0, 2]], a.min[F, [0, 2]]] - np.r_[s, s]
    want = -np.r_[e.min[arm, [6, 8]], e.max[arm, [6, 8]]] - np.r_[s, s]
    np.testing.assert_allclose(got, want, rtol=0, atol=1e-3 * link["KNOCK"].links.max())


def test_link_force_field_is_written(link, tmp_path):
    """results.json demands carry `link_force` over the follower nodes only; the extremes table
    extremes_link_force.csv a row per result, follower and direction."""
    import json

    fem.write_results(link, tmp_path / "out", write="tables")
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    got = {d["name"]: d for d in doc["demands"]}
    fld = got["CF"]["fields"]["link_force"]
    assert list(fld["values"]) == ["F"] and fld["units"] == "N or N m"
    F = link.model.node_names.index("F")
    assert fld["values"]["F"]["max"] == pytest.approx(link["CF"].fields["link_force"].max[F].tolist())
    assert "link_force" in got["ALL"]["fields"]
    rows = (tmp_path / "out" / "extremes_link_force.csv").read_text().splitlines()
    assert rows[0].startswith("result,kind,node,component,max")
    assert len(rows) == 1 + len(doc["demands"]) * 6


def test_no_link_no_field(stiff):
    """A model without links has no link_force field."""
    assert "link_force" not in stiff["CF"].fields


def test_link_on_a_free_reference_node():
    """The counterweight on a link from the free column top T (nothing carried into a support):
    the combination's reactions and link forces by time, less the static part, still give the
    history case's own peaks (round-off, 1e-9 of the largest)."""
    deck = BASE.replace("node F = (0.8 m, 0, 0)", "node F = (0.8 m, 0, 3 m)") + AT_F + "link ARM: T -> F\n"
    res = fem.solve(fem.read_text(deck))
    h, F = res["KNOCK"], res.model.node_names.index("F")
    b, s = res["CK"].fields["reaction"], res["ST"].reactions
    np.testing.assert_allclose(np.maximum(b.max - s, s - b.min), h.reaction_peak, rtol=0,
                               atol=1e-9 * h.reaction_peak.max())
    f, s = res["CF"].fields["link_force"], res["SF"].links
    np.testing.assert_allclose(np.maximum(f.max[F] - s, s - f.min[F]), h.links, rtol=0, atol=1e-9 * h.links.max())
    assert h.links.max() > 50.0


def test_pretensioned_model_combines_link_forces():
    """A guy pretensioned at 20 kN from the follower F straight up to an anchor: a combination
    with a spectrum case adds the pretension state (and its link forces) once with the static
    case's change: the static result (state included) +/- the spectrum's peaks, as without
    pretension (round-off, 1e-12 of the static link force). The link now also holds the guy's
    pull on the node F: the static case's link force differs from the unguyed model's by minus
    the guy's tension N, straight down (equilibrium of the node, which carries no other member;
    any statics text; round-off of the solves, 1e-9 of N)."""
    deck = LINK + ("node A = (0.8 m, 0, 3 m)\nsupport A pinned\n"
                   "member GUY : F -> A truss P ST pretension = 20 kN\n")
    res = fem.solve(fem.read_text(deck))
    F = res.model.node_names.index("F")
    c, s, p = res["CFE"], res["SF"].links, res["EQ"].links
    assert c.terms[-1][1] == "(pretension state)"
    f = c.fields["link_force"]
    np.testing.assert_allclose(f.max[F], s + 1.5 * p, rtol=0, atol=1e-12 * np.abs(s).max())
    np.testing.assert_allclose(f.min[F], s - 1.5 * p, rtol=0, atol=1e-12 * np.abs(s).max())
    change = res["SF"].links - fem.solve(fem.read_text(LINK))["SF"].links
    N = res["SF"].member_forces[res.model.member_names.index("GUY"), 6]      # tension at A, N
    assert N > 20e3          # the pretension, raised by the load pulling F down
    np.testing.assert_allclose(change, [0, 0, -N, 0, 0, 0], rtol=0, atol=1e-9 * N)


def test_summary_names_the_largest_link_force(link, stiff):
    """The console lines of a combination name its largest link force, where and when, from the
    field itself (the largest in size of its largest and smallest values); a model without links
    has no such line, and a link that holds no moment shows none."""
    from fem.output.envelope_out import summary_lines

    f = link["CF"].fields["link_force"]
    F = link.model.node_names.index("F")
    hi, lo = f.max[F, :3], f.min[F, :3]
    j = int(np.argmax(np.maximum(np.abs(hi), np.abs(lo))))
    v = hi[j] if abs(hi[j]) >= abs(lo[j]) else lo[j]
    got = [ln for ln in summary_lines(link, link["CF"], "") if "link force" in ln]
    assert len(got) == 1 and got[0].startswith(f"largest link force {v:.4g} N at F F{'xyz'[j]} (t = ")
    # a point mass on F with no rotary inertia and no moment on F: the link holds no moment
    assert not np.any(f.max[F, 3:]) and not np.any(f.min[F, 3:]) and "link moment" not in got[0]
    assert not any("link" in ln for ln in summary_lines(stiff, stiff["CF"], ""))
