"""Lognormal fragility fitting by maximum likelihood (Baker 2015, Earthquake Spectra 31(1)).

Checks: the fit recovers the median and dispersion of a simulated lognormal
fragility within its sampling error; it equals a direct maximisation of the
binomial likelihood written with scipy.stats (reference library); it refuses
completely separated data, for which no finite maximum exists.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import optimize, stats

from thist.batch.fragility import fit_lognormal


def _simulate(theta: float, beta: float, seed: int, n: int = 40):
    im = np.linspace(0.1, 2.0, 12)
    rng = np.random.default_rng(seed)
    p = stats.norm.cdf(np.log(im / theta) / beta)
    z = rng.binomial(n, p)
    return im, np.full(im.size, n), z


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_fit_recovers_median_and_dispersion_within_sampling_error(seed):
    """Simulated counts from theta = 0.7, beta = 0.45 (12 levels x 40 records, seeded).

    Tolerance: 3 asymptotic standard errors (from the Fisher information the fit
    reports), i.e. a 99.7 % band for an estimator that is asymptotically normal.
    """
    theta, beta = 0.7, 0.45
    fit = fit_lognormal(*_simulate(theta, beta, seed))
    assert fit is not None and not fit.at_bound
    assert abs(np.log(fit.median) - np.log(theta)) <= 3.0 * fit.se_ln_median
    assert abs(fit.dispersion - beta) <= 3.0 * fit.se_dispersion
    # The standard errors themselves are of the expected size (about beta / sqrt(N)).
    assert 0.01 < fit.se_ln_median < 0.1
    assert 0.01 < fit.se_dispersion < 0.1


def test_fit_with_very_many_records_converges_to_the_true_parameters():
    """Counts = round(n p) with n = 1e7: the estimate is consistent; tolerance 1e-3."""
    im = np.linspace(0.1, 2.0, 12)
    n = np.full(im.size, 10_000_000)
    z = np.round(n * stats.norm.cdf(np.log(im / 0.7) / 0.45))
    fit = fit_lognormal(im, n, z)
    assert fit.median == pytest.approx(0.7, rel=1e-3)
    assert fit.dispersion == pytest.approx(0.45, rel=1e-3)


def test_fit_equals_direct_maximisation_of_the_binomial_likelihood():
    """Reference: scipy.stats.binom.logpmf summed over levels, maximised by Nelder-Mead
    from another start. Tolerance 1e-5 relative: Nelder-Mead's own xatol 1e-9 in log
    space gives agreement far below it; a different likelihood would miss by percent."""
    im, n, z = _simulate(0.7, 0.45, 21)
    fit = fit_lognormal(im, n, z)

    def nll(x):
        p = stats.norm.cdf(np.log(im / np.exp(x[0])) / np.exp(x[1]))
        return -np.sum(stats.binom.logpmf(z, n, p))

    ref = optimize.minimize(
        nll, [0.0, np.log(1.0)], method="Nelder-Mead", options={"xatol": 1e-9, "fatol": 1e-12}
    )
    assert fit.median == pytest.approx(np.exp(ref.x[0]), rel=1e-5)
    assert fit.dispersion == pytest.approx(np.exp(ref.x[1]), rel=1e-5)


def test_separated_or_one_sided_data_give_no_fit():
    im = np.array([0.2, 0.4, 0.6, 0.8])
    n = np.array([7, 7, 7, 7])
    assert fit_lognormal(im, n, np.array([0, 0, 7, 7])) is None  # separation: beta -> 0
    assert fit_lognormal(im, n, np.zeros(4)) is None
    assert fit_lognormal(im, n, n) is None
    assert fit_lognormal(im, n, np.array([0, 1, 7, 7])) is not None
