"""Runs: case → model, damping and excitation → checks → method → response.

This module only wires the stages together; each stage lives in its own module.
"""

from __future__ import annotations

import time as _time
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from thist.case import Case, DampingSpec, MethodSpec, parse_method_entry
from thist.checks import MethodChecks, check_method
from thist.damping import (
    Damping,
    matrix_damping,
    modal_damping,
    no_damping,
    rayleigh,
    stiffness_proportional,
)
from thist.energy import EnergyBalance, energy_balance
from thist.errors import InputError
from thist.methods import get_method
from thist.methods.base import Method, Solution, substep_count
from thist.methods.inelastic import (
    ConvergenceStats,
    StoryDemands,
    integrate_inelastic,
)
from thist.methods.modal_path import integrate_modal
from thist.modal import Modes, modal
from thist.motion import GroundMotion, prepare_motion
from thist.record import Excitation, RecordSummary, sample, summarize
from thist.response import Response, compute_response
from thist.structure import Structure, general_model


@dataclass(frozen=True)
class History:
    """Histories from :func:`time_history`, SI, relative to the base.

    ``t`` (N,) in s; ``u``, ``v``, ``a`` (N, n) in m, m/s, m/s²; ``a_abs`` (N, n)
    absolute acceleration in m/s².
    """

    t: np.ndarray
    u: np.ndarray
    v: np.ndarray
    a: np.ndarray
    a_abs: np.ndarray


@dataclass(frozen=True)
class MethodRun:
    """One method's run of a case: its checks, response, energy balance and run time.

    ``response`` and ``energy`` are None when the checks refused the run;
    ``story`` (ductility, residual drift, yield excursions, hysteretic energy per
    story) and ``convergence`` are set for inelastic runs only.
    """

    label: str
    method: Method
    checks: MethodChecks
    response: Response | None
    elapsed: float
    path: str = "direct"
    energy: EnergyBalance | None = None
    story: StoryDemands | None = None
    convergence: ConvergenceStats | None = None


@dataclass(frozen=True)
class CaseResult:
    """Everything a run of a case produced."""

    case: Case
    modes: Modes
    damping: Damping
    record_summary: RecordSummary
    excitation: Excitation
    runs: tuple[MethodRun, ...]
    motion: GroundMotion | None = None


def build_damping(spec: DampingSpec, structure: Structure, modes: Modes) -> Damping:
    """Build the damping matrix the case asks for, against the model's modes.

    Parameters
    ----------
    spec : DampingSpec
    structure : Structure
    modes : Modes
    """
    M, K, n = structure.M, structure.K, structure.n
    if spec.model == "none":
        return no_damping(n, modes)
    if spec.model == "matrix":
        return matrix_damping(spec.matrix, modes, "damping matrix given in the case file")
    if spec.model == "modal":
        if spec.ratios:
            desc = "modal, " + ", ".join(f"{z:.3g}" for z in spec.ratios) + " by mode"
            return modal_damping(M, modes, np.array(spec.ratios), desc)
        return modal_damping(M, modes, spec.ratio, f"modal, {spec.ratio:.3%} in every mode")
    if spec.modes:
        omegas = [float(modes.omegas[j - 1]) for j in spec.modes]
        where = " and ".join(f"mode {j}" for j in spec.modes)
    else:
        omegas = [2.0 * np.pi / T for T in spec.periods]
        where = " and ".join(f"T = {T:.4g} s" for T in spec.periods)
    if spec.model == "rayleigh":
        return rayleigh(
            M, K, modes, spec.ratio, omegas[0], omegas[1], f"Rayleigh, {spec.ratio:.3%} at {where}"
        )
    return stiffness_proportional(
        K, modes, spec.ratio, omegas[0], f"stiffness-proportional, {spec.ratio:.3%} at {where}"
    )


def integrate_linear(
    method: Method,
    structure: Structure,
    damping: Damping,
    modes: Modes,
    ag: np.ndarray,
    dt: float,
    *,
    substeps: int = 1,
) -> tuple[Solution, str]:
    """Response of a linear model to a base acceleration, by the fastest path that
    gives the method's own answer.

    Classically damped models run mode by mode (``"modal"``,
    :func:`~thist.methods.modal_path.integrate_modal`), which equals the
    coupled-system algorithm to round-off; others run on the coupled system with one
    factorisation (``"direct"``).

    Parameters
    ----------
    method : Method
    structure : Structure
    damping : Damping
    modes : Modes
        Modes of (M, K), mass-normalised.
    ag : ndarray, shape (N,)
        Base acceleration, m/s², at N samples ``dt`` apart, linear in between.
    dt : float
        Sample step, s.
    substeps : int
        Method steps per sample (the method steps at ``dt / substeps``; the
        histories are read at the samples). The caller checks the method's
        stability at the finer step.

    Returns
    -------
    (Solution, str)
        The histories relative to the base at the N samples, and the name of the
        path that ran.
    """
    M, r = structure.M, structure.r
    ag = np.asarray(ag, dtype=float)
    substeps = substep_count(substeps)
    if damping.classical:
        gamma = modes.shapes.T @ (M @ r)  # modal load per unit modal mass is −Γ ü_g
        sol = integrate_modal(
            method, M, modes, damping.ratios, ag[:, None], dt,
            substeps=substeps, to_modal=-gamma[None, :],
        )  # fmt: skip
        return sol, "modal"
    if substeps == 1:
        return method.integrate(M, damping.C, structure.K, -np.outer(ag, M @ r), dt), "direct"
    fine = np.interp(np.arange((ag.size - 1) * substeps + 1) / substeps, np.arange(ag.size), ag)
    sol = method.integrate(M, damping.C, structure.K, -np.outer(fine, M @ r), dt / substeps)
    every = slice(None, None, substeps)
    return Solution(*(np.ascontiguousarray(x[every]) for x in (sol.u, sol.v, sol.a))), "direct"


def _run_method(
    case: Case,
    damping: Damping,
    modes: Modes,
    ex: Excitation,
    spec_label: str,
    method: Method,
    checks: MethodChecks,
) -> MethodRun:
    if checks.refused:
        return MethodRun(spec_label, method, checks, None, 0.0)
    structure = case.structure
    if not structure.is_linear:
        return _run_inelastic(case, damping, ex, spec_label, method, checks)
    start = _time.perf_counter()
    sol, path = integrate_linear(method, structure, damping, modes, ex.ag, ex.dt)
    elapsed = _time.perf_counter() - start
    resp = compute_response(structure, ex.time, ex.ag, sol.u, sol.v, sol.a)
    energy = energy_balance(
        structure.M,
        damping.C,
        structure.K,
        structure.r,
        ex.time,
        ex.ag,
        sol.u,
        sol.v,
        rule=method.energy_rule,
    )
    return MethodRun(spec_label, method, checks, resp, elapsed, path=path, energy=energy)


def _run_inelastic(
    case: Case,
    damping: Damping,
    ex: Excitation,
    spec_label: str,
    method: Method,
    checks: MethodChecks,
) -> MethodRun:
    structure = case.structure
    settings = case.analysis.inelastic
    start = _time.perf_counter()
    sol = integrate_inelastic(
        structure.level_masses,
        structure.springs,
        ex.ag,
        ex.dt,
        method,
        rayleigh=(damping.alpha_mass, damping.beta_stiffness),
        damping=settings.damping,
        options=settings.options,
    )
    elapsed = _time.perf_counter() - start
    resp = compute_response(
        structure, ex.time, ex.ag, sol.u, sol.v, sol.a, restoring_force=sol.restoring_force
    )
    return MethodRun(
        spec_label,
        method,
        checks,
        resp,
        elapsed,
        path="inelastic",
        energy=sol.energy,
        story=sol.story,
        convergence=sol.convergence,
    )


def check_inelastic_case(case: Case, specs: tuple[MethodSpec, ...]) -> None:
    """Refuse what inelastic runs cannot do: the exact method, and damping that is not
    Rayleigh, stiffness-proportional or none (the stiffness part follows the springs)."""
    if case.structure.is_linear:
        return
    for i, s in enumerate(specs):
        if s.method.linear_only:
            raise InputError(
                f"method {s.name!r} is for linear models only; the model has yielding stories",
                f"analysis.methods[{i}]",
                Path(case.path).name,
            )
    if case.damping.model not in ("rayleigh", "stiffness", "none"):
        raise InputError(
            f"{case.damping.model} damping cannot follow yielding springs; use rayleigh, "
            "stiffness or none",
            "damping.model",
            Path(case.path).name,
        )


@dataclass(frozen=True)
class Prepared:
    """Everything a run needs before the first step: the stages up to the checks."""

    specs: tuple[MethodSpec, ...]
    modes: Modes
    damping: Damping
    motion: GroundMotion
    excitation: Excitation
    checks: tuple[MethodChecks, ...]


def prepare(case: Case, methods: list[str] | None = None, dt: float | None = None) -> Prepared:
    """Modes, damping, the processed and scaled ground motion, sampling, and the checks.

    Parameters
    ----------
    case : Case
    methods : list of str, optional
        Method names (or ``name`` strings) instead of the case's.
    dt : float, optional
        Analysis step, s, instead of the case's (default: the record's step).
    """
    structure = case.structure
    specs: tuple[MethodSpec, ...] = (
        case.analysis.methods
        if methods is None
        else tuple(parse_method_entry(m, f"--method {m}", None) for m in methods)
    )
    check_inelastic_case(case, specs)
    modes = modal(structure.M, structure.K, structure.r)
    damping = build_damping(case.damping, structure, modes)
    motion = prepare_motion(case.motion, float(modes.periods[0]))
    rec = motion.record
    step = dt or case.analysis.dt or rec.dt
    ex = sample(rec, step, case.analysis.duration, case.analysis.allow_coarse_dt)
    checks = tuple(
        check_method(
            s.method,
            s.label,
            modes,
            damping.ratios,
            ex.dt,
            rec.dt,
            case.checks.mass_ratio,
            case.checks.steps_per_period,
        )
        for s in specs
    )
    return Prepared(specs, modes, damping, motion, ex, checks)


def run_case(
    case: Case,
    methods: list[str] | None = None,
    dt: float | None = None,
    *,
    refuse: bool = True,
) -> CaseResult:
    """Run a case with its own methods, or with ``methods`` instead.

    Parameters
    ----------
    case : Case
        From :func:`thist.load_case`.
    methods : list of str, optional
        Method names to run instead of the case's.
    dt : float, optional
        Analysis step, s, instead of the case's.
    refuse : bool
        If True (default), a method refused by a stability check raises
        :class:`~thist.errors.StabilityError` before any run; if False it is
        kept as a refused run with no response.

    Returns
    -------
    CaseResult
    """
    pre = prepare(case, methods, dt)
    if refuse:
        for c in pre.checks:
            c.raise_if_refused()
    runs = tuple(
        _run_method(case, pre.damping, pre.modes, pre.excitation, s.label, s.method, c)
        for s, c in zip(pre.specs, pre.checks, strict=True)
    )
    return CaseResult(
        case,
        pre.modes,
        pre.damping,
        summarize(pre.motion.record),
        pre.excitation,
        runs,
        pre.motion,
    )


def time_history(
    M: np.ndarray,
    C: np.ndarray,
    K: np.ndarray,
    ag: np.ndarray,
    dt: float,
    method: str = "newmark-average",
    *,
    r: np.ndarray | None = None,
    beta: float | None = None,
    gamma: float | None = None,
    substeps: int = 1,
    **params: float,
) -> History:
    """Response of a linear model to a base acceleration, SI arrays in and out.

    Parameters
    ----------
    M, C, K : array_like, shape (n, n)
        Mass (kg), damping (N·s/m) and stiffness (N/m) matrices.
    ag : array_like, shape (N,)
        Ground acceleration sampled at ``dt``, m/s².
    dt : float
        Time step, s.
    method : str
        A method name (see :func:`thist.methods.method_names`).
    r : array_like, shape (n,), optional
        Influence vector; ones by default.
    beta, gamma : float, optional
        Newmark parameters for ``method="newmark"``.
    substeps : int
        Method steps per sample: the method steps at ``dt / substeps`` under the
        record interpolated linearly, and the histories are read at the samples
        (on the modal path of a classically damped model this costs no more than
        one step per sample). Stability is checked at the finer step.
    **params : float
        Other method parameters (``alpha`` for hht, ``rho_inf`` for generalized-alpha).

    Returns
    -------
    History
        Starting from rest.

    Raises
    ------
    StabilityError
        ``dt / substeps`` above the method's stability limit for the highest mode.
    InputError
        Inconsistent shapes or unknown method.
    """
    M, C, K = (np.atleast_2d(np.asarray(x, dtype=float)) for x in (M, C, K))
    ag = np.asarray(ag, dtype=float).ravel()
    n = M.shape[0]
    if not (M.shape == C.shape == K.shape == (n, n)):
        raise InputError(f"M, C and K must all be ({n}, {n})", "M, C, K")
    if not (np.isfinite(dt) and dt > 0):
        raise InputError(f"must be positive, got {dt!r}", "dt")
    if ag.size < 2 or not np.all(np.isfinite(ag)):
        raise InputError("must hold at least 2 finite samples", "ag")
    r = np.ones(n) if r is None else np.asarray(r, dtype=float)
    if beta is not None:
        params["beta"] = beta
    if gamma is not None:
        params["gamma"] = gamma
    m = get_method(method, **params)
    structure = general_model(M, K, r)
    modes = modal(M, K, r)
    step = dt / substep_count(substeps)
    check_method(m, method, modes, np.zeros(n), step, step).raise_if_refused()
    damping = matrix_damping(C, modes, "given")
    sol, _ = integrate_linear(m, structure, damping, modes, ag, dt, substeps=substeps)
    t = np.arange(ag.size) * dt
    return History(t, sol.u, sol.v, sol.a, sol.a + np.outer(ag, r))
