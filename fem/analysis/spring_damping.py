"""The damping ratio of springs between nodes (fem.model.NodeSprings.damping) as modal damping.

A discrete damper cannot be carried exactly by the classical (proportional) damping the modal
cases use: its damping matrix does not diagonalise with the modes. What they use instead is the
first-order, strain-energy weighted estimate (the modal strain energy method; e.g. Johnson and
Kienholz 1982, "Finite element prediction of damping in structures with constrained viscoelastic
layers", AIAA J. 20(9); from memory):

    zeta_i += sum over springs s of zeta_s * U_s,i / U_i

with U_s,i = 0.5 d_s,i^T k_s d_s,i the spring's strain energy in mode i and U_i = 0.5 w_i^2 the
mode's (mass-normalised). The ratio zeta_s is read as the spring's own loss: a complex stiffness
k_s (1 + 2 i zeta_s) (hysteretic damping, loss factor 2 zeta_s), which is the same as a viscous
dashpot c_s = 2 zeta_s k_s / w at each mode's frequency w. For that model the estimate is the
first-order term of the complex eigenvalue, exact to O(zeta^2) relative
(tests/test_node_spring_damping.py checks it against a direct complex eigen solve of a two-DOF
isolator at 1-5 % within 1 %); the coupling the modes get from a damper (non-proportional
damping) is left out. A mode that strains no damped spring gets nothing; every case's own
damping (its ratio or Rayleigh damping) is added to it.
"""

from __future__ import annotations

import numpy as np

from .spring_forces import deflection_matrix

__all__ = ["spring_ratios"]


def spring_ratios(model, modal) -> np.ndarray | float:
    """(k,) the damping ratio the springs between nodes add to each mode of the modes case result
    `modal` (0 for a rigid-body mode); 0.0 when no spring has damping."""
    ns = model.node_springs
    if ns is None or not np.any(ns.damping):
        return 0.0
    shapes = modal.shapes
    k = shapes.shape[-1]
    d = (deflection_matrix(model) @ shapes.reshape(-1, k)).T.reshape(k, -1, 6)      # (k, s, 6)
    two_u = (ns.k * d**2).sum(-1)                                                  # (k, s): 2 U_s,i
    w2 = modal.modes.omega ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(w2 > 0, (two_u @ ns.damping) / np.where(w2 > 0, w2, 1.0), 0.0)
