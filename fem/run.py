"""`quaver run`: solve every static case and combination; write results.json and CSV tables.

Results go to a temporary folder beside the target and are moved into place only when
everything succeeded, so a failed run leaves the previous results untouched.
"""

from __future__ import annotations

import csv
import json
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np

from .analysis.static import StaticResult, factorise, solve_static
from .assembly import assemble
from .deck.reader import read_deck
from .errors import ResultsError
from .model import DIRECTIONS, Model

__all__ = ["run_deck", "solve_all"]

CAUTION = ("Results support, and never replace, the judgement of a qualified engineer; "
           "local codes and licensed practice govern.")
EQUILIBRIUM_TOL = 1e-8   # relative; a direct solve reaches ~1e-12, far looser means a bad model


def solve_all(model: Model) -> list[StaticResult]:
    asm = assemble(model)
    statics = [c for c in model.cases if c.kind == "static"]
    results = []
    if statics or model.combinations:
        lu = factorise(model, asm)
        results = [solve_static(model, asm, c, lu) for c in statics]
    by_name = {r.name: r for r in results}
    for combo in model.combinations:
        parts = [(f, by_name[n]) for n, f in combo.factors.items()]
        comb = StaticResult(combo.name, *(sum(f * getattr(r, a) for f, r in parts)
                                          for a in ("u", "reactions", "member_forces", "applied")),
                            equilibrium=max(r.equilibrium for _, r in parts))
        results.append(comb)
    return results


def _write_csv(path: Path, header, rows) -> None:
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)


def _write(model: Model, results: list[StaticResult], out: Path) -> None:
    nodes, mems = model.node_names, model.member_names
    _write_csv(out / "displacements.csv", ["case", "node", *DIRECTIONS],
               [[r.name, n, *map(float, r.u[k])] for r in results for k, n in enumerate(nodes)])
    sup = np.flatnonzero(model.restraint.any(axis=1) | (model.springs > 0).any(axis=1))
    _write_csv(out / "reactions.csv", ["case", "node", "Fx", "Fy", "Fz", "Mx", "My", "Mz"],
               [[r.name, nodes[k], *map(float, r.reactions[k])] for r in results for k in sup])
    labels = ["N", "Vy", "Vz", "T", "My", "Mz"]
    _write_csv(out / "member_forces.csv", ["case", "member", "end", *labels],
               [[r.name, m, end, *map(float, r.member_forces[k, 6 * e:6 * e + 6])]
                for r in results for k, m in enumerate(mems) for e, end in enumerate("ij")])
    lo, hi = model.bounding_box()
    doc = {
        "schema": "quaver-results/1",
        "caution": CAUTION,
        "model": {"title": model.title, "deck": model.source, "nodes": model.n_nodes,
                  "members": model.n_members, "total_mass_kg": model.total_mass(),
                  "bounding_box_m": [lo.tolist(), hi.tolist()]},
        "cases": [{"name": r.name, "kind": "static",
                   "max_translation_m": float(np.abs(r.u[:, :3]).max()),
                   "reaction_sum_N": r.reactions[:, :3].sum(0).tolist(),
                   "applied_sum_N": r.applied[:, :3].sum(0).tolist(),
                   "checks": {"equilibrium_relative": r.equilibrium,
                              "equilibrium_pass": bool(r.equilibrium < EQUILIBRIUM_TOL)}}
                  for r in results],
    }
    (out / "results.json").write_text(json.dumps(doc, indent=2))


def run_deck(deck: str, out: str | None = None) -> int:
    model = read_deck(deck)
    target = Path(out) if out else Path("results") / Path(deck).stem
    results = solve_all(model)
    target.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=".quaver-", dir=target.parent))
    try:
        _write(model, results, tmp)
        if target.exists():
            old = target.with_name(target.name + ".old")
            shutil.rmtree(old, ignore_errors=True)
            os.replace(target, old)
            os.replace(tmp, target)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(tmp, target)
    except OSError as exc:
        shutil.rmtree(tmp, ignore_errors=True)
        raise ResultsError(f"could not write results to {target}: {exc}") from None
    print(f"{model.title or deck}: {model.n_nodes} nodes, {model.n_members} members, "
          f"total mass {model.total_mass():.6g} kg")
    for r in results:
        ok = "pass" if r.equilibrium < EQUILIBRIUM_TOL else "FAIL"
        print(f"  {r.name:<12} max translation {np.abs(r.u[:, :3]).max():.4g} m   "
              f"equilibrium {r.equilibrium:.1e} {ok}")
    print(f"results in {target}/")
    print("Caution: " + CAUTION)
    return 0 if all(r.equilibrium < EQUILIBRIUM_TOL for r in results) else 1
