"""Linear elastic response spectra of a ground-acceleration record.

The oscillator of natural circular frequency omega and damping ratio zeta on a
shaking base obeys

    u'' + 2 zeta omega u' + omega**2 u = -ag(t),

with u the displacement relative to the base, starting at rest at the first sample.
Between samples the record is taken to vary linearly (first-order hold), and the
response at the sample instants is computed *exactly* for that piecewise-linear
record (Nigam & Jennings 1969, "Calculation of response spectra from strong-motion
earthquake records", Bull. Seismol. Soc. Am. 59(2), 909-922).  There is no
stability or accuracy limit on dt/T: for a period shorter than the sampling step
the values at the sample instants stay exact, only the peak *between* samples is
not seen (use ``substeps`` to look between them; the record is still the same
piecewise-linear function, so the result stays exact).

How it is computed
------------------
For 0 <= zeta < 1 the state (u, u') is ``2 Re(y [1, lambda])`` with the complex modal
coordinate y and lambda = -zeta omega + i omega_d.  The exact one-step map is the
first-order complex recurrence

    y[k+1] = q y[k] + g0 ag[k] + g1 ag[k+1],   q = exp(lambda dt),

whose coefficients come from integrating exp(lambda (dt - s)) against the two
linear hat functions (the same closed form as Nigam & Jennings, written in complex
form).  Relative velocity is ``2 Re(lambda y)`` and absolute acceleration is
``u'' + ag = -(2 zeta omega u' + omega**2 u) = 2 Re(lambda**2 y)``.

All oscillators are advanced at once by a block formulation of that recurrence: the
record is cut into blocks of ``L`` steps; the responses inside every block of every
oscillator follow from one matrix product (BLAS) of a per-oscillator block-Toeplitz
kernel with the record blocks, plus the free response from the block-start state;
the block-start states follow from a short recurrence over blocks.  This gives the
same numbers as the step-by-step recurrence (to round-off) at compiled speed, without
a Python loop over samples.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view

from thist.errors import InputError
from thist.intensity import check_record

__all__ = ["Spectrum", "default_periods", "response_spectrum"]

_BLOCK = 16  # steps per block of the block recurrence (tuned in benchmarks/bench_spectrum.py)
_SERIES_RADIUS = 0.5  # |z| below which the phi functions use their Taylor series


@dataclass(frozen=True)
class Spectrum:
    """Linear elastic response spectra of one record.

    Attributes
    ----------
    periods : numpy.ndarray
        Oscillator periods T, s, shape (n_periods,).
    damping : float or numpy.ndarray
        Damping ratio(s) zeta, dimensionless: a float, or shape (n_damping,).
    sd : numpy.ndarray
        Peak relative displacement max|u|, m.
    sv : numpy.ndarray
        Peak relative velocity max|u'|, m/s.
    sa_abs : numpy.ndarray
        Peak absolute acceleration max|u'' + ag|, m/s^2.
    psv : numpy.ndarray
        Pseudo-spectral velocity omega * SD, m/s.
    psa : numpy.ndarray
        Pseudo-spectral acceleration omega**2 * SD, m/s^2.
    pga : float
        Peak ground acceleration max|ag|, m/s^2 (the T -> 0 limit of PSA).
    dt : float
        Sampling step of the record, s.
    substeps : int
        Number of sub-steps per record step at which peaks were sought.

    Notes
    -----
    Spectral arrays have shape (n_periods,) for a scalar damping and
    (n_damping, n_periods) for a sequence of damping ratios.  Peaks are taken over
    the duration of the record (append a free-vibration tail with
    :func:`thist.processing.pad` to include the response after the record ends).
    """

    periods: np.ndarray
    damping: float | np.ndarray
    sd: np.ndarray
    sv: np.ndarray
    sa_abs: np.ndarray
    psv: np.ndarray
    psa: np.ndarray
    pga: float
    dt: float
    substeps: int = 1

    @property
    def omega(self) -> np.ndarray:
        """Circular frequencies 2 pi / T, rad/s, shape (n_periods,)."""
        return 2.0 * np.pi / self.periods


def default_periods(n: int = 200, t_min: float = 0.02, t_max: float = 10.0) -> np.ndarray:
    """Return the default period grid: ``n`` log-spaced periods, s.

    Parameters
    ----------
    n : int, optional
        Number of periods (default 200).
    t_min, t_max : float, optional
        Shortest and longest period, s (default 0.02 s and 10 s).

    Returns
    -------
    numpy.ndarray
        Periods in s, increasing, shape (n,).
    """
    if not (isinstance(n, int | np.integer) and n >= 1):
        raise InputError(f"must be a positive integer, got {n!r}", "n")
    if not (np.isfinite(t_min) and np.isfinite(t_max) and 0.0 < t_min <= t_max):
        raise InputError(f"need 0 < t_min <= t_max, got {t_min!r}, {t_max!r}", "periods")
    return np.geomspace(float(t_min), float(t_max), int(n))


def _phi_coefficients(z: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Exact first-order-hold weights of the complex modal recurrence.

    Parameters
    ----------
    z : numpy.ndarray
        lambda * dt (complex).

    Returns
    -------
    q, w0, w1 : numpy.ndarray
        ``q = exp(z)``; ``w0 = (z q - q + 1) / z**2`` and ``w1 = (q - 1 - z) / z**2``,
        the weights (per unit dt) of the start and end samples of a step.  Near
        z = 0 the Taylor series is used to avoid cancellation.
    """
    q = np.exp(z)
    w0 = np.empty_like(z)
    w1 = np.empty_like(z)
    small = np.abs(z) < _SERIES_RADIUS
    big = ~small
    zb, qb = z[big], q[big]
    w0[big] = (zb * qb - qb + 1.0) / zb**2
    w1[big] = (qb - 1.0 - zb) / zb**2
    zs = z[small]
    # phi1 = (e^z - 1)/z = sum z^n/(n+1)!, phi2 = (e^z - 1 - z)/z^2 = sum z^n/(n+2)!;
    # w0 = phi1 - phi2, w1 = phi2.  |z| < 0.5: 20 terms reach round-off.
    p1 = np.zeros_like(zs)
    p2 = np.zeros_like(zs)
    t1 = np.ones_like(zs)
    t2 = np.full_like(zs, 0.5)
    for n in range(20):
        p1 += t1
        p2 += t2
        t1 = t1 * zs / (n + 2)
        t2 = t2 * zs / (n + 3)
    w0[small] = p1 - p2
    w1[small] = p2
    return q, w0, w1


def _peak_responses(a: np.ndarray, dt: float, omega: np.ndarray, zeta: np.ndarray) -> np.ndarray:
    """Peaks of |u|, |u'|, |u'' + ag| over the samples, for every oscillator.

    Parameters
    ----------
    a : numpy.ndarray
        Ground acceleration, m/s^2, shape (N,), N >= 2.
    dt : float
        Step, s.
    omega, zeta : numpy.ndarray
        Circular frequency (rad/s) and damping ratio (0 <= zeta < 1) of each
        oscillator, shape (P,).

    Returns
    -------
    numpy.ndarray
        Shape (P, 3): peak relative displacement (m), relative velocity (m/s) and
        absolute acceleration (m/s^2).
    """
    n_samp = a.size
    n_osc = omega.size
    wd = omega * np.sqrt(1.0 - zeta**2)
    lam = -zeta * omega + 1j * wd
    q, w0, w1 = _phi_coefficients(lam * dt)
    beta = 0.5j / wd  # modal load factor for the load -ag
    g0 = beta * w0 * dt
    g1 = beta * w1 * dt
    c_out = np.stack([np.full(n_osc, 2.0 + 0.0j), 2.0 * lam, 2.0 * lam**2], axis=1)  # (P, 3)

    blk = min(_BLOCK, n_samp - 1)
    nb = (n_samp - 1) // blk  # full blocks; block m holds states m*blk .. m*blk+blk-1
    # alpha[i, m] = a[m*blk + i], i = 0..blk (each block needs blk+1 samples)
    alpha = np.ascontiguousarray(sliding_window_view(a, blk + 1)[::blk][:nb].T)

    # Kernel of the forced response inside a block, from a zero start state:
    # y[j] = sum_i K[j, i] alpha[i] with
    # K[j, i] = [i <= j-1] q^(j-1-i) g0 + [1 <= i <= j] q^(j-i) g1.
    n = np.arange(blk + 1)
    qp = q[:, None] ** n  # (P, blk+1)
    jj = n[:, None]
    ii = n[None, :]
    kern = np.where(ii <= jj - 1, qp[:, np.clip(jj - 1 - ii, 0, blk)] * g0[:, None, None], 0.0)
    kern = kern + np.where(
        (ii >= 1) & (ii <= jj), qp[:, np.clip(jj - ii, 0, blk)] * g1[:, None, None], 0.0
    )  # (P, blk+1, blk+1), row j = blk is the state at the start of the next block

    # Block-start states: s[m+1] = q^blk s[m] + (forced state at block end).
    k_end = kern[:, blk, :]
    e_ri = alpha.T @ np.concatenate([k_end.real, k_end.imag]).T  # (nb, 2P)
    eps = e_ri[:, :n_osc] + 1j * e_ri[:, n_osc:]  # (nb, P)
    q_blk = qp[:, blk]
    states = np.empty((nb + 1, n_osc), dtype=np.complex128)
    states[0] = 0.0
    for m in range(nb):  # nb = N/blk short vector steps (not a per-sample loop)
        np.multiply(q_blk, states[m], out=states[m + 1])
        states[m + 1] += eps[m]

    # Output rows (p, output r, j): forced part on alpha, free part on (Re s, Im s).
    w_forced = (c_out[:, :, None, None] * kern[:, None, :blk, :]).real  # (P, 3, blk, blk+1)
    free = c_out[:, :, None] * qp[:, None, :blk]  # (P, 3, blk)
    w_all = np.empty((n_osc, 3, blk, blk + 3))
    w_all[..., : blk + 1] = w_forced
    w_all[..., blk + 1] = free.real
    w_all[..., blk + 2] = -free.imag
    w_all = w_all.reshape(n_osc, 3 * blk, blk + 3)
    rhs = np.empty((blk + 3, nb))
    rhs[: blk + 1] = alpha
    s_ri = states[:nb].view(np.float64)  # (nb, 2P): Re, Im interleaved
    peaks = np.empty((n_osc, 3))
    for p in range(n_osc):  # one small GEMM per oscillator; data stay in cache
        rhs[blk + 1 :] = s_ri[:, 2 * p : 2 * p + 2].T
        y = (w_all[p] @ rhs).reshape(3, blk * nb)
        np.maximum(y.max(axis=1), -y.min(axis=1), out=peaks[p])

    # Tail: the last few states after the full blocks (fewer than blk steps).
    y_tail = states[nb].copy()
    for k in range(nb * blk, n_samp):
        np.maximum(peaks, np.abs((c_out * y_tail[:, None]).real), out=peaks)
        if k + 1 < n_samp:
            y_tail = q * y_tail + g0 * a[k] + g1 * a[k + 1]
    return peaks


def response_spectrum(
    ag: np.ndarray | Sequence[float],
    dt: float,
    periods: np.ndarray | Sequence[float] | None = None,
    damping: float | Sequence[float] = 0.05,
    *,
    substeps: int = 1,
) -> Spectrum:
    """Linear elastic response spectra, exact for a piecewise-linear record.

    Parameters
    ----------
    ag : array_like
        Ground acceleration, m/s^2, sampled at ``dt``; shape (N,), N >= 2.
    dt : float
        Sampling step, s.
    periods : array_like, optional
        Oscillator periods, s, all > 0.  Default :func:`default_periods` (200
        log-spaced periods from 0.02 s to 10 s).
    damping : float or sequence of float, optional
        Damping ratio(s), 0 <= zeta < 1 (default 0.05).
    substeps : int, optional
        Look for peaks also at ``substeps - 1`` equally spaced instants inside every
        record step (the record is linearly interpolated, i.e. it is the same
        piecewise-linear function, so the response stays exact).  Default 1.

    Returns
    -------
    Spectrum
        SD, SV, SA_abs, PSV, PSA and PGA.  Arrays have shape (n_periods,) for a
        scalar damping and (n_damping, n_periods) for a sequence.

    Raises
    ------
    InputError
        For an empty or non-finite record, dt <= 0, non-positive periods, damping
        outside [0, 1) or substeps < 1.

    Notes
    -----
    The oscillator starts at rest at the first sample and peaks are taken over the
    sample instants of the record (and sub-steps).  The values at those instants are
    exact for the piecewise-linear record at any dt/T; where dt/T is large (say above
    0.1) the true peak may fall between samples, so SD, SV and SA_abs may then be
    slightly low unless ``substeps`` is raised.  Method: Nigam & Jennings (1969),
    Bull. Seismol. Soc. Am. 59(2), evaluated for all oscillators at once (see the
    module docstring).
    """
    a, dt = check_record(ag, dt)
    if periods is None:
        t = default_periods()
    else:
        t = np.atleast_1d(np.asarray(periods, dtype=np.float64))
        if t.ndim != 1 or t.size == 0:
            raise InputError("must be a non-empty 1-D list of periods in s", "periods")
        if not np.all(np.isfinite(t) & (t > 0.0)):
            raise InputError("every period must be a finite number of seconds > 0", "periods")
    scalar_damping = np.ndim(damping) == 0
    z = np.atleast_1d(np.asarray(damping, dtype=np.float64))
    if z.ndim != 1 or z.size == 0:
        raise InputError("must be a number or a non-empty list of numbers", "damping")
    if not np.all(np.isfinite(z) & (z >= 0.0) & (z < 1.0)):
        raise InputError(
            f"each damping ratio must satisfy 0 <= zeta < 1, got {damping!r}", "damping"
        )
    if not (isinstance(substeps, int | np.integer) and substeps >= 1):
        raise InputError(f"must be an integer >= 1, got {substeps!r}", "substeps")
    substeps = int(substeps)

    pga = float(np.max(np.abs(a)))
    dt_run = dt
    if substeps > 1:
        t_rec = np.arange(a.size, dtype=np.float64)
        a = np.interp(np.arange((a.size - 1) * substeps + 1) / substeps, t_rec, a)
        dt_run = dt / substeps

    omega = 2.0 * np.pi / t
    om_all = np.tile(omega, z.size)
    z_all = np.repeat(z, t.size)
    peaks = _peak_responses(a, dt_run, om_all, z_all).reshape(z.size, t.size, 3)
    sd = peaks[..., 0]
    sv = peaks[..., 1]
    sa = peaks[..., 2]
    psv = omega * sd
    psa = omega**2 * sd
    out = [sd, sv, sa, psv, psa]
    if scalar_damping:
        out = [x[0] for x in out]
    for x in out:
        x.flags.writeable = False
    t = t.copy()
    t.flags.writeable = False
    damp: float | np.ndarray
    if scalar_damping:
        damp = float(z[0])
    else:
        damp = z.copy()
        damp.flags.writeable = False
    return Spectrum(
        periods=t,
        damping=damp,
        sd=out[0],
        sv=out[1],
        sa_abs=out[2],
        psv=out[3],
        psa=out[4],
        pga=pga,
        dt=dt,
        substeps=substeps,
    )
