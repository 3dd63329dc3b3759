"""`quaver run`: solve every static case and combination; write results.json and CSV tables.

Results go to a temporary folder beside the target and are moved into place only when
everything succeeded, so a failed run leaves the previous results untouched; only the files a
previous run wrote are replaced (fem.output.folder).
"""

from __future__ import annotations

import csv
import json
import re
import shutil
from contextlib import contextmanager
from pathlib import Path

import numpy as np

from .analysis.free_case import BALANCE_TOL, FreeCaseResult, solve_free_case  # noqa: F401 (re-exported)
from .analysis.harmonic import HarmonicResult, lag_degrees, solve_harmonic_case
from .analysis.history_case import HistoryResult, solve_history_case
from .analysis.modal_case import AXES, ModesCaseResult, solve_modes_case
from .analysis.plausible import static_check, zero_mode_check, zero_mode_lines
from .analysis.soundness import examine, quiet, summary_lines
from .analysis.spectrum_case import SpectrumResult, solve_spectrum_case
from .analysis.static import StaticResult, combine, factorise, precision_lines, solve_static, static_ok
from .deck.reader import read_deck
from .errors import ModelError, ResultsError
from .model import DIRECTIONS, Model
from .output import folder
from .output.fmt import percent

__all__ = ["run_deck", "solve_all"]

CAUTION = ("Results support, and never replace, the judgement of a qualified engineer; "
           "local codes and licensed practice govern.")


RESIDUAL_TOL = 1e-8      # backward error of an eigenpair; a double-precision solve gives ~1e-14
ORTHO_TOL = 1e-8


def assembled_mass(model: Model, asm) -> np.ndarray:
    """Translational mass seen by the assembled M in X, Y, Z (rigid translations), kg."""
    r = np.zeros((6 * model.n_nodes, 3))
    for d in range(3):
        r[d::6, d] = 1.0
    return np.einsum("ij,ij->j", r, asm.M @ r)


@contextmanager
def _at_case(case):
    """Locate a ModelError raised while solving one case at the case's definition in the deck."""
    try:
        yield
    except ModelError as exc:
        if type(exc) is ModelError and exc.location is None and case.location is not None:
            raise ModelError(exc.message, case.location) from None
        raise


def solve_all(model: Model) -> tuple[list[StaticResult], list[ModesCaseResult]]:
    from .progress import stage

    # the checks `quaver check` makes, before any expensive solve: a mechanism, a free structure
    # asked for a static answer, or a hopeless condition is refused here whatever the cases
    asm, sound = examine(model)
    model.settings["_assembled_mass"] = assembled_mass(model, asm)
    modal = []
    for c in model.cases:
        if c.kind == "modes":
            with stage(f"modes case {c.name}: eigen solve"), _at_case(c), quiet(model, f"case {c.name}"):
                modal.append(solve_modes_case(model, asm, c, factor=sound.spd))
    statics = [c for c in model.cases if c.kind == "static"]
    results = []
    # one factorisation of K, the checks' own, shared by every case that needs one
    factor = [] if sound.factor is None else [sound.factor]

    def lu():
        if not factor:
            factor.append(factorise(model, asm))
        return factor[0]

    if statics or model.combinations:
        with quiet(model, "static cases"):
            results = [solve_static(model, asm, c, lu()) for c in statics]
    by_name = {r.name: r for r in results}
    for combo in model.combinations:
        parts = [(f, by_name[n]) for n, f in combo.factors.items()]
        results.append(combine(combo.name, parts, model.coords))
    by_name = {r.name: r for r in results}
    modal_by = {r.name: r for r in modal}
    for c in model.cases:
        with _at_case(c), quiet(model, f"case {c.name}"):
            _solve_response(model, asm, c, by_name, modal_by, modal, lu)
    return results, modal


def _solve_response(model, asm, c, by_name, modal_by, modal, lu) -> None:
    """Solve one free, history, spectrum or harmonic case and append its result to `modal`."""
    from .progress import stage

    if c.kind == "free":
        start = by_name[c.start].u if c.start else None
        modal.append(solve_free_case(model, asm, c, modal_by[c.modes], start))
    elif c.kind == "history":
        with stage(f"history case {c.name}: integrating"):
            modal.append(solve_history_case(model, asm, c, modal_by[c.modes],
                                            lu() if c.correction else None))
    elif c.kind == "spectrum":
        modal.append(solve_spectrum_case(model, asm, c, modal_by[c.modes],
                                         lu() if c.missing else None))
    elif c.kind == "harmonic":
        modal.append(solve_harmonic_case(model, asm, c, modal_by[c.modes],
                                         lu() if c.correction else None))


def unit_shape_mass_stiffness(r) -> tuple[np.ndarray, np.ndarray]:
    """Modal mass (kg) and stiffness (N/m) of each mode shape scaled so that its largest nodal
    translation is 1 m (its largest rotation 1 rad if no node translates): the generalised
    mass phi^T M phi and stiffness w^2 phi^T M phi before mass normalisation."""
    sh = r.shapes                                           # (n, 6, k), mass-normalised
    top = np.abs(sh[:, :3]).max(axis=(0, 1))
    top = np.where(top > 0, top, np.abs(sh[:, 3:]).max(axis=(0, 1)))
    mass = 1.0 / np.where(top > 0, top, np.inf) ** 2
    return mass, mass * r.modes.omega ** 2


def _all_modes_check(r):
    """With every finite mode computed the effective masses add up to the participating mass
    in each translation (a physical fact); None when fewer modes were computed."""
    m = r.modes
    if m.sturm_expected is None or len(m.omega) < r.n_finite:
        return None, None
    tot = r.part.total[:3]
    got = r.part.effective_mass[:, :3].sum(axis=0)
    err = float(np.max(np.abs(got - tot) / np.where(tot > 0, tot, 1.0)))
    return err, bool(err < 1e-8)


def modal_checks(r) -> dict:
    if isinstance(r, SpectrumResult):
        excited = [a for a, f in zip("XYZ", r.directions) if f != 0]     # one fraction per excited direction
        return {"missing_mass_fraction": dict(zip(excited, map(float, r.missing_fraction))),
                "missing_mass_correction": r.missing, "periods_outside_table_s": r.periods_outside,
                "warnings": list(r.warnings)}
    if isinstance(r, HarmonicResult):
        return {"static_correction": r.corrected, "highest_mode_Hz": r.highest_mode_Hz,
                "modes_complete_to_Hz": r.modes_complete_Hz if np.isfinite(r.modes_complete_Hz) else None,
                "modes_cover_band": bool(r.modes_complete_Hz >= r.freq[-1]), "warnings": list(r.warnings)}
    if isinstance(r, HistoryResult):
        return {"static_correction": r.corrected, "warnings": list(r.warnings)}
    if isinstance(r, FreeCaseResult):
        return {"initial_displacement_captured": r.captured, "start_support_force_error": r.start_force_error,
                "inertia_balance_relative": r.inertia_balance, "inertia_balance_rounding": r.inertia_rounding,
                "inertia_balance_pass": bool(r.inertia_ok), "warnings": list(r.warnings)}
    m = r.modes
    k = len(m.omega)
    complete_err, complete_ok = _all_modes_check(r)
    return {"max_residual": float(m.residual.max()), "residual_pass": bool(m.residual.max() < RESIDUAL_TOL),
            "residual_per_mode": [float(x) for x in m.residual],
            "mass_orthogonality": m.orth_mass, "stiffness_orthogonality": m.orth_stiff,
            "orthogonality_pass": bool(max(m.orth_mass, m.orth_stiff) < ORTHO_TOL),
            "sturm_count": m.sturm_count, "sturm_expected": m.sturm_expected, "modes_found": k,
            "sturm_shift_Hz": None if m.sturm_shift is None else float(np.sqrt(max(m.sturm_shift, 0)) / (2 * np.pi)),
            "none_missed": None if m.sturm_count is None else bool(m.sturm_count == m.sturm_expected),
            "cumulative_mass_fraction": dict(zip(AXES[:3], map(float, r.part.cumulative[-1, :3]))),
            "all_modes_computed": bool(k >= r.n_finite), "effective_mass_sum_error": complete_err,
            "effective_mass_sum_pass": complete_ok,
            "mass_target": None if r.target is None else r.target.tolist(), "mass_target_met": r.target_met}


def _mass_ok(model: Model) -> bool:
    # members' consistent or lumped mass and point masses must add to the model's total
    total = model.total_mass()
    return bool(np.allclose(model.settings["_assembled_mass"], total, rtol=1e-10, atol=1e-9))


def _modal_ok(r) -> bool:
    if isinstance(r, FreeCaseResult):
        return bool(r.inertia_ok)
    if isinstance(r, (HistoryResult, HarmonicResult, SpectrumResult)):
        return True
    c = modal_checks(r)
    return (c["residual_pass"] and c["orthogonality_pass"] and c["none_missed"] is not False
            and c["effective_mass_sum_pass"] is not False)


def _plausible(model: Model, results: list, modal: list) -> dict:
    """Answer-level plausibility checks (analysis.plausible) by case name: each static case and
    combination's largest translation against the model's size, each modes case's near-zero modes."""
    where = {c.name: c.location for c in [*model.cases, *model.combinations]}
    out = {r.name: static_check(model, r, where.get(r.name)) for r in results}
    out.update({r.name: zero_mode_check(model, r) for r in modal if isinstance(r, ModesCaseResult)})
    return out


def _plausible_ok(checks: dict) -> bool:
    return all(c.get("translation_within_size_pass", True) and c.get("near_zero_pass", True)
               for c in checks.values())


def _write_csv(path: Path, header, rows) -> None:
    """Header and rows (any iterable: the long tables pass generators, so their rows are never
    all held as Python objects, ~0.5 kB each)."""
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)


def _fraction(x) -> float | str:
    """A mass fraction for a table: empty where no mass moves in that direction (0/0)."""
    return float(x) if np.isfinite(x) else ""


END_FORCES = ("N", "Vy", "Vz", "T", "My", "Mz")


def _force_peaks(model: Model, r, sup) -> dict:
    """results.json entries of a free or history case: peak |reaction| at every supported or
    sprung node, and the largest peak of each end-force component over all members."""
    mp = r.member_peak.reshape(-1, 6)                 # rows: member 0 end i, member 0 end j, ...
    where = mp.argmax(axis=0) if len(mp) else []
    return {"reaction_peaks": {model.node_names[k]: r.reaction_peak[k].tolist() for k in sup},
            "member_force_peak_max": {c: {"value": float(mp[w, j]), "member": model.member_names[w // 2],
                                          "end": "ij"[w % 2]} for j, (c, w) in enumerate(zip(END_FORCES, where))}}


def _harmonic_force_peaks(model: Model, r) -> dict:
    """results.json entries of a harmonic case: at every supported or sprung node the largest
    reaction amplitude per component over the sweep with its frequency and lag there; the
    largest end-force amplitude of each component over all members, likewise."""
    mp = r.member_peak.reshape(-1, 6)
    mf, ml = r.member_peak_freq.reshape(-1, 6), r.member_peak_lag.reshape(-1, 6)
    where = mp.argmax(axis=0) if len(mp) else []
    return {"reaction_peaks": {model.node_names[k]: {"amplitude": r.reaction_peak[k].tolist(),
                                                     "frequency_Hz": r.reaction_peak_freq[k].tolist(),
                                                     "lag_deg": r.reaction_peak_lag[k].tolist()} for k in r.support},
            "member_force_peak_max": {c: {"amplitude": float(mp[w, j]), "member": model.member_names[w // 2],
                                          "end": "ij"[w % 2], "frequency_Hz": float(mf[w, j]),
                                          "lag_deg": float(ml[w, j])}
                                      for j, (c, w) in enumerate(zip(END_FORCES, where))}}


def _write(model: Model, results: list[StaticResult], modal: list[ModesCaseResult], out: Path) -> dict:
    modal_all = list(modal)
    nodes, mems = model.node_names, model.member_names
    # spectrum peaks share the static tables (values are combined peaks, >= 0)
    # static results, then peak envelopes (values >= 0) of spectrum and history cases
    tables = [(r.name, r.u, r.reactions, r.member_forces) for r in results]
    tables += [(x.name, x.u, x.reactions, x.member_forces) for x in modal if isinstance(x, SpectrumResult)]
    tables += [(x.name, x.peak, x.reaction_peak, x.member_peak) for x in modal
               if isinstance(x, (FreeCaseResult, HistoryResult, HarmonicResult))]
    _write_csv(out / "displacements.csv", ["case", "node", *DIRECTIONS],
               [[name, n, *map(float, u[k])] for name, u, _, _ in tables for k, n in enumerate(nodes)])
    sup = np.flatnonzero(model.restraint.any(axis=1) | (model.springs > 0).any(axis=1))
    _write_csv(out / "reactions.csv", ["case", "node", "Fx", "Fy", "Fz", "Mx", "My", "Mz"],
               [[name, nodes[k], *map(float, rr[k])] for name, _, rr, _ in tables for k in sup])
    _write_csv(out / "member_forces.csv", ["case", "member", "end", *END_FORCES],
               [[name, m, end, *map(float, mf[k, 6 * e:6 * e + 6])]
                for name, _, _, mf in tables for k, m in enumerate(mems) for e, end in enumerate("ij")])
    for r in [x for x in modal if isinstance(x, FreeCaseResult)]:
        _write_csv(out / f"free_{r.name}.csv", ["time_s", "node", *DIRECTIONS],
                   ([float(t), nodes[n], *map(float, r.u[i, j])] for i, t in enumerate(r.t)
                    for j, n in enumerate(r.record)))
    for r in [x for x in modal if isinstance(x, HistoryResult)]:
        _write_csv(out / f"history_{r.name}.csv",
                   ["time_s", "node", *DIRECTIONS, "vx", "vy", "vz", "ax_abs", "ay_abs", "az_abs"],
                   ([float(t), nodes[n], *map(float, r.u[i, j]), *map(float, r.v[i, j, :3]),
                     *map(float, r.a[i, j, :3])] for i, t in enumerate(r.t) for j, n in enumerate(r.record)))
    harm = [x for x in modal if isinstance(x, HarmonicResult)]
    spectra = [x for x in modal if isinstance(x, SpectrumResult)]
    for r in harm:
        # lags set to 0 below 1e-9 of a table's largest amplitude, where the phase is round-off
        lag = lag_degrees(r.u, 1e-9 * np.abs(r.u).max(initial=0.0))
        _write_csv(out / f"frf_{r.name}.csv",
                   ["frequency_Hz", "node", *(f"amp_{d}" for d in DIRECTIONS),
                    *(f"lag_deg_{d}" for d in DIRECTIONS)],
                   ([float(fr), nodes[n], *map(float, np.abs(r.u[i, j])), *map(float, lag[i, j])]
                    for i, fr in enumerate(r.freq) for j, n in enumerate(r.record)))
        comps = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")
        lag = lag_degrees(r.reactions, 1e-9 * np.abs(r.reactions).max(initial=0.0))
        _write_csv(out / f"frf_reactions_{r.name}.csv",
                   ["frequency_Hz", "node", *(f"amp_{c}" for c in comps), *(f"lag_deg_{c}" for c in comps)],
                   ([float(fr), nodes[n], *map(float, np.abs(r.reactions[i, j])), *map(float, lag[i, j])]
                    for i, fr in enumerate(r.freq) for j, n in enumerate(r.support)))
        if r.member_forces is not None:
            mf = r.member_forces.reshape(len(r.freq), -1, 2, 6)           # (m, q, end, 6)
            lag = lag_degrees(mf, 1e-9 * np.abs(mf).max(initial=0.0))
            _write_csv(out / f"frf_member_forces_{r.name}.csv",
                       ["frequency_Hz", "member", "end", *(f"amp_{c}" for c in END_FORCES),
                        *(f"lag_deg_{c}" for c in END_FORCES)],
                       ([float(fr), mems[q], end, *map(float, np.abs(mf[i, j, e])), *map(float, lag[i, j, e])]
                        for i, fr in enumerate(r.freq) for j, q in enumerate(r.members)
                        for e, end in enumerate("ij")))
    free = [x for x in modal if isinstance(x, (FreeCaseResult, HistoryResult))]
    modal = [x for x in modal if isinstance(x, ModesCaseResult)]
    if modal:
        head = ["case", "mode", "frequency_Hz", "omega_rad_s", "period_s", "modal_mass_kg",
                "modal_stiffness_N_per_m"]
        head += [f"gamma_{a}" for a in AXES] + [f"mass_fraction_{a}" for a in AXES]
        head += [f"cumulative_{a}" for a in AXES] + ["eigen_residual"]
        rows = []
        for r in modal:
            m, p = r.modes, r.part
            mm, mk = unit_shape_mass_stiffness(r)
            for j in range(len(m.omega)):
                rows.append([r.name, j + 1, float(m.freq[j]), float(m.omega[j]), float(m.period[j]),
                             float(mm[j]), float(mk[j]),
                             *map(float, p.gamma[j]), *map(_fraction, p.fraction[j]), *map(_fraction, p.cumulative[j]),
                             float(m.residual[j])])
        _write_csv(out / "modes.csv", head, rows)
        _write_csv(out / "mode_shapes.csv", ["case", "mode", "node", *DIRECTIONS],
                   ([r.name, j + 1, n, *map(float, r.shapes[k, :, j])]
                    for r in modal for j in range(r.shapes.shape[2]) for k, n in enumerate(nodes)))
    from .output.character import mode_characters
    from .output.vtk import write_mode_files, write_response_files

    for r in modal:
        write_mode_files(out / "modes", model, r)
    for r in [x for x in modal_all if isinstance(x, (FreeCaseResult, HistoryResult))]:
        write_response_files(out / "response", model, r.name, r.frame_t, r.frames)
    lo, hi = model.bounding_box()
    sane = _plausible(model, results, modal)
    doc = {
        "schema": "quaver-results/1",
        "caution": CAUTION,
        "model": {"title": model.title, "deck": model.source, "nodes": model.n_nodes,
                  "members": model.n_members, "total_mass_kg": model.total_mass(),
                  "member_theory": "Timoshenko (shear and rotary inertia)" if model.settings.get("shear")
                  else "Euler-Bernoulli",
                  "mass_matrix": model.settings.get("mass", "consistent"),
                  "bounding_box_m": [lo.tolist(), hi.tolist()],
                  "assembled_mass_kg": model.settings["_assembled_mass"].tolist(),
                  "stiffness_condition_estimate": model.settings.get("_condition"),
                  "mass_check_pass": _mass_ok(model), "warnings": [str(w) for w in model.warnings],
                  "overrides": dict(model.overrides),
                  "cases_asked": (None if "_cases_asked" not in model.settings else
                                  dict(zip(("asked", "needed"), model.settings["_cases_asked"])))},
        "cases": [{"name": r.name, "kind": "static",
                   "max_translation_m": float(np.abs(r.u[:, :3]).max()),
                   "reaction_sum_N": r.reactions[:, :3].sum(0).tolist(),
                   "applied_sum_N": r.applied[:, :3].sum(0).tolist(),
                   "checks": {**r.checks(model.coords), **sane[r.name]}}
                  for r in results if isinstance(r, StaticResult)] + [
                  {"name": r.name, "kind": "modes", "solver": r.modes.solver,
                   "frequency_Hz": r.modes.freq.tolist(), "period_s": r.modes.period.tolist(),
                   "modal_mass_kg": unit_shape_mass_stiffness(r)[0].tolist(),
                   "modal_stiffness_N_per_m": unit_shape_mass_stiffness(r)[1].tolist(),
                   "effective_mass_kg": r.part.effective_mass.tolist(),
                   "participating_total_kg": r.part.total.tolist(),
                   "reference_point_m": np.asarray(r.reference).tolist(),
                   "mode_character": mode_characters(model, r),
                   "checks": {**modal_checks(r), **sane[r.name]}} for r in modal] + [
                  {"name": r.name, "kind": "free" if isinstance(r, FreeCaseResult) else "history",
                   "damping_ratio": r.zeta.tolist(),
                   "time_steps": len(r.t), "duration_s": float(r.t[-1]),
                   "peak_translation_m": float(np.abs(r.peak[:, :3]).max()),
                   "peaks": {nodes[k]: {"value": r.peak[k].tolist(), "time_s": r.peak_time[k].tolist()}
                             for k in range(len(nodes))},
                   **_force_peaks(model, r, sup),
                   "checks": modal_checks(r)} for r in free] + [
                  {"name": r.name, "kind": "harmonic", "damping_ratio": r.zeta.tolist(),
                   "frequencies": len(r.freq), "band_Hz": [float(r.freq[0]), float(r.freq[-1])],
                   "peak_amplitude_m": float(np.abs(r.peak[:, :3]).max()),
                   "peaks": {nodes[k]: {"amplitude": r.peak[k].tolist(), "frequency_Hz": r.peak_freq[k].tolist(),
                                        "lag_deg": r.peak_lag[k].tolist()} for k in range(len(nodes))},
                   **_harmonic_force_peaks(model, r),
                   "checks": modal_checks(r)} for r in harm] + [
                  {"name": r.name, "kind": "spectrum", "combination": r.rule,
                   "direction_rule": r.spatial, "direction_factors": r.directions.tolist(),
                   "damping_ratio": r.zeta.tolist(), "period_s": r.periods.tolist(),
                   "sa_m_s2": r.sa.tolist(), "damping_factor": r.damping_factor.tolist(), "base_reaction": dict(zip(["Fx", "Fy", "Fz", "Mx", "My", "Mz"],
                                                                         map(float, r.base))),
                   "max_displacement_m": float(r.u[:, :3].max()),
                   "checks": modal_checks(r)} for r in spectra],
    }
    (out / "results.json").write_text(json.dumps(_strict(doc), indent=2, allow_nan=False))
    return doc


# keys whose values may be undefined for a sound model, written as null: the period of a
# rigid-body mode (infinite) and mass fractions in a direction in which no mass moves (0/0)
_MAY_BE_NULL = ("period_s", "cumulative_mass_fraction", "missing_mass_fraction")


def _strict(x, path: str = "", nullable: bool = False):
    """A copy of the results document for strict JSON: undefined values (see _MAY_BE_NULL)
    become null; any other NaN or infinity means the numbers broke down and is refused."""
    if isinstance(x, dict):
        return {k: _strict(v, f"{path}.{k}" if path else k, nullable or k in _MAY_BE_NULL) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_strict(v, f"{path}[{i}]", nullable) for i, v in enumerate(x)]
    if isinstance(x, float) and not np.isfinite(x):
        if nullable:
            return None
        raise ModelError(f"the results hold a non-finite number ({x}) at {path}: the model is outside the range "
                         "that double precision can compute; check the magnitudes and units in the deck")
    return x


def _render(model: Model, modal: list, out: Path, jobs: int, draw_modes: int = 6, fps: float = 12.0) -> str:
    """Pictures into out/pictures; returns the one-line notice for the summary."""
    modes = [x for x in modal if isinstance(x, ModesCaseResult)]
    responses = [x for x in modal if isinstance(x, (FreeCaseResult, HistoryResult))]
    if not modes and not responses:
        return "no modes or responses to draw"
    from .output import render
    from .output.vtk import shape_scale

    try:
        ok, why = render.can_render()
        if not ok:
            return f"pictures skipped: {why}; results are complete"
        files = render.render_all(out / "pictures", model, modes, responses, shape_scale(model), jobs,
                                  draw_modes, fps)
    except Exception as exc:   # noqa: BLE001 - pictures are extras; a drawing failure must not lose results
        # half-drawn pictures would look complete in the report: drop them all
        shutil.rmtree(out / "pictures", ignore_errors=True)
        return f"pictures skipped: {type(exc).__name__}: {render.one_line(exc, last=False)}; results are complete"
    return f"{len(files)} pictures and animations in pictures/"


HISTORY_PLOTS = 12       # history plots per case in the report; every recorded node is in the CSV
STATIC_PLOTS = 24     # deformed-shape plots of the first static cases and combinations (report size)


def _report(model: Model, results: list, modal: list, doc: dict, out: Path, notice: str = "") -> None:
    """Plots into out/plots and the self-contained out/report.html."""
    from .output import plots
    from .output.report import write_report
    from .output.vtk import shape_scale

    pdir = out / "plots"
    pdir.mkdir(exist_ok=True)
    pics = out / "pictures"
    images: dict[str, list] = {}
    modes = {x.name: x for x in modal if isinstance(x, ModesCaseResult)}
    for name, m in modes.items():
        images[name] = [(plots.plot_participation(pdir / f"{name}_participation.png", m), "effective modal mass")]
        for j in range(min(6, m.shapes.shape[2])):
            # pictures of the first six modes, animations of the first three (keeps the file small)
            kinds = (("_plane.png", "across the main motion"), ("_iso.png", "isometric view"),
                     (".gif", "one cycle"))[: 3 if j < 3 else 2]
            for suffix, cap in kinds:
                f = pics / f"{name}_mode_{j + 1:03d}{suffix}"
                if f.exists():
                    images[name].append((f, f"mode {j + 1}, {m.modes.freq[j]:.4g} Hz, {cap}"))
    for r in results[:STATIC_PLOTS]:
        images[r.name] = [(plots.plot_static(pdir / f"{r.name}_deformed.png", model, r, shape_scale(model)),
                           "deformed shape")]
    for x in modal:
        if isinstance(x, (FreeCaseResult, HistoryResult)):
            # one plot per recorded node; past HISTORY_PLOTS, those that move most (in record order)
            top = np.abs(x.u[:, :, :3]).max(axis=(0, 2))
            keep = np.sort(np.argsort(-top, kind="stable")[:HISTORY_PLOTS])
            more = (f" ({len(keep)} of {len(x.record)} recorded nodes, those that move most; every node "
                    f"is in the CSV table)") if len(keep) < len(x.record) else ""
            images[x.name] = []
            for j in keep:
                node = model.node_names[x.record[j]]
                f = pdir / f"{x.name}_history_{re.sub(r'[^A-Za-z0-9_.-]', '_', node)}.png"
                images[x.name].append((plots.plot_history(f, x, node, j), f"displacement history at {node}{more}"))
            for f, cap in ((pics / f"{x.name}.gif", "response animation"), (pics / f"{x.name}_peak.png", "largest motion")):
                if f.exists():
                    images[x.name].append((f, cap))
        elif isinstance(x, HarmonicResult):
            j = int(np.argmax(np.abs(x.u[:, :, :3]).max(axis=(0, 2))))
            node = model.node_names[x.record[j]]
            case = next(c for c in model.cases if c.name == x.name)
            nat = modes[case.modes].modes.freq    # the modes this sweep was built on
            images[x.name] = [(plots.plot_frf(pdir / f"{x.name}_frf.png", x, node, j, nat),
                               f"frequency response at {node}")]
        elif isinstance(x, SpectrumResult):
            case = next(c for c in model.cases if c.name == x.name)
            images[x.name] = [(plots.plot_spectrum(pdir / f"{x.name}_spectrum.png", x, case.spectrum),
                               "spectrum and modal periods")]
    write_report(out / "report.html", doc, images, notes=[notice] if notice.startswith("pictures skipped:") else [])


def run_deck(deck: str, out: str | None = None, render: bool = True, jobs: int = 2,
             draw_modes: int = 6, fps: float = 12.0, let: dict | None = None, cases=None) -> int:
    """Solve the deck and write its results folder; `let` overrides let parameters (read_deck),
    `cases` names the cases and combinations to solve (with what they need; all when None)."""
    model = read_deck(deck, let=let)
    added = None
    if cases:
        from .case_selection import select_cases

        asked = list(dict.fromkeys(cases))
        model, added = select_cases(model, asked)
        model.settings["_cases_asked"] = (asked, added)
    target, shown = folder.resolve_target(out, deck)
    folder.check_target(target, shown, Path(deck))     # before solving, so an unusable --out fails at once
    folder.writable_parent(target, shown)
    notes = folder.tidy_after_kill(target, shown)
    folder.begin(target, shown)
    results, modal = solve_all(model)
    folder.writable_parent(target, shown)
    folder.check_target(target, shown, Path(deck))
    tmp = folder.stage(target)
    try:
        doc = _write(model, results, modal, tmp)
        notice = _render(model, modal, tmp, jobs, draw_modes, fps) if render else "pictures skipped (--no-render)"
        _report(model, results, modal, doc, tmp, notice)
        folder.write_manifest(tmp, target.name)
        notes += folder.swap(tmp, target, shown)
    except ResultsError:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    except OSError as exc:
        shutil.rmtree(tmp, ignore_errors=True)
        raise ResultsError(f"could not write results to {shown}: {exc}") from None
    except BaseException:
        # interrupted (Ctrl-C) or failed part-way: folder.where() says where the results are
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    print(f"{model.title or deck}: {model.n_nodes} nodes, {model.n_members} members, "
          f"total mass {model.total_mass():.6g} kg")
    if model.overrides:
        print("  overrides: " + ", ".join(f"{k} = {v}" for k, v in model.overrides.items()))
    if added is not None:
        print(f"  cases solved: {', '.join(asked)} as asked (--case)"
              + (f", with {', '.join(added)} which they need" if added else ""))
    for w in model.warnings:
        print(f"  {w}")
    for line in summary_lines(model):
        print(f"  {line}")
    am = model.settings["_assembled_mass"]
    print(f"  mass check: assembled M gives {am[0]:.6g} kg in X, Y, Z "
          f"({'pass' if _mass_ok(model) else 'FAIL'} against members + point masses)")
    sane = _plausible(model, results, modal)
    for r in results:
        ch = r.checks(model.coords)
        ok = "pass" if static_ok(ch) else "FAIL"
        size = "pass" if sane[r.name]["translation_within_size_pass"] else "FAIL"
        print(f"  {r.name:<12} max translation {np.abs(r.u[:, :3]).max():.4g} m   "
              f"equilibrium {r.equilibrium:.1e} {ok}   within the model's size {size}")
        for w in precision_lines(ch):
            print(f"               {w}")
        for w in sane[r.name]["warnings"]:
            print(f"               {w}")
    for r in modal:
        c = modal_checks(r)
        if isinstance(r, SpectrumResult):
            # a force under 1e-9 of the largest is round-off of a direction not excited: shown as 0;
            # the vertical one is shown when the case shakes Z
            fx, fy, fz = (0.0 if v < 1e-9 * np.abs(r.base[:3]).max() else v / 1e3 for v in np.abs(r.base[:3]))
            print(f"  {r.name:<12} response spectrum ({r.rule.upper()}, directions {r.spatial}); base shear "
                  f"Fx {fx:.4g} kN, Fy {fy:.4g} kN" + (f", base force Fz {fz:.4g} kN" if r.directions[2] else "")
                  + "; max displacement "
                  f"{r.u[:, :3].max():.4g} m; missing mass "
                  + ", ".join(f"{a} {percent(v)}" for a, v in c["missing_mass_fraction"].items())
                  + (" (corrected)" if r.missing else ""))
            for w in r.warnings:
                print(f"               {w}")
            continue
        if isinstance(r, HarmonicResult):
            k = np.unravel_index(np.abs(r.peak[:, :3]).argmax(), r.peak[:, :3].shape)
            print(f"  {r.name:<12} harmonic sweep {r.freq[0]:.4g}-{r.freq[-1]:.4g} Hz, {len(r.freq)} "
                  f"frequencies; peak amplitude {r.peak[k]:.4g} m at {r.peak_freq[k]:.4g} Hz")
            for w in r.warnings:
                print(f"               {w}")
            continue
        if isinstance(r, HistoryResult):
            print(f"  {r.name:<12} time history, {len(r.t)} steps; peak translation "
                  f"{np.abs(r.peak[:, :3]).max():.4g} m"
                  + ("; static correction for truncated modes" if r.corrected else ""))
            for w in r.warnings:
                print(f"               {w}")
            continue
        if isinstance(r, FreeCaseResult):
            print(f"  {r.name:<12} free vibration, {len(r.t)} steps; peak translation "
                  f"{np.abs(r.peak[:, :3]).max():.4g} m; modes capture "
                  f"{percent(r.captured, 2)} of the initial displacement (M-norm)")
            ok = "pass" if c["inertia_balance_pass"] else "FAIL"
            print(f"               reactions balance the modal inertia forces to {r.inertia_balance:.1e} {ok}")
            for w in r.warnings:
                print(f"               {w}")
            continue
        fr = ", ".join(f"{f:.4g}" for f in r.modes.freq[:6])
        print(f"  {r.name:<12} {len(r.modes.freq)} modes ({r.modes.solver}); first Hz: {fr}")
        cum = "  ".join(f"{a} {percent(v)}" for a, v in c["cumulative_mass_fraction"].items())
        missed = "not run" if c["none_missed"] is None else ("pass" if c["none_missed"] else "FAIL")
        if r.target is not None:
            got = r.part.cumulative[-1, :3]
            print(f"               mass target {', '.join(percent(v, 0) for v in r.target)} (X, Y, Z), "
                  f"reached {', '.join(percent(v) for v in got)}: "
                  + ("met" if r.target_met else f"NOT met with {len(r.modes.freq)} modes (the cap); "
                     "raise max or check the model"))
        verdict = {True: "pass", False: "FAIL"}
        print(f"               residual {c['max_residual']:.1e} {verdict[c['residual_pass']]}  "
              f"orthogonality M {c['mass_orthogonality']:.1e} K {c['stiffness_orthogonality']:.1e} "
              f"{verdict[c['orthogonality_pass']]}"
              f"  Sturm count {missed}  effective mass {cum}")
        if c["effective_mass_sum_pass"] is not None:
            print(f"               all {len(r.modes.freq)} modes: effective masses add up to the total mass to "
                  f"{c['effective_mass_sum_error']:.1e} {'pass' if c['effective_mass_sum_pass'] else 'FAIL'}")
        for line in zero_mode_lines(r.name, sane[r.name]):
            print(f"               {line}")
    print(f"  {notice}")
    ok = all(static_ok(r.checks(model.coords)) for r in results) and all(map(_modal_ok, modal))
    ok = ok and _mass_ok(model) and _plausible_ok(sane)
    short = [r.name for r in modal if getattr(r, "target_met", None) is False]
    print("  self-checks: all pass" if ok else "  self-checks: some FAIL (marked above); check before using the results")
    if short:
        print(f"  effective-mass target not met in {', '.join(short)}")
    for n in notes:
        print(f"  {n}")
    print(f"results in {shown}/")
    print("Caution: " + CAUTION)
    return 0 if ok and not short else 1
