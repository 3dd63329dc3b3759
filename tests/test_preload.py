"""Modes under a preload (K + Kg) and the pretension of truss members, against closed forms."""

import numpy as np
import pytest

import fem
from fem.deck.reader import read_text
from fem.errors import DeckError, ModelError

E, I, A, RHO = 200e9, 8e-6, 4e-3, 7850.0
HEAD = ['title "preload"', "material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }",
        "section C = generic(A = 0.004 m^2, Iy = 8e-6 m^4, Iz = 8e-6 m^4, J = 1.6e-5 m^4)"]


def pinned_column(n, L, load_N, extra=()):
    lines = list(HEAD)
    lines += [f"node N{k} = (0, 0, {L * k / n} m)" for k in range(n + 1)]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam C S" for k in range(n)]
    lines += ["support N0 pinned", "support N0 (rz)", f"support N{n} (ux, uy)",
              f"case P static {{ force N{n} = (0, 0, {load_N} N) }}",
              "case FREE modes { count = 2 }", "case LOADED modes { count = 2, preload = P }", *extra]
    return read_text("\n".join(lines))


@pytest.mark.parametrize("share", [-0.5, 0.5], ids=["compression", "tension"])
def test_pinned_column_frequency_under_axial_load(share):
    """f^2 = f0^2 (1 + N / P_cr), N tension positive, for a pinned column (exact for its sine
    mode: Timoshenko, Young and Weaver, Vibration Problems in Engineering, 4th ed., 1974, sec.
    5.12; Blevins, Formulas for Natural Frequency and Mode Shape, 1979, table 8-16, beams under
    axial load, from memory of the table number). P_cr = pi^2 E I / L^2 exact; 16 elements: the
    discretisation error of f0 and of the load term is below 1e-5 (h^4), tolerance 1e-4."""
    n, L = 16, 4.0
    pcr = np.pi**2 * E * I / L**2
    r = fem.solve(pinned_column(n, L, share * pcr))       # the top load pulls (+) or pushes (-)
    f0 = r["FREE"].modes.freq[0]
    f = r["LOADED"].modes.freq[0]
    f0_exact = np.pi / (2 * L**2) * np.sqrt(E * I / (RHO * A))        # Blevins, table 8-1, pinned-pinned
    assert f0 == pytest.approx(f0_exact, rel=1e-5)
    assert (f / f0) ** 2 == pytest.approx(1 + share, rel=1e-4)
    assert r.checks.passed["LOADED"]


def test_preload_that_buckles_is_refused_naming_the_factor():
    """1.5 P_cr on the pinned column: K + Kg is not positive definite, refused in words with the
    lowest load factor 1 / 1.5 = 0.667 (mesh error 1e-6 at 8 elements: the 4 digits shown)."""
    n, L = 8, 4.0
    pcr = np.pi**2 * E * I / L**2
    with pytest.raises(ModelError, match=r"case LOADED: the preload of case P buckles the structure "
                                         r"\(its lowest buckling load factor is 0\.6667, below 1\)") as err:
        fem.solve(pinned_column(n, L, -1.5 * pcr))
    assert err.value.location.line == 3 + (n + 1) + n + 3 + 3          # at the case LOADED


def test_preload_is_said_in_results_json(tmp_path):
    """results.json names the preload case of a modes case and says the preload is linear."""
    import json

    r = fem.solve(pinned_column(4, 4.0, -1000))
    fem.write_results(r, tmp_path / "out", render=False)
    doc = json.loads((tmp_path / "out" / "results.json").read_text())
    entry = next(c for c in doc["cases"] if c["name"] == "LOADED")
    assert entry["preload"] == "P" and "linear" in entry["preload_note"]
    assert "preload" not in next(c for c in doc["cases"] if c["name"] == "FREE")


def test_taut_string_frequencies_from_pretension():
    """A wire of 20 truss members between fixed anchors, pretension T = 5 kN: its transverse modes
    are those of a string, f_k = k / (2 L) sqrt(T / m) (Blevins, Formulas for Natural Frequency
    and Mode Shape, 1979, the taut-string formula; table number not confirmed, from memory), each in two
    planes. The discrete chain with consistent mass has exactly
    w^2 = 6 T / (m h^2) (1 - cos t) / (2 + cos t), t = k pi / n (common practice, no source: the
    travelling-wave solution of the assembled equations), checked to round-off; its error against
    the string, about t^2 / 24, bounds the continuum check."""
    n, L, T = 20, 10.0, 5000.0
    lines = ['title "wire"', "material W { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }",
             "section C = round(d = 10 mm)"]
    lines += [f"node N{k} = ({L * k / n} m, 0, 0)" for k in range(n + 1)]
    lines += [f"member M{k} : N{k} -> N{k + 1} truss C W pretension = {T / 1e3} kN" for k in range(n)]
    lines += ["support N0 fixed", f"support N{n} fixed", "case MO modes { count = 6 }"]
    r = fem.solve(read_text("\n".join(lines)))
    m = 7850 * np.pi * 0.01**2 / 4
    f = r["MO"].modes.freq
    k = np.array([1, 1, 2, 2, 3, 3])
    t = k * np.pi / n
    h = L / n
    discrete = np.sqrt(6 * T / (m * h**2) * (1 - np.cos(t)) / (2 + np.cos(t))) / (2 * np.pi)
    np.testing.assert_allclose(f, discrete, rtol=1e-10)
    string = k / (2 * L) * np.sqrt(T / m)
    assert np.all(np.abs(f / string - 1) < t**2 / 24 * 1.05)
    assert r.checks.passed["MO"]


def test_guy_pretension_settles_by_statics_and_compatibility():
    """Two guys at angle g to the vertical, pretension T, pull the top of a column down by d:
    2 T cos g = d (E A_c / L_c + 2 [(E A_g / L_g) cos^2 g + (T / L_g) sin^2 g]), each guy being
    stiff E A_g / L_g along itself and, taut, T / L_g across; the column then carries
    -(E A_c / L_c) d and each guy relaxes to T' = T - (E A_g / L_g) d cos g (linearised statics
    of the initial-force state, common practice, no source). Round-off tolerance."""
    from fem.analysis.buckling import prestress_forces
    from fem.analysis.soundness import examine
    from fem.analysis.static import factorise

    L, T = 4.0, 20e3
    lines = [*HEAD, "section G = round(d = 12 mm)", "node B = (0, 0, 0)", f"node TOP = (0, 0, {L} m)",
             "node AL = (-3 m, 0, 0)", "node AR = (3 m, 0, 0)", "member M : B -> TOP beam C S",
             "member G1 : TOP -> AL truss G S pretension = 20 kN", "member G2 : TOP -> AR truss G S pretension = 20 kN",
             "support B pinned", "support B (rz)", "support AL fixed", "support AR fixed", "support TOP (uy)",
             "case MO modes { count = 2 }", "case S static { force TOP = (0, 0, -1 N) }"]
    model = read_text("\n".join(lines))
    asm, _ = examine(model)
    N = prestress_forces(model, asm, factorise(model, asm))
    Lg = 5.0
    cos_g = L / Lg
    Ag = np.pi * 0.012**2 / 4
    sin_g = 3.0 / Lg
    d = 2 * T * cos_g / (E * A / L + 2 * (E * Ag / Lg * cos_g**2 + T / Lg * sin_g**2))
    t = T - E * Ag / Lg * d * cos_g
    np.testing.assert_allclose(N[1:], [t, t], rtol=1e-10)
    np.testing.assert_allclose(N[0], -E * A / L * d, rtol=1e-10)
    assert t < T and N[0] < 0
    # a static case reports the state plus its own change: 1 N down moves each force by under 1 N,
    # the reactions balance the 1 N (the state's own add to zero) and the checks pass
    r = fem.solve(model)
    s = r["S"]
    np.testing.assert_allclose(0.5 * (s.member_forces[:, 6] - s.member_forces[:, 0]), N, atol=1.0)
    assert s.reactions[:, 2].sum() == pytest.approx(1.0, rel=1e-9)
    assert r.checks.passed["S"]


@pytest.mark.parametrize("text, match", [
    ("case X modes { preload = FREE }", "preload 'FREE' is not a static case or combination"),
    ("case X modes { preload = (1, 2) }", "preload names a static case"),
    ("case X modes { preload = P, sensitivity = members }", "sensitivities are not available under a preload"),
], ids=["names a modes case", "not a name", "with sensitivities"])
def test_deck_errors_of_a_preload(text, match):
    with pytest.raises(DeckError, match=match):
        pinned_column(2, 4.0, -1000, extra=(text,))


@pytest.mark.parametrize("text, match", [
    ("member Z : N0 -> N2 beam C S pretension = 5 kN", "pretension is the initial tension of a truss member"),
    ("member Z : N0 -> N2 truss C S pretension = -5 kN", "a force of zero or more"),
    ("member Z : N0 -> N2 truss C S pretension = 5 m", "pretension"),
], ids=["on a beam", "negative", "not a force"])
def test_deck_errors_of_a_pretension(text, match):
    with pytest.raises(DeckError, match=match):
        pinned_column(2, 4.0, -1000, extra=(text,))


def test_static_correction_on_preloaded_modes_is_refused():
    """The static correction takes K^-1 without the preload, so it would not match the modes."""
    hist = "case H history { force N2 = (1 kN, 0, 0), time = step, duration = 1 s, step = 0.01 s, modes = LOADED, correction = on }"
    with pytest.raises(ModelError, match="case H: the static correction .* takes K without the preload"):
        fem.solve(pinned_column(2, 4.0, -1000, extra=(hist,)))


def test_free_vibration_on_preloaded_modes_balances():
    """A free case released from the preload's own deflection on the preloaded modes: its
    self-check (reactions against the modal inertia forces) passes with K + Kg."""
    free = "case R free { start = P, duration = 0.2 s, step = 0.001 s, modes = LOADED }"
    r = fem.solve(pinned_column(4, 4.0, -50e3, extra=(free,)))
    assert r.checks.passed["R"]


def test_buckling_preload_in_a_pretensioned_model_names_the_factor_of_the_preload_alone():
    """With guys pretensioned, the factor named when a preload buckles the structure is that of
    the preload over K and the pretension state held fixed: the buckling case's own factor."""
    import re

    n, L = 4, 4.0
    lines = [*HEAD, "section G = round(d = 12 mm)"]
    lines += [f"node N{k} = (0, 0, {L * k / n} m)" for k in range(n + 1)]
    lines += ["node AL = (-3 m, 0, 0)", "node AR = (3 m, 0, 0)"]
    lines += [f"member M{k} : N{k} -> N{k + 1} beam C S" for k in range(n)]
    lines += [f"member G1 : N{n} -> AL truss G S pretension = 20 kN", f"member G2 : N{n} -> AR truss G S pretension = 20 kN"]
    lines += ["support N0 pinned", "support N0 (rz)", "support AL fixed", "support AR fixed", f"support N{n} (uy)",
              f"case P static {{ force N{n} = (0, 0, -1.5 MN) }}"]
    factor = fem.solve(read_text("\n".join(lines + ["case B buckling { loading = P, count = 1 }"])))["B"].factors[0]
    assert factor < 1
    with pytest.raises(ModelError, match="case X: the preload of case P buckles the structure") as err:
        fem.solve(read_text("\n".join(lines + ["case X modes { count = 2, preload = P }"])))
    said = float(re.search(r"lowest buckling load factor is ([0-9.]+)", str(err.value)).group(1))
    assert said == pytest.approx(factor, rel=1e-3)            # 4 digits shown
