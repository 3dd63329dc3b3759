"""The console summary of a run and its exit status.

One line for the model, its notes and checks, then a line or a few per result (each kind has
its own function) and the verdict of the self-checks (`print_solved`, printed as soon as the
cases are solved); then the pictures' notice, where the results are, and the caution
(`print_written`, once the folder is written). The verdicts come from the solve's self-checks (`fem.checks`).
"""

from __future__ import annotations

import numpy as np

from ..analysis.plausible import zero_mode_lines
from ..analysis.soundness import summary_lines
from ..analysis.static import precision_lines
from . import buckling_out, limits_out, resonance_out
from .fmt import percent
from .results_json import CAUTION
from .springs_out import summary_lines as springs_summary
from .stress_out import summary_lines as stress_summary
from .stress_out import units_of

__all__ = ["print_solved", "print_summary", "print_written"]

_CONTINUED = " " * 15      # indent of a result's further lines


def _length(results, value: float) -> str:
    """A length in the display unit (m unless units are chosen), four figures."""
    units = units_of(results)
    return f"{value * units.per_si('length'):.4g} {units.label('length')}"


def _static(results, r) -> list[str]:
    ch = results.checks.cases[r.name]
    sane = results.checks.plausible[r.name]
    ok = "pass" if results.checks.passed[r.name] else "FAIL"
    size = "pass" if sane["translation_within_size_pass"] else "FAIL"
    lines = [f"  {r.name:<12} max translation {_length(results, np.abs(r.u[:, :3]).max())}   "
             f"equilibrium {r.equilibrium:.1e} {ok}   within the model's size {size}"]
    lines += [f"{_CONTINUED}{w}" for w in precision_lines(ch)]
    lines += [f"{_CONTINUED}{w}" for w in sane["warnings"]]
    return lines


def _spectrum(results, r) -> list[str]:
    c = results.checks.cases[r.name]
    # a force under 1e-9 of the largest is round-off of a direction not excited: shown as 0;
    # the vertical one is shown when the case shakes Z
    units = units_of(results)
    k, unit = (units.per_si("force"), units.label("force")) if units.chosen else (1e-3, "kN")
    fx, fy, fz = (0.0 if v < 1e-9 * np.abs(r.base[:3]).max() else v * k for v in np.abs(r.base[:3]))
    return [f"  {r.name:<12} response spectrum ({r.rule.upper()}, directions {r.spatial}); base shear "
            f"Fx {fx:.4g} {unit}, Fy {fy:.4g} {unit}" + (f", base force Fz {fz:.4g} {unit}" if r.directions[2] else "")
            + "; max displacement "
            f"{_length(results, r.u[:, :3].max())}; missing mass "
            + ", ".join(f"{a} {percent(v)}" for a, v in c["missing_mass_fraction"].items())
            + (" (corrected)" if r.missing else "")]


def _harmonic(results, r) -> list[str]:
    k = np.unravel_index(np.abs(r.peak[:, :3]).argmax(), r.peak[:, :3].shape)
    what = (f"harmonic sweep {r.freq[0]:.4g}-{r.freq[-1]:.4g} Hz, {len(r.freq)} frequencies" if not r.listed else
            f"harmonic at {', '.join(f'{f:.4g}' for f in r.freq[:6])}{', ...' if len(r.freq) > 6 else ''} Hz")
    v = np.unravel_index(np.argmax(r.vel_peak), r.vel_peak.shape)
    a = np.unravel_index(np.argmax(r.acc_peak), r.acc_peak.shape)
    nodes = results.model.node_names
    # mm/s: the unit vibration criteria for machines and their supports use
    return [f"  {r.name:<12} {what}; peak amplitude {_length(results, r.peak[k])} at {r.peak_freq[k]:.4g} Hz",
            f"{_CONTINUED}largest velocity {1e3 * r.vel_peak[v]:.4g} mm/s amplitude "
            f"({1e3 * r.vel_peak[v] / np.sqrt(2):.4g} mm/s RMS) at {nodes[v[0]]} {'XYZ'[v[1]]}, "
            f"{r.vel_peak_freq[v]:.4g} Hz; acceleration {r.acc_peak[a]:.4g} m/s^2 at {nodes[a[0]]} "
            f"{'XYZ'[a[1]]}, {r.acc_peak_freq[a]:.4g} Hz" + (" (absolute)" if r.ground is not None else "")
            ] + limits_out.summary_lines(r, nodes, _CONTINUED)


def _history(results, r) -> list[str]:
    return [f"  {r.name:<12} time history, {len(r.t)} steps; peak translation "
            f"{_length(results, np.abs(r.peak[:, :3]).max())}"
            + ("; static correction for truncated modes" if r.corrected else "")]


def _free(results, r) -> list[str]:
    c = results.checks.cases[r.name]
    ok = "pass" if c["inertia_balance_pass"] else "FAIL"
    return [f"  {r.name:<12} free vibration, {len(r.t)} steps; peak translation "
            f"{_length(results, np.abs(r.peak[:, :3]).max())}; modes capture "
            f"{percent(r.captured, 2)} of the initial displacement (M-norm)",
            f"{_CONTINUED}reactions balance the modal inertia forces to {r.inertia_balance:.1e} {ok}"]


def _modes(results, r) -> list[str]:
    c = results.checks.cases[r.name]
    fr = ", ".join(f"{f:.4g}" for f in r.modes.freq[:6])
    lines = [f"  {r.name:<12} {len(r.modes.freq)} modes ({r.modes.solver}); first Hz: {fr}"]
    preload = getattr(results.definition(r.name), "preload", None)
    if preload is not None or results.model.pretension is not None:
        under = " and ".join(([f"the preload of case {preload}"] if preload else [])
                             + (["the members' pretension"] if results.model.pretension is not None else []))
        lines.append(f"{_CONTINUED}under {under} (K + Kg, linear)")
    cum = "  ".join(f"{a} {percent(v)}" for a, v in c["cumulative_mass_fraction"].items())
    missed = "not run" if c["none_missed"] is None else ("pass" if c["none_missed"] else "FAIL")
    if r.target is not None:
        got = r.part.cumulative[-1, :3]
        lines.append(f"{_CONTINUED}mass target {', '.join(percent(v, 0) for v in r.target)} (X, Y, Z), "
                     f"reached {', '.join(percent(v) for v in got)}: "
                     + ("met" if r.target_met else f"NOT met with {len(r.modes.freq)} modes (the cap); "
                        "raise max or check the model"))
    verdict = {True: "pass", False: "FAIL"}
    lines.append(f"{_CONTINUED}residual {c['max_residual']:.1e} {verdict[c['residual_pass']]}  "
                 f"orthogonality M {c['mass_orthogonality']:.1e} K {c['stiffness_orthogonality']:.1e} "
                 f"{verdict[c['orthogonality_pass']]}"
                 f"  Sturm count {missed}  effective mass {cum}")
    if c["effective_mass_sum_pass"] is not None:
        lines.append(f"{_CONTINUED}all {len(r.modes.freq)} modes: effective masses add up to the total mass to "
                     f"{c['effective_mass_sum_error']:.1e} {'pass' if c['effective_mass_sum_pass'] else 'FAIL'}")
    lines += [f"{_CONTINUED}{line}" for line in zero_mode_lines(r.name, results.checks.plausible[r.name])]
    if r.name in results.resonance:
        lines += resonance_out.summary_lines(results.resonance[r.name], _CONTINUED)
    return lines


def _demand(results, r) -> list[str]:
    from .envelope_out import summary_lines

    return summary_lines(results, r, _CONTINUED)


# each kind's lines; a response case's own warnings follow them
_LINES = {"static": _static, "modes": _modes, "free": _free, "history": _history,
          "harmonic": _harmonic, "spectrum": _spectrum,
          "buckling": lambda results, r: buckling_out.summary_lines(results, r, _CONTINUED),
          "combination": _demand, "envelope": _demand}
_OWN_WARNINGS = ("free", "history", "harmonic", "spectrum")


def print_summary(results, written, name: str = "") -> int:
    """Print the summary of `results` written as `written` (a `fem.output.write.Written`);
    `name` stands for the model when it has no title (the deck as given). Returns the exit
    status: 0 when every self-check passes, every target is met, every vibration limit and every resonance check
    passes, else 1."""
    print_solved(results, name)
    return print_written(results, written)


def print_solved(results, name: str = "") -> None:
    """The summary's lines that need only the solve: the model, each case, the self-checks'
    verdict, the resonance verdict. `quaver run` prints them before the pictures are drawn."""
    model = results.model
    print(f"{model.title or name or model.source}: {model.n_nodes} nodes, {model.n_members} members, "
          f"total mass {model.total_mass():.6g} kg")
    if model.overrides:
        print("  overrides: " + ", ".join(f"{k} = {v}" for k, v in model.overrides.items()))
    if results.cases_asked is not None:
        asked, added = results.cases_asked["asked"], results.cases_asked["needed"]
        print(f"  cases solved: {', '.join(asked)} as asked (--case)"
              + (f", with {', '.join(added)} which they need" if added else ""))
    for w in results.warnings:
        print(f"  {w}")
    for line in summary_lines(results.soundness):
        print(f"  {line}")
    am = results.assembled_mass
    print(f"  mass check: assembled M gives {am[0]:.6g} kg in X, Y, Z "
          f"({'pass' if results.checks.mass_pass else 'FAIL'} against members + point masses)")
    for r in [*results.statics, *results.modal, *results.demands]:
        for line in _LINES[r.kind](results, r):
            print(line)
        for line in stress_summary(results, r.name, _CONTINUED) + springs_summary(results, r.name, _CONTINUED):
            print(line)
        for w in r.warnings if r.kind in _OWN_WARNINGS else ():
            print(f"{_CONTINUED}{w}")
    checks = results.checks
    print("  self-checks: all pass" if checks.all_pass else
          "  self-checks: some FAIL (marked above); check before using the results")
    if checks.short:
        print(f"  effective-mass target not met in {', '.join(checks.short)}")
    design = resonance_out.verdict_line(results)
    if design:
        print(f"  {design}")
    limits = limits_out.verdict_line(results)
    if limits:
        print(f"  {limits}")


def print_written(results, written) -> int:
    """The summary's closing lines, once the folder is written: the pictures' notice, the
    folder's notes, where the results are, the caution. Returns the exit status."""
    print(f"  {written.notice}")
    for n in written.notes:
        print(f"  {n}")
    print(f"results in {written.folder}/")
    print("Caution: " + CAUTION)
    return 0 if results.ok else 1
