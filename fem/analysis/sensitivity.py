"""Frequency sensitivities of a modes result: how each frequency moves when a member group's
stiffness or mass, a point mass or a spring is scaled, and where each mode keeps its energy.

For a mass-normalised mode phi (phi^T M phi = 1) of K phi = lambda M phi, lambda = omega^2, and
a parameter p on which K and M depend, the derivative of a simple eigenvalue is

    d lambda / d p = phi^T (dK/dp - lambda dM/dp) phi

(Fox and Kapoor 1968, "Rates of change of eigenvalues and eigenvectors", AIAA J. 6(12),
2426-2429, their first result; from memory). Every parameter here is a scale factor p on one
part of the model, taken at p = 1, so K = K_rest + p K_part (or M = M_rest + p M_part) and
dK/dp = K_part. Then

    stiffness part:  d lambda / d p = phi^T K_part phi = 2 U_part
    mass part:       d lambda / d p = -lambda phi^T M_part phi = -lambda 2 T_part

with U_part = 0.5 phi^T K_part phi the part's strain energy of the mode and T_part =
0.5 phi^T M_part phi its reference kinetic energy (the kinetic energy amplitude over omega^2).
Since sum U = lambda / 2 and sum T = 1 / 2, the derivative of ln f with respect to ln p is half
the part's share of the mode's strain energy (stiffness) or minus half its share of the
kinetic energy (mass); scaling every stiffness gives d lambda / d p = lambda and every mass
-lambda (the eigenvalue is homogeneous of degree 1 in K and -1 in M), which each result checks.

A member's matrices are block-diagonal in its kinds of deformation (axial, twist, bending in
either plane), condensed ones too (a release lies within one kind, so the condensation acts
within that block), so "the member's bending stiffness" is one block of its matrix, and the
energies come from `energy.field_energies`, the same condensed local matrices `assemble` uses.
The parameters:

- bending: both planes' bending blocks of the group's members scaled together. For
  Euler-Bernoulli members that is E Iy and E Iz; with `shear = on` the shear stiffness G As of
  each plane scales with them, so the shear ratio phi = 12 E I / (G As L^2), and with it the
  member's consistent mass, stays fixed (scaling E I alone would change the mass too).
- axial: E A (truss members have only this); torsion: G J.
- member mass: the whole mass matrix of the group's members (density and carried mass, rotary
  inertia included).
- point mass, spring: all entries of one node's point mass and rotary inertia, or of its
  springs to ground; a spring between two nodes is a parameter of its own, named by the spring
  (d lambda / d p = phi^T K_spring phi = 2 U_spring, its strain energy in the mode).

Repeated eigenvalues (a round section's two bending planes) have no derivative as a pair of
separate functions: for each parameter the one-sided derivatives (p increasing) of a cluster of
equal eigenvalues are the eigenvalues of the cluster matrix Phi_c^T (dK - lambda dM) Phi_c
(e.g. Seyranian, Lund and Olhoff 1994, "Multiple eigenvalues in structural optimization
problems", Struct. Optim. 8, 207-227; from memory), given in ascending order to the cluster's
modes in ascending order. The cross terms come from the energies of phi_i + phi_j.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from .energy import field_energies

__all__ = ["KINDS", "FrequencySensitivity", "frequency_sensitivity", "member_groups"]

KINDS = ("bending", "axial", "torsion", "member mass", "point mass", "spring")
STIFFNESS_KINDS = ("bending", "axial", "torsion", "spring")
REPEATED = 1e-6   # eigenvalues this close (relative to the larger) are treated as one repeated value;
                  # our choice: far above the solver's ~1e-12, far below physically distinct modes

# energy.KINDS columns (axial, twist, bending x-y, bending x-z) behind each member parameter
_MEMBER_COLUMNS = {"bending": [2, 3], "axial": [0], "torsion": [1]}


def member_groups(model, by="member") -> tuple[list[str], sp.csr_matrix]:
    """Names and (g, e) 0/1 incidence of the member groups a sensitivity is reported for.

    `by` is "member" (each member alone), "section" or "material" (members sharing one), or a
    dict group name -> member names (a deck's groups; a member may be in several)."""
    e = model.n_members
    if isinstance(by, str):
        if by == "member":
            return list(model.member_names), sp.identity(e, format="csr")
        if by not in ("section", "material"):
            raise ValueError(f"groups by '{by}': use 'member', 'section', 'material' or a dict of member names")
        keys = list(model.member_section if by == "section" else model.member_material)
        if len(keys) != e:
            raise ValueError(f"the model does not record each member's {by}")
        names = list(dict.fromkeys(keys))
        row = np.array([names.index(k) for k in keys], dtype=int) if e else np.zeros(0, int)
        return names, sp.csr_matrix((np.ones(e), (row, np.arange(e))), shape=(len(names), e))
    index = {n: i for i, n in enumerate(model.member_names)}
    rows, cols = [], []
    for g, (name, members) in enumerate(by.items()):
        unknown = [m for m in members if m not in index]
        if unknown:
            raise ValueError(f"group '{name}' names member(s) not in the model: {', '.join(map(str, unknown[:8]))}")
        idx = sorted({index[m] for m in members})
        rows += [g] * len(idx)
        cols += idx
    return list(by), sp.csr_matrix((np.ones(len(rows)), (rows, cols)), shape=(len(by), e))


@dataclass
class FrequencySensitivity:
    """Derivatives of each mode's eigenvalue and frequency with respect to scale factors.

    Parameters are the rows, modes the columns (P parameters, k modes, n nodes, e members):

    kind (P,) one of KINDS; target (P,) group or node name
    d_lambda (P, k) d lambda / d p, rad^2/s^2 per unit scale (p = 1 is the model as given)
    d_freq (P, k) d f / d p, Hz per unit scale (= d f / d ln p at p = 1); nan for f = 0
    freq (k,) Hz; lam (k,) rad^2/s^2; mode (k,) indices into the modes result
    repeated (k,) True for modes in a cluster of equal eigenvalues (derivatives one-sided);
        cluster (k,) the cluster number of each mode
    member_strain_share, member_kinetic_share (e, k): each member's share of the mode's strain
        energy and kinetic energy (all kinds; the springs and point masses hold the rest)
    shapes (n, 6, k) the modes, mass-normalised, for the added-mass and added-spring derivatives
    energy_check (k,) max of |2 U / lambda - 1| and |2 T - 1|: the element energies against the
        solve (round-off size when the energies and the assembled matrices agree)
    """

    kind: np.ndarray
    target: np.ndarray
    d_lambda: np.ndarray
    d_freq: np.ndarray
    freq: np.ndarray
    lam: np.ndarray
    mode: np.ndarray
    repeated: np.ndarray
    member_strain_share: np.ndarray
    member_kinetic_share: np.ndarray
    shapes: np.ndarray
    energy_check: np.ndarray
    node_names: list[str] = field(default_factory=list)
    member_names: list[str] = field(default_factory=list)
    cluster: np.ndarray = field(default_factory=lambda: np.zeros(0, int))   # (k,) repeated-cluster number

    def log_derivative(self) -> np.ndarray:
        """(P, k) d ln f / d ln p: half the part's share of the strain energy (stiffness kinds) or
        minus half its share of the kinetic energy (masses); nan for f = 0."""
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.lam > 0, self.d_lambda / (2 * np.where(self.lam > 0, self.lam, 1.0)), np.nan)

    def added_mass(self, node: str | int, directions=(0, 1, 2)) -> np.ndarray:
        """(k,) d f / d m, Hz per kg, for a mass m added at `node` moving in `directions` (global
        ux, uy, uz = 0, 1, 2; a point mass moves in all three): -lambda sum phi_d^2 / (8 pi^2 f).
        Zero where the mode has a node point (phi = 0 there). Rotational directions 3..5 give
        Hz per kg m^2 of rotary inertia. Repeated modes: the eigenvalues of the cluster matrix."""
        w = np.zeros(6)
        w[list(directions)] = 1.0
        return self._to_freq(-self.lam * self._at_node(node, w))

    def added_spring(self, node: str | int, direction: int) -> np.ndarray:
        """(k,) d f / d k, Hz per N/m (or per N m/rad), for a spring to ground added at `node` in
        global direction 0..5: phi_d^2 / (8 pi^2 f). Repeated modes as for added_mass."""
        w = np.zeros(6)
        w[direction] = 1.0
        return self._to_freq(self._at_node(node, w))

    def _at_node(self, node, w) -> np.ndarray:
        """(k,) sum_d w_d phi_d^2 at one node; in a repeated cluster the eigenvalues of the
        cluster's matrix sum_d w_d phi_a,d phi_b,d (put in ascending order by _to_freq)."""
        i = self.node_names.index(node) if isinstance(node, str) else int(node)
        phi = self.shapes[i]                                      # (6, k)
        out = (w[:, None] * phi ** 2).sum(0)
        for c in np.unique(self.cluster):
            cols = np.flatnonzero(self.cluster == c)
            if len(cols) > 1:
                out[cols] = np.linalg.eigvalsh(phi[:, cols].T @ (w[:, None] * phi[:, cols]))
        return out

    def _to_freq(self, dl):
        dl = np.array(dl, dtype=float)
        for c in np.unique(self.cluster):          # one-sided derivatives of a cluster ascend
            cols = np.flatnonzero(self.cluster == c)
            dl[cols] = np.sort(dl[cols])
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(self.freq > 0, dl / (8 * np.pi ** 2 * np.where(self.freq > 0, self.freq, 1.0)), np.nan)

    def rows(self, mode: int, top: int | None = None, kinds=STIFFNESS_KINDS) -> list[dict]:
        """Ranked rows for moving mode `mode` (a column index, 0-based): the parameters of
        `kinds` (by default the stiffness ones), largest |d f / d ln p| first. For stiffness
        kinds that is where the mode keeps its strain energy, so stiffening there raises it
        most; for mass kinds (negative) where lightening raises it most. Each row: rank, kind,
        target, d_freq (Hz per unit scale), percent (d ln f / d ln p: the % change of f for a
        1 % change of the part), share (the part's share of the mode's strain or kinetic
        energy, 2 |d ln f / d ln p|)."""
        sel = np.flatnonzero(np.isin(self.kind, list(kinds)))
        order = sel[np.argsort(-np.abs(self.d_lambda[sel, mode]), kind="stable")]
        logd = self.log_derivative()[:, mode]
        return [{"rank": r + 1, "kind": str(self.kind[p]), "target": str(self.target[p]),
                 "d_freq": float(self.d_freq[p, mode]), "percent": float(logd[p]), "share": abs(2 * float(logd[p]))}
                for r, p in enumerate(order[:top] if top is not None else order)]


def _cluster_ids(lam) -> np.ndarray:
    """(k,) cluster number of each (ascending) eigenvalue: equal within REPEATED, relative."""
    ids = np.zeros(len(lam), dtype=int)
    for j in range(1, len(lam)):
        same = abs(lam[j] - lam[j - 1]) <= REPEATED * max(abs(lam[j]), abs(lam[j - 1]))
        ids[j] = ids[j - 1] + (0 if same and lam[j] > 0 else 1)
    return ids


def _energy_rows(model, fields, matrices, incidence, point_nodes, spring_nodes):
    """Per field: (P,) the energy terms behind each parameter, stiffness 2U and mass 2T, and the
    member totals (e,) of strain and kinetic energy."""
    rows_k, rows_m, ms, mk = [], [], [], []
    for u in fields:
        en = field_energies(model, u, matrices)
        rows_k.append(np.concatenate([2 * (incidence @ en.member_strain[:, c].sum(1)) for c in _MEMBER_COLUMNS.values()]
                                     + [2 * en.spring_strain[spring_nodes], 2 * en.node_spring_strain]))
        rows_m.append(np.r_[2 * (incidence @ en.member_kinetic.sum(1)), 2 * en.node_kinetic.sum(1)[point_nodes]])
        ms.append(en.member_strain.sum(1))
        mk.append(en.member_kinetic.sum(1))
    return np.array(rows_k).T, np.array(rows_m).T, np.array(ms).T, np.array(mk).T


def frequency_sensitivity(model, result, groups="member", modes=None, matrices=None) -> FrequencySensitivity:
    """Sensitivities of the frequencies of a modes result to scale factors on member groups'
    bending, axial and torsion stiffness and mass, and on each point mass and spring.

    Parameters
    ----------
    model : Model
        The model the modes were solved for.
    result : ModesCaseResult
        From `modal_case.solve_modes_case` (uses `shapes` (n, 6, k) and `modes.omega`).
    groups : "member", "section", "material" or dict
        How members are grouped into parameters (see `member_groups`).
    modes : sequence of int, optional
        Which modes (column indices); all by default.
    matrices : tuple, optional
        `assembly.element_matrices(model)`, to reuse.

    Returns
    -------
    FrequencySensitivity

    Examples
    --------
    >>> s = frequency_sensitivity(model, solve_modes_case(model, assemble(model), case))  # doctest: +SKIP
    >>> s.rows(0, top=5)                                                                # doctest: +SKIP
    """
    from ..assembly import element_matrices

    matrices = matrices if matrices is not None else element_matrices(model)
    sel = np.arange(result.shapes.shape[2]) if modes is None else np.asarray(modes, dtype=int)
    shapes = result.shapes[:, :, sel]
    lam = result.modes.omega[sel] ** 2
    every = _cluster_ids(result.modes.omega ** 2)
    left = np.setdiff1d(np.flatnonzero(np.isin(every, every[sel])), sel)
    if len(left):
        raise ValueError(f"mode(s) {', '.join(str(i) for i in left)} repeat the eigenvalue of a mode asked for; "
                         "a repeated eigenvalue's derivatives need all its modes: include them")
    names, inc = member_groups(model, groups)
    frame = np.asarray(inc @ (~model.truss).astype(float)).ravel() > 0   # groups with a beam member
    point_nodes = np.flatnonzero((model.point_mass != 0).any(1))
    spring_nodes = np.flatnonzero((model.springs != 0).any(1))
    k = shapes.shape[2]
    dk, dm, member_u, member_t = _energy_rows(model, [shapes[:, :, j] for j in range(k)], matrices, inc,
                                              point_nodes, spring_nodes)
    # 2U and 2T per mode: the Rayleigh quotient's two halves, checked against the solve
    n_g = len(names)
    total_u = 2 * member_u.sum(0) + dk[3 * n_g:].sum(0)          # members, then the springs
    total_t = 2 * member_t.sum(0) + dm[n_g:].sum(0)              # members, then the point masses
    scale = np.maximum(np.abs(lam), np.abs(lam).max(initial=0.0) * 1e-12)
    check = np.maximum(np.abs(total_u - lam) / np.where(scale > 0, scale, 1.0), np.abs(total_t - 1.0))
    d_lam = np.r_[dk, -lam * dm]
    # repeated eigenvalues: per parameter, the eigenvalues of the cluster matrix
    ids = _cluster_ids(lam)
    repeated = np.zeros(k, dtype=bool)
    for c in np.unique(ids):
        cols = np.flatnonzero(ids == c)
        if len(cols) < 2:
            continue
        repeated[cols] = True
        n, lc = len(cols), lam[cols].mean()
        diag = np.r_[dk[:, cols], -lc * dm[:, cols]]               # (P, n)
        D = np.zeros((diag.shape[0], n, n))
        D[:, np.arange(n), np.arange(n)] = diag
        for a in range(n):
            for b in range(a + 1, n):
                # phi_a^T A phi_b = (E(phi_a + phi_b) - E(phi_a) - E(phi_b)) / 2, E the energy terms
                sk, sm, _, _ = _energy_rows(model, [shapes[:, :, cols[a]] + shapes[:, :, cols[b]]], matrices,
                                            inc, point_nodes, spring_nodes)
                D[:, a, b] = D[:, b, a] = 0.5 * (np.r_[sk[:, 0], -lc * sm[:, 0]] - diag[:, a] - diag[:, b])
        d_lam[:, cols] = np.linalg.eigvalsh(D)
    between = [] if model.node_springs is None else list(model.node_springs.names)   # springs between nodes
    kind = np.array(["bending"] * n_g + ["axial"] * n_g + ["torsion"] * n_g + ["spring"] * len(spring_nodes)
                    + ["spring"] * len(between) + ["member mass"] * n_g + ["point mass"] * len(point_nodes), dtype=object)
    node_names = list(model.node_names)
    target = np.array(names * 3 + [node_names[i] for i in spring_nodes] + between + names
                      + [node_names[i] for i in point_nodes], dtype=object)
    # truss-only groups have no bending or torsion stiffness: no rows for them
    keep = np.ones(len(kind), dtype=bool)
    keep[:n_g] = frame
    keep[2 * n_g:3 * n_g] = frame
    kind, target, d_lam = kind[keep], target[keep], d_lam[keep]
    freq = np.sqrt(np.maximum(lam, 0.0)) / (2 * np.pi)
    with np.errstate(divide="ignore", invalid="ignore"):
        d_freq = np.where(freq > 0, d_lam / (8 * np.pi ** 2 * np.where(freq > 0, freq, 1.0)), np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        u_share = member_u / np.where(lam > 0, lam / 2, np.nan)
        t_share = member_t / 0.5
    return FrequencySensitivity(kind, target, d_lam, d_freq, freq, lam, sel, repeated, u_share, t_share,
                                shapes, check, node_names, list(model.member_names), ids)
