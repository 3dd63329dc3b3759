import numpy as np

from fem.damping import rayleigh_coefficients, rayleigh_ratios


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


def _chopra_closed_form(w, z, dt, k):
    """Chopra 2017 Table 5.2.1 closed forms (reference-values.md section 5), SDOF stiffness k."""
    sq = np.sqrt(1 - z**2)
    wd = w * sq
    e = np.exp(-z * w * dt)
    s, c = np.sin(wd * dt), np.cos(wd * dt)
    zp = z / sq
    return dict(
        A=e * (zp * s + c), B=e * s / wd,
        C=(2 * z / (w * dt) + e * (((1 - 2 * z**2) / (wd * dt) - zp) * s - (1 + 2 * z / (w * dt)) * c)) / k,
        D=(1 - 2 * z / (w * dt) + e * ((2 * z**2 - 1) / (wd * dt) * s + 2 * z / (w * dt) * c)) / k)


def test_expm_coefficients_equal_closed_form():
    # the matrix-exponential coefficients must equal the published closed forms (round-off)
    from fem.analysis.recurrence import recurrence_coefficients
    w = np.array([0.5, 2 * np.pi, 40.0])
    z = np.array([0.0, 0.05, 0.3])
    c = recurrence_coefficients(w, z, 0.01)
    ref = _chopra_closed_form(w, z, 0.01, w**2)
    for key in "ABCD":
        np.testing.assert_allclose(c[key], ref[key], rtol=1e-8)


def test_chopra_example_half_sine_pulse():
    # reference-values.md section 5 (Chopra 2017 Example 5.1, values C): m = 0.2533, k = 10,
    # zeta = 0.05, half-sine p0 = 10, td = 0.6 s, dt = 0.1 s; recurrence row, 4 printed digits
    from fem.analysis.recurrence import integrate_modal
    m, k = 0.2533, 10.0
    t = np.arange(11) * 0.1
    p = np.where(t <= 0.6, 10 * np.sin(np.pi * t / 0.6), 0.0) / m
    q, _ = integrate_modal(np.array([np.sqrt(k / m)]), np.array([0.05]), 0.1, p[:, None])
    expect = [0.0318, 0.2274, 0.6336, 1.1339, 1.4896, 1.4480, 0.9037, 0.0579, -0.7577, -1.2432]
    # one unit in the last printed digit: the table rounds (or truncates) at 4 decimals
    np.testing.assert_allclose(q[1:, 0], expect, atol=1e-4)


def test_lfilter_equals_step_loop_and_solve_ivp():
    # the IIR-filter form must reproduce the plain step loop (round-off, 1e-10), and both the
    # exact solution of the ODE for a piecewise-linear load (scipy solve_ivp at rtol 1e-11)
    from scipy.integrate import solve_ivp

    from fem.analysis.recurrence import integrate_modal, integrate_modal_steps
    rng = np.random.default_rng(3)
    w = np.array([0.0, 1.3, 7.0, 30.0])
    z = np.array([0.0, 0.02, 0.1, 1.5])          # rigid, light, moderate, overdamped
    dt, n = 0.02, 400
    p = rng.normal(size=(n, 4))
    q0, v0 = rng.normal(size=4), rng.normal(size=4)
    q, v = integrate_modal(w, z, dt, p, q0, v0)
    qs, vs = integrate_modal_steps(w, z, dt, p, q0, v0)
    scale = np.abs(qs).max(axis=0)
    np.testing.assert_allclose(q, qs, atol=1e-10 * scale.max())
    np.testing.assert_allclose(v, vs, atol=1e-10 * np.abs(vs).max())
    t = np.arange(n) * dt
    for j in range(4):
        f = lambda tt, y: [y[1], np.interp(tt, t, p[:, j]) - 2 * z[j] * w[j] * y[1] - w[j] ** 2 * y[0]]
        sol = solve_ivp(f, (0, t[-1]), [q0[j], v0[j]], t_eval=t, rtol=1e-11, atol=1e-12,
                        max_step=dt / 4)
        np.testing.assert_allclose(q[:, j], sol.y[0], atol=1e-7 * max(1, scale[j]))


def test_step_load_peak_dlf():
    # reference-values.md section 5: step load, zeta = 0.05, T = 1 s: first peak 1.854468 of the
    # static response at t = 0.500626 s; sampled at dt = 1e-4 s the peak is within 1e-7
    from fem.analysis.recurrence import integrate_modal
    w = 2 * np.pi
    t = np.arange(0, 0.6, 1e-4)
    q, _ = integrate_modal(np.array([w]), np.array([0.05]), 1e-4, np.ones((len(t), 1)) * w**2)
    assert abs(q[:, 0].max() - 1.854468) < 1e-6


def test_modal_ratios_rules():
    from fem.damping import modal_ratios
    w = 2 * np.pi * np.array([1.0, 2.0, 5.0, 9.0])
    np.testing.assert_allclose(modal_ratios(w, [0.02]), 0.02)
    np.testing.assert_allclose(modal_ratios(w, [0.02, 0.03]), [0.02, 0.03, 0.03, 0.03])
    # Rayleigh anchored at 1 and 5 Hz with 5 %: reference-values.md section 8 table (2 Hz: 0.0375)
    np.testing.assert_allclose(modal_ratios(w, rayleigh=(1, 0.05, 5, 0.05))[:3], [0.05, 0.0375, 0.05], rtol=1e-12)


def test_knot_kicks_make_jumps_and_kinks_exact():
    # a load 0.4 up to 1.234 (between samples), then jumping to 2 and falling at 0.5 per s up to
    # 3.0 (on a sample: 60 dt), then 0: the recurrence on its samples plus the knot kicks
    # against solve_ivp run piece by piece between the knots (rtol 1e-11), for rigid, light,
    # moderate and overdamped modes; the filter form equals the step loop (round-off)
    from scipy.integrate import solve_ivp

    from fem.analysis.recurrence import integrate_modal, integrate_modal_steps, knot_kicks
    w = np.array([0.0, 1.3, 7.0, 30.0])
    z = np.array([0.0, 0.02, 0.1, 1.5])
    dt, n = 0.05, 120
    t = np.arange(n) * dt
    b, J, S = [1.234, 3.0], [1.6, -(2 - 0.5 * 1.766)], [-0.5, 0.5]

    def load(tt):
        return 0.4 if tt < 1.234 else (2 - 0.5 * (tt - 1.234) if tt < 3.0 else 0.0)

    p = np.outer([load(x) for x in t], np.ones(4))       # values just after each sample
    kicks = knot_kicks(w, z, dt, n, b, J, S)
    q, v = integrate_modal(w, z, dt, p, kicks=kicks)
    qs, vs = integrate_modal_steps(w, z, dt, p, kicks=kicks)
    np.testing.assert_allclose(q, qs, atol=1e-10 * np.abs(qs).max())
    np.testing.assert_allclose(v, vs, atol=1e-10 * np.abs(vs).max())
    for j in range(4):
        y, out = [0.0, 0.0], []
        for lo, hi in [(0, 1.234), (1.234, 3.0), (3.0, t[-1])]:
            def rhs(tt, yy, lo=lo, hi=hi):      # the load inside this piece only
                return [yy[1], load(min(max(tt, lo + 1e-12), hi - 1e-12)) - 2 * z[j] * w[j] * yy[1] - w[j] ** 2 * yy[0]]
            ev = t[(t >= lo) & ((t < hi) | (hi == t[-1]))]
            sol = solve_ivp(rhs, (lo, hi), y, t_eval=ev, rtol=1e-11, atol=1e-13, dense_output=True)
            out.append(sol.y[0])
            y = sol.sol(hi)
        ref = np.concatenate(out)
        np.testing.assert_allclose(q[:, j], ref, atol=1e-8 * max(1.0, np.abs(ref).max()))
    # without the kicks the same samples miss the jump between them
    q_plain, _ = integrate_modal(w, z, dt, p)
    assert np.abs(q_plain[:, 2] - q[:, 2]).max() > 1e-4 * np.abs(q[:, 2]).max()


def test_short_histories_filter_without_scipy_signal_to_the_bit(monkeypatch):
    # Up to SHORT_HISTORY steps the all-pole filter runs as a loop over time steps on every mode
    # at once (_all_pole), sparing the import of scipy.signal; it repeats lfilter's direct form II
    # transposed operation for operation, so the two agree to the bit (the reference: lfilter
    # itself, and integrate_modal forced onto it), zeros' signs, infinities and NaN included
    from scipy.signal import lfilter

    import fem.analysis.recurrence as rec

    rng = np.random.default_rng(7)
    k, n = 5, 700
    a1, a2 = -1.9 + 0.05 * rng.random(k), 0.9 + 0.09 * rng.random(k)
    u = rng.normal(size=(n, k)) * 10.0 ** rng.integers(-8, 8, size=(n, k))
    u[3, 0], u[5, 1], u[7, 2], u[9, 3] = -0.0, np.inf, np.nan, 0.0
    got = rec._all_pole(a1, a2, u)
    ref = np.stack([lfilter([1.0], [1.0, a1[j], a2[j]], u[:, j]) for j in range(k)], axis=1)
    np.testing.assert_array_equal(got, ref)
    assert np.array_equal(np.signbit(got), np.signbit(ref))
    w, z = np.array([0.0, 1.3, 7.0, 30.0, 300.0]), np.array([0.0, 0.02, 0.1, 1.5, 0.05])
    p = rng.normal(size=(n, k))
    q0, v0 = rng.normal(size=k), rng.normal(size=k)
    short = rec.integrate_modal(w, z, 0.01, p, q0, v0)
    monkeypatch.setattr(rec, "SHORT_HISTORY", 0)
    long = rec.integrate_modal(w, z, 0.01, p, q0, v0)
    for a, b in zip(short, long):
        np.testing.assert_array_equal(a, b)
