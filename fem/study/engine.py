"""Where a study's variants run: in this process one after another (`serial`), or as tasks on
Dask's distributed scheduler (`on_dask`): a local cluster of worker processes on this machine
(loopback only, one thread each, no dashboard) or a running scheduler given by its address.

Both paths call the same `run_variant`. On Dask the Job (the deck's files, the records) is
scattered to every worker once and each task carries only its variant's overrides; results come
back as they finish, under a progress bar over the variants. A task lost with its worker (the
process killed, out of memory) is reported in its variant's row, like a variant the deck refuses.
"""

from __future__ import annotations

import logging

from ..errors import QuaverError
from ..progress import bar
from .work import Job, run_variant

__all__ = ["StudyError", "on_dask", "serial"]

CONNECT_TIMEOUT = "20s"     # our choice: a scheduler on this network answers in well under a second


class StudyError(QuaverError, RuntimeError):
    """A study that cannot run: no scheduler at the address, a cluster that cannot start."""


def serial(job: Job, variants, progress: bool = True) -> list[dict]:
    """Every variant in this process, in order. The numbers agree with the workers' to
    round-off: a worker's BLAS runs one thread (its nanny sets OPENBLAS_NUM_THREADS=1 and the
    like before it starts), this process as it was started; measured 1e-12 relative in the
    mast's frequencies, and the same to the bit on small models. The partners of a repeated
    frequency may then come out as other combinations of each other (any basis of their plane
    is a solution)."""
    seq = bar(variants, total=len(variants), label="variants") if progress else variants
    return [run_variant(job, v.index, v.let) for v in seq]


def on_dask(job: Job, variants, workers: int = 2, scheduler: str | None = None, progress: bool = True) -> tuple:
    """Every variant as a Dask task; (results in variant order, a description of the cluster)."""
    try:
        from dask.distributed import Client, LocalCluster, as_completed
    except ImportError as exc:          # a dependency; an install without it says so
        raise StudyError(f"studies on a cluster need dask.distributed ({exc}); install quaver's dependencies, "
                         "or run the study serially (--serial)") from None
    cluster = None
    try:
        if scheduler is None:
            cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                                   dashboard_address=None, silence_logs=logging.ERROR)
            client = Client(cluster)
            where = f"local cluster of {workers} worker process{'es' if workers != 1 else ''}"
        else:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT)
            n = len(client.scheduler_info().get("workers", {}))
            where = f"scheduler {scheduler} ({n} worker{'s' if n != 1 else ''})"
    except (OSError, TimeoutError, RuntimeError) as exc:
        if cluster is not None:
            cluster.close()
        what = "the local cluster could not start" if scheduler is None else f"no scheduler answers at {scheduler}"
        # worker processes are started afresh and import the script that started them: a script
        # that runs a study at its top level would start another one in each of them
        hint = ("; in a script, run the study under `if __name__ == \"__main__\":` (the worker processes "
                "import the script), or run it serially") if scheduler is None else ""
        raise StudyError(f"{what}: {exc}{hint}") from None
    try:
        shared = client.scatter(job, broadcast=True)
        futures = {client.submit(run_variant, shared, v.index, v.let, pure=False): v.index for v in variants}
        out: dict[int, dict] = {}
        done = as_completed(futures)
        for fut in (bar(done, total=len(futures), label="variants") if progress else done):
            i = futures[fut]
            try:
                out[i] = fut.result()
            except Exception as exc:   # noqa: BLE001 - the task was lost with its worker: that variant's row says so
                out[i] = {"index": i, "status": "error", "message": f"{type(exc).__name__}: {exc}", "seconds": 0.0}
        return [out[v.index] for v in variants], where
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
