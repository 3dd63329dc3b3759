"""`quaver check` sees what `quaver run` sees: the same soundness pass (held DOFs, one factor of
K, mechanisms, free structures, conditioning) runs before any solve on every path, modes-only
decks included, and says it in the same words; no library warning text reaches the user."""

import os
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest

from fem.cli import main

ROOT = Path(__file__).resolve().parents[1]

HEAD = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
section BR = pipe(od = 60.3 mm, wall = 4 mm)
"""

# a three-panel triangular truss mast; panel 1 has no diagonals, so it shears freely
MAST = HEAD + """
for k in 0..3 {
  for a in 0..2 {
    node P[k,a] = (cos(a*120 deg) * 1 m, sin(a*120 deg) * 1 m, k*3 m)
  }
}
for k in 0..2 {
  for a in 0..2 { member L[k,a] : P[k,a] -> P[k+1,a] truss P S }
}
for k in 1..3 {
  member H[k,0] : P[k,0] -> P[k,1] truss BR S
  member H[k,1] : P[k,1] -> P[k,2] truss BR S
  member H[k,2] : P[k,2] -> P[k,0] truss BR S
}
%s
support P0_* pinned
mass P3_* = 100 kg
"""


def _mast(braced):
    """The mast with diagonals in the panels `braced` (0, 1, 2 from the ground)."""
    return MAST % "".join(f"""for k in {k}..{k} {{
  member D[k,0] : P[k,0] -> P[k+1,1] truss BR S
  member D[k,1] : P[k,1] -> P[k+1,2] truss BR S
  member D[k,2] : P[k,2] -> P[k+1,0] truss BR S
}}
""" for k in braced)
MODES = "case MODES modes { count = 6 }\n"
STATIC = "case WIND static { force P3_* = (1 kN, 0, 0) }\n"


def _both(tmp_path, capsys, text):
    """(exit status, stderr, stdout) of `quaver check` and of `quaver run` on the deck text."""
    deck = tmp_path / "d.deck"
    deck.write_text(text)
    out = []
    for argv in (["check", str(deck)], ["run", str(deck), "--out", str(tmp_path / "out"), "--no-render"]):
        code = main(argv)
        cap = capsys.readouterr()
        out.append((code, cap.err, cap.out))
    return out


@pytest.mark.parametrize("cases", [MODES + STATIC, MODES, STATIC],
                         ids=["static and modes", "modes only", "static only"])
def test_mast_mechanism_is_refused_by_check_and_run_alike(tmp_path, capsys, cases):
    # a truss panel without diagonals is a mechanism (a four-sided truss panel shears freely:
    # a kinematic fact, common practice, no source): refused by both commands with one message
    # naming nodes and directions, whatever cases the deck holds
    text = _mast([0, 2]) + cases
    (c_code, c_err, c_out), (r_code, r_err, _) = _both(tmp_path, capsys, text)
    assert c_code == r_code == 2
    assert c_err == r_err
    assert "mechanism" in c_err and ("P2_" in c_err or "P3_" in c_err)
    assert not (tmp_path / "out").exists()


def test_sound_mast_checks_and_runs_with_the_same_notes(tmp_path, capsys):
    from fem import solve
    from fem.analysis.soundness import summary_lines
    from fem.deck.reader import read_text

    sound = _mast([0, 1, 2]) + MODES + STATIC
    (c_code, _, c_out), (r_code, _, r_out) = _both(tmp_path, capsys, sound)
    assert c_code == 0 and r_code in (0, 1)
    m = read_text(sound)
    lines = summary_lines(solve(m).soundness)
    assert any("stiffness condition estimate" in ln for ln in lines)
    for ln in lines:
        assert ln in c_out.splitlines() and f"  {ln}" in r_out.splitlines()


CANTILEVER = HEAD + """
node A = (0, 0, 0)
node B = %s
member M : A -> B beam P S release j (ry, rz)
support A fixed
"""

INCLINED = {"in plan": "(2 m, 2 m, 0)", "in elevation 45 deg": "(2 m, 0, 2 m)",
            "in elevation 3-4-5": "(3 m, 0, 4 m)", "skew": "(1 m, 2 m, 2 m)"}


@pytest.mark.parametrize("where", INCLINED.values(), ids=INCLINED.keys())
@pytest.mark.parametrize("cases", ["case MODES modes { count = 4 }\n",
                                   "case MODES modes { count = 4 }\ncase S static { force B = (1 kN, 0, 0) }\n"],
                         ids=["modes only", "with a static case"])
def test_inclined_released_cantilever_is_a_mechanism_on_every_path(tmp_path, capsys, where, cases):
    # the free end released about both cross axes of an inclined member: the member's end
    # rotation about its local z (a combination of global rotations) meets no stiffness and no
    # mass, so K is singular (exactly, or to ~1e19 by round-off). Refused as a mechanism with
    # the released end named, modes-only or not (it was 'Factor is exactly singular' from
    # SuperLU, or exit 0 with a condition estimate of 1e19)
    (c_code, c_err, _), (r_code, r_err, _) = _both(tmp_path, capsys, CANTILEVER % where + cases)
    assert c_code == r_code == 2
    assert c_err == r_err
    assert "mechanism" in r_err and "B r" in r_err and "M end j at B (released ry, rz)" in r_err
    assert "Traceback" not in r_err


def test_axis_aligned_released_cantilever_runs_with_held_rotations(tmp_path, capsys):
    # along X the released rotations are the global DOFs B ry and B rz themselves: nothing acts
    # on them, so they are held and listed (as a static case does), and the modes run. The one
    # element, its end rotation condensed out in mass as in stiffness, moves in the static
    # tip-load shape: its first frequency is Rayleigh's estimate with that shape,
    # w^2 = 3 EI / (L^3 33/140 m L), 1.47 % above the continuous cantilever's 1.87510^2
    # (/work/shared/reference-values.md sec. 1a: formula H, values C; Blevins 1979, Table 8-1)
    (c_code, _, c_out), (r_code, _, r_out) = _both(tmp_path, capsys, CANTILEVER % "(2 m, 0, 0)" + MODES.replace(
        "6", "4"))
    assert c_code == 0 and r_code == 0
    note = "note: 2 DOF(s) have no stiffness and are held: B ry, B rz; a load there is refused"
    assert note in c_out and note in r_out
    od, t, L = 0.1683, 0.00711, 2.0
    inner = od - 2 * t
    EI = 200e9 * np.pi / 64 * (od ** 4 - inner ** 4)
    m = 7850 * np.pi / 4 * (od ** 2 - inner ** 2)
    rayleigh = np.sqrt(3 * EI / (L ** 3 * 33 / 140 * m * L)) / (2 * np.pi)
    import json
    got = json.loads((tmp_path / "out" / "results.json").read_text())["cases"][0]["frequency_Hz"][0]
    assert got == pytest.approx(rayleigh, rel=1e-10)     # the same polynomial shape: round-off only
    assert got / (1.87510407 ** 2 / (2 * np.pi) * np.sqrt(EI / (m * L ** 4))) == pytest.approx(1.0147, abs=1e-4)


FREE = HEAD + """
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (2 m, 1 m, 0)
member M : A -> B beam P S
member N : B -> C beam P S
"""


def test_no_supports_is_said_plainly_and_modes_run(tmp_path, capsys):
    (c_code, _, c_out), (r_code, _, r_out) = _both(tmp_path, capsys, FREE + "case MODES modes { count = 8 }\n")
    assert c_code == 0 and r_code == 0
    text = "no supports: the structure is free in all six rigid-body motions"
    assert text in c_out and text in r_out


def test_static_case_on_a_free_structure_is_refused_by_check_and_run(tmp_path, capsys):
    deck = FREE + "case MODES modes { count = 8 }\ncase S static { force C = (0, 0, -1 kN) }\n"
    (c_code, c_err, _), (r_code, r_err, _) = _both(tmp_path, capsys, deck)
    assert c_code == r_code == 2 and c_err == r_err
    assert "case S: no supports: the structure is free in all six rigid-body motions" in c_err
    line = deck.split("\n").index("case S static { force C = (0, 0, -1 kN) }") + 1
    assert f"d.deck:{line}:1: case S" in c_err               # located at the static case


@pytest.mark.parametrize("supports,names", [
    ("support * (uz)", ["translation X", "translation Y", "rotation about Z"]),
    ("support A pinned", ["rotation about X", "rotation about Y", "rotation about Z"]),
    ("support A (ux, uy, uz, rx, ry)", ["rotation about Z"]),
], ids=["vertical only", "one pin", "one pin turning in plan"])
def test_rigid_motions_left_by_partial_supports_are_named(supports, names):
    # kinematics, common practice, no source: vertical restraint alone leaves the plan motions
    # (X, Y, turn about Z); a single pin leaves the three turns about it
    from fem import solve
    from fem.deck.reader import read_text

    m = read_text(FREE + supports + "\ncase MODES modes { count = 8 }\n")
    solved = solve(m)
    modal = solved.modal
    assert solved.soundness.rigid == names
    assert any(f"free in {len(names)} rigid-body motion(s)" in w for w in solved.warnings)
    assert int(np.sum(modal[0].modes.freq == 0)) == len(names)


def test_floating_part_is_a_mechanism_even_for_modes_only(tmp_path, capsys):
    # a second part that touches nothing moves as a rigid body on its own: not a free structure
    deck = FREE + "node X = (9 m, 0, 0)\nnode Y = (10 m, 0, 0)\nmember Q : X -> Y beam P S\nsupport A fixed\n" + \
        "case MODES modes { count = 8 }\n"
    (c_code, c_err, _), (r_code, r_err, _) = _both(tmp_path, capsys, deck)
    assert c_code == r_code == 2 and c_err == r_err
    assert "mechanism" in c_err and ("X " in c_err or "Y " in c_err)


SOFT = HEAD + """
material SOFT { E = 1e-9 Pa, nu = 0.3, density = 7850 kg/m^3 }
node A = (0, 0, 0)
node B = (2 m, 0, 0)
node C = (4 m, 0, 1 m)
member M : A -> B beam P S
member N : B -> C beam P SOFT
support A fixed
settings { mass = lumped }
case MODES modes { count = 4 }
"""


def test_hopeless_conditioning_refused_for_a_modes_only_deck(tmp_path, capsys):
    # a contrast of 2e20 in E: condition ~1e23, beyond 1/eps; refused as a static deck would be
    (c_code, c_err, _), (r_code, r_err, _) = _both(tmp_path, capsys, SOFT)
    assert c_code == r_code == 2 and c_err == r_err
    assert "too badly conditioned" in c_err


def test_no_library_warning_text_reaches_the_user(tmp_path):
    # this deck made scipy print 'LinAlgWarning: An ill-conditioned matrix detected ...' with
    # its source line before the run went on; in a separate process, as a user sees it
    deck = tmp_path / "w.deck"
    deck.write_text(SOFT)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    for cmd in (["check", str(deck)], ["run", str(deck), "--out", str(tmp_path / "o"), "--no-render"]):
        p = subprocess.run([sys.executable, "-m", "fem", *cmd], capture_output=True, text=True, env=env,
                           cwd=tmp_path, timeout=300)
        both = p.stdout + p.stderr
        assert "Warning" not in both and ".py:" not in both and "Traceback" not in both, both
        assert p.returncode == 2 and p.stderr.startswith("error: ")


def test_library_warnings_are_said_in_our_words():
    import scipy.linalg as sla

    from fem.analysis.soundness import quiet

    notes = []
    with warnings.catch_warnings(record=True) as escaped:
        warnings.simplefilter("always")
        with quiet(notes, "case X"):
            sla.solve(sla.hilbert(14), np.ones(14))    # condition ~1e19, not exactly singular
            np.exp(np.array([1000.0]))
            np.exp(np.array([1000.0]))           # said once
    assert not escaped
    said = [str(w) for w in notes if str(w).startswith("warning: case X:")]
    assert any("a dense solve met a nearly singular matrix" in w for w in said), said
    assert sum("overflowed" in w for w in said) == 1


def _beam_line(n, cases):
    return HEAD + f"""
for i in 0..{n} {{ node N[i] = (i * 0.5 m, 0, 0) }}
for i in 0..{n - 1} {{ member M[i] : N[i] -> N[i+1] beam P S }}
support N0 fixed
""" + cases


def test_one_factor_of_K_serves_checks_static_cases_and_modes(monkeypatch):
    # 150 members, 900 free DOFs: above the dense eigen limit, so the modes case uses a sparse
    # factor of K at zero shift; it is the checks' own, made once (counted, not timed)
    import fem.analysis.factor as fac
    from fem import solve
    from fem.analysis.modes import DENSE_LIMIT, solve_modes
    from fem.assembly import assemble
    from fem.deck.reader import read_text

    calls = []
    real = fac.spd_factor
    monkeypatch.setattr(fac, "spd_factor", lambda A, *a, **k: calls.append(A.shape) or real(A, *a, **k))
    m = read_text(_beam_line(150, "case S static { force N150 = (0, 0, -1 kN) }\ncase MODES modes { count = 6 }\n"
                                  "case HIT history { force N150 = (0, 0, 1 kN), time = halfsine(0.01 s), "
                                  "duration = 0.05 s, step = 0.001 s, correction = on }\n"))
    solved = solve(m)
    results, modal = solved.statics, solved.modal
    n_free = 6 * 150
    assert n_free > DENSE_LIMIT
    assert calls == [(n_free, n_free)]
    assert modal[0].modes.solver.startswith("shift-invert")
    # the shared factor gives the modes an independent factorisation gives
    asm = assemble(m)
    K, M = (X[asm.free][:, asm.free].tocsr() for X in (asm.K, asm.M))
    fresh = solve_modes(K, M, n_modes=6)
    assert np.allclose(modal[0].modes.freq, fresh.freq, rtol=1e-10)
    # cantilever tip deflection P L^3 / (3 EI) (Euler-Bernoulli, any strength-of-materials text)
    od, t = 0.1683, 0.00711
    EI = 200e9 * np.pi / 64 * (od ** 4 - (od - 2 * t) ** 4)
    # (cubic elements are exact for end loads; 1e-6 allows for the condition, ~1e12, of K)
    assert -results[0].u[150, 2] == pytest.approx(1e3 * 75.0 ** 3 / (3 * EI), rel=1e-6)


def test_static_load_on_a_held_rotation_is_refused_by_check_and_run(tmp_path, capsys):
    # the hinge's rotation meets only released ends: held, and a moment there has nothing to act on
    deck = CANTILEVER % "(2 m, 0, 0)" + "case S static { moment B = (0, 1 kN*m, 0) }\n"
    (c_code, c_err, _), (r_code, r_err, _) = _both(tmp_path, capsys, deck)
    assert c_code == r_code == 2 and c_err == r_err
    assert "case S: load acts where nothing resists it: B ry" in c_err


def _fuzz():
    sys.path.insert(0, str(ROOT / "tools"))
    import fuzz_pipeline

    return fuzz_pipeline


def test_fuzz_counts_library_text_as_a_failure():
    fz = _fuzz()
    assert fz._leaked("  MODES 4 modes\n/x/modes.py:111: LinAlgWarning: An ill-conditioned matrix\n").startswith(
        "library text reached the user: /x/modes.py:111: LinAlgWarning")
    assert fz._leaked('Traceback (most recent call last):\n  File "a.py", line 1\n')
    assert fz._leaked("  warning: case M: a dense solve met a nearly singular matrix\n  self-checks: all pass\n") is None


def test_fuzz_released_inclined_member_is_refused_modes_only(tmp_path):
    # the mutation on the lean frame: a member inclined in elevation from a node, its far end
    # released about both cross axes, static cases dropped; the run is refused as a mechanism
    import random

    from fem.cli import run_deck
    from fem.errors import MechanismError

    fz = _fuzz()
    for seed in range(50):
        text = fz.released_inclined_member(fz.lean_frame(), random.Random(seed))
        if "static" not in text and "(0, 0, 1.5)" not in text and "RLS0 = (" in text:
            node = text.split("node RLS0 = (")[1].split(")")[0]
            if "0.9 m" in node or "1.1 m" in node:       # inclined in elevation
                break
    else:
        pytest.fail("no seed gave an inclined released member in a modes-only deck")
    assert fz.check(text, fz.TABLES, tmp_path / "a", report=False) is None
    (tmp_path / "b").mkdir()
    (tmp_path / "b" / "d.deck").write_text(text)
    for name, t in fz.TABLES.items():
        (tmp_path / "b" / name).write_text(t)
    with pytest.raises(MechanismError, match=r"RLM0 end j at RLS0 \(released ry, rz\)"):
        run_deck(str(tmp_path / "b" / "d.deck"), str(tmp_path / "b" / "out"), render=False)
