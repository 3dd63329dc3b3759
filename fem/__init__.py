"""Quaver: natural frequencies, mode shapes and static and dynamic response of 3D beam and truss
structures, by modal superposition.

Results support, and never replace, the judgement of a qualified engineer; local codes and
licensed practice govern.

A session in four steps (decks/mast.deck is one of the example decks)::

    >>> import fem                                     # or: import quaver
    >>> model = fem.read_deck("decks/mast.deck", let={"h": "3.2 m"})
    >>> results = fem.solve(model)
    >>> results["MODES"].modes.freq[:3]                 # natural frequencies, Hz
    >>> fem.write_results(results, "results/mast")      # what `quaver run` writes

`read_deck` and `read_text` build a `Model` (its cases typed: `StaticCase`, `ModesCase`, ...);
`solve` returns a `Results` without changing the model; `write_results` writes the results
folder. Errors in the deck raise `DeckError` with file, line and column; a model that cannot
be solved raises `ModelError` (a `MechanismError` names the free nodes and directions).
docs/api.md walks through it.

The names are imported on first use, so `import fem` stays quick.
"""

from importlib import import_module

__version__ = "0.1.0"

# public name -> the module that defines it
_EXPORTS = {
    "read_deck": "fem.deck.reader", "read_text": "fem.deck.reader",
    "solve": "fem.solver", "Results": "fem.results",
    "write_results": "fem.output.write",
    "run_study": "fem.study", "read_study": "fem.study", "Study": "fem.study", "StudyResult": "fem.study",
    "Model": "fem.model", "LoadItem": "fem.model", "Combination": "fem.model", "Envelope": "fem.model",
    "StaticCase": "fem.cases", "ModesCase": "fem.cases", "FreeCase": "fem.cases",
    "HistoryCase": "fem.cases", "HarmonicCase": "fem.cases", "SpectrumCase": "fem.cases",
    "BucklingCase": "fem.cases", "BucklingResult": "fem.analysis.buckling",
    "Damping": "fem.damping",
    "StaticResult": "fem.analysis.static", "ModesCaseResult": "fem.analysis.modal_case",
    "FreeCaseResult": "fem.analysis.free_case", "HistoryResult": "fem.analysis.history_case",
    "HarmonicResult": "fem.analysis.harmonic", "SpectrumResult": "fem.analysis.spectrum_case",
    "CombinationResult": "fem.analysis.combine", "EnvelopeResult": "fem.analysis.combine",
    "TimeFunction": "fem.timefn", "Spectrum": "fem.spectrum",
    "Machine": "fem.excitation", "FrequencyBand": "fem.excitation", "VibrationLimit": "fem.vibration",
    "Note": "fem.notes", "Location": "fem.errors",
    "QuaverError": "fem.errors", "DeckError": "fem.errors", "ModelError": "fem.errors",
    "MechanismError": "fem.errors", "ResultsError": "fem.errors",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name: str):
    if name in _EXPORTS:
        value = getattr(import_module(_EXPORTS[name]), name)
        globals()[name] = value          # looked up once
        return value
    raise AttributeError(f"module 'fem' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__))
