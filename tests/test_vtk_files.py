"""Mode-shape and response files: VTU read back with meshio equals the results."""

import csv
import xml.etree.ElementTree as ET
from pathlib import Path

import meshio
import numpy as np

from fem.cli import main

MAST = Path(__file__).parents[1] / "decks" / "mast.deck"


def test_mode_vtu_round_trip(tmp_path):
    out = tmp_path / "m"
    assert main(["run", str(MAST), "--out", str(out), "--no-render"]) == 0
    rows = list(csv.DictReader((out / "mode_shapes.csv").open()))
    nodes = [r["node"] for r in rows if r["mode"] == "2"]
    shape = np.array([[float(r[d]) for d in ("ux", "uy", "uz", "rx", "ry", "rz")] for r in rows if r["mode"] == "2"])
    mesh = meshio.read(out / "modes" / "MODES_mode_002.vtu")
    # the file holds the mass-normalised shape times one scale factor chosen so the largest
    # translation is 5 % of the largest model extent (30 m mast -> 1.5 m)
    k = 1.5 / np.abs(shape[:, :3]).max()
    np.testing.assert_allclose(mesh.point_data["displacement"], shape[:, :3] * k, rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(mesh.point_data["rotation"], shape[:, 3:] * k, rtol=1e-12, atol=1e-15)
    assert len(mesh.points) == len(nodes) and mesh.cells[0].type == "line"
    pvd = ET.parse(out / "modes" / "MODES_modes.pvd").getroot()
    files = [d.get("file") for d in pvd.iter("DataSet")]
    assert files[1] == "MODES_mode_002.vtu" and all((out / "modes" / f).exists() for f in files)


def test_response_frames_start_from_the_release_shape(tmp_path):
    out = tmp_path / "m"
    assert main(["run", str(MAST), "--out", str(out), "--no-render"]) == 0
    first = meshio.read(out / "response" / "RELEASE_000000.vtu")
    disp = {r["node"]: float(r["ux"]) for r in csv.DictReader((out / "displacements.csv").open())
            if r["case"] == "ICEWIND"}
    # the modes retained (90 % mass target) represent the static deflection closely at the top
    top = [i for i, n in enumerate(disp) if n.startswith("P10_")]
    got = first.point_data["displacement"][top, 0]
    want = np.array([disp[n] for n in disp if n.startswith("P10_")])
    np.testing.assert_allclose(got, want, rtol=0.02)
