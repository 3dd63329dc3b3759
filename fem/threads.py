"""numpy's and scipy's BLAS (OpenBLAS) at one thread while a model is solved and its results
written (`fem.solve`, `fem.output.write.write_results`).

Their dense work is on small or thin matrices (element blocks, a few modes by many steps),
where OpenBLAS's threads cost more in start-up and waiting than they save; our measurement on
a 2-core machine (load about 1): the rack demo's solve 0.96 s and 1.9 s of CPU with its
default two threads, 0.71 s and 0.70 s with one; a generated 2886-member frame with two
histories, a sweep and a spectrum 27.7-28.2 s and 48-49 s of CPU, against 28.1-30.8 s and
28-31 s. During `quaver run` the spare core draws the pictures. One thread also makes the
numbers the same to the last digit whatever the machine's core count (a reduction split over
threads adds in another order: the rack's governing member between two of equal force
changed with it).

Only OpenBLAS is limited: MKL, when loaded for PARDISO (the `fast` extra), keeps its threads
for the factorisations; the Lanczos iterations limit every BLAS themselves
(`analysis.modes.BLAS_THREADS`)."""

from __future__ import annotations

__all__ = ["OPENBLAS_THREADS", "openblas_limited"]

OPENBLAS_THREADS = 1     # None: no limit


def openblas_limited():
    """A context manager holding OpenBLAS to OPENBLAS_THREADS threads (threadpoolctl), as it was after."""
    from threadpoolctl import ThreadpoolController

    return ThreadpoolController().select(internal_api="openblas").limit(limits=OPENBLAS_THREADS)
