"""`solve(model)`: every case of a model, its self-checks and notes, in one `Results`.

The model's checks come first (`analysis.soundness.examine`: a mechanism, a free structure
asked for a static answer or a hopeless condition is refused before any expensive solve); then
the modes cases, the static cases and combinations, and the response cases built on them. One
factorisation of K, the checks' own, serves every case that needs one. A table keyed by
``case.kind`` picks each solver. The model is read, never written: solving twice gives the same
results.
"""

from __future__ import annotations

from contextlib import contextmanager

import numpy as np

from .analysis.free_case import solve_free_case
from .analysis.harmonic import solve_harmonic_case
from .analysis.history_case import solve_history_case
from .analysis.modal_case import solve_modes_case
from .analysis.soundness import examine, quiet
from .analysis.spectrum_case import solve_spectrum_case
from .analysis.static import combine, factorise, solve_static
from .checks import evaluate
from .errors import ModelError
from .model import COMBINABLE, Model
from .results import Results

__all__ = ["assembled_mass", "excitation_frequencies", "solve"]


def assembled_mass(model: Model, asm) -> np.ndarray:
    """Translational mass seen by the assembled M in X, Y, Z (rigid translations), kg."""
    r = np.zeros((6 * model.n_nodes, 3))
    for d in range(3):
        r[d::6, d] = 1.0
    return np.einsum("ij,ij->j", r, asm.M @ r)


@contextmanager
def _at_case(case):
    """Locate a ModelError raised while solving one case at the case's definition in the deck."""
    try:
        yield
    except ModelError as exc:
        if type(exc) is ModelError and exc.location is None and case.location is not None:
            raise ModelError(exc.message, case.location) from None
        raise


def _links(case) -> tuple[str | None, str | None, bool]:
    """What a response case is built on: the name of its modes case, the name of its static
    start (a free case's), and whether it needs K's factor (a static correction, or a
    spectrum's missing-mass term). The one place the solve reads a case's options."""
    return case.modes, getattr(case, "start", None), case.static_part


def _check_links(model: Model) -> None:
    """Refuse a case built on a case the model does not have (possible for cases built in
    Python; the reader refuses it in the deck): a response case's modes case, a free case's
    static start, a combination's static cases."""
    kinds = {c.name: c.kind for c in model.cases}
    combos = {cb.name for cb in model.combinations}
    for c in model.cases:
        if c.kind not in RESPONSE_SOLVERS:
            continue
        modes, start, _ = _links(c)
        if kinds.get(modes) != "modes":
            raise ModelError(f"case {c.name}: '{modes}' is not a modes case of the model; its modes cases: "
                             f"{', '.join(n for n, k in kinds.items() if k == 'modes') or 'none'}", c.location)
        if start and kinds.get(start) != "static" and start not in combos:
            raise ModelError(f"case {c.name}: start '{start}' is not a static case or combination of the model",
                             c.location)
    statics = {c.name for c in model.cases if c.kind == "static"} | combos
    preloaded = {c.name for c in model.cases if c.kind == "modes" and c.preload is not None}
    for c in model.cases:
        ref = getattr(c, "preload", None) if c.kind == "modes" else getattr(c, "loading", None)
        if c.kind in ("modes", "buckling") and ref is not None and ref not in statics:
            raise ModelError(f"case {c.name}: '{ref}' is not a static case or combination of the model", c.location)
        if c.kind in RESPONSE_SOLVERS and c.static_part and c.modes in preloaded:
            raise ModelError(f"case {c.name}: the static correction (or missing mass) takes K without the preload "
                             f"of modes case {c.modes}; turn it off, or build the case on modes without a preload",
                             c.location)
    for cb in model.combinations:
        for n in cb.factors:
            if kinds.get(n) not in COMBINABLE:
                raise ModelError(f"combination {cb.name}: '{n}' is not a static, history, spectrum or harmonic "
                                 "case of the model", cb.location)
    for env in model.envelopes:
        for n in env.over:
            if kinds.get(n) not in COMBINABLE and n not in combos:
                raise ModelError(f"envelope {env.name}: '{n}' is not a static, history, spectrum or harmonic case "
                                 "or a combination of the model", env.location)


class _Run:
    """What the solvers of one solve share: the model, its assembly, the results so far and
    one factor of K, made when first needed (or the model's checks' own)."""

    def __init__(self, model: Model, asm, factor):
        self.model, self.asm = model, asm
        self.statics: dict = {}
        self.modes: dict = {}
        self.stiffened: dict = {}      # the assembly (K + Kg) of each modes case under a preload or pretension
        self.pretension = None         # the pretension state's forces beyond the pretensions themselves
                                       # (which K holds), a fem.analysis.buckling.Preload, or None
        self._factor = factor

    def lu(self):
        if self._factor is None:
            self._factor = factorise(self.model, self.asm)
        return self._factor


def _modes(run: _Run, case, notes, spd):
    """Solve the modes case `case`: with K, or with K + Kg of its preload's and the pretensions'
    axial forces (then its assembly is kept for the response cases built on it)."""
    from .analysis.buckling import geometric_matrix, preload_of, preloaded

    N0 = run.pretension if run.pretension is not None and run.pretension.acts() else None
    if case.preload is None and N0 is None:
        return solve_modes_case(run.model, run.asm, case, factor=spd, notes=notes)
    G = None if case.preload is None else geometric_matrix(run.model, run.asm, preload_of(run.statics[case.preload]))
    G0 = None if N0 is None else geometric_matrix(run.model, run.asm, N0)
    what = f"case {case.name}: the preload of case {case.preload}" if case.preload else \
        f"case {case.name}: the members' pretension"
    asm, factor = preloaded(run.model, run.asm, G, what, case.location, G0)
    run.stiffened[case.name] = asm
    return solve_modes_case(run.model, asm, case, factor=factor, notes=notes)


def _free(run: _Run, case):
    modes, start, _ = _links(case)
    return solve_free_case(run.model, run.asm, case, run.modes[modes], run.statics[start].u if start else None)


def _history(run: _Run, case):
    from .progress import stage

    modes, _, factor = _links(case)
    with stage(f"history case {case.name}: integrating"):
        return solve_history_case(run.model, run.asm, case, run.modes[modes], run.lu() if factor else None)


def _harmonic(run: _Run, case):
    from .analysis.stress import STATIONS

    modes, _, factor = _links(case)
    model = run.model
    added = {n for cb in model.combinations for n in cb.factors} | {n for env in model.envelopes for n in env.over}
    return solve_harmonic_case(model, run.asm, case, run.modes[modes], run.lu() if factor else None,
                               around=excitation_frequencies(model), stations=STATIONS if case.name in added else 2)


def excitation_frequencies(model: Model) -> tuple[float, ...]:
    """Where the declared excitations act, Hz: each band's ends (a fixed speed's frequency, a
    speed range's ends, per order), so that a sweep is refined there (docs/deck.md)."""
    return tuple(sorted({f for e in model.excitations for b in e.bands() for f in (b.low, b.high)}))


def _spectrum(run: _Run, case):
    modes, _, factor = _links(case)
    return solve_spectrum_case(run.model, run.asm, case, run.modes[modes], run.lu() if factor else None)


def _sensitivity(model: Model, case, modes):
    """The frequency sensitivities a modes case asks for (`case.sensitivity`), members grouped as
    it says; None when it asks for none."""
    from .analysis.sensitivity import frequency_sensitivity
    from .limits import ROWS_LIMIT

    if case.sensitivity is None:
        return None
    if case.sensitivity == "groups" and not model.groups:
        raise ModelError(f"case {case.name}: sensitivity = groups, but the model has no group of members")
    by = {"members": "member", "sections": "section", "materials": "material"}.get(case.sensitivity)
    s = frequency_sensitivity(model, modes, groups=dict(model.groups) if by is None else by)
    if s.d_freq.size > ROWS_LIMIT:
        raise ModelError(f"case {case.name}: {len(s.kind)} parameters x {len(s.freq)} modes = {s.d_freq.size:,} "
                         f"rows of sensitivities, above the limit of {ROWS_LIMIT:,}; group the members: "
                         "sensitivity = sections, materials or groups")
    return s


# the solver of each response case kind; modes and static cases are solved before them, in bulk
RESPONSE_SOLVERS = {"free": _free, "history": _history, "harmonic": _harmonic, "spectrum": _spectrum}


def solve(model: Model, cases=None) -> Results:
    """Solve every case and combination of `model` (or only those named in `cases`, with the
    cases they are built on) and check the answers.

    Parameters
    ----------
    model : Model
        A model from `fem.deck.reader.read_deck` or `read_text`; it is not changed.
    cases : iterable of str, optional
        Names of cases and combinations to solve; each brings the cases it needs (a
        combination its static cases, a response case its modes case and static start). An
        unknown name raises DeckError with the nearest one. All cases when None or empty.

    Returns
    -------
    Results
        Every result by name, the model's checks (`soundness`), the assembled mass, the
        self-checks and the notes of the solve.

    Raises
    ------
    MechanismError, ModelError
        A model that cannot be solved (a mechanism, a free structure asked for a static
        answer, a stiffness too badly conditioned), or a case that cannot be.

    Examples
    --------
    >>> from fem.deck.reader import read_deck               # doctest: +SKIP
    >>> results = solve(read_deck("decks/rack.deck"))       # doctest: +SKIP
    >>> results["MODES"].modes.freq[:3]                     # doctest: +SKIP
    >>> results.ok                                          # doctest: +SKIP
    True
    """
    from .threads import openblas_limited

    with openblas_limited():        # one BLAS thread: faster here, and the same digits on any machine
        return _solve(model, cases)


def _solve(model: Model, cases) -> Results:
    from .progress import stage

    asked = None
    if cases:
        from .case_selection import select_cases

        names = list(dict.fromkeys(cases))
        model, added = select_cases(model, names)
        asked = {"asked": names, "needed": added}
    _check_links(model)
    asm, sound = examine(model)
    notes = list(sound.notes)
    run = _Run(model, asm, sound.factor)
    state = None
    if getattr(model, "pretension", None) is not None and np.any(model.pretension):
        from .analysis.buckling import pretension_state

        with quiet(notes, "pretension"):
            state = pretension_state(model, asm, run.lu())
            run.pretension = state.beyond(model.pretension)
    sensitivities = {}
    dynamic = [cb for cb in model.combinations if not _static_only(model, cb)]
    for after in (False, True):       # modes under a preload once the static cases are solved
        for c in model.cases:
            if c.kind == "modes" and (c.preload is not None) == after:
                with stage(f"modes case {c.name}: eigen solve"), _at_case(c), quiet(notes, f"case {c.name}"):
                    run.modes[c.name] = _modes(run, c, notes, sound.spd)
                    sensitivities[c.name] = _sensitivity(model, c, run.modes[c.name])
        statics = [c for c in model.cases if c.kind == "static"]
        if after or not (statics or model.combinations):
            continue
        with quiet(notes, "static cases"):
            run.statics = {c.name: solve_static(model, asm, c, run.lu()) for c in statics}
        for combo in model.combinations:
            parts = [(f, run.statics[n]) for n, f in combo.factors.items() if n in run.statics]
            if combo not in dynamic:
                run.statics[combo.name] = combine(combo.name, parts, model.coords)
    run.modes = {c.name: run.modes[c.name] for c in model.cases if c.name in run.modes}   # deck order
    responses = {}
    for c in model.cases:
        solver = RESPONSE_SOLVERS.get(c.kind)
        if solver is not None:
            run.asm = run.stiffened.get(c.modes, asm)     # the stiffness its modes were found with
            with _at_case(c), quiet(notes, f"case {c.name}"):
                responses[c.name] = solver(run, c)
            run.asm = asm
        elif c.kind == "buckling":
            from .analysis.buckling import preload_of, solve_buckling

            with stage(f"buckling case {c.name}: eigen solve"), _at_case(c), quiet(notes, f"case {c.name}"):
                responses[c.name] = solve_buckling(model, asm, c, preload_of(run.statics[c.loading]),
                                                   run.pretension, sound.spd)
    changes = dict(run.statics)
    if state is not None:          # reported: the pretension state plus each case's change from it
        from .analysis.buckling import with_state

        run.statics = {n: with_state(r, state, model.coords) for n, r in run.statics.items()}
    lines = _line_loads(model, asm)
    demands = _demands(model, run, responses, dynamic, lines, changes, state)
    mass = assembled_mass(model, asm)
    modal = [*run.modes.values(), *responses.values()]
    resonance = _resonance(model, run.modes)
    checks = evaluate(model, list(run.statics.values()), modal, mass, len(sound.rigid), resonance,
                      list(demands.values()))
    return Results(model, {**run.statics, **run.modes, **responses, **demands}, sound, mass, checks, tuple(notes),
                   asked, {n: s for n, s in sensitivities.items() if s is not None}, resonance,
                   _stresses(model, lines, run.statics, responses),
                   springs=_springs(model, run.statics, run.modes, {**responses, **demands}))


def _springs(model: Model, statics: dict, modes: dict, responses: dict) -> dict:
    """The forces of the springs between nodes of every case that has them, by name."""
    from .analysis.spring_forces import modal_springs, static_springs

    if model.node_springs is None:
        return {}
    out = {n: static_springs(model, r.u) for n, r in statics.items()}
    out.update({n: modal_springs(model, r.shapes) for n, r in modes.items()})
    out.update({n: r.springs for n, r in responses.items() if getattr(r, "springs", None) is not None})
    return out


def _line_loads(model: Model, asm) -> dict:
    """The uniform line loads (e, 3) of every static case and static combination, by name."""
    from .analysis.static import line_loads

    lines = {c.name: line_loads(model, asm, c) for c in model.cases if c.kind == "static"}
    for cb in model.combinations:      # a combination of static cases: its factored line loads
        if all(n in lines for n in cb.factors):
            lines[cb.name] = sum((f * lines[n] for n, f in cb.factors.items()), np.zeros((model.n_members, 3)))
    return lines


def _stresses(model: Model, lines: dict, statics: dict, responses: dict) -> dict:
    """The member stresses of every static case and combination (exact, from its end forces and
    line loads) and of every response case (computed by its solver), by name."""
    from .analysis.stress import member_stresses, section_table

    if model.n_members == 0:           # springs and masses only: no member has a stress
        return {}
    table = section_table(model)
    out = {n: member_stresses(model, r.member_forces, lines[n], table=table) for n, r in statics.items() if n in lines}
    out.update({n: r.stresses for n, r in responses.items() if getattr(r, "stresses", None) is not None})
    return out


def model_case(model: Model, name: str):
    """The case of `model` named `name`."""
    return next(c for c in model.cases if c.name == name)


def _static_only(model: Model, combo) -> bool:
    """Whether a combination adds static cases only (its result is then a static one)."""
    kinds = {c.name: c.kind for c in model.cases}
    return all(kinds.get(n) == "static" for n in combo.factors)


def _demands(model: Model, run: _Run, responses: dict, dynamic: list, lines: dict, changes: dict, state) -> dict:
    """The combinations with a history, spectrum or harmonic case (`CombinationResult`) and
    the envelopes (`EnvelopeResult`), by name (fem/analysis/combine.py). In a model with
    pretensioned members a combination adds its static cases' changes from the pretension state
    (`changes`) and the state once, as a term of its own, "(pretension state)": the dynamic
    cases are motions about that settled state, as every static case is a change from it."""
    from dataclasses import replace

    from .analysis.combine import combine_terms, envelope
    from .analysis.history_case import series_basis
    from .analysis.link_field import linked_dofs
    from .analysis.spring_forces import combination_springs, envelope_springs
    from .analysis.stress_field import StressContext

    found = {**run.statics, **responses}
    used = {n for cb in dynamic for n in cb.factors} | {n for env in model.envelopes for n in env.over}
    for n in used:         # a history case's fields at every step, for these combinations only
        r = found.get(n)
        if r is not None and r.kind == "history":
            m = model_case(model, n).modes
            found[n] = replace(r, series=series_basis(model, run.stiffened.get(m, run.asm), r, run.modes[m]))
    sizes = {"node": model.n_nodes, "member": model.n_members, "stress": StressContext(model, lines) if model.n_members else None,
             "links": linked_dofs(model)}
    out = {}
    settled = [] if state is None else [(1.0, _state_result(model, state))]
    for cb in dynamic:
        statics = [(f, changes[n]) for n, f in cb.factors.items() if n in changes] + settled
        part = combine(cb.name, statics, model.coords) if statics else None
        terms = [(f, changes.get(n, found[n])) for n, f in cb.factors.items()] + settled
        with _at_case(cb):
            out[cb.name] = combine_terms(cb.name, terms, sizes, part)
            out[cb.name].springs = combination_springs(model, [(f, found[n], n) for n, f in cb.factors.items()])
    found.update(out)
    for env in model.envelopes:
        with _at_case(env):
            out[env.name] = envelope(env.name, [found[n] for n in env.over], sizes)
            out[env.name].springs = envelope_springs([
                found[n].springs if found[n].kind == "combination" else combination_springs(model, [(1.0, found[n], n)])
                for n in env.over])
    return out


def _state_result(model: Model, state):
    """The pretension state as a static result named "(pretension state)" (no load applied)."""
    from .analysis.static import StaticResult, equilibrium

    applied = np.zeros_like(state.reactions)
    return StaticResult("(pretension state)", state.u, state.reactions, state.member_forces, applied,
                        equilibrium(model.coords, applied, state.reactions), state.residual, state.gross,
                        links=state.links)


def _resonance(model: Model, modes: dict) -> dict:
    """The resonance check of each modes case against the excitations it takes (every one the
    model declares, unless the case names some or none), by case name."""
    from .analysis.resonance import check_resonance

    out = {}
    for c in model.cases:
        if c.kind == "modes" and model.excitations:
            chosen = [e for e in model.excitations if c.resonance is None or e.name in c.resonance]
            if chosen:
                out[c.name] = check_resonance(modes[c.name], chosen, model.node_names)
    return out
