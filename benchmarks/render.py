"""Render speed: pictures and 24-frame GIFs of the first 6 modes of a ~1000-member frame.

PYTHONPATH=. python benchmarks/render.py [members] [jobs]   (target: under 20 s on 2 cores)
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, __file__.rsplit("/", 1)[0])
from assembly import grid_model  # noqa: E402

from fem.analysis.modal_case import ModesCaseResult, influence_vectors  # noqa: E402
from fem.analysis.modes import participation, solve_modes  # noqa: E402
from fem.assembly import assemble  # noqa: E402
from fem.output.render import can_render  # noqa: E402
from fem.output.render_pool import render_all  # noqa: E402
from fem.output.vtk import shape_scale  # noqa: E402


def main(members: int, jobs: int) -> None:
    model = grid_model(members)
    model.restraint[model.coords[:, 2] == 0] = True
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    modes = solve_modes(K, M, n_modes=6, sturm=False)
    part = participation(modes.phi, M, influence_vectors(model, np.zeros(3))[f])
    shapes = np.zeros((6 * model.n_nodes, 6))
    shapes[f] = modes.phi
    case = ModesCaseResult("BENCH", modes, part, shapes.reshape(model.n_nodes, 6, -1), np.zeros(3))
    ok, why = can_render()
    if not ok:
        print("cannot render here:", why)
        return
    with tempfile.TemporaryDirectory() as tmp:
        t0 = time.perf_counter()
        files = render_all(Path(tmp), model, [case], [], shape_scale(model), jobs)
        dt = time.perf_counter() - t0
    print(f"{model.n_members} members, 6 modes: {len(files)} files (2 PNG, a 24-frame GIF and, with the video extra, an MP4 per mode) "
          f"in {dt:.1f} s with {jobs} process(es)")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 1000, int(sys.argv[2]) if len(sys.argv) > 2 else 2)
