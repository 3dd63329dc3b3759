"""How each stage scales with model size, on generated 3D frames (compact multi-bay grids) and
slender lattice towers. Run by hand; ratios within one run are what count.

PYTHONPATH=. python benchmarks/scaling.py [max_dofs]     (default 60000)
Stages: parse (deck text of the model), assemble, factorise K, 20 modes, history (20 modes x
10^4 steps, 200 DOFs), harmonic (1000 frequencies, every DOF), write VTU of 20 modes.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from fem.analysis.modes import solve_modes
from fem.analysis.recurrence import integrate_modal
from fem.analysis.static import factorise
from fem.assembly import assemble
from fem.deck.reader import read_text


def frame_deck(nx: int, ny: int, nz: int) -> str:
    """Deck text of a compact multi-bay 3D frame nx x ny bays, nz storeys (our generator)."""
    return f"""
material S {{ E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section C = ishape(d = 300 mm, bf = 300 mm, tf = 19 mm, tw = 11 mm)
section B = ishape(d = 400 mm, bf = 180 mm, tf = 13.5 mm, tw = 8.6 mm)
for i in 0..{nx} {{ for j in 0..{ny} {{ for k in 0..{nz} {{ node N[i,j,k] = (i*6 m, j*6 m, k*4 m) }} }} }}
for i in 0..{nx} {{ for j in 0..{ny} {{ for k in 0..{nz - 1} {{ member C[i,j,k] : N[i,j,k] -> N[i,j,k+1] beam C S }} }} }}
for i in 0..{nx - 1} {{ for j in 0..{ny} {{ for k in 1..{nz} {{ member X[i,j,k] : N[i,j,k] -> N[i+1,j,k] beam B S }} }} }}
for i in 0..{nx} {{ for j in 0..{ny - 1} {{ for k in 1..{nz} {{ member Y[i,j,k] : N[i,j,k] -> N[i,j+1,k] beam B S }} }} }}
support N*_*_0 fixed
"""


def tower_deck(panels: int) -> str:
    """Deck text of a square lattice tower with `panels` 2 m panels (our generator)."""
    return f"""
material S {{ E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section L = pipe(od = 114.3 mm, wall = 6 mm)
section D = angle(b = 60 mm, h = 60 mm, t = 6 mm)
for k in 0..{panels} {{ for a in 0..3 {{ node P[k,a] = (1.5 m*cos(a*90 deg + 45 deg), 1.5 m*sin(a*90 deg + 45 deg), k*2 m) }} }}
for k in 0..{panels - 1} {{ for a in 0..3 {{ member L[k,a] : P[k,a] -> P[k+1,a] beam L S }} }}
for k in 0..{panels - 1} {{ member D[k,0] : P[k,0] -> P[k+1,1] beam D S
  member D[k,1] : P[k,1] -> P[k+1,2] beam D S
  member D[k,2] : P[k,2] -> P[k+1,3] beam D S
  member D[k,3] : P[k,3] -> P[k+1,0] beam D S }}
for k in 1..{panels} {{ member H[k,0] : P[k,0] -> P[k,1] beam D S
  member H[k,1] : P[k,1] -> P[k,2] beam D S
  member H[k,2] : P[k,2] -> P[k,3] beam D S
  member H[k,3] : P[k,3] -> P[k,0] beam D S }}
support P0_* fixed
"""


def timed(fn, *a, **k):
    t0 = time.perf_counter()
    out = fn(*a, **k)
    return out, time.perf_counter() - t0


def measure(label: str, text: str) -> None:
    model, t_parse = timed(read_text, text)
    asm, t_asm = timed(assemble, model)
    _, t_fact = timed(factorise, model, asm)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    modes, t_modes = timed(solve_modes, K, M, n_modes=20, sturm=False)
    phi, w = modes.phi, modes.omega
    steps = 10_000
    p = np.sin(np.arange(steps) * 1e-3 * 20)[:, None] * np.ones(20)
    rec = phi[:: max(1, len(f) // 200)][:200]
    _, t_hist = timed(lambda: integrate_modal(w, np.full(20, 0.02), 1e-3, p)[0] @ rec.T)
    W = 2 * np.pi * np.linspace(0.1, 2 * modes.freq[-1], 1000)
    _, t_harm = timed(lambda: np.abs((1 / (w**2 - W[:, None] ** 2 + 0.04j * w * W[:, None])) @ phi.T))
    from fem.analysis.modal_case import ModesCaseResult
    from fem.output.vtk import write_mode_files
    shapes = np.zeros((6 * model.n_nodes, 20))
    shapes[f] = phi
    case = ModesCaseResult("B", modes, None, shapes.reshape(model.n_nodes, 6, -1), np.zeros(3))
    with tempfile.TemporaryDirectory() as tmp:
        _, t_vtu = timed(write_mode_files, Path(tmp), model, case)
    print(f"| {label} | {len(f)} | {t_parse:.2f} | {t_asm:.2f} | {t_fact:.2f} | {t_modes:.2f} | "
          f"{t_hist:.2f} | {t_harm:.2f} | {t_vtu:.2f} |", flush=True)


def main(max_dofs: int) -> None:
    print("| model | free DOFs | parse s | assemble s | factorise s | 20 modes s | history s | harmonic s | VTU s |")
    print("|---|---|---|---|---|---|---|---|---|")
    for nx, ny, nz in ((3, 3, 3), (6, 6, 5), (10, 10, 8), (14, 14, 10), (20, 20, 12)):
        dofs = 6 * (nx + 1) * (ny + 1) * nz
        if dofs > max_dofs:
            break
        measure(f"frame {nx}x{ny}x{nz}", frame_deck(nx, ny, nz))
    for panels in (50, 400, 2000, 7500):
        if 24 * panels > max_dofs:
            break
        measure(f"tower {panels} panels", tower_deck(panels))


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 60_000)
