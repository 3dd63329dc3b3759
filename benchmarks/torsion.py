"""The Saint-Venant J of an angle (fem.sections.torsion): time per section for every catalogue
angle, solved afresh (the cache bypassed), against a finite-difference solution of the same
problem on a square grid (Prandtl's stress function, 5-point stencil, grid t/32 and t/16
extrapolated, as tests/test_sections_catalogue.py checks it), with the two J side by side. The
finite-difference grid stair-steps the arcs and every edge that falls between its lines, so its J
is good to about 0.5 % only (0.3 % where the straight edges lie on grid lines); the
finite-element J is within about 1e-4 (tests/test_torsion.py).

Run by hand: python benchmarks/torsion.py. Reports milliseconds per section, the ratio of the
two methods measured in the same run and the load average beside them (shared machines are
noisy: compare ratios, not milliseconds).
"""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

from fem.sections import catalogue_designations, catalogue_entry
from fem.sections.torsion import angle_torsion_constant

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from prandtl_grid import angle_nodes, prandtl_J  # noqa: E402  (the tests' finite-difference check)


def _fd(b, t, r, r2, h):
    """J of an equal angle by finite differences on a grid of spacing h (nodes strictly inside)."""
    return prandtl_J(angle_nodes(h, b, t, r, r2), h)


def main() -> None:
    rows = []
    for d in [*catalogue_designations("L equal"), *catalogue_designations("L equal EN")]:
        e = catalogue_entry(d)
        b, t, r, r2 = (e.dims.get(k, 0.0) / e.dims["t"] for k in ("b", "t", "r", "r2"))   # on t = 1
        start = time.perf_counter()
        fe = angle_torsion_constant.__wrapped__(b, b, 1.0, r, r2)
        t_fe = time.perf_counter() - start
        start = time.perf_counter()
        fd = 2 * _fd(b, 1.0, r, r2, 1 / 32) - _fd(b, 1.0, r, r2, 1 / 16)
        t_fd = time.perf_counter() - start
        rows.append((d, fe, fd, t_fe, t_fd))
    load = os.getloadavg()
    print(f"load average {load[0]:.2f} {load[1]:.2f} {load[2]:.2f}\n")
    print("| section | J/t^4 finite elements | J/t^4 finite differences | difference | FE ms | FD ms |")
    print("|---|---|---|---|---|---|")
    for d, fe, fd, t_fe, t_fd in rows:
        print(f"| {d} | {fe:.5g} | {fd:.5g} | {fe / fd - 1:+.2%} | {1e3 * t_fe:.1f} | {1e3 * t_fd:.0f} |")
    fe_t, fd_t = sum(r[3] for r in rows), sum(r[4] for r in rows)
    print(f"\n{len(rows)} sections: finite elements {1e3 * fe_t / len(rows):.1f} ms each, finite differences "
          f"{1e3 * fd_t / len(rows):.0f} ms each (ratio {fd_t / fe_t:.0f}); load average {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
