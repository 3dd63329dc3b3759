"""One factorisation where one serves: the model's checks factor K once, and the modes case
(shift-invert at zero shift), the static cases and the static corrections all use that factor;
the Sturm check factors K - sigma M in the fill-reducing order of the first factor; the checks
that can refuse a model run before any eigen solve."""

import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.linalg as sla
import scipy.sparse.linalg as spla

import fem
from fem.analysis import factor as fa
from fem.analysis.modes import solve_modes
from fem.analysis.static import load_vector
from fem.assembly import assemble
from fem.errors import ModelError

sys.path.insert(0, str(Path(__file__).parents[1] / "benchmarks"))
from scaling import frame_deck  # noqa: E402

# a 5 x 4 bay, 4 storey steel frame (our generator): 120 free nodes, 720 free DOFs, above
# modes.DENSE_LIMIT, so the modes are found by shift-invert Lanczos on a sparse factor
CASES = """
case MODES modes { count = 6 }
case G static { gravity = (0, 0, -9.81 m/s^2), force N5_4_4 = (10 kN, 20 kN, 0) }
case KICK history { force N5_4_4 = (0, 20 kN, 0), time = halfsine(0.1 s), duration = 0.2 s, step = 0.002 s,
                    correction = on }
"""
FRAME = frame_deck(5, 4, 4) + CASES


@pytest.fixture
def counted(monkeypatch):
    """Every sparse factorisation made, as (kind, permc_spec): scipy's splu and LAPACK's banded
    Cholesky, instrumented where the solver calls them."""
    calls = []
    splu, chol = spla.splu, sla.cholesky_banded

    def counting_splu(A, *a, **k):
        calls.append(("splu", k.get("permc_spec", "COLAMD")))
        return splu(A, *a, **k)

    def counting_chol(*a, **k):
        calls.append(("banded", None))
        return chol(*a, **k)

    monkeypatch.setattr(spla, "splu", counting_splu)
    monkeypatch.setattr(sla, "cholesky_banded", counting_chol)
    return calls


def test_modes_static_and_correction_share_one_factor_of_k(counted):
    r = fem.solve(fem.read_text(FRAME))
    assert r["MODES"].modes.solver.startswith("shift-invert")
    assert r["MODES"].modes.sturm_count == r["MODES"].modes.sturm_expected
    # one factor of K (the checks': banded Cholesky, chosen for this slender pattern) serves the
    # modes at zero shift, the static case and the history case's static correction; one more
    # factorisation, of K - sigma M, is the Sturm check (in the band order already found)
    assert counted == [("banded", None), ("splu", "NATURAL")]


def test_superlu_sturm_check_reuses_the_first_ordering(counted, monkeypatch):
    # the same run with SuperLU chosen for K (as for a compact frame without PARDISO)
    monkeypatch.setattr(fa, "choose", lambda n, order, kind="auto": "superlu")
    r = fem.solve(fem.read_text(FRAME))
    assert "SuperLU" in r["MODES"].modes.solver
    assert counted == [("splu", "MMD_AT_PLUS_A"), ("splu", "NATURAL")]
    # the count is the same as with an ordering of its own (Sylvester's law of inertia: the
    # number of negative pivots does not depend on the symmetric permutation)
    m = r["MODES"].modes
    asm = assemble(r.model)
    f = asm.free
    K, M = asm.K[f][:, f], asm.M[f][:, f]
    assert fa.negative_eigenvalues((K - m.sturm_shift * M).tocsc(), "superlu") == m.sturm_count == 6


def test_static_with_the_shared_factor_equals_a_fresh_spsolve():
    """u from the factor the modes case used against scipy's spsolve (a separate LU with partial
    pivoting) of the same K and f. Both are backward stable, so each is within about
    cond(K) eps of the exact solution (Higham, Accuracy and Stability of Numerical Algorithms,
    2nd ed., sec. 7.1-7.2): here the condition estimate is about 1.8e4, cond eps about 4e-12
    at worst, measured 1.4e-13; 1e-12 relative holds with 7x margin and fails on any solve
    with the wrong matrix or load."""
    r = fem.solve(fem.read_text(FRAME))
    assert r.soundness.condition < 1e5
    model = r.model
    asm = assemble(model)
    f = load_vector(model, asm, model.cases[1])[0]
    Kff = asm.K[asm.free][:, asm.free].tocsc()
    fresh = spla.spsolve(Kff, f[asm.free])
    got = r["G"].u.ravel()[asm.free]
    assert np.linalg.norm(got - fresh) <= 1e-12 * np.linalg.norm(fresh)


def test_ill_conditioned_model_is_refused_before_any_eigen_solve(monkeypatch):
    # a 1e30 N/m spring beside members of ~1e8 N/m: condition ~1e22, beyond 1/eps; the refusal
    # comes from the checks, before the modes case (listed first) is solved
    import fem.analysis.modal_case as modal_case
    import fem.analysis.modes as modes

    solved = []

    def never(*a, **k):
        solved.append(1)
        raise AssertionError("the eigen solver was called")

    monkeypatch.setattr(modal_case, "solve_modes", never)
    monkeypatch.setattr(modes, "_lanczos", never)
    monkeypatch.setattr(modes, "_dense", never)
    text = FRAME + "spring N5_4_4 (uz = 1e30 N/m)\n"
    with pytest.raises(ModelError, match="too badly conditioned"):
        fem.solve(fem.read_text(text))
    assert solved == []


def test_sturm_count_with_the_reused_order_on_the_pencil():
    # solve_modes alone, SuperLU forced: the reused order gives the count of a fresh ordering
    model = fem.read_text(FRAME)
    asm = assemble(model)
    f = asm.free
    K, M = asm.K[f][:, f].tocsr(), asm.M[f][:, f].tocsr()
    m = solve_modes(K, M, n_modes=10, factor_kind="superlu")
    assert m.sturm_count == m.sturm_expected == 10
    # against scipy's dense eigvalsh of the pencil (LAPACK): the same number below the shift
    lam = sla.eigh(K.toarray(), M.toarray(), eigvals_only=True)
    assert int(np.sum(lam < m.sturm_shift)) == m.sturm_count
