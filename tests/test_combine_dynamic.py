"""Combinations that add history, spectrum and harmonic cases to static ones (fem/analysis/combine.py).

Checks against numbers taken by hand (numpy) from the component cases' own results: a history
case combined with a static one against the saved time series plus the static result; a spectrum
or harmonic case against static +/- |factor| * peak (the usual treatment of a result without
sign: common practice, no source); the static part's equilibrium.
"""

import numpy as np
import pytest

from fem import solve
from fem.deck.reader import read_text
from fem.errors import DeckError, ModelError

# a cantilever post with an arm and a mass: small enough to record every node of a history
FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..3 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..2 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 4.5 m)
member ARM : N3 -> H beam P S
support N0 fixed
mass H = 400 kg
case DEAD static { gravity = (0, 0, -9.81 m/s^2) }
case WIND static { force N3 = (0, 3 kN, 0) }
case MODES modes { count = 6 }
case KNOCK history { force H = (4 kN, 1 kN, -2 kN), time = halfsine(0.05 s), duration = 0.6 s,
                     step = 0.002 s, damping = 2 percent, correction = on }
case SWAY history { force N2 = (0, 2 kN, 0), time = halfsine(0.1 s), duration = 0.6 s,
                    step = 0.002 s, damping = 2 percent }
case SHAKE spectrum { curve = plateau(0.25 gee, 1.2, 0.15 s, 0.5 s, 2 s), directions = (1, 1, 0),
                      damping = 5 percent }
case HUM harmonic { force H = (0, 500 N, 0), from = 2 Hz, to = 40 Hz, points = 60, damping = 2 percent }
"""

# every value is a sum of a few products of doubles of one size: round-off, 1e-12 of the largest
RTOL = 1e-12


def _solve(extra: str):
    return solve(read_text(FRAME + extra))


@pytest.fixture(scope="module")
def res():
    return _solve("""
combo DK = 1.0*DEAD - 2.0*KNOCK
combo DS = 1.2*DEAD + 0.5*WIND - 1.5*SHAKE
combo DH = 1.0*DEAD + 1.0*HUM
combo TWO = 1.0*DEAD + 1.0*KNOCK + 0.5*SWAY
combo ULS = 1.35*DEAD + 1.5*WIND
""")


def with_basis(res, name):
    """A history result with the basis of its series, as fem.solve makes it for combinations."""
    from dataclasses import replace

    from fem.analysis.history_case import series_basis
    from fem.assembly import assemble

    r = res[name]
    return replace(r, series=series_basis(res.model, assemble(res.model), r, res.modes_of(name)))


def _close(a, b):
    scale = max(np.abs(a).max(), np.abs(b).max(), 1e-300)
    np.testing.assert_allclose(a, b, rtol=0, atol=RTOL * scale)


def test_history_with_static_by_time(res):
    """max/min over time of static + factor * u(t) from the history's saved series (every node
    recorded), and the times where they occur."""
    d, k = res["DEAD"], res["KNOCK"]
    assert list(k.record) == list(range(5))
    series = d.u[None] - 2.0 * k.u                     # (m, n, 6) by hand
    b = res["DK"].fields["displacement"]
    _close(b.max, series.max(axis=0))
    _close(b.min, series.min(axis=0))
    # the time of the largest value: the step where numpy finds it (ties aside: checked on the
    # translations that move, where a tie between steps is not expected)
    moving = np.abs(k.u[:, :, :3]).max(axis=0) > 1e-9
    np.testing.assert_array_equal(b.max_by[:, :3][moving], k.t[series.argmax(axis=0)][:, :3][moving])
    np.testing.assert_array_equal(b.min_by[:, :3][moving], k.t[series.argmin(axis=0)][:, :3][moving])
    assert res["DK"].duration == (0.0, pytest.approx(0.6))


def test_history_forces_against_its_own_peaks(res):
    """A history combined alone (factor 1) gives, for reactions and end forces, bounds whose
    larger size is the history case's own peak |value| over time (history_case.peaks)."""
    k = with_basis(res, "KNOCK")
    from fem.analysis.combine import combine_terms

    c = combine_terms("K", [(1.0, k)], {"node": 5, "member": 4})
    for name, peak in (("reaction", k.reaction_peak), ("end_force", k.member_peak),
                       ("displacement", k.peak)):
        b = c.fields[name]
        _close(np.maximum(b.max, -b.min), peak)


def test_history_reactions_by_time_with_static(res):
    """Reactions of static + history by time: the combination of the static case alone with a
    zero factor on the history returns the static reactions exactly, and the factors enter
    linearly: bounds of DEAD - 2 KNOCK sit within DEAD -/+ 2 * the history's peak."""
    d, k = res["DEAD"], res["KNOCK"]
    b = res["DK"].fields["reaction"]
    tol = RTOL * np.abs(d.reactions).max()
    assert np.all(b.max <= d.reactions + 2 * k.reaction_peak + tol)
    assert np.all(b.min >= d.reactions - 2 * k.reaction_peak - tol)
    # the static value lies inside the bounds (t = 0: the history starts at rest)
    assert np.all(b.max >= d.reactions - tol) and np.all(b.min <= d.reactions + tol)


def test_two_histories_on_one_grid(res):
    """Two history cases on one time grid add step by step: the saved series by numpy."""
    series = res["DEAD"].u[None] + res["KNOCK"].u + 0.5 * res["SWAY"].u
    b = res["TWO"].fields["displacement"]
    _close(b.max, series.max(axis=0))
    _close(b.min, series.min(axis=0))


def test_spectrum_enters_with_both_signs(res):
    """max = static + |factor| * peak, min = static - |factor| * peak, for every field."""
    d, w, s = res["DEAD"], res["WIND"], res["SHAKE"]
    c = res["DS"]
    for name, a, b, p in (("displacement", d.u, w.u, s.u), ("reaction", d.reactions, w.reactions, s.reactions),
                          ("end_force", d.member_forces, w.member_forces, s.member_forces)):
        static = 1.2 * a + 0.5 * b
        _close(c.fields[name].max, static + 1.5 * p)
        _close(c.fields[name].min, static - 1.5 * p)
        assert np.isnan(c.fields[name].max_by).all()      # no time governs
    assert c.duration is None


def test_harmonic_amplitude_enters_with_both_signs(res):
    """A harmonic case enters with its largest amplitude over the sweep: static +/- peak."""
    d, h = res["DEAD"], res["HUM"]
    c = res["DH"]
    _close(c.fields["displacement"].max, d.u + h.peak)
    _close(c.fields["displacement"].min, d.u - h.peak)
    _close(c.fields["end_force"].max, d.member_forces + h.member_peak)
    _close(c.fields["reaction"].min, d.reactions - h.reaction_peak)


def test_static_part_balances(res):
    """The combination's equilibrium check is its static part's: applied loads against the
    support reactions (static.balance); the reactions of the part are the factor sum."""
    c, d, w = res["DS"], res["DEAD"], res["WIND"]
    part = c.static
    _close(part.reactions, 1.2 * d.reactions + 0.5 * w.reactions)
    ch = res.checks.cases["DS"]["static_part"]
    assert ch["equilibrium_pass"] and res.checks.passed["DS"]
    # the summed applied loads balance the summed reactions (Newton's first law)
    _close(part.reactions[:, :3].sum(0), -part.applied[:, :3].sum(0))
    assert res.checks.cases["DH"]["static_part"]["equilibrium_pass"]
    assert "not balanced" in res.checks.cases["DS"]["peaks"]


def test_history_without_basis_refused(res):
    from fem.analysis.combine import combine_terms

    with pytest.raises(ModelError, match="history case KNOCK: its series has no basis"):
        combine_terms("K", [(1.0, res["KNOCK"])], {"node": 5, "member": 4})


def test_static_only_combination_unchanged(res):
    """A combination of static cases only stays a static result (its outputs as before)."""
    assert res["ULS"].kind == "static"
    _close(res["ULS"].u, 1.35 * res["DEAD"].u + 1.5 * res["WIND"].u)
    assert [r.name for r in res.demands] == ["DK", "DS", "DH", "TWO"]


def test_histories_on_different_grids_refused():
    extra = """case LATE history { force H = (1 kN, 0, 0), time = halfsine(0.05 s), duration = 0.6 s,
                                   step = 0.003 s, damping = 2 percent }
combo BAD = 1.0*KNOCK + 1.0*LATE
"""
    with pytest.raises(ModelError, match=r"combination BAD: history cases KNOCK \(301 steps of 0\.002 s to 0\.6 s\) "
                                         r"and LATE .* do not share a time grid"):
        _solve(extra)


@pytest.mark.parametrize("extra, message", [
    ("combo C = 1.0*DEAD + 1.0*MODES", r"combination refers to 'MODES', which is a modes case .*a combination adds "
                                       r"static, history, spectrum and harmonic cases"),
    ("combo A = 1.0*DEAD\ncombo C = 1.0*A + 1.0*KNOCK", r"'A', which is a combination"),
    ("combo C = 1.0*DEAD + 1.0*KNOK", r"'KNOK', which is not defined; did you mean 'KNOCK'"),
], ids=["modes", "combination", "misspelt"])
def test_combination_refusals(extra, message):
    with pytest.raises(DeckError, match=message):
        read_text(FRAME + extra)


def test_free_case_start_refuses_a_dynamic_combination():
    extra = """combo DK = 1.0*DEAD + 1.0*KNOCK
case REL free { start = DK, duration = 0.1 s, step = 0.01 s }"""
    with pytest.raises(DeckError, match=r"start 'DK' is not a static case or combination"):
        read_text(FRAME + extra)
