"""Mode-shape and response files any VTK viewer opens, members as polylines through points along
them carrying the members' own interpolated shapes: one VTKHDF file (h5py) per modes case with a
step per mode (the step's value is the mode number) and one per response case holding all its
time steps, so a series is one file, not one per mode or frame. (`_Grid.write` writes a single
shape as VTU with meshio.)

Points: the model's nodes first, in model order (point i is node i), then the inner points of
each member in member order (VTU_POINTS - 2 per member, evenly spaced; fewer when the inner
points of all members would pass VTU_BUDGET, and none, straight members, beyond VTU_BUDGET
members: the files of large models stay close to their node count). Cells: the line segments
of each member's polyline, then one line cell per spring between nodes (from its node A to its
node B; a spring whose nodes coincide is a line of zero length). Point data `node` is the node's
index (-1 at inner points) and cell data `member` the member's index (-1 on a spring's cell);
a model with springs also has cell data `spring`, the spring's index (-1 on members' cells).
`names.csv` beside the files maps the indices to their names (VTU string arrays do not survive
meshio).
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from ..elements.interpolate import member_curves, points_per_member, prepare_curves
from ..model import Model

__all__ = ["MAX_TURN", "POINT_DATA_TYPE", "RESPONSE_FORMAT", "drawing_scale", "shape_scale", "write_mode_files",
           "write_response_files", "write_vtkhdf_series"]

MAX_TURN = 0.5       # rad: the largest section rotation a drawn shape shows (our choice)
VTU_POINTS = 5       # points along each member in the files: a cubic's bow shows at this count
VTU_BUDGET = 20_000  # inner points of all members in one file, at most (our choice)
RESPONSE_FORMAT = "vtkhdf"   # one file per modes or response case: VTKHDF 2 (HDF5) with its steps
# the point data of the VTKHDF files (shapes for viewers; the exact numbers are in results.json and
# the CSV tables): float32 keeps 7 significant digits, far finer than a pixel, and halves the files
# (the rack's two responses 2.68 -> 1.31 MB, gzip and shuffle both; gzip 9 instead of 4 saves under
# 1 % more; our measurement)
POINT_DATA_TYPE = np.float32


def shape_scale(model: Model, fraction: float = 0.05) -> float:
    """The length the largest translation of a drawn shape is scaled to: a fraction of the
    model's largest extent, m."""
    lo, hi = model.bounding_box()
    return fraction * float(max(np.max(hi - lo), 1e-9))


def drawing_scale(curves, shape: np.ndarray, length: float) -> float:
    """The factor a shape is drawn at: its largest translation along the members becomes
    `length`, unless its rotations (the members' section rotations and twist, the nodes'
    rotations) would then exceed MAX_TURN; then the largest rotation is drawn MAX_TURN. So a
    mode of big rotations and tiny translations shows its rotations and keeps its translations
    tiny instead of blowing them up into a sway. `curves` is member_curves of `shape`."""
    if length <= 0:
        return 0.0
    tr = float(np.abs(curves.disp).max(initial=0.0))
    rot = max(float(np.linalg.norm(curves.rot, axis=-1).max(initial=0.0)),
              float(np.abs(shape[..., 3:]).max(initial=0.0)))
    k = np.inf
    if tr > 0:
        k = length / tr
    if rot > 0:
        k = min(k, MAX_TURN / rot)
    return float(k) if np.isfinite(k) else 0.0


class _Grid:
    """The points and segments of the members' polylines (see the module notes)."""

    def __init__(self, model: Model, n_points: int | None = None):
        if n_points is None:
            n_points = points_per_member(model.n_members, VTU_POINTS, VTU_BUDGET)
        self.prepared = prepare_curves(model, n_points)
        n, e, q = model.n_nodes, model.n_members, max(int(n_points), 2)
        inner = n + np.arange(e * (q - 2)).reshape(e, q - 2)
        poly = np.c_[model.conn[:, :1], inner, model.conn[:, 1:]]                # (e, q)
        lines = np.stack([poly[:, :-1], poly[:, 1:]], axis=-1).reshape(-1, 2)
        member = np.repeat(np.arange(e, dtype=np.int32), q - 1)
        springs = model.node_springs
        s = 0 if springs is None else len(springs)
        self.lines = np.r_[lines, np.asarray(springs.nodes).reshape(s, 2)] if s else lines
        self.member = np.r_[member, np.full(s, -1, dtype=np.int32)]
        # cell data `spring`, only where the model has springs (files without them unchanged)
        self.cell_data = {"member": self.member}
        if s:
            self.cell_data["spring"] = np.r_[np.full(len(lines), -1), np.arange(s)].astype(np.int32)
        self.node = np.r_[np.arange(n), np.full(e * (q - 2), -1)].astype(np.int32)
        self.points = np.r_[model.coords, self.prepared.base[:, 1:-1].reshape(-1, 3)]
        self.model = model

    def curves(self, u: np.ndarray):
        return member_curves(self.model, u, prepared=self.prepared)

    def fields(self, u: np.ndarray, scale: float = 1.0, c=None) -> dict:
        """displacement and rotation (global) at every point for a node field u (n, 6), from
        its member curves `c` when they are at hand."""
        c = self.curves(u) if c is None else c
        return {"displacement": np.r_[u[:, :3], c.disp[:, 1:-1].reshape(-1, 3)] * scale,
                "rotation": np.r_[u[:, 3:], c.rot[:, 1:-1].reshape(-1, 3)] * scale}

    def write(self, path: Path, point_data: dict) -> None:
        import meshio

        data = {k: np.ascontiguousarray(v, dtype=float) for k, v in point_data.items()}
        data["node"] = self.node
        meshio.Mesh(self.points, [("line", self.lines)], point_data=data,
                    cell_data={k: [v] for k, v in self.cell_data.items()}).write(path, file_format="vtu")


def _write_names(folder: Path, model: Model) -> Path:
    path = folder / "names.csv"
    with path.open("w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["kind", "index", "name"])
        w.writerows(["node", i, n] for i, n in enumerate(model.node_names))
        w.writerows(["member", i, n] for i, n in enumerate(model.member_names))
        if model.node_springs is not None:
            w.writerows(["spring", i, n] for i, n in enumerate(model.node_springs.names))
    return path


def write_mode_files(folder: Path, model: Model, modal, length: float | None = None) -> list[Path]:
    """modes/<case>_modes.vtkhdf, every mode a step whose value is the mode number (1, 2, ...),
    and names.csv; each shape is drawn as in the pictures, along the members, at drawing_scale
    with `length` (default shape_scale(model)); returns the files."""
    length = shape_scale(model) if length is None else length
    folder.mkdir(parents=True, exist_ok=True)
    grid = _Grid(model)

    def scaled(j):
        s = modal.shapes[:, :, j]
        c = grid.curves(s)
        return grid.fields(s, drawing_scale(c, s, length), c)

    k = modal.shapes.shape[2]
    path = folder / f"{modal.name}_modes.{RESPONSE_FORMAT}"
    write_vtkhdf_series(path, grid, [float(j + 1) for j in range(k)], (scaled(j) for j in range(k)))
    return [path, _write_names(folder, model)]




def write_response_files(folder: Path, model: Model, name: str, t: np.ndarray, u_all: np.ndarray,
                         every: int = 1) -> list[Path]:
    """Deformed shapes over time, u_all (m, n, 6) true scale, every `every`-th step, along the
    members as for modes, as ONE file response/<name>.vtkhdf (VTKHDF 2.0, an unstructured grid
    whose time steps share one geometry: VTK-based viewers step through them) plus names.csv;
    returns the files."""
    folder.mkdir(parents=True, exist_ok=True)
    grid = _Grid(model)
    steps = range(0, len(t), every)
    path = folder / f"{name}.{RESPONSE_FORMAT}"
    write_vtkhdf_series(path, grid, [float(t[i]) for i in steps], (grid.fields(u_all[i]) for i in steps))
    return [path, _write_names(folder, model)]


def write_vtkhdf_series(path: Path, grid: _Grid, times: list[float], fields) -> None:
    """A transient VTKHDF 2.0 unstructured grid (docs.vtk.org, VTKHDF format specification,
    'Transient data'): the points and line cells written once as one part that every step
    reuses (Steps/PartOffsets 0), the point data of step i at rows i P .. (i + 1) P - 1
    (Steps/PointDataOffsets), the index arrays `node`, `member` (and `spring`) once (offset 0). `fields`
    yields a dict of (P, 3) arrays per time, stored as POINT_DATA_TYPE (float32), gzip-compressed
    with shuffle in chunks of one step; the points stay float64."""
    import h5py

    n_pts, n_cells, m = len(grid.points), len(grid.lines), len(times)
    with h5py.File(path, "w") as h5:
        root = h5.create_group("VTKHDF")
        root.attrs["Version"] = np.array([2, 0], dtype=np.int64)
        kind = "UnstructuredGrid".encode("ascii")
        root.attrs.create("Type", kind, dtype=h5py.string_dtype("ascii", len(kind)))
        for key, value in (("NumberOfPoints", n_pts), ("NumberOfCells", n_cells),
                           ("NumberOfConnectivityIds", 2 * n_cells)):
            root.create_dataset(key, data=np.array([value], dtype=np.int64))
        root.create_dataset("Points", data=np.ascontiguousarray(grid.points, dtype=float))
        root.create_dataset("Offsets", data=np.arange(0, 2 * n_cells + 1, 2, dtype=np.int64))
        root.create_dataset("Connectivity", data=grid.lines.ravel().astype(np.int64))
        root.create_dataset("Types", data=np.full(n_cells, 3, dtype=np.uint8))     # VTK_LINE
        pd, cd = root.create_group("PointData"), root.create_group("CellData")
        for key, v in grid.cell_data.items():
            cd.create_dataset(key, data=v)
        pd.create_dataset("node", data=grid.node)
        st = root.create_group("Steps")
        st.attrs["NSteps"] = np.int64(m)
        st.create_dataset("Values", data=np.asarray(times, dtype=float))
        for key in ("PartOffsets", "PointOffsets", "CellOffsets", "ConnectivityIdOffsets"):
            st.create_dataset(key, data=np.zeros(m, dtype=np.int64))
        st.create_dataset("NumberOfParts", data=np.ones(m, dtype=np.int64))
        pdo, cdo = st.create_group("PointDataOffsets"), st.create_group("CellDataOffsets")
        pdo.create_dataset("node", data=np.zeros(m, dtype=np.int64))
        for key in grid.cell_data:
            cdo.create_dataset(key, data=np.zeros(m, dtype=np.int64))
        out = {}
        for i, data in enumerate(fields):
            for key, v in data.items():
                if key not in out:
                    out[key] = pd.create_dataset(key, shape=(m * n_pts, 3), dtype=POINT_DATA_TYPE, compression="gzip",
                                                 chunks=(max(n_pts, 1), 3), shuffle=True)
                    pdo.create_dataset(key, data=np.arange(m, dtype=np.int64) * n_pts)
                out[key][i * n_pts:(i + 1) * n_pts] = np.asarray(v, dtype=POINT_DATA_TYPE)
