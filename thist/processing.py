"""Record processing: baseline correction, filtering, tapering, padding, resampling.

Every step is a function ``step(ag, dt, ...) -> (ag_new, ProcessingStep)`` (resampling
also returns the new dt) that leaves its input untouched and returns a small frozen
record of what it did: its name, its parameters and a few before/after figures, so
the sequence can be listed, in order, in results.json and in the report.
:func:`apply_steps` runs a list of plain-dict step specifications.

All quantities are SI (m/s^2, s, Hz).  End velocity and displacement use the
trapezoidal rule from rest (:func:`thist.intensity.ground_motion_histories`).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.signal import butter, sosfiltfilt

from thist.errors import InputError
from thist.intensity import check_record, ground_motion_histories

__all__ = [
    "ProcessingStep",
    "analysis_step_warning",
    "apply_steps",
    "baseline_correct",
    "butterworth_filter",
    "pad",
    "positive_number",
    "resample",
    "taper",
]


@dataclass(frozen=True)
class ProcessingStep:
    """What one processing step did.

    Attributes
    ----------
    name : str
        Step name: ``baseline``, ``filter``, ``taper``, ``pad`` or ``resample``.
    params : dict
        Parameters as used (SI: s, Hz), JSON-ready.
    figures : dict
        Before/after figures, e.g. ``end_velocity_before`` (m/s), ``pga_after``
        (m/s^2), JSON-ready floats.
    text : str
        One plain sentence describing the step, for the report.
    """

    name: str
    params: dict[str, Any] = field(default_factory=dict)
    figures: dict[str, float] = field(default_factory=dict)
    text: str = ""

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the step (for results.json)."""
        return {
            "step": self.name,
            "params": dict(self.params),
            "figures": dict(self.figures),
            "text": self.text,
        }


def _end_figures(a: np.ndarray, dt: float, suffix: str) -> dict[str, float]:
    """PGA and end velocity/displacement of a record, keys suffixed ``_before``/``_after``."""
    vel, disp = ground_motion_histories(a, dt)
    return {
        f"pga_{suffix}": float(np.max(np.abs(a))),
        f"end_velocity_{suffix}": float(vel[-1]),
        f"end_displacement_{suffix}": float(disp[-1]),
    }


def positive_number(value: Any, name: str, allow_zero: bool = False) -> float:
    """Return ``value`` as a finite float > 0 (or >= 0) or raise InputError naming ``name``."""
    if isinstance(value, bool):
        raise InputError(f"must be a number, got {value!r}", name)
    try:
        x = float(value)
    except (TypeError, ValueError) as exc:
        raise InputError(f"must be a number, got {value!r}", name) from exc
    ok = np.isfinite(x) and (x >= 0.0 if allow_zero else x > 0.0)
    if not ok:
        raise InputError(f"must be {'>= 0' if allow_zero else '> 0'}, got {value!r}", name)
    return x


def _integer(value: Any, name: str, lo: int, hi: int) -> int:
    """Return ``value`` as an int in [lo, hi] or raise InputError naming ``name``."""
    if isinstance(value, bool) or not isinstance(value, int | np.integer) or not lo <= value <= hi:
        raise InputError(f"must be an integer from {lo} to {hi}, got {value!r}", name)
    return int(value)


def baseline_correct(
    ag: np.ndarray | Sequence[float], dt: float, order: int = 1
) -> tuple[np.ndarray, ProcessingStep]:
    """Remove the least-squares polynomial of given order from the acceleration.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    order : int, optional
        Polynomial order 0-3 (0 removes the mean); default 1.

    Returns
    -------
    ag_new : numpy.ndarray
        Corrected acceleration, m/s^2.
    step : ProcessingStep
        With the end velocity (m/s) and displacement (m) before and after, the
        common-practice check of baseline drift.
    """
    a, dt = check_record(ag, dt)
    order = _integer(order, "order", 0, 3)
    # Fit on time scaled to [-1, 1] (Legendre basis) for conditioning.
    x = np.linspace(-1.0, 1.0, a.size)
    coef = np.polynomial.legendre.legfit(x, a, order)
    trend = np.polynomial.legendre.legval(x, coef)
    out = a - trend
    figures = {**_end_figures(a, dt, "before"), **_end_figures(out, dt, "after")}
    figures["trend_peak"] = float(np.max(np.abs(trend)))
    text = (
        f"Baseline correction: least-squares polynomial of order {order} removed from the "
        f"acceleration; end velocity {figures['end_velocity_before']:.4g} -> "
        f"{figures['end_velocity_after']:.4g} m/s, end displacement "
        f"{figures['end_displacement_before']:.4g} -> {figures['end_displacement_after']:.4g} m."
    )
    return out, ProcessingStep("baseline", {"order": order}, figures, text)


def butterworth_filter(
    ag: np.ndarray | Sequence[float],
    dt: float,
    kind: str = "bandpass",
    *,
    f_low: float | None = None,
    f_high: float | None = None,
    order: int = 4,
    pad_time: float | None = None,
) -> tuple[np.ndarray, ProcessingStep]:
    """Zero-phase Butterworth filter (forward-backward, ``scipy.signal.sosfiltfilt``).

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    kind : {"bandpass", "highpass", "lowpass"}
        Filter type.
    f_low : float, optional
        Low corner, Hz (needed by ``highpass`` and ``bandpass``).
    f_high : float, optional
        High corner, Hz, below Nyquist (needed by ``lowpass`` and ``bandpass``).
    order : int, optional
        Order of the Butterworth design, 1-8 (default 4).  The forward-backward pass
        squares the magnitude: the response is |H(f)|^2 (effective order 2 * order,
        gain 0.5 at each corner) with zero phase.
    pad_time : float, optional
        Zeros added at both ends before filtering and removed after, s.  Default
        ``1.5 * order / f_c`` with f_c the lowest corner (common practice for
        acausal filters, from memory: Converse & Brady 1992), so that the filter
        transients do not eat the ends of the record.

    Returns
    -------
    ag_new : numpy.ndarray
        Filtered acceleration (same length), m/s^2.
    step : ProcessingStep
        The filter used and the PGA / end velocity / end displacement before and after.
    """
    a, dt = check_record(ag, dt)
    nyq = 0.5 / dt
    if kind not in ("bandpass", "highpass", "lowpass"):
        raise InputError(f"must be bandpass, highpass or lowpass, got {kind!r}", "kind")
    order = _integer(order, "order", 1, 8)
    lo = positive_number(f_low, "f_low") if kind in ("bandpass", "highpass") else None
    hi = positive_number(f_high, "f_high") if kind in ("bandpass", "lowpass") else None
    if hi is not None and hi >= nyq:
        raise InputError(f"must be below the Nyquist frequency {nyq:.6g} Hz, got {hi!r}", "f_high")
    if lo is not None and lo >= nyq:
        raise InputError(f"must be below the Nyquist frequency {nyq:.6g} Hz, got {lo!r}", "f_low")
    if lo is not None and hi is not None and lo >= hi:
        raise InputError(f"must be below f_high ({hi} Hz), got {lo!r}", "f_low")
    wn: float | list[float]
    if kind == "bandpass":
        wn = [lo, hi]  # type: ignore[list-item]
    else:
        wn = lo if kind == "highpass" else hi  # type: ignore[assignment]
    sos = butter(order, wn, btype=kind, fs=1.0 / dt, output="sos")
    f_c = lo if lo is not None else hi
    assert f_c is not None
    t_pad = 1.5 * order / f_c if pad_time is None else positive_number(pad_time, "pad_time", True)
    n_pad = int(np.ceil(t_pad / dt))
    padded = np.concatenate([np.zeros(n_pad), a, np.zeros(n_pad)])
    filt = sosfiltfilt(sos, padded, padtype=None)
    out = np.ascontiguousarray(filt[n_pad : n_pad + a.size])
    params: dict[str, Any] = {
        "kind": kind,
        "f_low": lo,
        "f_high": hi,
        "order": order,
        "pad_time": n_pad * dt,
        "zero_phase": True,
    }
    figures = {**_end_figures(a, dt, "before"), **_end_figures(out, dt, "after")}
    corners = " and ".join(f"{f:g} Hz" for f in (lo, hi) if f is not None)
    text = (
        f"Filter: zero-phase (forward-backward) Butterworth {kind}, order {order} "
        f"(effective {2 * order}), corners {corners} (gain 0.5 at each corner), "
        f"{n_pad * dt:g} s of zeros padded at both ends during filtering."
    )
    return out, ProcessingStep("filter", params, figures, text)


def taper(
    ag: np.ndarray | Sequence[float], dt: float, start: float = 0.0, end: float = 0.0
) -> tuple[np.ndarray, ProcessingStep]:
    """Cosine (half-Hann) taper of the first ``start`` and last ``end`` seconds.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    start, end : float, optional
        Lengths of the tapered parts at the start and the end, s (>= 0, together no
        longer than the record).  The weight is 0.5 (1 - cos(pi t / start)) over the
        first part and its mirror image over the last, 1 in between.

    Returns
    -------
    ag_new : numpy.ndarray
        Tapered acceleration, m/s^2.
    step : ProcessingStep
        Taper lengths and the figures before and after.
    """
    a, dt = check_record(ag, dt)
    t0 = positive_number(start, "start", True)
    t1 = positive_number(end, "end", True)
    duration = (a.size - 1) * dt
    if t0 + t1 > duration * (1.0 + 1e-12):
        raise InputError(f"start + end ({t0 + t1:g} s) exceed the record ({duration:g} s)", "end")
    t = np.arange(a.size) * dt
    w = np.ones(a.size)
    if t0 > 0.0:
        m = t < t0
        w[m] = 0.5 * (1.0 - np.cos(np.pi * t[m] / t0))
    if t1 > 0.0:
        r = duration - t
        m = r < t1
        w[m] *= 0.5 * (1.0 - np.cos(np.pi * r[m] / t1))
    out = a * w
    figures = {**_end_figures(a, dt, "before"), **_end_figures(out, dt, "after")}
    text = f"Taper: cosine taper over the first {t0:g} s and the last {t1:g} s."
    return out, ProcessingStep("taper", {"start": t0, "end": t1}, figures, text)


def pad(
    ag: np.ndarray | Sequence[float], dt: float, before: float = 0.0, after: float = 0.0
) -> tuple[np.ndarray, ProcessingStep]:
    """Add zeros before and/or after the record.

    Zeros after the record give the structure a free-vibration tail, so that peaks
    reached after the ground stops are seen.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    before, after : float, optional
        Seconds of zeros to add at the start and at the end (rounded up to whole
        steps), >= 0.

    Returns
    -------
    ag_new : numpy.ndarray
        Padded acceleration, m/s^2.
    step : ProcessingStep
        Samples and seconds added.
    """
    a, dt = check_record(ag, dt)
    n0 = int(np.ceil(positive_number(before, "before", True) / dt - 1e-9))
    n1 = int(np.ceil(positive_number(after, "after", True) / dt - 1e-9))
    out = np.concatenate([np.zeros(n0), a, np.zeros(n1)])
    params = {"before": n0 * dt, "after": n1 * dt, "samples_before": n0, "samples_after": n1}
    figures = {"duration_before": (a.size - 1) * dt, "duration_after": (out.size - 1) * dt}
    text = (
        f"Padding: {n0 * dt:g} s of zeros before and {n1 * dt:g} s after the record "
        "(free-vibration tail)."
    )
    return out, ProcessingStep("pad", params, figures, text)


def resample(
    ag: np.ndarray | Sequence[float], dt: float, new_dt: float
) -> tuple[np.ndarray, float, ProcessingStep]:
    """Resample to a finer step by linear interpolation.

    The piecewise-linear record is unchanged: the new samples lie on the straight
    lines between the old ones, so the exact response (e.g.
    :func:`thist.spectrum.response_spectrum`) is the same.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    new_dt : float
        New step, s, 0 < new_dt <= dt.  Samples are taken at k * new_dt up to the
        end of the record.

    Returns
    -------
    ag_new : numpy.ndarray
        Resampled acceleration, m/s^2.
    new_dt : float
        The new step, s.
    step : ProcessingStep
        Old and new steps and sample counts.
    """
    a, dt = check_record(ag, dt)
    h = positive_number(new_dt, "new_dt")
    if h > dt * (1.0 + 1e-12):
        raise InputError(
            f"must not be coarser than the record step {dt:g} s (only refinement is "
            f"offered), got {new_dt!r}",
            "new_dt",
        )
    duration = (a.size - 1) * dt
    n_new = int(np.floor(duration / h * (1.0 + 1e-12))) + 1
    t_new = np.arange(n_new) * h
    out = np.interp(t_new / dt, np.arange(a.size, dtype=np.float64), a)
    params = {"dt_before": dt, "dt_after": h}
    figures = {"samples_before": float(a.size), "samples_after": float(n_new)}
    text = f"Resampling: linear interpolation from dt = {dt:g} s to dt = {h:g} s."
    return out, h, ProcessingStep("resample", params, figures, text)


def analysis_step_warning(record_dt: float, analysis_dt: float) -> str | None:
    """Warning text if an analysis step would be coarser than the record's step.

    Parameters
    ----------
    record_dt, analysis_dt : float
        Steps of the record and of the analysis, s.

    Returns
    -------
    str or None
        A plain warning when ``analysis_dt > record_dt``, else None.
    """
    rdt = positive_number(record_dt, "record_dt")
    adt = positive_number(analysis_dt, "analysis_dt")
    if adt > rdt * (1.0 + 1e-12):
        return (
            f"analysis step {adt:g} s is coarser than the record step {rdt:g} s: "
            "samples of the record would be skipped; use an analysis step no coarser "
            "than the record's (resample the record to a finer step if needed)"
        )
    return None


_STEP_KEYS: dict[str, tuple[str, ...]] = {
    "baseline": ("order",),
    "filter": ("kind", "f_low", "f_high", "order", "pad_time"),
    "taper": ("start", "end"),
    "pad": ("before", "after"),
    "resample": ("dt",),
}


def apply_steps(
    ag: np.ndarray | Sequence[float], dt: float, steps: Sequence[Mapping[str, Any]]
) -> tuple[np.ndarray, float, tuple[ProcessingStep, ...]]:
    """Run processing steps in order.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    steps : sequence of mapping
        Plain dicts, each with ``"step"`` naming the step and its parameters (SI):
        ``{"step": "baseline", "order": 1}``,
        ``{"step": "filter", "kind": "bandpass", "f_low": 0.1, "f_high": 25, "order": 4}``,
        ``{"step": "taper", "start": 1.0, "end": 2.0}``,
        ``{"step": "pad", "before": 0, "after": 10}``, ``{"step": "resample", "dt": 0.005}``.

    Returns
    -------
    ag, dt : numpy.ndarray, float
        The processed record and its step.
    log : tuple of ProcessingStep
        What each step did, in order.

    Raises
    ------
    InputError
        With the field ``steps[i]`` or ``steps[i].key`` for an unknown step, an
        unknown key or a bad value.
    """
    a, dt = check_record(ag, dt)
    log: list[ProcessingStep] = []
    for i, spec in enumerate(steps):
        where = f"steps[{i}]"
        if not isinstance(spec, Mapping) or "step" not in spec:
            raise InputError('must be a table with a "step" name', where)
        name = spec["step"]
        if name not in _STEP_KEYS:
            raise InputError(
                f"unknown step {name!r}; known: {', '.join(_STEP_KEYS)}", f"{where}.step"
            )
        kwargs = {k: v for k, v in spec.items() if k != "step"}
        for k in kwargs:
            if k not in _STEP_KEYS[name]:
                raise InputError(
                    f"unknown parameter for step {name!r}; known: {', '.join(_STEP_KEYS[name])}",
                    f"{where}.{k}",
                )
        try:
            if name == "baseline":
                a, rec = baseline_correct(a, dt, **kwargs)
            elif name == "filter":
                a, rec = butterworth_filter(a, dt, **kwargs)
            elif name == "taper":
                a, rec = taper(a, dt, **kwargs)
            elif name == "pad":
                a, rec = pad(a, dt, **kwargs)
            else:
                if "dt" not in kwargs:
                    raise InputError("is required (new step in s)", "dt")
                a, dt, rec = resample(a, dt, kwargs["dt"])
        except InputError as err:
            if err.field == "new_dt":
                err = InputError(err.problem, "dt", err.file)
            raise err.located(prefix=where) from None
        log.append(rec)
    return a, dt, tuple(log)
