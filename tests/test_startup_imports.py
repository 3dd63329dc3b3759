"""What each entry point leaves out of sys.modules, so that a start-up gain cannot be lost by one
eager import (timings live in benchmarks/startup.py, never here). Each check runs in a fresh
interpreter: the test process itself has imported everything long ago."""

import json
import os
import subprocess
import sys
from pathlib import Path

from shared_decks import TINY_CANTILEVER

ROOT = Path(__file__).parents[1]

# libraries that no check needs: pictures, files for viewers, studies, threads, progress bars
NOT_FOR_A_CHECK = ("matplotlib", "pyvista", "vtk", "vtkmodules", "meshio", "h5py", "PIL", "imageio", "dask",
                   "distributed", "threadpoolctl", "tqdm", "pandas", "pyarrow", "plotly", "sympy")
# scipy submodules beyond what assembling and factoring K needs (sparse, sparse.linalg, linalg, csgraph)
SCIPY_UNUSED = ("scipy.signal", "scipy.spatial", "scipy.optimize", "scipy.integrate", "scipy.interpolate",
                "scipy.stats", "scipy.ndimage", "scipy.fft", "scipy.special")


def _loaded(code: str, tmp_path) -> set[str]:
    """The modules a fresh interpreter holds after running `code` in the repository's folder."""
    out = tmp_path / "modules.json"
    script = f"{code}\nimport json, sys\nopen({str(out)!r}, 'w').write(json.dumps(sorted(sys.modules)))\n"
    r = subprocess.run([sys.executable, "-c", script], cwd=ROOT, env=dict(os.environ, PYTHONPATH=str(ROOT)),
                       capture_output=True, text=True, timeout=300)
    assert r.returncode == 0, r.stderr
    return set(json.loads(out.read_text()))


def _heavy(loaded: set[str], tops=NOT_FOR_A_CHECK, subs=SCIPY_UNUSED) -> set[str]:
    return {m for m in loaded if m.split(".")[0] in tops or m.startswith(tuple(s for s in subs))}


def test_help_imports_no_numerical_library(tmp_path):
    loaded = _loaded("import contextlib, io\nfrom fem.cli import main\n"
                     "with contextlib.redirect_stdout(io.StringIO()):\n"
                     "    try:\n        main(['--help'])\n    except SystemExit:\n        pass", tmp_path)
    assert "fem.cli" in loaded                                     # the command did run
    assert _heavy(loaded, NOT_FOR_A_CHECK + ("numpy", "scipy", "lark"), ()) == set()


def test_a_check_of_the_rack_imports_nothing_it_does_not_use(tmp_path):
    loaded = _loaded("import contextlib, io\nfrom fem.cli import main\n"
                     "with contextlib.redirect_stdout(io.StringIO()):\n"
                     "    assert main(['check', 'decks/rack.deck']) == 0", tmp_path)
    assert {"scipy.sparse", "lark"} <= loaded                      # it did assemble and parse
    assert _heavy(loaded) == set()
    # nor the modules that solve cases, draw, write results or run studies
    assert {m for m in loaded if m.startswith(("fem.output.render", "fem.output.plots", "fem.output.report",
                                               "fem.output.vtk", "fem.study.engine", "fem.study.run",
                                               "fem.analysis.modes", "fem.analysis.recurrence"))} == set()


def test_solving_static_and_modes_cases_leaves_scipy_signal_out(tmp_path):
    # scipy.signal (about half a second of imports) serves time histories only: it is imported
    # where the recurrence filters a history, not when the module that holds it is imported
    loaded = _loaded(f"import fem\nr = fem.solve(fem.read_text({TINY_CANTILEVER!r}))\n"
                     "assert r['MODES'].shapes.shape[-1] == 2", tmp_path)
    assert "fem.analysis.recurrence" in loaded                     # the module is there, its import is not
    assert _heavy(loaded, ("matplotlib", "pyvista", "vtk", "dask", "distributed"), ("scipy.signal",)) == set()


def test_a_short_time_history_leaves_scipy_signal_out(tmp_path):
    # a history of up to SHORT_HISTORY steps is filtered without scipy.signal (0.37 s of imports),
    # to the bit of its lfilter (tests/test_recurrence.py)
    deck = TINY_CANTILEVER + ("case PULSE history { force B = (2 kN, 0, 0), time = halfsine(0.05 s), "
                              "duration = 1 s, step = 0.001 s, damping = 2 percent }\n")
    loaded = _loaded(f"import fem\nr = fem.solve(fem.read_text({deck!r}))\n"
                     "assert r['PULSE'].peak.max() > 0", tmp_path)
    assert "fem.analysis.recurrence" in loaded
    assert _heavy(loaded, ("matplotlib", "pyvista", "vtk", "dask", "distributed"), ("scipy.signal",)) == set()


def test_a_mistake_in_the_deck_is_reported_without_importing_scipy(tmp_path):
    # the checks' imports (scipy: about half of a check's) follow the reading of the deck
    deck = tmp_path / "slip.deck"
    deck.write_text("node A = (0, 0, 0)\nnode B = (1 m, 0, 0)\nmembr A B\n")
    loaded = _loaded("import contextlib, io\nfrom fem.cli import main\n"
                     "with contextlib.redirect_stdout(io.StringIO()), contextlib.redirect_stderr(io.StringIO()):\n"
                     f"    assert main(['check', {str(deck)!r}]) == 2", tmp_path)
    assert "fem.deck.reader" in loaded
    assert {m for m in loaded if m.split(".")[0] == "scipy"} == set()


def test_a_timed_check_reports_its_phases_on_stderr():
    # QUAVER_TIMING (benchmarks/startup.py): start-up apart from the check's own work
    r = subprocess.run([sys.executable, "-m", "fem", "check", "decks/rack.deck"], cwd=ROOT, capture_output=True,
                       text=True, timeout=300, env=dict(os.environ, PYTHONPATH=str(ROOT), QUAVER_TIMING="1"))
    assert r.returncode == 0, r.stderr
    line = [ln for ln in r.stderr.splitlines() if ln.startswith("quaver timing: ")]
    phases = dict(w.split("=") for w in line[0].split()[2:])
    assert list(phases) == ["startup_cpu", "startup_wall", "reading", "check_imports", "checks", "summary",
                            "total_cpu"]
    assert phases["startup_wall"] == "nan"                          # no launch time given
    assert 0 < float(phases["startup_cpu"]) < float(phases["total_cpu"])
    assert "quaver timing" not in r.stdout                          # the summary's text is unchanged
