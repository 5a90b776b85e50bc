"""Record processing and scaling as the case file states them."""

from __future__ import annotations

import math

import numpy as np
import pytest

import thist
from thist.analysis import prepare
from thist.errors import InputError
from thist.spectrum import response_spectrum

from .conftest import CASE_TEXT


def with_record_extra(extra: str) -> str:
    return CASE_TEXT.replace(
        'acceleration_column = "accel"\n', 'acceleration_column = "accel"\n' + extra
    )


def test_processing_steps_run_in_order_with_si_parameters(case_dir):
    text = with_record_extra(
        "processing = [\n"
        '  {step = "baseline", order = 1},\n'
        '  {step = "filter", kind = "bandpass", low = "0.1 Hz", high = "20 Hz", order = 4},\n'
        '  {step = "pad", before = "0 s", after = "2 s"},\n'
        "]\n"
    )
    (case_dir / "case.toml").write_text(text)
    case = thist.load_case(case_dir / "case.toml")
    assert case.motion.processing[1] == {
        "step": "filter",
        "kind": "bandpass",
        "f_low": 0.1,
        "f_high": 20.0,
        "order": 4,
    }
    pre = prepare(case)
    names = [s.name for s in pre.motion.processing]
    assert names == ["baseline", "filter", "pad"]
    assert pre.motion.record.npts == case.record.npts + 200
    # The raw record is kept as read.
    np.testing.assert_array_equal(pre.motion.raw.ag, case.record.ag)


def test_unknown_processing_step_names_the_field(case_dir):
    (case_dir / "case.toml").write_text(with_record_extra('processing = [{step = "smooth"}]\n'))
    with pytest.raises(InputError, match=r"record.processing\[0\].step: must be one of"):
        thist.load_case(case_dir / "case.toml")


def test_processing_parameter_needs_its_unit(case_dir):
    (case_dir / "case.toml").write_text(
        with_record_extra('processing = [{step = "filter", kind = "highpass", low = 0.1}]\n')
    )
    with pytest.raises(InputError, match=r"record.processing\[0\].low: expected frequency"):
        thist.load_case(case_dir / "case.toml")


def test_scaling_at_t1_matches_the_two_parameter_target(case_dir):
    """After scaling at one period, the record's PSA(T1, 5 %) equals the target there to
    1e-9: the spectrum is linear in the record, so the factor is a ratio of two PSAs."""
    text = with_record_extra(
        "[record.scaling]\n"
        'basis = "invented target for the test"\n'
        'target_shape = {s_short = "0.9 g", s_one = "0.5 g", t_long = "6 s"}\n'
        "period_t1 = 1.0\n"
    )
    (case_dir / "case.toml").write_text(text)
    case = thist.load_case(case_dir / "case.toml")
    pre = prepare(case)
    t1 = float(pre.modes.periods[0])
    sc = pre.motion.scaling
    assert sc is not None and sc.period_range == pytest.approx((t1, t1))
    got = response_spectrum(pre.motion.record.ag, pre.motion.record.dt, [t1]).psa[0]
    assert got == pytest.approx(float(sc.target.psa_at(t1)[0]), rel=1e-9)
    assert "invented target for the test" in sc.target.describe()


def test_scaling_over_a_range_from_a_target_table_with_bounds(case_dir):
    periods = np.geomspace(0.02, 4.0, 30)
    psa_g = 0.8 * np.minimum(1.0, 0.5 / periods)
    (case_dir / "target.csv").write_text(
        "period_s,psa_g\n"
        + "\n".join(f"{p:.6g},{a:.6g}" for p, a in zip(periods, psa_g, strict=True))
    )
    text = with_record_extra(
        "[record.scaling]\n"
        'basis = "site study (invented)"\n'
        'target_file = "target.csv"\n'
        'psa_unit = "g"\n'
        "range_t1 = [0.2, 2.0]\n"
        "factor_min = 0.5\n"
        "factor_max = 1.5\n"
    )
    (case_dir / "case.toml").write_text(text)
    pre = prepare(thist.load_case(case_dir / "case.toml"))
    sc = pre.motion.scaling
    t1 = float(pre.modes.periods[0])
    assert sc.period_range == pytest.approx((0.2 * t1, 2.0 * t1))
    assert 0.5 <= sc.factor <= 1.5
    if sc.bound_hit:
        assert sc.warning


def test_scaling_needs_a_basis(case_dir):
    text = with_record_extra(
        "[record.scaling]\n"
        'target_shape = {s_short = "0.9 g", s_one = "0.5 g", t_long = "6 s"}\n'
        "period_t1 = 1.0\n"
    )
    (case_dir / "case.toml").write_text(text)
    with pytest.raises(InputError, match=r"record.scaling.basis: is required"):
        thist.load_case(case_dir / "case.toml")


def test_scaling_needs_exactly_one_period_rule(case_dir):
    text = with_record_extra(
        "[record.scaling]\n"
        'basis = "x"\n'
        'target_shape = {s_short = "0.9 g", s_one = "0.5 g", t_long = "6 s"}\n'
        'period_t1 = 1.0\nperiod = "0.5 s"\n'
    )
    (case_dir / "case.toml").write_text(text)
    with pytest.raises(InputError, match="exactly one of period"):
        thist.load_case(case_dir / "case.toml")


def test_intensity_measures_of_the_analysed_record(case_dir):
    """Arias intensity Ia = π/(2g)∫ag²dt (Arias 1970) of the analysed record, trapezoid."""
    pre = prepare(thist.load_case(case_dir / "case.toml"))
    rec = pre.motion.record
    ia = math.pi / (2 * 9.80665) * np.trapezoid(rec.ag**2, dx=rec.dt)
    assert pre.motion.intensity.arias == pytest.approx(ia, rel=1e-12)
