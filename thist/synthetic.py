"""Synthetic ground-acceleration records (filtered, modulated white noise).

SYNTHETIC records are for demonstrations and trial runs.  They are not recorded
motions and not a substitute for recorded motions selected for the site.

Model
-----
Gaussian white noise w(t) with *two-sided* spectral density S0, i.e.
E[w(t) w(t + tau)] = 2 pi S0 delta(tau) and variance = integral of S over
-inf < omega < inf, drives the Kanai-Tajimi filter (Kanai 1957; Tajimi 1960)

    x'' + 2 zeta_g omega_g x' + omega_g^2 x = -w(t),   a_KT = -(2 zeta_g omega_g x' + omega_g^2 x),

whose output has the two-sided density

    S(omega) = S0 (omega_g^4 + 4 zeta_g^2 omega_g^2 omega^2)
               / ((omega_g^2 - omega^2)^2 + 4 zeta_g^2 omega_g^2 omega^2).

With the Clough-Penzien correction (Clough & Penzien, Dynamics of Structures,
1975) a second oscillator y'' + 2 zeta_f omega_f y' + omega_f^2 y = a_KT gives
a = y'' , multiplying S by omega^4 / ((omega_f^2 - omega^2)^2 + 4 zeta_f^2 omega_f^2 omega^2).

Discretisation is exact: the continuous linear system driven by white noise is
sampled with its state-transition matrix Phi = expm(A dt) and the exact covariance
of the noise accumulated over a step, Q = 2 pi S0 integral_0^dt expm(A s) b b^T
expm(A^T s) ds (Van Loan 1978, IEEE Trans. Autom. Control 23(3)); the process
starts in its stationary state.  The sampled stationary process therefore has
exactly the density S aliased onto the Nyquist band.  The state recurrence runs as
linear filters at C speed (scipy.signal.sosfilt).  The stationary record is then
multiplied by a time envelope (Saragoni & Hart 1974 gamma-type, or a trapezoid),
baseline-corrected (thist.processing) and scaled to a target PGA or Arias intensity.
Noise comes from ``numpy.random.default_rng(seed)``: the same seed and parameters
give the same record bit for bit (on the same numpy/scipy build).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
from scipy.linalg import expm, solve_discrete_lyapunov
from scipy.signal import sosfilt, ss2tf, tf2sos

from thist.errors import InputError
from thist.fileio import write_text
from thist.intensity import arias_intensity
from thist.processing import ProcessingStep, baseline_correct, positive_number

__all__ = [
    "SaragoniHartEnvelope",
    "SyntheticRecord",
    "TrapezoidEnvelope",
    "envelope_values",
    "kanai_tajimi_psd",
    "synthesize",
    "write_record",
]


@dataclass(frozen=True)
class SaragoniHartEnvelope:
    """Gamma-type envelope psi(t) = (t / t_peak)^b exp(b (1 - t / t_peak)).

    This is Saragoni & Hart's (1974) a t^b exp(-c t) with c = b / t_peak and ``a``
    chosen so that the peak is 1 at t_peak (Saragoni, G. R. & Hart, G. C. 1974,
    Earthquake Eng. Struct. Dyn. 2(3), 249-264).

    Attributes
    ----------
    b : float
        Shape exponent, > 0.
    t_peak : float
        Time of the peak of the envelope, s, > 0.
    """

    b: float
    t_peak: float


@dataclass(frozen=True)
class TrapezoidEnvelope:
    """Trapezoid envelope: linear rise, constant strong phase, linear decay to 0.

    Attributes
    ----------
    rise, strong, decay : float
        Durations of the three parts, s (>= 0); zero after rise + strong + decay.
    """

    rise: float
    strong: float
    decay: float


Envelope = SaragoniHartEnvelope | TrapezoidEnvelope | None


def envelope_values(envelope: Envelope, t: np.ndarray) -> np.ndarray:
    """Envelope at times ``t`` (s); ``None`` means 1 everywhere (stationary)."""
    t = np.asarray(t, dtype=np.float64)
    if envelope is None:
        return np.ones_like(t)
    if isinstance(envelope, SaragoniHartEnvelope):
        b, tp = envelope.b, envelope.t_peak
        x = np.maximum(t, 0.0) / tp
        with np.errstate(divide="ignore"):
            return np.where(x > 0.0, np.exp(b * (np.log(np.where(x > 0, x, 1.0)) + 1.0 - x)), 0.0)
    if isinstance(envelope, TrapezoidEnvelope):
        r, s, d = envelope.rise, envelope.strong, envelope.decay
        up = np.clip(t / r, 0.0, 1.0) if r > 0 else (t >= 0).astype(float)
        down = np.clip((r + s + d - t) / d, 0.0, 1.0) if d > 0 else (t <= r + s).astype(float)
        return np.minimum(up, down)
    raise InputError(f"unknown envelope {envelope!r}", "envelope")


def kanai_tajimi_psd(
    omega: np.ndarray | float,
    omega_g: float,
    zeta_g: float,
    s0: float,
    omega_f: float | None = None,
    zeta_f: float | None = None,
) -> np.ndarray:
    """Two-sided Kanai-Tajimi (optionally Clough-Penzien) spectral density.

    Parameters
    ----------
    omega : array_like
        Circular frequency, rad/s.
    omega_g, zeta_g : float
        Ground filter frequency (rad/s) and damping ratio.
    s0 : float
        Two-sided white-noise density, (m/s^2)^2 / (rad/s).
    omega_f, zeta_f : float, optional
        Clough-Penzien high-pass frequency (rad/s) and damping ratio.

    Returns
    -------
    numpy.ndarray
        S(omega), (m/s^2)^2 / (rad/s); the variance is its integral over all omega.
    """
    w2 = np.asarray(omega, dtype=np.float64) ** 2
    wg2 = omega_g**2
    four = 4.0 * zeta_g**2 * wg2 * w2
    s = s0 * (wg2**2 + four) / ((wg2 - w2) ** 2 + four)
    if omega_f is not None:
        assert zeta_f is not None
        wf2 = omega_f**2
        s = s * w2**2 / ((wf2 - w2) ** 2 + 4.0 * zeta_f**2 * wf2 * w2)
    return s


@dataclass(frozen=True)
class SyntheticRecord:
    """A synthetic ground-acceleration record and how it was made.

    Attributes
    ----------
    ag : numpy.ndarray
        Ground acceleration, m/s^2.
    dt : float
        Step, s.
    seed : int
        Seed of ``numpy.random.default_rng``.
    params : dict
        All generation parameters (SI), JSON-ready.
    scale_factor : float
        Factor applied to reach the target (1 if none).
    baseline : ProcessingStep or None
        The baseline correction applied, if any.
    """

    ag: np.ndarray
    dt: float
    seed: int
    params: dict[str, Any]
    scale_factor: float
    baseline: ProcessingStep | None


def _ratio(name: str, v: Any) -> float:
    if isinstance(v, bool) or not isinstance(v, int | float | np.floating) or not (0.0 < v < 1.0):
        raise InputError(f"must be a damping ratio with 0 < zeta < 1, got {v!r}", name)
    return float(v)


def _state_space(
    omega_g: float, zeta_g: float, omega_f: float | None, zeta_f: float | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Continuous (A, b, c): state' = A state + b w, output = c state."""
    if omega_f is None:
        a = np.array([[0.0, 1.0], [-(omega_g**2), -2.0 * zeta_g * omega_g]])
        b = np.array([0.0, -1.0])
        c = np.array([-(omega_g**2), -2.0 * zeta_g * omega_g])
        return a, b, c
    assert zeta_f is not None
    kt = np.array([-(omega_g**2), -2.0 * zeta_g * omega_g, 0.0, 0.0])  # a_KT = kt . state
    cp = kt + np.array([0.0, 0.0, -(omega_f**2), -2.0 * zeta_f * omega_f])  # y'' = a_KT - ...
    a = np.array(
        [
            [0.0, 1.0, 0.0, 0.0],
            [-(omega_g**2), -2.0 * zeta_g * omega_g, 0.0, 0.0],
            [0.0, 0.0, 0.0, 1.0],
            cp,
        ]
    )
    b = np.array([0.0, -1.0, 0.0, 0.0])
    return a, b, cp


def _sqrt_psd(q: np.ndarray) -> np.ndarray:
    """A matrix L with L L^T = q for a symmetric positive semi-definite q.

    Eigenvectors are defined up to sign, and LAPACK builds differ in the sign they
    return; each is turned so that its component of largest magnitude is positive,
    so the same seed gives the same record on every build.
    """
    vals, vecs = np.linalg.eigh(0.5 * (q + q.T))
    lead = vecs[np.argmax(np.abs(vecs), axis=0), np.arange(vecs.shape[1])]
    vecs = vecs * np.where(lead < 0.0, -1.0, 1.0)
    return vecs * np.sqrt(np.clip(vals, 0.0, None))


def synthesize(
    duration: float,
    dt: float,
    seed: int,
    *,
    omega_g: float,
    zeta_g: float,
    s0: float = 1.0,
    omega_f: float | None = None,
    zeta_f: float | None = None,
    envelope: Envelope = None,
    target_pga: float | None = None,
    target_arias: float | None = None,
    baseline_order: int | None = 1,
) -> SyntheticRecord:
    """Generate a synthetic record by filtered, modulated Gaussian white noise.

    Parameters
    ----------
    duration : float
        Record length, s (samples at 0, dt, ..., <= duration).
    dt : float
        Step, s.
    seed : int
        Seed of ``numpy.random.default_rng`` (>= 0).
    omega_g, zeta_g : float
        Kanai-Tajimi ground frequency (rad/s) and damping ratio (0 < zeta_g < 1).
    s0 : float, optional
        Two-sided white-noise density, (m/s^2)^2 / (rad/s) (default 1).  Irrelevant
        when a target PGA or Arias intensity is given.
    omega_f, zeta_f : float, optional
        Clough-Penzien high-pass frequency (rad/s) and damping ratio; both or neither.
    envelope : SaragoniHartEnvelope, TrapezoidEnvelope or None, optional
        Time envelope; None keeps the stationary process.
    target_pga : float, optional
        Scale so that the PGA is this, m/s^2.
    target_arias : float, optional
        Scale so that the Arias intensity is this, m/s (at most one target).
    baseline_order : int or None, optional
        Order of the baseline correction (thist.processing.baseline_correct), or
        None for none (default 1).

    Returns
    -------
    SyntheticRecord
    """
    duration = positive_number(duration, "duration")
    dt = positive_number(dt, "dt")
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise InputError(f"must be a non-negative integer, got {seed!r}", "seed")
    omega_g = positive_number(omega_g, "omega_g")
    zeta_g = _ratio("zeta_g", zeta_g)
    s0 = positive_number(s0, "s0")
    if (omega_f is None) != (zeta_f is None):
        raise InputError("give both omega_f and zeta_f, or neither", "omega_f")
    if omega_f is not None:
        omega_f = positive_number(omega_f, "omega_f")
        zeta_f = _ratio("zeta_f", zeta_f)
    if target_pga is not None and target_arias is not None:
        raise InputError("give at most one of target_pga and target_arias", "target_arias")
    if target_pga is not None:
        target_pga = positive_number(target_pga, "target_pga")
    if target_arias is not None:
        target_arias = positive_number(target_arias, "target_arias")
    if isinstance(envelope, SaragoniHartEnvelope):
        positive_number(envelope.b, "envelope.b")
        positive_number(envelope.t_peak, "envelope.t_peak")
    elif isinstance(envelope, TrapezoidEnvelope):
        for k in ("rise", "strong", "decay"):
            v = getattr(envelope, k)
            if not (np.isfinite(v) and v >= 0):
                raise InputError(f"must be >= 0, got {v!r}", f"envelope.{k}")
    elif envelope is not None:
        raise InputError(f"unknown envelope {envelope!r}", "envelope")
    n = int(np.floor(duration / dt * (1.0 + 1e-12))) + 1
    if n < 2:
        raise InputError("gives fewer than 2 samples", "duration")

    a_c, b_c, c_out = _state_space(omega_g, zeta_g, omega_f, zeta_f)
    m = a_c.shape[0]
    # Van Loan (1978): expm([[-A, W], [0, A^T]] dt) = [[., Phi^-1 Q], [0, Phi^T]].
    big = np.zeros((2 * m, 2 * m))
    big[:m, :m] = -a_c
    big[:m, m:] = 2.0 * np.pi * s0 * np.outer(b_c, b_c)
    big[m:, m:] = a_c.T
    e = expm(big * dt)
    phi = e[m:, m:].T
    q = phi @ e[:m, m:]
    l_q = _sqrt_psd(q)
    p_stat = solve_discrete_lyapunov(phi, 0.5 * (q + q.T))
    l_p = _sqrt_psd(p_stat)

    rng = np.random.default_rng(int(seed))
    xi0 = rng.standard_normal(m)
    xi = rng.standard_normal((n, m))
    # state[k+1] = Phi state[k] + L_q xi[k], state[0] = L_p xi0 (stationary).  Feed
    # the initial state in as the noise of a step before the first sample.
    drive = np.vstack([l_p @ xi0, xi @ l_q.T])  # (n+1, m): noise vectors (already scaled)
    acc = np.zeros(n + 1)
    for j in range(m):
        num, den = ss2tf(phi, np.eye(m)[:, j : j + 1], c_out[None, :], np.zeros((1, 1)))
        # num[0][0] is exactly 0 (no direct feed-through); dropping it advances the
        # filter one step: out[k] = c . s[k+1].
        sos = tf2sos(num[0][1:], den)
        acc += sosfilt(sos, drive[:, j])
    # s[k+1] = Phi s[k] + drive[k] from s[0] = 0: s[1] is the stationary state, so
    # acc[0 .. n-1] = c . s[1 .. n] is the stationary output at the n samples.
    acc = acc[:n]
    t = np.arange(n) * dt
    ag = acc * envelope_values(envelope, t)
    step = None
    if baseline_order is not None:
        ag, step = baseline_correct(ag, dt, baseline_order)
    factor = 1.0
    if target_pga is not None:
        factor = target_pga / float(np.max(np.abs(ag)))
    elif target_arias is not None:
        factor = float(np.sqrt(target_arias / arias_intensity(ag, dt)[0]))
    ag = ag * factor
    ag.flags.writeable = False
    params: dict[str, Any] = {
        "method": "Kanai-Tajimi filtered Gaussian white noise"
        + (" with Clough-Penzien correction" if omega_f is not None else ""),
        "duration_s": (n - 1) * dt,
        "dt_s": dt,
        "omega_g_rad_s": omega_g,
        "zeta_g": zeta_g,
        "s0_two_sided_m2_s3": s0,
        "omega_f_rad_s": omega_f,
        "zeta_f": zeta_f,
        "envelope": _envelope_params(envelope),
        "target_pga_m_s2": target_pga,
        "target_arias_m_s": target_arias,
        "baseline_order": baseline_order,
        "scale_factor": factor,
    }
    return SyntheticRecord(ag, dt, int(seed), params, factor, step)


def _envelope_params(envelope: Envelope) -> dict[str, Any] | None:
    if envelope is None:
        return None
    if isinstance(envelope, SaragoniHartEnvelope):
        return {"type": "Saragoni-Hart", "b": envelope.b, "t_peak_s": envelope.t_peak}
    return {
        "type": "trapezoid",
        "rise_s": envelope.rise,
        "strong_s": envelope.strong,
        "decay_s": envelope.decay,
    }


def _format_param(v: Any) -> str:
    if isinstance(v, dict):
        return ", ".join(f"{k}={_format_param(x)}" for k, x in v.items())
    if isinstance(v, float):
        return repr(v)
    return str(v)


def write_record(path: str | os.PathLike[str], synthetic: SyntheticRecord) -> Path:
    """Write a synthetic record as plain text, atomically.

    The file starts with ``#`` comment lines saying plainly that the record is
    SYNTHETIC, generated by thist from the given seed with the listed parameters,
    and that it is not a recorded motion nor a substitute for recorded motions
    selected for the site; then a header line ``time_s accel_m_s2`` and two
    whitespace-separated columns.  The file is written to a temporary file in the
    same folder and renamed into place.

    Parameters
    ----------
    path : path-like
        Target file.
    synthetic : SyntheticRecord
        The record.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    target = Path(path)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"folder {str(folder)!r} does not exist", "path")
    lines = [
        "# SYNTHETIC ground acceleration record generated by thist.",
        f"# Generated from random seed {synthetic.seed} with the parameters listed below.",
        "# This is NOT a recorded earthquake motion and NOT a substitute for recorded",
        "# motions selected for the site. Use it for demonstrations and trial runs only;",
        "# results are a preliminary estimate, not the analysis the governing code requires.",
        "# Parameters (SI units):",
    ]
    for k, v in synthetic.params.items():
        lines.append(f"#   {k}: {_format_param(v)}")
    lines.append(f"#   seed: {synthetic.seed}")
    lines.append("time_s accel_m_s2")
    t = np.arange(synthetic.ag.size) * synthetic.dt
    body = "\n".join(f"{ti:.9g} {ai:.17g}" for ti, ai in zip(t, synthetic.ag, strict=True))
    text = "\n".join(lines) + "\n" + body + "\n"
    write_text(target, text)
    return target
