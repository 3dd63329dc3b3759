"""Mode-shape and response files: the modes and the response series read back with VTK's
VTKHDF reader (the one pyvista uses), step by step, equal the results."""

import csv
import gzip
import json
from pathlib import Path

import numpy as np
import pytest

from fem.cli import main
from fem.output.vtk import POINT_DATA_TYPE

# the files' point data are float32, correctly rounded from float64 (IEEE 754): within half a unit
# in the last place, eps / 2 = 2**-24 relative, of the value written
ROUND = float(np.finfo(POINT_DATA_TYPE).eps) / 2

MAST = Path(__file__).parents[1] / "decks" / "mast.deck"


def test_mode_file_round_trip(tmp_path):
    out = tmp_path / "m"
    assert main(["run", str(MAST), "--out", str(out), "--no-render"]) == 0
    rows = list(csv.DictReader((out / "mode_shapes.csv").open()))
    rows = [r for r in rows if r["case"] == "MODES"]        # the mast has a modes case under a preload too
    nodes = [r["node"] for r in rows if r["mode"] == "2"]
    shape = np.array([[float(r[d]) for d in ("ux", "uy", "uz", "rx", "ry", "rz")] for r in rows if r["mode"] == "2"])
    # one file for the case, every mode a step numbered by the mode (no file per mode)
    assert sorted(p.name for p in (out / "modes").iterdir()) == ["LOADED_modes.vtkhdf", "MODES_modes.vtkhdf",
                                                                  "names.csv"]
    steps, disp = _frames(out / "modes", "MODES_modes")
    _, rot = _frames(out / "modes", "MODES_modes", "rotation")
    count = len({r["mode"] for r in rows})
    assert steps.tolist() == [float(j + 1) for j in range(count)]
    # the file holds the mass-normalised shape times one scale factor chosen so the largest
    # translation is 5 % of the largest model extent (30 m mast -> 1.5 m); a sway's largest
    # translation is at a node; the nodes are the first points, in model order
    n = len(nodes)
    k = 1.5 / np.abs(shape[:, :3]).max()
    np.testing.assert_allclose(disp[1][:n], shape[:, :3] * k, rtol=ROUND + 1e-12, atol=1e-15)
    np.testing.assert_allclose(rot[1][:n], shape[:, 3:] * k, rtol=ROUND + 1e-12, atol=1e-15)
    for j in range(count):          # every mode is there, each drawn at its own scale
        want = np.array([[float(r[d]) for d in ("ux", "uy", "uz")] for r in rows if r["mode"] == str(j + 1)])
        k_j = (disp[j][:n] * want).sum() / (want * want).sum()      # the scale it is drawn at
        assert k_j > 0
        # the file's rounding twice: in each value and, at most, in the scale fitted to them
        np.testing.assert_allclose(disp[j][:n], want * k_j, rtol=2 * ROUND + 1e-9, atol=1e-12 * np.abs(disp[j]).max())
    import pyvista as pv

    mesh = pv.read(out / "modes" / "MODES_modes.vtkhdf")         # pyvista opens it (at the first mode)
    np.testing.assert_array_equal(mesh.point_data["node"][:n], np.arange(n))
    assert (mesh.point_data["node"][n:] == -1).all() and (mesh.celltypes == 3).all()      # VTK_LINE
    # every member is a polyline of 4 segments through 3 inner points
    members = mesh.cell_data["member"]
    assert mesh.n_points == n + 3 * (members.max() + 1) and np.bincount(members).tolist() == [4] * (members.max() + 1)
    names = list(csv.DictReader((out / "modes" / "names.csv").open()))
    assert [r["name"] for r in names if r["kind"] == "node"] == nodes


def test_response_frames_start_from_the_release_shape(tmp_path):
    out = tmp_path / "m"
    assert main(["run", str(MAST), "--out", str(out), "--no-render"]) == 0
    first = _frames(out / "response", "RELEASE")[1][0]
    disp = {r["node"]: float(r["ux"]) for r in csv.DictReader((out / "displacements.csv").open())
            if r["case"] == "ICEWIND"}
    # the modes retained (90 % mass target) represent the static deflection closely at the top
    top = [i for i, n in enumerate(disp) if n.startswith("P10_")]
    got = first[top, 0]
    want = np.array([disp[n] for n in disp if n.startswith("P10_")])
    np.testing.assert_allclose(got, want, rtol=0.02)


RACK = Path(__file__).parents[1] / "decks" / "rack.deck"


def _frames(folder: Path, name: str, field: str = "displacement"):
    """Times and point data of every step of the response file <name>.vtkhdf, read by VTK's own
    reader (vtkHDFReader), step by step as a viewer does."""
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkCommonExecutionModel import vtkStreamingDemandDrivenPipeline
    from vtkmodules.vtkIOHDF import vtkHDFReader

    reader = vtkHDFReader()
    reader.SetFileName(str(folder / f"{name}.vtkhdf"))
    reader.UpdateInformation()
    times = reader.GetOutputInformation(0).Get(vtkStreamingDemandDrivenPipeline.TIME_STEPS())
    out = []
    for t in times:
        reader.UpdateTimeStep(t)
        out.append(vtk_to_numpy(reader.GetOutput().GetPointData().GetArray(field)).copy())
    return np.array(times), out


def _series(path: Path):
    """time -> node -> (ux, uy, uz, rx, ry, rz) from a free_/history_ table (gzip-compressed CSV)."""
    out = {}
    for r in csv.DictReader(gzip.open(path, "rt", newline="")):
        out.setdefault(float(r["time_s"]), {})[r["node"]] = [float(r[d]) for d in ("ux", "uy", "uz", "rx", "ry", "rz")]
    return out


def _check_against_csv(out: Path, case: dict) -> int:
    """The response file's frames hold, at the recorded nodes, the CSV's time series at the same
    times (both are the superposed modal response; only the order of the sums differs)."""
    kind = "free" if case["kind"] == "free" else "history"
    series = _series(out / f"{kind}_{case['name']}.csv.gz")
    t, disp = _frames(out / "response", case["name"])
    _, rot = _frames(out / "response", case["name"], "rotation")
    names = {n: i for i, n in enumerate(case["peaks"])}        # results.json lists nodes in model order
    scale = case["peak_translation_m"]
    checked = 0
    for k, tk in enumerate(t):
        row = series[min(series, key=lambda x: abs(x - tk))]
        for node, vals in row.items():
            i = names[node]
            # the table's numbers have 9 significant digits (within 5e-9 of the value), the
            # file's float32 (ROUND)
            np.testing.assert_allclose(disp[k][i], vals[:3], rtol=ROUND + 6e-9, atol=1e-12 * scale)
            np.testing.assert_allclose(rot[k][i], vals[3:], rtol=ROUND + 6e-9, atol=1e-12)
            checked += 1
    return checked


def test_response_frames_hold_the_peak_and_follow_the_modes(tmp_path):
    """Every free and history response: one frame is the step of the largest translation
    (equal to results.json's peak to rounding), and frames are at most 1/8 of the shortest
    period among the modes that matter apart, or 200 spread over the run."""
    from fem.analysis.free_case import ANIMATED, FRAMES_PER_PERIOD, MAX_FRAMES

    seen = 0
    for deck in (RACK, MAST):
        out = tmp_path / deck.stem
        assert main(["run", str(deck), "--out", str(out), "--no-render"]) == 0
        doc = json.loads((out / "results.json").read_text())
        for case in doc["cases"]:
            if case["kind"] not in ("free", "history"):
                continue
            seen += 1
            assert _check_against_csv(out, case) >= 3 * 50       # recorded nodes x frames
            t, disp = _frames(out / "response", case["name"])
            n = len(case["peaks"])
            top = [float(np.abs(d[:n]).max()) for d in disp]       # at the nodes (the first points)
            # same products in another order (a few float64 ulps), then the file's float32
            np.testing.assert_allclose(max(top), case["peak_translation_m"], rtol=ROUND + 1e-12)
            k = int(np.argmax(top))
            node = max(case["peaks"].items(), key=lambda kv: max(map(abs, kv[1]["value"][:3])))[1]
            d = int(np.argmax(np.abs(node["value"][:3])))
            assert t[k] == pytest.approx(node["time_s"][d], abs=1e-12)
            assert len(t) <= MAX_FRAMES + 2 and t[0] == 0.0
            assert t[-1] == pytest.approx(case["duration_s"])
            step = np.diff(t)
            modes = next(c for c in doc["cases"] if c["kind"] == "modes")
            shortest = min(modes["period_s"])
            # either resolving the shortest retained period, or capped at the frame budget
            assert step.max() <= max(shortest / FRAMES_PER_PERIOD * 1.0001 + 1e-12,
                                     case["duration_s"] / (MAX_FRAMES - ANIMATED - 1) * 1.5)
    assert seen == 3                       # SURGE, QUAKE, RELEASE


def test_frame_spacing_from_the_modes():
    """Synthetic modal motion: a 0.1 s mode that matters sets 8 frames a period; a 0.01 s
    mode with 0.1 % of the motion does not; the cap spreads frames evenly."""
    from fem.analysis.free_case import frame_indices

    t = np.arange(0, 1.0005, 0.001)
    omega = 2 * np.pi / np.array([0.1, 0.01])
    q = np.c_[np.sin(omega[0] * t), 1e-3 * np.sin(omega[1] * t)]
    shapes = np.ones((3, 6, 2))
    idx, _ = frame_indices(t, q, shapes, omega, 503)
    assert 503 in idx and idx[0] == 0 and idx[-1] == len(t) - 1
    assert np.diff(idx).max() == 12          # floor(0.1 / 8 / 0.001)
    q[:, 1] *= 100                           # now the 0.01 s mode matters: every step, capped
    idx, shown = frame_indices(t, q, shapes, omega, 503, cap=50, animated=10)
    # 39 spread over the run (1000 steps in 26s), the 10 the animation plays, the last
    assert np.isin(np.arange(0, len(t), 26), idx).all() and len(idx) <= 50


@pytest.mark.parametrize("peak", [0, 7, 3001, 5995, 6000])
def test_an_animation_plays_every_mode_at_its_own_speed(peak):
    """A long run (12 s at 2 ms) of a 3.5 Hz mode with a 13.5 Hz one at 3 % of its motion: the
    animation plays ANIMATED frames in a row, the peak's among them, at one spacing giving the
    largest mode 8 frames a period and the 13.5 Hz one at least NO_ALIAS (over 2: by the
    sampling theorem no mode then shows as a slower motion that is not there); they are kept
    frames. Spread over the run at the frame cap instead (as before), 13.5 Hz would have had a
    frame every 0.08 s: 0.9 a period, drawn as a slow drift."""
    from fem.analysis.free_case import ANIMATED, FRAMES_PER_PERIOD, MAX_FRAMES, NO_ALIAS, frame_indices

    t = np.arange(0, 12.0005, 0.002)
    f = np.array([3.5, 13.5])
    q = np.c_[np.sin(2 * np.pi * f[0] * t), 0.03 * np.sin(2 * np.pi * f[1] * t)]
    kept, shown = frame_indices(t, q, np.ones((3, 6, 2)), 2 * np.pi * f, peak)
    played = kept[shown]
    assert len(played) == ANIMATED and peak in played and len(kept) <= MAX_FRAMES + 2
    gap = np.diff(t[played])
    np.testing.assert_allclose(gap, gap[0], atol=1e-12)
    assert 1 / (f[1] * gap[0]) >= NO_ALIAS and 1 / (f[0] * gap[0]) >= FRAMES_PER_PERIOD
    # not the time step: the frames span several cycles of the largest mode (4.96 here)
    assert t[played[-1]] - t[played[0]] >= 4 / f[0]


def test_a_short_run_is_played_whole():
    # 0.3 s of a 2 Hz mode: a frame every 6 steps (floor(0.5 s / 8 / 0.01 s)), from the start
    from fem.analysis.free_case import frame_indices

    t = np.arange(0, 0.3005, 0.01)
    q = np.sin(2 * np.pi * 2.0 * t)[:, None]
    kept, shown = frame_indices(t, q, np.ones((2, 6, 1)), np.array([4 * np.pi]), 12)
    np.testing.assert_array_equal(kept[shown], np.arange(0, len(t), 6))


ISOLATED = Path(__file__).parents[1] / "decks" / "fanframe-isolated.deck"


def test_springs_between_nodes_are_line_cells(tmp_path):
    # The isolators of the fan frame are in the modes file as line cells from node A to node B,
    # marked by cell data `spring` (their index, -1 on members) and `member` = -1, named in
    # names.csv, and read back by VTK's own reader (pyvista) with the members' cells.
    import pyvista as pv

    from fem import read_deck

    out = tmp_path / "m"
    # exit status 1: the deck's resonance check fails by design (its modes sit in the fan's ranges)
    assert main(["run", str(ISOLATED), "--out", str(out), "--no-render", "--case", "MODES"]) in (0, 1)
    assert (out / "modes" / "MODES_modes.vtkhdf").exists()
    model = read_deck(ISOLATED)
    sp = model.node_springs
    mesh = pv.read(out / "modes" / "MODES_modes.vtkhdf")
    spring, member = mesh.cell_data["spring"], mesh.cell_data["member"]
    is_spring = spring >= 0
    assert is_spring.sum() == len(sp) == 4 and (member[is_spring] == -1).all()
    assert (member[~is_spring] >= 0).all() and (spring[~is_spring] == -1).all()
    assert (mesh.celltypes == 3).all()                                          # VTK_LINE
    conn = mesh.cells.reshape(-1, 3)[:, 1:]                                     # (2, a, b) per line
    np.testing.assert_array_equal(conn[is_spring][np.argsort(spring[is_spring])], sp.nodes)
    # a spring's end points are its nodes' points (point i is node i)
    np.testing.assert_allclose(mesh.points[sp.nodes[:, 1]], model.coords[sp.nodes[:, 1]])
    names = [r for r in csv.DictReader((out / "modes" / "names.csv").open()) if r["kind"] == "spring"]
    assert [r["name"] for r in names] == list(sp.names)
    # a model without springs writes no `spring` array (its files as before)
    out2 = tmp_path / "r"
    assert main(["run", str(RACK), "--out", str(out2), "--no-render"]) == 0
    for f in (out2 / "modes").glob("*.vtkhdf"):
        assert "spring" not in pv.read(f).cell_data
