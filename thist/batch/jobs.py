"""Jobs of a study: what one run is, what it needs, and running it.

A job is one (record, intensity level, method) of a study, named by a job id
that sorts in the study's own order. Everything a job needs beyond its three
indices is in one :class:`StudyContext` (the structure case, the records, the
methods, the levels), which executors send to each worker once; jobs carry only
their indices. :func:`run_job` never raises for a problem of the job itself: a
bad record or a refused time step gives a ``failed`` outcome with the error
text, a run that does not converge (``StabilityError`` during the run) or that
exceeds the IDA's collapse drift ratio gives ``collapsed``. The outcome holds
the peaks, not the histories, unless the study keeps the record's histories.
"""

from __future__ import annotations

import dataclasses
import os
import socket
import time
from dataclasses import dataclass

import numpy as np

from thist.analysis import prepare, run_case
from thist.batch.study import IdaSpec, Study
from thist.case import Case, MethodSpec, RecordSpec
from thist.errors import InputError, StabilityError
from thist.motion import GroundMotion
from thist.peaks import inelastic_peaks, linear_peaks
from thist.processing import apply_steps
from thist.response import Peak, Response
from thist.spectrum import response_spectrum

#: Outcome statuses: the run finished; it collapsed (non-convergence or the IDA's
#: collapse drift ratio exceeded); it could not be run (bad record, refused step).
STATUSES = ("ok", "collapsed", "failed")

#: Response histories stored for the records a study names in ``keep_histories``.
HISTORY_NAMES = (
    "displacement",
    "drift_ratio",
    "story_shear",
    "absolute_acceleration",
    "base_shear",
)


@dataclass(frozen=True, order=True)
class Job:
    """One run of a study, by its indices into the study's records, levels and methods."""

    level_index: int
    record_index: int
    method_index: int

    @property
    def job_id(self) -> str:
        """``r0003-l005-m01``: sorts by record, then level, then method."""
        return job_id(self.record_index, self.level_index, self.method_index)

    @property
    def chain(self) -> tuple[int, int]:
        """(record, method): the jobs an IDA stop rule acts on together."""
        return (self.record_index, self.method_index)


def job_id(record_index: int, level_index: int, method_index: int) -> str:
    """The job id of a (record, level, method), 0-based indices."""
    return f"r{record_index:04d}-l{level_index:03d}-m{method_index:02d}"


def make_jobs(study: Study) -> list[Job]:
    """Every job of a study, lowest intensity level first (the order they are sent in)."""
    return sorted(
        Job(li, ri, mi)
        for li in range(len(study.levels))
        for ri in range(len(study.records))
        for mi in range(len(study.methods))
    )


@dataclass(frozen=True)
class StudyContext:
    """What every job of a study needs, sent to each worker once.

    Attributes
    ----------
    case : Case
        The structure case (its record is replaced per job).
    records : tuple of RecordSpec
    methods : tuple of MethodSpec
    levels : tuple of float or None
        Intensity levels, m/s² (``(None,)`` for a suite).
    ida : IdaSpec or None
    t1 : float
        First-mode period of the model, s.
    keep_histories : frozenset of int
        Record indices whose jobs return response histories.
    """

    case: Case
    records: tuple[RecordSpec, ...]
    methods: tuple[MethodSpec, ...]
    levels: tuple[float | None, ...]
    ida: IdaSpec | None
    t1: float
    keep_histories: frozenset[int]


def study_context(study: Study) -> StudyContext:
    """The :class:`StudyContext` of a study."""
    names = [r.name for r in study.records]
    return StudyContext(
        study.case,
        tuple(r.spec for r in study.records),
        study.methods,
        study.levels,
        study.ida,
        study.t1,
        frozenset(names.index(n) for n in study.keep_histories),
    )


@dataclass(frozen=True)
class JobOutcome:
    """What one job produced (SI).

    Attributes
    ----------
    job : Job
    status : {"ok", "collapsed", "failed"}
    level : float or None
        Target intensity level, m/s² (None for a suite).
    scale_factor : float or None
        Factor from the file's values to the analysed record (the record's own
        ``scale`` times the scaling rule's or the IDA's factor).
    pga : float or None
        PGA of the analysed record, m/s².
    psa_t1 : float or None
        PSA(T₁, 5 %) of the analysed record, m/s².
    peak_drift_ratio : float or None
        Largest absolute story drift ratio over the stories.
    balance_error : float or None
        Energy-balance error as a fraction of the peak input energy.
    peaks : dict
        ``{quantity: {"values": [...], "times": [...]}}``, signed peaks (SI) and
        their times (s), per level or story; empty when the run did not finish.
    error : str
        Why the job failed or collapsed ("" if ok).
    elapsed : float
        Wall time of the job in the worker, s.
    worker : str
        ``host:pid`` of the process that ran it.
    histories : dict of str to ndarray, optional
        Response histories (SI) for records the study keeps; ``"t"`` in s.
    """

    job: Job
    status: str
    level: float | None
    scale_factor: float | None
    pga: float | None
    psa_t1: float | None
    peak_drift_ratio: float | None
    balance_error: float | None
    peaks: dict[str, dict[str, list[float]]]
    error: str
    elapsed: float
    worker: str
    histories: dict[str, np.ndarray] | None = None


def intensity(ag: np.ndarray, dt: float, ida: IdaSpec) -> float:
    """The IDA's intensity measure of a record, m/s².

    Parameters
    ----------
    ag : ndarray
        Ground acceleration, m/s².
    dt : float
        Its step, s.
    ida : IdaSpec
        Measure, period (s) and damping ratio.
    """
    if ida.measure == "pga":
        return float(np.max(np.abs(ag)))
    return float(response_spectrum(ag, dt, [ida.period], ida.damping).psa[0])


def _psa(ag: np.ndarray, dt: float, period: float) -> float:
    return float(response_spectrum(ag, dt, [period], 0.05).psa[0])


def _ida_spec(spec: RecordSpec, level: float, ida: IdaSpec) -> tuple[RecordSpec, float]:
    """The record processed, then scaled so that its intensity measure equals ``level``."""
    raw = spec.record
    ag, dt, _ = (
        apply_steps(raw.ag, raw.dt, spec.processing)
        if spec.processing
        else (
            raw.ag,
            raw.dt,
            (),
        )
    )
    im = intensity(np.asarray(ag), float(dt), ida)
    if not (np.isfinite(im) and im > 0):
        raise InputError(
            f"the record's {ida.label} is {im:g}; it cannot be scaled to a level",
            "record",
            raw.source,
        )
    factor = level / im
    record = dataclasses.replace(
        raw, ag=np.asarray(ag, dtype=float) * factor, dt=float(dt), scale=raw.scale * factor
    )
    return RecordSpec(record, (), None), raw.scale * factor


def _peaks_dict(peaks: dict[str, Peak]) -> dict[str, dict[str, list[float]]]:
    return {
        name: {
            "values": np.atleast_1d(p.values).astype(float).tolist(),
            "times": np.atleast_1d(p.times).astype(float).tolist(),
        }
        for name, p in peaks.items()
    }


@dataclass(frozen=True)
class _JobRun:
    """What a job keeps of its run: peaks (and the response only if histories are kept)."""

    motion: GroundMotion
    refused: tuple[str, ...]
    peaks: dict[str, Peak]
    balance_error: float | None
    response: Response | None = None


def _run(case: Case, keep_histories: bool) -> _JobRun:
    """Run the case's one method: full histories if kept, else peaks only.

    Peaks-only runs (:mod:`thist.peaks`) keep memory independent of the record
    length and give the same peaks as the full run to round-off; they carry no
    energy balance.
    """
    if keep_histories:
        result = run_case(case, refuse=False)
        run = result.runs[0]
        refused = tuple(c.message for c in run.checks.checks if c.verdict == "refused")
        if run.response is None:
            return _JobRun(result.motion, refused, {}, None)
        balance = None if run.energy is None else float(run.energy.balance_error)
        return _JobRun(result.motion, (), run.response.peaks(), balance, run.response)
    pre = prepare(case)
    checks = pre.checks[0]
    if checks.refused:
        refused = tuple(c.message for c in checks.checks if c.verdict == "refused")
        return _JobRun(pre.motion, refused, {}, None)
    method, s, ag, dt = pre.specs[0].method, case.structure, pre.excitation.ag, pre.excitation.dt
    if s.is_linear:
        peaks = linear_peaks(method, s, pre.damping, pre.modes, ag, dt).peaks
    else:
        settings = case.analysis.inelastic
        peaks = inelastic_peaks(
            s,
            s.springs,
            ag,
            dt,
            method,
            rayleigh=(pre.damping.alpha_mass, pre.damping.beta_stiffness),
            damping=settings.damping,
            options=settings.options,
        ).peaks
    return _JobRun(pre.motion, (), peaks, None)


def run_job(ctx: StudyContext, job: Job) -> JobOutcome:
    """Run one job; problems of the job become a ``failed`` or ``collapsed`` outcome.

    Parameters
    ----------
    ctx : StudyContext
    job : Job

    Returns
    -------
    JobOutcome
    """
    start = time.perf_counter()
    worker = f"{socket.gethostname()}:{os.getpid()}"
    level = ctx.levels[job.level_index]
    spec = ctx.records[job.record_index]
    mspec = ctx.methods[job.method_index]
    blank = dict(
        job=job,
        level=level,
        scale_factor=None,
        pga=None,
        psa_t1=None,
        peak_drift_ratio=None,
        balance_error=None,
        peaks={},
        worker=worker,
    )
    try:
        factor: float | None = None
        if ctx.ida is not None and level is not None:
            spec, factor = _ida_spec(spec, level, ctx.ida)
        case = dataclasses.replace(
            ctx.case,
            motion=spec,
            analysis=dataclasses.replace(ctx.case.analysis, methods=(mspec,)),
        )
        keep = job.record_index in ctx.keep_histories
        try:
            run = _run(case, keep)
        except StabilityError as exc:
            return JobOutcome(
                **{**blank, "scale_factor": factor},
                status="collapsed",
                error=f"did not converge: {exc}",
                elapsed=time.perf_counter() - start,
            )
        if run.refused:
            return JobOutcome(
                **{**blank, "scale_factor": factor},
                status="failed",
                error="time step refused: " + "; ".join(run.refused),
                elapsed=time.perf_counter() - start,
            )
        motion = run.motion
        if factor is None:
            factor = spec.record.scale * (motion.scaling.factor if motion.scaling else 1.0)
        peaks = run.peaks
        dr = (
            None
            if "drift_ratio" not in peaks
            else float(np.max(np.abs(peaks["drift_ratio"].values)))
        )
        status, error = "ok", ""
        ida = ctx.ida
        if ida is not None and ida.collapse_drift_ratio is not None and dr is not None:
            if dr > ida.collapse_drift_ratio:
                status = "collapsed"
                error = (
                    f"peak drift ratio {dr:.4g} exceeds the collapse drift ratio "
                    f"{ida.collapse_drift_ratio:.4g}"
                )
        histories = None
        if keep:
            resp = run.response
            histories = {"t": np.asarray(resp.t, dtype=float), "ag": np.asarray(resp.ag)}
            for name in HISTORY_NAMES:
                x = resp.history(name)
                if x is not None:
                    histories[name] = np.asarray(x, dtype=float)
        rec = motion.record
        return JobOutcome(
            job=job,
            status=status,
            level=level,
            scale_factor=float(factor),
            pga=float(np.max(np.abs(rec.ag))),
            psa_t1=_psa(rec.ag, rec.dt, ctx.t1),
            peak_drift_ratio=dr,
            balance_error=run.balance_error,
            peaks=_peaks_dict(peaks),
            error=error,
            elapsed=time.perf_counter() - start,
            worker=worker,
            histories=histories,
        )
    except Exception as exc:  # noqa: BLE001 - any problem of one job is recorded, not raised
        text = str(exc) if isinstance(exc, InputError) else f"{type(exc).__name__}: {exc}"
        return JobOutcome(**blank, status="failed", error=text, elapsed=time.perf_counter() - start)


def run_chunk(ctx: StudyContext, jobs: list[Job]) -> list[JobOutcome]:
    """Run jobs one after another in this process; see :func:`run_job`."""
    return [run_job(ctx, j) for j in jobs]
