"""The CSV tables of a results folder, each result's rows picked by its kind.

displacements.csv, reactions.csv and member_forces.csv hold static cases and combinations,
then the combined peaks of spectrum cases, then the peak envelopes (values >= 0) of free,
history and harmonic cases. modes.csv and mode_shapes.csv hold the modes cases; free_, history_
and frf_ tables the time and frequency series of each response case, written gzip-compressed
(`write_series`: NAME.csv.gz, numbers to SERIES_DIGITS significant digits; numpy.loadtxt and
pandas.read_csv read them as they are).
"""

from __future__ import annotations

import csv
import gzip
import io
from pathlib import Path

import numpy as np

from ..analysis.harmonic import lag_degrees
from ..analysis.modal_case import AXES
from ..display import SI, tidy
from ..model import DIRECTIONS

__all__ = ["END_FORCES", "SERIES_DIGITS", "supported_nodes", "unit_shape_mass_stiffness", "write_series", "write_tables"]

END_FORCES = ("N", "Vy", "Vz", "T", "My", "Mz")
REACTIONS = ("Fx", "Fy", "Fz", "Mx", "My", "Mz")

# the fields of the shared tables (displacements, reactions, member end forces) by result kind
_SHARED = {"static": ("u", "reactions", "member_forces"), "spectrum": ("u", "reactions", "member_forces"),
           "free": ("peak", "reaction_peak", "member_peak"), "history": ("peak", "reaction_peak", "member_peak"),
           "harmonic": ("peak", "reaction_peak", "member_peak")}


# the quantity of each column of the shared tables (None: radians, shown as they are)
_KINDS = (("length",) * 3 + (None,) * 3, ("force",) * 3 + ("moment",) * 3, (("force",) * 3 + ("moment",) * 3) * 2)


def _display(units, values, kinds):
    """A result's (rows, columns) SI values in the display units, each quantity's values under
    fem.display.ZERO_TOL of its largest in that case shown as 0; as they are when no units are chosen."""
    if not units.chosen:
        return values
    v = np.array(values, float)
    flat = v.reshape(len(v), -1)
    for q in set(kinds):
        cols = [j for j, k in enumerate(kinds) if k == q]
        flat[:, cols] = tidy(flat[:, cols] * (units.per_si(q) if q else 1.0))
    return flat.reshape(v.shape)


def _head(units, names, kinds):
    """Column names, with their units when units are chosen (ux_mm, rx_rad, My_kN_m)."""
    if not units.chosen:
        return list(names)
    return [f"{n}_{units.header(k) if k else 'rad'}" for n, k in zip(names, kinds)]


def write_csv(path: Path, header, rows) -> None:
    """Header and rows (any iterable: the long tables pass generators, so their rows are never
    all held as Python objects, ~0.5 kB each)."""
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)


SERIES_DIGITS = 9     # significant digits of the series tables: round-off far below any engineering use
_ROWS = 20_000        # rows formatted at a time (bounds the memory of a long series)
# the rack demo's five series tables (13.2 MB of text; our measurement): zlib level 6 took 0.55 s
# of CPU for 5.11 MB, level 4 0.21 s for 5.33 MB (4 % more), level 1 0.10 s for 5.71 MB (12 %
# more); gzip's 9 took about twice level 6's time for files under 1 % smaller
GZIP_LEVEL = 4


def write_series(path: Path, header, columns) -> None:
    """A long table (a time or frequency series) as gzip-compressed CSV at `path` (NAME.csv.gz):
    `columns` one 1-D array per column, numbers written to SERIES_DIGITS significant digits,
    strings (node and member names, ends) as they are. The file is the same for the same
    numbers (no time stamp in the gzip header)."""
    number = f"%.{SERIES_DIGITS}g"
    fmt = ",".join("%s" if np.asarray(c).dtype.kind in "OUS" else number for c in columns) + "\n"
    n = len(columns[0])
    with path.open("wb") as raw, \
            gzip.GzipFile(fileobj=raw, mode="wb", compresslevel=GZIP_LEVEL, filename="", mtime=0) as gz, \
            io.TextIOWrapper(gz, encoding="utf-8", newline="") as fh:
        csv.writer(fh).writerow(header)
        for a in range(0, n, _ROWS):
            block = np.empty((min(n, a + _ROWS) - a, len(columns)), dtype=object)
            for j, c in enumerate(columns):
                block[:, j] = c[a:a + _ROWS]
            fh.write("".join(fmt % tuple(row) for row in block))


def _grid(first, second, values) -> list:
    """The columns of a series table: `first` (m,) repeated per row of `second` (r,), `second`
    tiled per step, then values (m, r, k) column by column."""
    m, r = len(first), len(second)
    v = np.asarray(values)
    v = v.reshape(m * r, v.shape[-1])           # sized: no rows (no member) keeps its columns
    return [np.repeat(np.asarray(first, float), r), np.tile(np.asarray(second, dtype=object), m),
            *(v[:, j] for j in range(v.shape[1]))]


def _fraction(x) -> float | str:
    """A mass fraction for a table: empty where no mass moves in that direction (0/0)."""
    return float(x) if np.isfinite(x) else ""


def supported_nodes(model) -> np.ndarray:
    """Indices of the nodes with a support or a spring to ground."""
    return np.flatnonzero(model.restraint.any(axis=1) | (model.springs > 0).any(axis=1))


def unit_shape_mass_stiffness(r) -> tuple[np.ndarray, np.ndarray]:
    """Modal mass (kg) and stiffness (N/m) of each mode shape scaled so that its largest nodal
    translation is 1 m (its largest rotation 1 rad if no node translates): the generalised
    mass phi^T M phi and stiffness w^2 phi^T M phi before mass normalisation."""
    sh = r.shapes                                           # (n, 6, k), mass-normalised
    top = np.abs(sh[:, :3]).max(axis=(0, 1))
    top = np.where(top > 0, top, np.abs(sh[:, 3:]).max(axis=(0, 1)))
    mass = 1.0 / np.where(top > 0, top, np.inf) ** 2
    return mass, mass * r.modes.omega ** 2


def _free_table(out: Path, model, r) -> None:
    names = [model.node_names[n] for n in r.record]
    write_series(out / f"free_{r.name}.csv.gz", ["time_s", "node", *DIRECTIONS], _grid(r.t, names, r.u))


def _history_table(out: Path, model, r) -> None:
    names = [model.node_names[n] for n in r.record]
    write_series(out / f"history_{r.name}.csv.gz",
                 ["time_s", "node", *DIRECTIONS, "vx", "vy", "vz", "ax_abs", "ay_abs", "az_abs"],
                 _grid(r.t, names, np.concatenate([r.u, r.v[:, :, :3], r.a[:, :, :3]], axis=2)))


def _harmonic_tables(out: Path, model, r) -> None:
    nodes, mems = model.node_names, model.member_names
    # lags set to 0 below 1e-9 of a table's largest amplitude, where the phase is round-off
    lag = lag_degrees(r.u, 1e-9 * np.abs(r.u).max(initial=0.0))
    # then the translations' displacement, velocity and acceleration (absolute), each as amplitude
    # and RMS (amplitude / sqrt 2), less the displacement amplitudes already written
    peak = np.stack([np.abs(r.u[:, :, :3]), np.abs(r.velocity()), np.abs(r.acceleration())], axis=2)
    motion = np.stack([peak, peak / np.sqrt(2)], axis=3).reshape(len(r.freq), len(r.record), 18)[:, :, 3:]
    head = [f"{kind}_{q}{d}" for q in "uva" for kind in ("amp", "rms") for d in "xyz"][3:]
    write_series(out / f"frf_{r.name}.csv.gz",
                 ["frequency_Hz", "node", *(f"amp_{d}" for d in DIRECTIONS), *(f"lag_deg_{d}" for d in DIRECTIONS),
                  *head],
                 _grid(r.freq, [nodes[n] for n in r.record], np.concatenate([np.abs(r.u), lag, motion], axis=2)))
    lag = lag_degrees(r.reactions, 1e-9 * np.abs(r.reactions).max(initial=0.0))
    write_series(out / f"frf_reactions_{r.name}.csv.gz",
                 ["frequency_Hz", "node", *(f"amp_{c}" for c in REACTIONS), *(f"lag_deg_{c}" for c in REACTIONS)],
                 _grid(r.freq, [nodes[n] for n in r.support], np.concatenate([np.abs(r.reactions), lag], axis=2)))
    if r.member_forces is not None:
        mf = r.member_forces.reshape(len(r.freq), len(r.members), 2, 6)           # (m, q, end, 6)
        lag = lag_degrees(mf, 1e-9 * np.abs(mf).max(initial=0.0))
        ends = [(mems[q], end) for q in r.members for end in "ij"]
        cols = _grid(r.freq, range(len(ends)), np.concatenate([np.abs(mf), lag], axis=3))
        which = cols[1].astype(int)
        member = np.array([m for m, _ in ends], dtype=object)[which]
        end = np.array([e for _, e in ends], dtype=object)[which]
        write_series(out / f"frf_member_forces_{r.name}.csv.gz",
                     ["frequency_Hz", "member", "end", *(f"amp_{c}" for c in END_FORCES),
                      *(f"lag_deg_{c}" for c in END_FORCES)], [cols[0], member, end, *cols[2:]])


# the tables of its own that a result of each kind writes
_OWN_TABLES = {"free": _free_table, "history": _history_table, "harmonic": _harmonic_tables}


def _modes_tables(out: Path, model, modal: list) -> None:
    head = ["case", "mode", "frequency_Hz", "omega_rad_s", "period_s", "modal_mass_kg", "modal_stiffness_N_per_m"]
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
    write_csv(out / "modes.csv", head, rows)
    write_csv(out / "mode_shapes.csv", ["case", "mode", "node", *DIRECTIONS],
              ([r.name, j + 1, n, *map(float, r.shapes[k, :, j])]
               for r in modal for j in range(r.shapes.shape[2]) for k, n in enumerate(model.node_names)))


def write_tables(results, out: Path) -> None:
    """Every CSV table of `results` (a `fem.results.Results`) into the folder `out`."""
    model = results.model
    nodes, mems = model.node_names, model.member_names
    shown = [*results.statics, *results.of_kind("spectrum"), *results.of_kind("free", "history", "harmonic")]
    units = model.settings.get("units") or SI
    tables = [(r.name, *(_display(units, getattr(r, a), kinds) for a, kinds in zip(_SHARED[r.kind], _KINDS)))
              for r in shown]
    write_csv(out / "displacements.csv", ["case", "node", *_head(units, DIRECTIONS, _KINDS[0])],
              [[name, n, *map(float, u[k])] for name, u, _, _ in tables for k, n in enumerate(nodes)])
    sup = supported_nodes(model)
    write_csv(out / "reactions.csv", ["case", "node", *_head(units, REACTIONS, _KINDS[1])],
              [[name, nodes[k], *map(float, rr[k])] for name, _, rr, _ in tables for k in sup])
    write_csv(out / "member_forces.csv", ["case", "member", "end", *_head(units, END_FORCES, _KINDS[2][:6])],
              [[name, m, end, *map(float, mf[k, 6 * e:6 * e + 6])]
               for name, _, _, mf in tables for k, m in enumerate(mems) for e, end in enumerate("ij")])
    from .stress_out import write_stress_tables

    write_stress_tables(results, out)
    from .springs_out import write_spring_tables

    write_spring_tables(results, out)
    for r in results.modal:
        write = _OWN_TABLES.get(r.kind)
        if write is not None:
            write(out, model, r)
    modes = results.of_kind("modes")
    if modes:
        _modes_tables(out, model, modes)
    if results.of_kind("buckling"):
        from .buckling_out import write_tables as write_buckling

        write_buckling(out, model, results.of_kind("buckling"))
    if results.sensitivities:
        from .sensitivity_tables import write_sensitivity_tables

        write_sensitivity_tables(out, results)
    from .resonance_out import write_resonance_tables

    write_resonance_tables(results, out)
    from .limits_out import write_limit_tables

    write_limit_tables(results, out)
    from .link_tables import write_link_peaks, write_link_table, write_offset_table

    write_link_table(out, results)
    write_link_peaks(out, results)
    if model.offsets is not None:
        from ..assembly import element_matrices

        write_offset_table(out, results, element_matrices(model)[2])
    from .envelope_out import write_extremes_tables

    write_extremes_tables(results, out)
