"""Modes followed through a study's variants by the modal assurance criterion.

Each variant's modes are matched (`fem.analysis.tracking.match_modes`, the assignment of largest
total MAC) to the tracked modes of the variant it is tracked from (`Variant.parent`: its
neighbour in the sweep, or the base), in identity order, so that identity t is the base
variant's mode t all through the study even where frequencies cross. Shapes are compared on
the translations of the nodes both variants kept, by name (plain MAC: rotations would mix units).

A variant whose parent was refused is tracked from the nearest ancestor that solved; refused
variants carry no frequencies.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..analysis.tracking import LOW, match_modes

__all__ = ["Tracked", "track"]


@dataclass
class Tracked:
    """freq (v, k) Hz of identity t in variant i (nan: refused or lost); mac (v, k) of each match
    (1 for the base); mode (v, k) the variant's own mode number (from 1; 0: lost); crossings and
    veerings: (variant, t1, t2) identities (from 1) flagged in the match into that variant;
    weak: (variant, t) identities matched below LOW (no counterpart)."""

    case: str
    freq: np.ndarray
    mac: np.ndarray
    mode: np.ndarray
    crossings: list = field(default_factory=list)
    veerings: list = field(default_factory=list)
    weak: list = field(default_factory=list)

    def flags(self, i: int) -> str:
        """The flags of variant i in words, e.g. 'crossing 2-3; veering 4-5'."""
        words = [f"crossing {a}-{b}" for v, a, b in self.crossings if v == i]
        words += [f"veering {a}-{b}" for v, a, b in self.veerings if v == i]
        words += [f"mode {t} lost" for v, t in self.weak if v == i]
        return "; ".join(words)


REPEATED = 1e-6   # relative gap under which two frequencies are one repeated frequency (our choice: well
                  # above the solver's ~1e-12 and below any design change worth tracking)


def _apart(f1: float, f2: float) -> bool:
    """Two frequencies distinct enough to have an order: the partners of a repeated frequency
    (a symmetric mast's two sways) come out in either order, which is no crossing."""
    return abs(f1 - f2) > REPEATED * max(abs(f1), abs(f2))


def _aligned(ref_nodes, ref_shapes, nodes, shapes):
    """(rows of ref, rows of the variant) on the translations of the nodes both kept."""
    if list(ref_nodes) == list(nodes):
        return ref_shapes.reshape(-1, ref_shapes.shape[-1]), shapes.reshape(-1, shapes.shape[-1])
    where = {n: i for i, n in enumerate(nodes)}
    a = [i for i, n in enumerate(ref_nodes) if n in where]
    b = [where[ref_nodes[i]] for i in a]
    return (ref_shapes[a].reshape(-1, ref_shapes.shape[-1]), shapes[b].reshape(-1, shapes.shape[-1]))


def track(results: list[dict], variants, case: str, k: int | None = None) -> Tracked | None:
    """Follow the first k modes (default up to 6) of modes case `case` of the first variant that
    solved through every variant; None when no variant solved it."""
    have = [r["status"] == "ok" and case in r.get("modes", {}) for r in results]
    if not any(have):
        return None
    base = have.index(True)
    b = results[base]["modes"][case]
    k = min(k or 6, len(b["freq"]))
    v = len(results)
    freq, macs = np.full((v, k), np.nan), np.zeros((v, k))
    mode = np.zeros((v, k), dtype=int)
    out = Tracked(case, freq, macs, mode)
    kept: dict[int, tuple] = {base: (b["nodes"], b["shapes"][:, :, :k], b["freq"][:k].copy())}
    freq[base], macs[base], mode[base] = b["freq"][:k], 1.0, np.arange(1, k + 1)
    for var in variants:
        i = var.index
        if i == base or not have[i]:
            continue
        p = var.parent
        while p is not None and p not in kept:
            p = variants[p].parent
        p = base if p is None else p
        ref_nodes, ref_shapes, ref_freq = kept[p]
        known = mode[p] > 0
        me = results[i]["modes"][case]
        R, S = _aligned(ref_nodes, ref_shapes, me["nodes"], me["shapes"])
        m = match_modes(R, S, freq=me["freq"], ref_freq=np.where(known, ref_freq, np.nan))
        ok = known & (m.index >= 0)
        mode[i] = np.where(ok, m.index + 1, 0)
        macs[i] = np.where(ok, m.mac, 0.0)
        freq[i] = np.where(ok, m.freq, np.nan)
        out.crossings += [(i, a + 1, c + 1) for a, c in m.crossings if known[a] and known[c]
                          and _apart(ref_freq[a], ref_freq[c]) and _apart(m.freq[a], m.freq[c])]
        out.veerings += [(i, a + 1, c + 1) for a, c in m.veerings if known[a] and known[c]]
        out.weak += [(i, t + 1) for t in np.flatnonzero(ok & (m.mac < LOW))]
        shapes = np.zeros(me["shapes"].shape[:2] + (k,))
        shapes[:, :, ok] = me["shapes"][:, :, m.index[ok]]
        kept[i] = (me["nodes"], shapes, freq[i].copy())
        mode[i][~ok] = 0
    return out

