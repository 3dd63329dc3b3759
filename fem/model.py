"""The validated model: plain dataclasses and arrays ready for vectorised assembly.

Units are SI throughout (m, kg, s, N, Pa, rad). Node DOFs are ordered
ux, uy, uz, rx, ry, rz; global DOF of node n, direction d is 6*n + d.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .cases import Case, LoadItem
from .errors import Location
from .excitation import FrequencyBand, Machine
from .sections import SectionProps

__all__ = ["COMBINABLE", "DIRECTIONS", "Combination", "Envelope", "Link", "LoadCase", "LoadItem", "Material", "Model",
           "NodeSprings", "Section"]

DIRECTIONS = ("ux", "uy", "uz", "rx", "ry", "rz")

LoadCase = Case     # any of the typed cases of fem.cases (StaticCase, ModesCase, ...)


@dataclass(frozen=True)
class Material:
    name: str
    E: float        # Pa
    G: float        # Pa
    density: float  # kg/m^3
    yield_strength: float | None = None   # Pa, for the stress ratio (not a design-code check)

    @property
    def nu(self) -> float:
        """Poisson's ratio E/(2G) - 1, to 12 decimals: a G written as E/(2(1 + nu)) comes back with
        a round-off of about 1e-16, and nu = 0.3 must read back as exactly 0.3."""
        return round(self.E / (2.0 * self.G) - 1.0, 12)


@dataclass(frozen=True)
class Section:
    name: str
    props: SectionProps
    designation: str = ""       # a catalogue section's designation as its table prints it
    shape: str = ""             # the make_section shape it was built with ("catalogue" too)
    dims: tuple = ()            # (name, value) pairs of that shape's parameters, SI

    def stress_points(self):
        """Its stress points and stress factors (fem.sections.points), None when unknown."""
        from .sections.points import stress_points

        if not self.shape:
            return None
        return stress_points(self.shape, dict(self.dims), self.props)


# the kinds of case a combination adds and an envelope bounds (fem/analysis/combine.py says how)
COMBINABLE = ("static", "history", "spectrum", "harmonic")


@dataclass
class Combination:
    """factor by case name; the cases may be static, history, spectrum or harmonic
    (fem/analysis/combine.py says how each kind enters)."""

    name: str
    factors: dict[str, float]
    location: Location | None = None


@dataclass(frozen=True)
class Link:
    """A rigid link: the dependent nodes follow the reference node as one rigid body in the
    directions `dirs` (6,) bool (ux, uy, uz, rx, ry, rz; all six for a full link): a dependent
    translation is u_r + theta_r x (x_d - x_r), a dependent rotation is theta_r.

    reference : node index; dependents : (k,) node indices."""

    name: str
    reference: int
    dependents: np.ndarray
    dirs: np.ndarray
    location: Location | None = None


@dataclass(frozen=True, eq=False)
class NodeSprings:
    """Linear springs each joining two nodes A and B (s springs), e.g. isolators, bearings and
    bolted joints; the two nodes may coincide. Spring j resists the relative motion of its
    nodes in its own axes: its force and moment on node B (local components) are
    -k * axes (u_B - u_A), translations and rotations alike (fem.elements.node_spring).

    names : (s,) their names; nodes : (s, 2) node indices A, B
    k : (s, 6) stiffness along and about the spring's x, y, z: N/m, then N m/rad
    axes : (s, 3, 3) rows: the spring's x, y, z in global components (identity: global axes)
    damping : (s,) damping ratio of each spring (0: none); how modal cases use it is
        fem/analysis/spring_damping.py
    locations : where each is written"""

    names: tuple
    nodes: np.ndarray
    k: np.ndarray
    axes: np.ndarray
    damping: np.ndarray
    locations: tuple = ()

    def __len__(self) -> int:
        return len(self.names)


@dataclass
class Envelope:
    """The largest and smallest of every result over the cases and combinations `over`."""

    name: str
    over: tuple[str, ...]
    location: Location | None = None


@dataclass
class Model:
    """Nodes, members and everything attached to them.

    Attributes (n nodes, e members)
    ----------
    coords : (n, 3) node coordinates, m
    conn : (e, 2) node indices of member ends i, j
    truss : (e,) bool, axial-only members
    E, G, rho : (e,) material per member, Pa, Pa, kg/m^3
    A, Iy, Iz, J, Avy, Avz : (e,) section per member, m^2 / m^4
    roll : (e,) rad; up : (e, 3) reference vectors (nan rows where none given)
    pretension : (e,) initial tension of truss members, N (None: none): its geometric stiffness is
        in K, and its state stiffens or softens every modes and buckling case (fem/analysis/buckling.py)
    carried_mass : (e,) mass per length each member carries without stiffening it (contents,
        insulation, trays), kg/m
    releases : (e, 12) bool, released local end DOFs
    restraint : (n, 6) bool, restrained DOFs
    springs : (n, 6) spring stiffness to ground, N/m or N m/rad (springs between two nodes:
        `node_springs`)
    point_mass : (n, 6) mass and rotary inertia at nodes, kg and kg m^2 (the diagonal of each
        node's mass block; an off-node mass adds its inertia about the node here)
    mass_coupling : (n, 6, 6) or None, the off-diagonal terms of the nodal mass blocks of masses
        placed off their node: m [r]x between translation and rotation and the products of
        inertia -m r_a r_b (fem.elements.rigid.offset_mass); diagonal zero
    links : rigid links (`Link`), applied as constraints by the assembly
    offsets : (e, 2, 3) or None, member end offsets: the global vectors from each member's
        nodes i and j to the ends of its elastic part (rigid arms between), m
    groups : the deck's groups that hold members, name -> member names (deck order; nodes of a
        group of both are left out); a modes case's sensitivities may be reported by them
    excitations : the machines and frequency bands the deck declares (fem.excitation), in deck
        order; the resonance check of each modes case compares its modes with them
    warnings : what the reader found worth saying, not refusing: fem.notes.Note (str(note) is
        "file:line:column: warning: ..."); some are still plain texts of that form
    """

    title: str
    node_names: list[str]
    coords: np.ndarray
    member_names: list[str]
    conn: np.ndarray
    truss: np.ndarray
    E: np.ndarray
    G: np.ndarray
    rho: np.ndarray
    A: np.ndarray
    Iy: np.ndarray
    Iz: np.ndarray
    J: np.ndarray
    Avy: np.ndarray
    Avz: np.ndarray
    roll: np.ndarray
    up: np.ndarray
    carried_mass: np.ndarray
    releases: np.ndarray
    restraint: np.ndarray
    springs: np.ndarray
    point_mass: np.ndarray
    materials: dict[str, Material] = field(default_factory=dict)
    sections: dict[str, Section] = field(default_factory=dict)
    member_section: list[str] = field(default_factory=list)
    member_material: list[str] = field(default_factory=list)
    groups: dict[str, tuple[str, ...]] = field(default_factory=dict)   # member groups, see above
    cases: list[Case] = field(default_factory=list)      # typed cases (fem.cases), in deck order
    combinations: list[Combination] = field(default_factory=list)
    envelopes: list[Envelope] = field(default_factory=list)
    settings: dict = field(default_factory=dict)
    source: str = ""
    overrides: dict[str, str] = field(default_factory=dict)   # let parameters set from outside, name -> text
    warnings: list = field(default_factory=list)   # located notes from reading the deck
    excitations: tuple[Machine | FrequencyBand, ...] = ()
    links: tuple[Link, ...] = ()
    mass_coupling: np.ndarray | None = None
    offsets: np.ndarray | None = None
    pretension: np.ndarray | None = None   # (e,) initial tension of truss members (guys, cables), N; None: none
    node_springs: NodeSprings | None = None   # springs between two nodes (isolators, bearings); None: none

    @property
    def n_nodes(self) -> int:
        return len(self.node_names)

    @property
    def n_members(self) -> int:
        return len(self.member_names)

    @property
    def lengths(self) -> np.ndarray:
        """Length of each member's elastic part (between its end offsets, if any), m."""
        d = self.coords[self.conn[:, 1]] - self.coords[self.conn[:, 0]]
        if self.offsets is not None:
            d = d + self.offsets[:, 1] - self.offsets[:, 0]
        return np.linalg.norm(d, axis=1)

    def member_mass(self) -> np.ndarray:
        """Mass of each member (its own plus the mass it carries), kg."""
        return (self.rho * self.A + self.carried_mass) * self.lengths

    def total_mass(self) -> float:
        """Translational mass of the whole model: members plus point masses, kg."""
        return float(self.member_mass().sum() + self.point_mass[:, 0].sum())

    def bounding_box(self) -> tuple[np.ndarray, np.ndarray]:
        if not self.n_nodes:
            return np.zeros(3), np.zeros(3)
        return self.coords.min(axis=0), self.coords.max(axis=0)
