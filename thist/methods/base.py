"""The contract every time-integration method of thist fulfils, in one place.

A method is a frozen dataclass whose fields are its parameters. It states:

``name``
    The name used in case files and on the command line.
``source``
    The published source of the algorithm.
``order``
    Order of accuracy for linear problems (global error ~ Δt**order).
``check_parameters()``
    Raises :class:`~thist.errors.InputError` if a parameter is out of its
    admissible range (e.g. γ < ½ for Newmark-β).
``stability_limit(omega_max, zeta)``
    The critical step Δt_cr in seconds for the highest circular frequency of the
    model (rad/s) and its damping ratio; ``math.inf`` where the method is
    unconditionally stable for linear systems.
``step_matrices(m, c, k, dt)``
    The linear one-step recurrence of the method on a single degree of freedom,
    ``x[n+1] = A x[n] + B0 f[n] + B1 f[n+1]`` with the state ``x`` defined by the
    method and ``u = x[0]``. It is derived from the same formulas as
    :meth:`integrate`, and from it follow the amplification matrix and hence the
    numerical period error and algorithmic damping (:func:`spectral_properties`);
    the fast modal path runs this recurrence for every mode (compiled, or as linear
    filters), with sub-steps folded in.
``initial_state(m, c, k, dt)``
    The map from (u0, v0, f0) to the first state of that recurrence.
``modal_outputs(X, f, c, k, dt)``
    How (u, v, a) of unit-mass DOFs are read from the recurrence's states at a
    sample and the next one and the loads at both (vectorised over DOFs). It must
    be linear in those: the modal path (:mod:`thist.methods.modal_path`) evaluates
    it once on unit inputs and runs the resulting read-out matrices in its loop.
``integrate(M, C, K, p, dt, u0, v0)``
    Direct integration of ``M a + C v + K u = p(t)`` on the coupled system.

Numerical period error and algorithmic damping are computed, for any
Ω = ωΔt, from the eigenvalues of the amplification matrix ``A`` (not from
small-Ω series): the principal pair λ = exp(Ω̄(−ξ̄ ± i)) gives the numerical
frequency Ω̄ = |arg λ| and damping ratio ξ̄ = −ln|λ| / Ω̄ (Hughes, *The Finite
Element Method*, 1987, §9.3), compared with the same measures of the exact damped
root exp(Ω(−ζ ± i√(1−ζ²))), so that the exact solution has neither error at any ζ.
"""

from __future__ import annotations

import math
from abc import ABC, abstractmethod
from dataclasses import dataclass

import numpy as np

from thist.errors import InputError, StabilityError


@dataclass(frozen=True)
class Solution:
    """Histories from one integration, SI units, relative to the base.

    Attributes
    ----------
    u : ndarray, shape (N, n)
        Displacement, m.
    v : ndarray, shape (N, n)
        Velocity, m/s.
    a : ndarray, shape (N, n)
        Acceleration, m/s².
    """

    u: np.ndarray
    v: np.ndarray
    a: np.ndarray


@dataclass(frozen=True)
class SpectralProperties:
    """Numerical dispersion and dissipation of a method at one Ω = ωΔt.

    Attributes
    ----------
    omega_dt : float
        Ω = ωΔt of the exact undamped system.
    spectral_radius : float
        Largest |eigenvalue| of the amplification matrix.
    numerical_omega_dt : float
        Ω̄ = ω̄Δt of the principal root pair; nan when the roots are real
        (the method no longer oscillates at this Ω).
    period_error : float
        T̄/T_D − 1 against the exact damped period T_D = T/√(1−ζ²) (positive =
        period elongation); nan when the roots are real.
    algorithmic_damping : float
        ξ̄ = −ln|λ|/Ω̄ of the principal root pair minus the same measure of the
        exact damped root, ζ/√(1−ζ²) (= 0 for an exact method at any ζ).
    """

    omega_dt: float
    spectral_radius: float
    numerical_omega_dt: float
    period_error: float
    algorithmic_damping: float


class Method(ABC):
    """Abstract base of the integrators. See the module docstring for the contract."""

    name: str = ""
    source: str = ""
    order: int = 2
    explicit: bool = False
    #: Quadrature of the energy balance consistent with the method's step
    #: ("trapezoid", or "exact" for a method exact for piecewise-linear loads).
    energy_rule: str = "trapezoid"
    #: True for methods that exist for linear models only (no inelastic form).
    linear_only: bool = False

    def check_parameters(self) -> None:  # noqa: B027 - optional hook
        """Raise InputError if a parameter is outside its admissible range."""

    def parameters(self) -> dict[str, float]:
        """The method's parameters as a plain dict (for results and reports)."""
        return {}

    @abstractmethod
    def stability_limit(self, omega_max: float, zeta: float = 0.0) -> float:
        """Critical time step Δt_cr, s, for the highest circular frequency ω_max, rad/s."""

    @abstractmethod
    def step_matrices(
        self, m: float, c: float, k: float, dt: float
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """One-DOF recurrence ``x1 = A x0 + B0 f0 + B1 f1``; returns (A, B0, B1)."""

    def step_matrices_many(
        self, m: np.ndarray, c: np.ndarray, k: np.ndarray, dt: float
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """:meth:`step_matrices` for many DOFs at once: shapes (n, s, s), (n, s), (n, s).

        The default loops; methods with closed forms override it for speed.
        """
        parts = [
            self.step_matrices(float(mi), float(ci), float(ki), dt)
            for mi, ci, ki in zip(m, c, k, strict=True)
        ]
        return tuple(np.stack(x) for x in zip(*parts, strict=True))  # type: ignore[return-value]

    @abstractmethod
    def initial_state(self, m: float, c: float, k: float, dt: float) -> np.ndarray:
        """Map from (u0, v0, f0) to the initial state x0 of :meth:`step_matrices`.

        Returns a matrix ``S`` of shape (len(x), 3) with ``x0 = S @ [u0, v0, f0]``.
        """

    @abstractmethod
    def integrate(
        self,
        M: np.ndarray,
        C: np.ndarray,
        K: np.ndarray,
        p: np.ndarray,
        dt: float,
        u0: np.ndarray | None = None,
        v0: np.ndarray | None = None,
    ) -> Solution:
        """Integrate ``M a + C v + K u = p`` from (u0, v0) (rest by default).

        Parameters
        ----------
        M, C, K : ndarray, shape (n, n)
            Mass (kg), damping (N·s/m) and stiffness (N/m) matrices.
        p : ndarray, shape (N, n)
            Load at each of the N time points, N.
        dt : float
            Time step, s.
        u0, v0 : ndarray, shape (n,), optional
            Initial displacement (m) and velocity (m/s).

        Returns
        -------
        Solution
        """

    def modal_outputs(
        self, X: np.ndarray, f: np.ndarray, c: np.ndarray, k: np.ndarray, dt: float
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(u, v, a) histories of n unit-mass DOFs from their recurrence states.

        Linear in ``X`` and ``f``, and the output at sample i may use the samples
        i and i + 1 only (see :func:`thist.methods.modal_path.output_map`).

        Parameters
        ----------
        X : ndarray, shape (n, s, L + 1)
            Complete states at L + 1 consecutive samples (one past the last
            output sample, which explicit methods need).
        f : ndarray, shape (n, L + 1)
            Load per unit mass at the same samples, m/s².
        c, k : ndarray, shape (n,)
            Damping (1/s) and stiffness (1/s²) per unit mass.
        dt : float
            Time step, s.

        Returns
        -------
        (u, v, a) : ndarrays, shape (n, L)
            In m, m/s, m/s² (per unit modal coordinate). The default reads a
            state (u, v, a), or (u, v) with a from equilibrium; the returned
            arrays may be views of ``X``.
        """
        n = f.shape[1] - 1
        if X.shape[1] >= 3:
            return X[:, 0, :n], X[:, 1, :n], X[:, 2, :n]
        u, v = X[:, 0, :n], X[:, 1, :n]
        return u, v, f[:, :n] - c[:, None] * v - k[:, None] * u

    def spectral_properties(self, omega_dt: float, zeta: float = 0.0) -> SpectralProperties:
        """Period error and algorithmic damping at Ω = ωΔt from the amplification matrix.

        Parameters
        ----------
        omega_dt : float
            Ω = ωΔt, dimensionless.
        zeta : float
            Physical damping ratio of the mode.
        """
        return spectral_properties(self, omega_dt, zeta)


def spectral_properties(method: Method, omega_dt: float, zeta: float = 0.0) -> SpectralProperties:
    """Amplification-matrix analysis of ``method`` at Ω = ωΔt (see module docstring).

    The SDOF used has m = 1 kg, ω = 1 rad/s, so Δt = Ω seconds.
    """
    omega_dt = float(omega_dt)
    A, _, _ = method.step_matrices(1.0, 2.0 * zeta, 1.0, omega_dt)
    lam = np.linalg.eigvals(A)
    rho = float(np.max(np.abs(lam)))
    complex_roots = lam[np.abs(lam.imag) > 1e-12 * max(rho, 1e-300)]
    if complex_roots.size == 0:
        return SpectralProperties(omega_dt, rho, math.nan, math.nan, math.nan)
    principal = complex_roots[np.argmax(np.abs(complex_roots))]
    return _from_log_root(omega_dt, zeta, rho, complex(np.log(principal)))


def _from_log_root(omega_dt: float, zeta: float, rho: float, log_root: complex):
    """Spectral properties from ln λ of the principal root.

    With λ = exp(Ω̄(−ξ̄ ± i)) (Hughes 1987, §9.3), Ω̄ = |Im ln λ| and
    ξ̄ = −Re ln λ / Ω̄. The exact damped oscillator, ln λ = Ω(−ζ ± i√(1−ζ²)), reads
    Ω̄ = Ω√(1−ζ²) and ξ̄ = ζ/√(1−ζ²) that way; the numerical root is compared with
    those, so the exact solution shows no period error and no algorithmic damping
    at any ζ, and at ζ = 0 the values are Hughes' own.
    """
    wbar = abs(log_root.imag)
    xibar = -log_root.real / wbar
    root = math.sqrt(max(1.0 - zeta * zeta, 1e-300))
    period_error = omega_dt * root / wbar - 1.0
    return SpectralProperties(omega_dt, rho, wbar, period_error, xibar - zeta / root)


def substep_count(value: object) -> int:
    """Method steps per sample, checked: a whole number ≥ 1.

    Raises
    ------
    InputError
        Anything else (a float, zero, a negative number).
    """
    if isinstance(value, bool) or not isinstance(value, int | np.integer) or value < 1:
        raise InputError(f"must be a whole number >= 1, got {value!r}", "substeps")
    return int(value)


def check_finite_growth(u_block: np.ndarray, bound: float, t: float, method: str) -> None:
    """Stop a run whose displacements are non-finite or beyond any physical bound.

    Parameters
    ----------
    u_block : ndarray
        Recent displacements, m.
    bound : float
        Largest displacement magnitude, m, that the run may reach.
    t : float
        Time of the block, s, for the message.
    method : str
        Method name, for the message.
    """
    if not np.all(np.isfinite(u_block)):
        raise StabilityError(
            f"{method}: the solution became non-finite near t = {t:.4g} s; "
            "the run was stopped (reduce the time step or check the model)"
        )
    peak = float(np.max(np.abs(u_block))) if u_block.size else 0.0
    if peak > bound:
        raise StabilityError(
            f"{method}: displacement {peak:.3g} m near t = {t:.4g} s exceeds the physical "
            f"bound {bound:.3g} m; the run is growing without limit and was stopped "
            "(reduce the time step or check the model)"
        )


def growth_bound(
    M: np.ndarray,
    K: np.ndarray,
    p: np.ndarray,
    u0: np.ndarray,
    v0: np.ndarray,
    omega_max: float,
    duration: float,
) -> float:
    """A displacement no stable linear run can reach, m.

    The static deflection under the largest load, amplified by a resonance build-up
    factor that grows like ωt/2 for an undamped oscillator (Chopra, *Dynamics of
    Structures*, §3.1), plus the amplitude the initial energy allows, times a
    safety factor of 100.
    """
    pmax = float(np.max(np.abs(p))) if p.size else 0.0
    kmin = max(float(np.min(np.linalg.eigvalsh(0.5 * (K + K.T)))), 1e-300)
    u_static = pmax * np.sqrt(K.shape[0]) / kmin
    e0 = float(u0 @ K @ u0 + v0 @ M @ v0)
    u_free = np.sqrt(max(e0, 0.0) / kmin)
    return 100.0 * max(u_static * (1.0 + omega_max * duration) + u_free, 1e-9)
