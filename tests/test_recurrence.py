import numpy as np
from fem.analysis.damping import rayleigh_coefficients, rayleigh_ratios


def test_rayleigh_reference_values_s8():
    # reference-values.md §8 (C; Chopra §11.4 formula); values printed to 6-7 digits -> rel 1e-6
    a0, a1 = rayleigh_coefficients(1.0, 0.05, 5.0, 0.05)
    assert np.isclose(a0, 0.523599, rtol=1e-6) and np.isclose(a1, 2.652582e-3, rtol=1e-6)
    f = np.array([0.5, 1, 2, 3, 5, 10, 20])
    z = rayleigh_ratios(2 * np.pi * f, a0, a1)
    assert np.allclose(z, [0.08750, 0.05, 0.03750, 0.03889, 0.05, 0.08750, 0.16875], atol=6e-6)
    b0, b1 = rayleigh_coefficients(1.0, 0.02, 5.0, 0.05)
    assert np.isclose(b0, 0.130900, rtol=1e-5) and np.isclose(b1, 3.050470e-3, rtol=1e-6)


def test_recurrence_coefficients_reference_s5():
    # reference-values.md §5 (C; Chopra §5.2 Table 5.2.1): T=1 s, zeta=0.05, dt=0.1, SDOF k=10.
    # Unit-mass C, D, C', D' scale by w^2/k to the SDOF values; 6 printed digits -> rtol 1e-5.
    from fem.analysis.recurrence import recurrence_coefficients
    w = 2 * np.pi
    c = recurrence_coefficients(w, 0.05, 0.1)
    s = w**2 / 10
    got = [c["A"], c["B"], c["C"] * s, c["D"] * s, c["Ap"], c["Bp"], c["Cp"] * s, c["Dp"] * s]
    ref = [0.812929, 0.0906710, 0.0123555, 0.00635171, -3.579548, 0.755958, 0.170883, 0.187071]
    assert np.allclose(np.concatenate(got), ref, rtol=1e-5)


def test_step_load_dlf_s5():
    # reference-values.md §5 step load (H formula, C values): zeta=0.05, T=1 s; the recurrence is
    # exact for a constant load, so only the 6 printed digits limit the match (atol 1e-6).
    from fem.analysis.recurrence import integrate_modal
    w = 2 * np.pi
    q, _ = integrate_modal([w], 0.05, 0.05, np.full((21, 1), w**2))
    assert np.allclose(q[[5, 10, 20], 0], [0.951903, 1.854461, 0.269907], atol=1e-6)
    q0, _ = integrate_modal([w], 0.0, 0.05, np.full((21, 1), w**2))
    assert np.isclose(q0[10, 0], 2.0, atol=1e-12)  # undamped peak 2 at t = T/2, exact
