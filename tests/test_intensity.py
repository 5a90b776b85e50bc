"""Tests of thist.intensity against closed forms."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

from thist.errors import InputError
from thist.intensity import G_STANDARD, intensity_measures


def _sine(amp=2.0, freq=2.0, cycles=20, per_cycle=400):
    dt = 1.0 / (freq * per_cycle)
    n = cycles * per_cycle
    t = np.arange(n + 1) * dt
    return amp * np.sin(2 * np.pi * freq * t), dt, n * dt


def test_arias_intensity_of_constant_amplitude_sine_matches_closed_form():
    """I_a = pi/(2g) * A^2 T_d / 2 for A sin(2 pi f t) over whole cycles.

    Source: Arias (1970) definition, integral of sin^2 over whole cycles = T_d / 2.
    The trapezoidal rule is exact to round-off for a trigonometric polynomial over
    whole periods (its error terms vanish), so tolerance 1e-10 relative.
    """
    amp, freq = 2.0, 2.0
    ag, dt, td = _sine(amp, freq)
    im = intensity_measures(ag, dt)
    assert im.arias == pytest.approx(np.pi / (2 * G_STANDARD) * amp**2 * td / 2, rel=1e-10)
    assert im.husid[0] == 0.0 and im.husid[-1] == pytest.approx(1.0, rel=1e-15)


def test_significant_duration_of_sine_is_0_9_of_its_length():
    """D5-95 of a constant-amplitude sine is 0.9 x length (Trifunac & Brady 1975).

    Closed form: the Husid curve is H(t) = t/T_d - sin(4 pi f t)/(4 pi f T_d), whose
    roots of H = 0.05, 0.75, 0.95 are found with brentq; they differ from
    0.05/0.75/0.95 T_d by at most 1/(4 pi f).  The sampled curve is interpolated
    linearly, an error below dt^2 f-scale terms; tolerance dt (1/800 s) is safe.
    Also |D5-95 - 0.9 T_d| <= 1/(2 pi f) by the bound above.
    """
    amp, freq = 2.0, 2.0
    ag, dt, td = _sine(amp, freq)
    im = intensity_measures(ag, dt)

    def husid(t):
        return t / td - np.sin(4 * np.pi * freq * t) / (4 * np.pi * freq * td)

    t5, t75, t95 = (brentq(lambda t, lv=lv: husid(t) - lv, 0, td) for lv in (0.05, 0.75, 0.95))
    assert im.t5 == pytest.approx(t5, abs=dt)
    assert im.t95 == pytest.approx(t95, abs=dt)
    assert im.d5_75 == pytest.approx(t75 - t5, abs=2 * dt)
    assert abs(im.d5_95 - 0.9 * td) <= 1 / (2 * np.pi * freq) + 2 * dt


def test_mean_period_of_whole_cycle_sine_is_its_period():
    """T_m = sum(C^2/f)/sum(C^2) (Rathje et al. 1998) of a sine of f0 = 2 Hz sampled
    over whole cycles: all Fourier amplitude sits in the bin f0 (no leakage), so
    T_m = 1/f0 to round-off (tolerance 1e-9; leakage of the closing sample is 1e-4
    of the energy, spread over bins near f0 -- so we drop that sample)."""
    ag, dt, _ = _sine(freq=2.0)
    im = intensity_measures(ag[:-1], dt)
    assert im.mean_period == pytest.approx(0.5, rel=1e-9)
    assert im.mean_period_band == (0.25, 20.0)


def test_rectangular_pulse_pgv_pgd_cav_match_closed_forms():
    """Rectangular acceleration pulse A over 0 <= t <= t_p, then zero.

    Closed forms (continuous pulse): PGV = A t_p, CAV = A t_p, displacement at time
    T_e: A t_p^2 / 2 + A t_p (T_e - t_p) (the record's maximum).  The sampled pulse
    under the trapezoidal rule falls to zero over one step, adding A dt / 2 to the
    velocity; tolerances A dt / 2 (PGV, CAV) and A dt T_e (PGD) bound that.
    """
    amp, dt, tp, te = 1.5, 0.001, 0.5, 2.0
    t = np.arange(int(round(te / dt)) + 1) * dt
    ag = np.where(t <= tp + dt / 4, amp, 0.0)
    im = intensity_measures(ag, dt)
    assert im.pga == amp and im.t_pga == 0.0
    assert im.pgv == pytest.approx(amp * tp, abs=amp * dt / 2 + 1e-12)
    assert im.cav == pytest.approx(amp * tp, abs=amp * dt / 2 + 1e-12)
    pgd = amp * tp**2 / 2 + amp * tp * (te - tp)
    assert im.pgd == pytest.approx(pgd, abs=amp * dt * te)
    assert im.t_pgd == pytest.approx(te)


def test_bracketed_duration_spans_first_to_last_exceedance():
    """Bracketed duration: time from first to last |ag| >= threshold (definition)."""
    ag = np.zeros(1001)
    ag[100] = 0.6
    ag[700] = -0.8
    ag[400] = 0.3
    im = intensity_measures(ag, 0.01, bracket_threshold=0.5)
    assert im.bracketed_duration == pytest.approx(6.0, rel=1e-12)
    assert intensity_measures(ag, 0.01, bracket_threshold=1.0).bracketed_duration == 0.0


def test_bad_threshold_raises_input_error():
    """A non-positive threshold is refused with its field name."""
    with pytest.raises(InputError) as err:
        intensity_measures(np.ones(10), 0.01, bracket_threshold=0.0)
    assert err.value.field == "bracket_threshold"
