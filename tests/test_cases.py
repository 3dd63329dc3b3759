"""Typed cases (fem.cases): defaults, the rules checked on construction and again by replace."""

from dataclasses import replace

import numpy as np
import pytest

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
from fem.spectrum import Spectrum
from fem.timefn import TimeFunction

FORCE = LoadItem("force", np.array([1]), np.array([1000.0, 0.0, 0.0]))
PLATEAU = Spectrum("plateau", (2.0, 1.0, 0.1, 0.4, 2.0))
HALFSINE = TimeFunction("halfsine", 0.05)


def test_kinds_and_table():
    assert {k: c.kind for k, c in CASE_TYPES.items()} == {k: k for k in
                                                          ("static", "modes", "free", "history", "harmonic", "spectrum")}


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
     "follows time function 'KNOK', which the case does not define"),
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


def test_examples_in_docstrings():
    import doctest

    import fem.cases

    assert doctest.testmod(fem.cases).failed == 0
