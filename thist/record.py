"""Ground-acceleration records: reading, summary, and sampling at the analysis step.

Two text layouts are read:

``columns``
    Delimited text (comma, semicolon, tab or white space) with a time column and
    an acceleration column, chosen by name (from a row of column names) or by
    position (1 = first column). Lines starting with ``#`` are comments.
``values``
    Acceleration values only, one or several per line, read row by row; the
    time step comes from the case file.

In both, ``header_lines`` lines at the top are skipped first.
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from thist.errors import InputError
from thist.intensity import ground_motion_histories

#: Largest deviation of any time interval from the mean interval, as a fraction of it.
UNIFORM_TIME_TOLERANCE = 1e-3

_SPLIT = re.compile(r"[,;\s]+")


@dataclass(frozen=True)
class Record:
    """A base-acceleration record, uniformly sampled, SI units.

    Attributes
    ----------
    ag : ndarray, shape (N,)
        Ground acceleration, m/s², already multiplied by the scale factor.
    dt : float
        Sampling interval, s.
    source : str
        File the record was read from ("" if given as an array).
    unit : str
        Acceleration unit of the file, as the user gave it.
    scale : float
        Scale factor applied to the file's values.
    sha256 : str
        SHA-256 of the file's bytes ("" if given as an array).
    start_time : float
        Time of the first sample in the file, s; analysis time starts at 0 there.
    header : tuple of str
        Comment lines of the file (for the report), at most 20.
    """

    ag: np.ndarray
    dt: float
    source: str = ""
    unit: str = "m/s**2"
    scale: float = 1.0
    sha256: str = ""
    start_time: float = 0.0
    header: tuple[str, ...] = field(default=())

    @property
    def npts(self) -> int:
        """Number of samples."""
        return int(self.ag.size)

    @property
    def duration(self) -> float:
        """(N − 1)·Δt, s."""
        return (self.npts - 1) * self.dt

    @property
    def time(self) -> np.ndarray:
        """Sample times from 0, s."""
        return np.arange(self.npts) * self.dt


@dataclass(frozen=True)
class RecordSummary:
    """Peak ground motion of a record (trapezoidal integration from rest).

    All values SI: accelerations m/s², velocities m/s, displacements m, times s.
    Peaks are absolute values with the time at which they occur.
    """

    npts: int
    dt: float
    duration: float
    pga: float
    pga_time: float
    pgv: float
    pgv_time: float
    pgd: float
    pgd_time: float
    final_velocity: float
    final_displacement: float


def summarize(record: Record) -> RecordSummary:
    """Number of points, Δt, duration, PGA/PGV/PGD with their times."""
    ag, dt = record.ag, record.dt
    vg, dg = ground_motion_histories(ag, dt)
    ia, iv, id_ = (int(np.argmax(np.abs(x))) for x in (ag, vg, dg))
    return RecordSummary(
        record.npts,
        dt,
        record.duration,
        float(abs(ag[ia])),
        ia * dt,
        float(abs(vg[iv])),
        iv * dt,
        float(abs(dg[id_])),
        id_ * dt,
        float(vg[-1]),
        float(dg[-1]),
    )


def _read_text(path: Path, field_name: str, case_file: str | None) -> tuple[str, bytes]:
    if not path.is_file():
        raise InputError(f"record file not found: {path}", field_name, case_file)
    data = path.read_bytes()
    if b"\x00" in data[:65536]:
        raise InputError(f"{path.name} is not a text file", field_name, case_file)
    try:
        return data.decode("utf-8-sig"), data
    except UnicodeDecodeError:
        raise InputError(f"{path.name} is not UTF-8 text", field_name, case_file) from None


def _number_rows(lines: list[tuple[int, str]], fname: str) -> list[tuple[int, list[str]]]:
    rows = []
    for lineno, line in lines:
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        rows.append((lineno, [t for t in _SPLIT.split(s) if t]))
    return rows


def _to_floats(tokens: list[str], lineno: int, fname: str) -> list[float]:
    try:
        return [float(t) for t in tokens]
    except ValueError:
        raise InputError(
            f"line {lineno}: not a number in {' '.join(tokens)[:60]!r}", None, fname
        ) from None


def _column_index(spec: int | str, names: list[str] | None, what: str, fname: str) -> int:
    if isinstance(spec, bool):
        raise InputError(f"{what} must be a column name or a position (1 = first)", what, fname)
    if isinstance(spec, int):
        if spec < 1:
            raise InputError(f"column positions start at 1, got {spec}", what, fname)
        return spec - 1
    if names is None:
        raise InputError(
            f"column {spec!r} named, but the file has no row of column names", what, fname
        )
    if spec not in names:
        raise InputError(f"no column named {spec!r}; the file has {', '.join(names)}", what, fname)
    return names.index(spec)


def read_record(
    path: str | Path,
    *,
    layout: str = "columns",
    unit_si: float = 1.0,
    unit: str = "m/s**2",
    scale: float = 1.0,
    dt: float | None = None,
    time_column: int | str = 1,
    acceleration_column: int | str = 2,
    header_lines: int = 0,
    field_prefix: str = "record",
    case_file: str | None = None,
) -> Record:
    """Read a ground-acceleration record from a text file.

    Parameters
    ----------
    path : str or Path
        The record file.
    layout : {"columns", "values"}
        See the module docstring.
    unit_si : float
        SI size of the file's acceleration unit (9.80665 for g), m/s².
    unit : str
        The unit as the user wrote it (for reports).
    scale : float
        Factor applied to every value.
    dt : float, optional
        Time step, s: required for ``values``; must not be given for ``columns``.
    time_column, acceleration_column : int or str
        ``columns`` only: position (1 = first) or name.
    header_lines : int
        Lines to skip at the top.

    Raises
    ------
    InputError
        Missing file, not text, empty, fewer than 2 points, non-numeric or
        non-finite values, a non-increasing or non-uniform time column.
    """
    path = Path(path)
    fname = path.name
    text, data = _read_text(path, f"{field_prefix}.file", case_file)
    all_lines = text.splitlines()
    comments = tuple(l.strip()[:200] for l in all_lines[:200] if l.strip().startswith("#"))[:20]
    lines = list(enumerate(all_lines, start=1))[header_lines:]
    rows = _number_rows(lines, fname)
    start_time = 0.0
    if layout == "values":
        if dt is None:
            raise InputError("a values-only record needs dt", f"{field_prefix}.dt", case_file)
        values = [x for lineno, toks in rows for x in _to_floats(toks, lineno, fname)]
        ag = np.asarray(values, dtype=float)
    elif layout == "columns":
        names = None
        if rows:
            try:
                [float(t) for t in rows[0][1]]
            except ValueError:
                names = rows[0][1]
                rows = rows[1:]
        it = _column_index(time_column, names, f"{field_prefix}.time_column", fname)
        ia = _column_index(acceleration_column, names, f"{field_prefix}.acceleration_column", fname)
        t_list, a_list = [], []
        for lineno, toks in rows:
            if max(it, ia) >= len(toks):
                raise InputError(
                    f"line {lineno}: has {len(toks)} columns, need {max(it, ia) + 1}", None, fname
                )
            vals = _to_floats([toks[it], toks[ia]], lineno, fname)
            t_list.append(vals[0])
            a_list.append(vals[1])
        t = np.asarray(t_list, dtype=float)
        ag = np.asarray(a_list, dtype=float)
        if t.size >= 2:
            dt = _uniform_step(t, fname)
            start_time = float(t[0])
    else:
        raise InputError(
            f"layout must be 'columns' or 'values', got {layout!r}",
            f"{field_prefix}.layout",
            case_file,
        )
    if ag.size == 0:
        raise InputError("the record is empty", None, fname)
    if ag.size < 2:
        raise InputError("the record has fewer than 2 points", None, fname)
    bad = np.flatnonzero(~np.isfinite(ag))
    if bad.size:
        raise InputError(f"non-finite acceleration at sample {bad[0] + 1}", None, fname)
    if not (dt is not None and np.isfinite(dt) and dt > 0):
        raise InputError("the time step must be positive", f"{field_prefix}.dt", case_file)
    return Record(
        ag * unit_si * scale,
        float(dt),
        str(path),
        unit,
        scale,
        hashlib.sha256(data).hexdigest(),
        start_time,
        comments,
    )


def _uniform_step(t: np.ndarray, fname: str) -> float:
    if not np.all(np.isfinite(t)):
        raise InputError("non-finite value in the time column", None, fname)
    d = np.diff(t)
    if np.any(d <= 0):
        i = int(np.flatnonzero(d <= 0)[0])
        raise InputError(
            f"time column is not increasing at sample {i + 2} (t = {t[i + 1]:g})", None, fname
        )
    dt = (t[-1] - t[0]) / (t.size - 1)
    worst = float(np.max(np.abs(d - dt)))
    if worst > UNIFORM_TIME_TOLERANCE * dt:
        i = int(np.argmax(np.abs(d - dt)))
        raise InputError(
            f"time column is not uniformly spaced: interval {d[i]:g} s at sample {i + 2} differs "
            f"from the mean {dt:g} s by more than {UNIFORM_TIME_TOLERANCE:.1%}",
            None,
            fname,
        )
    return float(dt)


@dataclass(frozen=True)
class Excitation:
    """The ground acceleration sampled at the analysis time step.

    Attributes
    ----------
    ag : ndarray, shape (N,)
        Ground acceleration at t = 0, Δt, 2Δt …, m/s².
    dt : float
        Analysis time step, s.
    record_dt : float
        The record's own step, s.
    notes : tuple of str
        What was done to get here (interpolation, free-vibration tail, truncation).
    """

    ag: np.ndarray
    dt: float
    record_dt: float
    notes: tuple[str, ...]

    @property
    def time(self) -> np.ndarray:
        """Analysis times, s."""
        return np.arange(self.ag.size) * self.dt


def sample(
    record: Record, dt: float, duration: float | None = None, allow_coarse: bool = False
) -> Excitation:
    """Sample a record at the analysis step, with an optional free-vibration tail.

    Parameters
    ----------
    record : Record
    dt : float
        Analysis time step, s.
    duration : float, optional
        Total analysis duration, s; beyond the record the ground is at rest
        (free vibration). Shorter than the record truncates it.
    allow_coarse : bool
        Permit an analysis step coarser than the record's (skips record content).

    Raises
    ------
    InputError
        A coarser step than the record's without ``allow_coarse``.
    """
    notes: list[str] = []
    rel = dt / record.dt
    if rel > 1.0 + 1e-9:
        if not allow_coarse:
            raise InputError(
                f"analysis dt {dt:g} s is coarser than the record's {record.dt:g} s and would "
                "skip record content; use a finer dt or set analysis.allow_coarse_dt = true",
                "analysis.dt",
            )
        notes.append(
            f"analysis dt {dt:g} s is coarser than the record's {record.dt:g} s: "
            "record content between samples is skipped (allowed by the case file)"
        )
    end = record.duration if duration is None else duration
    n = int(np.floor(end / dt + 1e-9)) + 1
    t = np.arange(n) * dt
    if abs(rel - 1.0) <= 1e-9:
        ag = np.zeros(n)
        m = min(n, record.npts)
        ag[:m] = record.ag[:m]
    else:
        ag = np.interp(t, record.time, record.ag, right=0.0)
        if rel < 1.0:
            notes.append(f"record interpolated linearly from dt {record.dt:g} s to {dt:g} s")
    if duration is not None and duration > record.duration + 1e-9:
        notes.append(
            f"free-vibration tail from {record.duration:g} s to {duration:g} s (ground at rest)"
        )
    elif duration is not None and duration < record.duration - 1e-9:
        notes.append(f"record truncated at {duration:g} s of {record.duration:g} s")
    return Excitation(ag, dt, record.dt, tuple(notes))
