"""The forms a harmonic case's loads and frequencies take: their rules and complex amplitudes.

A load of a harmonic case acts as p(t) = P g(f) cos(W t - lag), W = 2 pi f:

- `lag` (rad, default 0) delays the load behind the case's reference, so two loads of one case
  need not act in phase: a rotating unbalance is two perpendicular forces 90 degrees apart;
- g(f) = (f / f0)^n when the load is given with `like = (n, f0)` (its amplitude P at f0 Hz,
  e.g. an aerodynamic force growing with the square of the speed), else 1;
- an `unbalance` load's vector is m e times the unit shaft axis a (kg m): the force m e W^2
  rotates in the plane normal to a, turning positively about a (right hand). At t = 0 (lag 0)
  it points along e1, the global axis that follows the axis of a's largest component in the
  order X, Y, Z, X (a along X: Y), made normal to a; a quarter turn later along e2 = a x e1.
  Its complex amplitude is m e W^2 (e1 - i e2) e^{-i lag} (Rao, Mechanical Vibrations, 5th ed.,
  Sec. 3.7, rotating unbalance, from memory; the m e W^2 form).

The rules return a `Problem` (message, deck options, hint) or None; fem.cases raises it as a
RuleError. The deck reader locates it.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

__all__ = ["Problem", "frequency_problem", "growth", "load_problem", "unbalance_axes", "complex_amplitude"]


class Problem(NamedTuple):
    message: str
    options: tuple[str, ...] = ()
    hint: str = ""


def unbalance_axes(axis) -> tuple[np.ndarray, np.ndarray]:
    """(e1, e2), the unit directions of an unbalance force at phase 0 and a quarter turn later
    for a shaft along `axis` (3,) (any length > 0)."""
    a = np.asarray(axis, dtype=float)
    a = a / np.linalg.norm(a)
    e1 = np.zeros(3)
    e1[(int(np.argmax(np.abs(a))) + 1) % 3] = 1.0
    e1 = e1 - a * (a @ e1)
    e1 /= np.linalg.norm(e1)
    return e1, np.cross(a, e1)


def complex_amplitude(item) -> np.ndarray:
    """The complex amplitude (3,) of a harmonic load item at its reference: P e^{-i lag}, or for an
    unbalance m e (e1 - i e2) e^{-i lag} (to be multiplied by W^2, see `growth`)."""
    turn = np.exp(-1j * item.lag)
    if item.kind != "unbalance":
        return item.vector * turn
    e1, e2 = unbalance_axes(item.vector)
    return np.linalg.norm(item.vector) * (e1 - 1j * e2) * turn


def growth(item) -> tuple[float, float]:
    """(n, f0 Hz): the item's amplitude is multiplied by (f / f0)^n; (0, 1) for a plain load, (2,
    1 / 2 pi) for an unbalance (W^2 with W in rad/s)."""
    if item.kind == "unbalance":
        return 2.0, 1.0 / (2 * np.pi)
    return (float(item.like[0]), float(item.like[1])) if item.like is not None else (0.0, 1.0)


def load_problem(case) -> Problem | None:
    """The first load of `case` whose form its kind does not take, or whose lag, growth or
    unbalance axis is not a finite value."""
    for item in case.loads:
        special = item.kind == "unbalance" or item.lag != 0 or item.like is not None
        if case.kind != "harmonic" and special:
            return Problem(f"case {case.name}: a lag, a growth with frequency (like) and unbalance loads belong "
                           f"to harmonic cases, not to a {case.kind} case",
                           hint="remove them, or make the case harmonic")
        if not np.isfinite(item.lag):
            return Problem(f"case {case.name}: a load's lag must be a finite angle")
        if item.like is not None:
            n, f0 = item.like
            if not (np.isfinite(n) and abs(n) <= 4 and np.isfinite(f0) and f0 > 0):
                return Problem(f"case {case.name}: like f^n at f0: n is a number from -4 to 4 and f0 a positive "
                               "frequency", hint="e.g. like f^2 at 24.7 Hz")
            if item.kind == "unbalance":
                return Problem(f"case {case.name}: an unbalance already grows with the square of the frequency; "
                               "remove 'like'")
        if item.kind == "unbalance" and not np.linalg.norm(item.vector) > 0:
            return Problem(f"case {case.name}: an unbalance needs m e > 0 and a shaft axis",
                           hint="e.g. unbalance B1 = 0.12 kg*m about (1, 0, 0)")
    return None


def frequency_problem(case) -> Problem | None:
    """The first rule the frequencies of harmonic `case` break: a sweep (fmin, fmax, points,
    spacing) or the frequencies `at`, not both."""
    name = case.name
    one = "for a single frequency or a list write at = 24.7 Hz or at = (12 Hz, 24.7 Hz)"
    if case.at is not None:
        if case.fmin is not None or case.fmax is not None:
            return Problem(f"case {name}: give a sweep (from, to) or frequencies (at), not both", ("at",))
        at = case.at
        if not at.size or not np.all(np.isfinite(at) & (at > 0)):
            return Problem(f"case {name}: at: frequencies must be positive", ("at",))
        if len(np.unique(at)) < len(at):
            return Problem(f"case {name}: at: a frequency is given twice", ("at",), "give each once")
        if len(at) > 1_000_000:
            return Problem(f"case {name}: at: more than a million frequencies", ("at",))
        return None
    if case.fmin is None or case.fmax is None:
        return Problem(f"case {name}: a harmonic case needs from = ... and to = ... Hz, or at = ... Hz", (), one)
    for key, value in (("from", case.fmin), ("to", case.fmax)):
        if not value > 0:
            return Problem(f"case {name}: {key} must be a positive frequency", (key,))
    p = case.points
    if not (np.isfinite(p) and p == int(p) and 2 <= p <= 1_000_000):
        return Problem(f"case {name}: points is a whole number from 2 to a million", ("points",),
                       one if p == 1 else "")
    if case.spacing not in ("linear", "log"):
        return Problem(f"case {name}: spacing is linear or log", ("spacing",))
    if not case.fmax > case.fmin:
        return Problem(f"case {name}: 'to' must be above 'from'", (), one if case.fmax == case.fmin else "")
    return None
