"""Scaling a record to a user-supplied target spectrum.

The target is the user's: a table of (period, PSA) pairs or a two-parameter shape
whose parameters the user supplies, always with the user's stated basis carried
along.  thist holds no code values.  Amplitude scaling multiplies the record by one
factor, so every linear spectral ordinate scales by that same factor.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from thist.errors import InputError
from thist.spectrum import Spectrum, default_periods, response_spectrum

__all__ = [
    "ScalingResult",
    "TargetSpectrum",
    "scale_record",
    "scale_spectrum",
    "target_from_table",
    "target_two_parameter",
]


@dataclass(frozen=True)
class TargetSpectrum:
    """A target pseudo-acceleration spectrum.

    Attributes
    ----------
    kind : str
        ``"table"`` or ``"two-parameter"``.
    basis : str
        The user's statement of where the target comes from (printed beside it).
    periods : numpy.ndarray
        Table periods, s (for ``"two-parameter"``: empty).
    psa : numpy.ndarray
        Table PSA values, m/s^2 (for ``"two-parameter"``: empty).
    s_short : float
        Short-period (plateau) spectral acceleration S_S, m/s^2 (two-parameter only).
    s_one : float
        Spectral acceleration at T = 1 s, S_1, m/s^2 (two-parameter only).
    t_long : float
        Long-period transition period T_L, s (two-parameter only).
    """

    kind: str
    basis: str
    periods: np.ndarray
    psa: np.ndarray
    s_short: float = float("nan")
    s_one: float = float("nan")
    t_long: float = float("nan")

    def psa_at(self, periods: np.ndarray | Sequence[float] | float) -> np.ndarray:
        """Target PSA at the given periods, m/s^2.

        Tables are interpolated linearly in log(period)-log(PSA); periods outside
        the table raise InputError (no extrapolation).  The two-parameter shape is
        (common practice, from memory) with T_S = S_1 * (1 s) / S_S, T_0 = 0.2 T_S:
        S_S (0.4 + 0.6 T / T_0) for T < T_0; S_S up to T_S; S_1 (1 s) / T up to T_L;
        S_1 (1 s) T_L / T^2 beyond.
        """
        t = np.atleast_1d(np.asarray(periods, dtype=np.float64))
        if not np.all(np.isfinite(t) & (t > 0.0)):
            raise InputError("periods must be finite and > 0", "target.periods")
        if self.kind == "table":
            lo, hi = self.periods[0], self.periods[-1]
            if np.any(t < lo * (1 - 1e-12)) or np.any(t > hi * (1 + 1e-12)):
                raise InputError(
                    f"the target table covers {lo:g}-{hi:g} s only; requested "
                    f"{t.min():g}-{t.max():g} s",
                    "target.periods",
                )
            tc = np.clip(t, lo, hi)
            return np.exp(np.interp(np.log(tc), np.log(self.periods), np.log(self.psa)))
        ts = self.s_one / self.s_short
        t0 = 0.2 * ts
        out = np.where(
            t < t0,
            self.s_short * (0.4 + 0.6 * t / t0),
            np.where(
                t <= ts,
                self.s_short,
                np.where(t <= self.t_long, self.s_one / t, self.s_one * self.t_long / t**2),
            ),
        )
        return out

    def describe(self) -> str:
        """One line naming the target and the user's basis."""
        if self.kind == "table":
            what = (
                f"table of {self.periods.size} points, {self.periods[0]:g}-{self.periods[-1]:g} s"
            )
        else:
            what = (
                f"two-parameter shape S_S = {self.s_short:.4g} m/s^2, S_1 = {self.s_one:.4g} "
                f"m/s^2, T_L = {self.t_long:g} s"
            )
        return f"target spectrum ({what}); basis stated by the user: {self.basis}"


def _basis(basis: str) -> str:
    if not isinstance(basis, str) or not basis.strip():
        raise InputError(
            "state the basis of the target spectrum (a non-empty text)", "target.basis"
        )
    return basis.strip()


def target_from_table(
    periods: np.ndarray | Sequence[float], psa: np.ndarray | Sequence[float], basis: str
) -> TargetSpectrum:
    """Target spectrum from a table.

    Parameters
    ----------
    periods : array_like
        Periods, s, strictly increasing, > 0, at least 2.
    psa : array_like
        Pseudo-spectral accelerations, m/s^2, > 0, same length.
    basis : str
        The user's statement of where the values come from.

    Returns
    -------
    TargetSpectrum
    """
    t = np.asarray(periods, dtype=np.float64).ravel()
    s = np.asarray(psa, dtype=np.float64).ravel()
    if t.size < 2 or t.size != s.size:
        raise InputError("need at least 2 (period, PSA) pairs of equal length", "target.periods")
    if not np.all(np.isfinite(t) & (t > 0.0)) or np.any(np.diff(t) <= 0.0):
        raise InputError("periods must be > 0 and strictly increasing", "target.periods")
    if not np.all(np.isfinite(s) & (s > 0.0)):
        raise InputError("PSA values must be finite and > 0", "target.psa")
    t, s = t.copy(), s.copy()
    t.flags.writeable = False
    s.flags.writeable = False
    return TargetSpectrum("table", _basis(basis), t, s)


def target_two_parameter(s_short: float, s_one: float, t_long: float, basis: str) -> TargetSpectrum:
    """Target spectrum from the user's two-parameter shape.

    Parameters
    ----------
    s_short : float
        Short-period spectral acceleration S_S, m/s^2, > 0.
    s_one : float
        Spectral acceleration at 1 s, S_1, m/s^2, > 0.
    t_long : float
        Long-period transition period T_L, s, > S_1 / S_S * 1 s.
    basis : str
        The user's statement of where the parameters come from.

    Returns
    -------
    TargetSpectrum
        See :meth:`TargetSpectrum.psa_at` for the shape.
    """
    vals = {"target.s_short": s_short, "target.s_one": s_one, "target.t_long": t_long}
    for name, v in vals.items():
        if not (isinstance(v, int | float) and np.isfinite(v) and v > 0.0):
            raise InputError(f"must be a positive number (SI), got {v!r}", name)
    if t_long <= s_one / s_short:
        raise InputError(
            f"must exceed T_S = S_1/S_S = {s_one / s_short:g} s, got {t_long!r}", "target.t_long"
        )
    empty = np.empty(0)
    empty.flags.writeable = False
    return TargetSpectrum(
        "two-parameter", _basis(basis), empty, empty, float(s_short), float(s_one), float(t_long)
    )


@dataclass(frozen=True)
class ScalingResult:
    """Outcome of scaling a record to a target.

    Attributes
    ----------
    factor : float
        Scale factor applied (after the bounds), dimensionless.
    unbounded_factor : float
        The best factor before the bounds were applied.
    period_range : tuple of float
        Matching periods (t_lo, t_hi), s; equal for a single-period match.
    matching_periods : numpy.ndarray
        Periods at which the misfit was evaluated, s.
    misfit : float
        RMS of ln(PSA_scaled / PSA_target) over the matching periods.
    bounds : tuple of float
        (lower, upper) bounds set by the user.
    bound_hit : str or None
        ``"lower"`` or ``"upper"`` if a bound decided the factor, else None.
    warning : str or None
        Plain text when a bound binds.
    target : TargetSpectrum
        The target.
    before, after : Spectrum
        Record spectrum before and after scaling.
    """

    factor: float
    unbounded_factor: float
    period_range: tuple[float, float]
    matching_periods: np.ndarray
    misfit: float
    bounds: tuple[float, float]
    bound_hit: str | None
    warning: str | None
    target: TargetSpectrum
    before: Spectrum
    after: Spectrum


def _scaled(spec: Spectrum, f: float) -> Spectrum:
    """The spectrum of the record multiplied by ``f`` (exact: the response is linear)."""
    arrays = {}
    for name in ("sd", "sv", "sa_abs", "psv", "psa"):
        x = getattr(spec, name) * f
        x.flags.writeable = False
        arrays[name] = x
    return dataclasses.replace(spec, pga=spec.pga * f, **arrays)


def scale_spectrum(
    spectrum: Spectrum,
    target: TargetSpectrum,
    *,
    period: float | None = None,
    period_range: tuple[float, float] | None = None,
    bounds: tuple[float, float] = (0.0, float("inf")),
) -> ScalingResult:
    """Scale factor of a record, given its spectrum, to match a target.

    Parameters
    ----------
    spectrum : Spectrum
        Spectrum of the record for one damping ratio; the matching periods must be
        among its periods (see :func:`scale_record`, which takes care of that).
    target : TargetSpectrum
        The user's target.
    period : float, optional
        Match PSA at this one period, s (e.g. the fundamental period T_1).
    period_range : tuple of float, optional
        Minimise sum(ln(f PSA_i) - ln(PSA_target,i))^2 over the spectrum periods in
        [t_lo, t_hi] (the user's range, e.g. 0.2 T_1 to 2 T_1, a common practice,
        from memory).  The optimum is ln f = mean(ln PSA_target,i - ln PSA_i).
        Exactly one of ``period`` and ``period_range`` must be given.
    bounds : tuple of float, optional
        (lower, upper) limits on the factor set by the user; since the misfit is a
        convex quadratic in ln f, the bounded optimum is the clipped one.

    Returns
    -------
    ScalingResult
    """
    if not isinstance(spectrum, Spectrum) or np.ndim(spectrum.sd) != 1:
        raise InputError("needs the spectrum of one record for one damping ratio", "spectrum")
    lo_b, hi_b = (float(b) for b in bounds)
    if not (0.0 <= lo_b < hi_b) or np.isnan(hi_b):
        raise InputError(f"need 0 <= lower < upper, got {bounds!r}", "scaling.bounds")
    periods = spectrum.periods
    if (period is None) == (period_range is None):
        raise InputError("give exactly one of a period or a period range", "scaling.period")
    if period is not None:
        t1 = float(period)
        k = np.flatnonzero(np.isclose(periods, t1, rtol=1e-12, atol=0.0))
        if not (np.isfinite(t1) and t1 > 0.0) or k.size == 0:
            raise InputError(f"{period!r} s is not a period of the spectrum", "scaling.period")
        sel = k[:1]
        rng = (t1, t1)
    else:
        t_lo, t_hi = (float(x) for x in period_range)  # type: ignore[union-attr]
        if not (0.0 < t_lo < t_hi and np.isfinite(t_hi)):
            raise InputError(f"need 0 < t_lo < t_hi, got {period_range!r}", "scaling.period_range")
        sel = np.flatnonzero((periods >= t_lo * (1 - 1e-12)) & (periods <= t_hi * (1 + 1e-12)))
        if sel.size == 0:
            raise InputError("no spectrum period lies in the range", "scaling.period_range")
        rng = (t_lo, t_hi)
    t_sel = periods[sel]
    psa_rec = spectrum.psa[sel]
    if np.any(psa_rec <= 0.0):
        raise InputError("the record has zero spectral acceleration in the range", "ag")
    psa_tgt = target.psa_at(t_sel)
    log_ratio = np.log(psa_tgt) - np.log(psa_rec)
    f0 = float(np.exp(np.mean(log_ratio)))
    f = float(np.clip(f0, lo_b, hi_b))
    hit: str | None = None
    warning: str | None = None
    if f0 < lo_b:
        hit = "lower"
    elif f0 > hi_b:
        hit = "upper"
    if hit is not None:
        warning = (
            f"the {hit} bound on the scale factor binds: best factor {f0:.4g}, used {f:.4g}; "
            "the scaled record does not match the target as closely as it could"
        )
    if f > 0.0:
        misfit = float(np.sqrt(np.mean((np.log(f) - log_ratio) ** 2)))
    else:
        misfit = float("inf")
    t_sel = t_sel.copy()
    t_sel.flags.writeable = False
    return ScalingResult(
        factor=f,
        unbounded_factor=f0,
        period_range=rng,
        matching_periods=t_sel,
        misfit=misfit,
        bounds=(lo_b, hi_b),
        bound_hit=hit,
        warning=warning,
        target=target,
        before=spectrum,
        after=_scaled(spectrum, f),
    )


def scale_record(
    ag: np.ndarray | Sequence[float],
    dt: float,
    target: TargetSpectrum,
    *,
    period: float | None = None,
    period_range: tuple[float, float] | None = None,
    bounds: tuple[float, float] = (0.0, float("inf")),
    damping: float = 0.05,
    n_match: int = 50,
    periods: np.ndarray | Sequence[float] | None = None,
) -> tuple[np.ndarray, ScalingResult]:
    """Scale a record to a target spectrum.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2.
    dt : float
        Sampling step, s.
    target : TargetSpectrum
        The user's target.
    period, period_range, bounds
        As in :func:`scale_spectrum`.
    damping : float, optional
        Damping ratio of the spectra (default 0.05).
    n_match : int, optional
        Number of log-spaced matching periods in ``period_range`` (default 50).
    periods : array_like, optional
        Periods of the reported spectra, s (default :func:`default_periods`); the
        matching periods are added to them.

    Returns
    -------
    ag_scaled : numpy.ndarray
        factor * ag, m/s^2.
    result : ScalingResult
    """
    base = default_periods() if periods is None else np.asarray(periods, dtype=np.float64).ravel()
    if period is not None:
        extra = np.atleast_1d(float(period))
    elif period_range is not None:
        t_lo, t_hi = (float(x) for x in period_range)
        if not (0.0 < t_lo < t_hi and np.isfinite(t_hi)):
            raise InputError(f"need 0 < t_lo < t_hi, got {period_range!r}", "scaling.period_range")
        if not (isinstance(n_match, int) and n_match >= 2):
            raise InputError(f"must be an integer >= 2, got {n_match!r}", "scaling.n_match")
        extra = np.geomspace(t_lo, t_hi, n_match)
    else:
        raise InputError("give exactly one of a period or a period range", "scaling.period")
    grid = np.unique(np.concatenate([base, extra]))
    spec = response_spectrum(ag, dt, grid, damping)
    if period_range is not None:
        # Match only on the log-spaced matching grid, not on the report grid.
        keep = np.isin(grid, extra)
        sub = _subset(spec, keep)
        res = scale_spectrum(sub, target, period_range=period_range, bounds=bounds)
        res = dataclasses.replace(res, before=spec, after=_scaled(spec, res.factor))
    else:
        res = scale_spectrum(spec, target, period=period, bounds=bounds)
    return np.asarray(ag, dtype=np.float64) * res.factor, res


def _subset(spec: Spectrum, keep: np.ndarray) -> Spectrum:
    """The spectrum restricted to the periods where ``keep`` is true."""
    fields = {n: getattr(spec, n)[keep] for n in ("periods", "sd", "sv", "sa_abs", "psv", "psa")}
    return dataclasses.replace(spec, **fields)
