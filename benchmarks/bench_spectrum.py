"""Speed of :func:`thist.spectrum.response_spectrum` against ``scipy.signal.lfilter``.

Run as ``python -m benchmarks.bench_spectrum``.  All figures are measured in this one
process and reported as ratios (best of several repeats); nothing here is asserted.

Case of the issue: a 300-period, one-damping spectrum of a 10,000-sample record.
References:

* ``lfilter per period``: one ``scipy.signal.lfilter`` call per period with that
  period's exact second-order displacement filter (with the initial conditions that
  make it exact for an oscillator at rest), displacement only;
* ``lfilter all at once``: one ``lfilter`` call on all 300 series stacked in a
  (300, N) array (one filter for all rows, the speed floor of a C recurrence);

The spectrum's small matrix products go through BLAS; on a busy two-core machine
OpenBLAS threading makes the timings noisy, and ``OPENBLAS_NUM_THREADS=1`` gives
steadier (and here faster) ratios.  ``response_spectrum`` gives displacement,
velocity and absolute acceleration peaks, i.e. more than either reference.  The
peak displacements of the per-period reference are compared with the spectrum as a
cross-check.
"""

from __future__ import annotations

import time
from collections.abc import Callable

import numpy as np
from scipy.signal import lfilter, lfiltic

from thist.spectrum import _phi_coefficients, response_spectrum


def _best_time(fn: Callable[[], object], repeats: int = 9) -> float:
    """Best wall time of ``repeats`` calls, s."""
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def displacement_filters(
    dt: float, periods: np.ndarray, zeta: float
) -> list[tuple[np.ndarray, np.ndarray, complex, complex]]:
    """Real second-order displacement filters, one per period.

    From the complex modal recurrence ``y[k] = q y[k-1] + g1 a[k] + g0 a[k-1]`` and
    ``u = 2 Re y`` (see the module docstring of thist.spectrum).  Returns
    ``(b, a, q, g1)`` per period; ``q`` and ``g1`` set the initial conditions.
    """
    omega = 2.0 * np.pi / periods
    wd = omega * np.sqrt(1.0 - zeta**2)
    lam = -zeta * omega + 1j * wd
    q, w0, w1 = _phi_coefficients(lam * dt)
    g0 = 0.5j / wd * w0 * dt
    g1 = 0.5j / wd * w1 * dt
    out = []
    for qi, g0i, g1i in zip(q, g0, g1, strict=True):
        qc = np.conj(qi)
        b = np.array([2 * g1i.real, 2 * (g0i - g1i * qc).real, -2 * (g0i * qc).real])
        a = np.array([1.0, -2 * qi.real, abs(qi) ** 2])
        out.append((b, a, complex(qi), complex(g1i)))
    return out


def sd_by_lfilter(ag: np.ndarray, filters: list) -> np.ndarray:
    """Peak |u| per period by one exact ``lfilter`` call per period.

    Alone, the filter would start with u[0] = b[0] ag[0]; the oscillator is at rest
    at the first sample.  With ag[-1] = ag[-2] = 0, the complex recurrence continued
    backwards from y[0] = 0 gives y[-1] = -g1 ag[0] / q and y[-2] = y[-1] / q, whose
    real parts are the past outputs that make the filter exact from the first sample.
    """
    sd = np.empty(len(filters))
    for i, (b, a, q, g1) in enumerate(filters):
        y1 = -g1 * ag[0] / q
        zi = lfiltic(b, a, y=[2 * y1.real, 2 * (y1 / q).real], x=[0.0, 0.0])
        u, _ = lfilter(b, a, ag, zi=zi)
        sd[i] = np.max(np.abs(u))
    return sd


def main() -> None:
    """Print the timings and ratios of the issue's speed case."""
    rng = np.random.default_rng(20240501)
    n_samp, dt, zeta = 10_000, 0.01, 0.05
    ag = rng.standard_normal(n_samp)
    periods = np.geomspace(0.02, 10.0, 300)
    filters = displacement_filters(dt, periods, zeta)
    stacked = np.tile(ag, (periods.size, 1))
    b_mid, a_mid = filters[periods.size // 2][:2]

    spec = response_spectrum(ag, dt, periods, zeta)
    sd_ref = sd_by_lfilter(ag, filters)
    rel = np.max(np.abs(spec.sd - sd_ref) / sd_ref)

    t_spec = _best_time(lambda: response_spectrum(ag, dt, periods, zeta))
    t_per = _best_time(lambda: sd_by_lfilter(ag, filters))
    t_all = _best_time(lambda: lfilter(b_mid, a_mid, stacked, axis=-1))

    steps = periods.size * n_samp
    print(f"case: {periods.size} periods x {n_samp} samples, damping {zeta}")
    print(f"response_spectrum (SD, SV, SA_abs) : {t_spec * 1e3:8.2f} ms")
    print(f"lfilter per period (SD only)       : {t_per * 1e3:8.2f} ms")
    print(f"lfilter all series at once         : {t_all * 1e3:8.2f} ms")
    print(f"ratio spectrum / per-period lfilter: {t_spec / t_per:6.2f}  (goal <= 1)")
    print(f"ratio spectrum / all-at-once lfilter: {t_spec / t_all:6.2f}  (goal <= 2)")
    print(f"throughput: {steps / t_spec / 1e6:8.1f} M SDOF-steps/s (response_spectrum)")
    print(f"            {steps / t_all / 1e6:8.1f} M SDOF-steps/s (lfilter all at once)")
    print(f"max relative SD difference vs per-period lfilter: {rel:.2e}")


if __name__ == "__main__":
    main()
