"""Typed cases (fem.cases): defaults, the rules checked on construction and again by replace,
the deck's options mapped onto the same objects (located errors), and cases built in Python
solved end to end."""

from dataclasses import replace

import numpy as np
import pytest
from shared_decks import BAR_SDOF

from fem import solve
from fem.cases import (
    CASE_TYPES,
    Damping,
    FreeCase,
    HarmonicCase,
    HistoryCase,
    LoadItem,
    ModesCase,
    RuleError,
    SpectrumCase,
    StaticCase,
)
from fem.deck.reader import read_text
from fem.errors import DeckError
from fem.spectrum import Spectrum
from fem.timefn import TimeFunction

FORCE = LoadItem("force", np.array([1]), np.array([1000.0, 0.0, 0.0]))
PLATEAU = Spectrum("plateau", (2.0, 1.0, 0.1, 0.4, 2.0))
HALFSINE = TimeFunction("halfsine", 0.05)


def test_kinds_and_table():
    assert {k: c.kind for k, c in CASE_TYPES.items()} == {k: k for k in
                                                          ("static", "modes", "free", "history", "harmonic", "spectrum",
                                                           "buckling")}


def test_defaults():
    m = ModesCase(name="M")
    assert (m.count, m.fmax, m.target, m.max_count, m.n_modes) == (None, None, None, 300, 12)
    np.testing.assert_array_equal(m.reference, np.zeros(3))
    assert ModesCase(name="M", fmax=10.0).n_modes is None            # every mode up to fmax
    assert ModesCase(name="M", target=(0.9, 0.9, 0)).n_modes is None  # as many as the target needs
    assert ModesCase(name="M", count=3.0).count == 3 and isinstance(ModesCase(name="M", count=3.0).count, int)
    h = HarmonicCase(name="H", modes="M", fmin=1.0, fmax=10.0, loads=(FORCE,))
    assert (h.points, h.spacing, h.correction, h.ground, h.record) == (200, "linear", False, None, None)
    np.testing.assert_array_equal(h.damping.ratios([1.0, 2.0]), [0.0, 0.0])       # undamped unless given
    s = SpectrumCase(name="S", modes="M", spectrum=PLATEAU)
    assert (s.combine, s.spatial, s.missing) == ("cqc", "srss", False)
    np.testing.assert_array_equal(s.directions, [1.0, 0.0, 0.0])
    np.testing.assert_array_equal(s.damping.ratios([1.0, 2.0]), [0.05, 0.05])     # the design spectra's 5 %
    f = FreeCase(name="F", modes="M", duration=1.0, step=0.01, start="P")
    assert (f.start, f.record, f.steps, f.needs) == ("P", None, 101, ("M", "P"))
    t = HistoryCase(name="T", modes="M", duration=1.0, step=0.01, loads=(FORCE,), time=HALFSINE)
    assert (t.correction, t.functions, t.grounds, t.needs, t.static_part) == (False, {}, (), ("M",), False)
    assert StaticCase(name="P", loads=(FORCE,)).static_part and replace(t, correction=True).static_part


def test_damping_forms():
    w = 2 * np.pi * np.array([1.0, 5.0, 10.0])
    np.testing.assert_array_equal(Damping(zeta=0.02).ratios(w), [0.02] * 3)
    np.testing.assert_array_equal(Damping(zeta=(0.02, 0.03)).ratios(w), [0.02, 0.03, 0.03])   # the last repeats
    # Rayleigh through two anchors gives their ratios back at their frequencies; the coefficients
    # of reference-values.md section 8 (Chopra Sec. 11.4, values C, 6 digits): f 1 and 5 Hz, 5 %
    anchored = Damping(anchors=(1.0, 0.05, 5.0, 0.05))
    np.testing.assert_allclose(anchored.ratios(w[:2]), [0.05, 0.05], rtol=1e-12)
    a0, a1 = 0.523599, 2.652582e-3
    np.testing.assert_allclose(Damping(rayleigh=(a0, a1)).ratios(w), anchored.ratios(w), rtol=2e-6)
    # the table of that section: 0.0875 at 10 Hz
    assert anchored.ratios(w)[2] == pytest.approx(0.08750, abs=5e-6)
    assert Damping().ratios([0.0, 3.0]).tolist() == [0.0, 0.0]


RULES = [
    ("count", ModesCase, dict(count=1.5), "case C: count must be a whole number of at least 1"),
    ("count-0", ModesCase, dict(count=0), "case C: count must be a whole number of at least 1"),
    ("fmax", ModesCase, dict(fmax=0.0), "case C: fmax must be positive"),
    # not a number is refused as out of range, not let through by a comparison that is false
    ("count-inf", ModesCase, dict(count=float("inf")), "case C: count must be a whole number of at least 1"),
    ("duration-nan", FreeCase, dict(modes="M", duration=float("nan"), step=0.1, start="P"),
     "case C: duration must be positive"),
    ("gravity-nan", StaticCase, dict(gravity=(0, float("nan"), 0)),
     "expected 3 finite values"),
    ("target", ModesCase, dict(target=(1.2, 0, 0)), "case C: target: fractions of the mass from 0 to 100 percent"),
    ("max", ModesCase, dict(max_count=0), "case C: max must be a whole number of at least 1"),
    ("target-and-count", ModesCase, dict(target=(0.9, 0, 0), count=3), "give a mass target or count/fmax, not both"),
    ("modes-loads", ModesCase, dict(loads=(FORCE,)), "case C: a modes case takes no loads"),
    ("static-empty", StaticCase, {}, "case C: this static case has no loads, so every result would be zero"),
    ("duration", FreeCase, dict(modes="M", duration=-1.0, step=0.1, start="P"), "case C: duration must be positive"),
    ("step", FreeCase, dict(modes="M", duration=1.0, step=0.0, start="P"), "case C: step must be positive"),
    ("step-over-duration", FreeCase, dict(modes="M", duration=0.01, step=0.1, start="P"),
     "case C: duration 0.01 s is shorter than the step 0.1 s, so the free case would hold its start only"),
    ("million", HistoryCase, dict(modes="M", duration=10.0, step=1e-6, loads=(FORCE,), time=HALFSINE),
     "case C: more than a million time steps; use a longer step"),
    ("free-nothing", FreeCase, dict(modes="M", duration=1.0, step=0.1),
     "case C: give a start \\(a static case\\) or initial displacement/velocity"),
    ("free-gravity", FreeCase, dict(modes="M", duration=1.0, step=0.1, start="P", gravity=(0, 0, -9.81)),
     "gravity belongs to static and history cases, not to a free case"),
    ("history-no-time", HistoryCase, dict(modes="M", duration=1.0, step=0.1, loads=(FORCE,)),
     "case C: a history case needs time = shape"),
    ("history-ground-no-time", HistoryCase,
     dict(modes="M", duration=1.0, step=0.1, ground=(1, 0, 0), functions={"K": HALFSINE}),
     "ground = ... needs the case's time"),
    ("history-correction-ground", HistoryCase,
     dict(modes="M", duration=1.0, step=0.1, ground=(1, 0, 0), time=HALFSINE, correction=True),
     "the static correction applies to force loads only"),
    ("history-nothing", HistoryCase, dict(modes="M", duration=1.0, step=0.1, time=HALFSINE),
     "give loads or a ground acceleration"),
    ("history-unknown-function", HistoryCase,
     dict(modes="M", duration=1.0, step=0.1, time=HALFSINE, loads=(replace(FORCE, time="KNOK"),)),
     r"case C: force follows time function 'KNOK', which is not defined in the case; this case names none"),
    ("history-no-function", HistoryCase,
     dict(modes="M", duration=1.0, step=0.1, functions={"K": HALFSINE}, loads=(FORCE,)),
     "case C: this force has no time function"),
    ("from", HarmonicCase, dict(modes="M", fmin=0.0, fmax=10.0, loads=(FORCE,)),
     "case C: from must be a positive frequency"),
    ("to-below-from", HarmonicCase, dict(modes="M", fmin=10.0, fmax=5.0, loads=(FORCE,)),
     "case C: 'to' must be above 'from'"),
    ("points", HarmonicCase, dict(modes="M", fmin=1.0, fmax=5.0, loads=(FORCE,), points=1),
     "case C: points is a whole number from 2 to a million"),
    ("spacing", HarmonicCase, dict(modes="M", fmin=1.0, fmax=5.0, loads=(FORCE,), spacing="octave"),
     "case C: spacing is linear or log"),
    ("harmonic-nothing", HarmonicCase, dict(modes="M", fmin=1.0, fmax=5.0),
     "give force amplitudes or a ground acceleration"),
    ("harmonic-gravity", HarmonicCase, dict(modes="M", fmin=1.0, fmax=5.0, loads=(FORCE,), gravity=(0, 0, -9.81)),
     "gravity belongs to static and history cases, not to a harmonic case"),
    ("directions", SpectrumCase, dict(modes="M", spectrum=PLATEAU, directions=(0, 0, 0)),
     "case C: directions: at least one direction factor must be non-zero"),
    ("combine", SpectrumCase, dict(modes="M", spectrum=PLATEAU, combine="sum"), "case C: combine is one of cqc, srss, abs"),
    ("spatial", SpectrumCase, dict(modes="M", spectrum=PLATEAU, spatial="30/100"), "case C: spatial is one of srss, 100/30"),
    ("spectrum-loads", SpectrumCase, dict(modes="M", spectrum=PLATEAU, loads=(FORCE,)),
     "case C: a spectrum case takes no loads"),
]


@pytest.mark.parametrize("cls, fields, message", [r[1:] for r in RULES], ids=[r[0] for r in RULES])
def test_rules_refused(cls, fields, message):
    with pytest.raises(RuleError, match=message):
        cls(name="C", **fields)


DAMPING_RULES = [
    ("ratio-over-one", dict(zeta=2.0), "damping: ratios lie from 0 to below 1", "2 is 200 %; for 2 % write 2 percent"),
    ("negative", dict(zeta=(0.02, -0.01)), "damping: ratios lie from 0 to below 1", ""),
    ("nan", dict(zeta=float("nan")), "damping: ratios lie from 0 to below 1", ""),
    ("two-forms", dict(zeta=0.02, rayleigh=(0.1, 0.001)), "give damping = ... or rayleigh = ..., not both", ""),
    ("coefficients", dict(rayleigh=(-0.1, 0.001)), "rayleigh: the coefficients cannot be negative", ""),
    ("same-anchors", dict(anchors=(2.0, 0.02, 2.0, 0.03)), "rayleigh: two different positive frequencies", ""),
    ("anchor-ratio", dict(anchors=(1.0, 2.0, 5.0, 0.02)), "rayleigh: ratios lie from 0 to below 1",
     "write the ratios with their unit, e.g. 2 percent"),
]


@pytest.mark.parametrize("fields, message, hint", [r[1:] for r in DAMPING_RULES], ids=[r[0] for r in DAMPING_RULES])
def test_damping_rules_refused(fields, message, hint):
    with pytest.raises(ValueError, match=message) as exc:
        Damping(**fields)
    assert exc.value.hint == hint


def test_replace_checks_again():
    h = HarmonicCase(name="H", modes="M", fmin=1.0, fmax=10.0, loads=(FORCE,))
    assert replace(h, points=400).points == 400 and h.points == 200      # a new case; h unchanged
    with pytest.raises(RuleError, match="points is a whole number"):
        replace(h, points=1)
    with pytest.raises(RuleError, match="'to' must be above 'from'"):
        replace(h, fmin=20.0)
    with pytest.raises(RuleError, match="give a mass target or count/fmax"):
        replace(ModesCase(name="M", count=4), target=(0.9, 0.9, 0.0))
    with pytest.raises(AttributeError):
        h.points = 10                                                     # frozen


FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 6 m)
member ARM : N4 -> H beam P S
support N0 fixed
mass H = 400 kg
"""
CASES = """
case PUSH static { force H = (2 kN, 0, 0), gravity = (0, 0, -9.81 m/s^2) }
case MODES modes { count = 4, reference = (0, 0, 1 m) }
case RING free { start = PUSH, duration = 1 s, step = 0.01 s, damping = 0.02, record = "H" }
case KNOCK history { force H = (1 kN, 0, 0), time = halfsine(0.05 s), duration = 0.5 s, step = 0.005 s,
                     rayleigh = (1 Hz, 0.02, 20 Hz, 0.03), modes = MODES }
case SWEEP harmonic { force H = (0, 1 kN, 0), from = 1 Hz, to = 30 Hz, points = 50, spacing = log,
                      damping = (0.02, 0.03) }
case SHAKE spectrum { curve = plateau(2 m/s^2, 1.0, 0.1 s, 0.4 s, 2 s), directions = (1, 0.3, 0), combine = srss,
                      damping = 0.05 }
"""
H = 5         # node H: N0..N4 first


def _python_cases():
    """The cases of CASES, built in Python."""
    def force(v):
        return LoadItem("force", np.array([H]), np.array(v, float))

    return [
        StaticCase(name="PUSH", loads=(force((2000.0, 0, 0)),), gravity=(0, 0, -9.81)),
        ModesCase(name="MODES", count=4, reference=(0, 0, 1.0)),
        FreeCase(name="RING", modes="MODES", start="PUSH", duration=1.0, step=0.01, damping=Damping(zeta=0.02),
                 record=[H]),
        HistoryCase(name="KNOCK", modes="MODES", loads=(force((1000.0, 0, 0)),), time=TimeFunction("halfsine", 0.05),
                    duration=0.5, step=0.005, damping=Damping(anchors=(1.0, 0.02, 20.0, 0.03))),
        HarmonicCase(name="SWEEP", modes="MODES", loads=(force((0, 1000.0, 0)),), fmin=1.0, fmax=30.0, points=50,
                     spacing="log", damping=Damping(zeta=(0.02, 0.03))),
        SpectrumCase(name="SHAKE", modes="MODES", spectrum=Spectrum("plateau", (2.0, 1.0, 0.1, 0.4, 2.0), zeta=0.05),
                     directions=(1, 0.3, 0), combine="srss", damping=Damping(zeta=0.05)),
    ]


def test_deck_cases_equal_python_cases_and_solve_alike():
    model = read_text(FRAME + CASES)
    built = _python_cases()
    assert [type(c) for c in model.cases] == [type(c) for c in built]
    for deck_case, python_case in zip(model.cases, built):
        assert deck_case == python_case, deck_case.name           # every field but the locations
    assert model.cases[1] != replace(built[1], count=5)
    by_deck = solve(read_text(FRAME + CASES))
    by_python = solve(replace(read_text(FRAME + CASES), cases=built))
    for a, b in zip(by_deck, by_python, strict=True):
        assert a.name == b.name
        for field in ("u", "shapes", "zeta", "peak", "reactions", "member_forces", "member_peak"):
            if hasattr(a, field):
                np.testing.assert_array_equal(getattr(a, field), getattr(b, field), err_msg=f"{a.name} {field}")


SDOF = BAR_SDOF
K_BAR = 200e9 * 3.600457e-3 / 2.0        # EA/L of the bar, NPS 6 Sch 40 area (reference-values.md section 9)


def test_python_case_solved_end_to_end():
    # a sweep built in Python on a deck's model, from its natural frequency up: there the steady
    # amplitude is u_st / (2 zeta) (reference-values.md section 5, Chopra 2017 Sec. 3.2:
    # R_d(1) = 1/(2 zeta), 10 at 5 %), u_st = F / k with k = w^2 m of the one mode (1000 t)
    model = read_text(SDOF)
    fn = solve(model)["MODES"].modes.freq[0]
    # the bar's EA/L with the area of the table, which has 7 digits
    assert fn == pytest.approx(np.sqrt(K_BAR / 1e6) / (2 * np.pi), rel=1e-6)
    sweep = HarmonicCase(name="H", modes="MODES", fmin=fn, fmax=2.0 * fn, points=2,
                         loads=(LoadItem("force", np.array([1]), np.array([100e3, 0.0, 0.0])),),
                         damping=Damping(zeta=0.05))
    h = solve(replace(model, cases=[*model.cases, sweep]))["H"]
    assert h.freq[0] == fn
    k = (2 * np.pi * fn) ** 2 * 1e6
    # one mode and one frequency: exact but for rounding, hence 1e-9
    assert abs(h.u[0, list(h.record).index(1), 0]) / (100e3 / k) == pytest.approx(10.0, rel=1e-9)


LOCATED = [
    # (case text, message, text the location points at, hint)
    ("case F free { start = PUSH, step = 0.1 s, duration = 0.01 s }",
     r"case F: duration 0.01 s is shorter than the step 0.1 s, so the free case would hold its start only",
     "duration = 0.01", "check the units of duration and step"),
    ("case F free { start = PUSH, duration = 1 s, step = 0.1 s, gravity = (0, 0, -9.81 m/s^2) }",
     "case F: gravity belongs to static and history cases, not to a free case", "gravity",
     "release from the deflection under gravity with start = a static case"),
    ("case F free { start = PUSH, duration = 1 s, step = 0.1 s, damping = 2 }",
     r"case F: damping: ratios lie from 0 to below 1 \(e.g. 2 percent\)", "damping = 2",
     "2 is 200 %; for 2 % write 2 percent"),
    ("case F free { start = PUSH, rayleigh = (1 Hz, 0.02, 5 Hz, 0.02), duration = 1 s, step = 0.1 s, damping = 0.02 }",
     r"case F: give damping = \.\.\. or rayleigh = \.\.\., not both", "rayleigh", ""),
    ("case W harmonic { force B = (1 kN, 0, 0), from = 1 Hz, to = 5 Hz, points = 1.5 }",
     "case W: points is a whole number from 2 to a million", "points", ""),
    ("case W harmonic { force B = (1 kN, 0, 0), from = 5 Hz, to = 1 Hz }",
     "case W: 'to' must be above 'from'", "case W", ""),
    ("case N modes { count = 3, target = (0.9, 0.9, 0) }",
     "case N: give a mass target or count/fmax, not both", "case N", ""),
    ("case N modes { target = (90, 0, 0) }",
     "case N: target: fractions of the mass from 0 to 100 percent", "target",
     "write them with their unit, e.g. target = (90 percent, 90 percent, 0)"),
]


@pytest.mark.parametrize("case, message, where, hint", LOCATED, ids=[
    "step-over-duration", "free-gravity", "damping", "damping-and-rayleigh", "points", "to-below-from",
    "target-and-count", "target"])
def test_deck_rule_located_at_its_option(case, message, where, hint):
    text = SDOF + "case PUSH static { force B = (1 kN, 0, 0) }\n" + case + "\n"
    with pytest.raises(DeckError, match=message) as exc:
        read_text(text)
    lines = text.split("\n")
    line = len(lines) - 1
    assert exc.value.location.line == line
    assert exc.value.location.column == lines[line - 1].index(where) + 1
    assert exc.value.hint == hint


def test_examples_in_docstrings():
    import doctest

    import fem.cases

    assert doctest.testmod(fem.cases).failed == 0


def test_cases_survive_pickling():
    # models travel to worker processes (pictures, studies on Dask) by pickle
    import pickle

    cases = _python_cases()
    assert all(a == b for a, b in zip(cases, pickle.loads(pickle.dumps(cases)), strict=True))
