"""20 lowest modes on large models, measured beside scipy's eigsh(K, 20, M, sigma=0) with its
defaults (and SuperLU with a symmetric ordering) on the same matrices in the same run.

PYTHONPATH=. python benchmarks/eigen.py frame|tower|bigframe
  frame    compact multi-bay 3D frame, 24 x 24 bays x 16 storeys (~60k free DOFs)
  tower    slender square lattice tower, 7700 panels (~185k free DOFs)
  bigframe compact frame 36 x 36 x 24 (~200k DOFs); the scipy default is not run (it needs
           more than 15 minutes here), SuperLU symmetric is the comparison
"""

from __future__ import annotations

import sys
import time

import numpy as np
import scipy.sparse.linalg as spla

sys.path.insert(0, __file__.rsplit("/", 1)[0])
from scaling import frame_deck, tower_deck  # noqa: E402

from fem.analysis.factor import pardiso_available  # noqa: E402
from fem.analysis.modes import solve_modes  # noqa: E402
from fem.assembly import assemble  # noqa: E402
from fem.deck.reader import read_text  # noqa: E402


def main(which: str) -> None:
    text = {"frame": lambda: frame_deck(24, 24, 16), "tower": lambda: tower_deck(7700),
            "bigframe": lambda: frame_deck(36, 36, 24)}[which]()
    model = read_text(text)
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    print(f"{which}: {model.n_members} members, {len(f)} free DOFs; PARDISO installed: {pardiso_available()}")
    t0 = time.perf_counter()
    ours = solve_modes(K, M, n_modes=20, sturm=False)
    t_ours = time.perf_counter() - t0
    print(f"  quaver ({ours.solver}): {t_ours:.1f} s, f1 = {ours.freq[0]:.6g} Hz, max residual {ours.residual.max():.1e}")
    t0 = time.perf_counter()
    slu = solve_modes(K, M, n_modes=20, sturm=False, factor_kind="superlu")
    t_slu = time.perf_counter() - t0
    print(f"  SuperLU symmetric: {t_slu:.1f} s  (ratio {t_slu / t_ours:.1f}x)")
    if which != "bigframe":
        t0 = time.perf_counter()
        lam, _ = spla.eigsh(K.tocsc(), 20, M.tocsc(), sigma=0)
        t_def = time.perf_counter() - t0
        f_def = np.sqrt(np.sort(lam)[0]) / (2 * np.pi)
        print(f"  scipy eigsh defaults: {t_def:.1f} s (ratio {t_def / t_ours:.1f}x), f1 = {f_def:.6g} Hz")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "frame")
