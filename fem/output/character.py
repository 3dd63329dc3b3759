"""What a mode does and where: a short label for captions ("local: twist of MB2", "global: sway
in Y") from where the mode keeps its strain and kinetic energy.

The rules (our choice, no source):

- The mode's *seat* is the fewest members (and springs) holding SEAT_SHARE of its strain energy.
  The mode is **local** when the seat is small, at most max(LOCAL_FEW, LOCAL_FRACTION of the
  members and springs) items and at most a third of them, and the seat's members and their end
  nodes also hold at least LOCAL_KINETIC of the kinetic energy (what bends is what moves).
  Otherwise it is **global**. A mode with no strain energy to speak of (omega under RIGID_HZ)
  is a rigid-body motion.
- Rotation or translation: the kinetic energy splits into translation along X, Y, Z and rotation
  about them (rotary inertia of point masses and the members' torsional inertia, so a rotation
  counts through its radius of gyration). Rotation dominates when it holds ROTATION_SHARE or
  more; a mode whose translations carry little energy is then never called a sway.
- Local words come from the kind of strain in the seat (twist, bending, stretch, springs) and
  the main direction of its motion; global words from the main direction of motion: 'sway in
  X' / 'Y', 'vertical motion', 'twist in plan about Z' (the rigid turn in plan of
  analysis.motion.dominant_direction, when the motion is mainly horizontal), or 'turning about
  X' when rotation dominates.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..analysis.energy import Energies, field_energies

__all__ = ["ModeCharacter", "describe_mode", "mode_characters"]

SEAT_SHARE = 0.6
LOCAL_FEW = 3
LOCAL_FRACTION = 0.05
LOCAL_KINETIC = 0.5
ROTATION_SHARE = 0.5
RIGID_HZ = 1e-3
NAMES_SHOWN = 3          # names listed in a label before 'and n more'
AXES = "XYZ"


@dataclass
class ModeCharacter:
    """scope 'local', 'global' or 'rigid'; motion the words after it; strain and kinetic: the
    items (member, 'spring at N', node names) holding most of each energy, with their shares;
    rotation_share: the kinetic energy's share in rotations; axis: the global axis (0-2) of the
    main translation, or of the rotation when rotation dominates."""

    scope: str
    motion: str
    strain: list = field(default_factory=list)
    kinetic: list = field(default_factory=list)
    rotation_share: float = 0.0
    axis: int = 0

    @property
    def label(self) -> str:
        return f"{self.scope}: {self.motion}"

    @property
    def rotational(self) -> bool:
        return self.rotation_share >= ROTATION_SHARE

    def where(self, count: int = 3) -> str:
        """'strain energy MB2a 51 %, MB2b 45 %; kinetic energy N5 93 %' (items of 5 % or more)."""
        def part(items):
            shown = [f"{n} {s * 100:.0f} %" for n, s in items[:count] if s >= 0.05]
            return ", ".join(shown) or "spread out"
        return f"strain energy {part(self.strain)}; kinetic energy {part(self.kinetic)}"


def _names(names: list[str]) -> str:
    if len(names) <= NAMES_SHOWN:
        return ", ".join(names)
    return ", ".join(names[:NAMES_SHOWN]) + f" and {len(names) - NAMES_SHOWN} more"


def _top(names, values, total):
    order = np.argsort(values)[::-1]
    return [(names[i], float(values[i] / total)) for i in order[:6] if values[i] > 0]


def describe_mode(model, shape: np.ndarray, energies: Energies | None = None, matrices=None,
                  prepared=None) -> ModeCharacter:
    """The character of one mode shape (n_nodes, 6): scope, motion and where its energy is.
    `matrices` (element_matrices) and `prepared` (prepare_curves) may be passed to reuse them
    over many modes.

    Examples
    --------
    >>> describe_mode(model, modal.shapes[:, :, 0]).label          # doctest: +SKIP
    'local: twist of MB2a, MB2b, turning MOTOR about X'
    """
    en = energies or field_energies(model, shape, matrices)
    if en.node_spring_strain.size:      # a spring between nodes: half its energy at each end
        from dataclasses import replace

        at = np.zeros(model.n_nodes)
        for end in (0, 1):
            np.add.at(at, model.node_springs.nodes[:, end], 0.5 * en.node_spring_strain)
        en = replace(en, spring_strain=en.spring_strain + at, node_spring_strain=np.zeros(0))
    e = model.n_members
    strain_m = en.member_strain.sum(1)
    kin_m = en.member_kinetic.sum(1)
    kin_n = en.node_kinetic.sum(1)
    S, T = en.strain, en.kinetic
    trans, rot = en.kinetic_directions()
    rshare = float(rot.sum() / max(trans.sum() + rot.sum(), 1e-300))
    rotational = rshare >= ROTATION_SHARE
    axis = int(np.argmax(rot if rotational else trans))
    spring_nodes = np.flatnonzero(en.spring_strain > 0)
    items = list(model.member_names) + [f"spring at {model.node_names[i]}" for i in spring_nodes]
    item_strain = np.r_[strain_m, en.spring_strain[spring_nodes]]
    kin_items = list(model.member_names) + list(model.node_names)
    kin_values = np.r_[kin_m, kin_n]
    kin_top = _top(kin_items, kin_values, max(T, 1e-300))
    if T <= 0:
        return ModeCharacter("rigid", "no motion", [], [], 0.0, 0)
    if S <= (2 * np.pi * RIGID_HZ) ** 2 * T:
        word = f"turning about {AXES[axis]}" if rotational else f"translation in {AXES[axis]}"
        return ModeCharacter("rigid", f"rigid-body {word}", [], kin_top, rshare, axis)
    strain_top = _top(items, item_strain, S)
    order = np.argsort(item_strain)[::-1]
    seat = order[: int(np.searchsorted(np.cumsum(item_strain[order]) / S, SEAT_SHARE) + 1)]
    seat_members = seat[seat < e]
    seat_springs = spring_nodes[seat[seat >= e] - e]
    seat_nodes = np.unique(np.r_[model.conn[seat_members].ravel(), seat_springs]).astype(int)
    seat_kinetic = float(kin_m[seat_members].sum() + kin_n[seat_nodes].sum()) / T
    few = max(LOCAL_FEW, int(np.ceil(LOCAL_FRACTION * len(items))))
    local = len(seat) <= few and 3 * len(seat) <= len(items) and seat_kinetic >= LOCAL_KINETIC
    if local:
        motion = _local_words(model, en, seat_members, seat_springs, seat_nodes, rotational)
        return ModeCharacter("local", motion, strain_top, kin_top, rshare, axis)
    if rotational:
        motion = f"turning about {AXES[axis]}"
    elif trans[:2].sum() >= trans[2] and _plan_twist(model, shape, prepared):
        motion = "twist in plan about Z"
    else:
        first, second = np.argsort(trans)[::-1][:2]
        if first == 2:
            motion = "vertical motion"
        elif second != 2 and trans[second] >= 0.6 * trans[first]:
            motion = f"sway in {AXES[min(first, second)]} and {AXES[max(first, second)]}"
        else:
            motion = f"sway in {AXES[first]}"
    return ModeCharacter("global", motion, strain_top, kin_top, rshare, axis)


def _plan_twist(model, shape: np.ndarray, prepared=None) -> bool:
    """analysis.motion.dominant_direction's rigid turn in plan, fitted over the nodes and the
    points along the members (so a span whose nodes only turn, bending sideways between them,
    is not taken for a turn in plan)."""
    from ..analysis.motion import dominant_direction
    from ..elements.interpolate import member_curves, prepare_curves

    # the members' mid-points are enough to tell a bow from a turn
    c = member_curves(model, shape, prepared=prepared or prepare_curves(model, 3))
    points = np.r_[model.coords, c.base.reshape(-1, 3)]
    field = np.r_[shape, np.c_[c.disp.reshape(-1, 3), c.rot.reshape(-1, 3)]]
    return dominant_direction(field, points)[0].startswith("twist")


def _local_words(model, en: Energies, members, springs, nodes, rotational: bool) -> str:
    names = [model.member_names[i] for i in sorted(members)]
    kinds = en.member_strain[members].sum(0)                     # axial, twist, x-y, x-z
    spring = float(en.spring_strain[springs].sum())
    # the seat's own motion: its members' kinetic energy by global direction plus its nodes'
    sub = Energies(en.member_strain[members], en.member_kinetic[members], en.spring_strain[nodes],
                   en.node_kinetic[nodes], en.member_axes[members])
    trans, rot = sub.kinetic_directions()
    d = AXES[int(np.argmax(trans))]
    if spring >= kinds.sum():
        words = f"motion in {d} on the springs at {_names([model.node_names[i] for i in springs])}"
    elif kinds[1] >= max(kinds[0], kinds[2] + kinds[3]):
        words = f"twist of {_names(names)}"
    elif kinds[0] >= kinds[2] + kinds[3]:
        words = f"stretch of {_names(names)}"
    elif d == "Z":
        words = f"vertical bending of {_names(names)}"
    else:
        words = f"bending in {d} of {_names(names)}"
    if rotational and rot.sum() >= trans.sum():
        # the node whose rotary inertia turns most, when one does
        turn = en.node_kinetic[nodes, 3:]
        if turn.sum() >= 0.5 * rot.sum():
            i, a = np.unravel_index(int(np.argmax(turn)), turn.shape)
            words += f", turning {model.node_names[nodes[i]]} about {AXES[a]}"
    return words


def mode_characters(model, modal, shown: int = 3) -> list[dict]:
    """Per mode of a modes case, for results.json: scope, motion, label and the items holding
    most of its strain and kinetic energy with their shares (the first `shown` of each)."""
    from ..assembly import element_matrices
    from ..elements.interpolate import prepare_curves

    matrices = element_matrices(model)
    prepared = prepare_curves(model, 3)
    out = []
    for j in range(modal.shapes.shape[2]):
        c = describe_mode(model, modal.shapes[:, :, j], matrices=matrices, prepared=prepared)
        out.append({"scope": c.scope, "motion": c.motion, "label": c.label,
                    "rotation_share": c.rotation_share,
                    "strain_energy_share": dict(c.strain[:shown]), "kinetic_energy_share": dict(c.kinetic[:shown])})
    return out
