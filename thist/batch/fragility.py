"""Fragility functions from IDA results: lognormal, fitted by maximum likelihood.

At each intensity level x_j, n_j records ran and z_j of them exceeded the damage
state (peak story drift ratio at or above its threshold, or collapsed). The
fragility P(DS | IM = x) = Φ(ln(x/θ)/β) is fitted by maximising the binomial
likelihood

    L(θ, β) = Π_j C(n_j, z_j) p_j^z_j (1 − p_j)^(n_j − z_j),  p_j = Φ(ln(x_j/θ)/β),

as in Baker (2015), "Efficient analytical fragility function fitting using
dynamic structural analysis", Earthquake Spectra 31(1), 579-599, eq. 11. The
optimisation runs on (ln θ, ln β) with the analytic gradient; standard errors
come from the inverse of the expected (Fisher) information at the estimate.
A record that collapsed at a lower level counts as exceeding every damage state
at the levels above it (its chain stopped there).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import minimize
from scipy.special import log_ndtr

from thist import cautions
from thist.batch.stats import IdaCurves
from thist.batch.study import Study

#: Caution shown beside every fragility result (report and terminal).
CAUTION = cautions.FRAGILITY

#: Search bounds of the dispersion β.
BETA_BOUNDS = (0.01, 5.0)


@dataclass(frozen=True)
class LognormalFit:
    """Maximum-likelihood lognormal fragility.

    Attributes
    ----------
    median : float
        θ, in the unit of the intensities given.
    dispersion : float
        β, logarithmic standard deviation.
    se_ln_median, se_dispersion : float
        Asymptotic standard errors of ln θ and of β.
    log_likelihood : float
        Binomial log-likelihood at the estimate (without the constant C terms).
    at_bound : bool
        True if β ended on a search bound (the data do not pin it down).
    """

    median: float
    dispersion: float
    se_ln_median: float
    se_dispersion: float
    log_likelihood: float
    at_bound: bool

    def probability(self, im: np.ndarray | float) -> np.ndarray:
        """Φ(ln(im/θ)/β)."""
        from scipy.stats import norm

        return norm.cdf(np.log(np.asarray(im, dtype=float) / self.median) / self.dispersion)


def _nll_grad(params: np.ndarray, lx: np.ndarray, n: np.ndarray, z: np.ndarray):
    m, s = params
    beta = np.exp(s)
    u = (lx - m) / beta
    lp, lq = log_ndtr(u), log_ndtr(-u)
    nll = -float(np.sum(z * lp + (n - z) * lq))
    lphi = -0.5 * u**2 - 0.5 * np.log(2.0 * np.pi)
    dl_du = z * np.exp(lphi - lp) - (n - z) * np.exp(lphi - lq)
    g_m = -np.sum(dl_du * (-1.0 / beta))
    g_s = -np.sum(dl_du * (-u))
    return nll, np.array([g_m, g_s])


def separated(im: np.ndarray, n: np.ndarray, z: np.ndarray) -> bool:
    """True if no record exceeds below some level and every record exceeds from it up.

    Then the likelihood has no finite maximum (β → 0): the levels are too coarse
    for the scatter of the records, and no dispersion can be estimated.
    """
    order = np.argsort(im)
    n, z = np.asarray(n)[order], np.asarray(z)[order]
    return any(np.all(z[:k] == 0) and np.all(z[k:] == n[k:]) for k in range(1, z.size))


def fit_lognormal(im: np.ndarray, n: np.ndarray, z: np.ndarray) -> LognormalFit | None:
    """Fit a lognormal fragility by maximum likelihood (Baker 2015, eq. 11).

    Parameters
    ----------
    im : array_like
        Intensity levels, > 0 (any unit; the median comes out in it).
    n : array_like of int
        Records analysed at each level.
    z : array_like of int
        Of them, records that exceeded the damage state.

    Returns
    -------
    LognormalFit or None
        None when the data cannot define a fit: no level with records, no
        exceedance at all, exceedance everywhere, or a complete separation
        (:func:`separated`).
    """
    im = np.asarray(im, dtype=float)
    n = np.asarray(n, dtype=float)
    z = np.asarray(z, dtype=float)
    keep = n > 0
    im, n, z = im[keep], n[keep], z[keep]
    if im.size == 0 or z.sum() == 0 or z.sum() == n.sum() or separated(im, n, z):
        return None
    lx = np.log(im)
    frac = z / n
    # Start: the level nearest to half exceeding; a moderate dispersion.
    m0 = float(lx[np.argmin(np.abs(frac - 0.5))])
    lo, hi = np.log(BETA_BOUNDS)
    res = minimize(
        _nll_grad,
        np.array([m0, np.log(0.4)]),
        args=(lx, n, z),
        jac=True,
        method="L-BFGS-B",
        bounds=[(lx.min() - 5.0, lx.max() + 5.0), (lo, hi)],
        options={"ftol": 1e-15, "gtol": 1e-10, "maxiter": 500},
    )
    m, s = res.x
    beta = float(np.exp(s))
    u = (lx - m) / beta
    phi = np.exp(-0.5 * u**2) / np.sqrt(2.0 * np.pi)
    # p (1 - p) from the two log tails, accurate far out in either tail.
    pq = np.exp(log_ndtr(u) + log_ndtr(-u))
    w = n * phi**2 / np.clip(pq, 1e-300, None)
    g = np.vstack([-np.ones_like(u) / beta, -u / beta])  # du/d(ln θ), du/dβ
    info = (g * w) @ g.T
    try:
        cov = np.linalg.inv(info)
        se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    except np.linalg.LinAlgError:
        se = np.array([np.nan, np.nan])
    at_bound = bool(np.isclose(s, lo, atol=1e-6) or np.isclose(s, hi, atol=1e-6))
    return LognormalFit(
        float(np.exp(m)), beta, float(se[0]), float(se[1]), -float(res.fun), at_bound
    )


@dataclass(frozen=True)
class Fragility:
    """The fragility of one damage state (or of collapse) of one method.

    Attributes
    ----------
    name : str
    drift_ratio : float or None
        Threshold (None for collapse).
    basis : str
    levels : ndarray
        Intensity levels, m/s².
    n, z : ndarray of int
        Records at each level, and those exceeding.
    fit : LognormalFit or None
        Median in m/s²; None when no fit is possible (see ``note``).
    note : str
    """

    name: str
    drift_ratio: float | None
    basis: str
    levels: np.ndarray
    n: np.ndarray
    z: np.ndarray
    fit: LognormalFit | None
    note: str

    @property
    def observed(self) -> np.ndarray:
        """Fraction exceeding at each level (NaN where no record ran)."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(self.n > 0, self.z / np.maximum(self.n, 1), np.nan)


def _fragility(name: str, threshold: float | None, basis: str, curves: IdaCurves) -> Fragility:
    demand = curves.demand()
    known = ~np.isnan(demand)
    n = known.sum(axis=0)
    if threshold is None:
        exceed = curves.collapsed
    else:
        exceed = known & (demand >= threshold)
    z = exceed.sum(axis=0)
    fit = fit_lognormal(curves.levels, n, z)
    note = ""
    if fit is None:
        if z.sum() == 0:
            note = "no fit: no record exceeded it at any level"
        elif z.sum() == n.sum():
            note = "no fit: every record exceeded it at every level"
        else:
            note = (
                "no fit: every record first exceeds it between the same two levels, so the "
                "dispersion cannot be estimated; use finer levels or more varied records"
            )
    elif fit.at_bound:
        note = "dispersion at its search bound: the levels do not resolve it"
    return Fragility(name, threshold, basis, curves.levels, n, z, fit, note)


def fragilities(study: Study, curves: IdaCurves) -> list[Fragility]:
    """Fragility of every damage state of an IDA, then of collapse.

    Parameters
    ----------
    study : Study
        An IDA study with its damage states.
    curves : IdaCurves
        Of one method.
    """
    out = [_fragility(ds.name, ds.drift_ratio, ds.basis, curves) for ds in study.damage_states]
    ida = study.ida
    assert ida is not None
    if ida.collapse_drift_ratio is not None or curves.collapsed.any():
        basis = (
            f"non-convergence, or peak drift ratio above {ida.collapse_drift_ratio:g} "
            f"({ida.collapse_basis})"
            if ida.collapse_drift_ratio is not None
            else "non-convergence of the run"
        )
        out.append(_fragility("collapse", None, basis, curves))
    return out
