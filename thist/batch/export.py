"""CSV files of a study, written atomically from the store's rows (sorted by job id).

``jobs.csv``
    One row per stored job: ids, record, level, method, status, scale factor,
    PGA and PSA(T₁, 5 %) of the analysed record, peak drift ratio, energy
    balance error, the absolute peak of every quantity at every level/story,
    error text and time. Floats are written with Python's shortest round-trip
    repr, so they read back exactly as stored.
``statistics.csv``
    Suite statistics (mean, median, maximum, log standard deviation) per
    method, intensity level, quantity and level/story.
``ida-curves.csv``, ``fragility.csv``
    IDA only: peak drift ratio per record and level with the fractiles; fitted
    median and dispersion of each damage state.
``histories/<job id>.csv``
    For the records the study keeps: time and every stored history.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Sequence
from pathlib import Path

import numpy as np

from thist.batch.fragility import Fragility
from thist.batch.stats import STAT_QUANTITIES, IdaCurves, SuiteStatistics
from thist.batch.store import JobRow, Store
from thist.batch.study import Study
from thist.fileio import write_text
from thist.response import QUANTITIES


def _num(x: float | None) -> str:
    if x is None:
        return ""
    return repr(float(x))


def _csv(header: list[str], rows: list[list[str]]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    return buf.getvalue()


def _positions(study: Study, quantity: str) -> list[str]:
    kind = QUANTITIES[quantity][2]
    if kind == "scalar":
        return [""]
    labels = study.case.structure.labels or tuple(
        f"L{i + 1}" for i in range(study.case.structure.n)
    )
    if kind == "story":
        return [f"story {i + 1}" for i in range(len(labels))]
    return list(labels)


def jobs_csv(study: Study, rows: Sequence[JobRow]) -> str:
    """Text of ``jobs.csv``."""
    cols: list[tuple[str, int]] = []
    header = [
        "job_id",
        "record",
        "level_index",
        "level_m_s2",
        "method",
        "status",
        "scale_factor",
        "pga_m_s2",
        "psa_t1_m_s2",
        "peak_drift_ratio",
        "energy_balance_error",
    ]
    for q in STAT_QUANTITIES:
        unit = QUANTITIES[q][1].replace("/", "_").replace("^", "").replace("*", "")
        for i, pos in enumerate(_positions(study, q)):
            cols.append((q, i))
            tag = f"{q}" + (f" {pos}" if pos else "")
            header.append(f"{tag} [{QUANTITIES[q][1]}]" if unit else tag)
    header += ["error", "elapsed_s"]
    out = []
    for r in rows:
        line = [
            r.job_id,
            r.record,
            str(r.level_index),
            _num(r.level),
            r.method,
            r.status,
            _num(r.scale_factor),
            _num(r.pga),
            _num(r.psa_t1),
            _num(r.peak_drift_ratio),
            _num(r.balance_error),
        ]
        for q, i in cols:
            p = r.peak_abs(q)
            line.append("" if p is None or i >= p.size else _num(p.flat[i]))
        line += [r.error, _num(r.elapsed)]
        out.append(line)
    return _csv(header, out)


def statistics_csv(study: Study, stats: Sequence[SuiteStatistics]) -> str:
    """Text of ``statistics.csv``."""
    header = [
        "method",
        "level_index",
        "level_m_s2",
        "quantity",
        "position",
        "unit",
        "records",
        "mean",
        "median",
        "maximum",
        "log_std",
    ]
    out = []
    for s in stats:
        for q, st in s.stats.items():
            for i, pos in enumerate(_positions(study, q)):
                if i >= st.mean.size:
                    continue
                out.append(
                    [
                        s.method,
                        str(s.level_index),
                        _num(s.level),
                        q,
                        pos,
                        QUANTITIES[q][1],
                        str(len(s.records)),
                        _num(st.mean.flat[i]),
                        _num(st.median.flat[i]),
                        _num(st.maximum.flat[i]),
                        _num(st.log_std.flat[i]),
                    ]
                )
    return _csv(header, out)


def ida_csv(study: Study, curves: Sequence[IdaCurves]) -> str:
    """Text of ``ida-curves.csv`` (long form; fractile rows have the record ``p16`` …)."""
    assert study.ida is not None
    unit = study.ida.unit
    header = [
        "method",
        "record",
        "level_index",
        "level_m_s2",
        f"level [{unit}]",
        "peak_drift_ratio",
        "collapsed",
    ]
    out = []
    for c in curves:
        for k, name in enumerate(c.records):
            for li, x in enumerate(c.levels):
                d = c.drift[k, li]
                if np.isnan(d) and not c.collapsed[k, li]:
                    continue
                out.append(
                    [
                        c.method,
                        name,
                        str(li),
                        _num(x),
                        _num(x / study.ida.unit_si),
                        "" if np.isnan(d) else _num(d),
                        "yes" if c.collapsed[k, li] else "no",
                    ]
                )
        for p, vals in c.fractiles.items():
            for li, x in enumerate(c.levels):
                out.append(
                    [
                        c.method,
                        f"p{round(100 * p)}",
                        str(li),
                        _num(x),
                        _num(x / study.ida.unit_si),
                        _num(vals[li]),
                        "",
                    ]
                )
    return _csv(header, out)


def fragility_csv(study: Study, frags: Sequence[tuple[str, Fragility]]) -> str:
    """Text of ``fragility.csv``: one row per (method, damage state)."""
    assert study.ida is not None
    unit = study.ida.unit
    header = [
        "method",
        "damage_state",
        "drift_ratio",
        "basis",
        "median_m_s2",
        f"median [{unit}]",
        "dispersion",
        "se_ln_median",
        "se_dispersion",
        "records",
        "note",
    ]
    out = []
    for method, f in frags:
        fit = f.fit
        out.append(
            [
                method,
                f.name,
                _num(f.drift_ratio),
                f.basis,
                _num(fit.median if fit else None),
                _num(fit.median / study.ida.unit_si if fit else None),
                _num(fit.dispersion if fit else None),
                _num(fit.se_ln_median if fit else None),
                _num(fit.se_dispersion if fit else None),
                str(int(f.n.max()) if f.n.size else 0),
                f.note,
            ]
        )
    return _csv(header, out)


def history_csv(hist: dict[str, np.ndarray], labels: Sequence[str]) -> str:
    """Text of one ``histories/<job id>.csv``: time, ground motion and every history."""
    t = hist["t"]
    header = ["t [s]"]
    cols = []
    for name in ("ag", "displacement", "drift_ratio", "story_shear", "absolute_acceleration",
                 "base_shear"):  # fmt: skip
        if name not in hist:
            continue
        a = hist[name]
        unit = "m/s^2" if name == "ag" else QUANTITIES[name][1]
        if a.ndim == 1:
            header.append(f"{name} [{unit}]")
            cols.append(a)
        else:
            for i in range(a.shape[1]):
                lab = labels[i] if i < len(labels) else f"L{i + 1}"
                header.append(f"{name} {lab} [{unit}]")
                cols.append(a[:, i])
    rows = [[repr(float(t[k]))] + [repr(float(c[k])) for c in cols] for k in range(t.size)]
    return _csv(header, rows)


def write_exports(
    outdir: str | Path,
    study: Study,
    store: Store,
    stats: Sequence[SuiteStatistics],
    curves: Sequence[IdaCurves] = (),
    frags: Sequence[tuple[str, Fragility]] = (),
) -> list[Path]:
    """Write every CSV file of a study into ``outdir``; return the paths written."""
    outdir = Path(outdir)
    rows = store.rows()
    files = [outdir / "jobs.csv", outdir / "statistics.csv"]
    write_text(files[0], jobs_csv(study, rows))
    write_text(files[1], statistics_csv(study, stats))
    if study.ida is not None:
        files += [outdir / "ida-curves.csv", outdir / "fragility.csv"]
        write_text(files[2], ida_csv(study, curves))
        write_text(files[3], fragility_csv(study, frags))
    labels = study.case.structure.labels
    for r in rows:
        hist = store.history(r.job_id)
        if hist:
            path = outdir / "histories" / f"{r.job_id}.csv"
            write_text(path, history_csv(hist, labels))
            files.append(path)
    return files
