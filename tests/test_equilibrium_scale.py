"""Balance checks at their own rounding scale: a short stiff link member does not fail a correct
static or free-vibration solution, and a spoiled one still fails.

References: scipy.linalg.solve on the dense stiffness of the same model; the forward error
bound from a normwise backward error, ||x - y|| / ||x|| <= 2 kappa eta / (1 - kappa eta)
(Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., sec. 7.1, thm. 7.2), applied
to the system scaled to a unit diagonal, with kappa its infinity-norm condition number from
numpy.linalg.cond.

Tolerances. A link of length L stiffens K by about 12 E I / L^3 (3e18 N/m at 0.1 mm) where it
joins the structure, and every entry there is stored and used to about eps times that, so loads
and support forces only balance to about eps |K| |u| (measured: 0.004 to 0.55 of the rounding
scale `equilibrium_rounding`; the check allows ROUNDING_FACTOR = 4 of it, our choice).
"""

import dataclasses

import numpy as np
import pytest
import scipy.linalg as sla

from fem import solve
from fem.analysis.free_case import BALANCE_TOL, inertia_balance_terms
from fem.analysis.modal_case import field_responses
from fem.analysis.static import (
    EQUILIBRIUM_TOL,
    ROUNDING_FACTOR,
    SOLVE_TOL,
    balance,
    load_vector,
    precision_lines,
    support_forces,
)
from fem.assembly import assemble
from fem.checks import modal_checks, static_ok
from fem.deck.reader import read_text

LINKS = [0.1, 1.0, 5.0, 20.0]        # mm
IDS = [f"{x:g}mm" for x in LINKS]

# an invented four-leg equipment tower, 7.5 m in three panels, cross-braced, with a short
# bracket stub (LINK) on one leg top carrying a lamp load at its tip
TOWER = """
material ST {{ E = 205 GPa, nu = 0.3, density = 7850 kg/m^3 }}
section LEG = pipe(od = 114.3 mm, wall = 6 mm)
section BR = angle(b = 60 mm, h = 60 mm, t = 6 mm)
for k in 0..3 {{ for a in 0..3 {{ node T[k,a] = (1.1 m*cos(a*90 deg + 45 deg), 1.1 m*sin(a*90 deg + 45 deg), k*2.5 m) }} }}
for k in 0..2 {{
  for a in 0..3 {{ member C[k,a] : T[k,a] -> T[k+1,a] beam LEG ST }}
  for a in 0..2 {{ member X[k,a] : T[k,a] -> T[k+1,a+1] truss BR ST }}
  member X[k,3] : T[k,3] -> T[k+1,0] truss BR ST
}}
for k in 1..3 {{
  for a in 0..2 {{ member R[k,a] : T[k,a] -> T[k,a+1] truss BR ST }}
  member R[k,3] : T[k,3] -> T[k,0] truss BR ST
}}
support T0_* fixed
mass T3_* = 120 kg
node TIP = (1.1 m*cos(45 deg), 1.1 m*sin(45 deg), 7.5 m + {link} mm)
member LINK : T3_0 -> TIP beam LEG ST
mass TIP = 15 kg
case GRAV static {{ gravity = (0, 0, -9.81 m/s^2) }}
case STORM static {{ force T3_* = (2 kN, 0.7 kN, -0.5 kN), force TIP = (0.4 kN, -0.3 kN, -0.2 kN) }}
combo BOTH = 1.2*GRAV + 1.5*STORM
case MODES modes {{ count = 8 }}
case LET_GO free {{ start = STORM, duration = 1 s, step = 0.002 s, damping = 1 percent, modes = MODES }}
"""


def tower(link):
    model = read_text(TOWER.format(link=link))
    solved = solve(model)
    statics, modal = solved.statics, solved.modal
    return model, assemble(model), {r.name: r for r in statics}, {r.name: r for r in modal}


@pytest.fixture(scope="module", params=LINKS, ids=IDS)
def solved(request):
    return (request.param, *tower(request.param))


def _scaled_condition(K):
    s = np.sqrt(np.diag(K))
    return float(np.linalg.cond(K / s[:, None] / s[None, :], np.inf)), s


def test_correct_solutions_pass_every_check(solved):
    link, model, asm, statics, modal = solved
    for r in statics.values():
        c = r.checks(model.coords)
        assert static_ok(c), (r.name, c)
        assert c["solve_backward_error"] < 1e3 * np.finfo(float).eps
        # the rounding scale is not a blanket: the out-of-balance stays below it, and the
        # limit only opens beyond 1e-8 where rounding calls for it
        assert c["equilibrium_relative"] <= c["equilibrium_limit"]
        assert c["equilibrium_limit"] == max(EQUILIBRIUM_TOL, ROUNDING_FACTOR * c["equilibrium_rounding"])
    free = modal["LET_GO"]
    assert free.inertia_ok and modal_checks(free)["inertia_balance_pass"] is True
    m = modal_checks(modal["MODES"])
    assert m["residual_pass"] and m["orthogonality_pass"]


def test_displacements_match_a_dense_solve(solved):
    # scipy.linalg.solve on the same dense K and f: the two agree within the forward error bound
    # of their backward errors (Higham 2nd ed. thm. 7.2) in the scaled norm ||D^1/2 u||_inf
    link, model, asm, statics, modal = solved
    K = asm.K[asm.free][:, asm.free].toarray()
    kappa, s = _scaled_condition(K)
    for name in ("GRAV", "STORM"):
        r = statics[name]
        f = load_vector(model, asm, next(c for c in model.cases if c.name == name))[0][asm.free]
        ref = sla.solve(K, f, assume_a="pos", check_finite=True)
        u = r.u.ravel()[asm.free]
        eta = r.checks(model.coords)["solve_backward_error"]
        knorm = np.abs(K / s[:, None] / s[None, :]).sum(axis=1).max()
        eta_ref = np.abs((K @ ref - f) / s).max() / (knorm * np.abs(s * ref).max() + np.abs(f / s).max())
        bound = sum(2 * kappa * e / (1 - kappa * e) for e in (eta, eta_ref))
        err = np.abs(s * (u - ref)).max() / np.abs(s * ref).max()
        assert err <= bound, (name, err, bound)
        if link >= 5:       # a well-scaled case: the displacements themselves agree closely
            np.testing.assert_allclose(u, ref, rtol=0, atol=1e-6 * np.abs(ref).max())


def test_combination_carries_its_parts(solved):
    link, model, asm, statics, modal = solved
    both, g, s = statics["BOTH"], statics["GRAV"], statics["STORM"]
    np.testing.assert_array_equal(both.residual, 1.2 * g.residual + 1.5 * s.residual)
    np.testing.assert_array_equal(both.gross, 1.2 * g.gross + 1.5 * s.gross)


def _respoiled(model, asm, r, u):
    """The StaticResult of displacements u (6n,) for r's loads, its checks worked out afresh."""
    f = r.applied.ravel()
    Ku = asm.K @ u
    residual = np.zeros_like(u)
    residual[asm.free] = (Ku - f)[asm.free]
    reactions = support_forces(model, asm, Ku - f, u).reshape(-1, 6)
    return dataclasses.replace(r, u=u.reshape(-1, 6), reactions=reactions, residual=residual,
                               gross=abs(asm.K) @ np.abs(u) + np.abs(f))


@pytest.mark.parametrize("node", ["T2_1", "TIP"])
def test_a_perturbed_displacement_fails(solved, node):
    # one displacement off by 1e-3 of the largest (at mid-height, and at the link's tip): the
    # resultant balance may not see it (reactions only change next to the supports), the
    # backward error of the solve does, at every link length
    link, model, asm, statics, modal = solved
    r = statics["STORM"]
    u = r.u.ravel().copy()
    i = 6 * model.node_names.index(node) + 1
    u[i] += 1e-3 * np.abs(u).max()
    c = _respoiled(model, asm, r, u).checks(model.coords)
    assert c["solve_backward_error"] > 10 * SOLVE_TOL and not static_ok(c)
    assert any("backward error" in line for line in precision_lines(c))


def test_a_small_perturbation_fails_without_the_link_contrast():
    # with a 20 mm link a perturbation of 1e-6 of the largest displacement is still seen (the
    # scaled backward error sees one of size d at a node of stiffness k next to a link of
    # stiffness k_l as about d sqrt(k / k_l) / 4: 3e-9 here, 30 times SOLVE_TOL)
    model, asm, statics, _ = tower(20.0)
    r = statics["STORM"]
    u = r.u.ravel().copy()
    u[6 * model.node_names.index("T1_2")] += 1e-6 * np.abs(u).max()
    assert not static_ok(_respoiled(model, asm, r, u).checks(model.coords))


def test_a_missing_reaction_fails(solved):
    link, model, asm, statics, modal = solved
    for name in ("STORM", "BOTH"):
        r = statics[name]
        reactions = r.reactions.copy()
        reactions[model.node_names.index("T0_2")] = 0.0
        c = balance(model.coords, r.applied, reactions, r.residual, r.gross, r.u, r.diag, r.knorm)
        assert not c["equilibrium_pass"], (name, c)


def test_a_wrong_load_fails(solved):
    # the displacements answer to the STORM loads, the reported loads have the lamp load doubled
    link, model, asm, statics, modal = solved
    r = statics["STORM"]
    applied = r.applied.copy()
    applied[model.node_names.index("TIP")] *= 2.0
    c = balance(model.coords, applied, r.reactions, r.residual, r.gross, r.u, r.diag, r.knorm)
    assert not c["equilibrium_pass"], c


@pytest.mark.parametrize("link", [5.0, 20.0], ids=["5mm", "20mm"])
def test_a_slightly_wrong_load_fails_where_rounding_allows(link):
    # 1e-5 of one corner's load: seen wherever the rounding scale is below it
    model, asm, statics, _ = tower(link)
    r = statics["STORM"]
    applied = r.applied.copy()
    applied[model.node_names.index("T3_2"), 0] *= 1 + 1e-4
    c = balance(model.coords, applied, r.reactions, r.residual, r.gross, r.u, r.diag, r.knorm)
    assert c["equilibrium_limit"] < 1e-5 and not c["equilibrium_pass"], c


def test_free_case_inertia_balance_fails_without_a_support(solved):
    # each mode's support reactions hold its inertia forces; leave one support node out and the
    # balance fails at every link length
    link, model, asm, statics, modal = solved
    m = modal["MODES"]
    k = m.shapes.shape[2]
    Rm, _ = field_responses(model, asm, m.shapes.reshape(6 * model.n_nodes, -1).T)
    rel, rounding, ok = inertia_balance_terms(model, asm, m, Rm)
    assert ok and rel == pytest.approx(modal["LET_GO"].inertia_balance)
    spoiled = Rm.copy()
    spoiled[:, model.node_names.index("T0_1")] = 0.0
    rel, rounding, ok = inertia_balance_terms(model, asm, m, spoiled)
    assert not ok and rel > 100 * BALANCE_TOL and k == 8


def test_precision_warning_only_where_rounding_limits_the_balance():
    # the 0.1 mm link limits the balance to well beyond a millionth of the loads: a warning says
    # so; the 20 mm link does not
    short = tower(0.1)
    lines = precision_lines(short[2]["STORM"].checks(short[0].coords))
    assert any(line.startswith("warning: loads and support forces can only balance") for line in lines)
    long = tower(20.0)
    assert precision_lines(long[2]["STORM"].checks(long[0].coords)) == []


def test_nothing_to_balance_leaves_only_rounding():
    # no load and no reaction: passes; a stray support force with no load fails
    xyz = np.array([[0.0, 0, 0], [1, 0, 0]])
    zero = np.zeros((2, 6))
    assert balance(xyz, zero, zero)["equilibrium_pass"]
    stray = zero.copy()
    stray[0, 2] = 1.0
    assert not balance(xyz, zero, stray)["equilibrium_pass"]
