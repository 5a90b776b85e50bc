"""Exact integration of linear models for a load that varies linearly between samples.

With the state z = (u, v), ``M a + C v + K u = p(t)`` is ``z' = A z + B p`` with

    A = [[0, I], [−M⁻¹K, −M⁻¹C]],   B = [[0], [M⁻¹]].

Over one step, with p varying linearly from p[n] to p[n+1] (first-order hold),

    z[n+1] = Φ z[n] + (Γ₁ − Γ₂) p[n] + Γ₂ p[n+1],

where Φ = exp(AΔt), Γ₁ = ∫₀^Δt exp(Aτ) dτ B and Γ₂ = (1/Δt) ∫₀^Δt exp(A(Δt − s)) s ds B.
All three come from one matrix exponential of the augmented matrix

    [[A, B, 0], [0, 0, I/Δt], [0, 0, 0]] · Δt

(Van Loan, "Computing integrals involving the matrix exponential", IEEE Trans.
Autom. Control 23(3), 1978; the same recurrence for one degree of freedom is the
closed form of Nigam & Jennings, Bull. Seismol. Soc. Am. 59(2), 1969). The
recurrence is exact to round-off for such a load, at any Δt: no stability limit,
no period error, no algorithmic damping.

The coupled system is run by diagonalising Φ: each complex eigen-coordinate obeys a
first-order recurrence that :func:`scipy.signal.lfilter` runs at C speed. Where the
eigenvectors are ill-conditioned (a mode at or near critical damping) the step is
run directly instead.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla

from thist.methods.base import (
    Method,
    Solution,
    SpectralProperties,
    _from_log_root,
    check_finite_growth,
    growth_bound,
)
from thist.methods.recurrence import run_recurrence

#: Largest condition number of Φ's eigenvectors for the diagonalised (filter) path.


def augmented_generator(M: np.ndarray, C: np.ndarray, K: np.ndarray, dt: float) -> np.ndarray:
    """Generator F of the state w = (u, u̇, p, q) with p' = q/Δt, q' = 0; shape (4n, 4n).

    Over a step, w(s) = exp(Fs) w[k] with w[k] = (u[k], u̇[k], p[k], p[k+1] − p[k])
    describes the motion under a load that varies linearly from p[k] to p[k+1].

    Parameters
    ----------
    M, C, K : ndarray, shape (n, n)
        Mass (kg), damping (N·s/m) and stiffness (N/m) matrices.
    dt : float
        Time step, s.
    """
    M, C, K = (np.atleast_2d(np.asarray(x, dtype=float)) for x in (M, C, K))
    n = M.shape[0]
    F = np.zeros((4 * n, 4 * n))
    F[:n, n : 2 * n] = np.eye(n)
    F[n : 2 * n, :n] = -np.linalg.solve(M, K)
    F[n : 2 * n, n : 2 * n] = -np.linalg.solve(M, C)
    F[n : 2 * n, 2 * n : 3 * n] = np.linalg.inv(M)
    F[2 * n : 3 * n, 3 * n :] = np.eye(n) / dt
    return F


def transition_matrices(
    M: np.ndarray, C: np.ndarray, K: np.ndarray, dt: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """State-transition matrices of ``M a + C v + K u = p`` with first-order hold.

    Parameters
    ----------
    M, C, K : ndarray, shape (n, n)
        Mass (kg), damping (N·s/m) and stiffness (N/m) matrices.
    dt : float
        Time step, s.

    Returns
    -------
    (Phi, B0, B1) : ndarrays, shapes (2n, 2n), (2n, n), (2n, n)
        ``z[k+1] = Phi z[k] + B0 p[k] + B1 p[k+1]`` with ``z = (u, v)`` in m and
        m/s and ``p`` in N.
    """
    n = np.atleast_2d(M).shape[0]
    E = sla.expm(augmented_generator(M, C, K, dt) * dt)
    Phi = E[: 2 * n, : 2 * n]
    G1 = E[: 2 * n, 2 * n : 3 * n]
    G2 = E[: 2 * n, 3 * n :]
    return Phi, G1 - G2, G2


#: 1/(j+2)! for j = 0 … 14, the coefficients of the series of (eˣ − 1 − x)/x².
_PHI2_SERIES = tuple(1.0 / math.factorial(j + 2) for j in range(15))


def _phi2(x: np.ndarray) -> np.ndarray:
    """(eˣ − 1 − x)/x², by its series where |x| < 0.5 (no cancellation).

    Σ x^j/(j+2)! by Horner's rule to j = 14: the truncation is below
    0.5^15/17! ≈ 8e-20, far under the round-off of the sum (≈ 0.5 × 1e-16).
    """
    small = np.abs(x) < 0.5
    everywhere = bool(small.all())
    xs = x if everywhere else x[small]
    total = np.full_like(xs, _PHI2_SERIES[-1])
    for c in _PHI2_SERIES[-2::-1]:
        total *= xs
        total += c
    if everywhere:
        return total
    out = np.empty_like(x)
    out[small] = total
    xl = x[~small]
    out[~small] = (np.expm1(xl) - xl) / (xl * xl)
    return out


@dataclass(frozen=True)
class Exact(Method):
    """Exact solution for linear models and piecewise-linear loads (first-order hold).

    No parameters. Unconditionally stable; the amplification matrix is
    exp(AΔt), whose eigenvalues exp(Ω(−ζ ± i√(1−ζ²))) carry no numerical period
    error and no algorithmic damping. The "order" is nominal: for a load that is
    linear between samples the result is exact at any step; for a smoother load
    the only error is that of linear interpolation between samples, O(Δt²).
    Linear models only: the comparison uses it as the reference.
    """

    name: str = "exact"
    energy_rule = "exact"
    linear_only = True
    source = (
        "state-transition matrix with first-order hold (Van Loan 1978, IEEE Trans. Autom. "
        "Control 23(3)); SDOF form: Nigam & Jennings (1969), Bull. Seismol. Soc. Am. 59(2)"
    )
    order = 2

    def stability_limit(self, omega_max, zeta=0.0):
        return math.inf

    def step_matrices(self, m, c, k, dt):
        Phi, B0, B1 = transition_matrices(
            np.array([[m]], float), np.array([[c]], float), np.array([[k]], float), dt
        )
        return Phi, B0[:, 0], B1[:, 0]

    def spectral_properties(self, omega_dt: float, zeta: float = 0.0) -> SpectralProperties:
        """Spectral properties at Ω = ωΔt from the generator of the amplification matrix.

        Φ = exp(AΔt), so the logarithms of its eigenvalues are the eigenvalues of
        AΔt, free of the 2π ambiguity of arg λ that aliases Ω > π. The values
        follow the convention of :func:`thist.methods.base.spectral_properties`
        (numerical root compared with the exact damped root): zero period error and
        zero algorithmic damping at every ζ.

        Parameters
        ----------
        omega_dt : float
            Ω = ωΔt, dimensionless.
        zeta : float
            Physical damping ratio of the mode.
        """
        omega_dt = float(omega_dt)
        s = np.linalg.eigvals(np.array([[0.0, 1.0], [-1.0, -2.0 * zeta]]) * omega_dt)
        rho = float(np.max(np.exp(s.real)))
        if np.all(np.abs(s.imag) <= 1e-12 * max(omega_dt, 1e-300)):
            return SpectralProperties(omega_dt, rho, math.nan, math.nan, math.nan)
        principal = complex(s[np.argmax(np.abs(s.imag))])
        return _from_log_root(omega_dt, zeta, rho, principal)

    def step_matrices_many(self, m, c, k, dt):
        """Closed-form step matrices of many under-damped DOFs at once.

        For ü + (c/m) u̇ + (k/m) u = f/m the state matrix [[0, 1], [−k/m, −c/m]] has
        eigenvalues λ = −ζω ± iω√(1−ζ²) and eigenvectors (1, λ). With e = exp(λΔt):
        Φ = V diag(e) V⁻¹, the constant-load integral ∫₀^Δt e^{A(Δt−s)} ds b =
        V diag((e − 1)/λ) V⁻¹ b and the ramp integral (1/Δt)∫₀^Δt e^{A(Δt−s)} s ds b
        = V diag((e − 1 − λΔt)/(λ²Δt)) V⁻¹ b — the first-order-hold recurrence of
        Nigam & Jennings (1969) in matrix form. Critically or over-damped DOFs (and
        ω = 0) use the matrix exponential of :meth:`step_matrices`.
        """
        m, c, k = (np.asarray(x, dtype=float) for x in (m, c, k))
        A = np.empty((m.size, 2, 2))
        B0 = np.empty((m.size, 2))
        B1 = np.empty((m.size, 2))
        w2 = k / m
        zeta = np.divide(c / m, 2.0 * np.sqrt(w2), out=np.full(m.size, np.inf), where=w2 > 0)
        # The closed form loses digits when the two roots nearly coincide (near-critical
        # damping) or when ω_d·Δt is tiny; those DOFs take the matrix exponential.
        wd_dt = np.sqrt(np.clip(w2 * (1.0 - np.minimum(zeta, 1.0) ** 2), 0.0, None)) * dt
        under = (zeta < 0.999) & (w2 > 0) & (wd_dt >= 1e-3)
        rest = np.flatnonzero(~under)
        if rest.size < m.size:
            under = slice(None) if rest.size == 0 else under  # a plain slice is cheaper
            w = np.sqrt(w2[under])
            z = zeta[under]
            wd = w * np.sqrt(1.0 - z * z)
            # The roots are λ and its conjugate, so every real part below is an
            # imaginary part of one complex product (V = [[1, 1], [λ, λ̄]],
            # λ̄ − λ = −2iω_d): the closed form needs the root λ = −ζω + iω_d only.
            lam = -z * w + 1j * wd
            x = lam * dt
            e = np.expm1(x)  # e^{λΔt} − 1 without cancellation
            A[under, 0, 0] = 1.0 - (e * lam.conj()).imag / wd
            A[under, 0, 1] = e.imag / wd
            A[under, 1, 0] = -(w * w) * e.imag / wd
            A[under, 1, 1] = 1.0 + (e * lam).imag / wd
            # V diag(g, ḡ) V⁻¹ b with b = (0, 1/m) is (Im g, Im λg) / (m ω_d)
            scale = 1.0 / (m[under] * wd)
            g_const = dt * e / x
            g_ramp = dt * _phi2(x)
            B1[under, 0] = g_ramp.imag * scale
            B1[under, 1] = (lam * g_ramp).imag * scale
            B0[under, 0] = g_const.imag * scale - B1[under, 0]
            B0[under, 1] = (lam * g_const).imag * scale - B1[under, 1]
        for i in rest:
            A[i], B0[i], B1[i] = self.step_matrices(float(m[i]), float(c[i]), float(k[i]), dt)
        return A, B0, B1

    def initial_state(self, m, c, k, dt):
        # The state is (u, v) itself.
        return np.array([[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]])

    def integrate(self, M, C, K, p, dt, u0=None, v0=None):
        M, C, K = (np.atleast_2d(np.asarray(x, dtype=float)) for x in (M, C, K))
        p = np.asarray(p, dtype=float)
        n_steps, n = p.shape
        u0 = np.zeros(n) if u0 is None else np.asarray(u0, dtype=float)
        v0 = np.zeros(n) if v0 is None else np.asarray(v0, dtype=float)
        Phi, B0, B1 = transition_matrices(M, C, K, dt)
        z0 = np.concatenate([u0, v0])
        # Load term of each step: g[k] = B0 p[k] + B1 p[k+1], k = 0 .. N-2.
        g = p[:-1] @ B0.T + p[1:] @ B1.T
        z = run_recurrence(Phi, g, z0)
        u, v = z[:, :n], z[:, n:]
        omega_max = math.sqrt(max(float(np.max(sla.eigvalsh(K, M))), 0.0))
        bound = growth_bound(M, K, p, u0, v0, omega_max, n_steps * dt)
        check_finite_growth(u, bound, (n_steps - 1) * dt, self.name)
        a = np.linalg.solve(M, (p - v @ C.T - u @ K.T).T).T
        return Solution(np.ascontiguousarray(u), np.ascontiguousarray(v), a)
