"""Where a displacement field stores its strain energy and its (reference) kinetic energy:
per member and kind of deformation, per spring and per point mass, vectorised over members.

For a mode shape phi the strain energy is 0.5 phi^T K phi and the kinetic energy amplitude is
0.5 omega^2 phi^T M phi; both are sums over the members' local matrices (condensed for end
releases, as assembled) plus the springs' and point masses' diagonal terms. The kinetic values
here leave out the common factor omega^2 (0.5 phi^T M phi), so shares are unaffected.

A frame member's matrices are block-diagonal in four groups of local DOFs (axial, twist,
bending in x-y, bending in x-z), condensed ones too, so the energy splits exactly by kind.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["KINDS", "Energies", "field_energies"]

KINDS = ("axial", "twist", "bending x-y", "bending x-z")
_GROUPS = ([0, 6], [3, 9], [1, 5, 7, 11], [2, 4, 8, 10])


@dataclass
class Energies:
    """Energies of one displacement field (units of the field squared times N/m or kg).

    member_strain, member_kinetic : (e, 4) by kind KINDS (local axial, twist, bending in the
        local x-y plane, bending in x-z)
    spring_strain : (n,) springs to ground at each node
    node_kinetic : (n, 6) point masses and rotary inertias, global ux..rz
    member_axes : (e, 3, 3) local axes (rows x, y, z), to turn member kinds into global directions
    node_spring_strain : (s,) each spring between two nodes (fem.model.NodeSprings), 0.5 d^T k d
    """

    member_strain: np.ndarray
    member_kinetic: np.ndarray
    spring_strain: np.ndarray
    node_kinetic: np.ndarray
    member_axes: np.ndarray
    node_spring_strain: np.ndarray = field(default_factory=lambda: np.zeros(0))

    @property
    def strain(self) -> float:
        return float(self.member_strain.sum() + self.spring_strain.sum() + self.node_spring_strain.sum())

    @property
    def kinetic(self) -> float:
        return float(self.member_kinetic.sum() + self.node_kinetic.sum())

    def kinetic_directions(self) -> tuple[np.ndarray, np.ndarray]:
        """(translation (3,), rotation (3,)) kinetic energy by global axis X, Y, Z. A member's
        axial kinetic energy goes to the global components of its local x in proportion to their
        squares, its bending x-y energy to those of local y, x-z of local z (the Timoshenko
        rotary inertia of bending, small, counts with its plane's translation), its twist to
        rotation about local x; point masses add their own terms."""
        sq = self.member_axes ** 2                                   # (e, 3 local, 3 global)
        k = self.member_kinetic
        trans = k[:, 0] @ sq[:, 0] + k[:, 2] @ sq[:, 1] + k[:, 3] @ sq[:, 2] + self.node_kinetic[:, :3].sum(0)
        rot = k[:, 1] @ sq[:, 0] + self.node_kinetic[:, 3:].sum(0)
        return trans, rot


def field_energies(model, field: np.ndarray, matrices=None) -> Energies:
    """Energies of a displacement field (n_nodes, 6), global ux..rz.

    `matrices` is element_matrices(model) (condensed local k, m, axes R, lengths L), to reuse
    over many fields."""
    from ..assembly import element_matrices

    k, m, R, _ = matrices if matrices is not None else element_matrices(model)
    u = np.asarray(field, float)
    e = len(R)
    ug = u[model.conn]                                   # (e, 2, 6) motions of the member nodes
    if model.offsets is not None:                        # ... carried to the elastic ends
        from ..elements.rigid import arm_transform

        ug = np.einsum("ekab,ekb->eka", arm_transform(model.offsets), ug)
    ug = ug.reshape(e, 4, 3)
    ul = (ug @ np.swapaxes(R, 1, 2)).reshape(e, 12)
    # the matrices hold no terms between groups, so (k u)[group] = k[group, group] u[group]
    ku = (k @ ul[:, :, None])[:, :, 0]
    mu = (m @ ul[:, :, None])[:, :, 0]
    strain = np.empty((e, 4))
    kinetic = np.empty((e, 4))
    for g, idx in enumerate(_GROUPS):
        strain[:, g] = 0.5 * (ul[:, idx] * ku[:, idx]).sum(1)
        kinetic[:, g] = 0.5 * (ul[:, idx] * mu[:, idx]).sum(1)
    node = 0.5 * model.point_mass * u ** 2
    if model.mass_coupling is not None:      # a mass off its node: u . (B u) / 2, split by DOF
        node = node + 0.5 * u * np.einsum("nab,nb->na", model.mass_coupling, u)
    between = np.zeros(0)
    if model.node_springs is not None:
        from ..elements.node_spring import spring_deflections

        d = spring_deflections(model.node_springs, model.coords, u)
        between = 0.5 * (model.node_springs.k * d ** 2).sum(1)
    return Energies(strain, kinetic, 0.5 * (model.springs * u ** 2).sum(1), node, R, between)
