"""Tests of thist.scaling."""

from __future__ import annotations

import numpy as np
import pytest

from thist.errors import InputError
from thist.scaling import scale_record, target_from_table, target_two_parameter
from thist.spectrum import response_spectrum


def _record():
    rng = np.random.default_rng(9)
    dt = 0.01
    t = np.arange(2001) * dt
    ag = rng.standard_normal(t.size) * np.exp(-(((t - 8.0) / 4.0) ** 2))
    return ag, dt


def test_scaling_recovers_a_known_factor_at_one_period_and_over_a_range():
    """A target equal to the spectrum of c * ag gives factor c back, with zero misfit.

    Source: linearity of the elastic oscillator (Chopra ch. 6: spectra of c * ag are
    c times those of ag).  The target table is on the matching periods themselves, so
    log-log interpolation is exact; tolerance 1e-10 relative (round-off).
    """
    ag, dt = _record()
    c = 2.7
    t1 = 0.7
    grid = np.geomspace(0.2 * t1, 2 * t1, 50)
    ref = response_spectrum(c * ag, dt, np.unique(np.concatenate([grid, [t1]])), 0.05)
    target = target_from_table(ref.periods, ref.psa, basis="test: spectrum of the scaled record")
    scaled, res = scale_record(ag, dt, target, period=t1)
    assert res.factor == pytest.approx(c, rel=1e-10)
    _, res_r = scale_record(ag, dt, target, period_range=(0.2 * t1, 2 * t1))
    assert res_r.factor == pytest.approx(c, rel=1e-10)
    assert res_r.misfit < 1e-9
    assert res_r.bound_hit is None and res_r.warning is None
    np.testing.assert_allclose(scaled, c * ag, rtol=1e-10)
    np.testing.assert_allclose(res_r.after.psa, res_r.factor * res_r.before.psa, rtol=1e-15)
    assert res_r.after.pga == pytest.approx(res_r.factor * res_r.before.pga, rel=1e-15)


def test_bounds_on_the_factor_bind_with_a_flag_and_warning():
    """The misfit is a convex quadratic in ln f, so the bounded optimum is the clipped
    factor; a binding bound is flagged and warned about."""
    ag, dt = _record()
    c = 2.7
    # Table on the matching grid itself (scale_record uses 50 log-spaced periods).
    ref = response_spectrum(c * ag, dt, np.geomspace(0.2, 1.5, 50), 0.05)
    target = target_from_table(ref.periods, ref.psa, basis="test")
    _, hi = scale_record(ag, dt, target, period_range=(0.2, 1.5), bounds=(0.5, 2.0))
    assert hi.factor == 2.0 and hi.bound_hit == "upper" and "upper" in hi.warning
    assert hi.unbounded_factor == pytest.approx(c, rel=1e-10)
    assert hi.misfit == pytest.approx(np.log(c / 2.0), rel=1e-9)
    _, lo = scale_record(ag, dt, target, period_range=(0.2, 1.5), bounds=(3.0, 5.0))
    assert lo.factor == 3.0 and lo.bound_hit == "lower"


def test_two_parameter_shape_follows_its_definition_and_is_continuous():
    """The user's two-parameter shape: plateau S_S, S_1/T branch, S_1 T_L/T^2 beyond T_L,
    linear rise from 0.4 S_S at T = 0 to S_S at T_0 = 0.2 T_S (common practice, from
    memory); continuous at T_0, T_S and T_L (to 1e-12)."""
    s_s, s_1, t_l = 9.0, 3.6, 6.0
    tgt = target_two_parameter(s_s, s_1, t_l, basis="user-supplied site study, example")
    t_s = s_1 / s_s
    t_0 = 0.2 * t_s
    eps = 1e-9
    v = tgt.psa_at([1e-12, t_0 - eps, t_0 + eps, t_s - eps, t_s + eps, 1.0, t_l - eps, t_l + eps])
    assert v[0] == pytest.approx(0.4 * s_s, rel=1e-5)
    assert v[1] == pytest.approx(v[2], rel=1e-8) and v[3] == pytest.approx(v[4], rel=1e-8)
    assert v[5] == pytest.approx(s_1, rel=1e-12)
    assert v[6] == pytest.approx(v[7], rel=1e-8)
    assert tgt.psa_at(12.0)[0] == pytest.approx(s_1 * t_l / 144.0, rel=1e-12)
    assert "user-supplied site study" in tgt.describe()


def test_target_needs_a_basis_and_valid_values():
    """No silent targets: a basis text is required, and bad tables are refused."""
    with pytest.raises(InputError) as err:
        target_from_table([0.1, 1.0], [5.0, 2.0], basis=" ")
    assert err.value.field == "target.basis"
    with pytest.raises(InputError):
        target_from_table([1.0, 0.1], [5.0, 2.0], basis="x")
    tgt = target_from_table([0.1, 1.0], [5.0, 2.0], basis="x")
    with pytest.raises(InputError):
        tgt.psa_at([2.0])
