"""The Saint-Venant J of filleted I shapes (fem.sections.torsion.ishape_torsion_constant): time per
section for every IPE, HEB and W row of the catalogue, solved afresh (the cache bypassed), and the
deviation of the published J from the outline's J and from El Darwish & Johnston's closed form
(fem.sections.formulas), row by row, with each family's largest and mean deviation.

Run by hand: python benchmarks/ishape_torsion.py. Reports milliseconds per section with the load
average beside them (shared machines are noisy: compare ratios, not milliseconds).
"""

from __future__ import annotations

import os
import time

import numpy as np

from fem.sections import catalogue_designations, catalogue_entry
from fem.sections.formulas import _el_darwish_johnston
from fem.sections.torsion import ishape_torsion_constant


def main() -> None:
    print(f"load average {os.getloadavg()[0]:.2f}\n")
    print("| section | r/tf | published J, cm^4 | vs the outline's J | vs the closed form | ms |")
    print("|---|---|---|---|---|---|")
    summary, times = [], []
    for family in ("IPE", "HEB", "W"):
        dev = []
        for d in catalogue_designations(family):
            e = catalogue_entry(d)
            k = e.dims
            args = (k["d"], k["bf"], k["tf"], k["tw"], k["r"])
            start = time.perf_counter()
            outline = ishape_torsion_constant.__wrapped__(*args)
            times.append(time.perf_counter() - start)
            pub, closed = e.published["J"], _el_darwish_johnston(*args)
            dev.append((pub / outline - 1, pub / closed - 1))
            print(f"| {d} | {k['r'] / k['tf']:.2f} | {pub * 1e8:.4g} | {dev[-1][0]:+.2%} | {dev[-1][1]:+.2%} "
                  f"| {1e3 * times[-1]:.0f} |")
        dev = np.array(dev)
        summary.append((family, np.abs(dev).max(axis=0), dev.mean(axis=0)))
    print()
    for family, worst, mean in summary:
        print(f"{family}: published/outline J - 1 largest {worst[0]:.2%} (mean {mean[0]:+.2%}); "
              f"published/closed form - 1 largest {worst[1]:.2%} (mean {mean[1]:+.2%})")
    print(f"\n{len(times)} sections, {1e3 * np.mean(times):.0f} ms each on average; "
          f"load average {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
