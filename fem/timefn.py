"""Time functions that scale a load pattern or a ground acceleration: built-in shapes and tables.

Each function is sampled at the step times (the value just after each time) and integrated
exactly as piecewise linear between samples; its jumps and kinks between or on the samples
(`TimeFunction.knots`) are integrated exactly on top of that (recurrence.knot_kicks), so a
rectangular pulse ends when it should whatever the step.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SHAPES", "TimeFunction"]

# name -> number of parameters (durations in s, or a frequency in Hz for harmonic)
SHAPES = {"step": 0, "ramp": 1, "rect": 1, "halfsine": 1, "triangle": 1, "decay": 1,
          "harmonic": 1}


@dataclass(frozen=True)
class TimeFunction:
    """shape: one of SHAPES or 'table'; param: its duration (s) or frequency (Hz);
    table: (m, 2) times and factors for 'table' (linear between points, 0 outside).
    Every function is 0 before t = 0 and starts at t = 0 (a step or rect jumps there)."""

    shape: str
    param: float = 0.0
    table: np.ndarray | None = None

    def __call__(self, t) -> np.ndarray:
        """Values just after the times t (right limits): rect(a) is 1 up to a and 0 from a on."""
        t = np.asarray(t, dtype=float)
        s, a = self.shape, self.param
        on = t >= 0
        if s == "step":
            return on.astype(float)
        if s == "ramp":                       # rises linearly to 1 over a, then holds
            return np.clip(t / a, 0.0, 1.0)
        if s == "harmonic":                  # sin(2 pi f t)
            return np.where(on, np.sin(2 * np.pi * a * t), 0.0)
        if s == "table":
            tt, ff = self.table[:, 0], self.table[:, 1]
            return np.where((t >= tt[0]) & (t < tt[-1]), np.interp(t, tt, ff), 0.0)
        inside = on & (t < a)
        if s == "rect":
            return inside.astype(float)
        if s == "halfsine":
            return np.where(inside, np.sin(np.pi * t / a), 0.0)
        if s == "triangle":                  # symmetric: up to 1 at a/2, down to 0 at a
            return np.where(inside, 1 - np.abs(2 * t / a - 1), 0.0)
        if s == "decay":                     # jumps to 1, falls linearly to 0 at a
            return np.where(inside, 1 - t / a, 0.0)
        raise ValueError(f"unknown time function '{s}'")

    def rate(self, t) -> np.ndarray:
        """Slopes dg/dt just after the times t (right limits, as __call__); jumps add none."""
        t = np.asarray(t, dtype=float)
        s, a = self.shape, self.param
        on = t >= 0
        if s in ("step", "rect"):
            return np.zeros_like(t)
        if s == "harmonic":
            return np.where(on, 2 * np.pi * a * np.cos(2 * np.pi * a * t), 0.0)
        if s == "table":
            tt, ff = self.table[:, 0], self.table[:, 1]
            if len(tt) < 2:
                return np.zeros_like(t)
            k = np.clip(np.searchsorted(tt, t, side="right") - 1, 0, len(tt) - 2)
            slope = (ff[k + 1] - ff[k]) / (tt[k + 1] - tt[k])
            return np.where((t >= tt[0]) & (t < tt[-1]), slope, 0.0)
        inside = on & (t < a)
        if s == "ramp":
            return np.where(inside, 1 / a, 0.0)
        if s == "halfsine":
            return np.where(inside, np.pi / a * np.cos(np.pi * t / a), 0.0)
        if s == "triangle":
            return np.where(inside, np.where(t < a / 2, 2 / a, -2 / a), 0.0)
        if s == "decay":
            return np.where(inside, -1 / a, 0.0)
        raise ValueError(f"unknown time function '{s}'")

    def knots(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Times b > 0 where the function jumps or turns, with the jump J = g(b+) - g(b-) and the
        change of slope S = g'(b+) - g'(b-): (b, J, S), each (j,). The start at t = 0 is not
        listed (the first sample is the value just after it). A table lists its ends only: its
        inner rows are read at the steps (`spacing` tells when the step skips some)."""
        s, a = self.shape, self.param
        if s == "ramp":
            b, J, S = [a], [0.0], [-1 / a]
        elif s == "rect":
            b, J, S = [a], [-1.0], [0.0]
        elif s == "halfsine":
            b, J, S = [a], [0.0], [np.pi / a]
        elif s == "triangle":
            b, J, S = [a / 2, a], [0.0, 0.0], [-4 / a, 2 / a]
        elif s == "decay":
            b, J, S = [a], [0.0], [1 / a]
        elif s == "table":
            tt, ff = self.table[:, 0], self.table[:, 1]
            first, last = np.diff(ff[:2])[0] / np.diff(tt[:2])[0], np.diff(ff[-2:])[0] / np.diff(tt[-2:])[0]
            b, J, S = [tt[0], tt[-1]], [ff[0], -ff[-1]], [first, -last]
            if tt[0] <= 0:
                b, J, S = b[1:], J[1:], S[1:]
        else:                                 # step, harmonic: smooth after t = 0
            b, J, S = [], [], []
        return np.array(b, float), np.array(J, float), np.array(S, float)

    def spacing(self) -> float | None:
        """Smallest row spacing of a table (s), None for a built-in shape."""
        return float(np.diff(self.table[:, 0]).min()) if self.shape == "table" else None
