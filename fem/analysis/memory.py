"""How much memory this process may still take, and refusals made before an expensive step
(a sparse factorisation, a dense eigen solve, a long history or sweep) when its estimate does
not fit: the message gives the estimate, the limit with what sets it, and what to change.

The limit is the tightest of the machine's available memory (MemAvailable), the free room
under every cgroup memory limit on the way to the root (v2 memory.max - memory.current, v1
memory.limit_in_bytes - memory.usage_in_bytes) and the room left under the process's own
rlimits (RLIMIT_AS against its virtual size, RLIMIT_DATA against its data size): a `ulimit -v`
or a container's limit ends a run long before the machine runs out."""

from __future__ import annotations

import os
from pathlib import Path

from ..errors import ModelError

__all__ = ["available_bytes", "cgroup_free", "check_factor_memory", "check_memory", "factor_bytes_estimate",
           "gib", "memory_limit"]

REFUSE_FACTOR = 3.0     # refuse when the (upper-bound) factor estimate exceeds 3x the free memory
_UNLIMITED = 1 << 60    # cgroup v1 writes 'no limit' as a number near 2^63


def gib(n: float) -> str:
    """A size in GiB, or MiB below one GiB, for messages."""
    return f"{n / 2**30:.1f} GiB" if n >= 2**30 else f"{n / 2**20:.0f} MiB"


def _meminfo(proc: str) -> int | None:
    try:
        with open(f"{proc}/meminfo") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    try:
        return int(os.sysconf("SC_AVPHYS_PAGES") * os.sysconf("SC_PAGE_SIZE"))
    except (OSError, ValueError, AttributeError):
        return None


def _read_int(path: Path) -> int | None:
    """An integer from a cgroup file; None if absent, unreadable or 'max' (no limit)."""
    try:
        text = path.read_text().strip()
    except OSError:
        return None
    if not text.isdigit():
        return None
    value = int(text)
    return None if value >= _UNLIMITED else value


def _cgroup_mounts(proc: str) -> list[tuple[str, str, str]]:
    """(version, mount point, root of the hierarchy mounted there) of the cgroup v2 and the
    cgroup v1 memory hierarchies, from mountinfo."""
    found = []
    try:
        lines = Path(f"{proc}/self/mountinfo").read_text().splitlines()
    except OSError:
        return found
    for line in lines:
        left, _, right = line.partition(" - ")
        f, r = left.split(), right.split()
        if len(f) < 5 or len(r) < 3:
            continue
        if r[0] == "cgroup2":
            found.append(("2", f[4], f[3]))
        elif r[0] == "cgroup" and "memory" in r[2].split(","):
            found.append(("1", f[4], f[3]))
    return found


def cgroup_free(proc: str = "/proc") -> list[tuple[int, str]]:
    """Free room (limit - usage) under each memory limit of this process's cgroups, from its
    own cgroup up to the root of the mounted hierarchy: [(bytes, what sets it)]."""
    try:
        own = Path(f"{proc}/self/cgroup").read_text().splitlines()
    except OSError:
        return []
    paths = {}
    for line in own:
        parts = line.split(":", 2)
        if len(parts) == 3:
            if parts[0] == "0" and parts[1] == "":
                paths["2"] = parts[2]
            elif "memory" in parts[1].split(","):
                paths["1"] = parts[2]
    names = {"2": ("memory.max", "memory.current"), "1": ("memory.limit_in_bytes", "memory.usage_in_bytes")}
    out = []
    for version, mount, root in _cgroup_mounts(proc):
        path = paths.get(version)
        if path is None:
            continue
        # the part of the process's cgroup path below the mounted root (a container sees '/')
        rel = path[len(root):] if root != "/" and path.startswith(root) else path
        here = Path(mount) / rel.strip("/")
        limit_name, usage_name = names[version]
        while True:
            limit = _read_int(here / limit_name)
            usage = _read_int(here / usage_name)
            if limit is not None:
                out.append((max(limit - (usage or 0), 0), f"cgroup v{version} limit {gib(limit)} "
                                                          f"({here / limit_name})"))
            if here == Path(mount) or here.parent == here:
                break
            here = here.parent
    return out


def _status_kb(proc: str, key: str) -> int | None:
    try:
        with open(f"{proc}/self/status") as fh:
            for line in fh:
                if line.startswith(key + ":"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        pass
    return None


def _rlimit_free(proc: str = "/proc") -> list[tuple[int, str]]:
    """Room left under RLIMIT_AS (against VmSize) and RLIMIT_DATA (against VmData)."""
    try:
        import resource
    except ImportError:          # not a POSIX system
        return []
    out = []
    for name, used, shell in (("RLIMIT_AS", "VmSize", "ulimit -v"), ("RLIMIT_DATA", "VmData", "ulimit -d")):
        kind = getattr(resource, name, None)
        if kind is None:
            continue
        soft, _ = resource.getrlimit(kind)
        if soft == resource.RLIM_INFINITY or soft < 0:
            continue
        size = _status_kb(proc, used) or 0
        out.append((max(soft - size, 0), f"{name} ({shell}) {gib(soft)}, of which {gib(size)} in use"))
    return out


def memory_limit(proc: str = "/proc") -> tuple[int, str]:
    """(bytes this process may still allocate, what sets that limit): the tightest of
    MemAvailable, the cgroup limits and the rlimits."""
    candidates = [(b, w) for b, w in cgroup_free(proc) + _rlimit_free(proc)]
    avail = _meminfo(proc)
    if avail is not None:
        candidates.append((avail, "memory available on the machine"))
    found = min(candidates, key=lambda c: c[0]) if candidates else (1 << 62, "no limit found")
    _LAST[:] = found
    return found


_LAST = [None, ""]      # the last memory_limit() found, to name what set the limit in a message


def available_bytes() -> int:
    """Memory the process can still use: the tightest of MemAvailable, cgroup and rlimit."""
    return memory_limit()[0]


def _limit() -> tuple[int, str]:
    """available_bytes() (the one place to replace in a test) and what set it."""
    have = available_bytes()
    return have, (_LAST[1] if _LAST[0] == have else "the limit given")


def check_memory(need: float, what: str, remedy: str) -> int:
    """Refuse (ModelError) a step whose memory estimate `need` (bytes) is more than this process
    may still take; the message says what needs it, the estimate, the limit and `remedy`.
    Returns the limit."""
    have, source = _limit()
    if need > have:
        raise ModelError(f"{what} needs an estimated {gib(need)}, more than the {gib(have)} this "
                         f"process can still use (set by: {source}); {remedy}")
    return have


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
    have, source = _limit()
    if need > REFUSE_FACTOR * have:
        raise ModelError(f"{what}: the sparse factorisation needs an estimated {need / 2**30:.1f} GiB "
                         f"(upper bound) but only {have / 2**30:.1f} GiB is free (set by: {source}); reduce "
                         "the model (coarser mesh, fewer members) or use a machine with more memory")
    return need
