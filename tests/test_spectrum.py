"""Tests of thist.spectrum (linear elastic response spectra)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from thist.errors import InputError
from thist.spectrum import default_periods, response_spectrum


def test_default_grid_is_200_log_spaced_periods_from_0_02_to_10_s():
    """The default grid the issue specifies: 200 log-spaced periods, 0.02-10 s."""
    t = default_periods()
    assert t.size == 200
    assert t[0] == pytest.approx(0.02, rel=1e-15) and t[-1] == pytest.approx(10.0, rel=1e-15)
    np.testing.assert_allclose(np.diff(np.log(t)), np.log(500.0) / 199, rtol=1e-12)


def test_sd_of_ramped_harmonic_ground_motion_matches_closed_form_steady_state():
    """SD of a long harmonic ground motion equals the steady-state amplitude.

    Source: Chopra, Dynamics of Structures, ch. 3 (harmonic steady state):
    u0 = (A / omega^2) / sqrt((1 - r^2)^2 + (2 zeta r)^2), r = Omega / omega.
    The harmonic is switched on by a smooth 100-cycle cosine ramp so that the start-up
    transient is negligible (its size scales with the ramp's spectral content at
    omega - Omega; measured below 2e-4 for these ratios with 10 % damping) and the
    amplitude never overshoots; the record is a sine sampled at 200 points per
    cycle, whose linear interpolation changes peaks by at most (Omega dt)^2 / 8 =
    1.2e-4.  Tolerance 1e-3 relative covers both with margin.
    """
    period, zeta, amp = 1.0, 0.1, 2.0
    omega = 2 * np.pi / period
    for r in (0.5, 0.9, 1.0, 1.6):
        big_omega = r * omega
        dt = 2 * np.pi / big_omega / 200
        t = np.arange(0.0, 400 * period, dt)
        ramp = np.where(t < 100 * period, 0.5 * (1 - np.cos(np.pi * t / (100 * period))), 1.0)
        ag = amp * ramp * np.sin(big_omega * t)
        spec = response_spectrum(ag, dt, [period], zeta)
        u0 = amp / omega**2 / np.sqrt((1 - r**2) ** 2 + (2 * zeta * r) ** 2)
        assert spec.sd[0] == pytest.approx(u0, rel=1e-3), r


def _ends_at_rest_record() -> tuple[np.ndarray, float]:
    """A smooth record whose ground velocity is zero at the end (two full sine cycles)."""
    dt = 0.005
    t = np.arange(0.0, 4.0 + dt / 2, dt)
    ag = 3.0 * np.sin(np.pi * t) + 1.5 * np.sin(2 * np.pi * t)
    return ag, dt


def test_psa_tends_to_pga_at_short_period():
    """PSA -> PGA and SA_abs -> PGA as T -> 0 (common practice).

    A very stiff oscillator follows the ground quasi-statically: u = -ag / omega^2
    with a relative error of order (f_record / f_oscillator)^2 = (1 Hz / 1000 Hz)^2.
    Tolerance 1e-4 relative; also shows the result stays exact at dt/T = 5.
    """
    ag, dt = _ends_at_rest_record()
    spec = response_spectrum(ag, dt, [0.001], [0.0, 0.05])
    pga = np.max(np.abs(ag))
    assert spec.pga == pga
    np.testing.assert_allclose(spec.psa[:, 0], pga, rtol=1e-4)
    np.testing.assert_allclose(spec.sa_abs[:, 0], pga, rtol=1e-4)


def test_sd_tends_to_pgd_at_long_period():
    """SD -> PGD as T -> infinity on a record that ends at rest (common practice).

    A very flexible oscillator stays still in absolute terms, so u = -u_g.  PGD is
    that of the piecewise-linear record (exact double integration, test-side).  With
    T = 1e6 s, 5 % damping and a 4 s record, the damping term shifts u by about
    2 zeta omega t = 2.5e-6 relative (the spring term by (omega t)^2 / 2, far less);
    tolerance 1e-5.
    """
    ag, dt = _ends_at_rest_record()
    vel = np.concatenate([[0.0], np.cumsum(0.5 * dt * (ag[:-1] + ag[1:]))])
    disp = np.concatenate([[0.0], np.cumsum(vel[:-1] * dt + dt**2 * (2 * ag[:-1] + ag[1:]) / 6)])
    assert abs(vel[-1]) < 1e-10
    spec = response_spectrum(ag, dt, [1.0e6], 0.05)
    assert spec.sd[0] == pytest.approx(np.max(np.abs(disp)), rel=1e-5)


def _reference_peaks(ag, dt, period, zeta):
    """Peaks |u|, |u'|, |u''+ag| at the samples by solve_ivp, interval by interval."""
    omega = 2 * np.pi / period
    y = np.zeros(2)
    hist = np.zeros((ag.size, 2))
    for k in range(ag.size - 1):
        a0, a1 = ag[k], ag[k + 1]

        def rhs(t, s, a0=a0, a1=a1):
            a = a0 + (a1 - a0) * t / dt
            return [s[1], -a - 2 * zeta * omega * s[1] - omega**2 * s[0]]

        sol = solve_ivp(rhs, (0.0, dt), y, method="DOP853", rtol=1e-13, atol=1e-16)
        y = sol.y[:, -1]
        hist[k + 1] = y
    acc = -(2 * zeta * omega * hist[:, 1] + omega**2 * hist[:, 0])
    return np.max(np.abs(hist[:, 0])), np.max(np.abs(hist[:, 1])), np.max(np.abs(acc))


def test_matches_solve_ivp_on_short_piecewise_linear_record():
    """Exact for a piecewise-linear record: agreement with scipy.integrate.solve_ivp.

    Reference: solve_ivp (DOP853, rtol 1e-13, atol 1e-16) restarted at every sample
    so that each piece of the record is smooth; the issue asks 1e-8 relative to the
    peak.  Periods include T = 0.005 s with dt/T = 2 (the method has no dt/T limit)
    and long ones, damping 0 and 5 %.  Tolerance 1e-8 relative to each peak (SV and
    SA_abs relative to the larger of the peak and omega SD, omega^2 SD).
    """
    rng = np.random.default_rng(7)
    dt = 0.01
    ag = rng.standard_normal(150) * 2.0
    periods = np.array([0.005, 0.05, 0.2, 1.0, 3.0])
    dampings = [0.0, 0.05]
    spec = response_spectrum(ag, dt, periods, dampings)
    for i, z in enumerate(dampings):
        for j, t in enumerate(periods):
            sd, sv, sa = _reference_peaks(ag, dt, t, z)
            omega = 2 * np.pi / t
            assert spec.sd[i, j] == pytest.approx(sd, rel=1e-8, abs=0.0), (z, t)
            # Velocity and acceleration peaks against their scales omega SD and
            # omega^2 SD: undamped with dt/T = 2 the velocity is exactly zero at
            # every sample, so a purely relative test would compare round-off.
            assert abs(spec.sv[i, j] - sv) <= 1e-8 * max(sv, omega * sd), (z, t)
            assert abs(spec.sa_abs[i, j] - sa) <= 1e-8 * max(sa, omega**2 * sd), (z, t)


def test_psa_and_psv_are_omega_powers_times_sd():
    """PSA = omega^2 SD and PSV = omega SD identically (definitions, Chopra ch. 6).

    Tolerance 4 ulp-level relative (1e-15): the same products in floating point.
    """
    rng = np.random.default_rng(3)
    ag = rng.standard_normal(500)
    spec = response_spectrum(ag, 0.02, damping=[0.02, 0.05, 0.1])
    omega = 2 * np.pi / spec.periods
    np.testing.assert_allclose(spec.psa, omega**2 * spec.sd, rtol=1e-15)
    np.testing.assert_allclose(spec.psv, omega * spec.sd, rtol=1e-15)
    assert spec.sd.shape == (3, 200)


def test_block_length_does_not_change_result_beyond_round_off():
    """The block formulation equals the step-by-step recurrence (to round-off).

    Reference: the recurrence itself with one step per block (block length 1) on a
    record whose length is not a multiple of the default block.  Tolerance 1e-11
    relative (round-off of products of length 16).
    """
    import thist.spectrum as sp

    rng = np.random.default_rng(11)
    ag = rng.standard_normal(1001)
    ref_block = sp._BLOCK
    try:
        fast = response_spectrum(ag, 0.01, damping=0.05)
        sp._BLOCK = 1
        slow = response_spectrum(ag, 0.01, damping=0.05)
    finally:
        sp._BLOCK = ref_block
    np.testing.assert_allclose(fast.sd, slow.sd, rtol=1e-11)
    np.testing.assert_allclose(fast.sa_abs, slow.sa_abs, rtol=1e-11)


def test_substeps_see_peaks_between_samples_and_never_lower_them():
    """Sub-steps only add instants of the same piecewise-linear record, so peaks grow
    or stay; with 10 sub-steps the coarse-step result equals that of the record
    resampled at dt/10 (same exact response), to 1e-12 relative."""
    rng = np.random.default_rng(5)
    ag = rng.standard_normal(300)
    dt = 0.02
    coarse = response_spectrum(ag, dt, damping=0.05)
    fine = response_spectrum(ag, dt, damping=0.05, substeps=10)
    assert np.all(fine.sd >= coarse.sd * (1 - 1e-12))
    t = np.arange((ag.size - 1) * 10 + 1) * dt / 10
    resampled = np.interp(t, np.arange(ag.size) * dt, ag)
    direct = response_spectrum(resampled, dt / 10, damping=0.05)
    np.testing.assert_allclose(fine.sd, direct.sd, rtol=1e-12)


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"damping": 1.0}, "damping"),
        ({"damping": -0.1}, "damping"),
        ({"periods": [0.1, 0.0]}, "periods"),
        ({"substeps": 0}, "substeps"),
    ],
)
def test_bad_arguments_raise_input_error_naming_the_field(kwargs, field):
    """Bad parameters raise InputError with the field name."""
    with pytest.raises(InputError) as err:
        response_spectrum(np.ones(10), 0.01, **kwargs)
    assert err.value.field == field


def test_bad_record_raises_input_error():
    """A non-finite record or a non-positive step is refused."""
    with pytest.raises(InputError, match="ag"):
        response_spectrum([0.0, np.nan, 1.0], 0.01)
    with pytest.raises(InputError, match="dt"):
        response_spectrum([0.0, 1.0, 1.0], 0.0)
