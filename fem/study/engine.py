"""Where a study's variants run: in this process one after another (`serial`), or as tasks on
Dask's distributed scheduler (`on_dask`): a local cluster of worker processes on this machine
(loopback only, one thread each, no dashboard) or a running scheduler given by its address.

Both paths call the same `run_variant`. On Dask the Job (the deck's files, the records) is
sent to the workers once, as a task of its own, and each task carries a chunk of consecutive
variants' overrides (`chunks`: long ones first, then shorter and shorter, so that scheduling
and transfer are paid per chunk, not per variant, while the last tasks balance the workers);
results come back as chunks finish, under a progress bar over the variants. A variant that
fails inside a chunk is reported in its own row and the chunk goes on; the variants of a task
lost with its worker (the process killed, out of memory) run again one a task, one after
another, and a variant lost on its own is reported in its row, like a variant the deck refuses.
The cluster's profiler is off and its timers relaxed (QUIET_CLUSTER); on Linux a local cluster's
workers are forked from this process (`start_method`); `phases` receives where
the time went (cluster start, running the variants). A local cluster closes in the background
once the results are in (`wait_closed`).
"""

from __future__ import annotations

import contextlib
import logging
import math
import sys
import time

from ..errors import QuaverError
from ..progress import bar
from .work import Job, run_chunk, run_variant

__all__ = ["StudyError", "chunks", "on_dask", "serial", "wait_closed"]

CONNECT_TIMEOUT = "20s"     # our choice: a scheduler on this network answers in well under a second
# our choice: a local cluster's worker that has not reached its scheduler by then is taken as
# stuck (measured: 0.08 s forked, 0.5 s spawned on a quiet machine, 2.4-3.7 s spawned at load 10);
# a forked one, which has nothing to import, sooner
START_TIMEOUT = 60
FORK_TIMEOUT = 20
# our choice: each task takes 1/(GUIDED * workers) of the variants left: with 2 workers a sweep
# of 200 variants goes in 15 tasks of 50, 38, 28 ... 2, 2, 1 variants, so the first tasks pay
# Dask's per-task costs over many variants and the last ones leave a worker idle for about the
# time of two variants rather than half a chunk of 12 (equal chunks, 8 a worker, did so)
GUIDED = 2
MIN_CHUNK = 2
# Dask settings for a study's run: no statistical profiler on the workers (it samples their stacks
# every 10 ms), the event loops' health check, the system monitor and the memory monitor every
# 1-2 s instead of 20, 500 and 100 ms (a memory limit is then enforced within a second). An idle
# local cluster of 2 workers measured 92 ms of CPU a second with Dask's defaults, 12 with these.
# On the local cluster (its scheduler runs in this process) a worker holds one task at a time
# (`worker-saturation` 1.0: a worker that dies takes no queued task with it) and a task lost with
# its worker is not tried again by Dask (`allowed-failures` 0): `_run` sends a lost chunk's
# variants again one a task, and reports a single variant lost with its worker in its row.
# Dask starts its workers with MALLOC_TRIM_THRESHOLD_=65536 (glibc hands freed memory back to the
# system past 64 KiB, for workers that hold large data between tasks); a study's workers hold
# none, and a solve's arrays, freed and allocated again, then cost page faults: the mast's
# variants took 15 % more CPU in a process started so (53 against 46 ms, load 4). Unset here: the
# C library's own threshold (adaptive, 128 KiB up to 32 MiB) stands.
QUIET_CLUSTER = {"distributed.worker.profile.enabled": False, "distributed.admin.tick.interval": "1s",
                 "distributed.admin.system-monitor.interval": "2s",
                 "distributed.worker.memory.monitor-interval": "1s",
                 "distributed.scheduler.worker-saturation": 1.0, "distributed.scheduler.allowed-failures": 0,
                 "distributed.nanny.pre-spawn-environ.MALLOC_TRIM_THRESHOLD_": None,
                 # the Job (a record suite's tables) goes once, as a task of its own: no warning
                 # that the graph is large, whose remedy (scatter) is what it replaces on purpose
                 "distributed.admin.large-graph-warning-threshold": "4GiB"}


# Dask's config key for how a nanny starts its worker process; Dask's own default is "spawn"
START_KEY = "distributed.worker.multiprocessing-method"
START_ENV = "DASK_DISTRIBUTED__WORKER__MULTIPROCESSING_METHOD"   # the same, set in the environment


def start_method() -> str:
    """How a local cluster's worker processes start: "fork" on Linux, unless the user chose
    (DASK_DISTRIBUTED__WORKER__MULTIPROCESSING_METHOD=spawn or forkserver in the environment, or
    a method other than Dask's default in its yaml configuration); elsewhere Dask's choice (fork
    is unsafe on macOS and absent on Windows).

    Why fork: a spawned worker is a fresh interpreter that imports Dask, numpy, scipy and this
    package (about 0.4 s of a 2-core machine before its first variant, and its first solves
    import more); a forked one has them all: measured 0.08 s against 0.48 s to start, and 4.8-5.0 s
    against 5.3-5.4 s for the mast's 200 variants (load 0.7-1.1). Its hazards, and what meets them:
    - a lock held by another thread of this process at the fork stays held in the child: the
      nanny forks from a thread of its own while the main thread waits on the cluster; CPython
      re-creates the import lock, the GIL and logging's locks in the child, glibc its malloc's;
    - BLAS thread pools of this process: OpenBLAS stops its pool across a fork, and a task runs
      under threadpoolctl's limit of one thread (`work.run_chunk`), since the nanny's
      OPENBLAS_NUM_THREADS=1 is read only when a library loads;
    - this process's state: a study's temporary folders are forgotten in the child (each worker
      writes and removes its own, see `work._folder`), and multiprocessing ends a forked child
      without running this process's atexit handlers.
    Python 3.12 and later warn (a DeprecationWarning) when a process with threads forks; `_start`
    silences that one warning."""
    import os

    import dask

    if os.environ.get(START_ENV):       # Dask reads it at import; it may have been set since
        return os.environ[START_ENV]
    chosen = dask.config.get(START_KEY, "spawn")
    return "fork" if chosen == "spawn" and sys.platform.startswith("linux") else chosen


class StudyError(QuaverError, RuntimeError):
    """A study that cannot run: no scheduler at the address, a cluster that cannot start."""


def serial(job: Job, variants, progress: bool = True) -> list[dict]:
    """Every variant in this process, in order. The numbers are the workers' to the bit: a
    worker's BLAS runs one thread (its nanny sets OPENBLAS_NUM_THREADS=1 and the like before it
    starts, `work.run_chunk` limits it), and every solve holds OpenBLAS to one thread
    (`fem.threads`); with this process's BLAS as it was started they were 1e-12 relative apart
    on the demo decks, and the partners of a repeated frequency could come out as other
    combinations of each other (any basis of their plane is a solution)."""
    seq = bar(variants, total=len(variants), label="variants") if progress else variants
    return [run_variant(job, v.index, v.let) for v in seq]


def chunks(variants, workers: int, size: int | None = None) -> list[list]:
    """The variants in consecutive groups, one a task: `size` each (the last may be shorter), or
    by default shrinking ones (guided scheduling): each group 1/(GUIDED * workers) of the
    variants not yet grouped, so that the first tasks are long (Dask's costs paid rarely) and
    the last ones short (the workers finish together)."""
    variants = list(variants)
    if size is not None:
        size = max(int(size), 1)
        return [variants[i:i + size] for i in range(0, len(variants), size)]
    out, i, share = [], 0, GUIDED * max(int(workers), 1)
    while i < len(variants):
        step = max(math.ceil((len(variants) - i) / share), MIN_CHUNK)
        out.append(variants[i:i + step])
        i += step
    return out


def on_dask(job: Job, variants, workers: int = 2, scheduler: str | None = None, progress: bool = True,
            chunk: int | None = None, phases: dict | None = None) -> tuple:
    """Every variant on Dask, in tasks of `chunk` variants (None: shrinking ones, see `chunks`); (results in
    variant order, a description of the cluster). `phases`, when given, receives the seconds
    spent starting or reaching the cluster ('start') and running the variants ('run'), the
    number of workers ('workers') and of tasks ('tasks')."""
    try:
        import dask
        from dask.distributed import Client, LocalCluster
    except ImportError as exc:          # a dependency; an install without it says so
        raise StudyError(f"studies on a cluster need dask.distributed ({exc}); install quaver's dependencies, "
                         "or run the study serially (--serial)") from None
    phases = {} if phases is None else phases
    done = False
    with dask.config.set(QUIET_CLUSTER), _environment_kept():
        t0 = time.perf_counter()
        client, cluster, where = _start(Client, LocalCluster, workers, scheduler)
        phases["start"] = time.perf_counter() - t0
        try:
            t0 = time.perf_counter()
            phases["workers"] = len(client.scheduler_info().get("workers", {})) or workers
            groups = chunks(variants, phases["workers"], chunk)
            out = _run(client, job, groups, len(variants), progress)
            phases["run"], phases["tasks"] = time.perf_counter() - t0, len(groups)
            done = True
            return [out[v.index] for v in variants], where
        finally:
            client.close()
            if cluster is not None:
                _close(cluster, wait=not done)


def _run(client, job: Job, groups: list[list], n: int, progress: bool) -> dict[int, dict]:
    """Each group of variants as one task; their results by variant index, as they come. The
    variants of a task lost with its worker are sent again one a task, one after another (so that
    no other of them waits on a worker that a fatal variant kills): those that did not kill it
    solve; a variant lost on its own is reported in its row."""
    from dask.distributed import as_completed

    # the Job as a task of its own rather than scattered: the scheduler can compute it again
    # should every worker holding it be lost, where scattered data would be gone for good
    shared = client.submit(_as_task, job, pure=False)

    def submit(g):
        return client.submit(run_chunk, shared, [(v.index, v.let) for v in g], pure=False)

    futures = {submit(g): g for g in groups}
    again: list = []                       # variants of lost chunks, waiting to run alone
    out: dict[int, dict] = {}

    def each_variant():
        pending = as_completed(futures)
        for fut in pending:
            group = futures.pop(fut)
            try:
                rows = fut.result()
            except Exception as exc:   # noqa: BLE001 - the task was lost with its worker
                if len(group) > 1:
                    again.extend(group)
                    rows = []
                else:
                    rows = [{"index": v.index, "status": "error", "seconds": 0.0,
                             "message": f"its worker was lost while it ran ({type(exc).__name__}: "
                                        f"{str(exc).split('. ')[0]})"}
                            for v in group]
            if fut is alone[0]:
                alone[0] = None
            if again and alone[0] is None:
                v = again.pop(0)
                alone[0] = submit([v])
                futures[alone[0]] = [v]
                pending.add(alone[0])
            for row in rows:
                out[row["index"]] = row
                yield row

    alone = [None]                         # the one of them running now
    for _ in (bar(each_variant(), total=n, label="variants") if progress else each_variant()):
        pass
    return out


@contextlib.contextmanager
def _environment_kept():
    """This process's environment as it was, afterwards: Dask's nanny sets its workers'
    variables (OMP_NUM_THREADS=1 and the other BLAS limits, PYTHONHASHSEED, its parent's pid) in
    the environment of the process that starts them, where they would outlive the study and
    reach every program it starts later (a notebook's BLAS-heavy tools on one thread)."""
    import os

    before = dict(os.environ)
    try:
        yield
    finally:
        for k in [k for k in os.environ if k not in before]:
            del os.environ[k]
        for k, v in before.items():
            if os.environ.get(k) != v:
                os.environ[k] = v


_CLOSING: list = []         # local clusters closing in the background


def _close(cluster, wait: bool) -> None:
    """Close a local cluster: at once after a failure; after a run, in a thread while the study
    goes on with its table (the worker processes take about 0.5 s to end, measured; the Python
    interpreter waits for the thread before it exits, and `wait_closed` waits for it)."""
    import threading

    if wait:
        cluster.close()
        return

    def close():
        try:
            cluster.close()
        except Exception:   # noqa: BLE001 - the study's results are in; a late error closing is not the user's
            logging.getLogger(__name__).debug("closing the local cluster", exc_info=True)

    t = threading.Thread(target=close, name="quaver-close-cluster")
    t.start()
    _CLOSING[:] = [c for c in _CLOSING if c.is_alive()] + [t]


def wait_closed() -> None:
    """Wait until every local cluster a study started has closed (its worker processes ended)."""
    while _CLOSING:
        _CLOSING.pop().join()


def _as_task(x):
    """x itself: what a task returns to hold x on the workers as a result Dask can recompute."""
    return x


def _start(Client, LocalCluster, workers: int, scheduler: str | None) -> tuple:
    """`_connect`, a local cluster's workers started by `start_method`; forked workers that do
    not start (a lock held in this process at the fork would leave them stuck; none has been
    seen) are given up after FORK_TIMEOUT and spawned instead, and the description says so."""
    import dask

    if scheduler is not None:
        return _connect(Client, LocalCluster, workers, scheduler)
    method = start_method()
    if method == "fork":
        # Python 3.12+ warns at every fork of a process with threads; the hazard is known and
        # met (`start_method`), and the warning would only reach the user's test runs
        import warnings

        warnings.filterwarnings("ignore", r"This process \(pid=\d+\) is multi-threaded, use of fork\(\)",
                                DeprecationWarning)
    try:
        with dask.config.set({START_KEY: method}):
            return _connect(Client, LocalCluster, workers, None, FORK_TIMEOUT if method == "fork" else START_TIMEOUT)
    except StudyError as exc:
        if method != "fork":
            raise
        why = str(exc).removeprefix("the local cluster could not start: ")
    with dask.config.set({START_KEY: "spawn"}):
        client, cluster, where = _connect(Client, LocalCluster, workers, None, START_TIMEOUT)
    return client, cluster, f"{where}, spawned (forked ones did not start: {why})"


def _connect(Client, LocalCluster, workers: int, scheduler: str | None, timeout: float = START_TIMEOUT) -> tuple:
    """(client, the local cluster or None, a description): a local cluster of `workers` worker
    processes on the loopback address, each given `timeout` seconds to reach its scheduler, or
    the scheduler at `scheduler`."""
    cluster = None
    try:
        if scheduler is None:
            cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                                   # the scheduler's HTTP server (health, metrics) on a free port
                                   # of the loopback address, not 8787 (two studies at once would
                                   # warn), and no dashboard
                                   dashboard_address="127.0.0.1:0", scheduler_kwargs={"dashboard": False},
                                   silence_logs=logging.ERROR, death_timeout=timeout)
            client = Client(cluster)
            where = f"local cluster of {workers} worker process{'es' if workers != 1 else ''}"
        else:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT)
            n = len(client.scheduler_info().get("workers", {}))
            where = f"scheduler {scheduler} ({n} worker{'s' if n != 1 else ''})"
    except Exception as exc:   # noqa: BLE001 - Dask reports a worker that never connected as AssertionError
        if cluster is not None:
            cluster.close()
        what = "the local cluster could not start" if scheduler is None else f"no scheduler answers at {scheduler}"
        if isinstance(exc, AssertionError):         # Dask's word for a worker still starting at the timeout
            exc = f"a worker did not reach the scheduler within {timeout:g} s"
        # spawned worker processes import the script that started them: a script that runs a
        # study at its top level would start another one in each of them
        import dask

        spawned = scheduler is None and dask.config.get(START_KEY, None) != "fork"
        hint = ("; in a script, run the study under `if __name__ == \"__main__\":` (the worker processes "
                "import the script), or run it serially") if spawned else ""
        raise StudyError(f"{what}: {exc}{hint}") from None
    return client, cluster, where
