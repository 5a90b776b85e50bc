"""Side-by-side runs of one case with several methods and time steps.

Every method (and every Δt) runs on the same model and record. For linear models
the ``exact`` method (state-transition matrix, first-order hold) runs as well, at
each Δt, and every peak is compared with it. Methods refused by a stability check
stay in the comparison as rows with the reason. This module only collects and
compares what :func:`thist.analysis.run_case` produced; the report formats it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from thist.analysis import CaseResult, MethodRun, run_case
from thist.case import Case

REFERENCE = "exact"

#: Peak quantities compared (key -> description); values SI.
COMPARED = {
    "roof_displacement": "peak roof displacement, m",
    "drift_ratio": "peak drift ratio over the stories",
    "base_shear": "peak base shear, N",
    "roof_acceleration": "peak roof absolute acceleration, m/s²",
}


@dataclass(frozen=True)
class ModeSpectral:
    """A method's numerical period error and algorithmic damping for one mode.

    Evaluated from the amplification matrix at Ω = ωΔt without physical damping
    (ζ = 0), so that the numbers are the method's own and not the damped root's.

    Attributes
    ----------
    mode : int
        Mode number (1-based).
    period : float
        Mode period, s.
    omega_dt : float
        Ω = ωΔt.
    period_error : float
        T̄/T − 1 (nan when the method does not oscillate at this Ω).
    algorithmic_damping : float
        Added damping ratio ξ̄.
    """

    mode: int
    period: float
    omega_dt: float
    period_error: float
    algorithmic_damping: float


@dataclass(frozen=True)
class ComparisonRow:
    """One method at one Δt.

    Attributes
    ----------
    label : str
        Method label.
    dt : float
        Analysis step, s.
    status : str
        ``"ran"`` or ``"refused"``.
    reason : str
        Why the run was refused ("" otherwise).
    is_reference : bool
        True for the exact reference run.
    peaks : dict of str to float
        Signed peaks keyed as :data:`COMPARED` (SI; nan where not available).
    times : dict of str to float
        Time of each peak, s.
    drift_story : int
        Story (1-based) of the peak drift ratio, 0 if not available.
    balance_error : float
        Energy balance error as a fraction of the peak input energy.
    elapsed : float
        Integration time, s.
    rel_diff : dict of str to float
        (|peak| − |peak_ref|)/|peak_ref| for each key; empty without a reference.
    spectral : tuple of ModeSpectral
        Mode 1 and the highest mode needed for the effective-mass ratio.
    """

    label: str
    dt: float
    status: str
    reason: str
    is_reference: bool
    peaks: dict[str, float]
    times: dict[str, float]
    drift_story: int
    balance_error: float
    elapsed: float
    rel_diff: dict[str, float]
    spectral: tuple[ModeSpectral, ...]


@dataclass(frozen=True)
class Comparison:
    """The whole comparison.

    Attributes
    ----------
    results : tuple of CaseResult
        One per Δt, in the order given.
    rows : tuple of ComparisonRow
        Grouped by Δt, methods in the order given, the reference last if it was added.
    reference : str or None
        Label of the reference method, None for a nonlinear model.
    mass_ratio : float
        Effective-mass ratio that sets the highest mode of ``spectral``.
    reference_added : bool
        True if the reference was not among the requested methods.
    """

    results: tuple[CaseResult, ...]
    rows: tuple[ComparisonRow, ...]
    reference: str | None
    mass_ratio: float
    reference_added: bool


def model_is_linear(case: Case) -> bool:
    """True if the model's springs are linear, so that the exact reference applies.

    A structure that carries an ``is_linear`` flag (yielding springs) answers for
    itself; every other model thist reads is linear.
    """
    return bool(getattr(case.structure, "is_linear", True))


def _peaks(run: MethodRun) -> tuple[dict[str, float], dict[str, float], int]:
    pk = run.response.peaks()
    peaks = {
        "roof_displacement": float(pk["displacement"].values[-1]),
        "base_shear": float(pk["base_shear"].values),
        "roof_acceleration": float(pk["absolute_acceleration"].values[-1]),
    }
    times = {
        "roof_displacement": float(pk["displacement"].times[-1]),
        "base_shear": float(pk["base_shear"].times),
        "roof_acceleration": float(pk["absolute_acceleration"].times[-1]),
    }
    story = 0
    if "drift_ratio" in pk:
        dr = pk["drift_ratio"]
        story = dr.where + 1
        peaks["drift_ratio"] = float(dr.values[dr.where])
        times["drift_ratio"] = float(dr.times[dr.where])
    else:
        peaks["drift_ratio"] = times["drift_ratio"] = math.nan
    return peaks, times, story


def _spectral(run: MethodRun, result: CaseResult, mass_ratio: float) -> tuple[ModeSpectral, ...]:
    modes = result.modes
    wanted = sorted({1, modes.modes_for_mass(mass_ratio)})
    out = []
    for j in wanted:
        om = float(modes.omegas[j - 1]) * run.checks.dt
        sp = run.method.spectral_properties(om, 0.0)
        out.append(
            ModeSpectral(
                j, float(modes.periods[j - 1]), om, sp.period_error, sp.algorithmic_damping
            )
        )
    return tuple(out)


def _row(run: MethodRun, result: CaseResult, mass_ratio: float, is_ref: bool) -> ComparisonRow:
    spectral = _spectral(run, result, mass_ratio)
    if run.response is None:
        reason = "; ".join(c.message for c in run.checks.checks if c.verdict == "refused")
        nan = dict.fromkeys(COMPARED, math.nan)
        return ComparisonRow(
            run.label, run.checks.dt, "refused", reason, is_ref, nan, dict(nan), 0,
            math.nan, 0.0, {}, spectral,
        )  # fmt: skip
    peaks, times, story = _peaks(run)
    err = run.energy.balance_error if run.energy is not None else math.nan
    return ComparisonRow(
        run.label, run.checks.dt, "ran", "", is_ref, peaks, times, story, err, run.elapsed, {},
        spectral,
    )  # fmt: skip


def _with_rel_diff(row: ComparisonRow, ref: ComparisonRow | None) -> ComparisonRow:
    if ref is None or ref.status != "ran" or row.status != "ran":
        return row
    rel = {}
    for key in COMPARED:
        a, b = abs(row.peaks[key]), abs(ref.peaks[key])
        rel[key] = (a - b) / b if b > 0 and math.isfinite(a) else math.nan
    return ComparisonRow(**{**row.__dict__, "rel_diff": rel})


def compare_case(case: Case, methods: list[str], dts: list[float] | None = None) -> Comparison:
    """Run ``methods`` at each step of ``dts`` and compare each peak with the exact run.

    Parameters
    ----------
    case : Case
        From :func:`thist.load_case`.
    methods : list of str
        Method names (as on the command line, e.g. ``"hht"``).
    dts : list of float, optional
        Analysis steps, s; the case's step when omitted.

    Returns
    -------
    Comparison
    """
    linear = model_is_linear(case)
    names = list(dict.fromkeys(methods))
    added = linear and REFERENCE not in names
    if added:
        names.append(REFERENCE)
    mass_ratio = case.checks.mass_ratio
    results, rows = [], []
    for dt in dts or [None]:
        res = run_case(case, names, dt, refuse=False)
        results.append(res)
        group = [_row(r, res, mass_ratio, linear and r.label == REFERENCE) for r in res.runs]
        ref = next((g for g in group if g.is_reference), None)
        rows += [_with_rel_diff(g, ref) for g in group]
    return Comparison(tuple(results), tuple(rows), REFERENCE if linear else None, mass_ratio, added)


def reference_run(result: CaseResult) -> MethodRun | None:
    """The exact run of one Δt, if it ran."""
    for run in result.runs:
        if run.label == REFERENCE and run.response is not None:
            return run
    return None


def roof_difference(result: CaseResult) -> dict[str, np.ndarray]:
    """Roof displacement minus the exact run's, m, for every other method that ran.

    Parameters
    ----------
    result : CaseResult
        One Δt of a comparison.
    """
    ref = reference_run(result)
    if ref is None:
        return {}
    u_ref = ref.response.displacement[:, -1]
    return {
        r.label: r.response.displacement[:, -1] - u_ref
        for r in result.runs
        if r.response is not None and r is not ref
    }


def comparison_dict(comp: Comparison) -> dict:
    """The comparison as a JSON-ready dict (SI units), for results.json."""
    return {
        "reference": comp.reference,
        "reference_added": comp.reference_added,
        "mass_ratio": comp.mass_ratio,
        "units": {
            "roof_displacement": "m",
            "drift_ratio": "-",
            "base_shear": "N",
            "roof_acceleration": "m/s^2",
        },
        "rows": [
            {
                "label": r.label,
                "dt": r.dt,
                "status": r.status,
                "reason": r.reason,
                "is_reference": r.is_reference,
                "peaks": r.peaks,
                "times": r.times,
                "drift_story": r.drift_story,
                "energy_balance_error": r.balance_error,
                "elapsed_s": r.elapsed,
                "relative_difference_from_reference": r.rel_diff,
                "spectral": [s.__dict__ for s in r.spectral],
            }
            for r in comp.rows
        ],
    }
