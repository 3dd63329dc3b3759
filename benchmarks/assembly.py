"""Assembly speed: vectorised K and M for 1e4 and 1e5 frame members vs a per-member loop.

Run by hand: python benchmarks/assembly.py. Reports elements per second and the ratio against
a naive Python loop measured in the same run (the loop is timed on 2000 members and scaled).
"""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp

from fem import elements as el
from fem.assembly import assemble
from fem.geometry import local_axes
from fem.model import Model


def grid_model(n_members: int) -> Model:
    """A 3D grid of frame members (a generated multi-bay frame), about n_members members."""
    side = max(2, int(round((n_members / 3) ** (1 / 3))) + 1)
    g = np.arange(side)
    X, Y, Z = np.meshgrid(g, g, g, indexing="ij")
    coords = np.c_[X.ravel(), Y.ravel(), Z.ravel()] * 3.0
    idx = np.arange(side ** 3).reshape(side, side, side)
    conn = np.r_[np.c_[idx[:-1].ravel(), idx[1:].ravel()],
                 np.c_[idx[:, :-1].ravel(), idx[:, 1:].ravel()],
                 np.c_[idx[:, :, :-1].ravel(), idx[:, :, 1:].ravel()]][:n_members]
    e, n = len(conn), len(coords)
    one = np.ones(e)
    return Model(title="grid", node_names=[f"N{i}" for i in range(n)], coords=coords,
                 member_names=[f"M{i}" for i in range(e)], conn=conn, truss=np.zeros(e, bool),
                 E=210e9 * one, G=81e9 * one, rho=7850 * one, A=5e-3 * one, Iy=8e-5 * one,
                 Iz=6e-6 * one, J=2e-7 * one, Avy=0 * one, Avz=0 * one, roll=0 * one,
                 up=np.full((e, 3), np.nan), carried_mass=0 * one, releases=np.zeros((e, 12), bool),
                 restraint=np.zeros((n, 6), bool), springs=np.zeros((n, 6)),
                 point_mass=np.zeros((n, 6)))


def loop_assemble(model: Model, count: int) -> float:
    """Per-member Python loop (element matrices one at a time into COO lists); seconds."""
    t0 = time.perf_counter()
    rows, cols, kv, mv = [], [], [], []
    for k in range(count):
        i, j = model.conn[k]
        R, L = local_axes(model.coords[i][None], model.coords[j][None])
        ke = el.to_global(el.frame_stiffness(L, model.E[k], model.G[k], model.A[k], model.Iy[k],
                                             model.Iz[k], model.J[k]), R)[0]
        me = el.to_global(el.frame_mass(L, model.rho[k], model.A[k], model.Iy[k], model.Iz[k],
                                        model.J[k]), R)[0]
        d = np.r_[6 * i + np.arange(6), 6 * j + np.arange(6)]
        for a in range(12):
            for b in range(12):
                rows.append(d[a])
                cols.append(d[b])
                kv.append(ke[a, b])
                mv.append(me[a, b])
    n = 6 * model.n_nodes
    sp.coo_matrix((kv, (rows, cols)), shape=(n, n)).tocsr()
    sp.coo_matrix((mv, (rows, cols)), shape=(n, n)).tocsr()
    return time.perf_counter() - t0


def main() -> None:
    print(f"{'members':>9} {'first s':>8} {'best of 3 s':>12} {'members/s':>11} {'loop s (scaled)':>16} {'ratio':>6}")
    for n in (10_000, 100_000):
        model = grid_model(n)
        times = []
        for _ in range(3):
            t0 = time.perf_counter()
            assemble(model)
            times.append(time.perf_counter() - t0)
        tv = min(times)
        sample = 2000
        tl = loop_assemble(model, sample) * model.n_members / sample
        print(f"{model.n_members:>9} {times[0]:>8.3f} {tv:>12.3f} {model.n_members / tv:>11.3g} "
              f"{tl:>16.2f} {tl / tv:>6.1f}")


if __name__ == "__main__":
    main()
