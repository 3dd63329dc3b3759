"""Free vibration: SDOF closed form values and full-system comparison with scipy's expm."""

import numpy as np
import pytest
import scipy.linalg as sla
import scipy.sparse as sp

from fem.analysis.free import free_response, modal_initial_conditions
from fem.analysis.modes import solve_modes


def test_sdof_values():
    # reference-values.md section 5 (Chopra 2017 Ch. 2; values C): T = 1 s, zeta = 0.05,
    # u0 = 0.01 m, v0 = 0.1 m/s; printed to 7 significant digits
    q, _ = free_response(np.array([2 * np.pi]), np.array([0.05]), np.array([0.01]), np.array([0.1]),
                         np.array([0.1, 0.5, 1.0]))
    np.testing.assert_allclose(q[:, 0], [0.01719639, -0.00849110, 0.00720946], rtol=5e-7)


def test_log_decrement():
    # delta = 2 pi zeta / sqrt(1 - zeta^2) (reference-values.md section 5): ratio of peaks one
    # damped period apart; 0.314553 at zeta = 0.05, printed to 6 digits
    z, w = 0.05, 2 * np.pi
    td = 2 * np.pi / (w * np.sqrt(1 - z**2))
    q, _ = free_response(np.array([w]), np.array([z]), np.array([1.0]), np.array([0.0]), np.array([0, td]))
    assert np.log(q[0, 0] / q[1, 0]) == pytest.approx(0.314553, rel=2e-6)


def test_single_mode_start_stays_in_that_mode():
    # u(0) = phi_n gives u = phi_n cos(w_n t) (reference-values.md section 7, H)
    K = sp.csr_matrix([[2.0, -1.0], [-1.0, 1.0]])
    M = sp.identity(2, format="csr")
    res = solve_modes(K, M, n_modes=2)
    q0, v0 = modal_initial_conditions(res.phi, M, res.phi[:, 1], np.zeros(2))
    np.testing.assert_allclose(q0, [0, 1], atol=1e-14)
    t = np.linspace(0, 5, 11)
    q, _ = free_response(res.omega, np.zeros(2), q0, v0, t)
    np.testing.assert_allclose(q @ res.phi.T, np.outer(np.cos(res.omega[1] * t), res.phi[:, 1]), atol=1e-13)


def test_matches_full_state_space_solution():
    # 3-storey shear frame with Rayleigh damping, all modes kept: modal superposition must equal
    # the exact solution x(t) = expm(A t) x0 of the full first-order system (scipy.linalg.expm);
    # both are exact, so the tolerance is round-off (1e-10 of the initial amplitude)
    k = np.array([[2, -1, 0], [-1, 2, -1], [0, -1, 1]], float) * 4e6
    m = np.diag([2e3, 2e3, 1.5e3])
    a0, a1 = 0.3, 2e-3
    c = a0 * m + a1 * k
    res = solve_modes(sp.csr_matrix(k), sp.csr_matrix(m), n_modes=3)
    zeta = a0 / (2 * res.omega) + a1 * res.omega / 2
    u0, v0 = np.array([0.01, 0.02, 0.03]), np.array([0.0, -0.1, 0.2])
    q0, qd0 = modal_initial_conditions(res.phi, m, u0, v0)
    t = np.linspace(0, 0.6, 13)
    q, _ = free_response(res.omega, zeta, q0, qd0, t)
    u_modal = q @ res.phi.T
    A = np.block([[np.zeros((3, 3)), np.eye(3)], [-np.linalg.solve(m, k), -np.linalg.solve(m, c)]])
    x = np.array([sla.expm(A * ti) @ np.r_[u0, v0] for ti in t])
    np.testing.assert_allclose(u_modal, x[:, :3], atol=1e-10 * 0.03)
