"""Suite statistics and IDA fractiles against hand computation and numpy.

Definitions (thist/batch/stats.py): mean, median, maximum over the records; the
logarithmic standard deviation is the sample standard deviation (n - 1) of the
natural logarithms (common practice for seismic demand dispersion). Fractiles
are Hyndman & Fan (1996, Am. Stat. 50(4)) definition 7, numpy's default quantile.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from tests.test_study_files import write_suite
from thist.batch import load_study, run_study
from thist.batch.stats import fractile, statistic


def test_log_std_of_1_2_4_is_ln2():
    """ln(1, 2, 4) = (0, 1, 2)·ln 2, whose sample standard deviation is exactly ln 2.

    Hand computation; tolerance 1e-15 relative (one rounding of the logarithms).
    """
    s = statistic("x", np.array([[1.0], [2.0], [4.0]]))
    assert s.mean[0] == pytest.approx(7.0 / 3.0, rel=1e-15)
    assert s.median[0] == 2.0
    assert s.maximum[0] == 4.0
    assert s.log_std[0] == pytest.approx(math.log(2.0), rel=1e-15)


def test_log_std_undefined_for_one_record_or_a_zero_peak():
    assert np.isnan(statistic("x", np.array([[3.0]])).log_std[0])
    assert np.isnan(statistic("x", np.array([[0.0], [1.0]])).log_std[0])


def test_suite_statistics_match_hand_computation_on_three_records(tmp_path):
    """Three records run as a suite; statistics per story/level recomputed by hand.

    Hand computation with the math module on the stored peaks (mean = sum / 3,
    median = middle of the sorted three, maximum, sqrt(sum (ln x - mean ln x)^2 / 2));
    tolerance 1e-12 relative: the only difference is the order of floating-point sums.
    """
    study = load_study(write_suite(tmp_path, 3))
    result = run_study(study, tmp_path / "out", workers=1, progress=False)
    assert [r.status for r in result.rows] == ["ok", "ok", "ok"]
    stats = result.statistics[0]
    assert stats.records == ("r0", "r1", "r2")
    for q in ("drift_ratio", "displacement", "story_shear", "absolute_acceleration", "base_shear"):
        per_record = [[abs(v) for v in r.peaks[q]["values"]] for r in result.rows]
        for i in range(len(per_record[0])):
            x = [p[i] for p in per_record]
            mean = (x[0] + x[1] + x[2]) / 3.0
            lnx = [math.log(v) for v in x]
            lm = sum(lnx) / 3.0
            lsd = math.sqrt(sum((v - lm) ** 2 for v in lnx) / 2.0)
            st = stats.stats[q]
            assert st.mean[i] == pytest.approx(mean, rel=1e-12)
            assert st.median[i] == sorted(x)[1]
            assert st.maximum[i] == max(x)
            assert st.log_std[i] == pytest.approx(lsd, rel=1e-12)


def test_fractiles_equal_numpy_quantile_for_finite_values():
    """Reference: numpy.quantile (method "linear" = Hyndman & Fan definition 7); exact."""
    rng = np.random.default_rng(7)
    for n in (1, 2, 5, 8, 13):
        x = rng.lognormal(0.0, 0.5, n)
        for p in (0.16, 0.5, 0.84):
            assert fractile(x, p) == pytest.approx(float(np.quantile(x, p)), rel=1e-14)


def test_fractile_is_infinite_once_it_reaches_collapsed_records():
    """Five records, two collapsed (inf): by definition 7 the 50 % fractile is the
    third order statistic (finite), the 84 % one interpolates into a collapse (inf)."""
    x = np.array([0.01, np.inf, 0.03, 0.02, np.inf])
    assert fractile(x, 0.5) == 0.03
    assert fractile(x, 0.16) == pytest.approx(0.01 + 0.64 * 0.01, rel=1e-14)
    assert math.isinf(fractile(x, 0.84))
