"""The `exact` method: state-transition matrix with first-order hold.

References: Nigam & Jennings (1969), Bull. Seismol. Soc. Am. 59(2), in the form of
Chopra, *Dynamics of Structures*, §5.2, eq. 5.2.5 (coefficients A … D'); Chopra
§2.2 for free vibration; scipy.integrate.solve_ivp as an independent integrator.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from thist import time_history
from thist.methods import get_method
from thist.methods.exact import transition_matrices


def _nigam_jennings(k: float, wn: float, zeta: float, dt: float) -> np.ndarray:
    """Chopra eq. 5.2.5 (from memory; checked against the expm form below).

    Returns the 2x4 matrix mapping (u_i, v_i, p_i, p_{i+1}) to (u_{i+1}, v_{i+1}).
    """
    sq = math.sqrt(1.0 - zeta**2)
    wd = wn * sq
    e = math.exp(-zeta * wn * dt)
    s, c = math.sin(wd * dt), math.cos(wd * dt)
    A = e * (zeta / sq * s + c)
    B = e * s / wd
    C = (
        2 * zeta / (wn * dt)
        + e * (((1 - 2 * zeta**2) / (wd * dt) - zeta / sq) * s - (1 + 2 * zeta / (wn * dt)) * c)
    ) / k
    D = (
        1
        - 2 * zeta / (wn * dt)
        + e * ((2 * zeta**2 - 1) / (wd * dt) * s + 2 * zeta / (wn * dt) * c)
    ) / k
    A1 = -e * wn / sq * s
    B1 = e * (c - zeta / sq * s)
    C1 = (-1 / dt + e * ((wn / sq + zeta / (dt * sq)) * s + c / dt)) / k
    D1 = (1 - e * (zeta / sq * s + c)) / (k * dt)
    return np.array([[A, B, C, D], [A1, B1, C1, D1]])


@pytest.mark.parametrize(("zeta", "dt"), [(0.0, 0.01), (0.05, 0.02), (0.2, 0.3), (0.05, 1.7)])
def test_sdof_step_matrices_equal_nigam_jennings_closed_form(zeta, dt):
    """SDOF recurrence equals Chopra eq. 5.2.5 to 1e-12 (round-off of the closed form)."""
    m, wn = 2.0, 2 * math.pi / 0.8
    k = m * wn**2
    A, B0, B1 = get_method("exact").step_matrices(m, 2 * zeta * m * wn, k, dt)
    ours = np.column_stack([A, B0, B1])
    ref = _nigam_jennings(k, wn, zeta, dt)
    scale = np.abs(ref).max(axis=1, keepdims=True)
    assert np.max(np.abs(ours - ref) / scale) < 1e-12


def _solve_ivp_piecewise(M, C, K, p, dt):
    """Reference: DOP853 segment by segment (kinks of the load at the samples)."""
    n = M.shape[0]
    Minv = np.linalg.inv(M)
    z = np.zeros(2 * n)
    out = [z]
    for k in range(p.shape[0] - 1):

        def rhs(t, y, k=k):
            s = t / dt
            f = (1 - s) * p[k] + s * p[k + 1]
            return np.concatenate([y[n:], Minv @ (f - C @ y[n:] - K @ y[:n])])

        z = solve_ivp(rhs, (0.0, dt), z, method="DOP853", rtol=1e-13, atol=1e-16).y[:, -1]
        out.append(z)
    return np.array(out)


def test_exact_matches_solve_ivp_on_piecewise_linear_load_non_classical_damping():
    """3 DOF, non-classical C, piecewise-linear load: agrees with solve_ivp to 1e-8 of peak.

    Source: scipy.integrate.solve_ivp (DOP853, rtol 1e-13) is an independent reference;
    1e-8 is the issue's tolerance, well above both methods' round-off.
    """
    M = np.diag([2.0, 1.5, 1.0])
    K = np.array([[300.0, -120.0, 0.0], [-120.0, 200.0, -80.0], [0.0, -80.0, 80.0]])
    C = 0.02 * K + 0.1 * M
    C[0, 0] += 1.5  # a damper at level 1 only: not classical
    dt = 0.05
    p = np.random.default_rng(7).normal(size=(41, 3))
    ref = _solve_ivp_piecewise(M, C, K, p, dt)
    sol = get_method("exact").integrate(M, C, K, p, dt)
    assert np.max(np.abs(sol.u - ref[:, :3])) < 1e-8 * np.max(np.abs(ref[:, :3]))
    assert np.max(np.abs(sol.v - ref[:, 3:])) < 1e-8 * np.max(np.abs(ref[:, 3:]))
    # The acceleration satisfies the equation of motion at every sample.
    resid = sol.a @ M.T + sol.v @ C.T + sol.u @ K.T - p
    assert np.max(np.abs(resid)) < 1e-10 * np.max(np.abs(p))


def test_damped_free_vibration_matches_closed_form_at_a_coarse_step():
    """u(t) = e^{-ζωt}(u0 cos ω_D t + (v0 + ζωu0)/ω_D sin ω_D t), Chopra eq. 2.2.4.

    Δt = 0.4 T: any step is exact for free vibration; tolerance 1e-12 (round-off).
    """
    wn, zeta, u0, v0 = 2 * math.pi, 0.05, 0.01, -0.03
    wd = wn * math.sqrt(1 - zeta**2)
    dt = 0.4
    p = np.zeros((26, 1))
    sol = get_method("exact").integrate(
        np.eye(1), np.array([[2 * zeta * wn]]), np.array([[wn**2]]), p, dt, [u0], [v0]
    )
    t = np.arange(26) * dt
    ref = np.exp(-zeta * wn * t) * (
        u0 * np.cos(wd * t) + (v0 + zeta * wn * u0) / wd * np.sin(wd * t)
    )
    assert np.max(np.abs(sol.u[:, 0] - ref)) < 1e-12 * abs(u0)


def test_critically_damped_sdof_uses_direct_path_and_matches_closed_form():
    """ζ = 1: Φ is defective (eigenvectors ill-conditioned); u = (u0 + (v0 + ωu0)t)e^{-ωt}.

    Chopra §2.2, critically damped system; tolerance 1e-9 of u0 (round-off of expm).
    """
    wn, u0, v0 = 3.0, 0.02, 0.1
    dt, N = 0.01, 400
    sol = get_method("exact").integrate(
        np.eye(1), np.array([[2 * wn]]), np.array([[wn**2]]), np.zeros((N, 1)), dt, [u0], [v0]
    )
    t = np.arange(N) * dt
    ref = (u0 + (v0 + wn * u0) * t) * np.exp(-wn * t)
    assert np.max(np.abs(sol.u[:, 0] - ref)) < 1e-9 * u0


def test_exact_has_no_stability_limit_and_no_period_error_or_algorithmic_damping():
    """Amplification matrix exp(AΔt): |λ| = 1, Ω̄ = Ω for ζ = 0 at any Ω, even Ω > π."""
    m = get_method("exact")
    assert m.stability_limit(1e6, 0.05) == math.inf
    for omega_dt in (0.01, 0.5, 3.0, 10.0, 100.0):
        sp = m.spectral_properties(omega_dt, 0.0)
        assert sp.spectral_radius == pytest.approx(1.0, abs=1e-12)
        assert abs(sp.period_error) < 1e-12
        assert abs(sp.algorithmic_damping) < 1e-12


def test_exact_spectral_radius_is_the_physical_decay_per_step():
    """ζ > 0: |λ| = exp(−ζΩ), and the numerical root is the damped root ω_D = ω√(1−ζ²)."""
    zeta, omega_dt = 0.1, 2.0
    sp = get_method("exact").spectral_properties(omega_dt, zeta)
    assert sp.spectral_radius == pytest.approx(math.exp(-zeta * omega_dt), rel=1e-12)
    assert sp.numerical_omega_dt == pytest.approx(omega_dt * math.sqrt(1 - zeta**2), rel=1e-12)


def test_transition_matrices_are_independent_of_the_step_count():
    """Φ(2Δt) = Φ(Δt)² (semigroup property of the matrix exponential)."""
    M, C, K = np.eye(2), np.array([[0.3, -0.1], [-0.1, 0.2]]), np.array([[5.0, -2.0], [-2.0, 3.0]])
    P1, _, _ = transition_matrices(M, C, K, 0.1)
    P2, _, _ = transition_matrices(M, C, K, 0.2)
    assert np.allclose(P1 @ P1, P2, rtol=0, atol=1e-13)


def test_time_history_api_accepts_exact_and_agrees_with_newmark_at_fine_step():
    """A smooth record at Δt = T/400: newmark-average is within its period error of exact."""
    wn = 2 * math.pi
    dt = 1 / 400
    t = np.arange(2001) * dt
    ag = np.sin(2 * math.pi * 0.7 * t)
    args = (np.eye(1), np.array([[0.1 * wn]]), np.array([[wn**2]]), ag, dt)
    ue = time_history(*args, method="exact").u[:, 0]
    un = time_history(*args, method="newmark-average").u[:, 0]
    # Period error of average acceleration ~ Ω²/12 = 2e-5 (Hughes 1987, §9.3); over
    # 5 cycles the phase error is ~ 6e-4 rad, so 2e-3 of the peak bounds the difference.
    assert np.max(np.abs(ue - un)) < 2e-3 * np.max(np.abs(ue))


def test_closed_form_step_matrices_equal_the_matrix_exponential():
    """The batched closed form of the exact recurrence (eigen-decomposition of the
    companion matrix, the matrix form of Nigam & Jennings 1969) equals scipy.linalg.expm
    of the augmented first-order-hold matrix (Van Loan 1978) for under-damped,
    critically damped, over-damped and undamped DOFs over 5 decades of ω. Tolerance
    1e-12 relative: both are exact; the closed form hands near-coincident roots and tiny
    ω_d·Δt to expm so that it never loses digits."""
    from thist.methods import get_method

    method = get_method("exact")
    rng = np.random.default_rng(0)
    n = 60
    w = np.geomspace(0.05, 5000.0, n)
    zeta = rng.uniform(0.0, 0.95, n)
    zeta[[3, 4, 5, 6]] = [1.0, 1.5, 0.0, 0.9985]
    c, k = 2 * zeta * w, w * w
    for dt in (0.0005, 0.01, 0.1):
        A, B0, B1 = method.step_matrices_many(np.ones(n), c, k, dt)
        for i in range(n):
            a, b0, b1 = method.step_matrices(1.0, c[i], k[i], dt)
            np.testing.assert_allclose(
                A[i], a, rtol=1e-12, atol=1e-12 * max(1.0, np.max(np.abs(a)))
            )
            np.testing.assert_allclose(B0[i], b0, rtol=1e-12, atol=1e-12 * np.max(np.abs(b0)))
            np.testing.assert_allclose(B1[i], b1, rtol=1e-12, atol=1e-12 * np.max(np.abs(b1)))
