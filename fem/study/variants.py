"""A study's variants: the grid of its sweeps, times its random draws, each with the variant its
modes are tracked from.

Grid points run in order with the last sweep varying fastest. Where the study draws parameters,
each grid point is first run as written (its drawn parameters at the deck's own values: the
nominal variant), then once per draw; draws are tracked against their nominal variant, which
holds the identities. Along the grid a variant is tracked from its neighbour one step back in
the fastest sweep that is not at its start ('previous'), or from variant 0 ('base').

Draws come from `numpy.random.default_rng(seed)`, parameter by parameter in the study's order,
the same draws at every grid point (so grid points differ only by what is swept). normal(mean,
sd) and uniform(low, high) as numpy defines them; lognormal(mean, sd) is the lognormal whose
own mean and standard deviation are those: sigma_ln^2 = ln(1 + (sd / mean)^2),
mu_ln = ln(mean) - sigma_ln^2 / 2 (the moments of the lognormal distribution, e.g. Ang and Tang,
Probability Concepts in Engineering, 2nd ed. 2007, section 3.2.3; from memory).
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

import numpy as np

from .spec import Study, _text

__all__ = ["Variant", "draw_values", "variants"]


@dataclass(frozen=True)
class Variant:
    """One model of a study: `let` the overrides (name -> deck text), `values` their numbers in
    the units written (name -> float), `point` its grid index, `draw` its draw (0 for the
    nominal, 1.. for the draws; 0 without draws), `parent` the variant its modes are matched
    to (None for the base)."""

    index: int
    let: dict
    values: dict
    point: int
    draw: int
    parent: int | None


def draw_values(study: Study) -> np.ndarray:
    """(n_draws, n_drawn) the drawn numbers, in the units written, seeded by the study."""
    rng = np.random.default_rng(study.seed)
    n = study.n_draws
    cols = []
    for d in study.draws:
        if d.distribution == "normal":
            cols.append(rng.normal(d.a, d.b, n))
        elif d.distribution == "uniform":
            cols.append(rng.uniform(d.a, d.b, n))
        else:
            s2 = math.log1p((d.b / d.a) ** 2)
            cols.append(rng.lognormal(math.log(d.a) - s2 / 2, math.sqrt(s2), n))
    return np.column_stack(cols) if cols else np.zeros((n, 0))


def variants(study: Study) -> list[Variant]:
    """Every variant of the study, in the order they are tabled."""
    sweeps = study.sweeps
    shape = [len(s.values) for s in sweeps]
    drawn = draw_values(study) if study.draws else np.zeros((0, 0))
    per_point = 1 + len(drawn) if study.draws else 1
    out: list[Variant] = []
    first: dict[tuple, int] = {}          # grid index -> its nominal variant
    for p, idx in enumerate(itertools.product(*[range(n) for n in shape])):
        let = {s.name: s.values[i] for s, i in zip(sweeps, idx)}
        values = {s.name: s.numbers[i] for s, i in zip(sweeps, idx)}
        parent = _grid_parent(idx, first) if study.against == "previous" else (0 if out else None)
        base = len(out)
        first[idx] = base
        out.append(Variant(base, let, values, p, 0, parent))
        for k, row in enumerate(drawn, 1):
            dl = {d.name: _text(x, d.unit) for d, x in zip(study.draws, row)}
            dv = {d.name: float(x) for d, x in zip(study.draws, row)}
            out.append(Variant(base + k, {**let, **dl}, {**values, **dv}, p, k,
                               base if study.against == "previous" else 0))
        assert len(out) == base + per_point
    return out


def _grid_parent(idx: tuple, first: dict) -> int | None:
    """The nominal variant one step back along the fastest sweep not at its start."""
    for axis in range(len(idx) - 1, -1, -1):
        if idx[axis] > 0:
            back = list(idx)
            back[axis] -= 1
            return first[tuple(back)]
    return None
