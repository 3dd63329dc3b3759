"""Design studies: one deck solved over many variants (let parameters swept over ranges, lists
and grids, drawn from distributions, a history case run under a suite of records), on Dask's
distributed scheduler or in this process, with modes followed by MAC across the variants.

    study file -> spec.read_study -> variants -> work.run_variant (engine: Dask or serial)
               -> track (MAC) -> run.StudyResult (the table) -> output.write_study

docs/studies.md describes the study file and the outputs. The names are imported on first use,
so that the command line's start stays quick.
"""

from importlib import import_module

_EXPORTS = {"Study": "fem.study.spec", "read_study": "fem.study.spec", "read_study_text": "fem.study.spec",
            "StudyError": "fem.study.engine", "StudyResult": "fem.study.run", "run_study": "fem.study.run"}

__all__ = list(_EXPORTS)


def __getattr__(name: str):
    if name in _EXPORTS:
        value = getattr(import_module(_EXPORTS[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'fem.study' has no attribute {name!r}")
