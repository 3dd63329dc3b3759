"""Studies: 200 variants of the mast demo (its panel height swept, the MODES case, six modes
followed) on a local Dask cluster of 2 worker processes against the same study run serially
through the API, and the serial API against `quaver run` started once per variant.

PYTHONPATH=. python benchmarks/study.py [variants] [subprocesses] [--rounds N] [--quick]
(targets: cluster >= 1.7x the serial API; serial API >= 5x faster per variant than `quaver run`)

Each round runs, one after another and each in a fresh child process (`fem.study` imported
before the clock starts, so that every engine pays what it imports on its way and its first
solves, as a user's process would: the cluster the import of dask.distributed and its workers'
start), the serial study, the cluster with the default chunks (several variants a task) and the
cluster with one variant a task (these two in alternating order from round to round), then two
serial children of half the variants each side by side (no Dask: what two plain processes get
from the machine at that moment, the cluster's ideal); a round's ratios share its load. Dask's
workers run BLAS on one thread; every child and the `quaver run` processes are started with the
same setting (OPENBLAS_NUM_THREADS=1 and the like), so the ratios compare the engines, not BLAS
threading. The cluster's workers are forked from their child on Linux (fem.study.engine.
start_method; DASK_DISTRIBUTED__WORKER__MULTIPROCESSING_METHOD=spawn in the environment measures
spawned ones). `quaver run` is started `subprocesses` times (default 15, 0: not timed; values
spread over the same range), each writing its results folder without pictures, as a user's
script would. Where the cluster's time goes comes from `StudyResult.phases`: starting the
cluster, then per variant its reading and solving on a worker and the rest of the workers' time
(scheduling, transfer, waiting), against the serial per-variant time. The load average is
printed with each round, since these machines are shared, and the CPU seconds of each engine
(the child and the processes it started: a cluster's workers), which the load does not inflate
as it does wall time.
--quick: 40 variants, 3 subprocesses.
"""

from __future__ import annotations

import json
import os
import resource
import statistics
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


def _child(n: int, engine: str) -> None:
    """In a process started with one BLAS thread, `fem.study` imported: the study run serially
    (`serial`) or on a local cluster of 2 workers with the default chunks (`chunks`) or one
    variant a task (`single`); prints its numbers as JSON. Each engine so pays in its timing what
    it imports on its way (the cluster: dask.distributed here, the workers' start) and its first
    solves, as a user's fresh process would; the wall ends when the results are in (a cluster then
    closes in the background, and this process waits for it before it ends)."""
    from fem.study import run_study

    kw = {"serial": dict(serial=True), "chunks": dict(workers=2), "single": dict(workers=2, chunk=1)}[engine]
    t0 = time.perf_counter()
    r = run_study(_study(n), progress=False, **kw)
    wall = time.perf_counter() - t0
    print(json.dumps({"wall": wall, "phases": r.phases,
                      "freq": [x["modes"]["MODES"]["freq"].tolist() for x in r.results]}))


def _load() -> str:
    return " ".join(f"{x:.1f}" for x in os.getloadavg())


def _cpu() -> float:
    """CPU seconds (user + system) of this process and of its finished, reaped descendants."""
    a, b = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return a.ru_utime + a.ru_stime + b.ru_utime + b.ru_stime


def _run_child(n: int, engine: str, env: dict) -> tuple[float, float, dict]:
    """Wall seconds (measured inside the child), CPU seconds (the child and every process it
    started: a cluster's workers) and the child's numbers, for one study in a fresh process."""
    c0 = _cpu()
    out = subprocess.run([sys.executable, __file__, "--child", str(n), engine], env=env, check=True,
                         capture_output=True, text=True).stdout
    got = json.loads(out.strip().splitlines()[-1])
    return got["wall"], _cpu() - c0, got


def _halves(n: int, env: dict) -> tuple[float, float]:
    """Wall seconds (the later of the two, each measured inside its child as the serial API's
    is) and CPU seconds of two serial children of n/2 variants each run side by side: what two
    plain processes get from this machine now, the cluster's ideal at the same load."""
    c0 = _cpu()
    procs = [subprocess.Popen([sys.executable, __file__, "--child", str(n // 2), "serial"], env=env,
                              stdout=subprocess.PIPE, text=True) for _ in range(2)]
    walls = [json.loads(p.communicate()[0].strip().splitlines()[-1])["wall"] for p in procs]
    if any(p.returncode for p in procs):
        raise RuntimeError("a serial child failed")
    return max(walls), _cpu() - c0


def _autogroup() -> bool:
    try:
        return Path("/proc/sys/kernel/sched_autogroup_enabled").read_text().strip() == "1"
    except OSError:
        return False


def main(n: int = 200, runs: int = 15, rounds: int = 1) -> None:
    import numpy as np

    env = dict(os.environ, PYTHONPATH=str(ROOT), **ONE_THREAD)
    print(f"{n} variants of the mast (MODES, 6 modes tracked); {os.cpu_count()} cores; BLAS 1 thread a process; "
          f"load average (1, 5, 15 min) at the start {_load()}")
    print()
    print("| round | load before | serial API s (CPU s) | 2 workers, chunks s (CPU s) | speed-up "
          "| 2 workers, 1 a task s (CPU s) | speed-up | 2 serial halves side by side s (CPU s) | speed-up "
          "| load after |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    ratios, worst, last, cpus, ideal = [], 0.0, None, [], []
    for k in range(rounds):
        load0 = _load()
        _, c_serial, serial = _run_child(n, "serial", env)
        if k % 2:                                  # the two clusters' order alternates between rounds
            t_single, c_single, single = _run_child(n, "single", env)
            t_chunked, c_chunked, chunked = _run_child(n, "chunks", env)
        else:
            t_chunked, c_chunked, chunked = _run_child(n, "chunks", env)
            t_single, c_single, single = _run_child(n, "single", env)
        worst = max([worst] + [float(np.abs(np.array(a) / np.array(b) - 1).max())
                               for a, b in zip(serial["freq"], chunked["freq"])])
        t_halves, c_halves = _halves(n, env)
        ratios.append((serial["wall"] / t_chunked, serial["wall"] / t_single))
        ideal.append((serial["wall"] / t_halves, t_halves / t_chunked))
        cpus.append((c_chunked / c_serial, c_single / c_serial))
        print(f"| {k + 1} | {load0} | {serial['wall']:.2f} ({c_serial:.1f}) | {t_chunked:.2f} ({c_chunked:.1f}) | "
              f"{ratios[-1][0]:.2f}x | {t_single:.2f} ({c_single:.1f}) | {ratios[-1][1]:.2f}x | "
              f"{t_halves:.2f} ({c_halves:.1f}) | {ideal[-1][0]:.2f}x | {_load()} |")
        last = (serial, chunked, single)
    print()
    print(f"speed-up of 2 workers over the serial API (target 1.7x): chunks {statistics.median(r[0] for r in ratios):.2f}x, "
          f"one variant a task {statistics.median(r[1] for r in ratios):.2f}x (medians of {rounds} round(s))")
    print(f"two plain serial processes of {n // 2} variants side by side (no Dask; the later one's wall, "
          f"timed as the serial API's): {statistics.median(r[0] for r in ideal):.2f}x "
          f"the serial API; the cluster with chunks {statistics.median(r[1] for r in ideal):.2f}x as fast as "
          f"they (1.0: as fast as this machine allows two processes now)")
    cc, cs = statistics.median(c[0] for c in cpus), statistics.median(c[1] for c in cpus)
    print(f"CPU of the cluster's processes against the serial process's (imports included in both): chunks {cc:.2f}x, "
          f"one variant a task {cs:.2f}x; with two cores free, 2 workers could at best be {2 / cc:.2f}x and "
          f"{2 / cs:.2f}x the serial API (an estimate, not a measurement)")
    if _autogroup():
        print("the kernel shares the CPU between sessions (sched_autogroup_enabled = 1): on a machine busy with "
              "other sessions this session's processes together get one session's share, so two workers "
              "cannot be much faster than one process however little the engine costs")
    print(f"largest relative difference of the cluster's frequencies from the serial ones: {worst:.1e}")
    serial, chunked, single = last
    print()
    print("where the time went (last round), ms a variant unless stated:")
    print()
    print("| engine | start s | tasks | read | solve | workers' other time (scheduling, transfer, idle) | wall a variant |")
    print("|---|---|---|---|---|---|---|")
    for name, ph in (("serial API", serial["phases"]), ("2 workers, chunks", chunked["phases"]),
                     ("2 workers, 1 a task", single["phases"])):
        wall = ph["prepare"] + ph["start"] + ph["run"]
        print(f"| {name} | {ph['start']:.2f} | {ph['tasks']} | {ph['read'] / n * 1e3:.1f} | {ph['solve'] / n * 1e3:.1f} "
              f"| {ph['overhead'] / n * 1e3:.1f} | {wall / n * 1e3:.1f} |")

    if runs:
        hs = [2.6 + 0.8 * i / max(runs - 1, 1) for i in range(runs)]
        load0 = _load()
        with tempfile.TemporaryDirectory() as tmp:
            t0 = time.perf_counter()
            for i, h in enumerate(hs):
                subprocess.run([sys.executable, "-m", "fem", "run", "decks/mast.deck", "--case", "MODES",
                                "--no-render", "--set", f"h={h!r} m", "--out", f"{tmp}/r{i}"], cwd=ROOT, env=env,
                               check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            t_runs = (time.perf_counter() - t0) / runs
        print()
        print(f"quaver run, {runs} subprocesses (load {load0} -> {_load()}): {t_runs:.2f} s a variant; serial API "
              f"{t_runs / (serial['wall'] / n):.1f}x faster a variant (target 5x)")


if __name__ == "__main__":
    if sys.argv[1:2] == ["--child"]:
        _child(int(sys.argv[2]), sys.argv[3])
    else:
        args = sys.argv[1:]
        rounds = int(args[args.index("--rounds") + 1]) if "--rounds" in args else 1
        if "--rounds" in args:
            del args[args.index("--rounds"):args.index("--rounds") + 2]
        nums = [int(a) for a in args if not a.startswith("--")]
        if "--quick" in args:
            nums = nums or [40, 3]
        main(*nums, rounds=rounds)
