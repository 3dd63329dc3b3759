"""Modes followed across variants of a design by the modal assurance criterion (MAC).

MAC(a, b) = |a^T W b|^2 / ((a^T W a)(b^T W b)), with W = I (the plain criterion) or the mass
matrix (mass-weighted, in which two distinct modes of one model give exactly 0 by M-
orthogonality). It is 1 for the same shape up to scale and sign and 0 for orthogonal shapes
(Allemang 2003, "The modal assurance criterion - twenty years of use and abuse", Sound and
Vibration 37(8), 14-21; from memory).

A variant's modes are matched to a reference set by the assignment that maximises the sum
of MAC (the Hungarian method, `scipy.optimize.linear_sum_assignment` on 1 - MAC), so
"mode 3" keeps meaning one physical mode along a sweep when frequencies cross. Shapes of
models with different nodes are compared on the nodes they share, by name.

Flags, for a reference pair i < j (ascending reference frequency):
- crossing: both matched with MAC >= `high` and their order in frequency swapped in the variant
  (identities clear, order changed);
- veering: both matched below `high`, each with MAC >= `low` to the other's partner (the shapes
  have mixed), and the partners' frequencies within `close` (relative) of each other. In a
  veering the frequencies approach and turn away while the shapes exchange: the identities are
  not those of the reference on either side, which the flag says rather than hides.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

__all__ = ["ModeMatch", "SweepTracking", "common_dofs", "mac", "match_modes", "track_sweep"]

HIGH = 0.9    # MAC above which two shapes are the same mode (common practice, no source: 0.8-0.9 is usual)
LOW = 0.2     # MAC above which a shape holds a visible part of another (our choice)
CLOSE = 0.1   # relative frequency gap under which a pair of modes is close (our choice)


def mac(a, b, M=None) -> np.ndarray:
    """(ka, kb) modal assurance criterion of the columns of a (n, ka) and b (n, kb); with M
    (n, n, dense or sparse) the mass-weighted form. A zero column gives 0."""
    a = np.atleast_2d(np.asarray(a, dtype=float).T).T
    b = np.atleast_2d(np.asarray(b, dtype=float).T).T
    if a.shape[0] != b.shape[0]:
        raise ValueError(f"shapes on different DOFs: {a.shape[0]} and {b.shape[0]} rows; compare them on "
                         "common DOFs (common_dofs)")
    Wb = b if M is None else (M @ b if sp.issparse(M) else np.asarray(M) @ b)
    Wa = a if M is None else (M @ a if sp.issparse(M) else np.asarray(M) @ a)
    cross = a.T @ Wb
    na = np.einsum("ij,ij->j", a, Wa)
    nb = np.einsum("ij,ij->j", b, Wb)
    den = np.outer(na, nb)
    return np.divide(cross ** 2, den, out=np.zeros_like(cross), where=den > 0)


def common_dofs(names_a, names_b) -> tuple[np.ndarray, np.ndarray]:
    """DOF indices (6 per node, ux..rz) of the nodes two models share by name, in the order of
    `names_a`: rows of a (6 n_a) and of b (6 n_b) shape vector that describe the same motion."""
    where_b = {n: i for i, n in enumerate(names_b)}
    ia = np.array([i for i, n in enumerate(names_a) if n in where_b], dtype=int)
    ib = np.array([where_b[names_a[i]] for i in ia], dtype=int)
    d = np.arange(6)
    return (6 * ia[:, None] + d).ravel(), (6 * ib[:, None] + d).ravel()


@dataclass
class ModeMatch:
    """A variant's modes matched to reference modes.

    index (k_ref,) the variant's mode for each reference mode (-1: none left, when the variant
    has fewer modes); mac (k_ref,) MAC of each match (0 where none); matrix (k_ref, k_var) all
    MAC values; freq (k_ref,) the matched variant frequencies (nan where none, or no
    frequencies given); crossings, veerings: reference pairs (i, j), i < j, flagged as in the
    module docstring; weak (k_ref,) matches below `low` (the reference mode has no counterpart)."""

    index: np.ndarray
    mac: np.ndarray
    matrix: np.ndarray
    freq: np.ndarray
    crossings: list[tuple[int, int]] = field(default_factory=list)
    veerings: list[tuple[int, int]] = field(default_factory=list)
    weak: np.ndarray = field(default_factory=lambda: np.zeros(0, bool))


def match_modes(reference, shapes, M=None, freq=None, ref_freq=None, high: float = HIGH, low: float = LOW,
                close: float = CLOSE, _ref_order=None) -> ModeMatch:
    """Match the columns of `shapes` (n, k_var) to those of `reference` (n, k_ref), both on
    the same DOFs, by the assignment of largest total MAC (mass-weighted with M).

    `freq` (k_var,) are the variant's frequencies, used for the veering test and returned in
    reference order; with `ref_freq` (k_ref,) too, a crossing is a pair whose frequencies are in
    the opposite order in the two sets, else a pair whose mode numbers are (the reference
    columns taken as ascending).

    Examples
    --------
    >>> m = match_modes(np.eye(3)[:, :2], np.eye(3)[:, [1, 0, 2]])
    >>> m.index.tolist(), m.crossings
    ([1, 0], [(0, 1)])
    """
    from scipy.optimize import linear_sum_assignment  # scipy.optimize is slow to import: only when used

    matrix = mac(reference, shapes, M)
    k_ref, k_var = matrix.shape
    rows, cols = linear_sum_assignment(1.0 - matrix)
    index = np.full(k_ref, -1, dtype=int)
    index[rows] = cols
    got = np.where(index >= 0, matrix[np.arange(k_ref), np.maximum(index, 0)], 0.0)
    f = np.full(k_ref, np.nan)
    if freq is not None:
        freq = np.asarray(freq, dtype=float)
        f[index >= 0] = freq[index[index >= 0]]
    by_freq = freq is not None and ref_freq is not None
    order_ref = np.asarray(ref_freq, float) if by_freq else (np.arange(k_ref) if _ref_order is None else _ref_order)
    order_var = f if by_freq else index
    crossings, veerings = [], []
    for i in range(k_ref):
        for j in range(i + 1, k_ref):
            a, b = index[i], index[j]
            if a < 0 or b < 0:
                continue
            if got[i] >= high and got[j] >= high:
                if (order_ref[i] - order_ref[j]) * (order_var[i] - order_var[j]) < 0:
                    crossings.append((i, j))
            elif (got[i] < high and got[j] < high and matrix[i, b] >= low and matrix[j, a] >= low
                  and (freq is None or abs(f[i] - f[j]) <= close * 0.5 * (abs(f[i]) + abs(f[j])))):
                veerings.append((i, j))
    return ModeMatch(index, got, matrix, f, crossings, veerings, got < low)


@dataclass
class SweepTracking:
    """Modes followed along a sequence of variants.

    index (v, k) each variant's mode carrying identity t (the reference's mode t; -1: lost);
    freq (v, k) Hz in identity order (nan where lost or no frequencies); mac (v, k) MAC of each
    step's match (1 for the reference itself); crossings: (variant, i, j) identity pairs, both
    matched with MAC >= high, whose order (in frequency, else mode number) differs between
    variant - 1 and variant; veerings: (variant, i, j) pairs flagged by the match into that
    variant (against the previous or the base variant)."""

    index: np.ndarray
    freq: np.ndarray
    mac: np.ndarray
    crossings: list[tuple[int, int, int]] = field(default_factory=list)
    veerings: list[tuple[int, int, int]] = field(default_factory=list)


def track_sweep(shapes, freqs=None, M=None, against: str = "previous", base: int = 0, high: float = HIGH,
                low: float = LOW, close: float = CLOSE) -> SweepTracking:
    """Follow the modes of variant `base` through a sweep.

    shapes : sequence of (n, k_v) arrays, every variant's modes on the same n DOFs (see
        `common_dofs` for models that differ in nodes)
    freqs : sequence of (k_v,) arrays, Hz, optional
    M : None, one (n, n) matrix, or a sequence of them (each variant's, on the same DOFs): the
        mass-weighted MAC uses the reference's
    against : "previous" (each variant matched to the one before it, in identity order: follows
        shapes that change slowly along the sweep) or "base" (every variant matched to the base)

    The identities are the base variant's modes in its own order; a sweep runs forwards and
    backwards from the base."""
    if against not in ("previous", "base"):
        raise ValueError(f"against = '{against}': use 'previous' or 'base'")
    v = len(shapes)
    k = np.asarray(shapes[base]).shape[1]
    index = np.full((v, k), -1, dtype=int)
    freq = np.full((v, k), np.nan)
    macs = np.zeros((v, k))
    index[base] = np.arange(k)
    macs[base] = 1.0
    if freqs is not None:
        freq[base] = np.asarray(freqs[base], dtype=float)[:k]
    crossings, veerings = [], []

    def mass(i):
        return M[i] if isinstance(M, (list, tuple)) else M

    for step in (range(base + 1, v), range(base - 1, -1, -1)):
        prev = base
        for i in step:
            ref = prev if against == "previous" else base
            known = index[ref] >= 0
            R = np.zeros((np.asarray(shapes[ref]).shape[0], k))
            R[:, known] = np.asarray(shapes[ref])[:, index[ref, known]]
            m = match_modes(R, np.asarray(shapes[i]), mass(ref), None if freqs is None else freqs[i],
                            None if freqs is None else freq[ref], high, low, close, _ref_order=index[ref])
            ok = known & (m.index >= 0)
            index[i, ok] = m.index[ok]
            macs[i, ok] = m.mac[ok]
            freq[i] = np.where(ok, m.freq, np.nan)
            veerings += [(i, a, b) for a, b in m.veerings if known[a] and known[b]]
            prev = i
    # a crossing is where two identities, each clearly matched (MAC >= high) on both sides,
    # change order (in frequency, else in mode number) from one variant to the next
    order = freq if freqs is not None else index.astype(float)
    clear = (macs >= high) & (index >= 0)
    for i in range(1, v):
        with np.errstate(invalid="ignore"):
            flip = (order[i - 1][:, None] - order[i - 1]) * (order[i][:, None] - order[i]) < 0
        ok = clear[i - 1] & clear[i]
        crossings += [(i, a, b) for a, b in zip(*np.nonzero(np.triu(flip & np.outer(ok, ok), 1)))]
    return SweepTracking(index, freq, macs, [(int(i), int(a), int(b)) for i, a, b in crossings], veerings)
