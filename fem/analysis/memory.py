"""A memory estimate before a large sparse factorisation, so a model that cannot fit is refused
with a message instead of the process being killed."""

from __future__ import annotations

import os

from ..errors import ModelError

__all__ = ["available_bytes", "factor_bytes_estimate", "check_factor_memory"]

REFUSE_FACTOR = 3.0     # refuse when the (upper-bound) estimate exceeds 3x the free memory


def available_bytes() -> int:
    """Memory the process can still use: MemAvailable from /proc/meminfo, else physical pages."""
    try:
        with open("/proc/meminfo") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return int(os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE"))


def factor_bytes_estimate(A, order=None) -> int:
    """Upper-bound estimate of an LU factor of the symmetric-pattern matrix A: the envelope
    (profile) under a band-reducing ordering (`factor.ordering`, or the one given), times
    2 (L and U) x 12 bytes (value and index). Minimum-degree orderings usually fill less, so
    this errs on the safe side."""
    from .factor import ordering

    if A.shape[0] == 0:
        return 0
    return 2 * 12 * (order or ordering(A)).envelope


def check_factor_memory(A, what: str, order=None) -> int:
    """Raise ModelError if the factor of A clearly cannot fit; return the estimate in bytes."""
    need = factor_bytes_estimate(A, order)
    have = available_bytes()
    if need > REFUSE_FACTOR * have:
        raise ModelError(f"{what}: the sparse factorisation needs an estimated {need / 2**30:.1f} GiB "
                         f"(upper bound) but only {have / 2**30:.1f} GiB is free; reduce the model "
                         "(coarser mesh, fewer members) or use a machine with more memory")
    return need
