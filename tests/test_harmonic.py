"""Harmonic sweeps: SDOF amplification and phase, direct complex solve of the full system."""

import gzip

import numpy as np
import pytest
import scipy.sparse.linalg as spla
from shared_decks import BAR_SDOF

from fem import solve
from fem.analysis.harmonic import sweep_frequencies
from fem.analysis.static import load_vector
from fem.assembly import assemble
from fem.damping import rayleigh_coefficients
from fem.deck.reader import read_text
from fem.errors import DeckError

SDOF = BAR_SDOF + """case H harmonic { force B = (100 kN, 0, 0), from = %s Hz, to = %s Hz, points = 2, damping = 5 percent }
"""
K_BAR = 200e9 * 3.600457e-3 / 2.0


@pytest.mark.parametrize("r,rd,lag", [
    # reference-values.md section 5 (Chopra 2017 Sec. 3.2; values C), zeta = 0.05, printed to
    # 4-5 digits and 0.1 degree
    (0.5, 1.3304, 3.814), (0.8, 2.7116, 12.53), (1.0, 10.0, 90.0), (2.0, 0.3326, 176.2),
], ids=["r0.5", "r0.8", "r1", "r2"])
def test_sdof_amplification_and_phase(r, rd, lag):
    fn = np.sqrt(K_BAR / 1e6) / (2 * np.pi)
    m = read_text(SDOF % (r * fn, 1.7 * fn if r < 1.7 else 2.5 * fn))
    h = solve(m).modal[-1]
    i = np.argmin(np.abs(h.freq - r * fn))
    u = h.u[i, 0, 0] if h.record[0] == 1 else h.u[i, 1, 0]
    assert abs(u) / (100e3 / K_BAR) == pytest.approx(rd, rel=1e-4)
    assert -np.degrees(np.angle(u)) == pytest.approx(lag, abs=0.05)


def test_refinement_resolves_peaks():
    # the refined sweep contains the displacement peak r = sqrt(1 - 2 zeta^2) (Chopra Sec. 3.2)
    f = sweep_frequencies(1, 10, 5, "linear", [3.3], [0.02])
    assert np.any(np.isclose(f, 3.3 * np.sqrt(1 - 2 * 0.02**2), rtol=1e-12))
    assert np.sum(np.abs(f - 3.3) < 3.3 * 0.02) >= 5      # several points within the half-power band


FRAME = """
material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
for i in 0..4 { node N[i] = (0, 0, i*1.5 m) }
for i in 0..3 { member M[i] : N[i] -> N[i+1] beam P S }
node H = (1.5 m, 0, 6 m)
member ARM : N4 -> H beam P S
support N0 fixed
mass H = 400 kg
case MODES modes { count = %d }
case F harmonic { force H = (1 kN, 0.5 kN, -2 kN), from = 0.5 Hz, to = 60 Hz, points = 60,
                  rayleigh = (2 Hz, 2 percent, 40 Hz, 3 percent), record = "H" %s }
"""


def direct(m, freq):
    """Complex solve (K - W^2 M + i W C) u = F on the full system with C = a0 M + a1 K."""
    asm = assemble(m)
    f = asm.free
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    a0, a1 = rayleigh_coefficients(2, 0.02, 40, 0.03)
    C = a0 * M + a1 * K
    tip = [list(f).index(6 * m.node_names.index("H") + d) for d in range(3)]
    out = []
    for fr in freq:
        W = 2 * np.pi * fr
        u = spla.spsolve((K - W**2 * M + 1j * W * C).tocsc(), F.astype(complex))
        out.append(u[tip])
    return np.array(out)


def test_all_modes_equal_direct_complex_solve():
    # all 30 modes kept and classical (Rayleigh) damping: modal superposition is exact
    m = read_text(FRAME % (30, ""))
    h = solve(m).modal[-1]
    ref = direct(m, h.freq)
    np.testing.assert_allclose(h.u[:, 0, :3], ref, rtol=1e-8, atol=1e-10 * np.abs(ref).max())


def test_residual_correction_reduces_truncation_error():
    # 3 of 30 modes: well below the highest retained mode the missing modes respond
    # quasi-statically, so the residual correction removes most of the truncation error
    # (Cornwell, Craig & Johnson 1983); the pointwise error must drop at least tenfold there
    m = read_text(FRAME % (3, ""))

    def err(extra):
        h = solve(read_text(FRAME % (3, extra))).modal[-1]
        low = h.freq < 0.5 * h.highest_mode_Hz
        r = direct(m, h.freq[low])
        return (np.linalg.norm(h.u[low, 0, :3] - r, axis=1) / np.linalg.norm(r, axis=1)).max()

    plain, corrected = err(""), err(", correction = on")
    assert plain > 1e-5                   # truncation is visible without the correction
    assert corrected < 0.1 * plain


def test_harmonic_errors():
    with pytest.raises(DeckError, match="'to' must be above 'from'"):
        read_text(SDOF % (5, 2))
    with pytest.raises(DeckError, match="linear or log"):
        read_text((SDOF % (1, 2)).replace("points = 2", "points = 2, spacing = geometric"))


def test_member_force_amplitudes_match_direct_solve():
    # all modes kept: the largest end-force amplitudes over the sweep equal those recovered from
    # direct complex solves with the member stiffness
    from fem.analysis.modal_case import field_responses
    m = read_text(FRAME % (30, ""))
    h = solve(m).modal[-1]
    asm = assemble(m)
    f = asm.free
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    a0, a1 = rayleigh_coefficients(2, 0.02, 40, 0.03)
    C = a0 * M + a1 * K
    U = np.zeros((len(h.freq), 6 * m.n_nodes), complex)
    for i, fr in enumerate(h.freq):
        W = 2 * np.pi * fr
        U[i, f] = spla.spsolve((K - W**2 * M + 1j * W * C).tocsc(), F.astype(complex))
    _, re = field_responses(m, asm, U.real)
    _, im = field_responses(m, asm, U.imag)
    ref = np.abs(re + 1j * im).max(axis=0)
    np.testing.assert_allclose(h.member_peak, ref, atol=1e-7 * ref.max())


@pytest.mark.parametrize("r", [0.5, 0.8, 1.0, 2.0], ids=["r0.5", "r0.8", "r1", "r2"])
def test_sdof_reaction_amplitude_and_phase(r):
    # the bar's support holds the mass's spring: its force on the structure is -k u_B, so the
    # reaction amplitude is p0 R_d and it lags the load by phi - 180 degrees, phi the
    # displacement's lag, tan phi = 2 zeta r / (1 - r^2) (Chopra, Dynamics of Structures,
    # 4th ed., Sec. 3.2); phi at zeta = 5 %: 3.814, 12.53, 90, 176.2 degrees (reference-values.md
    # section 5, values C)
    from fem.analysis.harmonic import lag_degrees
    fn = np.sqrt(K_BAR / 1e6) / (2 * np.pi)
    modes, h = solve(read_text(SDOF % (r * fn, 1.7 * fn if r < 1.7 else 2.5 * fn))).modal
    i = np.argmin(np.abs(h.freq - r * fn))
    # the model's own natural frequency and stiffness (K_BAR is printed to 7 digits only)
    fn = modes.modes.freq[0]
    k = 1e6 * (2 * np.pi * fn) ** 2
    rr = h.freq[i] / fn                                   # the sweep point itself
    rd = 1 / np.sqrt((1 - rr**2) ** 2 + (2 * 0.05 * rr) ** 2)
    phi = np.degrees(np.arctan2(2 * 0.05 * rr, 1 - rr**2))
    assert phi == pytest.approx({0.5: 3.814, 0.8: 12.53, 1.0: 90.0, 2.0: 176.2}[r], abs=0.05)
    a = list(h.support).index(0)                          # node A
    R = h.reactions[i, a, 0]
    assert abs(R) == pytest.approx(100e3 * rd, rel=1e-9)
    assert lag_degrees(R) == pytest.approx(phi - 180, abs=1e-7)
    u = h.u[i, list(h.record).index(1), 0]
    assert R == pytest.approx(-k * u, rel=1e-9)           # the same convention as displacements


def _direct_fields(m, freq):
    """Reactions (m, n, 6) and end forces (m, e, 12) of direct complex solves
    (K - W^2 M + i W C) u = F, C = a0 M + a1 K, at each frequency."""
    from fem.analysis.modal_case import field_responses
    asm = assemble(m)
    f = asm.free
    F = load_vector(m, asm, m.cases[1])[0][f]
    K, M = asm.K[f][:, f].tocsc(), asm.M[f][:, f].tocsc()
    a0, a1 = rayleigh_coefficients(2, 0.02, 40, 0.03)
    C = a0 * M + a1 * K
    U = np.zeros((len(freq), 6 * m.n_nodes), complex)
    for i, fr in enumerate(freq):
        W = 2 * np.pi * fr
        U[i, f] = spla.spsolve((K - W**2 * M + 1j * W * C).tocsc(), F.astype(complex))
    Rr, Mr = field_responses(m, asm, U.real)
    Ri, Mi = field_responses(m, asm, U.imag)
    return Rr + 1j * Ri, Mr + 1j * Mi


def test_reaction_and_end_force_phases_match_direct_complex_solve(tmp_path):
    # all 30 modes and classical damping: modal superposition is exact, so the complex reactions
    # at the base and end forces of the arm (the member at the recorded node H) equal those of a
    # direct complex solve with scipy at every sweep frequency, amplitude and lag; the written
    # tables and results.json carry the same lags
    import csv
    import json

    from fem.analysis.harmonic import lag_degrees
    from fem.output.write import write_results
    m = read_text(FRAME % (30, ""))
    solved = solve(m)
    modal = solved.modal
    h = modal[-1]
    R, Fm = _direct_fields(m, h.freq)
    assert list(h.support) == [0] and [m.member_names[q] for q in h.members] == ["ARM"]
    scale = np.abs(R[:, 0]).max()
    np.testing.assert_allclose(h.reactions[:, 0], R[:, 0], rtol=0, atol=1e-8 * scale)
    arm = m.member_names.index("ARM")
    np.testing.assert_allclose(h.member_forces[:, 0], Fm[:, arm], rtol=0, atol=1e-8 * np.abs(Fm[:, arm]).max())
    big = np.abs(R[:, 0]) > 1e-3 * scale                  # phases of components with real amplitude
    d = (lag_degrees(h.reactions[:, 0]) - lag_degrees(R[:, 0]) + 180) % 360 - 180
    assert np.abs(d[big]).max() < 1e-5
    # the phase moves through the sweep: the base reaction is not a stored constant
    assert np.ptp(lag_degrees(R[:, 0, 0])) > 90
    out = tmp_path / "out"
    doc = write_results(solved, out, render=False).doc
    with gzip.open(out / "frf_reactions_F.csv.gz", "rt", newline="") as fh:
        rows = [row for row in csv.DictReader(fh) if row["node"] == "N0"]
    assert len(rows) == len(h.freq)
    k = int(np.argmax(np.abs(R[:, 0, 0])))
    assert float(rows[k]["amp_Fx"]) == pytest.approx(abs(R[k, 0, 0]), rel=1e-8)
    assert float(rows[k]["lag_deg_Fx"]) == pytest.approx(lag_degrees(R[k, 0, 0]), abs=1e-5)
    with gzip.open(out / "frf_member_forces_F.csv.gz", "rt", newline="") as fh:
        rows = [row for row in csv.DictReader(fh) if row["member"] == "ARM" and row["end"] == "j"]
    assert float(rows[k]["lag_deg_Mz"]) == pytest.approx(lag_degrees(Fm[k, arm, 11]), abs=1e-5)
    case = next(c for c in json.loads((out / "results.json").read_text())["cases"] if c["name"] == "F")
    peak = case["reaction_peaks"]["N0"]
    assert peak["amplitude"][0] == pytest.approx(np.abs(R[:, 0, 0]).max(), rel=1e-8)
    assert peak["frequency_Hz"][0] == pytest.approx(h.freq[k], rel=1e-12)
    assert peak["lag_deg"][0] == pytest.approx(lag_degrees(R[k, 0, 0]), abs=1e-5)
    assert doc["cases"][-1]["member_force_peak_max"]["N"]["member"] in m.member_names


def test_end_force_table_beyond_the_row_limit_is_warned_not_written(tmp_path, monkeypatch):
    import fem.analysis.harmonic as harmonic
    from fem.output.write import write_results
    # 102 frequencies (points and those around the modes) x 1 recorded node and 1 support fit
    # under 150 rows; the end forces of the members there (x 2 ends) do not
    monkeypatch.setattr(harmonic, "ROWS_LIMIT", 150)
    m = read_text(FRAME % (3, ""))
    solved = solve(m)
    h = solved.modal[-1]
    assert h.member_forces is None
    # (3 of 30 modes also leave the sweep's top uncovered: that is the other warning)
    w = [str(x) for x in h.warnings if "end-force table would have" in x.text]
    assert len(w) == 1 and len(h.warnings) == 2
    assert w[0].startswith("deck.deck:") and "record fewer nodes" in w[0]
    write_results(solved, tmp_path / "out", render=False)
    assert (tmp_path / "out" / "frf_reactions_F.csv.gz").exists()
    assert not (tmp_path / "out" / "frf_member_forces_F.csv.gz").exists()


def test_modes_complete_to_the_sturm_shift(capsys, tmp_path):
    # A modes case that asked for every mode below 50 Hz keeps six (the sixth at 26.5 Hz, the
    # seventh at 71.3 Hz): the Sturm count at the shift between them proves no mode is missing
    # below sqrt((l6 + l7) / 2) / 2 pi, so a sweep to 40 Hz is covered (not to 60 Hz, see below);
    # four modes (the fifth at 25.7 Hz) leave it uncovered. All 30 modes cover any sweep.
    # Eigenvalues for the check from scipy.linalg.eigh on the assembled matrices.
    import scipy.linalg as sla

    from fem.cli import run_deck

    deck = FRAME.replace("to = 60 Hz", "to = 40 Hz")
    m = read_text(deck % (30, ""))
    asm = assemble(m)
    f = asm.free
    lam = sla.eigh(asm.K[f][:, f].toarray(), asm.M[f][:, f].toarray(), eigvals_only=True)
    fmax = deck.replace("count = %d", "fmax = 50 Hz") % ("",)
    h = solve(read_text(fmax)).modal[-1]
    assert len(h.zeta) == 6
    assert h.modes_complete_Hz == pytest.approx(np.sqrt(0.5 * (lam[5] + lam[6])) / (2 * np.pi), rel=1e-9)
    # complete to 53.8 Hz: a sweep to 40 Hz is covered but with less than the 1.5x margin that
    # keeps modes just above the band quasi-static (warned); a sweep to 30 Hz has the margin
    (tmp_path / "a.deck").write_text(fmax)
    run_deck(str(tmp_path / "a.deck"), str(tmp_path / "a"), render=False)
    out = capsys.readouterr().out
    assert "complete only up to 53.82 Hz, less than 1.5 times the top of the sweep (40 Hz)" in out
    assert "ask for modes up to at least 60 Hz" in out
    (tmp_path / "c.deck").write_text(fmax.replace("to = 40 Hz", "to = 30 Hz"))
    run_deck(str(tmp_path / "c.deck"), str(tmp_path / "c"), render=False)
    assert "complete only up to" not in capsys.readouterr().out
    h4 = solve(read_text(deck % (4, ""))).modal[-1]
    assert h4.modes_complete_Hz == pytest.approx(np.sqrt(0.5 * (lam[3] + lam[4])) / (2 * np.pi), rel=1e-9)
    (tmp_path / "b.deck").write_text(deck % (4, ""))
    run_deck(str(tmp_path / "b.deck"), str(tmp_path / "b"), render=False)
    assert "complete only up to 19" in capsys.readouterr().out
    assert solve(read_text(deck % (30, ""))).modal[-1].modes_complete_Hz == np.inf
