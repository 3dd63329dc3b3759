"""The check of a harmonic case's vibration limits (`fem.vibration.VibrationLimit`).

For each limit, at each of its nodes and in each of X, Y, Z: the largest amplitude of the
quantity over the case's frequencies inside the limit's range, and the frequency of it. The
motion is absolute (under a ground acceleration the ground's own is added), its velocity
amplitude W |u| and acceleration amplitude W^2 |u| for a harmonic u of amplitude |u| at W = 2 pi f
(Chopra, Dynamics of Structures, 5th ed., Sec. 3.2); the RMS of a harmonic is amplitude / sqrt 2.
The limit passes when the largest amplitude is at most the amplitude allowed (its value, or
sqrt 2 times it when the value is RMS); a failed limit is a failed design check.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..vibration import QUANTITIES

__all__ = ["COLUMNS", "LimitCheck", "check_limits", "limit_frequencies"]

COLUMNS = ("case", "limit", "quantity", "node", "direction", "amplitude", "rms", "frequency_Hz", "allowed",
           "allowed_as", "unit", "over_low_Hz", "over_high_Hz", "source", "ratio", "verdict")
_POWER = {"displacement": 0, "velocity": 1, "acceleration": 2}


@dataclass(frozen=True)
class LimitCheck:
    """One limit checked. number: the limit's number in its case (from 1); peak (p, 3) the
    largest amplitude (SI) at each of the limit's p nodes in X, Y, Z over the frequencies
    checked, peak_freq (p, 3) where; checked: how many of the case's frequencies lie in the
    range; worst (node index, direction 0-2); ratio = largest amplitude / amplitude allowed."""

    case: str
    number: int
    limit: object
    peak: np.ndarray
    peak_freq: np.ndarray
    checked: int

    @property
    def worst(self) -> tuple[int, int]:
        k, d = np.unravel_index(int(np.argmax(self.peak)), self.peak.shape)
        return self.limit.nodes[k], int(d)

    @property
    def largest(self) -> float:
        return float(self.peak.max())

    @property
    def ratio(self) -> float:
        return self.largest / self.limit.amplitude

    @property
    def ok(self) -> bool:
        return bool(self.largest <= self.limit.amplitude)

    def line(self, node_names) -> str:
        """One line for the console: the limit, the largest value (as the limit is given) and where."""
        lim = self.limit
        node, d = self.worst
        k = lim.nodes.index(node)
        got = lim.shown(self.largest / np.sqrt(2) if lim.rms else self.largest)
        return (f"limit {self.number}: {lim.describe()}: largest {got:.4g} {lim.unit}{' RMS' if lim.rms else ''} "
                f"at {node_names[node]} {'XYZ'[d]}, {self.peak_freq[k, d]:.4g} Hz ({100 * self.ratio:.0f} % of "
                f"the limit) {'pass' if self.ok else 'FAIL'}")

    def rows(self, node_names) -> list[dict]:
        """One row per node and direction, keyed by COLUMNS (values in the unit shown)."""
        lim = self.limit
        lo, hi = lim.over if lim.over is not None else (None, None)
        out = []
        for k, n in enumerate(lim.nodes):
            for d in range(3):
                a = float(self.peak[k, d])
                out.append(dict(zip(COLUMNS, (
                    self.case, self.number, lim.quantity, node_names[n], "XYZ"[d], lim.shown(a),
                    lim.shown(a / np.sqrt(2)), float(self.peak_freq[k, d]), lim.shown(lim.value),
                    "rms" if lim.rms else "amplitude", lim.unit, lo, hi, lim.source,
                    a / lim.amplitude, "pass" if a <= lim.amplitude else "FAIL"))))
        return out

    def as_json(self, node_names) -> dict:
        """The check for results.json (SI values; the limit as given)."""
        lim = self.limit
        node, d = self.worst
        k = lim.nodes.index(node)
        return {"limit": self.number, "quantity": lim.quantity, "nodes": [node_names[n] for n in lim.nodes],
                "value": lim.value, "unit_SI": QUANTITIES[lim.quantity][0],
                "value_is_rms": lim.rms, "allowed_amplitude": lim.amplitude,
                "over_Hz": None if lim.over is None else list(lim.over), "source": lim.source,
                "frequencies_checked": self.checked, "largest_amplitude": self.largest,
                "largest_rms": float(self.largest / np.sqrt(2)), "node": node_names[node], "direction": "XYZ"[d],
                "frequency_Hz": float(self.peak_freq[k, d]), "ratio": self.ratio, "pass": self.ok,
                "text": lim.describe()}


def limit_frequencies(limits) -> tuple[float, ...]:
    """The ends of the limits' ranges, Hz: a sweep is refined there so that each range's ends
    (a fixed speed's one frequency) are among its frequencies."""
    return tuple(sorted({f for lim in limits if lim.over is not None for f in lim.over}))


def check_limits(case_name: str, limits, freq, translations, n_nodes: int) -> tuple[LimitCheck, ...]:
    """Check `limits` on the response at the frequencies `freq` (m,) Hz; `translations(nodes)`
    gives the complex absolute displacement amplitudes (m, len(nodes), 3), m, of those nodes'
    translations at every frequency; `n_nodes` the model's number of nodes."""
    out = []
    freq = np.asarray(freq, float)
    for i, lim in enumerate(limits):
        if max(lim.nodes) >= n_nodes:
            raise ValueError(f"case {case_name}: limit {lim.describe()}: node number {max(lim.nodes)} is not a "
                             f"node of the model (it has {n_nodes}, numbered from 0)")
        inside = np.ones(len(freq), bool) if lim.over is None else (freq >= lim.over[0]) & (freq <= lim.over[1])
        if not inside.any():
            raise ValueError(f"case {case_name}: limit {lim.describe()}: none of the case's frequencies lies in "
                             "its range")
        nodes = np.array(lim.nodes)
        f = freq[inside]
        u = translations(nodes)[inside]                             # (q, p, 3)
        amp = np.abs(u) * (2 * np.pi * f[:, None, None]) ** _POWER[lim.quantity]
        j = amp.argmax(axis=0)                                      # (p, 3)
        out.append(LimitCheck(case_name, i + 1, lim, np.take_along_axis(amp, j[None], 0)[0], f[j], int(inside.sum())))
    return tuple(out)
