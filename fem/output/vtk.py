"""Mode-shape and response files any VTK viewer opens: one VTU per frame (meshio), members as
line cells, and a PVD collection to step through them."""

from __future__ import annotations

from pathlib import Path
from xml.sax.saxutils import quoteattr

import numpy as np

from ..model import Model

__all__ = ["shape_scale", "write_vtu", "write_pvd", "write_mode_files", "write_response_files"]


def shape_scale(model: Model, fraction: float = 0.05) -> float:
    """The length the largest translation of a drawn shape is scaled to: a fraction of the
    model's largest extent, m."""
    lo, hi = model.bounding_box()
    return fraction * float(max(np.max(hi - lo), 1e-9))


def write_vtu(path: Path, model: Model, point_data: dict) -> None:
    import meshio

    mesh = meshio.Mesh(model.coords, [("line", model.conn)],
                       point_data={k: np.ascontiguousarray(v, dtype=float) for k, v in point_data.items()})
    mesh.write(path, file_format="vtu")


def write_pvd(path: Path, entries: list[tuple[float, str]]) -> None:
    """A ParaView data collection: (time or mode number, relative file name) per frame."""
    lines = ['<?xml version="1.0"?>', '<VTKFile type="Collection" version="0.1">', "  <Collection>"]
    lines += [f'    <DataSet timestep="{t:.9g}" part="0" file={quoteattr(f)}/>' for t, f in entries]
    lines += ["  </Collection>", "</VTKFile>", ""]
    path.write_text("\n".join(lines))


def write_mode_files(folder: Path, model: Model, modal, length: float | None = None) -> list[Path]:
    """modes/<case>_mode_<j>.vtu for every mode plus <case>_modes.pvd; shapes scaled so the
    largest translation is `length` (default shape_scale(model)); returns the files."""
    length = shape_scale(model) if length is None else length
    folder.mkdir(parents=True, exist_ok=True)
    entries, files = [], []
    for j in range(modal.shapes.shape[2]):
        s = modal.shapes[:, :, j]
        peak = np.abs(s[:, :3]).max()
        k = length / peak if peak > 0 else 0.0
        name = f"{modal.name}_mode_{j + 1:03d}.vtu"
        write_vtu(folder / name, model, {"displacement": s[:, :3] * k, "rotation": s[:, 3:] * k})
        entries.append((j + 1, name))
        files.append(folder / name)
    write_pvd(folder / f"{modal.name}_modes.pvd", entries)
    return files + [folder / f"{modal.name}_modes.pvd"]


def write_response_files(folder: Path, model: Model, name: str, t: np.ndarray, u_all: np.ndarray,
                         every: int = 1) -> list[Path]:
    """Deformed shapes over time, u_all (m, n, 6) true scale, every `every`-th step."""
    folder.mkdir(parents=True, exist_ok=True)
    entries, files = [], []
    for i in range(0, len(t), every):
        fname = f"{name}_{i:06d}.vtu"
        write_vtu(folder / fname, model, {"displacement": u_all[i, :, :3], "rotation": u_all[i, :, 3:]})
        entries.append((float(t[i]), fname))
        files.append(folder / fname)
    write_pvd(folder / f"{name}.pvd", entries)
    return files + [folder / f"{name}.pvd"]
