"""Studies: 200 variants of the mast demo (its panel height swept, the MODES case, six modes
followed) on a local Dask cluster of 2 worker processes against the same study run serially
through the API, and the serial API against `quaver run` started once per variant.

PYTHONPATH=. python benchmarks/study.py [variants] [subprocesses]
(targets: cluster >= 1.7x the serial API; serial API >= 5x faster per variant than `quaver run`)

`quaver run` is started `subprocesses` times (default 15, values spread over the same range) and
its per-variant time scaled; each writes its results folder without pictures, as a user's
script would. The per-variant overhead of the cluster (scheduling, transfer, the cluster's
start) is its wall time times its workers less the time the workers spent in variants, per
variant; the load average is printed before and after, since these machines are shared.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main(n: int = 200, runs: int = 15) -> None:
    from fem.study import read_study_text, run_study

    print(f"load average before: {os.getloadavg()}")
    text = f'study "mast sweep"\ndeck "mast.deck"\ncases MODES\nvary h from 2.6 m to 3.4 m points {n}\n' \
           'track 6 modes of MODES\n'
    study = read_study_text(text, "bench.study", ROOT / "decks")

    t0 = time.perf_counter()
    serial = run_study(study, serial=True, progress=False)
    t_serial = time.perf_counter() - t0

    t0 = time.perf_counter()
    local = run_study(study, workers=2, progress=False)
    t_local = time.perf_counter() - t0
    # the same frequencies to round-off (OpenBLAS limited to one thread at start on the workers and
    # at run time here may take other kernels: ~1e-13 relative; fem/study/engine.py)
    worst = max(float(abs(a["modes"]["MODES"]["freq"] / b["modes"]["MODES"]["freq"] - 1).max())
                for a, b in zip(serial.results, local.results))
    assert worst < 1e-9, f"the cluster's frequencies differ from the serial ones by {worst:.1e}"
    busy = sum(r["seconds"] for r in local.results)
    solve = sum(r.get("solve_s", 0.0) for r in serial.results) / n
    read = sum(r.get("read_s", 0.0) for r in serial.results) / n

    py = sys.executable
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    hs = [2.6 + 0.8 * i / max(runs - 1, 1) for i in range(runs)]
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        for i, h in enumerate(hs):
            subprocess.run([py, "-m", "fem", "run", "decks/mast.deck", "--case", "MODES", "--no-render",
                            "--set", f"h={h!r} m", "--out", f"{tmp}/r{i}"], cwd=ROOT, env=env, check=True,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        t_runs = (time.perf_counter() - t0) / runs

    print(f"{n} variants of the mast (MODES), serial API: {t_serial:.2f} s ({t_serial / n * 1e3:.1f} ms a variant: "
          f"read {read * 1e3:.1f} ms, solve {solve * 1e3:.1f} ms)")
    print(f"local cluster, 2 workers: {t_local:.2f} s; speed-up over serial {t_serial / t_local:.2f}x (target 1.7x)")
    print(f"  workers busy {busy:.2f} s; overhead (scheduling, transfer, cluster start) "
          f"{(2 * t_local - busy) / n * 1e3:.1f} ms a variant against {busy / n * 1e3:.1f} ms of work")
    print(f"largest relative difference of the cluster's frequencies from the serial ones: {worst:.1e}")
    print(f"quaver run, {runs} subprocesses: {t_runs:.2f} s a variant; serial API "
          f"{t_runs / (t_serial / n):.1f}x faster a variant (target 5x)")
    print(f"load average after: {os.getloadavg()}")


if __name__ == "__main__":
    args = [int(a) for a in sys.argv[1:]]
    main(*args)
