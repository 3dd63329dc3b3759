"""Dynamics benchmarks, ratios measured in one run (run by hand, not a test):

1. 20 lowest modes of a generated 3D frame: our solve_modes vs scipy eigsh(K, 20, M, sigma=0)
   with its defaults, and vs the time of our factorisation alone (a lower bound; `eigen.py floor`
   adds the triangular solves the Lanczos run performed).
2. Modal history, 20 modes x 1e5 steps incl. recovery of every DOF, vs Newmark average
   acceleration on the full model at equal accuracy in the retained band (its step found by
   halving until its error on the retained modes matches the exact recurrence's; timed on a
   sample of steps after its factorisation, scaled).
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

from fem.analysis.factor import shift_invert_factor  # noqa: E402
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
    (fac, _), t_fact = timed(shift_invert_factor, K, M)
    (_, _), t_default = timed(spla.eigsh, K, 20, M, sigma=0)
    print(f"20 modes: ours {t_ours:.2f} s ({res.solver}), scipy eigsh default {t_default:.2f} s "
          f"(ratio {t_default / t_ours:.1f}x); our factorisation alone {t_fact:.2f} s "
          f"(ours / factorisation {t_ours / t_fact:.1f})")

    steps, dt = 100_000, 1e-3
    rng = np.random.default_rng(1)
    F = rng.normal(size=n)
    g = np.sin(2 * np.pi * 3 * np.arange(steps) * dt)
    phi, w = res.phi, res.omega
    # Rayleigh damping through modes 1 and 20 at 2 %, the same on the full model and per mode
    a0, a1 = 0.02 * 2 * w[0] * w[19] / (w[0] + w[19]), 0.02 * 2 / (w[0] + w[19])
    zeta = a0 / (2 * w) + a1 * w / 2
    rec = np.arange(0, n, max(1, n // 200))[:200]

    def modal_history():
        q, _ = integrate_modal(w, zeta, dt, g[:, None] * (phi.T @ F)[None, :])
        out = np.empty(n)
        for a in range(0, steps, 5000):          # recover every DOF, a block of steps at a time
            u = q[a:a + 5000] @ phi.T
            out = np.maximum(out, np.abs(u).max(axis=0))
        return out

    _, t_modal = timed(modal_history)

    def modal_history_200():
        q, _ = integrate_modal(w, zeta, dt, g[:, None] * (phi.T @ F)[None, :])
        return q @ phi[rec].T

    _, t_modal200 = timed(modal_history_200)

    # Equal accuracy in the retained band. Newmark on the full model with classical damping
    # is Newmark on each modal equation, so its error on the 20 retained modes is measured on
    # those equations: the step is halved until its error (against the exact recurrence at
    # dt/16, itself within 1/256 of the dt error) is no larger than the exact recurrence's at
    # dt. Calibrated over the first 10 s, which favours Newmark (its phase error grows with time).
    cal = 10_000
    p_modal = (phi.T @ F)[None, :]
    fine = 16
    t_fine = np.arange(cal * fine) * dt / fine
    q_ref = integrate_modal(w, zeta, dt / fine, np.sin(2 * np.pi * 3 * t_fine)[:, None] * p_modal)[0][::fine]
    u_ref = q_ref @ phi[rec].T
    scale = np.abs(u_ref).max()
    q_dt = integrate_modal(w, zeta, dt, g[:cal, None] * p_modal)[0]
    err_modal = np.abs(q_dt @ phi[rec].T - u_ref).max() / scale

    def newmark_modal_error(h: float) -> float:
        m = int(round(dt / h))
        t = np.arange(cal * m + 1) * h
        p = np.sin(2 * np.pi * 3 * t)[:, None] * p_modal
        c = 2 * zeta * w
        kh = w**2 + (2 / h) * c + 4 / h**2
        u = np.zeros_like(w)
        v = np.zeros_like(w)
        acc = p[0] - c * v - w**2 * u
        out = np.empty((cal, len(w)))
        for i in range(cal * m):
            if i % m == 0:
                out[i // m] = u
            un = (p[i + 1] + (4 / h**2) * u + (4 / h) * v + acc + c * ((2 / h) * u + v)) / kh
            vn = (2 / h) * (un - u) - v
            acc = (4 / h**2) * (un - u) - (4 / h) * v - acc
            u, v = un, vn
        return np.abs(out @ phi[rec].T - u_ref).max() / scale

    h, err_nm = dt, newmark_modal_error(dt)
    while err_nm > err_modal and h > dt / 256:
        h /= 2
        err_nm = newmark_modal_error(h)
    print(f"accuracy over the first 10 s in the retained band: exact recurrence at {dt * 1e3:g} ms "
          f"{err_modal:.1e}; Newmark needs {h * 1e3:g} ms for {err_nm:.1e} (at {dt * 1e3:g} ms: "
          f"{newmark_modal_error(dt):.1e})")

    # Newmark (gamma 1/2, beta 1/4) on the full model at that step, timed on a sample of steps
    C = a0 * M + a1 * K
    Keff = (K + (2 / h) * C + (4 / h**2) * M).tocsc()
    lu, t_nf = timed(spla.splu, Keff, permc_spec="MMD_AT_PLUS_A")
    sample = 200
    u = np.zeros(n)
    v = np.zeros(n)
    acc = np.zeros(n)
    t0 = time.perf_counter()
    for i in range(sample):
        rhs = F * np.sin(2 * np.pi * 3 * (i + 1) * h) + M @ ((4 / h**2) * u + (4 / h) * v + acc) \
            + C @ ((2 / h) * u + v)
        un = lu.solve(rhs)
        vn = (2 / h) * (un - u) - v
        acc = (4 / h**2) * (un - u) - (4 / h) * v - acc
        u, v = un, vn
    n_steps = int(round(steps * dt / h))
    t_newmark = (time.perf_counter() - t0) * n_steps / sample + t_nf
    print(f"history 20 modes x {steps} steps ({steps * dt:g} s): Newmark on the full model at equal "
          f"accuracy, {n_steps} steps, {t_newmark:.0f} s (from {sample} steps, scaled); modal with 200 DOFs "
          f"recovered at every step {t_modal200:.2f} s -> ratio {t_newmark / t_modal200:.0f}x; modal with "
          f"peaks of all {n} DOFs {t_modal:.2f} s -> ratio {t_newmark / t_modal:.0f}x")

    freqs = np.linspace(0.5, 1.5 * res.freq[-1], 1000)

    def modal_sweep():
        W = 2 * np.pi * freqs
        H = (phi.T @ F)[None, :] / (w**2 - W[:, None] ** 2 + 2j * zeta * w * W[:, None])
        return np.abs(H @ phi.T)            # every DOF at every frequency

    _, t_mh = timed(modal_sweep)
    t0 = time.perf_counter()
    for fr in freqs[:5]:
        W = 2 * np.pi * fr
        # the fastest direct route found here: complex symmetric, symmetric ordering, no pivoting
        spla.splu((K - W**2 * M + 1j * W * C).tocsc(), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                   options=dict(SymmetricMode=True)).solve(F.astype(complex))
    t_direct = (time.perf_counter() - t0) * len(freqs) / 5
    print(f"harmonic 1000 frequencies: modal {t_mh:.3f} s, direct complex solves {t_direct:.1f} s "
          f"(from 5, scaled) -> ratio {t_direct / t_mh:.0f}x")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 6000)
