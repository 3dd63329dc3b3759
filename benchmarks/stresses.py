"""Member stresses over a time series: the vectorised peaks (fem.analysis.stress.series_stresses)
against a per-member, per-step Python loop doing the same sums, on the demo rack's 60 members.

Run by hand: python benchmarks/stresses.py. Reports member-steps per second, the ratio against
the loop measured in the same run (the loop is timed on 200 steps and scaled) and the load
average beside them (shared machines are noisy: compare ratios, not seconds). Set
OPENBLAS_NUM_THREADS=1 on a busy machine: the series' matrix products are small.
"""

from __future__ import annotations

import os
import time

import numpy as np

import fem
from fem.analysis.stress import section_table, series_stresses

STEPS = 6000


def _loop(model, forces, tab):
    """The largest equivalent stress of each member over the steps, one member and step at a
    time: the end actions, the normal stress at each stress point (a round section's extremes
    N/A +/- |M| r/I), shear and torsion, sqrt(sigma^2 + 3 tau^2)."""
    best = np.zeros(model.n_members)
    for t in range(len(forces)):
        for j in range(model.n_members):
            f = forces[t, j]
            big, tau = 0.0, 0.0
            for sgn, a in ((-1.0, f[:6]), (1.0, f[6:])):
                N, Vy, Vz, T, My, Mz = sgn * a
                if tab.radius[j] > 0:
                    b = (My * My + Mz * Mz) ** 0.5 * tab.radius[j] / tab.Iy[j]
                    sig = max(abs(N / tab.A[j] + b), abs(N / tab.A[j] - b))
                else:
                    sig = max(abs(N / tab.A[j] + My * z / tab.Iy[j] - Mz * y / tab.Iz[j])
                              for y, z in zip(tab.py[j], tab.pz[j]))
                big = max(big, sig)
                tau = max(tau, tab.ky[j] * abs(Vy) + tab.kz[j] * abs(Vz) + tab.kt[j] * abs(T))
            best[j] = max(best[j], (big * big + 3 * tau * tau) ** 0.5)
    return best


def main() -> None:
    model = fem.read_deck(os.path.join(os.path.dirname(__file__), "..", "decks", "rack.deck"))
    e = model.n_members
    rng = np.random.default_rng(7)
    q, cols = rng.standard_normal((STEPS, 40)), rng.standard_normal((40, e * 12)) * 1e4
    t = np.arange(STEPS) * 0.002
    forces = (q @ cols).reshape(STEPS, e, 12)
    # end j from end i by the member's equilibrium (no load along it), as solved end forces are
    L = model.lengths
    fi = forces[..., :6]
    forces[..., 6:9], forces[..., 9] = -fi[..., :3], -fi[..., 3]
    forces[..., 10], forces[..., 11] = -fi[..., 4] - L * fi[..., 2], -fi[..., 5] + L * fi[..., 1]
    start = time.perf_counter()
    s = series_stresses(model, lambda rows: forces[rows], t)
    fast = time.perf_counter() - start
    tab = section_table(model)
    few = 200
    start = time.perf_counter()
    looped = _loop(model, forces[:few], tab)
    slow = (time.perf_counter() - start) * STEPS / few
    check = series_stresses(model, lambda rows: forces[:few][rows], t[:few]).mises
    assert np.allclose(check, looped, rtol=1e-12)      # the same numbers both ways
    load = os.getloadavg()[0]
    print(f"series_stresses: {STEPS} steps x {e} members in {fast:.3f} s "
          f"({STEPS * e / fast:.3g} member-steps/s); loop (scaled from {few} steps) {slow:.1f} s; "
          f"ratio {slow / fast:.0f}x; load average {load:.2f}; governing {model.member_names[s.governing()]}")


if __name__ == "__main__":
    main()
