"""Intensity measures and durations of a ground-acceleration record.

All integrals use the trapezoidal rule on the samples (velocity from acceleration,
displacement from velocity, Arias intensity, CAV), i.e. one consistent rule
throughout.  Inputs are SI: acceleration in m/s^2, time in s.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.integrate import cumulative_trapezoid

from thist.errors import InputError

__all__ = [
    "G_STANDARD",
    "IntensityMeasures",
    "arias_intensity",
    "check_record",
    "ground_motion_histories",
    "intensity_measures",
    "mean_period",
]

G_STANDARD = 9.80665
"""Standard gravity, m/s^2 (CGPM 1901; ISO 80000-3)."""


@dataclass(frozen=True)
class IntensityMeasures:
    """Intensity measures and durations of one record (SI units).

    Attributes
    ----------
    pga, pgv, pgd : float
        Peak absolute ground acceleration (m/s^2), velocity (m/s), displacement (m).
    t_pga, t_pgv, t_pgd : float
        Times of those peaks, s (first occurrence).
    arias : float
        Arias intensity pi/(2 g) * integral(ag^2 dt), m/s (Arias 1970).
    husid : numpy.ndarray
        Normalised cumulative Arias intensity (Husid curve), 0 .. 1, shape (N,).
    t5, t75, t95 : float
        Times at which the Husid curve reaches 5 %, 75 % and 95 %, s.
    d5_95, d5_75 : float
        Significant durations t95 - t5 and t75 - t5, s (Trifunac & Brady 1975).
    bracket_threshold : float
        Acceleration threshold of the bracketed duration, m/s^2.
    bracketed_duration : float
        Time between the first and last samples with |ag| >= threshold, s (0 if
        never reached).
    cav : float
        Cumulative absolute velocity integral(|ag| dt), m/s.
    mean_period : float
        Mean period T_m (Rathje, Abrahamson & Bray 1998), s; NaN if no Fourier
        amplitude falls in the band.
    mean_period_band : tuple of float
        Frequency band (Hz) actually used for T_m (upper end limited by Nyquist).
    dt : float
        Sampling step, s.
    """

    pga: float
    t_pga: float
    pgv: float
    t_pgv: float
    pgd: float
    t_pgd: float
    arias: float
    husid: np.ndarray
    t5: float
    t75: float
    t95: float
    d5_95: float
    d5_75: float
    bracket_threshold: float
    bracketed_duration: float
    cav: float
    mean_period: float
    mean_period_band: tuple[float, float]
    dt: float

    def summary(self) -> dict[str, float | list[float]]:
        """Scalar measures as a plain dict (SI), e.g. for results.json."""
        keys = (
            "pga t_pga pgv t_pgv pgd t_pgd arias t5 t75 t95 d5_95 d5_75 "
            "bracket_threshold bracketed_duration cav mean_period dt"
        ).split()
        out: dict[str, float | list[float]] = {k: float(getattr(self, k)) for k in keys}
        out["mean_period_band"] = [float(x) for x in self.mean_period_band]
        return out


def check_record(ag: np.ndarray | Sequence[float], dt: float) -> tuple[np.ndarray, float]:
    """Validate a record and its step.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2; 1-D, at least 2 finite samples.
    dt : float
        Sampling step, s; finite and > 0.

    Returns
    -------
    ag, dt : numpy.ndarray, float
        A contiguous float64 array and the step as a float.

    Raises
    ------
    InputError
        Naming ``ag`` or ``dt``.
    """
    a = np.asarray(ag, dtype=np.float64)
    if a.ndim != 1 or a.size < 2:
        raise InputError("must be a 1-D array of at least 2 samples", "ag")
    if not np.all(np.isfinite(a)):
        raise InputError("contains non-finite values", "ag")
    try:
        dt = float(dt)
    except (TypeError, ValueError) as exc:
        raise InputError(f"must be a number, got {dt!r}", "dt") from exc
    if not (np.isfinite(dt) and dt > 0.0):
        raise InputError(f"must be a positive time step in s, got {dt!r}", "dt")
    return np.ascontiguousarray(a), dt


def ground_motion_histories(
    ag: np.ndarray | Sequence[float], dt: float
) -> tuple[np.ndarray, np.ndarray]:
    """Ground velocity and displacement by trapezoidal integration from rest.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2, shape (N,).
    dt : float
        Sampling step, s.

    Returns
    -------
    vel, disp : numpy.ndarray
        Ground velocity (m/s) and displacement (m), shape (N,), both 0 at t = 0.
    """
    a, dt = check_record(ag, dt)
    vel = cumulative_trapezoid(a, dx=dt, initial=0.0)
    disp = cumulative_trapezoid(vel, dx=dt, initial=0.0)
    return vel, disp


def arias_intensity(ag: np.ndarray | Sequence[float], dt: float) -> tuple[float, np.ndarray]:
    """Arias intensity and the Husid curve.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.

    Returns
    -------
    arias : float
        I_a = pi / (2 g) * integral(ag^2 dt), m/s (Arias 1970), g = 9.80665 m/s^2.
    husid : numpy.ndarray
        Cumulative I_a(t) / I_a, shape (N,) (all zeros for a zero record).
    """
    a, dt = check_record(ag, dt)
    cum = cumulative_trapezoid(a * a, dx=dt, initial=0.0) * (np.pi / (2.0 * G_STANDARD))
    total = float(cum[-1])
    husid = cum / total if total > 0.0 else np.zeros_like(cum)
    return total, husid


def _crossing_time(curve: np.ndarray, dt: float, level: float) -> float:
    """First time a non-decreasing sampled curve reaches ``level`` (linear interpolation)."""
    k = int(np.searchsorted(curve, level, side="left"))
    if k == 0:
        return 0.0
    if k >= curve.size:
        return (curve.size - 1) * dt
    c0, c1 = curve[k - 1], curve[k]
    frac = (level - c0) / (c1 - c0) if c1 > c0 else 0.0
    return (k - 1 + frac) * dt


def mean_period(
    ag: np.ndarray | Sequence[float], dt: float, band: tuple[float, float] = (0.25, 20.0)
) -> tuple[float, tuple[float, float]]:
    """Mean period T_m of Rathje, Abrahamson & Bray (1998).

    T_m = sum(C_i^2 / f_i) / sum(C_i^2) over the discrete Fourier frequencies f_i in
    the band 0.25 Hz <= f_i <= 20 Hz, with C_i the Fourier amplitudes (Rathje, E. M.,
    Abrahamson, N. A. & Bray, J. D. 1998, "Simplified frequency content estimates of
    earthquake ground motions", J. Geotech. Geoenviron. Eng. 124(2), 150-159).

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    band : tuple of float, optional
        Frequency band, Hz (default the published 0.25-20 Hz).

    Returns
    -------
    tm : float
        Mean period, s (NaN if no non-zero amplitude lies in the band).
    band_used : tuple of float
        The band actually used, Hz (the upper end is capped at the Nyquist frequency).
    """
    a, dt = check_record(ag, dt)
    f_lo, f_hi = float(band[0]), float(band[1])
    if not (0.0 < f_lo < f_hi):
        raise InputError(f"need 0 < low < high, got {band!r}", "mean_period_band")
    f_hi = min(f_hi, 0.5 / dt)
    amp = np.abs(np.fft.rfft(a)) * dt
    freq = np.fft.rfftfreq(a.size, dt)
    sel = (freq >= f_lo) & (freq <= f_hi)
    c2 = amp[sel] ** 2
    if not np.any(c2 > 0.0):
        return float("nan"), (f_lo, f_hi)
    return float(np.sum(c2 / freq[sel]) / np.sum(c2)), (f_lo, f_hi)


def intensity_measures(
    ag: np.ndarray | Sequence[float],
    dt: float,
    *,
    bracket_threshold: float = 0.05 * G_STANDARD,
    mean_period_band: tuple[float, float] = (0.25, 20.0),
) -> IntensityMeasures:
    """Peak values, Arias intensity, durations, CAV and mean period of a record.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2, sampled at ``dt``.
    dt : float
        Sampling step, s.
    bracket_threshold : float, optional
        Threshold of the bracketed duration, m/s^2 (default 0.05 g, common practice,
        from memory).
    mean_period_band : tuple of float, optional
        Band of the mean period, Hz (default 0.25-20 Hz, Rathje et al. 1998).

    Returns
    -------
    IntensityMeasures
        The measures in SI units.

    Notes
    -----
    Velocity and displacement start from rest and come from the trapezoidal rule;
    they are those of the record as given (no baseline correction is applied here).
    Significant durations follow Trifunac & Brady (1975), Bull. Seismol. Soc. Am.
    65(3), with the 5/75/95 % times interpolated linearly between samples.
    """
    a, dt = check_record(ag, dt)
    thr = float(bracket_threshold)
    if not (np.isfinite(thr) and thr > 0.0):
        raise InputError(
            f"must be a positive acceleration in m/s^2, got {thr!r}", "bracket_threshold"
        )
    vel, disp = ground_motion_histories(a, dt)
    k_a, k_v, k_d = (int(np.argmax(np.abs(x))) for x in (a, vel, disp))
    arias, husid = arias_intensity(a, dt)
    if arias > 0.0:
        t5, t75, t95 = (_crossing_time(husid, dt, lv) for lv in (0.05, 0.75, 0.95))
    else:
        t5 = t75 = t95 = 0.0
    above = np.flatnonzero(np.abs(a) >= thr)
    bracketed = float((above[-1] - above[0]) * dt) if above.size else 0.0
    cav = float(np.trapezoid(np.abs(a), dx=dt))
    tm, band_used = mean_period(a, dt, mean_period_band)
    husid.flags.writeable = False
    return IntensityMeasures(
        pga=float(abs(a[k_a])),
        t_pga=k_a * dt,
        pgv=float(abs(vel[k_v])),
        t_pgv=k_v * dt,
        pgd=float(abs(disp[k_d])),
        t_pgd=k_d * dt,
        arias=arias,
        husid=husid,
        t5=t5,
        t75=t75,
        t95=t95,
        d5_95=t95 - t5,
        d5_75=t75 - t5,
        bracket_threshold=thr,
        bracketed_duration=bracketed,
        cav=cav,
        mean_period=tm,
        mean_period_band=band_used,
        dt=dt,
    )
