"""The first answer: for each demo deck, the time to the first frequency line of `quaver run`
and the total run time, as a ratio (target: the first frequencies within 0.3 of the total).

PYTHONPATH=. python benchmarks/first_answer.py [--no-render] [deck ...]   (default: every deck in decks/)

Each deck is run once, pictures on (as a user runs it) unless --no-render, into a temporary
folder that is removed afterwards; the seconds are wall-clock from the start of the process,
and the ratio is what counts on a shared machine. The load average is printed before and after.
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FIRST = " modes ("          # the line of a modes case: "  MODES   46 modes (dense); first Hz: ..."


def _run(deck: Path, out: Path, render: bool) -> tuple[float | None, float, int]:
    """Seconds to the first line naming frequencies (None if there was none), total seconds,
    exit status."""
    cmd = [sys.executable, "-m", "fem", "run", str(deck), "--out", str(out)] + ([] if render else ["--no-render"])
    t0 = time.perf_counter()
    first = None
    with subprocess.Popen(cmd, cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT)), stdout=subprocess.PIPE,
                          stderr=subprocess.DEVNULL, text=True, bufsize=1) as p:
        for line in p.stdout:
            if first is None and FIRST in line and "first Hz" in line:
                first = time.perf_counter() - t0
        status = p.wait()
    return first, time.perf_counter() - t0, status


def main(decks: list[Path], render: bool) -> int:
    load0 = os.getloadavg()
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for deck in decks:
            first, total, status = _run(deck, Path(tmp) / deck.stem, render)
            rows.append((deck.name, first, total, status))
    load1 = os.getloadavg()
    print(f"first answer of `quaver run`{'' if render else ' --no-render'}, one run per deck; "
          f"{os.cpu_count()} cores")
    print(f"load average before {load0[0]:.2f} {load0[1]:.2f} {load0[2]:.2f}, "
          f"after {load1[0]:.2f} {load1[1]:.2f} {load1[2]:.2f}")
    print(f"{'deck':<22} {'first Hz s':>10} {'total s':>8} {'ratio':>6}  target <= 0.3")
    worst = 0
    for name, first, total, status in rows:
        if first is None:
            print(f"{name:<22} {'-':>10} {total:8.1f} {'-':>6}  no modes case (exit status {status})")
            continue
        ratio = first / total
        print(f"{name:<22} {first:10.1f} {total:8.1f} {ratio:6.2f}  {'met' if ratio <= 0.3 else 'NOT met'}"
              + (f" (exit status {status})" if status else ""))
        worst = max(worst, ratio > 0.3)
    return worst


if __name__ == "__main__":
    names = [a for a in sys.argv[1:] if not a.startswith("--")]
    decks = [Path(n).resolve() for n in names] or sorted((ROOT / "decks").glob("*.deck"))
    sys.exit(main(decks, "--no-render" not in sys.argv))
