"""Linear integrators against closed forms and published properties of the methods."""

import math

import numpy as np
import pytest

import thist
from thist.methods import get_method

LINEAR_METHODS = [
    "newmark-average",
    "newmark-linear",
    "central-difference",
    "hht",
    "generalized-alpha",
]


def sdof(Tn=1.0, zeta=0.05, m=1.0):
    w = 2 * math.pi / Tn
    return np.array([[m]]), np.array([[2 * zeta * w * m]]), np.array([[w * w * m]]), w


def free_vibration_exact(t, w, zeta, u0, v0):
    """Chopra, Dynamics of Structures (4th ed., 2012), eq. 2.2.4."""
    wd = w * math.sqrt(1 - zeta**2)
    return np.exp(-zeta * w * t) * (
        u0 * np.cos(wd * t) + (v0 + zeta * w * u0) / wd * np.sin(wd * t)
    )


def free_vibration_error(method, dt, T=4.0):
    M, C, K, w = sdof(1.0, 0.05)
    n = int(round(T / dt)) + 1
    t = np.arange(n) * dt
    sol = get_method(method).integrate(
        M, C, K, np.zeros((n, 1)), dt, u0=np.array([0.01]), v0=np.array([0.05])
    )
    return float(np.max(np.abs(sol.u[:, 0] - free_vibration_exact(t, w, 0.05, 0.01, 0.05))))


@pytest.mark.parametrize("method", LINEAR_METHODS)
def test_damped_free_vibration_matches_closed_form(method):
    """Chopra (2012) eq. 2.2.4, Tn = 1 s, zeta = 5 %, dt = T/200.

    Tolerance 0.2 % of the initial amplitude scale: the period error of these
    second-order methods at Omega = 2*pi/200 is ~1e-4 (Hughes 1987, §9.3), and
    four cycles accumulate a phase error of ~2e-3 rad.
    """
    assert free_vibration_error(method, 0.005) < 2e-3 * 0.0125


@pytest.mark.parametrize(
    "method", ["newmark-average", "central-difference", "hht", "generalized-alpha"]
)
def test_second_order_methods_converge_at_second_order(method):
    """Halving dt cuts the error about 4x (global order 2; Hughes 1987, §9.1).

    The observed ratio must lie in [3.5, 4.5]: the asymptotic ratio is 4 and the
    higher-order terms at dt = T/100 shift it by well under 10 %.
    """
    e1 = free_vibration_error(method, 0.01)
    e2 = free_vibration_error(method, 0.005)
    assert 3.5 < e1 / e2 < 4.5


def half_sine_pulse_exact(t, w, zeta, p0, k, td):
    """Closed-form response of a damped SDOF to p0·sin(pi t/td), 0 <= t <= td, from rest.

    Forced phase: steady-state harmonic part plus the damped free part fitted to
    zero initial conditions (Chopra 2012, eqs. 3.2.1-3.2.4); after td, damped free
    vibration from the state at td (eq. 2.2.4).
    """
    wf = math.pi / td
    wd = w * math.sqrt(1 - zeta**2)
    r = wf / w
    ust = p0 / k
    den = (1 - r * r) ** 2 + (2 * zeta * r) ** 2
    Cc = ust * (1 - r * r) / den
    Dc = ust * (-2 * zeta * r) / den
    A = -Dc
    B = (zeta * w * A - Cc * wf) / wd

    def forced(tt):
        return (
            Cc * np.sin(wf * tt)
            + Dc * np.cos(wf * tt)
            + np.exp(-zeta * w * tt) * (A * np.cos(wd * tt) + B * np.sin(wd * tt))
        )

    def forced_v(tt):
        e = np.exp(-zeta * w * tt)
        return (
            Cc * wf * np.cos(wf * tt)
            - Dc * wf * np.sin(wf * tt)
            + e
            * (
                (-zeta * w * A + wd * B) * np.cos(wd * tt)
                + (-zeta * w * B - wd * A) * np.sin(wd * tt)
            )
        )

    u = np.where(t <= td, forced(np.minimum(t, td)), 0.0)
    u_td, v_td = forced(td), forced_v(td)
    after = t > td
    u[after] = free_vibration_exact(t[after] - td, w, zeta, u_td, v_td)
    return u


# Chopra's worked-example setup (Dynamics of Structures, ch. 5): m = 0.2533 kip-s²/in,
# k = 10 kips/in (Tn = 1 s), zeta = 5 %, p(t) = 10 sin(pi t / 0.6) kips for t <= 0.6 s.
PULSE = {"m": 0.2533, "k": 10.0, "zeta": 0.05, "p0": 10.0, "td": 0.6}


def pulse_problem(dt, T=2.0):
    m, k, zeta = PULSE["m"], PULSE["k"], PULSE["zeta"]
    w = math.sqrt(k / m)
    n = int(round(T / dt)) + 1
    t = np.arange(n) * dt
    p = np.where(t <= PULSE["td"], PULSE["p0"] * np.sin(math.pi * t / PULSE["td"]), 0.0)
    return (np.array([[m]]), np.array([[2 * zeta * w * m]]), np.array([[k]]), p[:, None], t, w)


@pytest.mark.parametrize("method", LINEAR_METHODS)
def test_half_cycle_sine_pulse_matches_closed_form_at_fine_step(method):
    """Every method vs the closed form (Chopra 2012, ch. 3-4) at dt = 0.001 s.

    Tolerance 0.1 % of the peak: at Omega = 0.0063 the period error is ~3e-6 and
    the load's piecewise-linear sampling error ~dt²/td² ~ 3e-6.
    """
    M, C, K, p, t, w = pulse_problem(0.001)
    sol = get_method(method).integrate(M, C, K, p, 0.001)
    ref = half_sine_pulse_exact(t, w, PULSE["zeta"], PULSE["p0"], PULSE["k"], PULSE["td"])
    assert np.max(np.abs(sol.u[:, 0] - ref)) < 1e-3 * np.max(np.abs(ref))


def chopra_newmark_recurrence(m, c, k, p, dt, gamma, beta):
    """Newmark's method for linear systems as tabulated in Chopra (2012), Table 5.4.2.

    Independent re-implementation in the textbook's incremental form (k̂, a, b).
    """
    n = len(p)
    u, v, a = np.zeros(n), np.zeros(n), np.zeros(n)
    a[0] = (p[0] - c * v[0] - k * u[0]) / m
    a1 = m / (beta * dt * dt) + gamma * c / (beta * dt)
    a2 = m / (beta * dt) + (gamma / beta - 1) * c
    a3 = (1 / (2 * beta) - 1) * m + dt * (gamma / (2 * beta) - 1) * c
    khat = k + a1
    for i in range(n - 1):
        phat = p[i + 1] + a1 * u[i] + a2 * v[i] + a3 * a[i]
        u[i + 1] = phat / khat
        v[i + 1] = (
            gamma / (beta * dt) * (u[i + 1] - u[i])
            + (1 - gamma / beta) * v[i]
            + dt * (1 - gamma / (2 * beta)) * a[i]
        )
        a[i + 1] = (
            (u[i + 1] - u[i]) / (beta * dt * dt) - v[i] / (beta * dt) - (1 / (2 * beta) - 1) * a[i]
        )
    return u


def chopra_central_difference(m, c, k, p, dt):
    """Central difference as tabulated in Chopra (2012), Table 5.3.1."""
    n = len(p)
    u = np.zeros(n + 1)
    a0 = (p[0] - k * 0.0) / m
    u_prev = 0.0 - dt * 0.0 + dt * dt / 2 * a0
    khat = m / dt**2 + c / (2 * dt)
    aa = m / dt**2 - c / (2 * dt)
    b = k - 2 * m / dt**2
    for i in range(n):
        nxt = (p[i] - aa * u_prev - b * u[i]) / khat
        u_prev, u[i + 1] = u[i], nxt
    return u[:n]


@pytest.mark.parametrize(
    ("method", "gamma", "beta"), [("newmark-average", 0.5, 0.25), ("newmark-linear", 0.5, 1 / 6)]
)
def test_newmark_matches_the_published_recurrence_at_dt_0_1(method, gamma, beta):
    """Same algorithm as Chopra (2012) Table 5.4.2 on the ch. 5 pulse problem, dt = 0.1 s.

    Two formulations of one algorithm: agreement to 1e-12 relative (round-off).
    """
    M, C, K, p, t, _ = pulse_problem(0.1, T=1.0)
    ours = get_method(method).integrate(M, C, K, p, 0.1).u[:, 0]
    ref = chopra_newmark_recurrence(M[0, 0], C[0, 0], K[0, 0], p[:, 0], 0.1, gamma, beta)
    assert np.max(np.abs(ours - ref)) < 1e-12 * np.max(np.abs(ref))


def test_central_difference_matches_the_published_recurrence_at_dt_0_1():
    """Same algorithm as Chopra (2012) Table 5.3.1 on the ch. 5 pulse problem, dt = 0.1 s."""
    M, C, K, p, t, _ = pulse_problem(0.1, T=1.0)
    ours = get_method("central-difference").integrate(M, C, K, p, 0.1).u[:, 0]
    ref = chopra_central_difference(M[0, 0], C[0, 0], K[0, 0], p[:, 0], 0.1)
    assert np.max(np.abs(ours - ref)) < 1e-12 * np.max(np.abs(ref))


def measured_numerical_frequency(method, Omega, steps=400):
    """Ω̄ from the integrated sequence: for a two-root recurrence u[n+1] + u[n-1] = 2cos(Ω̄)u[n].

    cos Ω̄ is fitted by least squares over the whole run, so it measures what
    integrate() does, not what the amplification-matrix code says.
    """
    dt = Omega  # omega = 1 rad/s
    sol = get_method(method).integrate(
        np.eye(1),
        np.zeros((1, 1)),
        np.eye(1),
        np.zeros((steps, 1)),
        dt,
        u0=np.array([1.0]),
        v0=np.array([0.3]),
    )
    u = sol.u[:, 0]
    c = np.dot(u[1:-1], u[2:] + u[:-2]) / (2 * np.dot(u[1:-1], u[1:-1]))
    return math.acos(c), float(np.max(np.abs(u)))


@pytest.mark.parametrize("Omega", [0.2, 0.5, 1.0, 1.5])
def test_average_acceleration_numerical_period(Omega):
    """ω̄Δt = 2 arctan(Ω/2), no amplitude decay (Hughes, The Finite Element Method, 1987, §9.3).

    Both the integrated run and the amplification matrix, to 1e-10 (round-off).
    """
    wbar, _ = measured_numerical_frequency("newmark-average", Omega)
    assert wbar == pytest.approx(2 * math.atan(Omega / 2), abs=1e-10)
    sp = get_method("newmark-average").spectral_properties(Omega)
    assert sp.numerical_omega_dt == pytest.approx(2 * math.atan(Omega / 2), abs=1e-12)
    assert sp.spectral_radius == pytest.approx(1.0, abs=1e-12)
    assert sp.period_error == pytest.approx(Omega / (2 * math.atan(Omega / 2)) - 1, abs=1e-12)


@pytest.mark.parametrize("Omega", [0.2, 0.5, 1.0, 1.5])
def test_central_difference_numerical_period(Omega):
    """ω̄Δt = 2 arcsin(Ω/2) for Ω < 2 (Hughes 1987, §9.3), to 1e-10 (round-off)."""
    wbar, _ = measured_numerical_frequency("central-difference", Omega)
    assert wbar == pytest.approx(2 * math.asin(Omega / 2), abs=1e-10)
    sp = get_method("central-difference").spectral_properties(Omega)
    assert sp.numerical_omega_dt == pytest.approx(2 * math.asin(Omega / 2), abs=1e-12)


def uniform_chain(n=6, m=2.0e5, k=3.0e8, h=3.5):
    from thist.structure import shear_chain

    return shear_chain([m] * n, [k] * n, [h] * n)


def test_uniform_shear_chain_frequencies_match_closed_form():
    """ω_j = 2√(k/m)·sin((2j−1)π/(2(2n+1))) for n equal stories on a fixed base
    (classical closed form for the fixed-free chain; e.g. Chopra 2012, ch. 12 problems).
    Tolerance 1e-10 relative: eigh is accurate to round-off for this small SPD problem.
    """
    n, m, k = 6, 2.0e5, 3.0e8
    s = uniform_chain(n, m, k)
    modes = thist.modal(s.M, s.K)
    j = np.arange(1, n + 1)
    ref = 2 * math.sqrt(k / m) * np.sin((2 * j - 1) * math.pi / (2 * (2 * n + 1)))
    np.testing.assert_allclose(modes.omegas, ref, rtol=1e-10)
    assert modes.effective_mass.sum() == pytest.approx(n * m, rel=1e-12)
    assert modes.cumulative_ratio[-1] == pytest.approx(1.0, rel=1e-12)
    # Mass-normalised shapes: Φᵀ M Φ = I.
    np.testing.assert_allclose(modes.shapes.T @ s.M @ modes.shapes, np.eye(n), atol=1e-12)


def build_rayleigh(structure, zeta, i, j):
    from thist.damping import rayleigh

    modes = thist.modal(structure.M, structure.K)
    return rayleigh(
        structure.M, structure.K, modes, zeta, modes.omegas[i - 1], modes.omegas[j - 1], "test"
    ), modes


def test_rayleigh_damping_hits_the_target_at_both_anchor_modes():
    """ζ(ω) = a0/(2ω) + a1ω/2 equals the target at the two anchors (Chopra 2012, §11.4),
    and lies below it between them. Tolerance 1e-12 (a 2x2 solve)."""
    d, modes = build_rayleigh(uniform_chain(), 0.05, 1, 3)
    assert d.ratios[0] == pytest.approx(0.05, rel=1e-12)
    assert d.ratios[2] == pytest.approx(0.05, rel=1e-12)
    assert d.ratios[1] < 0.05
    assert d.classical


@pytest.mark.parametrize("r", [0.5, 0.9, 1.0, 1.3, 2.0])
def test_harmonic_base_excitation_steady_state_amplitude(r):
    """Steady-state amplitude u0 = (m·a0/k)·R_d, R_d = 1/√((1−r²)² + (2ζr)²)
    (Chopra 2012, eq. 3.2.11 with p0 = −m·a0). Run 60 natural periods with ζ = 10 %
    so the transient decays below 1e-14 of itself; dt = T/400 makes the period
    error ~3e-5; tolerance 0.2 % of the amplitude.
    """
    zeta, Tn = 0.10, 0.5
    M, C, K, w = sdof(Tn, zeta)
    dt = Tn / 200
    t = np.arange(0, 36 * Tn, dt)
    a0 = 1.0
    ag = a0 * np.sin(r * w * t)
    h = thist.time_history(M, C, K, ag, dt, "newmark-average")
    tail = h.u[t > 30 * Tn, 0]
    Rd = 1 / math.sqrt((1 - r * r) ** 2 + (2 * zeta * r) ** 2)
    assert np.max(np.abs(tail)) == pytest.approx(a0 / w**2 * Rd, rel=2e-3)


@pytest.mark.parametrize(
    ("method", "factor"),
    [("central-difference", 1 / math.pi), ("newmark-linear", math.sqrt(3) / math.pi)],
)
def test_step_above_the_stability_limit_is_refused_and_below_it_runs_bounded(method, factor):
    """Central difference: Δt_cr = T_min/π (Ω ≤ 2); linear acceleration:
    Ω ≤ 1/√(γ/2 − β) = √12, Δt_cr = (√3/π)·T_min = 0.551·T_min (Newmark 1959; Chopra
    2012, §5.5). At 1.02× the check refuses and the unchecked recurrence really
    grows; at 0.98× the run stays bounded by its initial energy.
    """
    s = uniform_chain(5)
    modes = thist.modal(s.M, s.K)
    t_min = modes.periods[-1]
    assert thist.stability_limit(method, modes.omegas[-1]) == pytest.approx(
        factor * t_min, rel=1e-12
    )
    C = np.zeros_like(s.M)
    rng = np.random.default_rng(7)
    ag = 0.1 * rng.standard_normal(2000)
    with pytest.raises(thist.StabilityError, match=r"mode 5"):
        thist.time_history(s.M, C, s.K, ag, 1.02 * factor * t_min, method)
    h = thist.time_history(s.M, C, s.K, ag, 0.98 * factor * t_min, method)
    assert np.all(np.isfinite(h.u))
    # The unchecked algorithm above the limit: the highest mode grows without bound.
    m = get_method(method)
    n = 3000
    u0 = modes.shapes[:, -1] * 1e-3
    with pytest.raises(thist.StabilityError, match="(non-finite|physical bound)"):
        m.integrate(s.M, C, s.K, np.zeros((n, 5)), 1.02 * factor * t_min, u0=u0)
    ok = m.integrate(s.M, C, s.K, np.zeros((n, 5)), 0.98 * factor * t_min, u0=u0)
    assert np.max(np.abs(ok.u)) < 10 * np.max(np.abs(u0))


def test_average_acceleration_runs_at_five_times_t_min():
    """Average acceleration is unconditionally stable (2β ≥ γ ≥ ½; Newmark 1959): at
    Δt = 5·T_min the run is bounded by the initial energy (no growth, no decay)."""
    s = uniform_chain(5)
    modes = thist.modal(s.M, s.K)
    dt = 5 * modes.periods[-1]
    u0 = modes.shapes[:, -1] * 1e-3
    sol = get_method("newmark-average").integrate(
        s.M, np.zeros_like(s.M), s.K, np.zeros((2000, 5)), dt, u0=u0
    )
    energy = np.einsum("ti,ij,tj->t", sol.u, s.K, sol.u) + np.einsum(
        "ti,ij,tj->t", sol.v, s.M, sol.v
    )
    assert energy.max() == pytest.approx(energy[0], rel=1e-9)


def test_non_classically_damped_three_story_model_matches_solve_ivp():
    """A 3-story model with a non-classical damping matrix (a viscous damper in story 1
    only) on the first 6 s of the demo record vs scipy.integrate.solve_ivp (DOP853,
    rtol 1e-11, max_step = dt) with the record interpolated linearly, as thist does.
    Newmark average at dt <= T_min/100 has a period error ~3e-4 on the highest mode
    and ~1e-5 on the first; tolerance 0.2 % of the peak displacement.
    """
    from pathlib import Path

    from scipy.integrate import solve_ivp

    from thist.record import read_record, sample
    from thist.structure import shear_chain

    rec = read_record(
        Path(__file__).parent.parent / "inputs" / "records" / "alder-row-synthetic.txt",
        time_column="time_s",
        acceleration_column="accel_m_s2",
    )
    s = shear_chain([3e5, 3e5, 2e5], [4e8, 3e8, 2e8], [4, 3.5, 3.5])
    C = 0.002 * s.K
    C[0, 0] += 2.0e6  # the damper
    modes = thist.modal(s.M, s.K)
    modal_c = modes.shapes.T @ C @ modes.shapes
    assert np.max(np.abs(modal_c - np.diag(np.diag(modal_c)))) > 0.1 * np.max(modal_c)
    t_min = modes.periods[-1]
    dt = rec.dt / math.ceil(rec.dt / (t_min / 100))
    ex = sample(rec, dt, duration=6.0)
    h = thist.time_history(s.M, C, s.K, ex.ag, dt, "newmark-average")
    Minv = np.linalg.inv(s.M)
    t_rec = rec.time

    def rhs(tt, y):
        u, v = y[:3], y[3:]
        a_g = np.interp(tt, t_rec, rec.ag)
        return np.concatenate([v, Minv @ (-s.M @ np.ones(3) * a_g - C @ v - s.K @ u)])

    ref = solve_ivp(
        rhs,
        (0, ex.time[-1]),
        np.zeros(6),
        method="DOP853",
        t_eval=ex.time,
        rtol=1e-11,
        atol=1e-14,
        max_step=dt,
    )
    err = np.max(np.abs(h.u - ref.y[:3].T))
    print(f"max error / peak = {err / np.max(np.abs(ref.y[:3])):.2e}")
    assert err < 2e-3 * np.max(np.abs(ref.y[:3]))


@pytest.mark.parametrize("zeta", [0.0, 0.05, 0.2])
@pytest.mark.parametrize("omega_dt", [0.3, 1.0, 2.5])
def test_exact_method_shows_no_period_error_or_algorithmic_damping_at_any_damping(omega_dt, zeta):
    """The exact solution's root exp(Ω(−ζ ± i√(1−ζ²))) (Chopra 2012, eq. 2.2.4) must read
    as zero period error and zero algorithmic damping: the measures compare with the
    exact damped root, not the undamped period. Tolerance 1e-12 (round-off)."""
    sp = get_method("exact").spectral_properties(omega_dt, zeta)
    assert sp.period_error == pytest.approx(0.0, abs=1e-12)
    assert sp.algorithmic_damping == pytest.approx(0.0, abs=1e-12)
