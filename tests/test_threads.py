"""`fem.solve` and `write_results` run numpy's and scipy's OpenBLAS at one thread (fem/threads.py)
and give the caller's setting back after, also when they fail. Checked from inside a solve and a
write (a function each calls, wrapped) with the caller's limit set to two threads first, so the
checks hold on a machine of any core count."""

import pytest
from shared_decks import TINY_CANTILEVER
from threadpoolctl import threadpool_info, threadpool_limits

import fem.output.write as write
import fem.solver as solver
from fem import solve
from fem.deck.reader import read_text
from fem.errors import ModelError

pytestmark = pytest.mark.skipif(not any(i["internal_api"] == "openblas" for i in threadpool_info()),
                                reason="numpy/scipy built without OpenBLAS")


def _openblas() -> set[int]:
    return {i["num_threads"] for i in threadpool_info() if i["internal_api"] == "openblas"}


def _spy(monkeypatch, module, name, seen, fail=False):
    real = getattr(module, name)

    def spied(*a, **k):
        seen.append(_openblas())
        if fail:
            raise ModelError("stopped on purpose")
        return real(*a, **k)
    monkeypatch.setattr(module, name, spied)


def test_solve_runs_one_openblas_thread_and_restores_the_callers(monkeypatch):
    seen = []
    _spy(monkeypatch, solver, "evaluate", seen)       # the self-checks, at the end of a solve
    with threadpool_limits(2, user_api="blas"):
        assert _openblas() == {2}
        solve(read_text(TINY_CANTILEVER))
        assert _openblas() == {2}
    assert seen == [{1}]


def test_a_failed_solve_restores_the_callers_threads(monkeypatch):
    seen = []
    _spy(monkeypatch, solver, "evaluate", seen, fail=True)
    with threadpool_limits(2, user_api="blas"):
        with pytest.raises(ModelError, match="on purpose"):
            solve(read_text(TINY_CANTILEVER))
        assert _openblas() == {2}
    assert seen == [{1}]


def test_writing_results_runs_one_openblas_thread(monkeypatch, tmp_path):
    results = solve(read_text(TINY_CANTILEVER))
    seen = []
    _spy(monkeypatch, write, "write_tables", seen)
    with threadpool_limits(2, user_api="blas"):
        write.write_results(results, tmp_path / "out", write="tables")
        assert _openblas() == {2}
    assert seen == [{1}]
