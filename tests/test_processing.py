"""Tests of thist.processing."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.signal import butter, sosfreqz

from thist.errors import InputError
from thist.processing import (
    analysis_step_warning,
    apply_steps,
    baseline_correct,
    butterworth_filter,
    pad,
    resample,
    taper,
)


def test_baseline_correction_removes_a_known_polynomial_trend():
    """Least-squares polynomial removal annihilates polynomials of that order and is
    linear, so correct(x + p) = correct(x) for any p of degree <= order.

    Source: properties of the linear least-squares residual projector (e.g. Bjorck,
    Numerical Methods for Least Squares Problems, 1996, ch. 1).  Tolerance 1e-12 of
    the trend size: round-off of a well-conditioned (Legendre-basis) fit.
    """
    rng = np.random.default_rng(2)
    dt = 0.01
    t = np.arange(3001) * dt
    x = rng.standard_normal(t.size)
    for order in range(4):
        trend = sum(c * (t / 10.0) ** k for k, c in enumerate([0.3, -1.2, 0.8, 0.5][: order + 1]))
        with_trend, rec = baseline_correct(x + trend, dt, order)
        clean, _ = baseline_correct(x, dt, order)
        np.testing.assert_allclose(with_trend, clean, atol=1e-12 * np.max(np.abs(trend)))
        only_trend, _ = baseline_correct(trend, dt, order)
        assert np.max(np.abs(only_trend)) < 1e-12 * np.max(np.abs(trend))
        assert rec.name == "baseline" and rec.params == {"order": order}
        assert {"end_velocity_before", "end_velocity_after", "end_displacement_after"} <= set(
            rec.figures
        )


def test_baseline_correction_reports_reduced_end_velocity_for_offset_record():
    """A constant offset c makes the end velocity drift by c T (common practice check);
    order-0 removal brings it back to that of the clean record (here 0: a whole-cycle
    sine has zero trapezoidal integral to round-off)."""
    dt = 0.01
    t = np.arange(1001) * dt
    ag = np.sin(2 * np.pi * t) + 0.05
    _, rec = baseline_correct(ag, dt, 0)
    assert rec.figures["end_velocity_before"] == pytest.approx(0.05 * 10.0, rel=1e-3)
    assert abs(rec.figures["end_velocity_after"]) < 1e-3 * rec.figures["end_velocity_before"]


@pytest.mark.parametrize(
    ("kind", "f_low", "f_high"),
    [("bandpass", 0.5, 10.0), ("highpass", 0.5, None), ("lowpass", None, 10.0)],
)
def test_butterworth_passes_and_attenuates_as_designed(kind, f_low, f_high):
    """Zero-phase Butterworth: a sine of frequency f comes out scaled by |H(f)|^2 with
    no phase shift.

    Reference: the magnitude of the same scipy.signal.butter design from
    scipy.signal.sosfreqz, squared for the forward-backward pass.  Measured by least
    squares on the middle half of a 200 s record, away from end transients; the
    tolerance 1e-3 (absolute, on a unit sine) covers the decayed transients.
    """
    dt = 0.005
    t = np.arange(40001) * dt
    order = 4
    wn = [f_low, f_high] if kind == "bandpass" else (f_low or f_high)
    sos = butter(order, wn, btype=kind, fs=1 / dt, output="sos")
    mid = slice(t.size // 4, 3 * t.size // 4)
    for f in (0.1, 0.5, 2.0, 10.0, 40.0):
        x = np.sin(2 * np.pi * f * t)
        y, rec = butterworth_filter(x, dt, kind, f_low=f_low, f_high=f_high, order=order)
        gain = np.abs(sosfreqz(sos, worN=[f], fs=1 / dt)[1][0]) ** 2
        basis = np.column_stack([np.sin(2 * np.pi * f * t[mid]), np.cos(2 * np.pi * f * t[mid])])
        (c_sin, c_cos), *_ = np.linalg.lstsq(basis, y[mid], rcond=None)
        assert c_sin == pytest.approx(gain, abs=1e-3), f
        assert abs(c_cos) < 1e-3, f  # zero phase
        assert y.size == x.size
    assert rec.name == "filter" and rec.params["order"] == order and rec.params["zero_phase"]


def test_filter_padding_keeps_the_ends_of_a_passband_signal():
    """With zero padding the ends are not eaten: a tapered passband wavelet placed at
    the very start of the record comes back with its peak within 2 % (Butterworth
    band-pass 0.1-20 Hz, a 2 Hz wavelet is deep in the passband, |H|^2 > 0.999)."""
    dt = 0.01
    t = np.arange(2001) * dt
    x = np.sin(2 * np.pi * 2.0 * t) * np.exp(-(((t - 1.0) / 0.4) ** 2))
    y, _ = butterworth_filter(x, dt, "bandpass", f_low=0.1, f_high=20.0, order=4)
    assert np.max(np.abs(y[:300])) == pytest.approx(np.max(np.abs(x[:300])), rel=0.02)


def test_taper_weights_are_zero_at_the_ends_and_one_inside():
    """Cosine taper: weight 0 at the first and last sample, 1 outside the tapered parts."""
    x = np.ones(1001)
    y, rec = taper(x, 0.01, start=1.0, end=2.0)
    assert y[0] == 0.0 and y[-1] == pytest.approx(0.0, abs=1e-15)
    np.testing.assert_array_equal(y[100:800], 1.0)
    assert y[50] == pytest.approx(0.5, rel=1e-12)
    assert rec.params == {"start": 1.0, "end": 2.0}


def test_pad_and_resample_keep_the_record():
    """Padding adds zeros; linear resampling to an integer fraction of dt keeps the
    original samples exactly and puts the new ones on the straight lines between."""
    x = np.array([0.0, 1.0, -2.0, 3.0])
    y, rec = pad(x, 0.1, before=0.2, after=0.5)
    np.testing.assert_array_equal(y, [0, 0, 0, 1, -2, 3, 0, 0, 0, 0, 0])
    assert rec.params["samples_after"] == 5
    z, new_dt, rec = resample(x, 0.1, 0.025)
    assert new_dt == 0.025 and z.size == 13
    np.testing.assert_array_equal(z[::4], x)
    assert z[2] == pytest.approx(0.5) and z[5] == pytest.approx(0.25)
    with pytest.raises(InputError) as err:
        resample(x, 0.1, 0.2)
    assert err.value.field == "new_dt"


def test_analysis_step_coarser_than_record_gives_a_warning():
    """The warning the issue asks for when the analysis step is coarser than the record's."""
    assert analysis_step_warning(0.01, 0.02) is not None
    assert analysis_step_warning(0.01, 0.005) is None


def test_apply_steps_runs_in_order_and_logs_each_step():
    """apply_steps runs plain-dict steps in order and returns one record per step."""
    rng = np.random.default_rng(4)
    x = rng.standard_normal(2001)
    steps = [
        {"step": "baseline", "order": 1},
        {"step": "filter", "kind": "bandpass", "f_low": 0.2, "f_high": 20.0, "order": 4},
        {"step": "taper", "start": 1.0, "end": 1.0},
        {"step": "pad", "after": 5.0},
        {"step": "resample", "dt": 0.005},
    ]
    y, dt, log = apply_steps(x, 0.01, steps)
    assert [s.name for s in log] == ["baseline", "filter", "taper", "pad", "resample"]
    assert dt == 0.005 and y.size == (2001 + 500 - 1) * 2 + 1
    assert log[0].to_dict()["step"] == "baseline"


@pytest.mark.parametrize(
    ("steps", "field"),
    [
        ([{"step": "baseline", "order": 1}, {"step": "smooth"}], "steps[1].step"),
        ([{"step": "baseline", "order": 5}], "steps[0].order"),
        ([{"step": "filter", "kind": "highpass", "f_low": 80.0}], "steps[0].f_low"),
        ([{"step": "taper", "start": 1.0, "width": 2}], "steps[0].width"),
        ([{"step": "resample", "dt": 1.0}], "steps[0].dt"),
        ([{"order": 1}], "steps[0]"),
    ],
)
def test_invalid_steps_raise_input_error_with_field(steps, field):
    """Invalid step specs raise InputError naming the offending field."""
    with pytest.raises(InputError) as err:
        apply_steps(np.ones(100), 0.01, steps)
    assert err.value.field == field
