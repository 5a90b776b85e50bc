"""Time-step checks, run before the first step.

Stability: the step must not exceed the method's critical step for the highest
mode of the model; above it the run is refused with the limit, the mode that
sets it and a suggested step.

Accuracy (common practice, reported with numbers, not enforced): Δt ≤ T/10 for
every mode needed to reach 90 % cumulative effective mass, an analysis step no
coarser than the record's, and the numerical period error and algorithmic
damping of each of those modes at this step from the method's amplification
matrix.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from thist.errors import StabilityError
from thist.methods import get_method
from thist.methods.base import Method
from thist.modal import Modes


@dataclass(frozen=True)
class Check:
    """One check with its verdict.

    Attributes
    ----------
    name : str
        What is checked.
    verdict : str
        ``"pass"``, ``"advice"`` (accuracy below common practice; the run goes on)
        or ``"refused"`` (the run is not made).
    value, limit : float
        The checked value and its limit (SI, or a plain ratio).
    message : str
        A sentence for people, with the numbers and, if not passed, the fix.
    """

    name: str
    verdict: str
    value: float
    limit: float
    message: str


@dataclass(frozen=True)
class ModeAccuracy:
    """Accuracy of one mode at the analysis step.

    ``steps_per_period`` is T/Δt; ``period_error`` is T̄/T − 1 and
    ``algorithmic_damping`` the added damping ratio, from the amplification
    matrix at Ω = ωΔt (nan if the method does not oscillate there).
    """

    mode: int
    period: float
    steps_per_period: float
    period_error: float
    algorithmic_damping: float
    spectral_radius: float


@dataclass(frozen=True)
class MethodChecks:
    """All checks of one method at one step.

    Attributes
    ----------
    method : str
        The method's label.
    dt : float
        Analysis step, s.
    dt_critical : float
        Stability limit, s (inf if unconditionally stable).
    critical_mode : int
        The mode (1-based) that sets the limit: the highest.
    margin : float
        Δt/Δt_cr (0 when unconditionally stable).
    suggested_dt : float
        A stable step that divides the record's step evenly (nan if none needed).
    modes_checked : int
        Number of modes needed to reach the mass ratio of the accuracy check.
    checks : tuple of Check
    accuracy : tuple of ModeAccuracy
        For mode 1 to ``modes_checked`` and the highest mode.
    """

    method: str
    dt: float
    dt_critical: float
    critical_mode: int
    margin: float
    suggested_dt: float
    modes_checked: int
    checks: tuple[Check, ...]
    accuracy: tuple[ModeAccuracy, ...]

    @property
    def refused(self) -> bool:
        """True if any check refuses the run."""
        return any(c.verdict == "refused" for c in self.checks)

    @property
    def advice(self) -> tuple[Check, ...]:
        """The checks that carry advice."""
        return tuple(c for c in self.checks if c.verdict == "advice")

    def raise_if_refused(self) -> None:
        """Raise StabilityError with the refusing check's message."""
        for c in self.checks:
            if c.verdict == "refused":
                raise StabilityError(c.message)


def stability_limit(
    method: str | Method, omega_max: float, zeta: float = 0.0, **params: float
) -> float:
    """Critical time step of a method for the highest circular frequency.

    Parameters
    ----------
    method : str or Method
        A method name (see :func:`thist.methods.method_names`) or object.
    omega_max : float
        Highest circular frequency of the model, rad/s.
    zeta : float
        Damping ratio of that mode (only forms whose limit depends on it use it).
    **params : float
        Method parameters, e.g. ``beta=0.3, gamma=0.6`` for ``"newmark"``.

    Returns
    -------
    float
        Δt_cr in seconds; ``math.inf`` when unconditionally stable.
    """
    m = get_method(method, **params) if isinstance(method, str) else method
    return m.stability_limit(float(omega_max), float(zeta))


def suggest_dt(dt_critical: float, record_dt: float, safety: float = 0.9) -> float:
    """Largest step ≤ safety·Δt_cr that divides the record's step evenly, s."""
    target = safety * dt_critical
    if record_dt <= target:
        return record_dt
    return record_dt / math.ceil(record_dt / target - 1e-12)


def check_method(
    method: Method,
    label: str,
    modes: Modes,
    damping_ratios: np.ndarray,
    dt: float,
    record_dt: float,
    mass_ratio: float = 0.9,
    steps_per_period: float = 10.0,
) -> MethodChecks:
    """Run the stability and accuracy checks of one method at one step.

    Parameters
    ----------
    method : Method
    label : str
        Name shown in messages.
    modes : Modes
    damping_ratios : ndarray, shape (n,)
        Damping ratio achieved in each mode.
    dt : float
        Analysis step, s.
    record_dt : float
        The record's own step, s.
    mass_ratio : float
        Cumulative effective-mass ratio the accuracy check must cover.
    steps_per_period : float
        Common-practice minimum of T/Δt for those modes.
    """
    n = len(modes.omegas)
    w_max = float(modes.omegas[-1])
    zeta_max = float(damping_ratios[-1])
    dt_cr = method.stability_limit(w_max, zeta_max)
    margin = dt / dt_cr if math.isfinite(dt_cr) else 0.0
    checks: list[Check] = []
    t_min = float(modes.periods[-1])
    if math.isfinite(dt_cr) and dt > dt_cr * (1.0 + 1e-12):
        sug = suggest_dt(dt_cr, record_dt)
        checks.append(
            Check(
                "stability",
                "refused",
                dt,
                dt_cr,
                f"{label}: dt = {dt:.6g} s exceeds the stability limit {dt_cr:.6g} s "
                f"({dt_cr / t_min:.4g}·T_min) set by mode {n} (T = {t_min:.4g} s); "
                f"use dt <= {sug:.6g} s or an unconditionally stable method",
            )
        )
    else:
        sug = math.nan
        what = (
            f"dt/dt_cr = {margin:.3f} (limit {dt_cr:.6g} s, set by mode {n}, T = {t_min:.4g} s)"
            if math.isfinite(dt_cr)
            else "unconditionally stable for linear systems"
        )
        checks.append(Check("stability", "pass", dt, dt_cr, f"{label}: {what}"))
    n_needed = modes.modes_for_mass(mass_ratio)
    accuracy = []
    for j in sorted({*range(n_needed), n - 1}):
        T = float(modes.periods[j])
        sp = method.spectral_properties(float(modes.omegas[j]) * dt, float(damping_ratios[j]))
        accuracy.append(
            ModeAccuracy(
                j + 1, T, T / dt, sp.period_error, sp.algorithmic_damping, sp.spectral_radius
            )
        )
    for acc in accuracy[:n_needed]:
        ok = acc.steps_per_period >= steps_per_period * (1.0 - 1e-9)
        err = "" if math.isnan(acc.period_error) else f", period error {acc.period_error:+.2%}"
        msg = f"mode {acc.mode} (T = {acc.period:.4g} s): T/dt = {acc.steps_per_period:.1f}{err}"
        if not ok:
            msg += (
                f"; below the common-practice {steps_per_period:g} steps per period, "
                f"consider dt <= {acc.period / steps_per_period:.4g} s"
            )
        checks.append(
            Check(
                f"accuracy mode {acc.mode}",
                "pass" if ok else "advice",
                acc.steps_per_period,
                steps_per_period,
                msg,
            )
        )
    if dt > record_dt * (1.0 + 1e-9):
        checks.append(
            Check(
                "record step",
                "advice",
                dt,
                record_dt,
                f"dt = {dt:.6g} s is coarser than the record's {record_dt:.6g} s: "
                "record content between samples is skipped",
            )
        )
    else:
        checks.append(
            Check(
                "record step",
                "pass",
                dt,
                record_dt,
                f"dt = {dt:.6g} s is no coarser than the record's {record_dt:.6g} s",
            )
        )
    return MethodChecks(label, dt, dt_cr, n, margin, sug, n_needed, tuple(checks), tuple(accuracy))
