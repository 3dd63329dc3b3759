"""Studies: 200 variants of the mast demo (its panel height swept, the MODES case, six modes
followed) on a local Dask cluster of 2 worker processes against the same study run serially
through the API, and the serial API against `quaver run` started once per variant.

PYTHONPATH=. python benchmarks/study.py [variants] [subprocesses]
(targets: cluster >= 1.7x the serial API; serial API >= 5x faster per variant than `quaver run`)

Dask's workers run BLAS on one thread (set before they start); the serial study and the `quaver
run` processes are started here with the same setting (OPENBLAS_NUM_THREADS=1 and the like), so
the ratios compare the engines, not BLAS threading (with two BLAS threads on a loaded 2-core
machine a mast solve was measured 15-20x slower). `quaver run` is started `subprocesses` times
(default 15, values spread over the same range), each writing its results folder without
pictures, as a user's script would, and its per-variant time scaled. The per-variant overhead of
the cluster (scheduling, transfer, the cluster's start) is its wall time times its workers less
the time the workers spent in variants, per variant; the load average is printed before and
after, since these machines are shared.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ONE_THREAD = {k: "1" for k in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")}


def _study(n: int):
    from fem.study import read_study_text

    text = f'study "mast sweep"\ndeck "mast.deck"\ncases MODES\nvary h from 2.6 m to 3.4 m points {n}\n' \
           'track 6 modes of MODES\n'
    return read_study_text(text, "bench.study", ROOT / "decks")


def _serial_child(n: int) -> None:
    """In a process started with one BLAS thread: the serial study; prints its numbers as JSON."""
    from fem.study import run_study

    t0 = time.perf_counter()
    r = run_study(_study(n), serial=True, progress=False)
    wall = time.perf_counter() - t0
    print(json.dumps({"wall": wall, "read": sum(x.get("read_s", 0) for x in r.results) / n,
                      "solve": sum(x.get("solve_s", 0) for x in r.results) / n,
                      "freq": [x["modes"]["MODES"]["freq"].tolist() for x in r.results]}))


def main(n: int = 200, runs: int = 15) -> None:
    import numpy as np

    from fem.study import run_study

    print(f"load average before: {os.getloadavg()}")
    env = dict(os.environ, PYTHONPATH=str(ROOT), **ONE_THREAD)
    out = subprocess.run([sys.executable, __file__, "--serial-child", str(n)], env=env, check=True,
                         capture_output=True, text=True).stdout
    serial = json.loads(out.strip().splitlines()[-1])
    t_serial = serial["wall"]

    t0 = time.perf_counter()
    local = run_study(_study(n), workers=2, progress=False)
    t_local = time.perf_counter() - t0
    worst = max(float(np.abs(np.array(a) / b["modes"]["MODES"]["freq"] - 1).max())
                for a, b in zip(serial["freq"], local.results))
    busy = sum(r["seconds"] for r in local.results)

    hs = [2.6 + 0.8 * i / max(runs - 1, 1) for i in range(runs)]
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        for i, h in enumerate(hs):
            subprocess.run([sys.executable, "-m", "fem", "run", "decks/mast.deck", "--case", "MODES", "--no-render",
                            "--set", f"h={h!r} m", "--out", f"{tmp}/r{i}"], cwd=ROOT, env=env, check=True,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        t_runs = (time.perf_counter() - t0) / runs

    print(f"{n} variants of the mast (MODES), serial API: {t_serial:.2f} s ({t_serial / n * 1e3:.1f} ms a variant: "
          f"read {serial['read'] * 1e3:.1f} ms, solve {serial['solve'] * 1e3:.1f} ms)")
    print(f"local cluster, 2 workers: {t_local:.2f} s; speed-up over serial {t_serial / t_local:.2f}x (target 1.7x)")
    print(f"  workers busy {busy:.2f} s; overhead (scheduling, transfer, cluster start) "
          f"{(2 * t_local - busy) / n * 1e3:.1f} ms a variant against {busy / n * 1e3:.1f} ms of work")
    print(f"largest relative difference of the cluster's frequencies from the serial ones: {worst:.1e}")
    print(f"quaver run, {runs} subprocesses: {t_runs:.2f} s a variant; serial API "
          f"{t_runs / (t_serial / n):.1f}x faster a variant (target 5x)")
    print(f"load average after: {os.getloadavg()}")


if __name__ == "__main__":
    if sys.argv[1:2] == ["--serial-child"]:
        _serial_child(int(sys.argv[2]))
    else:
        main(*[int(a) for a in sys.argv[1:]])
