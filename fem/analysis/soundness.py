"""The checks that can refuse a model before any expensive solve, shared by `quaver check` and
`quaver run` so that both see the same thing and say it the same way.

`examine` assembles the model and `assess` looks at the assembled stiffness: the DOFs held
because nothing resists them, one factorisation of K over the free DOFs (kept, so that static
cases, static corrections and a modes case at zero shift reuse it), the nodes and directions of
a mechanism, a free structure told apart from a mechanism (its zero-energy motions are all
rigid-body motions: legitimate for modes, refused for anything that solves K u = f), and the
condition estimate with its warning and refusal levels. `quiet` turns the warnings numpy and
scipy raise into notes of our own, so no library text reaches the user. Nothing here writes
into the model: what the checks find is returned in a `Soundness`.
"""

from __future__ import annotations

import re
import warnings
from contextlib import contextmanager
from dataclasses import dataclass, field

import numpy as np

from ..assembly import Assembled
from ..errors import MechanismError, ModelError
from ..model import DIRECTIONS, LoadCase, Model
from ..notes import Note

__all__ = ["COND_REFUSE", "COND_WARN", "Soundness", "assess", "examine", "first_stiffness_case", "quiet",
           "summary_lines"]

COND_WARN = 1e11         # above this fewer than ~5 significant digits are safe in double precision
COND_REFUSE = 1e16       # beyond 1/eps (4.5e15) no digit of a solution is safe: refuse rather than print noise
RIGID_PROBE = 12         # zero-energy motions looked for: more than the six rigid-body motions, so
                         # a mechanism on top of them is seen
RIGID_TOL = 1e-6         # a zero-energy motion is rigid when it lies in the rigid-body fields to this
                         # (relative, in K's unit-diagonal scaling; round-off gives ~1e-12): our choice
AXES = "XYZ"


@dataclass
class Soundness:
    """What the model's checks found before any case was solved.

    Attributes
    ----------
    held : list of (node, direction)
        DOFs held because nothing resists them.
    factor : object or None
        The factor of K over the free DOFs (``solve(b)``); None for a free structure or when
        nothing is free.
    condition : float or None
        1-norm condition estimate of that K (None without a factor).
    rigid : list of str
        The rigid-body motions a free structure has, in words ('translation X', 'rotation
        about Z'); empty for a supported structure.
    notes : list of Note
        What the checks found worth saying (a free structure; library warnings in our words).
    """

    held: list[tuple[str, str]]
    factor: object | None = None
    condition: float | None = None
    rigid: list[str] = field(default_factory=list)
    notes: list[Note] = field(default_factory=list)

    @property
    def spd(self):
        """The factor as the eigen solver takes it (`factor.SPDFactor`, at zero shift) when K is
        positive definite and factored by the solver's family; else None."""
        return getattr(self.factor, "factor", None)


def first_stiffness_case(model: Model) -> LoadCase | None:
    """The first case whose solution needs K^-1: a static case (combinations and free-case starts
    are built on them) or a history, harmonic or spectrum case with its static correction."""
    return next((c for c in model.cases if c.static_part), None)


def examine(model: Model) -> tuple[Assembled, Soundness]:
    """Assemble the model and `assess` it (with library warnings turned into the notes of the
    Soundness returned)."""
    from ..assembly import assemble
    from ..progress import stage

    if not model.n_nodes:
        raise ModelError(f"{model.source or 'the deck'} defines no nodes, so there is nothing to analyse; "
                         "define nodes (node NAME = (x, y, z)) and members between them")
    notes: list[Note] = []
    with stage(f"assembling {model.n_members} members"), quiet(notes, "assembling the model"):
        asm = assemble(model)
    with stage("factoring the stiffness"), quiet(notes, "checking the stiffness"):
        return asm, assess(model, asm, notes)


def assess(model: Model, asm: Assembled, notes: list[Note] | None = None) -> Soundness:
    """The cheap checks that can refuse a model, before any expensive solve.

    Raises MechanismError for a static load on a held DOF, for a mechanism (nodes and
    directions of each free motion, and the released member ends at those nodes), or for a free
    structure when a case needs K^-1;
    ModelError when K is too badly conditioned to give a safe digit. Returns the held DOFs,
    the factor, the condition estimate and the rigid-body motions of a free structure, with a
    note on a free structure added to `notes` (a list it shares with the caller, kept as the
    Soundness's notes)."""
    from .static import check_resisted, condition_estimate, factorise, held_dofs, load_vector, stiffness_contrast

    sound = Soundness(held_dofs(model, asm), notes=[] if notes is None else notes)
    if len(asm.inert):
        for c in model.cases:
            if c.kind == "static":      # a static load on a held DOF is refused (cheap: no solve)
                check_resisted(model, asm, c, load_vector(model, asm, c)[0])
    if not len(asm.free):
        return sound
    Kff = asm.K[asm.free][:, asm.free].tocsc()
    try:
        sound.factor = factorise(model, asm, what="stiffness factorisation")
    except MechanismError as exc:
        rigid = rigid_motions(model, asm, Kff)
        if rigid is None:
            raise _with_releases(model, exc) from None
        sound.rigid = rigid
        text = _free_text(model, rigid)
        case = first_stiffness_case(model)
        if case is not None:
            what = "static case" if case.kind == "static" else "static correction of this case"
            raise MechanismError(f"case {case.name}: {text}, so the {what} has no unique answer; add supports "
                                 "that hold these motions (a modes case alone can run on a free structure)",
                                 exc.free, case.location) from None
        sound.notes.append(Note(None, f"{text}, so {len(rigid)} of its modes are rigid-body modes at 0 Hz, "
                                "and a static case would be refused", "note"))
        return sound
    sound.condition = cond = condition_estimate(Kff, sound.factor)
    if cond > COND_REFUSE:
        raise ModelError(f"the stiffness is too badly conditioned to solve in double precision (condition "
                         f"estimate {cond:.1e}, above {COND_REFUSE:.0e}): no digit of the results would be safe; "
                         f"no node moves freely (not a mechanism), but member stiffnesses span about "
                         f"{stiffness_contrast(model, asm):.0e}: "
                         "check stiffness contrasts (springs, E, sections, very short members), end releases and units")
    return sound


def _free_text(model: Model, rigid: list[str]) -> str:
    """'no supports: the structure is free in ...' or 'the supports leave the structure free in ...'."""
    what = ("all six rigid-body motions (translations along and rotations about X, Y and Z)" if len(rigid) == 6
            else f"{len(rigid)} rigid-body motion(s) ({', '.join(rigid)})")
    if not model.restraint.any() and not (model.springs > 0).any():
        return f"no supports: the structure is free in {what}"
    return f"the supports leave the structure free in {what}"


def rigid_motions(model: Model, asm: Assembled, Kff) -> list[str] | None:
    """The rigid-body motions the structure is free in, in words, when every zero-energy motion
    of K over the free DOFs (`static.zero_energy_motions`) is one that the supports allow;
    None when some is not (a mechanism: a part moves against the rest, or on its own)."""
    import scipy.linalg as sla

    from .modal_case import influence_vectors
    from .static import motion_probe, zero_energy_motions

    V, s = zero_energy_motions(motion_probe(model, asm, Kff), RIGID_PROBE)
    if not 0 < V.shape[1] <= 6:
        return None
    lo, hi = model.bounding_box()
    size = float(np.linalg.norm(hi - lo)) or 1.0
    R = influence_vectors(model, (lo + hi) / 2)
    R[:, 3:] /= size                      # rotations scaled so every column is of order one
    held = model.restraint.ravel()
    C = sla.null_space(R[held], rcond=1e-10) if held.any() else np.eye(6)   # rigid motions the supports allow
    if not C.shape[1]:
        return None
    W = R[asm.free] @ C / s[:, None]      # in the coordinates of V
    U, sv, _ = np.linalg.svd(W, full_matrices=False)
    Q = U[:, sv > 1e-10 * sv.max(initial=0.0)]
    if np.linalg.norm(V - Q @ (Q.T @ V), axis=0).max() > RIGID_TOL:
        return None
    B = C @ np.linalg.lstsq(W, V, rcond=None)[0]      # (6, k) the free motions as rigid-body fields
    translations = B @ sla.null_space(B[3:], rcond=1e-8) if B.shape[1] else B
    names = [f"translation {a}" for i, a in enumerate(AXES) if _spans(translations[:3], i)]
    names += [f"rotation about {a}" for i, a in enumerate(AXES) if _spans(B[3:], i)]
    if len(names) < V.shape[1]:
        names.append(f"{V.shape[1] - len(names)} more along other axes")
    return names


def _spans(A, axis: int) -> bool:
    """Whether the columns of A (3, k) span the unit vector along `axis`."""
    if not A.shape[1] or not np.abs(A).max() > 0:
        return False
    U, sv, _ = np.linalg.svd(A, full_matrices=False)
    U = U[:, sv > 1e-8 * sv.max()]
    e = np.eye(3)[axis]
    return bool(np.linalg.norm(e - U @ (U.T @ e)) < 1e-6)


def _with_releases(model: Model, exc: MechanismError) -> MechanismError:
    """The mechanism error, with the released member ends at the nodes that move named: where a
    mechanism comes from releases, that is where to look."""
    nodes = {n for n, _ in exc.free}
    if not nodes:
        return exc
    index = {n: k for k, n in enumerate(model.node_names)}
    at = {index[n] for n in nodes if n in index}
    rel = model.releases & ~model.truss[:, None]
    ends = []
    for e in np.flatnonzero(rel.any(axis=1)):
        for end, node in zip("ij", model.conn[e]):
            dofs = np.flatnonzero(rel[e, 6 * "ij".index(end):6 * "ij".index(end) + 6])
            if node in at and len(dofs):
                ends.append(f"{model.member_names[e]} end {end} at {model.node_names[node]} "
                            f"(released {', '.join(DIRECTIONS[d] for d in dofs)})")
    if not ends:
        return exc
    shown = "; ".join(ends[:6]) + (f"; and {len(ends) - 6} more" if len(ends) > 6 else "")
    return MechanismError(f"{exc.message}; released member ends there: {shown}", exc.free)


def summary_lines(sound: Soundness | None) -> list[str]:
    """The held-DOF note and the condition line of the summary, from what `assess` found (None:
    nothing was checked); the same words in `quaver check` and `quaver run`."""
    lines = []
    if sound is None:
        return lines
    held = sound.held
    if held:
        shown = ", ".join(f"{n} {d}" for n, d in held[:10]) + (" ..." if len(held) > 10 else "")
        lines.append(f"note: {len(held)} DOF(s) have no stiffness and are held: {shown}; a load there is refused")
    cond = sound.condition
    if cond is not None:
        lost = max(0.0, np.log10(cond))
        level = "warning: " if cond > COND_WARN else ""
        lines.append(f"{level}stiffness condition estimate {cond:.1e} (about {lost:.0f} of 16 digits at risk"
                     + ("; check stiffness contrasts and units" if cond > COND_WARN else "") + ")")
    return lines


# ----------------------------------------------------------------------------- library warnings

_FLOATING = (("overflow", "a number overflowed (grew past the largest double)"),
             ("divide by zero", "a division by zero occurred"),
             ("invalid value", "an undefined number (0/0, inf - inf) appeared"),
             ("underflow", None))


def _in_our_words(w: warnings.WarningMessage, where: str) -> str | None:
    """One library warning said in Quaver's words (the text of a warning Note), or None when it
    is no matter for the user (performance hints, deprecations, underflow to zero)."""
    import scipy.linalg as sla
    import scipy.sparse as sp
    import scipy.sparse.linalg as spla

    cat, text = w.category, str(w.message)
    if issubclass(cat, (DeprecationWarning, PendingDeprecationWarning, FutureWarning, sp.SparseEfficiencyWarning)):
        return None
    if issubclass(cat, sla.LinAlgWarning):
        m = re.search(r"rcond\s*=\s*(\d[\d.]*(?:[eE][-+]?\d+)?)", text)
        rc = f" (reciprocal condition {float(m.group(1)):.1e})" if m else ""
        return (f"{where}: a dense solve met a nearly singular matrix{rc}; numbers that depend on it "
                "may be inaccurate: check stiffness contrasts, massless parts and units")
    if issubclass(cat, spla.MatrixRankWarning):
        return (f"{where}: a sparse solve met an exactly singular matrix (a mechanism or a part "
                "that nothing holds); check supports and end releases")
    if issubclass(cat, RuntimeWarning):
        for key, said in _FLOATING:
            if key in text:
                return said and (f"{where}: {said}; results with numbers that are not finite are "
                                 "refused, the rest may be affected: check the magnitudes and units in the deck")
    if issubclass(cat, np.exceptions.ComplexWarning):
        return f"{where}: complex numbers were cut to their real parts"
    return (f"{where}: the numerical library reported a {cat.__name__}; the self-checks say whether "
            "the results hold")


@contextmanager
def quiet(notes: list[Note], where: str):
    """Run numerical work with numpy's and scipy's warnings caught and said, once each, as
    warning Notes appended to `notes` (prefixed by `where`, e.g. 'case MODES'), so that no
    library text (with its source line) reaches the user. When the work raises, its error
    speaks instead."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        yield
    for w in caught:
        text = _in_our_words(w, where)
        note = text and Note(None, text)
        if note and note not in notes:
            notes.append(note)
