"""20 lowest modes on large models, measured beside scipy's eigsh(K, 20, M, sigma=0) with its
defaults and beside shift-invert with SuperLU in a symmetric ordering, on the same matrices in
the same run. Each solve runs in its own process so that its peak memory is its own.

PYTHONPATH=. python benchmarks/eigen.py frame|tower|bigframe|crossover|floor [--no-default]
  frame      compact multi-bay 3D frame, 24 x 24 bays x 16 storeys (60k free DOFs)
  tower      slender square lattice tower, 7700 panels (185k free DOFs)
  bigframe   compact frame 36 x 36 x 24 (200k DOFs); scipy's default is left out unless asked
             (it needs more than 15 minutes here); SuperLU symmetric is the comparison
  crossover  generated frames from slender to compact (half-bandwidth 30 to 1000): time of
             each factorisation family, to place factor.BAND_MAX and BAND_MAX_ALONE
  floor [P]  lattice tower of P panels (default 4200, about 100k DOFs): Quaver against one
             factorisation plus the triangular solves its Lanczos run performed, and the default
Quaver's time includes the ordering, the factorisation and the eigenvectors; the Sturm check
(one more factorisation) is timed separately.
"""

from __future__ import annotations

import multiprocessing as mp
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

sys.path.insert(0, str(Path(__file__).parent))
from scaling import frame_deck, tower_deck  # noqa: E402

from fem.analysis import factor as fa  # noqa: E402
from fem.analysis.modes import solve_modes  # noqa: E402
from fem.assembly import assemble  # noqa: E402
from fem.deck.reader import read_text  # noqa: E402

MODELS = {"frame": lambda: frame_deck(24, 24, 16), "tower": lambda: tower_deck(7700),
          "bigframe": lambda: frame_deck(36, 36, 24)}


def _status_mb(key: str) -> float:
    with open("/proc/self/status") as fh:
        return next(int(line.split()[1]) for line in fh if line.startswith(key + ":")) / 1024


def _reset_peak() -> float:
    """Reset the peak resident size (Linux: 5 > /proc/self/clear_refs); the current size, MB."""
    with open("/proc/self/clear_refs", "w") as fh:
        fh.write("5")
    return _status_mb("VmRSS")


def _peak_mb() -> float:
    return _status_mb("VmHWM")


def _solve(args) -> dict:
    """In a child process: load K, M and run one method; time, peak memory, first frequency."""
    folder, method = args
    K, M = sp.load_npz(Path(folder) / "K.npz").tocsr(), sp.load_npz(Path(folder) / "M.npz").tocsr()
    base = _reset_peak()
    out = {}
    t0 = time.perf_counter()
    if method == "quaver" or method.startswith("quaver:"):
        kind = method.partition(":")[2] or "auto"
        r = solve_modes(K, M, n_modes=20, sturm=False, factor_kind=kind)
        out["time"] = time.perf_counter() - t0
        out["peak_mb"] = _peak_mb() - base
        out.update(f1=r.freq[0], f20=r.freq[-1], residual=float(r.residual.max()), solver=r.solver)
        del r
        base = _reset_peak()
        t1 = time.perf_counter()
        r = solve_modes(K, M, n_modes=20, sturm=True, factor_kind=kind)
        out["sturm"] = time.perf_counter() - t1 - out["time"]
        out["sturm_ok"] = r.sturm_count == r.sturm_expected
        out["sturm_peak_mb"] = _peak_mb() - base
        return out
    elif method == "superlu-symmetric":      # shift-invert at 0 with SuperLU in a symmetric order
        lu = spla.splu(K.tocsc(), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                       options=dict(SymmetricMode=True))
        op = spla.LinearOperator(K.shape, matvec=lu.solve, dtype=float)
        lam, _ = spla.eigsh(K, 20, M, sigma=0, OPinv=op)
        out["time"] = time.perf_counter() - t0
        out["f1"] = np.sqrt(np.sort(lam)[0]) / (2 * np.pi)
        out["factor_mb"] = (lu.L.nnz + lu.U.nnz) * 12 / 2**20
    else:                                     # scipy's defaults
        lam, _ = spla.eigsh(K.tocsc(), 20, M.tocsc(), sigma=0)
        out["time"] = time.perf_counter() - t0
        out["f1"] = np.sqrt(np.sort(lam)[0]) / (2 * np.pi)
    out["peak_mb"] = _peak_mb() - base
    return out


def _factor_mb(K, M) -> tuple[str, float]:
    """The family Quaver picks and the size of its factor in MB (values only)."""
    f, _ = fa.shift_invert_factor(K, M)
    if f.kind == "band":
        return f.name, f.c.nbytes / 2**20
    if f.kind == "pardiso":
        return f.name, f.solver.iparm[17] * 8 / 2**20
    return f.name, (f.lu.L.nnz + f.lu.U.nnz) * 8 / 2**20


def run(folder: Path, methods) -> dict:
    ctx = mp.get_context("spawn")
    res = {}
    for m in methods:
        with ctx.Pool(1) as pool:
            res[m] = pool.apply(_solve, ((str(folder), m),))
    return res


def build(which: str, folder: Path):
    t0 = time.perf_counter()
    model = read_text(MODELS[which]())
    t1 = time.perf_counter()
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    sp.save_npz(folder / "K.npz", K)
    sp.save_npz(folder / "M.npz", M)
    print(f"{which}: {model.n_members} members, {len(f)} free DOFs, {K.nnz} stored entries of K; "
          f"parse {t1 - t0:.1f} s; PARDISO installed: {fa.pardiso_available()}", flush=True)
    return K, M


def main(which: str, default: bool) -> None:
    if which == "crossover":
        return crossover()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        K, M = build(which, folder)
        name, mb = _factor_mb(K, M)
        order = fa.ordering(abs(K) + abs(M))
        print(f"  half-bandwidth {order.bandwidth}, mean envelope width {order.mean_width:.0f}; "
              f"{name} factor {mb:.0f} MB", flush=True)
        methods = ["quaver", "superlu-symmetric"] + (["scipy-default"] if default else [])
        res = run(folder, methods)
    q = res["quaver"]
    print(f"  quaver ({q['solver']}): {q['time']:.1f} s, peak {q['peak_mb']:.0f} MB "
          f"({q['peak_mb'] / mb:.1f}x the factor); f1 = {q['f1']:.6g} Hz, f20 = {q['f20']:.6g} Hz, "
          f"max residual {q['residual']:.1e}; Sturm check {q['sturm']:.1f} s more "
          f"({'pass' if q['sturm_ok'] else 'FAIL'})")
    for m in methods[1:]:
        r = res[m]
        print(f"  {m}: {r['time']:.1f} s, peak {r['peak_mb']:.0f} MB, f1 = {r['f1']:.6g} Hz; "
              f"quaver is {r['time'] / q['time']:.1f}x faster")


def crossover() -> None:
    kinds = ["band", "superlu"] + (["pardiso"] if fa.pardiso_available() else [])
    print("| frame (bays x bays x storeys) | free DOFs | half-bandwidth | "
          + " | ".join(f"{k} s" for k in kinds) + " |")
    print("|---|---|---|" + "---|" * len(kinds))
    for nx, nz in ((1, 1500), (2, 800), (3, 500), (4, 350), (5, 250), (6, 180), (8, 100), (10, 60)):
        with tempfile.TemporaryDirectory() as tmp:
            folder = Path(tmp)
            model = read_text(frame_deck(nx, nx, nz))
            asm = assemble(model)
            f = asm.free
            K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
            sp.save_npz(folder / "K.npz", K)
            sp.save_npz(folder / "M.npz", M)
            order = fa.ordering(abs(K) + abs(M))
            res = run(folder, [f"quaver:{k}" for k in kinds])
        times = [res[f"quaver:{k}"]["time"] + res[f"quaver:{k}"]["sturm"] for k in kinds]
        print(f"| {nx}x{nx}x{nz} | {K.shape[0]} | {order.bandwidth} | "
              + " | ".join(f"{t:.2f}" for t in times) + " |", flush=True)


def floor(panels: int = 4200) -> None:
    """20 lowest modes of a lattice tower (4200 panels: about 100k DOFs) against the practical
    limit of shift-invert Lanczos: one factorisation of K - sigma M plus the triangular solves
    the solver actually performed (counted by wrapping the factor), each timed apart; and
    against scipy's eigsh(K, 20, M, sigma=0) with its defaults, all in this one process."""
    model = read_text(tower_deck(panels))
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    print(f"tower {panels} panels: {len(f)} free DOFs", flush=True)
    cache = {}
    t0 = time.perf_counter()
    res = solve_modes(K, M, n_modes=20, sturm=False, cache=cache)
    t_ours = time.perf_counter() - t0
    factor, sigma = cache["factor"]
    counts = {"solve": 0, "lower_solve": 0, "upper_solve": 0}

    def counted(name):
        plain = getattr(factor, name)

        def call(b):
            counts[name] += 1 if np.ndim(b) == 1 else np.shape(b)[1]
            return plain(b)
        return call

    for name in counts:
        if hasattr(factor, name):
            setattr(factor, name, counted(name))
    t0 = time.perf_counter()
    solve_modes(K, M, n_modes=20, sturm=False, cache=cache)       # Lanczos again, factor reused
    t_lanczos = time.perf_counter() - t0
    for name in counts:
        if name in factor.__dict__:
            del factor.__dict__[name]
    # one full solve = a forward and a back substitution (two halves of a split factor)
    full = counts["solve"] + 0.5 * (counts["lower_solve"] + counts["upper_solve"])
    t0 = time.perf_counter()
    fresh, _ = fa.shift_invert_factor(K, M, sigma)
    t_fact = time.perf_counter() - t0
    b = np.random.default_rng(0).standard_normal(K.shape[0])
    reps = 40
    t0 = time.perf_counter()
    for _ in range(reps):
        fresh.lower_solve(fresh.upper_solve(b)) if fresh.split else fresh.solve(b)
    t_solve = (time.perf_counter() - t0) / reps
    limit = t_fact + full * t_solve
    t0 = time.perf_counter()
    spla.eigsh(K.tocsc(), 20, M.tocsc(), sigma=0)
    t_default = time.perf_counter() - t0
    print(f"  quaver: {t_ours:.2f} s ({res.solver}); Lanczos alone {t_lanczos:.2f} s with {full:.0f} solves")
    print(f"  practical limit: factorisation {t_fact:.2f} s + {full:.0f} solves x {1e3 * t_solve:.2f} ms "
          f"= {limit:.2f} s; quaver / limit = {t_ours / limit:.2f}")
    print(f"  scipy eigsh(K, 20, M, sigma=0) defaults: {t_default:.2f} s; quaver is {t_default / t_ours:.1f}x faster")


if __name__ == "__main__":
    args = sys.argv[1:]
    target = next((a for a in args if not a.startswith("--")), "frame")
    if target == "floor":
        sys.exit(floor(*(int(a) for a in args[1:2])))
    main(target, default=("--no-default" not in args) and (target != "bigframe" or "--default" in args))
