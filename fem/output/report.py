"""The review report: one self-contained HTML file (images embedded) that opens from disk."""

from __future__ import annotations

import html
import re
from pathlib import Path

import numpy as np

from . import limits_out, resonance_out
from .fmt import doc_units, percent, quantity
from .report_page import animation_file, grid, navigation, page_head
from .report_page import ok as _ok
from .report_page import table as _table
from .report_tables import demand_tables, end_force_table, glance_rows, modes_table, reaction_table, shown_units
from .springs_out import report_section as springs_section
from .stress_demands import demand_report
from .stress_out import report_section as stress_section

__all__ = ["HISTORY_PLOTS", "STATIC_PLOTS", "case_tables", "draw_plots", "report", "write_report"]

HISTORY_PLOTS = 12       # history plots per case in the report; every recorded node is in the CSV
STATIC_PLOTS = 24     # deformed-shape plots of the first static cases and combinations (report size)

def _force_rows(c: dict, doc: dict = None) -> list:
    """Largest peak reaction force and member end forces of a free or history case."""
    rows = []
    doc = doc or {}
    reac = c.get("reaction_peaks") or {}
    if reac:
        node, vals = max(reac.items(), key=lambda kv: max(kv[1][:3]))
        rows.append(["largest reaction force (peak)",
                     f"{quantity(doc, 'force', max(vals[:3]), (1e-3, 'kN'))} at {html.escape(node)}"])
    for comp, e in (c.get("member_force_peak_max") or {}).items():
        kind, unit = ("moment", "kN m") if comp in ("T", "My", "Mz") else ("force", "kN")
        rows.append([f"largest member end force {comp} (peak)",
                     f"{quantity(doc, kind, e['value'], (1e-3, unit))} at {html.escape(e['member'])} end {e['end']}"])
    return rows


def _forces(doc: dict, values) -> str:
    """X, Y, Z force sums in the display unit (kN without one), round-off (under
    fem.display.ZERO_TOL of the largest) shown as 0."""
    from ..display import tidy

    units = doc_units(doc)
    if not units.chosen:
        return ", ".join(f"{v:.4g}" for v in tidy(np.asarray(values, float) / 1e3)) + " kN"
    shown = tidy(np.asarray(values, float) * units.per_si("force"))
    return ", ".join(f"{v:.4g}" for v in shown) + f" {units.label('force')}"


def _warnings(doc: dict) -> list[str]:
    """Every warning of the run: the model's, then each case's, in deck order."""
    out = list(doc["model"].get("warnings") or [])
    for c in [*doc["cases"], *doc.get("demands", [])]:
        out += [f"{c['name']}: {w}" for w in c["checks"].get("warnings") or []]
        if c["kind"] == "modes" and c["checks"].get("mass_target_met") is False:
            out.append(f"{c['name']}: the effective-mass target was not met")
    return out


def write_report(path: Path, doc: dict, images: dict[str, list[tuple[Path, str]]],
                 notes: list[str] = (), tables: dict[str, str] | None = None) -> Path:
    """doc: the results.json content; images: section name -> [(file, caption)]; notes: run
    notices for the Warnings section (pictures skipped, ...); tables: case name -> HTML of its
    reaction and end-force tables (`case_tables`)."""
    base, tables = path.parent, tables or {}
    m = doc["model"]
    title = m["title"] or m["deck"]
    parts = [_table(["item", "value"], [
                 ["nodes", m["nodes"]], ["members", m["members"]],
                 ["total mass", f"{m['total_mass_kg']:.6g} kg"],
                 ["bounding box", f"{np.round(m['bounding_box_m'][0], 3).tolist()} to {np.round(m['bounding_box_m'][1], 3).tolist()} m"]]),
             "<h2 id='warnings'>Warnings</h2>"]
    found = _warnings(doc) + list(notes)
    parts.append("<ul class='warnings'>" + "".join(f"<li>{html.escape(w)}</li>" for w in found) + "</ul>"
                 if found else "<p>none</p>")
    parts.append("<h2 id='checks'>Self-checks</h2>")
    units = shown_units(doc)
    rows = [["assembled mass vs members + point masses", f"{m['assembled_mass_kg'][0]:.6g} kg", _ok(m["mass_check_pass"])]]
    for c in [*doc["cases"], *doc.get("demands", [])]:
        ch = c["checks"]
        if c["kind"] == "static":
            limit = ch.get("equilibrium_limit", 1e-8)
            rows.append([f"{c['name']}: equilibrium of reactions and loads", f"{ch['equilibrium_relative']:.1e}"
                         + (f" (rounding allows {limit:.1e})" if limit > 1e-8 else ""), _ok(ch["equilibrium_pass"])])
            if ch.get("solve_backward_error") is not None:
                rows.append([f"{c['name']}: displacements solve the stiffness equations (backward error)",
                             f"{ch['solve_backward_error']:.1e}", _ok(ch["solve_backward_error_pass"])])
            if "translation_within_size_pass" in ch:
                big = ch["largest_translation"]
                rows.append([f"{c['name']}: largest translation within the model's size",
                             f"{big['value_m']:.4g} m at {html.escape(str(big['node']))} {big['direction']}, "
                             f"{ch['translation_over_size']:.3g} of {ch['model_size_m']:.4g} m",
                             _ok(ch["translation_within_size_pass"])])
        elif c["kind"] == "modes":
            rows.append([f"{c['name']}: eigen residual (largest)", f"{ch['max_residual']:.1e}", _ok(ch["residual_pass"])])
            rows.append([f"{c['name']}: M- and K-orthogonality", f"{max(ch['mass_orthogonality'], ch['stiffness_orthogonality']):.1e}",
                         _ok(ch["orthogonality_pass"])])
            rows.append([f"{c['name']}: no mode missed (Sturm count)", f"{ch['sturm_count']} below the shift, {ch['sturm_expected']} computed",
                         _ok(ch["none_missed"])])
            if "near_zero_pass" in ch:
                slow = ch["near_zero_modes"]
                rows.append([f"{c['name']}: no near-zero mode beyond the rigid-body motions the supports leave free "
                             f"({ch['rigid_body_motions_free']})",
                             "none below " + f"{ch['near_zero_limit_Hz']:g} Hz" if not slow else
                             f"modes {', '.join(str(m['mode']) for m in slow[:6])}{' ...' if len(slow) > 6 else ''} "
                             f"below {ch['near_zero_limit_Hz']:g} Hz", _ok(ch["near_zero_pass"])])
            if ch.get("effective_mass_sum_pass") is not None:
                rows.append([f"{c['name']}: all modes, effective masses sum to the total", f"{ch['effective_mass_sum_error']:.1e}",
                             _ok(ch["effective_mass_sum_pass"])])
            if ch.get("mass_target") is not None:
                got = ch["cumulative_mass_fraction"]
                reached = ", ".join(f"{a} {percent(got[a])}" for a in ("X", "Y", "Z"))
                want = ", ".join(f"{a} {100 * v:.0f}%" for a, v in zip("XYZ", ch["mass_target"]))
                rows.append([f"{c['name']}: effective-mass target", f"target {want}; reached {reached} "
                             f"with {ch['modes_found']} modes", _ok(ch["mass_target_met"])])
        elif c["kind"] == "buckling":
            rows.append([f"{c['name']}: residual of (K + lambda Kg) x = 0 (largest)", f"{ch['max_residual']:.1e}",
                         _ok(ch["residual_pass"])])
            rows.append([f"{c['name']}: no load factor missed (Sturm count)",
                         f"{ch['sturm_count']} below the shift, {ch['sturm_expected']} computed", _ok(ch["none_missed"])])
        elif c["kind"] == "harmonic":
            rows.append([f"{c['name']}: retained modes cover the sweep", ("all modes of the model" if ch["modes_complete_to_Hz"] is None
                          else f"modes complete to {ch['modes_complete_to_Hz']:.4g} Hz"),
                         _ok(ch["modes_cover_band"] or ch["static_correction"])])
        elif c["kind"] == "free":
            rows.append([f"{c['name']}: initial shape represented by the modes",
                         f"{100 * ch['initial_displacement_captured']:.2f} %", _ok(ch["initial_displacement_captured"] > 0.95)])
            rows.append([f"{c['name']}: reactions hold the inertia forces, mode by mode",
                         f"{ch['inertia_balance_relative']:.1e}", _ok(ch["inertia_balance_pass"])])
        elif c["kind"] in ("combination", "envelope"):
            if ch["static_part"] is not None:
                rows.append([f"{c['name']}: equilibrium of its static part (peaks are bounds, not balanced)",
                             f"{ch['static_part']['equilibrium_relative']:.1e}",
                             _ok(ch["static_part"]["equilibrium_pass"])])
            rows.append([f"{c['name']}: largest translation within the model's size",
                         f"{ch['translation_over_size']:.3g} of {ch['model_size_m']:.4g} m",
                         _ok(ch["translation_within_size_pass"])])
        elif c["kind"] == "spectrum":
            miss = ", ".join(f"{k} {percent(v)}" for k, v in ch["missing_mass_fraction"].items())
            defined = [v for v in ch["missing_mass_fraction"].values() if v is not None and np.isfinite(v)]
            rows.append([f"{c['name']}: mass not in the retained modes", miss + (" (corrected)" if ch["missing_mass_correction"] else ""),
                         _ok(ch["missing_mass_correction"] or max(defined, default=0.0) <= 0.1)])
    parts.append(_table(["check", "value", "result"], rows))
    for c in doc["cases"]:
        if c["kind"] != "modes":
            continue
        parts.append(f"<h2 id='modes-{html.escape(c['name'])}'>Modes: {html.escape(c['name'])}</h2>")
        if c.get("preload_note"):
            under = f"the preload of case {c['preload']}" if c.get("preload") else "the members' pretension"
            parts.append(f"<p>Under {html.escape(under)}: {html.escape(c['preload_note'])}.</p>")
        parts.append(modes_table(c))
        parts.append(grid(images.get(c["name"], []), base))
        if c.get("sensitivity"):
            from .sensitivity_tables import sensitivity_section

            parts.append(sensitivity_section(c))
        parts += resonance_out.report_section(c, _table)
        parts.append(grid(images.get(f"{c['name']} resonance", []), base))
    for c in [*doc["cases"], *doc.get("demands", [])]:
        if c["kind"] == "modes":
            continue
        word = "" if c["kind"] in ("combination", "envelope") else " case"
        parts.append(f"<h2 id='case-{html.escape(c['name'])}'>{html.escape(c['kind'])}{word} {html.escape(c['name'])}</h2>")
        start, folded = len(parts), ""
        if c["kind"] == "static":
            parts.append(_table(["quantity", "value"], [
                ["largest translation", quantity(doc, "length", c["max_translation_m"], (1.0, "m"))],
                ["sum of applied loads (X, Y, Z)", _forces(doc, c["applied_sum_N"])],
                ["sum of reactions (X, Y, Z)", _forces(doc, c["reaction_sum_N"])],
                *_link_rows(c)]))
        elif c["kind"] in ("free", "history"):
            parts.append(_table(["quantity", "value"], [["time steps", c["time_steps"]], ["duration", f"{c['duration_s']:.4g} s"],
                                                        ["largest translation", quantity(doc, "length", c["peak_translation_m"], (1.0, "m"))],
                                                        *_force_rows(c, doc), *_link_rows(c)]))
        elif c["kind"] == "harmonic":
            parts.append(_table(["quantity", "value"], [["band", f"{c['band_Hz'][0]:.4g} to {c['band_Hz'][1]:.4g} Hz"],
                                                        ["frequencies", c["frequencies"]],
                                                        ["largest amplitude", quantity(doc, "length", c["peak_amplitude_m"], (1.0, "m"))],
                                                        *_motion_rows(c), *_link_rows(c)]))
            if c.get("vibration_limits"):
                parts.append(_table(["vibration limit", "found", "result"], limits_out.report_rows(c, _ok)))
        elif c["kind"] == "buckling":
            from .buckling_out import report_section

            parts.append(report_section(c))
        elif c["kind"] in ("combination", "envelope"):
            from .envelope_out import report_block

            parts.append(demand_tables(c, units))
            if "stress" in c["fields"]:           # the most stressed members, in the display units
                parts.append(demand_report(c["fields"]["stress"], "time_s" if c["kind"] == "combination" else "case", doc))
            folded = ("<details><summary>every field's largest and smallest value, in SI units</summary>"
                      f"{report_block(c, doc)}</details>")
        elif c["kind"] == "spectrum":
            b = c["base_reaction"]
            parts.append(_table(["quantity", "value"], [["combination", f"{c['combination'].upper()}, directions {c['direction_rule']}"],
                                                        ["base shear X, Y", f"{quantity(doc, 'force', b['Fx'], (1e-3, 'kN'))}, "
                                                                            f"{quantity(doc, 'force', b['Fy'], (1e-3, 'kN'))}"],
                                                        ["largest displacement", quantity(doc, "length", c["max_displacement_m"], (1.0, "m"))]]))
        # the case's short tables side by side where the page is wide enough, one under the other where not
        boxes = [p if p.startswith("<div") else f"<div>{p}</div>" for p in [*parts[start:], tables.get(c["name"], "")] if p]
        parts[start:] = ["<div class='cols'>", *boxes, "</div>", folded]
        parts.append(stress_section(c, doc, _table))
        parts.append(springs_section(c, doc, _table))
        parts.append(grid(images.get(c["name"], []), base))
    parts.append(f'<p class="caution"><b>Caution.</b> {html.escape(doc["caution"])}</p></main></body></html>')
    glance = _table(["item", "value", "result"], glance_rows(doc, rows, units), left=2)
    path.write_text("\n".join([*_top(doc, title, path.parent, rows), glance, "<h2 id='model'>Model</h2>", *parts]),
                    encoding="utf-8")
    return path


def _top(doc: dict, title: str, base: Path, check_rows: list) -> list[str]:
    """The page's head, navigation bar, title, caution and the heading of the at-a-glance table."""
    m = doc["model"]
    viewer = (base / "viewer.html").is_file()
    links = [("glance", "At a glance", False), ("model", "Model", False), ("warnings", "Warnings", False),
             ("checks", "Self-checks", any('class="fail"' in r[2] for r in check_rows))]
    for c in [*doc["cases"], *doc.get("demands", [])]:
        anchor = f"modes-{c['name']}" if c["kind"] == "modes" else f"case-{c['name']}"
        links.append((anchor, c["name"], False))
    see = " &middot; <a href='viewer.html'>interactive 3D view</a> (viewer.html)" if viewer else ""
    return [page_head(title), navigation(links), "<main>", f"<h1>{html.escape(title)}</h1>",
            f"<p>Deck <code>{html.escape(m['deck'])}</code>{see}</p>",
            f'<p class="caution" id="caution"><b>Caution.</b> {html.escape(doc["caution"])}</p>',
            "<h2 id='glance'>At a glance</h2>"]


def _mode_plots(pdir: Path, m) -> list:
    """The participation plot of a modes case."""
    from . import plots

    return [(plots.plot_participation(pdir / f"{m.name}_participation.png", m), "effective modal mass")]


def _mode_pictures(pics: Path, m) -> list:
    """The pictures of a modes case found in `pics`."""
    images = []
    for j in range(min(6, m.shapes.shape[2])):
        # pictures of the first six modes, animations of the first three (keeps the file small)
        stem = f"{m.name}_mode_{j + 1:03d}"
        found = [(pics / f"{stem}_plane.png", "across the main motion"), (pics / f"{stem}_iso.png", "isometric view"),
                 *([(animation_file(pics, stem), "one cycle")] if j < 3 else [])]
        images += [(f, f"mode {j + 1}, {m.modes.freq[j]:.4g} Hz, {cap}") for f, cap in found if f and f.exists()]
    return images


def _motion_plots(pdir: Path, model, x) -> list:
    """A free or history case: one plot per recorded node; past HISTORY_PLOTS, those that move
    most (in record order)."""
    from . import plots

    top = np.abs(x.u[:, :, :3]).max(axis=(0, 2))
    keep = np.sort(np.argsort(-top, kind="stable")[:HISTORY_PLOTS])
    more = (f" ({len(keep)} of {len(x.record)} recorded nodes, those that move most; every node "
            f"is in the CSV table)") if len(keep) < len(x.record) else ""
    images = []
    for j in keep:
        node = model.node_names[x.record[j]]
        f = pdir / f"{x.name}_history_{re.sub(r'[^A-Za-z0-9_.-]', '_', node)}.png"
        images.append((plots.plot_history(f, x, node, j), f"displacement history at {node}{more}"))
    return images


def _motion_pictures(pics: Path, x) -> list:
    """A free or history case's animation and largest-motion picture found in `pics`."""
    return [(f, cap) for f, cap in ((animation_file(pics, x.name), "response animation"),
                                    (pics / f"{x.name}_peak.png", "largest motion")) if f and f.exists()]


def _motion_rows(c) -> list:
    """Rows of a harmonic case's largest velocity (mm/s, the unit of vibration criteria) and
    acceleration over the structure."""
    v, a = c["largest_motion"]["velocity_m_s"], c["largest_motion"]["acceleration_m_s2"]
    return [["largest velocity", f"{1e3 * v['peak']:.4g} mm/s amplitude, {1e3 * v['rms']:.4g} mm/s RMS, at "
             f"{html.escape(v['node'])} {v['direction']}, {v['frequency_Hz']:.4g} Hz"],
            ["largest acceleration", f"{a['peak']:.4g} m/s^2 amplitude at {html.escape(a['node'])} {a['direction']}, "
             f"{a['frequency_Hz']:.4g} Hz"]]


def _harmonic_images(pdir: Path, results, x) -> list:
    from . import plots

    j = int(np.argmax(np.abs(x.u[:, :, :3]).max(axis=(0, 2))))
    node = results.model.node_names[x.record[j]]
    nat = results.modes_of(x.name).modes.freq    # the modes this sweep was built on
    bands = plots.frf_bands(results.model.excitations, x.freq)
    extra = {"bands": bands} if bands else {}
    caption = f"frequency response at {node}" + (" (shaded: where the declared machines and bands act)"
                                                  if bands else "")
    return [(plots.plot_frf(pdir / f"{x.name}_frf.png", x, node, j, nat, **extra), caption)]


def _spectrum_images(pdir: Path, results, x) -> list:
    from . import plots

    spectrum = results.definition(x.name).spectrum
    return [(plots.plot_spectrum(pdir / f"{x.name}_spectrum.png", x, spectrum), "spectrum and modal periods")]


def draw_plots(results, out: Path) -> dict[str, list]:
    """Every matplotlib plot of the report of `results`, drawn into out/plots (they need no
    picture, so a run draws them while its pictures render): section name -> [(file, caption)]."""
    from . import plots
    from .vtk import shape_scale

    model = results.model
    pdir = out / "plots"
    pdir.mkdir(exist_ok=True)
    images: dict[str, list] = {}
    for m in results.of_kind("modes"):
        images[m.name] = _mode_plots(pdir, m)
    images.update({f"{n} resonance": v for n, v in resonance_out.report_images(pdir, results).items()})
    for r in results.statics[:STATIC_PLOTS]:
        images[r.name] = [(plots.plot_static(pdir / f"{r.name}_deformed.png", model, r, shape_scale(model)),
                           "deformed shape")]
    drawn = {"free": lambda x: _motion_plots(pdir, model, x),
             "history": lambda x: _motion_plots(pdir, model, x),
             "harmonic": lambda x: _harmonic_images(pdir, results, x),
             "spectrum": lambda x: _spectrum_images(pdir, results, x)}
    for x in results.modal:
        if x.kind in drawn:
            images[x.name] = drawn[x.kind](x)
    return images


def report(results, doc: dict, out: Path, notice: str = "", plotted: dict[str, list] | None = None) -> None:
    """The self-contained out/report.html of `results` (a `fem.results.Results`) and its
    results document `doc`, with the plots of `draw_plots` (`plotted`; drawn now into out/plots
    when not given) and the pictures found in out/pictures."""
    pics = out / "pictures"
    images = {k: list(v) for k, v in (draw_plots(results, out) if plotted is None else plotted).items()}
    for x in results.modal:
        if x.kind == "modes":
            images.setdefault(x.name, []).extend(_mode_pictures(pics, x))
        elif x.kind in ("free", "history"):
            images.setdefault(x.name, []).extend(_motion_pictures(pics, x))
        elif x.kind == "buckling":
            from .buckling_out import picture_images

            images[x.name] = picture_images(pics, x)
    write_report(out / "report.html", doc, images, notes=[notice] if notice.startswith("pictures skipped:") else [],
                 tables=case_tables(results, doc))


def case_tables(results, doc: dict) -> dict[str, str]:
    """Case name -> its reactions per node and governing member end forces (report_tables)."""
    units = shown_units(doc)
    return {r.name: reaction_table(results, r, units) + end_force_table(results, r, units)
            for r in [*results.statics, *results.of_kind("spectrum", "free", "history", "harmonic")]}


def _link_rows(c) -> list:
    """The largest force and moment each rigid link exerts on a node that follows it (static); in a
    dynamic case the resultant of its directions' peaks (which need not coincide: an upper bound)."""
    rows = []
    for link, nodes in c.get("link_forces", {}).items():
        force = max((np.hypot.reduce([v or 0.0 for v in vals[:3]]), n) for n, vals in nodes.items())
        moment = max((np.hypot.reduce([v or 0.0 for v in vals[3:]]), n) for n, vals in nodes.items())
        rows.append([f"link {html.escape(link)}: largest force on a node that follows it",
                     f"{force[0] / 1e3:.4g} kN at {html.escape(force[1])}, moment {moment[0] / 1e3:.4g} kN m at "
                     f"{html.escape(moment[1])}"])
    return rows
