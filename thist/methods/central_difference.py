"""Central difference, in the textbook form with damping in the effective mass.

    (M/Δt² + C/(2Δt)) u[n+1] = p[n] − (K − 2M/Δt²) u[n] − (M/Δt² − C/(2Δt)) u[n−1]

started with u[−1] = u0 − Δt v0 + ½Δt² a0 (Chopra, *Dynamics of Structures*,
§5.3). Velocity and acceleration at step n are the central differences
(u[n+1] − u[n−1])/(2Δt) and (u[n+1] − 2u[n] + u[n−1])/Δt².
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla

from thist.methods.alpha import _factorise
from thist.methods.base import Method, Solution, check_finite_growth, growth_bound

_CHECK_EVERY = 256


@dataclass(frozen=True)
class CentralDifference(Method):
    """Central difference, explicit, second order.

    No parameters. Stable for Ω = ω_max Δt ≤ 2, i.e. Δt ≤ T_min/π. Because the
    damping force enters the effective mass with the centred velocity, damping
    does not lower this limit (Belytschko, Liu & Moran, *Nonlinear Finite
    Elements for Continua and Structures*, 2000, ch. 6, contrast the lagged-
    velocity form). No amplitude decay below the limit; ω̄Δt = 2 arcsin(Ω/2)
    (period shortening; Hughes, *The Finite Element Method*, 1987, §9.3).
    """

    name: str = "central-difference"
    source = "Chopra, Dynamics of Structures, §5.3; Hughes (1987), The Finite Element Method, §9.3"
    order = 2
    explicit = True

    def stability_limit(self, omega_max, zeta=0.0):
        return 2.0 / omega_max

    def _operators(self, M, C, K, dt):
        keff = M / dt**2 + C / (2.0 * dt)
        b = K - 2.0 * M / dt**2
        c = M / dt**2 - C / (2.0 * dt)
        return keff, b, c

    def step_matrices(self, m, c, k, dt):
        # State x[n] = (u[n], u[n-1]); load f[n] enters the step to u[n+1].
        keff, b, cc = self._operators(m, c, k, dt)
        A = np.array([[-b / keff, -cc / keff], [1.0, 0.0]])
        return A, np.array([1.0 / keff, 0.0]), np.zeros(2)

    def initial_state(self, m, c, k, dt):
        # u0, v0, f0 -> (u0, u_{-1}) with u_{-1} = u0 - dt v0 + dt²/2 a0.
        a_u, a_v, a_f = -k / m, -c / m, 1.0 / m
        h = 0.5 * dt * dt
        return np.array([[1.0, 0.0, 0.0], [1.0 + h * a_u, -dt + h * a_v, h * a_f]])

    def modal_outputs(self, X, f, c, k, dt):
        # X[:, :, j] = (u[j], u[j-1]) for j = 0 .. L; central differences as in integrate().
        u_next = X[:, 0, 1:]
        u = X[:, 0, :-1]
        u_prev = X[:, 1, :-1]
        v = (u_next - u_prev) / (2.0 * dt)
        a = (u_next - 2.0 * u + u_prev) / dt**2
        return u, v, a

    def integrate(self, M, C, K, p, dt, u0=None, v0=None):
        n_steps, n = p.shape
        u0 = np.zeros(n) if u0 is None else np.asarray(u0, dtype=float)
        v0 = np.zeros(n) if v0 is None else np.asarray(v0, dtype=float)
        a0 = np.linalg.solve(M, p[0] - C @ v0 - K @ u0)
        keff, b, c = self._operators(M, C, K, dt)
        solve = _factorise(keff)
        # u_ext[j] = u[j - 1]: one step before the start and one past the end.
        u_ext = np.empty((n_steps + 2, n))
        u_ext[0] = u0 - dt * v0 + 0.5 * dt * dt * a0
        u_ext[1] = u0
        omega_max = math.sqrt(max(float(np.max(sla.eigvalsh(K, M))), 0.0))
        bound = growth_bound(M, K, p, u0, v0, omega_max, n_steps * dt)
        for i in range(n_steps):
            u_ext[i + 2] = solve(p[i] - b @ u_ext[i + 1] - c @ u_ext[i])
            if (i + 1) % _CHECK_EVERY == 0:
                check_finite_growth(u_ext[i + 2 - _CHECK_EVERY : i + 3], bound, i * dt, self.name)
        check_finite_growth(u_ext[-_CHECK_EVERY:], bound, (n_steps - 1) * dt, self.name)
        u = u_ext[1:-1]
        v = (u_ext[2:] - u_ext[:-2]) / (2.0 * dt)
        a = (u_ext[2:] - 2.0 * u + u_ext[:-2]) / dt**2
        return Solution(u.copy(), v, a)
