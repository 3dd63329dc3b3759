"""`Results`: what one `fem.solve` found, self-describing and read-only by habit.

Each case result carries its kind (``result.kind``: "static", "modes", "free", "history",
"harmonic", "spectrum"; a combination of static cases is a "static" result, one with a
history, spectrum or harmonic case a "combination", an envelope an "envelope"), so code that shows results picks
its writer from a table keyed by kind.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .analysis.soundness import Soundness
from .checks import SelfChecks
from .model import Model
from .notes import Note

__all__ = ["Results"]


@dataclass(frozen=True, eq=False, repr=False)
class Results:
    """Every result of one solve, its self-checks and its notes.

    Attributes
    ----------
    model : Model
        The model solved (with only the cases asked for and those they need, when the solve
        was given `cases`).
    cases : dict of str to result
        Each result by case or combination name: the static cases (`StaticResult`) in deck
        order, then the combinations (`StaticResult`), then the modes cases
        (`ModesCaseResult`), then the free, history, harmonic, spectrum and buckling cases
        (`FreeCaseResult`, `HistoryResult`, `HarmonicResult`, `SpectrumResult`,
        `BucklingResult`) in deck order.
    soundness : Soundness
        What the model's checks found before any case: DOFs held because nothing resists them,
        the stiffness condition estimate, the rigid-body motions the supports leave free, and
        their notes.
    assembled_mass : ndarray, shape (3,)
        Translational mass of the assembled M in X, Y, Z, kg.
    checks : SelfChecks
        The self-checks of every result and their verdicts (`fem.checks`).
    notes : tuple of Note
        What the solve found worth saying, in the order found (the model's checks' notes
        first); the reader's notes are in ``model.warnings``.
    cases_asked : dict or None
        ``{"asked": [...], "needed": [...]}``: the cases named to the solve and those added
        because they need them; None when every case was solved.
    sensitivities : dict of str to FrequencySensitivity
        The frequency sensitivities of each modes case that asks for them (its `sensitivity`
        option), by case name (`fem.analysis.sensitivity`; docs/sensitivity.md).
    stresses : dict of str to MemberStresses
        The member stresses of each case and combination that has member forces (static,
        combination, free, history, harmonic, spectrum), by name (`fem.analysis.stress`).
    springs : dict of str to SpringForces
        The forces of the springs between nodes (`fem.analysis.spring_forces`) of every static
        case, combination of static cases, modes case (per mode) and free, history, harmonic and
        spectrum case, by name; empty when the model has no such springs.
    resonance : dict of str to ResonanceCheck
        The resonance check of each modes case that checks excitations
        (`fem.analysis.resonance`), by modes case name; empty when the model declares none.

    Examples
    --------
    >>> results = solve(read_deck("decks/mast.deck"))      # doctest: +SKIP
    >>> [r.kind for r in results]                          # doctest: +SKIP
    ['static', 'static', 'modes', 'free']
    >>> results["MODES"].modes.freq[0], results.ok         # doctest: +SKIP
    """

    model: Model
    cases: dict
    soundness: Soundness
    assembled_mass: np.ndarray
    checks: SelfChecks
    notes: tuple[Note, ...] = ()
    cases_asked: dict | None = None
    sensitivities: dict = field(default_factory=dict)
    resonance: dict = field(default_factory=dict)
    stresses: dict = field(default_factory=dict)
    springs: dict = field(default_factory=dict)

    def __repr__(self) -> str:
        cases = ", ".join(f"{n} ({r.kind})" for n, r in self.cases.items())
        return f"<Results of {self.model.title or self.model.source or 'a model'}: {cases or 'no cases'}; ok={self.ok}>"

    def __getitem__(self, name: str):
        """The result of the case or combination `name`."""
        try:
            return self.cases[name]
        except KeyError:
            raise KeyError(f"no result named {name!r}; the results hold {', '.join(self.cases) or 'none'}") from None

    def __iter__(self):
        return iter(self.cases.values())

    def __len__(self) -> int:
        return len(self.cases)

    def __contains__(self, name) -> bool:
        return name in self.cases

    @property
    def statics(self) -> list:
        """Static cases then combinations (`StaticResult`)."""
        return [r for r in self.cases.values() if r.kind == "static"]

    @property
    def modal(self) -> list:
        """Modes cases, then response cases in deck order."""
        return [r for r in self.cases.values() if r.kind not in ("static", "combination", "envelope")]

    @property
    def demands(self) -> list:
        """Combinations with a dynamic case, then envelopes (fem/analysis/combine.py)."""
        return self.of_kind("combination", "envelope")

    def of_kind(self, *kinds: str) -> list:
        """The results of the given kinds, in the order of `cases`."""
        return [r for r in self.cases.values() if r.kind in kinds]

    def modes_of(self, name: str):
        """The modes case result that the response case `name` was built on."""
        return self.cases[self.definition(name).modes]

    def definition(self, name: str):
        """The case (combination or envelope) definition of `name` in the model."""
        return next(c for c in [*self.model.cases, *self.model.combinations, *self.model.envelopes]
                    if c.name == name)

    @property
    def warnings(self) -> list[str]:
        """Every note as shown: the reader's (``model.warnings``), then the solve's."""
        return [str(w) for w in [*self.model.warnings, *self.notes]]

    @property
    def ok(self) -> bool:
        """Every self-check passes, every effective-mass target is met, every vibration limit and every resonance
        check passes (exit status 0)."""
        return self.checks.ok
