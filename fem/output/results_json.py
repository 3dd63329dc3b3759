"""results.json: the results document (schema quaver-results/1) and its strict JSON.

Each case's entry is built by the function of its result kind; the verdicts come from the
solve's self-checks (`fem.checks`), never judged here.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np

from ..errors import ModelError
from . import buckling_out, envelope_out, limits_out, resonance_out
from .link_tables import link_entry
from .tables import END_FORCES, REACTIONS, supported_nodes, unit_shape_mass_stiffness

__all__ = ["CAUTION", "SCHEMA", "dumps", "results_doc", "strict", "write_results_json"]

SCHEMA = "quaver-results/1"
CAUTION = ("Results support, and never replace, the judgement of a qualified engineer; "
           "local codes and licensed practice govern.")


def _force_peaks(model, r, sup) -> dict:
    """Entries of a free or history case: peak |reaction| at every supported or sprung node, and
    the largest peak of each end-force component over all members."""
    mp = r.member_peak.reshape(-1, 6)                 # rows: member 0 end i, member 0 end j, ...
    where = mp.argmax(axis=0) if len(mp) else []
    return {"reaction_peaks": {model.node_names[k]: r.reaction_peak[k].tolist() for k in sup},
            "member_force_peak_max": {c: {"value": float(mp[w, j]), "member": model.member_names[w // 2],
                                          "end": "ij"[w % 2]} for j, (c, w) in enumerate(zip(END_FORCES, where))}}


def _harmonic_force_peaks(model, r) -> dict:
    """Entries of a harmonic case: at every supported or sprung node the largest reaction
    amplitude per component over the sweep with its frequency and lag there; the largest
    end-force amplitude of each component over all members, likewise."""
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


def _largest(peak, freq, nodes) -> dict:
    """The largest of peak (n, 3) over nodes and X, Y, Z: its peak, RMS (peak / sqrt 2), node,
    direction and frequency."""
    k, d = np.unravel_index(int(np.argmax(peak)), peak.shape)
    return {"peak": float(peak[k, d]), "rms": float(peak[k, d] / np.sqrt(2)), "node": nodes[k],
            "direction": "XYZ"[d], "frequency_Hz": float(freq[k, d])}


def harmonic_motion(model, r) -> dict:
    """Entries of a harmonic case on the motion of the translations: the largest displacement,
    velocity and acceleration amplitude over the structure, and each at the recorded nodes per
    X, Y, Z, with their RMS (amplitude / sqrt 2) and frequencies; velocity and acceleration
    absolute (the ground's added for a ground acceleration)."""
    nodes = model.node_names
    kinds = {"displacement_m": (r.peak[:, :3], r.peak_freq[:, :3]), "velocity_m_s": (r.vel_peak, r.vel_peak_freq),
             "acceleration_m_s2": (r.acc_peak, r.acc_peak_freq)}
    return {"frequencies_listed": r.listed,
            "largest_motion": {k: _largest(p, f, nodes) for k, (p, f) in kinds.items()},
            "recorded_motion": {nodes[n]: {k: {"peak": p[n].tolist(), "rms": (p[n] / np.sqrt(2)).tolist(),
                                               "frequency_Hz": f[n].tolist()} for k, (p, f) in kinds.items()}
                                for n in r.record}}


def _static(results, r) -> dict:
    checks = results.checks
    return {"name": r.name, "kind": "static", "max_translation_m": float(np.abs(r.u[:, :3]).max()),
            "reaction_sum_N": r.reactions[:, :3].sum(0).tolist(), "applied_sum_N": r.applied[:, :3].sum(0).tolist(),
            **link_entry(results.model, r),
            "checks": {**checks.cases[r.name], **checks.plausible[r.name]}}


def _modes(results, r) -> dict:
    from .character import mode_characters

    checks = results.checks
    mass, stiffness = unit_shape_mass_stiffness(r)
    return {"name": r.name, "kind": "modes", "solver": r.modes.solver,
            "frequency_Hz": r.modes.freq.tolist(), "period_s": r.modes.period.tolist(),
            "modal_mass_kg": mass.tolist(), "modal_stiffness_N_per_m": stiffness.tolist(),
            "effective_mass_kg": r.part.effective_mass.tolist(), "participating_total_kg": r.part.total.tolist(),
            "reference_point_m": np.asarray(r.reference).tolist(),
            "mode_character": mode_characters(results.model, r),
            "checks": {**checks.cases[r.name], **checks.plausible[r.name]},
            "resonance": resonance_out.case_entry(results, r.name), **_sensitivity(results, r),
            **buckling_out.preload_entry(results, r)}


def _sensitivity(results, r) -> dict:
    """A modes case's `sensitivity` block, when it asks for one (output/sensitivity_tables.py)."""
    if r.name not in results.sensitivities:
        return {}
    from .sensitivity_tables import sensitivity_block

    return {"sensitivity": sensitivity_block(results.sensitivities[r.name], results.definition(r.name))}


def _response(results, r) -> dict:
    model = results.model
    return {"name": r.name, "kind": r.kind, "damping_ratio": r.zeta.tolist(),
            "time_steps": len(r.t), "duration_s": float(r.t[-1]),
            "peak_translation_m": float(np.abs(r.peak[:, :3]).max()),
            "peaks": {model.node_names[k]: {"value": r.peak[k].tolist(), "time_s": r.peak_time[k].tolist()}
                      for k in range(model.n_nodes)},
            **_force_peaks(model, r, supported_nodes(model)), **link_entry(model, r),
            "checks": results.checks.cases[r.name]}


def _harmonic(results, r) -> dict:
    model = results.model
    return {"name": r.name, "kind": "harmonic", "damping_ratio": r.zeta.tolist(),
            "frequencies": len(r.freq), "band_Hz": [float(r.freq[0]), float(r.freq[-1])],
            "peak_amplitude_m": float(np.abs(r.peak[:, :3]).max()),
            "peaks": {model.node_names[k]: {"amplitude": r.peak[k].tolist(), "frequency_Hz": r.peak_freq[k].tolist(),
                                            "lag_deg": r.peak_lag[k].tolist()} for k in range(model.n_nodes)},
            **_harmonic_force_peaks(model, r), **harmonic_motion(model, r), **link_entry(model, r),
            "checks": results.checks.cases[r.name], **limits_out.case_entry(results, r)}


def _spectrum(results, r) -> dict:
    return {"name": r.name, "kind": "spectrum", "combination": r.rule,
            "direction_rule": r.spatial, "direction_factors": r.directions.tolist(),
            "damping_ratio": r.zeta.tolist(), "period_s": r.periods.tolist(),
            "sa_m_s2": r.sa.tolist(), "damping_factor": r.damping_factor.tolist(),
            "base_reaction": dict(zip(REACTIONS, map(float, r.base))),
            "max_displacement_m": float(r.u[:, :3].max()), **link_entry(results.model, r),
            "checks": results.checks.cases[r.name]}


def _sections(model) -> dict:
    """Each section as written (name -> properties, SI), with the shear areas its members use in
    each material (they follow the material's Poisson's ratio for round and rectangular shapes)."""
    from ..sections import catalogue_entry

    out = {}
    for name, sec in model.sections.items():
        p = sec.props
        known = p.shape != "generic" or p.Wy > 0   # a generic section has no outline: W as declared
        used = {}
        for k, (s, mat) in enumerate(zip(model.member_section, model.member_material)):
            if s == name and mat not in used:
                used[mat] = {"nu": model.materials[mat].nu, "Avy_m2": float(model.Avy[k]),
                             "Avz_m2": float(model.Avz[k])}
        out[name] = {"shape": p.shape, "designation": sec.designation or None,
                     "standard": catalogue_entry(sec.designation).standard if sec.designation else None,
                     "A_m2": p.A, "Iy_m4": p.Iy, "Iz_m4": p.Iz, "J_m4": p.J,
                     "Wy_m3": p.Wy if known else None, "Wz_m3": p.Wz if known else None,
                     "members": model.member_section.count(name), "shear_areas_m2": used}
    return out


# each kind's entry, and the order of the kinds in the document's list of cases
_ENTRY = {"static": _static, "modes": _modes, "free": _response, "history": _response,
          "harmonic": _harmonic, "spectrum": _spectrum, "buckling": buckling_out.json_entry}
_ORDER = (("static",), ("modes",), ("free", "history"), ("harmonic",), ("spectrum",), ("buckling",))


def results_doc(results) -> dict:
    """The results document of `results` (a `fem.results.Results`), as plain Python values."""
    model = results.model
    lo, hi = model.bounding_box()
    doc = {
        "schema": SCHEMA,
        "caution": CAUTION,
        "model": {"title": model.title, "deck": model.source, "nodes": model.n_nodes,
                  "members": model.n_members, "total_mass_kg": model.total_mass(),
                  "member_theory": "Timoshenko (shear and rotary inertia)" if model.settings.get("shear")
                  else "Euler-Bernoulli",
                  "mass_matrix": model.settings.get("mass", "consistent"),
                  "bounding_box_m": [lo.tolist(), hi.tolist()],
                  "assembled_mass_kg": results.assembled_mass.tolist(),
                  "stiffness_condition_estimate": results.soundness.condition,
                  "mass_check_pass": results.checks.mass_pass, "warnings": results.warnings,
                  "overrides": dict(model.overrides),
                  "cases_asked": None if results.cases_asked is None else dict(results.cases_asked)},
        "excitations": resonance_out.excitations_entry(model),
        "cases": [_ENTRY[r.kind](results, r) for kinds in _ORDER for r in results.of_kind(*kinds)],
        # combinations with a dynamic case, then envelopes (output/envelope_out.py)
        "demands": [envelope_out.json_entry(results, r) for r in results.demands],
        "sections": _sections(model),
    }
    from .springs_out import add_spring_blocks

    add_spring_blocks(results, doc)
    return _with_stresses(results, doc)


def _with_stresses(results, doc: dict) -> dict:
    """Each case's member stresses (SI) in its entry, each section's stress points, the units of
    the document and the display units chosen for the summary, report and tables (fem.display)."""
    from .stress_out import stress_block, units_of

    for c in doc["cases"]:
        block = stress_block(results, c["name"])
        if block is not None:
            c["stresses"] = block
    for name, entry in doc["sections"].items():
        points = results.model.sections[name].stress_points()
        entry["stress_points"] = None if points is None else points.as_dict()
    shown = units_of(results)
    doc["units"] = {"length": "m", "force": "N", "moment": "N*m", "stress": "Pa", "frequency": "Hz", "mass": "kg",
                    "time": "s", "angle": "rad"}
    doc["display_units"] = {q: getattr(shown, q) for q in ("length", "force", "moment", "stress", "frequency")}
    doc["display_units"]["chosen"] = shown.chosen
    return doc


# keys whose values may be undefined for a sound model, written as null: the period of a
# rigid-body mode (infinite) and mass fractions in a direction in which no mass moves (0/0)
_MAY_BE_NULL = ("period_s", "cumulative_mass_fraction", "missing_mass_fraction")


def strict(x, path: str = "", nullable: bool = False):
    """A copy of the results document for strict JSON: undefined values (see _MAY_BE_NULL)
    become null; any other NaN or infinity means the numbers broke down and is refused."""
    if isinstance(x, dict):
        return {k: strict(v, f"{path}.{k}" if path else k, nullable or k in _MAY_BE_NULL) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [strict(v, f"{path}[{i}]", nullable) for i, v in enumerate(x)]
    if isinstance(x, float) and not np.isfinite(x):
        if nullable:
            return None
        raise ModelError(f"the results hold a non-finite number ({x}) at {path}: the model is outside the range "
                         "that double precision can compute; check the magnitudes and units in the deck")
    return x


def write_results_json(results, out: Path) -> dict:
    """Write out/results.json; returns the document."""
    doc = results_doc(results)
    (out / "results.json").write_text(dumps(strict(doc)))
    return doc


# a JSON string (left as it is), or an array holding no array or object (its strings whole)
_STRING = r'"(?:[^"\\]|\\.)*"'
_FLAT = re.compile(rf'{_STRING}|\[(?:[^\[\]{{}}"]|{_STRING})*\]')


def dumps(doc) -> str:
    """`doc` as indented JSON with each array of plain values on one line (a quarter smaller than
    one value a line on the rack demo; the same document: only whitespace between tokens goes,
    and a line break never occurs inside a JSON string)."""
    def flat(m):
        if m.group(0)[0] == '"':
            return m.group(0)
        return re.sub(r"\n\s*\]", "]", re.sub(r"\[\n\s*", "[", re.sub(r",\n\s*", ", ", m.group(0))))

    return _FLAT.sub(flat, json.dumps(doc, indent=2, allow_nan=False))
