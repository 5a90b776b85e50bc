"""Inelastic time integration of a shear chain with yielding story springs.

The chain (level masses m_j, story springs of :mod:`thist.springs`) on a moving
base obeys, in displacements relative to the base,

    M a + C v + f_s(u) = p(t),   p = −M r ü_g,  r = ones,

with f_s,j = V_j − V_{j+1} (V_n = 0) and the story shears V_i = V_i(δ_i) of the
drifts δ_i = u_i − u_{i−1}. Every matrix of the chain is tridiagonal, so each
linear solve is a banded Cholesky solve (scipy.linalg.solveh_banded) without
any Python loop over stories.

Implicit methods
----------------
``newmark-average``, ``newmark-linear``, ``newmark`` (β > 0), ``hht`` and
``generalized-alpha`` use the coefficients (α_m, α_f, β, γ) of the method objects
of :mod:`thist.methods.alpha` (not re-derived here) in the generalized-α balance
(Chung & Hulbert 1993) with the internal force taken at n+1−α_f as the weighted
mean of the end-point forces (the usual choice for nonlinear HHT-α; it reduces to
K u[n+1−α_f] for a linear spring):

    (1−α_m) M a[n+1] + α_m M a[n] + (1−α_f)(C v[n+1] + f_s(u[n+1]))
        + α_f (C v[n] + f_s(u[n])) = (1−α_f) p[n+1] + α_f p[n],

solved for u[n+1] by Newton–Raphson on the residual R (Chopra, *Dynamics of
Structures*, §5.7; Bathe, *Finite Element Procedures*, 1996, §8.4) with the
effective tangent

    K̂ = (1−α_m)/(βΔt²) M + (1−α_f) γ/(βΔt) C + (1−α_f) K_t.

``iteration="newton"`` re-forms K_t at every iterate; ``"modified-newton"`` keeps
the tangent of the committed state at the start of the step. A step has
converged when **both**

* the force residual ‖R‖_∞ ≤ ``force_tolerance`` · F_ref, F_ref being the
  largest of the peak effective load over the record, ‖f_s‖_∞ and the inertia
  force ‖(1−α_m) M a[n+1]‖_∞ (default 1e-8: the story laws are piecewise linear,
  so Newton reaches round-off once the yield state is right), and
* the energy of the pending correction |Rᵀ K̂⁻¹ R| ≤ ``energy_tolerance`` ·
  max(E₀, (force_tolerance·F_ref)² / max diag K̂), E₀ the same quantity at the
  first iterate (Bathe's energy criterion; default 1e-14, i.e. a correction
  some 1e-7 times the first in the energy norm).

A step that does not converge within ``max_iterations`` corrections is halved
(the ground acceleration is interpolated linearly), recursively up to
``max_halvings`` times; one that still fails raises :class:`ConvergenceError`
with the time, the story and the residual. An unconverged step is never
accepted.

Explicit method
---------------
``central-difference`` in the textbook form of :mod:`thist.methods.central_difference`
with the restoring force evaluated explicitly at u[n] (no iteration):

    (M/Δt² + C_n/(2Δt)) u[n+1] = p[n] − f_s(u[n]) + 2M/Δt² u[n] − (M/Δt² − C_n/(2Δt)) u[n−1].

Its stability limit Δt ≤ 2/ω_max is checked before the run with ω_max of the
initial (largest) stiffness: a softening spring only lowers ω_max.

Damping with yielding springs
-----------------------------
Rayleigh coefficients (a0 in 1/s, a1 in s) with one of

``"initial"``
    C = a0 M + a1 K_0, the initial stiffness. Simple and fixed, but when a story
    yields its stiffness-proportional dashpot keeps the initial stiffness and can
    carry damping forces far larger than the yielded spring can resist: the
    spurious damping forces shown by Charney (2008, "Unintended consequences of
    modeling damping in structures", J. Struct. Eng. 134(4), 581–592).
``"tangent"``
    C_n = a0 M + a1 K_t,n: mass-proportional plus tangent-stiffness-proportional
    (Rayleigh on the tangent stiffness), K_t,n the tangent of the committed state
    at the start of each step, held within the step. The stiffness-proportional
    damping of a yielded story drops with its stiffness, as Charney recommends;
    the damping ratio of the elastic modes is that of the initial Rayleigh fit.

Energy balance
--------------
The ledger of :mod:`thist.energy` (relative formulation, Uang & Bertero 1990),
accumulated over every committed (sub)step with the same work rule,
Δuᵀ (f[n] + f[n+1])/2, for the input (f = p = −M r ü_g), the damping
(f = C u̇, the damping force each equilibrium used) and the spring work
(Δδᵀ(V[n] + V[n+1])/2, kept by the springs); kinetic ½ u̇ᵀ M u̇, recoverable
strain Σ V²/(2k), hysteretic = spring work − recoverable. With this rule the
average-acceleration step closes the balance to round-off; the other methods
show their algorithmic dissipation and O(Δt²) quadrature error. A run from a
non-zero initial state counts the initial kinetic and strain energy as input
supplied at t = 0.

Results are a preliminary estimate: inelastic results are sensitive to the
spring law and its parameters, and do not replace the analysis the governing
code requires; defer to local codes and the licensed engineer of record.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.linalg as sla

from thist.energy import EnergyBalance
from thist.errors import InputError, StabilityError
from thist.methods import get_method
from thist.methods.alpha import HHT, GeneralizedAlpha, Newmark
from thist.methods.base import Method, Solution, check_finite_growth, growth_bound
from thist.methods.central_difference import CentralDifference
from thist.springs import SpringParameters, SpringState
from thist.structure import chain_stiffness

#: Damping choices for yielding springs (see the module docstring).
DAMPING_CHOICES: tuple[str, ...] = ("initial", "tangent")
#: Iteration schemes of the implicit methods.
ITERATIONS: tuple[str, ...] = ("newton", "modified-newton")

_CHECK_EVERY = 256

# LAPACK banded Cholesky (solve, factor, solve with factor); the scipy wrappers
# around them cost more than the tiny tridiagonal solves themselves.
_PBSV, _PBTRF, _PBTRS = sla.get_lapack_funcs(("pbsv", "pbtrf", "pbtrs"), dtype=np.float64)


def _solve_spd_banded(ab: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Solve the SPD tridiagonal system in upper banded form ``ab`` (2, n)."""
    _, x, info = _PBSV(ab, b, lower=0)
    if info != 0:
        raise np.linalg.LinAlgError(f"effective tangent not positive definite (info {info})")
    return x


class ConvergenceError(StabilityError):
    """An implicit step that did not converge even after the allowed halvings.

    Attributes
    ----------
    time : float
        Start of the failing (sub)step, s.
    story : int
        Story (0 = bottom) whose top level carries the largest residual.
    residual : float
        That residual, N.
    """

    def __init__(self, message: str, time: float, story: int, residual: float):
        super().__init__(message)
        self.time = time
        self.story = story
        self.residual = residual


@dataclass(frozen=True)
class SolverOptions:
    """Newton–Raphson settings of the implicit inelastic methods.

    Attributes
    ----------
    iteration : str
        ``"newton"`` (tangent re-formed each iteration) or ``"modified-newton"``
        (tangent of the start of the step).
    force_tolerance : float
        Residual force over the reference force F_ref (module docstring).
    energy_tolerance : float
        Energy of the pending correction over that of the first iterate.
    max_iterations : int
        Largest number of Newton corrections in one (sub)step.
    max_halvings : int
        Largest number of successive halvings of a step that does not converge.
    """

    iteration: str = "newton"
    force_tolerance: float = 1e-8
    energy_tolerance: float = 1e-14
    max_iterations: int = 25
    max_halvings: int = 6

    def check(self) -> None:
        """Raise InputError for a setting out of range."""
        if self.iteration not in ITERATIONS:
            raise InputError(
                f"must be one of {', '.join(ITERATIONS)}, got {self.iteration!r}", "iteration"
            )
        for name in ("force_tolerance", "energy_tolerance"):
            value = getattr(self, name)
            if not (math.isfinite(value) and 0.0 < value < 1.0):
                raise InputError(f"must lie in (0, 1), got {value!r}", name)
        if int(self.max_iterations) != self.max_iterations or self.max_iterations < 1:
            raise InputError(
                f"must be an integer >= 1, got {self.max_iterations!r}", "max_iterations"
            )
        if int(self.max_halvings) != self.max_halvings or not 0 <= self.max_halvings <= 30:
            raise InputError(
                f"must be an integer in [0, 30], got {self.max_halvings!r}", "max_halvings"
            )


@dataclass(frozen=True, eq=False)
class StoryDemands:
    """Inelastic demand of each story (arrays of shape (n,), bottom to top).

    Attributes
    ----------
    law : tuple of str
        Spring law of each story.
    yield_drift : ndarray
        δ_y = F_y / k, m (``inf`` for elastic stories).
    peak_drift : ndarray
        Largest |drift| over every committed (sub)step, m.
    peak_drift_signed : ndarray
        The drift at that instant, with its sign, m.
    peak_drift_time : ndarray
        When it occurred, s.
    ductility : ndarray
        μ = peak |drift| / δ_y (NaN for elastic stories).
    residual_drift : ndarray
        Drift at the last sample (after the free-vibration tail), m.
    yield_excursions : ndarray of int
        Number of yield excursions (see :mod:`thist.springs`).
    plastic_deformation : ndarray
        Cumulative plastic deformation Σ|Δ(δ − V/k)|, m.
    hysteretic_energy : ndarray
        Energy dissipated by the story, J.
    """

    law: tuple[str, ...]
    yield_drift: np.ndarray
    peak_drift: np.ndarray
    peak_drift_signed: np.ndarray
    peak_drift_time: np.ndarray
    ductility: np.ndarray
    residual_drift: np.ndarray
    yield_excursions: np.ndarray
    plastic_deformation: np.ndarray
    hysteretic_energy: np.ndarray


@dataclass(frozen=True)
class ConvergenceStats:
    """How hard the implicit solver worked (all zero iterations for explicit runs).

    Attributes
    ----------
    steps : int
        Number of record steps.
    iterations : int
        Newton corrections over the whole run.
    max_iterations_in_step : int
        Most corrections in one (sub)step.
    subdivided_steps : int
        Record steps that needed halving.
    substeps : int
        Committed (sub)steps in total (= steps without halving).
    deepest_halving : int
        Largest number of successive halvings used.
    """

    steps: int
    iterations: int
    max_iterations_in_step: int
    subdivided_steps: int
    substeps: int
    deepest_halving: int


@dataclass(frozen=True, eq=False)
class InelasticSolution(Solution):
    """Histories and demands of one inelastic run, SI, sampled every Δt.

    ``u``, ``v``, ``a`` (from :class:`~thist.methods.base.Solution`) are relative
    to the base, shape (N, n). N includes the free-vibration tail.

    Attributes
    ----------
    t : ndarray, shape (N,)
        Time, s.
    ag : ndarray, shape (N,)
        Ground acceleration used, m/s² (zero over the tail).
    drift : ndarray, shape (N, n)
        Story drift δ_i = u_i − u_{i−1}, m.
    shear : ndarray, shape (N, n)
        Story shear V_i (spring force), N.
    restoring_force : ndarray, shape (N, n)
        Lateral restoring force at each level, f_j = V_j − V_{j+1}, N.
    story : StoryDemands
    energy : thist.energy.EnergyBalance
        Energy histories; ``energy.balance_error`` is the quality figure.
    convergence : ConvergenceStats
    method : str
        Method name.
    method_parameters : dict
        Its parameters (α_m, α_f, β, γ or those of the preset).
    damping : str
        Damping choice, one of :data:`DAMPING_CHOICES`.
    rayleigh : tuple of float
        (a0 in 1/s, a1 in s).
    options : SolverOptions
    """

    t: np.ndarray
    ag: np.ndarray
    drift: np.ndarray
    shear: np.ndarray
    restoring_force: np.ndarray
    story: StoryDemands
    energy: EnergyBalance
    convergence: ConvergenceStats
    method: str
    method_parameters: dict = field(default_factory=dict)
    damping: str = "initial"
    rayleigh: tuple[float, float] = (0.0, 0.0)
    options: SolverOptions = SolverOptions()


# -- chain algebra (tridiagonal, vectorised) ------------------------------------------


def story_drift(u: np.ndarray) -> np.ndarray:
    """Story drifts δ_i = u_i − u_{i−1} (u_{−1} = 0) along the last axis, m."""
    d = np.array(u, dtype=float)
    d[..., 1:] -= u[..., :-1]
    return d


def level_forces(shear: np.ndarray) -> np.ndarray:
    """Level forces f_j = V_j − V_{j+1} (V_n = 0) from story shears along the last axis, N."""
    f = np.array(shear, dtype=float)
    f[..., :-1] -= shear[..., 1:]
    return f


def _banded(diag_mass: np.ndarray, story: np.ndarray) -> np.ndarray:
    """Upper banded form (2, n) of diag(diag_mass) + chain(story)."""
    ab = np.empty((2, story.size))
    ab[1] = diag_mass + story
    ab[1, :-1] += story[1:]
    ab[0, 0] = 0.0
    ab[0, 1:] = -story[1:]
    return ab


def _omega_max(masses: np.ndarray, k: np.ndarray) -> float:
    """Highest circular frequency of the chain with story stiffnesses k, rad/s."""
    n = masses.size
    d = (k + np.append(k[1:], 0.0)) / masses
    if n == 1:
        return math.sqrt(d[0])
    e = -k[1:] / np.sqrt(masses[:-1] * masses[1:])
    lam = sla.eigvalsh_tridiagonal(d, e, select="i", select_range=(n - 1, n - 1))
    return math.sqrt(max(float(lam[-1]), 0.0))


# -- the implicit step: one clean unit ---------------------------------------------------


class _NotConverged(Exception):
    def __init__(self, residual: np.ndarray, iterations: int):
        super().__init__("not converged")
        self.residual = residual
        self.iterations = iterations


@dataclass
class _StepResult:
    u: np.ndarray
    v: np.ndarray
    a: np.ndarray
    shear: np.ndarray
    iterations: int


def alpha_step(
    coefficients: tuple[float, float, float, float],
    dt: float,
    masses: np.ndarray,
    springs: SpringState,
    a0: float,
    damper: np.ndarray,
    u: np.ndarray,
    v: np.ndarray,
    a: np.ndarray,
    fs: np.ndarray,
    p0: np.ndarray,
    p1: np.ndarray,
    options: SolverOptions,
    force_scale: float,
) -> _StepResult:
    """One generalized-α step with Newton–Raphson; leaves the springs uncommitted.

    Parameters
    ----------
    coefficients : tuple
        (α_m, α_f, β, γ) of the method.
    dt : float
        Step, s.
    masses : ndarray, shape (n,)
        Level masses, kg.
    springs : SpringState
        Committed at the start of the step; holds the converged trial on return.
    a0 : float
        Mass-proportional damping coefficient, 1/s.
    damper : ndarray, shape (n,)
        Story dashpot coefficients a1·k (initial or tangent) for this step, N·s/m.
    u, v, a, fs : ndarray, shape (n,)
        State at the start: displacement (m), velocity (m/s), acceleration
        (m/s²), level restoring force (N).
    p0, p1 : ndarray, shape (n,)
        Effective load at the start and the end of the step, N.
    options : SolverOptions
    force_scale : float
        Peak effective load of the record, N (part of F_ref).

    Raises
    ------
    _NotConverged
        After ``options.max_iterations`` corrections without convergence.
    """
    am, af, beta, gamma = coefficients
    c1 = 1.0 / (beta * dt * dt)
    c2 = gamma / (beta * dt)
    u_pred = u + dt * v + dt * dt * (0.5 - beta) * a
    v_pred = v + dt * (1.0 - gamma) * a

    def damping_force(vel: np.ndarray) -> np.ndarray:
        return a0 * masses * vel + level_forces(damper * story_drift(vel))

    known = (1.0 - af) * p1 + af * p0 - am * masses * a - af * (damping_force(v) + fs)
    diag_mass = ((1.0 - am) * c1 + (1.0 - af) * c2 * a0) * masses
    modified = options.iteration == "modified-newton"
    if modified:
        ab_mod = _banded(diag_mass, (1.0 - af) * (c2 * damper + springs.tangent))
        factor, info = _PBTRF(ab_mod)
        if info != 0:
            raise np.linalg.LinAlgError(f"effective tangent not positive definite (info {info})")
    u1 = u.copy()
    e_first = 0.0
    for it in range(options.max_iterations + 1):
        shear, tangent = springs.trial(story_drift(u1))
        a1 = c1 * (u1 - u_pred)
        v1 = v_pred + gamma * dt * a1
        fs1 = level_forces(shear)
        inertia = (1.0 - am) * masses * a1
        residual = known - inertia - (1.0 - af) * (damping_force(v1) + fs1)
        if not np.isfinite(residual).all():
            raise _NotConverged(residual, it)
        if modified:
            delta, _ = _PBTRS(factor, residual)
            kdiag = ab_mod[1]
        else:
            # the first correction uses the committed tangent: at the committed
            # drift the trial of a yielding story reports the elastic branch
            kt = springs.tangent if it == 0 else tangent
            ab = _banded(diag_mass, (1.0 - af) * (c2 * damper + kt))
            delta = _solve_spd_banded(ab, residual)
            kdiag = ab[1]
        energy = abs(float(residual @ delta))
        if it == 0:
            e_first = energy
        f_ref = max(force_scale, float(np.abs(fs1).max()), float(np.abs(inertia).max()))
        f_tol = options.force_tolerance * f_ref
        e_floor = f_tol * f_tol / float(kdiag.max())
        if float(np.abs(residual).max()) <= f_tol and energy <= options.energy_tolerance * max(
            e_first, e_floor
        ):
            return _StepResult(u1, v1, a1, shear, it)
        if not np.isfinite(delta).all():
            break
        u1 = u1 + delta
    raise _NotConverged(residual, it)


def _convergence_error(
    name: str, t0: float, dt: float, depth: int, iterations: int, r: np.ndarray
) -> ConvergenceError:
    """The error of a step that did not converge after ``depth`` halvings."""
    j = int(np.nanargmax(np.abs(r))) if np.any(np.isfinite(r)) else 0
    rj = float(r[j])
    return ConvergenceError(
        f"{name}: the Newton-Raphson iteration did not converge in the "
        f"step from t = {t0:.6g} s (step {dt:.4g} s after {depth} halvings, "
        f"{iterations} corrections); the largest residual, {rj:.4g} N, is at "
        f"the top of story {j} (0 = bottom). The run was stopped: reduce the time "
        "step, allow more iterations or halvings, or check the spring parameters",
        t0,
        j,
        rj,
    )


class _ImplicitRun:
    """Running state of an implicit inelastic run, with halving of failed steps."""

    def __init__(
        self,
        method: Newmark | HHT | GeneralizedAlpha,
        masses: np.ndarray,
        springs: SpringState,
        a0: float,
        a1: float,
        damping: str,
        options: SolverOptions,
        force_scale: float,
    ):
        self.method = method
        self.coefficients = method.coefficients
        self.masses = masses
        self.springs = springs
        self.a0 = a0
        self.a1 = a1
        self.damping = damping
        self.options = options
        self.force_scale = force_scale
        self.k0 = springs.params.stiffness
        self.iterations = 0
        self.max_iterations = 0
        self.substeps = 0
        self.deepest = 0
        self.e_input = 0.0
        self.e_damping = 0.0
        n = masses.size
        self.peak_signed = np.zeros(n)
        self.peak_time = np.zeros(n)

    def start(self, u0: np.ndarray, v0: np.ndarray, p0: np.ndarray) -> None:
        self.u = u0.copy()
        self.v = v0.copy()
        self.springs.trial(story_drift(u0))
        self.springs.commit()
        self._track_peaks(0.0)
        self.fs = level_forces(self.springs.force)
        self.fd = self._damping_force(self._damper(), v0)
        self.a = (p0 - self.fd - self.fs) / self.masses

    def _damper(self) -> np.ndarray:
        k = self.k0 if self.damping == "initial" else self.springs.tangent
        return self.a1 * k

    def _damping_force(self, damper: np.ndarray, vel: np.ndarray) -> np.ndarray:
        return self.a0 * self.masses * vel + level_forces(damper * story_drift(vel))

    def _track_peaks(self, t: float) -> None:
        drift = self.springs.drift
        grew = np.abs(drift) > np.abs(self.peak_signed)
        self.peak_signed = np.where(grew, drift, self.peak_signed)
        self.peak_time = np.where(grew, t, self.peak_time)

    def advance(self, t0: float, dt: float, p0: np.ndarray, p1: np.ndarray, depth: int = 0):
        """Advance by dt from t0, halving on non-convergence; commits the springs."""
        damper = self._damper()
        try:
            res = alpha_step(
                self.coefficients,
                dt,
                self.masses,
                self.springs,
                self.a0,
                damper,
                self.u,
                self.v,
                self.a,
                self.fs,
                p0,
                p1,
                self.options,
                self.force_scale,
            )
        except _NotConverged as exc:
            self.iterations += exc.iterations
            if depth >= self.options.max_halvings:
                raise _convergence_error(
                    self.method.name, t0, dt, depth, exc.iterations, exc.residual
                ) from None
            pm = 0.5 * (p0 + p1)
            self.advance(t0, 0.5 * dt, p0, pm, depth + 1)
            self.advance(t0 + 0.5 * dt, 0.5 * dt, pm, p1, depth + 1)
            return
        # accept: energies by the trapezoidal rule over this (sub)step
        du = res.u - self.u
        self.e_input += 0.5 * float(du @ (p0 + p1))
        # damping force at the start as the dynamics felt it (the previous step's C,
        # through a[n]); with it the average-acceleration balance closes to round-off
        fd1 = self._damping_force(damper, res.v)
        self.e_damping += 0.5 * float(du @ (self.fd + fd1))
        self.fd = fd1
        self.springs.commit()
        self._track_peaks(t0 + dt)
        self.u, self.v, self.a = res.u, res.v, res.a
        self.fs = level_forces(res.shear)
        self.iterations += res.iterations
        self.max_iterations = max(self.max_iterations, res.iterations)
        self.substeps += 1
        self.deepest = max(self.deepest, depth)


# -- the compiled path (thist.methods.inelastic_kernel) -----------------------------------


def _kernel():
    """The compiled kernels' module, imported (with numba) on first use only."""
    from thist.methods import inelastic_kernel

    return inelastic_kernel


def use_compiled(compiled: bool | None) -> bool:
    """Whether a run uses the compiled kernels.

    Parameters
    ----------
    compiled : bool or None
        None: the kernels when numba is available (and ``THIST_NO_NUMBA`` is not
        set); True: require them; False: the pure-numpy path.
    """
    if compiled is None:
        return _kernel().AVAILABLE
    if compiled and not _kernel().AVAILABLE:
        raise InputError(
            "the compiled kernels need numba (a dependency of thist that did not "
            "import here), and THIST_NO_NUMBA must not be set",
            "compiled",
        )
    return bool(compiled)


class _CompiledRun:
    """Arrays of one run of the compiled kernels, advanced chunk by chunk of samples.

    Implicit methods: :meth:`start` sets sample 0, each :meth:`run` call of a
    chunk ``ag[i0 … i0+L]`` writes samples i0+1 … i0+L. Central difference:
    :meth:`start` sets u[−1] and u[0], each call with ``ag[i0 … i0+L−1]`` writes
    samples i0 … i0+L−1 (step i completes sample i).
    """

    def __init__(
        self,
        method: Method,
        masses: np.ndarray,
        springs: SpringParameters,
        a0: float,
        a1: float,
        damping: str,
        options: SolverOptions,
        force_scale: float,
        bound: float,
        dt: float,
        n_steps: int,
    ):
        n = masses.size
        self.method = method
        self.explicit = isinstance(method, CentralDifference)
        self.params = springs
        self.m = np.ascontiguousarray(masses, dtype=float)
        self.k = np.ascontiguousarray(springs.stiffness, dtype=float)
        self.fy = np.ascontiguousarray(springs.yield_force, dtype=float)
        self.alpha = np.ascontiguousarray(springs.post_yield_ratio, dtype=float)
        self.hard = self.alpha * self.k / (1.0 - self.alpha)
        self.codes = springs.codes.astype(np.int64)
        self.a0, self.a1 = a0, a1
        self.tangent = damping == "tangent"
        self.options = options
        self.force_scale = force_scale
        self.bound = bound
        self.dt = dt
        self.n_steps = n_steps
        self.springs = _kernel().initial_springs(self.k, springs.yield_drift)
        self.trial = np.zeros((_kernel().N_TRIAL_ROWS, n))
        self.state = np.zeros((5, n))
        self.counters = np.zeros(len(_kernel().COUNTER_NAMES))
        self.counters[_kernel().COUNTER_NAMES.index("block_finite")] = 1.0
        self.peaks = np.zeros((2, n))
        self.err = np.zeros(4 + n)
        if not self.explicit:
            self.coef = np.array(method.coefficients, dtype=float)

    def counter(self, name: str) -> float:
        """A counter of the run (see ``inelastic_kernel.COUNTER_NAMES``)."""
        return float(self.counters[_kernel().COUNTER_NAMES.index(name)])

    def start(self, u0: np.ndarray, v0: np.ndarray, ag0: float) -> None:
        """Commit the springs at u0 and set the first state (v0 the initial velocity)."""
        p0 = -(ag0 * self.m)
        args = (self.m, self.k, self.fy, self.alpha, self.hard, self.codes, self.a0, self.a1)
        _kernel().implicit_start(
            *args, self.tangent, self.springs, self.trial, self.state, u0, v0, p0
        )
        drift = self.springs[0]
        if self.explicit:
            # the pure path's start (same expressions): u[-1] from a[0] at equilibrium
            c = self.a1 * (self.springs[2] if self.tangent else self.k)
            fs = level_forces(self.springs[1])
            a_start = (p0 - self.a0 * self.m * v0 - level_forces(c * story_drift(v0)) - fs) / self.m
            self.state[0] = u0 - self.dt * v0 + 0.5 * self.dt * self.dt * a_start
            self.state[1] = u0
            self.state[3] = fs
            self.peaks[0] = drift
        else:
            self.peaks[0] = np.where(np.abs(drift) > 0.0, drift, 0.0)
        block = np.abs(u0)
        i_max = _kernel().COUNTER_NAMES.index("block_max")
        self.counters[i_max] = float(block.max()) if np.all(np.isfinite(block)) else 0.0
        if not np.all(np.isfinite(u0)):
            self.counters[_kernel().COUNTER_NAMES.index("block_finite")] = 0.0

    def run(
        self,
        ag: np.ndarray,
        i0: int,
        u: np.ndarray,
        v: np.ndarray,
        a: np.ndarray,
        shear: np.ndarray,
        scalars: np.ndarray,
        f_damp: np.ndarray | None = None,
    ) -> None:
        """Advance over a chunk of the record (see the class docstring); raises as the pure path.

        ``scalars`` (L, 3) receives the spring work, input and damping energy at
        each sample (central difference: the work only; its energies follow from
        ``f_damp``, the damping force at each sample).
        """
        name = self.method.name
        args = (self.m, self.k, self.fy, self.alpha, self.hard, self.codes, self.a0, self.a1)
        run_state = (self.bound, self.springs, self.trial, self.state, self.counters, self.peaks)
        chunk = (ag, i0, self.n_steps, u, v, a, shear, scalars)
        if self.explicit:
            kernel_args = (self.dt, *args, self.tangent, *run_state, *chunk, f_damp, self.err)
            status, _ = _kernel().central_chunk(*kernel_args)
        else:
            o = self.options
            solver = (
                o.iteration == "modified-newton",
                o.force_tolerance,
                o.energy_tolerance,
                int(o.max_iterations),
                int(o.max_halvings),
                self.force_scale,
            )
            kernel_args = (self.coef, self.dt, *args, self.tangent, *solver, *run_state)
            status, _ = _kernel().implicit_chunk(*kernel_args, *chunk, self.err)
        if status == _kernel().OK:
            return
        e = self.err
        if status == _kernel().NOT_CONVERGED:
            raise _convergence_error(
                name, float(e[0]), float(e[1]), int(e[2]), int(e[3]), e[4:].copy()
            )
        if status == _kernel().NOT_POSITIVE:
            raise np.linalg.LinAlgError(
                f"effective tangent not positive definite (info {int(e[1])})"
            )
        # growth: the same message as check_finite_growth on the failing block
        check_finite_growth(
            np.array([float(e[1]) if e[0] == 1.0 else math.nan]), self.bound, float(e[2]), name
        )

    def spring_state(self) -> SpringState:
        """The committed spring state as a :class:`~thist.springs.SpringState`."""
        state = self.params.new_state()
        _kernel().unpack_springs(self.springs, state)
        return state

    def stats(self) -> ConvergenceStats:
        """Convergence statistics so far (all zero iterations for central difference)."""
        if self.explicit:
            return ConvergenceStats(self.n_steps - 1, 0, 0, 0, self.n_steps - 1, 0)
        c = self.counter
        return ConvergenceStats(
            self.n_steps - 1,
            int(c("iterations")),
            int(c("max_iterations")),
            int(c("subdivided")),
            int(c("substeps")),
            int(c("deepest")),
        )


def _compiled_histories(run: _CompiledRun, ag: np.ndarray, m: np.ndarray, u0, v0) -> tuple:
    """Full histories of a run by the compiled kernels, in one chunk."""
    n_steps, n = ag.size, m.size
    u = np.empty((n_steps, n))
    v = np.empty((n_steps, n))
    a = np.empty((n_steps, n))
    shear = np.empty((n_steps, n))
    scalars = np.empty((n_steps, 3))
    run.start(u0, v0, float(ag[0]))
    if run.explicit:
        f_damp = np.empty((n_steps, n))
        run.run(ag, 0, u, v, a, shear, scalars, f_damp)
        p = -np.outer(ag, m)
        e_input = _cumulative_work(u, p)
        e_damping = _cumulative_work(u, f_damp)
    else:
        u[0], v[0], a[0], shear[0] = run.state[0], run.state[1], run.state[2], run.springs[1]
        scalars[0] = (run.springs[6].sum(), 0.0, 0.0)
        run.run(ag, 0, u[1:], v[1:], a[1:], shear[1:], scalars[1:])
        e_input = scalars[:, 1].copy()
        e_damping = scalars[:, 2].copy()
    work = scalars[:, 0].copy()
    state = run.spring_state()
    return (
        u,
        v,
        a,
        shear,
        work,
        e_input,
        e_damping,
        state,
        run.peaks[0].copy(),
        run.peaks[1].copy(),
    )


# -- the public entry point --------------------------------------------------------------


def integrate_inelastic(
    masses: np.ndarray,
    springs: SpringParameters,
    ag: np.ndarray,
    dt: float,
    method: Method | str = "newmark-average",
    *,
    rayleigh: tuple[float, float] = (0.0, 0.0),
    damping: str = "initial",
    options: SolverOptions | None = None,
    u0: np.ndarray | None = None,
    v0: np.ndarray | None = None,
    free_vibration_tail: float = 0.0,
    compiled: bool | None = None,
) -> InelasticSolution:
    """Inelastic response of a shear chain with yielding story springs to base motion.

    Parameters
    ----------
    masses : array_like, shape (n,)
        Level masses, kg, bottom to top.
    springs : SpringParameters
        Story spring laws (:func:`thist.springs.story_springs`), n stories.
    ag : array_like, shape (N,)
        Ground acceleration sampled every ``dt``, m/s².
    dt : float
        Time step, s (also the output sampling).
    method : Method or str
        A method object from :func:`thist.methods.get_method` or its name:
        ``newmark-average``, ``newmark-linear``, ``newmark`` (β > 0), ``hht``,
        ``generalized-alpha`` or ``central-difference``.
    rayleigh : (float, float)
        Rayleigh coefficients (a0 in 1/s, a1 in s), both ≥ 0.
    damping : str
        ``"initial"`` or ``"tangent"`` (see the module docstring, and the
        spurious-damping problem of ``"initial"``, Charney 2008).
    options : SolverOptions, optional
        Newton–Raphson settings (implicit methods only).
    u0, v0 : array_like, shape (n,), optional
        Initial displacement (m, reached monotonically from zero by the springs)
        and velocity (m/s); rest by default.
    free_vibration_tail : float
        Seconds of zero ground acceleration appended to the record, so that the
        residual drift is read after the motion has died down. Default 0.
    compiled : bool, optional
        Run the per-step work in the compiled kernels of
        :mod:`thist.methods.inelastic_kernel` (same algorithm, same results to
        round-off). Default: when numba is available and the environment
        variable ``THIST_NO_NUMBA`` is not set; False forces the pure-numpy path.

    Returns
    -------
    InelasticSolution

    Raises
    ------
    InputError
        Bad arrays, coefficients, choices or an unsupported method.
    StabilityError
        Δt above the method's stability limit for the initial stiffness, or a
        run growing without bound.
    ConvergenceError
        A step of an implicit method that did not converge after the halvings.
    """
    run = prepare_run(
        masses, springs, ag, dt, method, rayleigh, damping, options, u0, v0, free_vibration_tail
    )
    method, m, n_steps = run.method, run.masses, run.ag.size
    ag = run.ag.copy()  # the solution owns its record (the caller's array may change)
    a0, a1, options, u0, v0, bound = run.a0, run.a1, run.options, run.u0, run.v0, run.bound
    k0 = springs.stiffness
    if use_compiled(compiled):
        compiled_run = run.compiled_run()
        core = _compiled_histories(compiled_run, ag, m, u0, v0)
        stats = compiled_run.stats()
    elif isinstance(method, CentralDifference):
        p = -np.outer(ag, m)
        core = _central_difference(m, springs, p, dt, a0, a1, damping, u0, v0, method.name, bound)
        stats = ConvergenceStats(n_steps - 1, 0, 0, 0, n_steps - 1, 0)
    else:
        p = -np.outer(ag, m)
        core, stats = _implicit(m, springs, p, dt, method, a0, a1, damping, options, u0, v0, bound)
    u, v, a, shear, work, e_input, e_damping, state, peak_signed, peak_time = core

    t = np.arange(n_steps) * dt
    drift = story_drift(u)
    kinetic = 0.5 * (v**2) @ m
    strain = (shear**2 / (2.0 * k0)).sum(axis=1)
    e_start = kinetic[0] + work[0]  # initial energy, counted as input at t = 0
    energy = EnergyBalance(t, e_input + e_start, kinetic, e_damping, strain, work - strain)
    story = StoryDemands(
        springs.law,
        springs.yield_drift,
        state.peak_drift.copy(),
        peak_signed,
        peak_time,
        state.ductility,
        drift[-1].copy(),
        state.excursions.copy(),
        state.plastic_deformation.copy(),
        state.hysteretic_energy,
    )
    return InelasticSolution(
        u,
        v,
        a,
        t,
        ag,
        drift,
        shear,
        level_forces(shear),
        story,
        energy,
        stats,
        method.name,
        method.parameters(),
        damping,
        (a0, a1),
        options,
    )


@dataclass(frozen=True, eq=False)
class PreparedRun:
    """A validated inelastic run before its first step (see :func:`prepare_run`).

    Attributes
    ----------
    method : Method
    springs : SpringParameters
    masses : ndarray, shape (n,)
        Level masses, kg.
    ag : ndarray, shape (N,)
        Ground acceleration with the free-vibration tail, m/s².
    dt : float
        Time step, s.
    a0, a1 : float
        Rayleigh coefficients, 1/s and s.
    damping : str
    options : SolverOptions
    u0, v0 : ndarray, shape (n,)
        Initial displacement (m) and velocity (m/s).
    bound : float
        Displacement no stable run can reach, m (the growth check).
    force_scale : float
        Peak effective load |m ü_g| over the record, N.
    """

    method: Method
    springs: SpringParameters
    masses: np.ndarray
    ag: np.ndarray
    dt: float
    a0: float
    a1: float
    damping: str
    options: SolverOptions
    u0: np.ndarray
    v0: np.ndarray
    bound: float
    force_scale: float

    def compiled_run(self) -> _CompiledRun:
        """A fresh run of the compiled kernels (numba must be available)."""
        return _CompiledRun(
            self.method,
            self.masses,
            self.springs,
            self.a0,
            self.a1,
            self.damping,
            self.options,
            self.force_scale,
            self.bound,
            self.dt,
            self.ag.size,
        )


def prepare_run(
    masses: np.ndarray,
    springs: SpringParameters,
    ag: np.ndarray,
    dt: float,
    method: Method | str = "newmark-average",
    rayleigh: tuple[float, float] = (0.0, 0.0),
    damping: str = "initial",
    options: SolverOptions | None = None,
    u0: np.ndarray | None = None,
    v0: np.ndarray | None = None,
    free_vibration_tail: float = 0.0,
) -> PreparedRun:
    """Validate the arguments of :func:`integrate_inelastic` and run its checks.

    Same parameters and errors as :func:`integrate_inelastic`; no step is taken
    and no (N, n) array is formed.
    """
    options = SolverOptions() if options is None else options
    options.check()
    if isinstance(method, str):
        method = get_method(method)
    m = np.asarray(masses, dtype=float)
    if m.ndim != 1 or m.size != springs.n:
        raise InputError(f"must be one mass per story ({springs.n}), got shape {m.shape}", "masses")
    bad = np.flatnonzero(~(np.isfinite(m) & (m > 0.0)))
    if bad.size:
        raise InputError(f"must be a finite mass > 0 kg, got {m[bad[0]]!r}", f"masses[{bad[0]}]")
    n = m.size
    ag = np.asarray(ag, dtype=float)
    # min and max carry any nan or inf, without an (N,) temporary
    finite = ag.size > 0 and math.isfinite(float(ag.min())) and math.isfinite(float(ag.max()))
    if ag.ndim != 1 or ag.size < 2 or not finite:
        raise InputError("must be at least two finite accelerations", "ag")
    if not (math.isfinite(dt) and dt > 0.0):
        raise InputError(f"must be a finite time step > 0 s, got {dt!r}", "dt")
    a0, a1 = (float(x) for x in rayleigh)
    if not (math.isfinite(a0) and math.isfinite(a1) and a0 >= 0.0 and a1 >= 0.0):
        raise InputError(
            f"Rayleigh coefficients must be finite and >= 0, got {rayleigh!r}", "rayleigh"
        )
    if damping not in DAMPING_CHOICES:
        raise InputError(f"must be one of {', '.join(DAMPING_CHOICES)}, got {damping!r}", "damping")
    if not (math.isfinite(free_vibration_tail) and free_vibration_tail >= 0.0):
        raise InputError(
            f"must be a duration >= 0 s, got {free_vibration_tail!r}", "free_vibration_tail"
        )
    u0 = _initial(u0, n, "u0")
    v0 = _initial(v0, n, "v0")
    method.check_parameters()

    n_tail = int(round(free_vibration_tail / dt))
    if n_tail:
        ag = np.concatenate([ag, np.zeros(n_tail)])
    n_steps = ag.size
    # the largest |p| = |ü_g| m over the record, without forming p = −ü_g m (N, n)
    p_peak = max(float(ag.max()), -float(ag.min())) * m[None, :]
    k0 = springs.stiffness
    omega_max = _omega_max(m, k0)
    dt_cr = method.stability_limit(omega_max, 0.0)
    if dt > dt_cr:
        raise StabilityError(
            f"{method.name}: time step {dt:.4g} s exceeds the stability limit {dt_cr:.4g} s "
            f"set by the highest mode of the initial stiffness (T = {2 * math.pi / omega_max:.4g} "
            f"s); use a step of at most {0.9 * dt_cr:.4g} s"
        )
    bound = growth_bound(np.diag(m), chain_stiffness(k0), p_peak, u0, v0, omega_max, n_steps * dt)
    check_inelastic_method(method)
    force_scale = float(np.max(p_peak))
    return PreparedRun(
        method, springs, m, ag, dt, a0, a1, damping, options, u0, v0, bound, force_scale
    )


def check_inelastic_method(method: Method) -> None:
    """Raise InputError unless ``method`` has an inelastic form (implicit with β > 0, or CD)."""
    if isinstance(method, CentralDifference):
        return
    if isinstance(method, Newmark | HHT | GeneralizedAlpha):
        if method.coefficients[2] <= 0.0:
            raise InputError(
                "an implicit inelastic run needs beta > 0; use central-difference for the "
                "explicit nonlinear path",
                "method",
            )
        return
    raise InputError(
        f"method {method.name!r} has no inelastic form; use one of newmark-average, "
        "newmark-linear, newmark, hht, generalized-alpha, central-difference",
        "method",
    )


def _initial(x: np.ndarray | None, n: int, name: str) -> np.ndarray:
    if x is None:
        return np.zeros(n)
    arr = np.asarray(x, dtype=float)
    if arr.shape != (n,) or not np.all(np.isfinite(arr)):
        raise InputError(f"must be {n} finite numbers", name)
    return arr.copy()


def _implicit(
    m: np.ndarray,
    springs: SpringParameters,
    p: np.ndarray,
    dt: float,
    method: Newmark | HHT | GeneralizedAlpha,
    a0: float,
    a1: float,
    damping: str,
    options: SolverOptions,
    u0: np.ndarray,
    v0: np.ndarray,
    bound: float,
) -> tuple[tuple, ConvergenceStats]:
    n_steps, n = p.shape
    state = springs.new_state()
    run = _ImplicitRun(method, m, state, a0, a1, damping, options, float(np.max(np.abs(p))))
    u = np.empty((n_steps, n))
    v = np.empty((n_steps, n))
    a = np.empty((n_steps, n))
    shear = np.empty((n_steps, n))
    work = np.empty(n_steps)
    e_input = np.empty(n_steps)
    e_damping = np.empty(n_steps)
    run.start(u0, v0, p[0])
    subdivided = 0

    def store(i: int) -> None:
        u[i], v[i], a[i], shear[i] = run.u, run.v, run.a, state.force
        work[i] = state.work.sum()
        e_input[i], e_damping[i] = run.e_input, run.e_damping

    store(0)
    for i in range(n_steps - 1):
        before = run.substeps
        run.advance(i * dt, dt, p[i], p[i + 1])
        subdivided += run.substeps - before > 1
        store(i + 1)
        if (i + 1) % _CHECK_EVERY == 0:
            check_finite_growth(u[i + 1 - _CHECK_EVERY : i + 2], bound, (i + 1) * dt, method.name)
    check_finite_growth(u[-_CHECK_EVERY:], bound, (n_steps - 1) * dt, method.name)
    stats = ConvergenceStats(
        n_steps - 1, run.iterations, run.max_iterations, subdivided, run.substeps, run.deepest
    )
    core = (u, v, a, shear, work, e_input, e_damping, state, run.peak_signed, run.peak_time)
    return core, stats


def _central_difference(
    m: np.ndarray,
    springs: SpringParameters,
    p: np.ndarray,
    dt: float,
    a0: float,
    a1: float,
    damping: str,
    u0: np.ndarray,
    v0: np.ndarray,
    name: str,
    bound: float,
) -> tuple:
    """Explicit central difference with the restoring force at u[n] (module docstring)."""
    n_steps, n = p.shape
    state = springs.new_state()
    k0 = springs.stiffness
    state.trial(story_drift(u0))
    state.commit()
    shear = np.empty((n_steps, n))
    work = np.empty(n_steps)
    f_damp = np.empty((n_steps, n))  # C_n u̇[n], with the damping matrix of step n
    u_ext = np.empty((n_steps + 2, n))  # u_ext[j] = u[j - 1]
    peak_signed = state.drift.copy()
    peak_time = np.zeros(n)
    fs = level_forces(state.force)

    def damper() -> np.ndarray:
        return a1 * (k0 if damping == "initial" else state.tangent)

    c = damper()
    a_start = (p[0] - a0 * m * v0 - level_forces(c * story_drift(v0)) - fs) / m
    u_ext[0] = u0 - dt * v0 + 0.5 * dt * dt * a_start
    u_ext[1] = u0
    shear[0] = state.force
    work[0] = state.work.sum()
    m_dt2 = m / (dt * dt)
    for i in range(n_steps):
        c = damper()
        ab = _banded(m_dt2 + 0.5 * a0 * m / dt, c / (2.0 * dt))
        u_prev = u_ext[i]
        c_prev = a0 * m * u_prev + level_forces(c * story_drift(u_prev))
        rhs = p[i] - fs + 2.0 * m_dt2 * u_ext[i + 1] - (m_dt2 * u_prev - c_prev / (2.0 * dt))
        u_ext[i + 2] = _solve_spd_banded(ab, rhs)
        vel = (u_ext[i + 2] - u_prev) / (2.0 * dt)
        f_damp[i] = a0 * m * vel + level_forces(c * story_drift(vel))
        if i + 1 < n_steps:
            state.trial(story_drift(u_ext[i + 2]))
            state.commit()
            fs = level_forces(state.force)
            shear[i + 1] = state.force
            work[i + 1] = state.work.sum()
            grew = np.abs(state.drift) > np.abs(peak_signed)
            peak_signed = np.where(grew, state.drift, peak_signed)
            peak_time = np.where(grew, (i + 1) * dt, peak_time)
        if (i + 1) % _CHECK_EVERY == 0:
            check_finite_growth(u_ext[i + 2 - _CHECK_EVERY : i + 3], bound, i * dt, name)
    check_finite_growth(u_ext[-_CHECK_EVERY:], bound, (n_steps - 1) * dt, name)
    u = u_ext[1:-1].copy()
    v = (u_ext[2:] - u_ext[:-2]) / (2.0 * dt)
    a = (u_ext[2:] - 2.0 * u_ext[1:-1] + u_ext[:-2]) / (dt * dt)
    e_input = _cumulative_work(u, p)
    e_damping = _cumulative_work(u, f_damp)
    return u, v, a, shear, work, e_input, e_damping, state, peak_signed, peak_time


def _cumulative_work(u: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Σ Δuᵀ (f[n] + f[n+1])/2 from 0 (the work rule of thist.energy), J."""
    inc = np.einsum("ij,ij->i", np.diff(u, axis=0), 0.5 * (f[1:] + f[:-1]))
    return np.concatenate([[0.0], np.cumsum(inc)])


__all__ = [
    "DAMPING_CHOICES",
    "ITERATIONS",
    "ConvergenceError",
    "ConvergenceStats",
    "InelasticSolution",
    "SolverOptions",
    "StoryDemands",
    "alpha_step",
    "integrate_inelastic",
    "level_forces",
    "story_drift",
]
