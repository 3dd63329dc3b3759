"""Bounded memory and time: the memory limit is the tightest of MemAvailable, the cgroup limits
and the rlimits; history, free, harmonic and modes cases are refused before their expensive
step when an estimate does not fit or a table would pass the row limit, with the estimate, the
limit and what to change. No test allocates much: limits are replaced by small ones, and the
estimates are compared with peaks measured by tracemalloc (numpy reports its buffers to it)."""

import resource
import subprocess
import sys
import tracemalloc
from pathlib import Path

import numpy as np
import pytest

import fem.analysis.memory as mem
import fem.analysis.modes as modes_mod
from fem import solve
from fem.analysis.free_case import free_bytes, solve_free_case
from fem.analysis.harmonic import solve_harmonic_case, sweep_bytes
from fem.analysis.history_case import history_bytes, solve_history_case
from fem.analysis.modal_case import solve_modes_case
from fem.assembly import assemble
from fem.deck.reader import read_text
from fem.errors import ModelError

ROOT = Path(__file__).parents[1]
GiB = 2 ** 30


# ---- the limit ----------------------------------------------------------------------------

def _fake_proc(tmp_path, mountinfo: str, cgroup: str, meminfo_kb: int = 10 * 2**20, status: str = ""):
    proc = tmp_path / "proc"
    (proc / "self").mkdir(parents=True)
    (proc / "self" / "mountinfo").write_text(mountinfo)
    (proc / "self" / "cgroup").write_text(cgroup)
    (proc / "self" / "status").write_text(status)
    (proc / "meminfo").write_text(f"MemTotal: {2 * meminfo_kb} kB\nMemAvailable: {meminfo_kb} kB\n")
    return str(proc)


def _no_rlimit(monkeypatch):
    monkeypatch.setattr(resource, "getrlimit", lambda kind: (resource.RLIM_INFINITY, resource.RLIM_INFINITY))


def test_cgroup_v2_tightest_level_up_the_hierarchy(tmp_path, monkeypatch):
    cg = tmp_path / "cg"
    job = cg / "user" / "job"
    job.mkdir(parents=True)
    (job / "memory.max").write_text(f"{GiB}\n")
    (job / "memory.current").write_text(f"{GiB // 4}\n")              # 768 MiB free here
    (cg / "user" / "memory.max").write_text(f"{GiB // 2}\n")
    (cg / "user" / "memory.current").write_text(f"{GiB // 2 - 2**25}\n")  # 32 MiB free above
    (cg / "memory.max").write_text("max\n")                             # no limit at the root
    proc = _fake_proc(tmp_path, f"30 23 0:26 / {cg} rw,nosuid - cgroup2 cgroup2 rw,nsdelegate\n",
                      "0::/user/job\n")
    free = sorted(b for b, _ in mem.cgroup_free(proc))
    assert free == [2**25, 3 * GiB // 4]
    _no_rlimit(monkeypatch)
    have, source = mem.memory_limit(proc)
    assert have == 2**25 and "cgroup v2" in source and "user/memory.max" in source


def test_cgroup_v1_memory_hierarchy_below_its_mounted_root(tmp_path, monkeypatch):
    # the mount shows the hierarchy from /outer down, so /outer/job lives at <mount>/job;
    # v1 writes 'no limit' as a number near 2^63
    m = tmp_path / "memory"
    (m / "job").mkdir(parents=True)
    (m / "job" / "memory.limit_in_bytes").write_text("9223372036854771712\n")
    (m / "job" / "memory.usage_in_bytes").write_text("5124096\n")
    (m / "memory.limit_in_bytes").write_text(f"{2 * GiB}\n")
    (m / "memory.usage_in_bytes").write_text(f"{3 * GiB // 2}\n")
    proc = _fake_proc(tmp_path, f"35 31 0:32 /outer {m} rw,relatime - cgroup cgroup rw,memory\n"
                                f"36 31 0:33 / {tmp_path}/cpu rw - cgroup cgroup rw,cpu\n",
                      "5:cpu:/\n4:memory:/outer/job\n0::/\n")
    assert mem.cgroup_free(proc) == [(GiB // 2, f"cgroup v1 limit 2.0 GiB ({m}/memory.limit_in_bytes)")]
    _no_rlimit(monkeypatch)
    assert mem.memory_limit(proc)[0] == GiB // 2


def test_machine_memory_when_no_cgroup_limit(tmp_path, monkeypatch):
    proc = _fake_proc(tmp_path, "", "0::/\n", meminfo_kb=123456)
    _no_rlimit(monkeypatch)
    assert mem.memory_limit(proc) == (123456 * 1024, "memory available on the machine")


def test_rlimit_data_counts_what_is_in_use(tmp_path, monkeypatch):
    proc = _fake_proc(tmp_path, "", "0::/\n", status="VmSize:\t 4000000 kB\nVmData:\t  102400 kB\n")
    real = resource.getrlimit
    monkeypatch.setattr(resource, "getrlimit", lambda kind: (GiB, GiB) if kind == resource.RLIMIT_DATA
                        else (resource.RLIM_INFINITY, resource.RLIM_INFINITY) if kind == resource.RLIMIT_AS
                        else real(kind))
    have, source = mem.memory_limit(proc)
    assert have == GiB - 100 * 2**20
    assert source.startswith("RLIMIT_DATA (ulimit -d) 1.0 GiB, of which 100 MiB in use")


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_ulimit_v_is_seen_by_a_real_process():
    # a child under RLIMIT_AS = 3 GiB: its limit is at most that, and the rlimit sets it
    code = "from fem.analysis.memory import memory_limit; b, s = memory_limit(); print(b); print(s)"

    def cap():
        resource.setrlimit(resource.RLIMIT_AS, (3 * GiB, 3 * GiB))

    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT,
                       preexec_fn=cap, timeout=120)
    assert r.returncode == 0, r.stderr
    have, source = r.stdout.splitlines()
    assert 0 < int(have) <= 3 * GiB
    if int(have) < 3 * GiB - 2**20:   # unless the machine or a cgroup is tighter still
        assert source.startswith("RLIMIT_AS (ulimit -v) 3.0 GiB")


def test_factor_refusal_names_the_limit(monkeypatch):
    A = __import__("scipy.sparse", fromlist=["x"]).identity(50, format="csc")
    monkeypatch.setattr(mem, "cgroup_free", lambda proc="/proc": [(10, "cgroup v2 limit 1 KiB (test)")])
    with pytest.raises(ModelError, match=r"only 0\.0 GiB is free \(set by: cgroup v2 limit 1 KiB \(test\)\)"):
        mem.check_factor_memory(A * 1e6, "static solve")


def test_check_memory_message(monkeypatch):
    monkeypatch.setattr(mem, "available_bytes", lambda: 3 * 2**20)
    with pytest.raises(ModelError) as e:
        mem.check_memory(1.5 * GiB, "case H: the time history", "use a longer step")
    assert str(e.value) == ("case H: the time history needs an estimated 1.5 GiB, more than the 3 MiB this "
                            "process can still use (set by: the limit given); use a longer step")
    assert mem.check_memory(2**20, "x", "y") == 3 * 2**20


# ---- history and free cases ----------------------------------------------------------------

MAST = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..8 { node N[i] = (0, 0, i*0.75 m) }
for i in 0..7 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
mass N8 = 300 kg
case TIP static { force N8 = (2 kN, 0, 0) }
case MODES modes { count = 8 }
case H history { force N8 = (1 kN, 0, 0), time = halfsine(0.05 s), duration = 4 s, step = 0.0002 s,
                 damping = 2 percent }
case REL free { start = TIP, duration = 4 s, step = 0.0002 s, damping = 2 percent }
"""


@pytest.fixture(scope="module")
def mast():
    m = read_text(MAST)
    asm = assemble(m)
    modal = solve_modes_case(m, asm, m.cases[1])
    return m, asm, modal


def _peak(fn):
    tracemalloc.start()
    try:
        fn()
        return tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()


def test_history_estimate_bounds_the_measured_peak(mast):
    import scipy.signal  # noqa: F401 - imported first: its import (past SHORT_HISTORY steps) is not the case's memory

    m, asm, modal = mast
    case = m.cases[2]
    peak = _peak(lambda: solve_history_case(m, asm, case, modal))
    est = history_bytes(20001, 8, 1, 9)
    # an upper estimate, but of the right size (the arrays named in history_bytes)
    assert peak <= est <= 3 * peak, (peak, est)


def test_free_estimate_bounds_the_measured_peak(mast):
    m, asm, modal = mast
    start = np.zeros((m.n_nodes, 6))
    start[8, 0] = 0.01
    peak = _peak(lambda: solve_free_case(m, asm, m.cases[3], modal, start))
    est = free_bytes(20001, 8, 9)
    assert peak <= est <= 3 * peak, (peak, est)


def test_history_refused_with_the_estimate(mast, monkeypatch):
    m, asm, modal = mast
    monkeypatch.setattr(mem, "available_bytes", lambda: 10 * 2**20)
    est = history_bytes(20001, 8, 1, 9)
    with pytest.raises(ModelError) as e:
        solve_history_case(m, asm, m.cases[2], modal)
    msg = str(e.value)
    assert msg.startswith("case H: the time history of 20,001 steps x 8 modes x 9 recorded nodes needs "
                          f"an estimated {mem.gib(est)}, more than the 10 MiB this process can still use")
    assert "longer step" in msg and "fewer modes (count or fmax of MODES)" in msg and "record fewer" in msg


def test_free_refused_with_the_estimate(mast, monkeypatch):
    m, asm, modal = mast
    monkeypatch.setattr(mem, "available_bytes", lambda: 10 * 2**20)
    with pytest.raises(ModelError, match=r"case REL: the free vibration of 20,001 steps x 8 modes x 9 recorded "
                                         r"nodes needs an estimated \d+ MiB, more than the 10 MiB .*longer step"):
        solve_free_case(m, asm, m.cases[3], modal, np.zeros((m.n_nodes, 6)))


def test_history_refused_in_a_run_located_at_the_case(monkeypatch):
    monkeypatch.setattr(mem, "available_bytes", lambda: 2**20)
    with pytest.raises(ModelError, match=r"^deck\.deck:10:1: case H: the time history .* needs an estimated"):
        solve(read_text(MAST.replace("case REL", "# case REL"), "deck.deck"))


# ---- harmonic sweeps -------------------------------------------------------------------------

PORTAL = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (4 m, 0, 0)
node C = (8 m, 0, 0)
node A2 = (0, 0, 3 m)
node B2 = (4 m, 0, 3 m)
node C2 = (8 m, 0, 3 m)
member CA : A -> A2 beam P S
member CB : B -> B2 beam P S
member CC : C -> C2 beam P S
member G1 : A2 -> B2 beam P S
member G2 : B2 -> C2 beam P S
support A fixed
support B fixed
support C fixed
mass B2 = 500 kg
case MODES modes { count = 6 }
case F harmonic { force B2 = (1 kN, 0, 0), from = 1 Hz, to = 100 Hz, points = %d,
                  damping = 2 percent, record = "B2" }
"""


def _sweep(points):
    m = read_text(PORTAL % points, "deck.deck")
    asm = assemble(m)
    modal = solve_modes_case(m, asm, m.cases[0])
    return m, asm, modal


def test_sweep_counts_the_reaction_rows(monkeypatch):
    import fem.analysis.harmonic as harmonic

    m, asm, modal = _sweep(200)
    h = solve_harmonic_case(m, asm, m.cases[1], modal)
    n = len(h.freq)                     # 200 points and those added around the modes in the band
    assert len(h.support) == 3 and len(h.record) == 1
    # the recorded node's table fits, the supports' table (3 rows a frequency) does not
    monkeypatch.setattr(harmonic, "ROWS_LIMIT", 2 * n)
    with pytest.raises(ModelError) as e:
        solve_harmonic_case(m, asm, m.cases[1], modal)
    assert str(e.value) == (f"case F: the sweep's table at its supported or sprung nodes would have {n:,} "
                            f"frequencies x 3 nodes = {3 * n:,} rows, above the limit of {2 * n:,}; use fewer "
                            f"points (at most {2 * n // 3:,} frequencies for 3 nodes, counting the points added "
                            "around each resonance in the band)")


def test_sweep_member_table_warning_has_the_true_numbers(monkeypatch):
    import fem.analysis.harmonic as harmonic

    m, asm, modal = _sweep(200)
    n = len(solve_harmonic_case(m, asm, m.cases[1], modal).freq)
    monkeypatch.setattr(harmonic, "ROWS_LIMIT", 5 * n)   # node and supports fit; 3 members x 2 ends do not
    h = solve_harmonic_case(m, asm, m.cases[1], modal)
    assert h.member_forces is None
    w = [str(x) for x in h.warnings if "end-force table" in x.text]
    assert len(w) == 1
    assert (f"would have {n:,} frequencies x 3 members x 2 ends = {6 * n:,} rows, above the limit of {5 * n:,}, "
            f"and is not written; record fewer nodes (so that at most {5 // 2} members") in w[0]


def test_sweep_memory_estimate_bounds_the_peak_and_refuses(monkeypatch):
    m, asm, modal = _sweep(20000)
    case = m.cases[1]
    h = None

    def run():
        nonlocal h
        h = solve_harmonic_case(m, asm, case, modal)

    peak = _peak(run)
    est = sweep_bytes(len(h.freq), 6, 1, 3, 3)
    assert peak <= est <= 3 * peak, (peak, est)
    monkeypatch.setattr(mem, "available_bytes", lambda: 2**20)
    with pytest.raises(ModelError, match=rf"case F: the sweep of {len(h.freq):,} frequencies x 6 modes \(1 recorded "
                                         r"nodes, 3 supports, 3 members written\) needs an estimated .*fewer points"):
        solve_harmonic_case(m, asm, case, modal)


# ---- modes cases -----------------------------------------------------------------------------

CHAIN = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..20 { node N[i] = (i*1 m, 0, 0) }
for i in 0..19 { member M[i] : N[i] -> N[i+1] beam P S }
support N0 fixed
case MODES modes { %s }
"""           # 120 free DOFs, all with mass


@pytest.fixture
def small_limits(monkeypatch):
    """The dense and Lanczos limits of a big model, scaled to the 120-DOF chain: dense eigen solves
    above 50 DOFs are 'large', above 100 refused; Lanczos finds at most 6 modes (120 x 6^2 = 4320)."""
    monkeypatch.setattr(modes_mod, "DENSE_LIMIT", 50)
    monkeypatch.setattr(modes_mod, "DENSE_MAX", 100)
    monkeypatch.setattr(modes_mod, "LANCZOS_WORK", 4320)


def test_count_of_every_mode_on_a_large_model_is_refused(small_limits):
    with pytest.raises(ModelError) as e:
        solve(read_text(CHAIN % "count = 1000000000", "deck.deck"))
    msg = str(e.value)
    assert msg.startswith("deck.deck:7:1: count = 1000000000 asks for all of the 120 modes, which only a dense "
                          "solve finds: for 120 free DOFs it needs about 1 MiB")
    assert "above the limit of 100 free DOFs" in msg and "ask for at most 6 modes (count = 6)" in msg


def test_dense_solve_refused_when_memory_is_short(monkeypatch):
    monkeypatch.setattr(modes_mod, "DENSE_LIMIT", 50)
    monkeypatch.setattr(mem, "available_bytes", lambda: 2**19)
    with pytest.raises(ModelError, match=r"the dense eigen solve of 120 free DOFs \(count = 119 asks for nearly all "
                                         r"of the 120 modes\) needs an estimated 1 MiB, more than the 0 MiB"):
        solve(read_text(CHAIN % "count = 119"))


def test_lanczos_count_above_the_limit_is_refused_and_the_limit_runs(small_limits):
    with pytest.raises(ModelError, match=r"count = 7 is more modes than one Lanczos run finds in reasonable time "
                                         r"\(the limit is 6 for a model of 120 modes: the work grows"):
        solve(read_text(CHAIN % "count = 7"))
    modal = solve(read_text(CHAIN % "count = 6")).modal
    assert len(modal[0].modes.omega) == 6 and modal[0].modes.solver.startswith("shift-invert")


def test_a_model_small_enough_for_the_dense_solve_is_offered_every_mode(monkeypatch):
    monkeypatch.setattr(modes_mod, "DENSE_LIMIT", 50)
    monkeypatch.setattr(modes_mod, "LANCZOS_WORK", 4320)       # at most 6 modes by Lanczos
    with pytest.raises(ModelError, match=r"count = 6\) or set a frequency limit \(fmax\), or for every mode "
                                         r"\(count = 120\), which a dense solve finds\n"):
        solve(read_text(CHAIN % "count = 7", "deck.deck"))


def test_fmax_taking_in_too_many_modes_is_refused(small_limits):
    with pytest.raises(ModelError, match=r"fmax = 1e\+06 Hz takes in more than \d+ modes, which is more modes than "
                                         r"one Lanczos run finds .*lower fmax"):
        solve(read_text(CHAIN % "fmax = 1000000 Hz"))


def test_lanczos_memory_refused(monkeypatch):
    monkeypatch.setattr(modes_mod, "DENSE_LIMIT", 50)
    monkeypatch.setattr(mem, "available_bytes", lambda: 2**10)
    # the model's checks factor K before any case is solved; let that factor through so the
    # Lanczos vectors are what cannot fit
    monkeypatch.setattr(mem, "check_factor_memory", lambda *a, **k: 0)
    with pytest.raises(ModelError, match=r"the Lanczos eigen solve of 5 modes on 120 free DOFs needs an estimated"):
        solve(read_text(CHAIN % "count = 5"))


def test_target_max_above_the_lanczos_limit_is_refused(small_limits):
    with pytest.raises(ModelError, match=r"case MODES: max = 40 modes is more than one eigen solve of 120 free DOFs "
                                         r"finds in reasonable time \(the limit is 6\); set max = 6 or less"):
        solve(read_text(CHAIN % "target = (90 percent, 90 percent, 0), max = 40"))


def test_lanczos_limit_by_model_size():
    assert modes_mod.lanczos_limit(120) == 1000 == modes_mod.LANCZOS_MAX
    assert modes_mod.lanczos_limit(18522) == 734       # the 5000 modes asked of such a model are refused
    assert modes_mod.lanczos_limit(200_000) == 223


def test_mode_shape_rows_refused(monkeypatch):
    import fem.limits as limits

    monkeypatch.setattr(limits, "ROWS_LIMIT", 100)
    with pytest.raises(ModelError, match=r"case MODES: 5 modes x 21 nodes would write 105 rows of mode shapes, "
                                         r"above the limit of 100; ask for at most 4 modes"):
        solve(read_text(CHAIN % "count = 5"))
