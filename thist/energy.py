"""Energy balance of a run, relative formulation (Uang & Bertero 1990).

With u the displacement relative to the base, the equation of motion
``M ü + C u̇ + f_s(u) = −M r ü_g`` dotted with du and integrated from 0 to t gives

    E_K + E_D + E_S + E_H = E_I,

    E_I = −∫ u̇ᵀ M r ü_g dt    input (work of the effective earthquake load)
    E_K = ½ u̇ᵀ M u̇            kinetic energy of the relative motion
    E_D = ∫ u̇ᵀ C u̇ dt         energy dissipated by viscous damping
    E_S                       recoverable strain energy (½ uᵀ K u for linear springs)
    E_H                       hysteretic energy (zero while the springs stay elastic)

(Uang & Bertero, "Evaluation of seismic energy in structures", Earthquake Eng.
Struct. Dyn. 19, 1990, eq. 4.) The work integrals are taken step by step in the
form ∫ f·du with the trapezoidal rule, Δuᵀ (f[n] + f[n+1])/2, which is the rule
consistent with a step that advances u by Δt (u̇[n] + u̇[n+1])/2: for Newmark's
average-acceleration method it closes the balance to round-off (Hughes, *The
Finite Element Method*, 1987, §9.3, energy of the trapezoidal rule). The
balance error of every run is reported as a fraction of the peak input energy.

For the ``exact`` method the rule consistent with the step is the exact integral
over the step: the solution between samples is known in closed form for a load
that varies linearly between them, and the damping and input work of a step are
quadratic forms in (u[n], u̇[n], p[n], p[n+1] − p[n]) whose matrices come from one
matrix exponential (Van Loan, "Computing integrals involving the matrix
exponential", IEEE Trans. Autom. Control 23(3), 1978, Theorem 1). With the
trapezoidal rule instead, the exact solution would show a balance error of order
Ω²/12 from the quadrature alone, which says nothing about the solution.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla

from thist.methods.exact import augmented_generator

#: Work rules: ``"trapezoid"`` (Δuᵀ(f[n] + f[n+1])/2) and ``"exact"`` (linear model,
#: load linear between samples; see the module docstring).
WORK_RULES = ("trapezoid", "exact")


@dataclass(frozen=True)
class EnergyBalance:
    """Energy histories of one run, J, sampled at ``t``.

    Attributes
    ----------
    t : ndarray, shape (N,)
        Times, s.
    input : ndarray, shape (N,)
        Input energy E_I, J.
    kinetic : ndarray, shape (N,)
        Kinetic energy of the relative motion E_K, J.
    damping : ndarray, shape (N,)
        Energy dissipated by viscous damping E_D, J.
    strain : ndarray, shape (N,)
        Recoverable strain energy E_S, J.
    hysteretic : ndarray, shape (N,)
        Hysteretic energy E_H, J (zeros for elastic springs).
    """

    t: np.ndarray
    input: np.ndarray
    kinetic: np.ndarray
    damping: np.ndarray
    strain: np.ndarray
    hysteretic: np.ndarray

    @property
    def residual(self) -> np.ndarray:
        """E_I − (E_K + E_D + E_S + E_H) at each time, J."""
        return self.input - (self.kinetic + self.damping + self.strain + self.hysteretic)

    @property
    def peak_input(self) -> float:
        """Largest |E_I| over the run, J."""
        return float(np.max(np.abs(self.input))) if self.input.size else 0.0

    @property
    def balance_error(self) -> float:
        """Largest |residual| over the run as a fraction of the peak input energy.

        0 when there is no input energy and no residual; ``inf`` for a residual
        with no input.
        """
        worst = float(np.max(np.abs(self.residual))) if self.input.size else 0.0
        peak = self.peak_input
        if peak > 0.0:
            return worst / peak
        return 0.0 if worst == 0.0 else float("inf")

    def final(self) -> dict[str, float]:
        """The energies at the end of the run, J, and the balance error."""
        return {
            "input": float(self.input[-1]),
            "kinetic": float(self.kinetic[-1]),
            "damping": float(self.damping[-1]),
            "strain": float(self.strain[-1]),
            "hysteretic": float(self.hysteretic[-1]),
            "peak_input": self.peak_input,
            "balance_error": self.balance_error,
        }


def _work(du: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Cumulative Σ Δuᵀ (f[n] + f[n+1])/2 from 0, shape (N,)."""
    inc = np.einsum("ij,ij->i", du, 0.5 * (f[1:] + f[:-1]))
    return np.concatenate([[0.0], np.cumsum(inc)])


def energy_balance(
    M: np.ndarray,
    C: np.ndarray,
    K: np.ndarray,
    r: np.ndarray,
    t: np.ndarray,
    ag: np.ndarray,
    u: np.ndarray,
    v: np.ndarray,
    restoring_force: np.ndarray | None = None,
    hysteretic: np.ndarray | None = None,
    rule: str = "trapezoid",
) -> EnergyBalance:
    """Energy histories of a run in the relative formulation.

    Parameters
    ----------
    M, C, K : ndarray, shape (n, n)
        Mass (kg), damping (N·s/m) and initial stiffness (N/m) matrices.
    r : ndarray, shape (n,)
        Influence vector.
    t : ndarray, shape (N,)
        Times, s.
    ag : ndarray, shape (N,)
        Ground acceleration, m/s².
    u, v : ndarray, shape (N, n)
        Relative displacement (m) and velocity (m/s).
    restoring_force : ndarray, shape (N, n), optional
        Spring force at each level, N. Without it the springs are linear and
        E_S = ½ uᵀ K u; with it the spring work ∫ f_sᵀ du is split into
        recoverable strain energy and ``hysteretic``.
    hysteretic : ndarray, shape (N,), optional
        Hysteretic energy history E_H, J, from the spring laws; only with
        ``restoring_force``. Zeros by default.
    rule : {"trapezoid", "exact"}
        How the damping and input work of a step are integrated: the trapezoidal
        rule in the form Δuᵀ(f[n] + f[n+1])/2, or (linear springs only) the exact
        integral for a linear model under a load linear between samples, the rule
        consistent with the ``exact`` method.

    Returns
    -------
    EnergyBalance
    """
    u = np.asarray(u, dtype=float)
    v = np.asarray(v, dtype=float)
    ag = np.asarray(ag, dtype=float)
    if rule not in WORK_RULES:
        raise ValueError(f"rule must be one of {WORK_RULES}, got {rule!r}")
    du = np.diff(u, axis=0)
    p = -np.outer(ag, M @ r)
    e_kin = 0.5 * np.einsum("ij,ij->i", v @ M, v)
    if rule == "exact":
        if restoring_force is not None:
            raise ValueError("the exact work rule is for linear springs only")
        e_input, e_damp = _exact_work(M, C, K, float(t[1] - t[0]), u, v, p)
    else:
        e_input = _work(du, p)
        e_damp = _work(du, v @ C.T)
    if restoring_force is None:
        if hysteretic is not None:
            raise ValueError("a hysteretic energy history needs the restoring force it came from")
        e_strain = 0.5 * np.einsum("ij,ij->i", u @ K, u)
        e_hyst = np.zeros_like(e_strain)
    else:
        spring_work = _work(du, np.asarray(restoring_force, dtype=float))
        e_hyst = np.zeros_like(spring_work) if hysteretic is None else np.asarray(hysteretic)
        e_strain = spring_work - e_hyst
    return EnergyBalance(np.asarray(t, dtype=float), e_input, e_kin, e_damp, e_strain, e_hyst)


def _exact_work(
    M: np.ndarray,
    C: np.ndarray,
    K: np.ndarray,
    dt: float,
    u: np.ndarray,
    v: np.ndarray,
    p: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    """Cumulative input work ∫ u̇ᵀp dt and damping work ∫ u̇ᵀCu̇ dt, exact per step, J.

    The augmented state w = (u, u̇, p, q) obeys w' = F w with p' = q/Δt, q' = 0, so
    over a step w(s) = exp(Fs) w[n] with w[n] = (u[n], u̇[n], p[n], p[n+1] − p[n]),
    and ∫₀^Δt wᵀQw ds = w[n]ᵀ (∫₀^Δt exp(Fᵀs) Q exp(Fs) ds) w[n]; the integral is
    the product of two blocks of exp([[−Fᵀ, Q], [0, F]] Δt) (Van Loan 1978).
    """
    n = M.shape[0]
    F = augmented_generator(M, C, K, dt)
    q_damp = np.zeros_like(F)
    q_damp[n : 2 * n, n : 2 * n] = 0.5 * (C + C.T)
    q_input = np.zeros_like(F)
    q_input[n : 2 * n, 2 * n : 3 * n] = 0.5 * np.eye(n)
    q_input[2 * n : 3 * n, n : 2 * n] = 0.5 * np.eye(n)
    w = np.hstack([u[:-1], v[:-1], p[:-1], p[1:] - p[:-1]])
    out = []
    for Q in (q_input, q_damp):
        big = np.zeros((8 * n, 8 * n))
        big[: 4 * n, : 4 * n] = -F.T
        big[: 4 * n, 4 * n :] = Q
        big[4 * n :, 4 * n :] = F
        E = sla.expm(big * dt)
        W = E[4 * n :, 4 * n :].T @ E[: 4 * n, 4 * n :]
        W = 0.5 * (W + W.T)
        inc = np.einsum("ki,ij,kj->k", w, W, w)
        out.append(np.concatenate([[0.0], np.cumsum(inc)]))
    return out[0], out[1]
