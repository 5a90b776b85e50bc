"""The Newmark-β family and its α-generalisations, in one implementation.

All of them solve, at each step, the generalized-α balance (Chung & Hulbert 1993)

    M a[n+1−α_m] + C v[n+1−α_f] + K u[n+1−α_f] = p[n+1−α_f],
    x[n+1−α] = (1−α) x[n+1] + α x[n],

with the Newmark (1959) updates

    u[n+1] = u[n] + Δt v[n] + Δt² ((½−β) a[n] + β a[n+1]),
    v[n+1] = v[n] + Δt ((1−γ) a[n] + γ a[n+1]).

Newmark-β is α_m = α_f = 0; HHT-α (Hilber, Hughes & Taylor 1977) is α_m = 0,
α_f = −α. The effective matrix (1−α_m) M + (1−α_f)(γΔt C + βΔt² K) is factorised
once (Cholesky when it is symmetric positive definite, LU otherwise).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla

from thist.errors import InputError
from thist.methods.base import Method, Solution, check_finite_growth, growth_bound

_CHECK_EVERY = 256


class _AlphaFamily(Method):
    """Shared machinery; subclasses define α_m, α_f, β, γ."""

    @property
    def coefficients(self) -> tuple[float, float, float, float]:
        """(α_m, α_f, β, γ)."""
        raise NotImplementedError

    # -- the one-step formulas, used by integrate() and by step_matrices() ------------
    def _effective(self, M, C, K, dt):
        am, af, beta, gamma = self.coefficients
        return (1.0 - am) * M + (1.0 - af) * (gamma * dt * C + beta * dt * dt * K)

    def _rhs(self, M, C, K, dt, u, v, a, f0, f1):
        am, af, beta, gamma = self.coefficients
        u_pred = u + dt * v + dt * dt * (0.5 - beta) * a
        v_pred = v + dt * (1.0 - gamma) * a
        rhs = (
            (1.0 - af) * f1
            + af * f0
            - am * (M @ a)
            - C @ ((1.0 - af) * v_pred + af * v)
            - K @ ((1.0 - af) * u_pred + af * u)
        )
        return rhs, u_pred, v_pred

    def step_matrices(self, m, c, k, dt):
        A, B0, B1 = self.step_matrices_many(np.array([m]), np.array([c]), np.array([k]), dt)
        return A[0], B0[0], B1[0]

    def step_matrices_many(self, m, c, k, dt):
        # The one-step update of integrate() written out for one DOF, state (u, v, a):
        # the columns of A are its response to unit states, B0/B1 to unit loads.
        am, af, beta, gamma = self.coefficients
        m, c, k = (np.asarray(x, dtype=float) for x in (m, c, k))
        keff = (1.0 - am) * m + (1.0 - af) * (gamma * dt * c + beta * dt * dt * k)
        bdt2, gdt = beta * dt * dt, gamma * dt
        # (u_pred, v_pred) of each unit state, and the right-hand side it produces.
        u_pred = (1.0, dt, dt * dt * (0.5 - beta))
        v_pred = (0.0, 1.0, dt * (1.0 - gamma))
        own = ((1.0, 0.0, 0.0), (0.0, 1.0, 0.0), (0.0, 0.0, 1.0))
        A = np.empty((m.size, 3, 3))
        for j in range(3):
            uj, vj, aj = own[j]
            rhs = (
                -am * m * aj
                - c * ((1.0 - af) * v_pred[j] + af * vj)
                - k * ((1.0 - af) * u_pred[j] + af * uj)
            )
            a1 = rhs / keff
            A[:, 0, j] = u_pred[j] + bdt2 * a1
            A[:, 1, j] = v_pred[j] + gdt * a1
            A[:, 2, j] = a1
        unit = np.stack([np.full(m.size, bdt2), np.full(m.size, gdt), np.ones(m.size)], axis=1)
        B0 = unit * (af / keff)[:, None]
        B1 = unit * ((1.0 - af) / keff)[:, None]
        return A, B0, B1

    def initial_state(self, m, c, k, dt):
        # u0, v0 given; a0 from equilibrium at t = 0.
        return np.array([[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [-k / m, -c / m, 1.0 / m]])

    # -- the coupled-system integrator ----------------------------------------------
    def integrate(self, M, C, K, p, dt, u0=None, v0=None):
        n_steps, n = p.shape
        _, _, beta, gamma = self.coefficients
        u = np.empty((n_steps, n))
        v = np.empty((n_steps, n))
        a = np.empty((n_steps, n))
        u[0] = np.zeros(n) if u0 is None else u0
        v[0] = np.zeros(n) if v0 is None else v0
        a[0] = np.linalg.solve(M, p[0] - C @ v[0] - K @ u[0])
        keff = self._effective(M, C, K, dt)
        solve = _factorise(keff)
        omega_max = math.sqrt(max(float(np.max(sla.eigvalsh(K, M))), 0.0))
        bound = growth_bound(M, K, p, u[0], v[0], omega_max, n_steps * dt)
        bdt2, gdt = beta * dt * dt, gamma * dt
        for i in range(n_steps - 1):
            rhs, up, vp = self._rhs(M, C, K, dt, u[i], v[i], a[i], p[i], p[i + 1])
            a1 = solve(rhs)
            a[i + 1] = a1
            u[i + 1] = up + bdt2 * a1
            v[i + 1] = vp + gdt * a1
            if (i + 1) % _CHECK_EVERY == 0:
                check_finite_growth(u[i + 1 - _CHECK_EVERY : i + 2], bound, (i + 1) * dt, self.name)
        check_finite_growth(u[-_CHECK_EVERY:], bound, (n_steps - 1) * dt, self.name)
        return Solution(u, v, a)


# LAPACK banded Cholesky (factor, solve with factor); called directly because the
# scipy wrappers cost more than a small tridiagonal solve.
_PBTRF, _PBTRS = sla.get_lapack_funcs(("pbtrf", "pbtrs"), dtype=np.float64)


def banded_form(A: np.ndarray) -> np.ndarray | None:
    """Upper banded form (2, n) of a symmetric tridiagonal matrix, else None.

    Chain models (shear buildings) have tridiagonal M, C and K, hence a
    tridiagonal effective matrix; scipy.linalg.solveh_banded's layout is used
    (row 0: super-diagonal, first entry unused; row 1: diagonal).
    """
    n = A.shape[0]
    if n < 3 or not np.array_equal(A, A.T):
        return None
    if np.any(np.triu(A, 2)):
        return None
    ab = np.zeros((2, n))
    ab[0, 1:] = np.diagonal(A, 1)
    ab[1] = np.diagonal(A)
    return ab


def _factorise(A: np.ndarray):
    """Return a solver for A x = b, factorised once.

    Banded Cholesky (LAPACK pbtrf/pbtrs, as scipy.linalg.cho_solve_banded) for a
    symmetric positive definite tridiagonal matrix (chain models); dense
    Cholesky for other SPD matrices; LU otherwise.
    """
    ab = banded_form(A)
    if ab is not None:
        factor, info = _PBTRF(ab)
        if info == 0:

            def solve_banded(b: np.ndarray) -> np.ndarray:
                x, info = _PBTRS(factor, b)
                return x

            return solve_banded
    if np.allclose(A, A.T, rtol=1e-12, atol=0.0):
        try:
            cf = sla.cho_factor(A)
            return lambda b: sla.cho_solve(cf, b, check_finite=False)
        except np.linalg.LinAlgError:
            pass
    lu = sla.lu_factor(A)
    return lambda b: sla.lu_solve(lu, b, check_finite=False)


@dataclass(frozen=True)
class Newmark(_AlphaFamily):
    """Newmark-β (Newmark 1959, J. Eng. Mech. Div. ASCE 85(EM3)).

    Parameters: β ≥ 0, γ ≥ ½. Unconditionally stable for 2β ≥ γ ≥ ½; otherwise
    stable for Ω = ω_max Δt ≤ 1/√(γ/2 − β) (undamped). Second order for γ = ½,
    first order otherwise (γ > ½ adds algorithmic damping). Average acceleration
    (β = ¼, γ = ½) has no amplitude decay and ω̄Δt = 2 arctan(Ω/2); linear
    acceleration (β = ⅙, γ = ½) is stable for Δt ≤ 0.551 T_min (Chopra,
    *Dynamics of Structures*, §5.4; Hughes, *The Finite Element Method*, 1987, §9.1).
    """

    beta: float = 0.25
    gamma: float = 0.5
    name: str = "newmark"
    source = "Newmark (1959), J. Eng. Mech. Div. ASCE 85(EM3), 67-94"

    @property
    def order(self) -> int:  # type: ignore[override]
        return 2 if abs(self.gamma - 0.5) < 1e-12 else 1

    @property
    def coefficients(self):
        return 0.0, 0.0, self.beta, self.gamma

    def parameters(self):
        return {"beta": self.beta, "gamma": self.gamma}

    def check_parameters(self):
        if not (math.isfinite(self.beta) and self.beta >= 0.0):
            raise InputError(f"beta must be >= 0, got {self.beta}", "beta")
        if not (math.isfinite(self.gamma) and self.gamma >= 0.5):
            raise InputError(
                f"gamma must be >= 1/2 (the method is unstable below), got {self.gamma}", "gamma"
            )

    def stability_limit(self, omega_max, zeta=0.0):
        if 2.0 * self.beta >= self.gamma:
            return math.inf
        omega_cr = 1.0 / math.sqrt(self.gamma / 2.0 - self.beta)
        return omega_cr / omega_max


@dataclass(frozen=True)
class HHT(_AlphaFamily):
    """HHT-α (Hilber, Hughes & Taylor 1977, Earthquake Eng. Struct. Dyn. 5, 283-292).

    Parameter α ∈ [−⅓, 0]; γ = ½ − α, β = ¼(1 − α)². Unconditionally stable,
    second order; algorithmic damping grows with Ω, spectral radius at Ω → ∞ is
    (1 + α)/(1 − α) (from memory; checked against the amplification matrix in the
    tests). α = 0 is average acceleration.
    """

    alpha: float = -0.05
    name: str = "hht"
    source = "Hilber, Hughes & Taylor (1977), Earthquake Eng. Struct. Dyn. 5, 283-292"

    @property
    def coefficients(self):
        a = self.alpha
        return 0.0, -a, 0.25 * (1.0 - a) ** 2, 0.5 - a

    def parameters(self):
        _, _, beta, gamma = self.coefficients
        return {"alpha": self.alpha, "beta": beta, "gamma": gamma}

    def check_parameters(self):
        if not (math.isfinite(self.alpha) and -1.0 / 3.0 <= self.alpha <= 0.0):
            raise InputError(f"alpha must lie in [-1/3, 0], got {self.alpha}", "alpha")

    def stability_limit(self, omega_max, zeta=0.0):
        return math.inf


@dataclass(frozen=True)
class GeneralizedAlpha(_AlphaFamily):
    """Generalized-α (Chung & Hulbert 1993, J. Appl. Mech. 60, 371-375).

    Parameter ρ∞ ∈ [0, 1], the spectral radius at Ω → ∞:
    α_m = (2ρ∞ − 1)/(ρ∞ + 1), α_f = ρ∞/(ρ∞ + 1), γ = ½ − α_m + α_f,
    β = ¼(1 − α_m + α_f)². Unconditionally stable, second order, with the least
    low-frequency damping for a given high-frequency damping. ρ∞ = 1 is average
    acceleration.
    """

    rho_inf: float = 0.9
    name: str = "generalized-alpha"
    source = "Chung & Hulbert (1993), J. Appl. Mech. 60(2), 371-375"

    @property
    def coefficients(self):
        r = self.rho_inf
        am = (2.0 * r - 1.0) / (r + 1.0)
        af = r / (r + 1.0)
        return am, af, 0.25 * (1.0 - am + af) ** 2, 0.5 - am + af

    def parameters(self):
        am, af, beta, gamma = self.coefficients
        return {"rho_inf": self.rho_inf, "alpha_m": am, "alpha_f": af, "beta": beta, "gamma": gamma}

    def check_parameters(self):
        if not (math.isfinite(self.rho_inf) and 0.0 <= self.rho_inf <= 1.0):
            raise InputError(f"rho_inf must lie in [0, 1], got {self.rho_inf}", "rho_inf")

    def stability_limit(self, omega_max, zeta=0.0):
        return math.inf
