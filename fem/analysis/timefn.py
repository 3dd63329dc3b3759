"""Time functions that scale a load pattern or a ground acceleration: built-in shapes and tables.

Each function is sampled at the step times; the modal recurrence is exact for the
piecewise-linear interpolant of those samples.
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
    table: (m, 2) times and factors for 'table' (linear between points, 0 outside)."""

    shape: str
    param: float = 0.0
    table: np.ndarray | None = None

    def __call__(self, t) -> np.ndarray:
        t = np.asarray(t, dtype=float)
        s, a = self.shape, self.param
        if s == "step":
            return np.ones_like(t)
        if s == "ramp":                       # rises linearly to 1 over a, then holds
            return np.clip(t / a, 0.0, 1.0)
        if s == "rect":
            return (t <= a).astype(float)
        if s == "halfsine":
            return np.where(t <= a, np.sin(np.pi * t / a), 0.0)
        if s == "triangle":                  # symmetric: up to 1 at a/2, down to 0 at a
            return np.where(t <= a, 1 - np.abs(2 * t / a - 1), 0.0)
        if s == "decay":                     # jumps to 1, falls linearly to 0 at a
            return np.where(t <= a, 1 - t / a, 0.0)
        if s == "harmonic":                  # sin(2 pi f t)
            return np.sin(2 * np.pi * a * t)
        if s == "table":
            tt, ff = self.table[:, 0], self.table[:, 1]
            return np.interp(t, tt, ff, left=0.0, right=0.0)
        raise ValueError(f"unknown time function '{s}'")
