"""Less output, same information: a response time series is ONE file per case (VTKHDF with its
time steps, read back here by VTK's own reader, as a viewer reads it), and `write` chooses what
a results folder holds (tables; tables and files for viewers; everything)."""

import numpy as np
import pytest
from shared_decks import PIPE_ARM

import fem
from fem.cli import _parser, main
from fem.output.vtk import POINT_DATA_TYPE
from fem.output.write import WRITE_CHOICES, write_results

# a cantilever pipe with an arm and a head mass (our own scenario), five modes, a half-sine
# pulse on the head and the free vibration it would leave from a static push
DECK = PIPE_ARM + """case MODES modes { count = 5 }
case PUSH static { force H = (0, 2 kN, 0) }
case KICK history { force H = (0, 2 kN, -3 kN), time = halfsine(0.15 s), duration = 0.6 s, step = 0.002 s,
                    damping = 2 percent, record = "*" }
case LET free { modes = MODES, start = PUSH, duration = 0.5 s, step = 0.002 s, damping = 2 percent }
"""


def read_series(path, field="displacement"):
    """Times and the point-data array `field` of every step of a VTKHDF file, by vtkHDFReader
    (VTK, the library the viewers are built on), one step after the other."""
    from vtkmodules.util.numpy_support import vtk_to_numpy
    from vtkmodules.vtkCommonExecutionModel import vtkStreamingDemandDrivenPipeline
    from vtkmodules.vtkIOHDF import vtkHDFReader

    reader = vtkHDFReader()
    reader.SetFileName(str(path))
    reader.UpdateInformation()
    times = reader.GetOutputInformation(0).Get(vtkStreamingDemandDrivenPipeline.TIME_STEPS())
    out = []
    for t in times:
        reader.UpdateTimeStep(t)
        out.append(vtk_to_numpy(reader.GetOutput().GetPointData().GetArray(field)).copy())
    return np.array(times), out, reader.GetOutput()


@pytest.fixture(scope="module")
def solved():
    return fem.solve(fem.read_text(DECK))


def test_one_file_per_response_case_holds_every_frame(solved, tmp_path):
    write_results(solved, tmp_path / "out", write="viewers")
    response = tmp_path / "out" / "response"
    assert sorted(p.name for p in response.iterdir()) == ["KICK.vtkhdf", "LET.vtkhdf", "names.csv"]
    n = solved.model.n_nodes
    for name in ("KICK", "LET"):
        r = solved[name]
        t, disp, grid = read_series(response / f"{name}.vtkhdf")
        _, rot, _ = read_series(response / f"{name}.vtkhdf", "rotation")
        # one step per animation frame, at the frame times; the nodes are the first points and
        # hold the solved frames rounded to float32 (POINT_DATA_TYPE, the files are for viewers)
        # exactly: no arithmetic between the solve and the file
        assert len(t) == len(r.frame_t) >= 10
        np.testing.assert_array_equal(t, r.frame_t)
        assert disp[0].dtype == rot[0].dtype == POINT_DATA_TYPE
        for k in range(len(t)):
            np.testing.assert_array_equal(disp[k][:n], r.frames[k, :, :3].astype(POINT_DATA_TYPE))
            np.testing.assert_array_equal(rot[k][:n], r.frames[k, :, 3:].astype(POINT_DATA_TYPE))
        # the geometry once for all steps: nodes first, then 3 inner points of each member
        assert grid.GetNumberOfPoints() == n + 3 * solved.model.n_members
        assert grid.GetNumberOfCells() == 4 * solved.model.n_members
        np.testing.assert_array_equal(np.asarray(grid.GetPoints().GetData())[:n], solved.model.coords)


def test_series_equals_the_recorded_history(solved, tmp_path):
    """The frames are the superposed modal response at the frame times; the history case
    records the same response at every step (record = "*"): equal to rounding (the same sums in
    another order, 1e-9 relative is many orders above it; the file's float32 adds at most half
    its unit in the last place, 2**-24 relative)."""
    write_results(solved, tmp_path / "out", write="viewers")
    r = solved["KICK"]
    t, disp, _ = read_series(tmp_path / "out" / "response" / "KICK.vtkhdf")
    n = solved.model.n_nodes
    scale = np.abs(r.u).max()
    for k, tk in enumerate(t):
        i = int(np.argmin(np.abs(r.t - tk)))
        assert r.t[i] == pytest.approx(tk, abs=1e-12)
        np.testing.assert_allclose(disp[k][:n], r.u[i][:, :3], rtol=2.0**-24 + 1e-9, atol=1e-12 * scale)


def test_write_choice_decides_what_the_folder_holds(solved, tmp_path):
    folders = {}
    for choice in WRITE_CHOICES:
        out = tmp_path / choice
        write_results(solved, out, render=False, write=choice)
        folders[choice] = {p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file()}
    tables = folders["tables"]
    assert "results.json" in tables and "displacements.csv" in tables and "history_KICK.csv.gz" in tables
    assert not any(f.startswith(("modes/", "response/", "plots/", "pictures/")) for f in tables)
    assert "report.html" not in tables
    viewers = folders["viewers"] - tables
    assert "response/KICK.vtkhdf" in viewers and "modes/MODES_modes.vtkhdf" in viewers
    assert "report.html" not in viewers and not any(f.startswith(("plots/", "pictures/")) for f in viewers)
    assert tables <= folders["viewers"] <= folders["all"]
    assert "report.html" in folders["all"]
    # the same results.json whatever is written
    docs = {c: (tmp_path / c / "results.json").read_text() for c in WRITE_CHOICES}
    assert docs["tables"] == docs["viewers"]


def test_write_choice_on_the_command_line(tmp_path, capsys):
    deck = tmp_path / "d.deck"
    deck.write_text(DECK)
    assert main(["run", str(deck), "--out", str(tmp_path / "o"), "--write", "tables"]) == 0
    out = capsys.readouterr().out
    assert "not written (--write tables)" in out
    assert not (tmp_path / "o" / "response").exists() and (tmp_path / "o" / "results.json").exists()
    # the CLI offers exactly the choices write_results takes
    run = next(a for a in _parser()._subparsers._group_actions[0].choices["run"]._actions if a.dest == "write")
    assert tuple(run.choices) == WRITE_CHOICES and run.default == "all"


def test_unknown_write_choice_is_refused(solved, tmp_path):
    with pytest.raises(ValueError, match="tables, viewers, all"):
        write_results(solved, tmp_path / "x", write="pictures")
    assert not (tmp_path / "x").exists()


def test_rerun_with_less_written_leaves_no_stale_files(solved, tmp_path):
    # the folder holds what the last run wrote: viewer files of an earlier run do not linger
    # beside tables that no longer match them
    out = tmp_path / "out"
    write_results(solved, out, write="viewers")
    assert (out / "response" / "KICK.vtkhdf").exists()
    write_results(solved, out, write="tables")
    assert not (out / "response").exists() and not (out / "modes").exists()
    assert (out / "results.json").exists()
