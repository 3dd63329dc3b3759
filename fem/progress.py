"""Terminal progress: shown only when stderr is a terminal, silent in pipes, files and CI.

tqdm draws the bars (a small, well-kept library that handles terminal widths and rates);
`stage` prints one line per long step with its elapsed time.
"""

from __future__ import annotations

import sys
import time
from contextlib import contextmanager

__all__ = ["interactive", "stage", "bar"]


def interactive() -> bool:
    return sys.stderr.isatty()


@contextmanager
def stage(label: str):
    """'label ... 1.2 s' on the terminal around a long step."""
    if not interactive():
        yield
        return
    t0 = time.perf_counter()
    print(f"{label} ...", end="", file=sys.stderr, flush=True)
    try:
        yield
    finally:
        print(f" {time.perf_counter() - t0:.1f} s", file=sys.stderr, flush=True)


def bar(iterable, total: int | None = None, label: str = ""):
    """A progress bar over `iterable` on a terminal; the plain iterable otherwise."""
    if not interactive():
        return iterable
    from tqdm import tqdm

    return tqdm(iterable, total=total, desc=label, file=sys.stderr, leave=False)
