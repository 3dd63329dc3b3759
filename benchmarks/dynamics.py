"""Dynamics benchmarks, ratios measured in one run (run by hand, not a test):

1. 20 lowest modes of a generated 3D frame: our solve_modes vs scipy eigsh(K, 20, M, sigma=0)
   with its defaults, and vs the time of one factorisation of K - sigma M (the practical floor).
2. Modal history, 20 modes x n steps incl. recovery of every DOF, vs Newmark average
   acceleration on the full model (timed on a sample of steps after its factorisation, scaled).
3. Harmonic sweep of 1000 frequencies, modal vs direct complex solves (sampled, scaled).

python benchmarks/dynamics.py [members]   (default 6000 members, about 13k DOFs)
"""

from __future__ import annotations

import sys
import time

import numpy as np
import scipy.sparse.linalg as spla

sys.path.insert(0, __file__.rsplit("/", 1)[0])
from assembly import grid_model  # noqa: E402

from fem.analysis.modes import solve_modes  # noqa: E402
from fem.analysis.recurrence import integrate_modal  # noqa: E402
from fem.assembly import assemble  # noqa: E402


def timed(fn, *a, **k):
    t0 = time.perf_counter()
    out = fn(*a, **k)
    return out, time.perf_counter() - t0


def main(members: int) -> None:
    model = grid_model(members)
    model.restraint[model.coords[:, 2] == 0] = True
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    n = len(f)
    print(f"model: {model.n_members} members, {n} free DOFs")

    res, t_ours = timed(solve_modes, K, M, n_modes=20, sturm=False)
    sigma = -1e-6 * float(np.median(K.diagonal() / M.diagonal()))
    _, t_fact = timed(spla.splu, (K - sigma * M).tocsc(), permc_spec="MMD_AT_PLUS_A",
                      diag_pivot_thresh=0.0, options=dict(SymmetricMode=True))
    (_, _), t_default = timed(spla.eigsh, K, 20, M, sigma=0)
    print(f"20 modes: ours {t_ours:.2f} s, scipy eigsh default {t_default:.2f} s "
          f"(ratio {t_default / t_ours:.1f}x), one factorisation {t_fact:.2f} s "
          f"(ours / factorisation {t_ours / t_fact:.1f})")

    steps, dt = 100_000, 1e-3
    rng = np.random.default_rng(1)
    F = rng.normal(size=n)
    g = np.sin(2 * np.pi * 3 * np.arange(steps) * dt)
    phi, w = res.phi, res.omega

    def modal_history():
        q, _ = integrate_modal(w, np.full(20, 0.02), dt, g[:, None] * (phi.T @ F)[None, :])
        out = np.empty(n)
        for a in range(0, steps, 5000):          # recover every DOF, a block of steps at a time
            u = q[a:a + 5000] @ phi.T
            out = np.maximum(out, np.abs(u).max(axis=0))
        return out

    _, t_modal = timed(modal_history)
    rec = np.arange(0, n, max(1, n // 200))[:200]

    def modal_history_200():
        q, _ = integrate_modal(w, np.full(20, 0.02), dt, g[:, None] * (phi.T @ F)[None, :])
        return q @ phi[rec].T

    _, t_modal200 = timed(modal_history_200)
    # Newmark (gamma 1/2, beta 1/4) on the full model with Rayleigh damping fitted to 2 %
    a0, a1 = 0.02 * 2 * w[0] * w[19] / (w[0] + w[19]), 0.02 * 2 / (w[0] + w[19])
    C = a0 * M + a1 * K
    Keff = (K + (2 / dt) * C + (4 / dt**2) * M).tocsc()
    lu, t_nf = timed(spla.splu, Keff, permc_spec="MMD_AT_PLUS_A")
    sample = 200
    u = np.zeros(n)
    v = np.zeros(n)
    acc = np.zeros(n)
    t0 = time.perf_counter()
    for i in range(sample):
        rhs = F * g[i + 1] + M @ ((4 / dt**2) * u + (4 / dt) * v + acc) + C @ ((2 / dt) * u + v)
        un = lu.solve(rhs)
        vn = (2 / dt) * (un - u) - v
        acc = (4 / dt**2) * (un - u) - (4 / dt) * v - acc
        u, v = un, vn
    t_newmark = (time.perf_counter() - t0) * steps / sample + t_nf
    print(f"history 20 modes x {steps} steps: Newmark full model {t_newmark:.1f} s (from {sample} steps, "
          f"scaled); modal with 200 DOFs recovered at every step {t_modal200:.2f} s -> ratio "
          f"{t_newmark / t_modal200:.0f}x; modal with peaks of all {n} DOFs {t_modal:.2f} s -> ratio "
          f"{t_newmark / t_modal:.0f}x")

    freqs = np.linspace(0.5, 1.5 * res.freq[-1], 1000)

    def modal_sweep():
        W = 2 * np.pi * freqs
        H = (phi.T @ F)[None, :] / (w**2 - W[:, None] ** 2 + 2j * 0.02 * w * W[:, None])
        return np.abs(H @ phi.T)            # every DOF at every frequency

    _, t_mh = timed(modal_sweep)
    t0 = time.perf_counter()
    for fr in freqs[:5]:
        W = 2 * np.pi * fr
        spla.splu((K - W**2 * M + 1j * W * C).tocsc(), permc_spec="MMD_AT_PLUS_A").solve(F.astype(complex))
    t_direct = (time.perf_counter() - t0) * len(freqs) / 5
    print(f"harmonic 1000 frequencies: modal {t_mh:.3f} s, direct complex solves {t_direct:.1f} s "
          f"(from 5, scaled) -> ratio {t_direct / t_mh:.0f}x")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 6000)
