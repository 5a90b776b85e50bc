"""HHT-α and generalized-α: stability, order and algorithmic damping.

Sources: Hilber, Hughes & Taylor (1977), Earthquake Eng. Struct. Dyn. 5, 283-292;
Chung & Hulbert (1993), J. Appl. Mech. 60(2), 371-375; Hughes, *The Finite Element
Method* (1987), §9.3 (amplification matrix, spectral radius).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thist.errors import InputError
from thist.methods import get_method

ALPHAS = (-0.05, -0.1, -0.2, -1.0 / 3.0)
RHOS = (0.0, 0.5, 0.9, 1.0)


def _methods():
    return [get_method("hht", alpha=a) for a in ALPHAS] + [
        get_method("generalized-alpha", rho_inf=r) for r in RHOS
    ]


def _characteristic_roots(am: float, af: float, beta: float, gamma: float, omega_dt: float):
    """Roots of the characteristic polynomial of the undamped generalized-α step.

    Derived here from the published one-step relations (Chung & Hulbert 1993,
    eqs. 2-4), independently of the code's amplification matrix: with u_n ~ z^n,
    ((1−α_m)z + α_m)(z−1)² + Ω²((1−α_f)z + α_f)(βz² + (γ + ½ − 2β)z + (½ − γ + β)) = 0.
    """
    O2 = omega_dt**2
    p1 = np.polymul([1 - am, am], np.polymul([1, -1], [1, -1]))
    p2 = O2 * np.polymul([1 - af, af], [beta, gamma + 0.5 - 2 * beta, 0.5 - gamma + beta])
    return np.roots(np.polyadd(p1, p2))


def _infinite_omega_radius(am: float, af: float, beta: float, gamma: float) -> float:
    """Spectral radius as Ω → ∞: roots of the Ω² coefficient of the polynomial above."""
    roots = np.concatenate(
        [[-af / (1 - af)], np.roots([beta, gamma + 0.5 - 2 * beta, 0.5 - gamma + beta])]
    )
    return float(np.max(np.abs(roots)))


@pytest.mark.parametrize("method", _methods(), ids=lambda m: f"{m.name}{m.parameters()}")
def test_unconditionally_stable_at_five_times_the_shortest_period(method):
    """Free vibration of a 3-DOF chain at Δt = 5·T_min stays bounded over 4000 steps.

    Bounded: spectral radius ≤ 1 (Hilber et al. 1977; Chung & Hulbert 1993) allows a
    transient rise of the energy norm in the first steps (the "overshoot" of Hilber &
    Hughes 1978, Earthquake Eng. Struct. Dyn. 6, large for ρ∞ = 0 at Ω ≫ 1) but no
    growth over the run; an unstable step would grow like ρ^n and overflow within
    4000 steps.
    """
    M = np.diag([1.0, 1.0, 1.0])
    K = 1e4 * np.array([[2.0, -1.0, 0.0], [-1.0, 2.0, -1.0], [0.0, -1.0, 1.0]])
    w = np.sqrt(np.linalg.eigvalsh(K))
    dt = 5.0 * 2 * math.pi / w.max()
    u0 = np.array([0.01, -0.02, 0.03])
    sol = method.integrate(M, np.zeros((3, 3)), K, np.zeros((4000, 3)), dt, u0, np.zeros(3))
    e = 0.5 * np.einsum("ij,ij->i", sol.v @ M, sol.v) + 0.5 * np.einsum(
        "ij,ij->i", sol.u @ K, sol.u
    )
    assert np.all(np.isfinite(e))
    assert e[10:].max() < 10.0 * e[0]
    assert e[-1000:].max() <= e[:1000].max()
    assert method.stability_limit(w.max(), 0.0) == math.inf


@pytest.mark.parametrize("method", _methods(), ids=lambda m: f"{m.name}{m.parameters()}")
def test_spectral_radius_never_exceeds_one(method):
    """ρ(A) ≤ 1 for Ω from 1e-3 to 1e4 (unconditional stability, Hughes 1987 §9.3)."""
    for omega_dt in np.logspace(-3, 4, 57):
        assert method.spectral_properties(omega_dt).spectral_radius <= 1.0 + 1e-10


@pytest.mark.parametrize("method", _methods(), ids=lambda m: f"{m.name}{m.parameters()}")
def test_second_order_convergence(method):
    """Halving Δt divides the largest error of damped free vibration over 2 s by about 4.

    Closed form: Chopra, *Dynamics of Structures*, eq. 2.2.4. Ratio 4 is second
    order; the band [3.5, 4.5] allows the next term of the error series at these
    steps (T/Δt = 40 and 80).
    """
    wn, zeta = 2 * math.pi, 0.02
    wd = wn * math.sqrt(1 - zeta**2)
    errs = []
    for dt in (0.025, 0.0125):
        n = int(round(2.0 / dt)) + 1
        sol = method.integrate(
            np.eye(1),
            np.array([[2 * zeta * wn]]),
            np.array([[wn**2]]),
            np.zeros((n, 1)),
            dt,
            np.array([1.0]),
            np.array([0.0]),
        )
        t = np.arange(n) * dt
        ref = np.exp(-zeta * wn * t) * (np.cos(wd * t) + zeta * wn / wd * np.sin(wd * t))
        errs.append(np.max(np.abs(sol.u[:, 0] - ref)))
    assert 3.5 < errs[0] / errs[1] < 4.5


@pytest.mark.parametrize("omega_dt", [0.1, 1.0, 10.0])
@pytest.mark.parametrize("method", _methods(), ids=lambda m: f"{m.name}{m.parameters()}")
def test_amplification_matrix_roots_match_published_characteristic_equation(method, omega_dt):
    """Eigenvalues of the code's amplification matrix are the roots of the published
    one-step relations' characteristic polynomial (Chung & Hulbert 1993): the code's
    algorithmic damping and period at Ω = 0.1, 1, 10 are those of the published scheme.
    Tolerance 1e-9 (root-finding round-off)."""
    am, af, beta, gamma = method.coefficients
    ref = np.sort_complex(_characteristic_roots(am, af, beta, gamma, omega_dt))
    A, _, _ = method.step_matrices(1.0, 0.0, 1.0, omega_dt)
    ours = np.sort_complex(np.linalg.eigvals(A))
    assert np.max(np.abs(ours - ref)) < 1e-9
    pr = ref[np.argmax(np.abs(ref.imag))]
    wbar = abs(math.atan2(pr.imag, pr.real))
    sp = method.spectral_properties(omega_dt)
    assert sp.numerical_omega_dt == pytest.approx(wbar, rel=1e-9)
    assert sp.algorithmic_damping == pytest.approx(-math.log(abs(pr)) / wbar, rel=1e-7, abs=1e-12)


@pytest.mark.parametrize("alpha", ALPHAS)
def test_hht_spectral_radius_at_infinity_is_one_plus_alpha_over_one_minus_alpha(alpha):
    """HHT: ρ∞ = (1 + α)/(1 − α) (from memory; Hilber et al. 1977).

    Checked two ways: the Ω → ∞ limit of the characteristic polynomial (1e-7: the
    limit is a double root, which root-finding resolves only to about √eps), and
    the code's amplification matrix at Ω = 1e6, where the double root at infinity
    converges like Ω^(−2/3) or faster, hence the 1e-3 tolerance.
    """
    m = get_method("hht", alpha=alpha)
    published = (1 + alpha) / (1 - alpha)
    assert _infinite_omega_radius(*m.coefficients) == pytest.approx(published, abs=1e-7)
    assert m.spectral_properties(1e6).spectral_radius == pytest.approx(published, abs=1e-3)


@pytest.mark.parametrize("rho", RHOS)
def test_generalized_alpha_spectral_radius_at_infinity_is_rho_inf(rho):
    """Generalized-α: the spectral radius as Ω → ∞ is the user's ρ∞ (Chung & Hulbert 1993)."""
    m = get_method("generalized-alpha", rho_inf=rho)
    assert _infinite_omega_radius(*m.coefficients) == pytest.approx(rho, abs=1e-7)
    assert m.spectral_properties(1e6).spectral_radius == pytest.approx(rho, abs=1e-3)


def test_algorithmic_damping_grows_with_hht_alpha_and_falls_with_rho_inf():
    """More negative α, or smaller ρ∞, damps more at Ω = 1 (Hilber et al. 1977, Fig. 3;
    Chung & Hulbert 1993, Fig. 1)."""
    hht = [get_method("hht", alpha=a).spectral_properties(1.0).algorithmic_damping for a in ALPHAS]
    ga = [
        get_method("generalized-alpha", rho_inf=r).spectral_properties(1.0).algorithmic_damping
        for r in RHOS
    ]
    assert all(x < y for x, y in zip(hht, hht[1:], strict=False))
    assert all(x > y for x, y in zip(ga, ga[1:], strict=False))
    assert ga[-1] == pytest.approx(0.0, abs=1e-12)  # ρ∞ = 1 is average acceleration


def test_defaults_and_parameter_ranges():
    """Defaults α = −0.05 and ρ∞ = 0.9; out-of-range parameters are input errors."""
    assert get_method("hht").alpha == -0.05
    assert get_method("generalized-alpha").rho_inf == 0.9
    for bad in (0.01, -0.34, math.nan):
        with pytest.raises(InputError):
            get_method("hht", alpha=bad)
    for bad in (-0.01, 1.01):
        with pytest.raises(InputError):
            get_method("generalized-alpha", rho_inf=bad)


def test_generalized_alpha_parameters_follow_chung_hulbert_relations():
    """α_m = (2ρ∞−1)/(ρ∞+1), α_f = ρ∞/(ρ∞+1), γ = ½ − α_m + α_f, β = ¼(1 − α_m + α_f)²."""
    rho = 0.6
    am, af, beta, gamma = get_method("generalized-alpha", rho_inf=rho).coefficients
    assert am == pytest.approx((2 * rho - 1) / (rho + 1))
    assert af == pytest.approx(rho / (rho + 1))
    assert gamma == pytest.approx(0.5 - am + af)
    assert beta == pytest.approx(0.25 * (1 - am + af) ** 2)
