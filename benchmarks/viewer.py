"""viewer.html: its size (the embedded plotly.js and the shapes' data apart) and its load time in
headless Chromium, for the demo decks.

PYTHONPATH=. python benchmarks/viewer.py [repeats] [deck ...]
(target: under about 3 MB for decks/rack.deck)

Each deck's static cases, combinations of them and modes cases are solved (the shapes the view
offers), and the view written (timed). Load time: Chromium is started headless on the page with
a virtual-time budget, so it returns once the page's scripts are done (plotly.js decompressed and
run, the scene drawn; the page then writes its "ready" marker, checked), and on an empty page
with the same flags; the medians of `repeats` rounds (default 5, taken in turn so a change in the
machine's load falls on both alike) and their difference are printed with the load average
before and after. The page's own figure (performance.now() when the marker is written) is
printed beside them.
"""

from __future__ import annotations

import os
import re
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--enable-unsafe-swiftshader", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--virtual-time-budget=60000", "--dump-dom"]


def _browser() -> str:
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    sys.exit("no Chromium found (chromium, chromium-browser or google-chrome)")


def _load(exe: str, url: str, profile: str) -> tuple[float, str]:
    t0 = time.perf_counter()
    r = subprocess.run([exe, *FLAGS, f"--user-data-dir={profile}", url], capture_output=True, text=True,
                       timeout=300)
    return time.perf_counter() - t0, r.stdout


def main(repeats: int, decks: list[str]) -> None:
    from fem import read_deck, solve
    from fem.output import viewer

    exe = _browser()
    load0 = os.getloadavg()
    with tempfile.TemporaryDirectory() as tmp:
        blank = Path(tmp) / "blank.html"
        blank.write_text("<!DOCTYPE html><title>blank</title><p>blank</p>")
        for deck in decks:
            model = read_deck(deck)
            shown = [c.name for c in model.cases if c.kind in ("static", "modes", "buckling")]
            statics = {c.name for c in model.cases if c.kind == "static"}
            combos = [c.name for c in model.combinations if set(c.factors) <= statics]
            results = solve(model, cases=[*shown, *combos])
            out = Path(tmp) / Path(deck).stem
            out.mkdir()
            t0 = time.perf_counter()
            failed = viewer.write_viewer(results, out)
            write = time.perf_counter() - t0
            if failed:
                sys.exit(failed)
            page = out / viewer.VIEWER
            text = page.read_text()
            lib = len(re.search(r'id="plotly-gz">(.*?)</script>', text, re.S).group(1))
            data = len(re.search(r'id="quaver-data">(.*?)</script>', text, re.S).group(1))
            times, blanks, inside = [], [], []
            for i in range(repeats):
                t, dom = _load(exe, page.as_uri(), f"{tmp}/profile-{i}")
                m = re.search(r'id="viewer-ready"[^>]*>ready (\d+) views in (\d+) ms<', dom)
                if not m:
                    sys.exit(f"{deck}: the page did not write its ready marker")
                times.append(t)
                inside.append(int(m.group(2)))
                blanks.append(_load(exe, blank.as_uri(), f"{tmp}/profile-b{i}")[0])
            t, b = statistics.median(times), statistics.median(blanks)
            print(f"{deck}: {m.group(1)} shapes; viewer.html {page.stat().st_size / 1e6:.2f} MB "
                  f"(plotly.js {lib / 1e6:.2f} MB, shapes {data / 1e6:.2f} MB); written in {write:.2f} s")
            print(f"  Chromium on the page {t:.2f} s, on an empty page {b:.2f} s: the page's own {t - b:.2f} s "
                  f"(median of {repeats}); the page's own clock at ready {statistics.median(inside):.0f} ms")
    print(f"load average before {load0[0]:.2f}, after {os.getloadavg()[0]:.2f} (1 min)")


if __name__ == "__main__":
    args = sys.argv[1:]
    n = int(args.pop(0)) if args and args[0].isdigit() else 5
    main(n, args or [str(ROOT / "decks" / d) for d in ("rack.deck", "mast.deck", "fanframe.deck")])
