"""Statistics of a study's stored peaks: suite statistics and IDA curves with fractiles.

Both read the rows of the store (sorted by job id), never the histories, and
compute from the absolute peaks of each quantity at each level or story.

Suite statistics, over the records whose run finished (status ``ok``), per
method, intensity level, quantity and level/story:

- mean (arithmetic), median, maximum;
- logarithmic standard deviation: the sample standard deviation (n − 1 in the
  denominator) of the natural logarithms, the usual dispersion of seismic
  demands (common practice); undefined (NaN) with fewer than two records or a
  zero peak.

IDA curves: peak story drift ratio (largest over the stories) of each record at
each level, with the 16, 50 and 84 % fractiles over the records at each level.
A record counts as collapsed (infinite drift) at the level where it collapsed
and at every level above it, which its chain did not run. Fractiles are the
sample quantiles with linear interpolation between order statistics (Hyndman &
Fan 1996, "Sample quantiles in statistical packages", Am. Stat. 50(4),
definition 7, numpy's default), extended to infinite values: a fractile that
touches a collapsed record is infinite.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from thist.batch.store import JobRow
from thist.batch.study import Study

#: Quantities with statistics, in table order (per level, per story, or scalar).
STAT_QUANTITIES = (
    "displacement",
    "drift",
    "drift_ratio",
    "story_shear",
    "absolute_acceleration",
    "base_shear",
    "base_shear_coefficient",
    "overturning_moment",
)

#: Fractiles of the IDA curves.
FRACTILES = (0.16, 0.50, 0.84)


@dataclass(frozen=True)
class Statistic:
    """Statistics of one quantity's absolute peaks over records, per level or story (SI).

    ``mean``, ``median``, ``maximum``, ``log_std`` have shape (n_positions,);
    ``values`` has shape (n_records, n_positions).
    """

    quantity: str
    values: np.ndarray
    mean: np.ndarray
    median: np.ndarray
    maximum: np.ndarray
    log_std: np.ndarray


@dataclass(frozen=True)
class SuiteStatistics:
    """Statistics of one method at one intensity level.

    Attributes
    ----------
    method : str
    level_index : int
    level : float or None
        m/s² (None for a suite).
    records : tuple of str
        Records included (status ``ok``), in study order.
    excluded : tuple of (str, str, str)
        (record, status, error) of the records left out.
    stats : dict of str to Statistic
    """

    method: str
    level_index: int
    level: float | None
    records: tuple[str, ...]
    excluded: tuple[tuple[str, str, str], ...]
    stats: dict[str, Statistic]


def log_std(x: np.ndarray, axis: int = 0) -> np.ndarray:
    """Sample standard deviation (ddof = 1) of ln x along ``axis``; NaN if undefined."""
    x = np.asarray(x, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        lx = np.log(x)
    ok = np.all(np.isfinite(lx), axis=axis) & (x.shape[axis] >= 2)
    out = np.full(ok.shape, np.nan)
    if x.shape[axis] >= 2:
        s = np.std(np.where(np.isfinite(lx), lx, 0.0), axis=axis, ddof=1)
        out = np.where(ok, s, np.nan)
    return out


def statistic(quantity: str, values: np.ndarray) -> Statistic:
    """Mean, median, maximum and log standard deviation over axis 0 of ``values``."""
    v = np.asarray(values, dtype=float)
    if v.shape[0] == 0:
        nan = np.full(v.shape[1:], np.nan)
        return Statistic(quantity, v, nan, nan, nan, nan)
    return Statistic(quantity, v, v.mean(axis=0), np.median(v, axis=0), v.max(axis=0), log_std(v))


def suite_statistics(
    study: Study, rows: Sequence[JobRow], method_index: int = 0, level_index: int = 0
) -> SuiteStatistics:
    """Statistics over the records of one method at one level.

    Parameters
    ----------
    study : Study
    rows : sequence of JobRow
        From the store.
    method_index, level_index : int
        Which method and intensity level (0 for a suite).
    """
    pick = {
        r.record_index: r
        for r in rows
        if r.method_index == method_index and r.level_index == level_index
    }
    included: list[JobRow] = []
    excluded: list[tuple[str, str, str]] = []
    for ri, rec in enumerate(study.records):
        r = pick.get(ri)
        if r is None:
            excluded.append((rec.name, "not run", ""))
        elif r.status != "ok":
            excluded.append((rec.name, r.status, r.error))
        else:
            included.append(r)
    stats = {}
    for q in STAT_QUANTITIES:
        arrs = [r.peak_abs(q) for r in included]
        if any(a is None for a in arrs):
            continue
        if arrs:
            values = np.vstack([np.atleast_1d(a) for a in arrs])  # type: ignore[arg-type]
        else:
            values = np.empty((0, 1))
        stats[q] = statistic(q, values)
    return SuiteStatistics(
        study.methods[method_index].label,
        level_index,
        study.levels[level_index],
        tuple(r.record for r in included),
        tuple(excluded),
        stats,
    )


def fractile(values: np.ndarray, p: float) -> float:
    """Sample quantile ``p`` (Hyndman & Fan definition 7), +inf allowed in ``values``.

    Parameters
    ----------
    values : ndarray
        Finite values and +inf (collapsed); NaN not allowed.
    p : float
        0 ≤ p ≤ 1.
    """
    x = np.sort(np.asarray(values, dtype=float))
    if x.size == 0:
        return float("nan")
    h = (x.size - 1) * p
    lo = int(np.floor(h))
    hi = min(lo + 1, x.size - 1)
    if h == lo or np.isinf(x[lo]):
        return float(x[lo])
    if np.isinf(x[hi]):
        return float("inf")
    return float(x[lo] + (h - lo) * (x[hi] - x[lo]))


@dataclass(frozen=True)
class IdaCurves:
    """Peak drift ratio against intensity for every record of one method.

    Attributes
    ----------
    method : str
    levels : ndarray, shape (L,)
        Intensity levels, m/s².
    records : tuple of str
        Records with a curve (no failed job), in study order.
    drift : ndarray, shape (R, L)
        Peak story drift ratio; NaN above the level where the record stopped.
    collapsed : ndarray of bool, shape (R, L)
        True at the collapse level and above.
    collapse_reason : tuple of str
        Why each record collapsed ("" if it did not).
    fractiles : dict of float to ndarray (L,)
        16/50/84 % fractiles of drift ratio at each level; +inf where the
        fractile falls among collapsed records.
    failed : tuple of (str, str)
        (record, error) of the records left out because a job failed.
    """

    method: str
    levels: np.ndarray
    records: tuple[str, ...]
    drift: np.ndarray
    collapsed: np.ndarray
    collapse_reason: tuple[str, ...]
    fractiles: dict[float, np.ndarray]
    failed: tuple[tuple[str, str], ...]

    def demand(self) -> np.ndarray:
        """Drift ratio with collapsed entries as +inf, shape (R, L)."""
        return np.where(self.collapsed, np.inf, self.drift)


def ida_curves(study: Study, rows: Sequence[JobRow], method_index: int = 0) -> IdaCurves:
    """IDA curves and fractiles of one method from the store rows.

    Parameters
    ----------
    study : Study
        An IDA study.
    rows : sequence of JobRow
    method_index : int
    """
    levels = np.asarray(study.levels, dtype=float)
    nl = levels.size
    by: dict[int, dict[int, JobRow]] = {}
    for r in rows:
        if r.method_index == method_index:
            by.setdefault(r.record_index, {})[r.level_index] = r
    names, drifts, cols, reasons, failed = [], [], [], [], []
    for ri, rec in enumerate(study.records):
        chain = by.get(ri, {})
        bad = [r for r in chain.values() if r.status == "failed"]
        if bad:
            failed.append((rec.name, bad[0].error))
            continue
        d = np.full(nl, np.nan)
        c = np.zeros(nl, dtype=bool)
        reason = ""
        for li in range(nl):
            r = chain.get(li)
            if r is None:
                break
            if r.peak_drift_ratio is not None:
                d[li] = r.peak_drift_ratio
            if r.status == "collapsed":
                c[li:] = True
                reason = r.error
                break
        if not chain:
            failed.append((rec.name, "not run"))
            continue
        names.append(rec.name)
        drifts.append(d)
        cols.append(c)
        reasons.append(reason)
    drift = np.array(drifts).reshape(len(names), nl)
    collapsed = np.array(cols, dtype=bool).reshape(len(names), nl)
    demand = np.where(collapsed, np.inf, drift)
    fr: dict[float, np.ndarray] = {}
    for p in FRACTILES:
        vals = []
        for li in range(nl):
            col = demand[:, li]
            vals.append(fractile(col, p) if np.all(~np.isnan(col)) else np.nan)
        fr[p] = np.asarray(vals)
    return IdaCurves(
        study.methods[method_index].label,
        levels,
        tuple(names),
        drift,
        collapsed,
        tuple(reasons),
        fr,
        tuple(failed),
    )
