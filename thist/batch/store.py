"""The results store of a study: one SQLite file that survives a killed process.

SQLite (standard library) in write-ahead-log mode. Each finished job is one row
of ``jobs``, written in its own transaction as soon as its result reaches the
parent process, so a crash loses at most the jobs in flight. The store keeps
the study's hash (``meta``); :func:`open_store` refuses to resume a store made by
a different study. Floats are stored as SQLite REAL (IEEE 754 double, exact)
and peaks as JSON text written with Python's shortest round-trip float repr,
so values read back are bit for bit those computed. Histories, for the records
a study keeps, are raw little-endian float64 blobs.

Tables
------
``meta(key, value)``
    ``study_hash``, ``study_file``, ``kind``, ``total_jobs``, ``created``,
    ``thist_version`` and figures of the last execution.
``jobs``
    ``job_id`` (primary key), ``study_hash``, ``record_index``, ``record``,
    ``level_index``, ``level`` (m/s²), ``method_index``, ``method``, ``status``,
    ``scale_factor``, ``pga`` (m/s²), ``psa_t1`` (m/s²), ``peak_drift_ratio``,
    ``balance_error``, ``peaks`` (JSON), ``error``, ``elapsed`` (s), ``worker``,
    ``finished`` (UTC, ISO 8601).
``histories(job_id, name, rows, cols, data)``
"""

from __future__ import annotations

import datetime as _dt
import json
import sqlite3
from collections.abc import Iterator
from contextlib import closing, contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from thist import __version__
from thist.batch.jobs import Job, JobOutcome
from thist.batch.study import Study
from thist.errors import InputError

#: File name of the store in the output folder.
STORE_NAME = "study.sqlite"

#: Columns that hold results: identical whatever the workers and order of finishing.
RESULT_COLUMNS = (
    "job_id",
    "study_hash",
    "record_index",
    "record",
    "level_index",
    "level",
    "method_index",
    "method",
    "status",
    "scale_factor",
    "pga",
    "psa_t1",
    "peak_drift_ratio",
    "balance_error",
    "peaks",
    "error",
)

#: Columns that describe the execution (differ between runs).
TIMING_COLUMNS = ("elapsed", "worker", "finished")

_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS jobs (
    job_id TEXT PRIMARY KEY,
    study_hash TEXT NOT NULL,
    record_index INTEGER NOT NULL,
    record TEXT NOT NULL,
    level_index INTEGER NOT NULL,
    level REAL,
    method_index INTEGER NOT NULL,
    method TEXT NOT NULL,
    status TEXT NOT NULL,
    scale_factor REAL,
    pga REAL,
    psa_t1 REAL,
    peak_drift_ratio REAL,
    balance_error REAL,
    peaks TEXT NOT NULL,
    error TEXT NOT NULL,
    elapsed REAL NOT NULL,
    worker TEXT NOT NULL,
    finished TEXT NOT NULL
);
CREATE TABLE IF NOT EXISTS histories (
    job_id TEXT NOT NULL,
    name TEXT NOT NULL,
    rows INTEGER NOT NULL,
    cols INTEGER NOT NULL,
    data BLOB NOT NULL,
    PRIMARY KEY (job_id, name)
);
"""


@dataclass(frozen=True)
class JobRow:
    """One row of ``jobs`` as read back (SI; peaks decoded from JSON)."""

    job_id: str
    record_index: int
    record: str
    level_index: int
    level: float | None
    method_index: int
    method: str
    status: str
    scale_factor: float | None
    pga: float | None
    psa_t1: float | None
    peak_drift_ratio: float | None
    balance_error: float | None
    peaks: dict[str, dict[str, list[float]]]
    error: str
    elapsed: float
    worker: str
    finished: str

    @property
    def job(self) -> Job:
        """The job this row is the result of."""
        return Job(self.level_index, self.record_index, self.method_index)

    def peak_abs(self, quantity: str) -> np.ndarray | None:
        """Absolute peak of ``quantity`` at each level or story (None if absent)."""
        p = self.peaks.get(quantity)
        return None if p is None else np.abs(np.asarray(p["values"], dtype=float))


class Store:
    """An open results store. Use :func:`open_store`; close with :meth:`close`."""

    def __init__(self, path: Path, conn: sqlite3.Connection, study: Study):
        self.path = path
        self._conn = conn
        self._study = study

    # writing ---------------------------------------------------------------------------

    @contextmanager
    def _transaction(self) -> Iterator[sqlite3.Connection]:
        self._conn.execute("BEGIN IMMEDIATE")
        try:
            yield self._conn
        except BaseException:
            self._conn.execute("ROLLBACK")
            raise
        self._conn.execute("COMMIT")

    def write(self, outcome: JobOutcome) -> None:
        """Write one job's row (and its histories) in one transaction."""
        s, j = self._study, outcome.job
        row = (
            j.job_id,
            s.sha256,
            j.record_index,
            s.records[j.record_index].name,
            j.level_index,
            outcome.level,
            j.method_index,
            s.methods[j.method_index].label,
            outcome.status,
            outcome.scale_factor,
            outcome.pga,
            outcome.psa_t1,
            outcome.peak_drift_ratio,
            outcome.balance_error,
            json.dumps(outcome.peaks, sort_keys=True),
            outcome.error,
            outcome.elapsed,
            outcome.worker,
            _dt.datetime.now(_dt.UTC).isoformat(timespec="milliseconds"),
        )
        with self._transaction() as c:
            c.execute(f"INSERT OR REPLACE INTO jobs VALUES ({', '.join('?' * len(row))})", row)
            for name, arr in (outcome.histories or {}).items():
                a = np.ascontiguousarray(arr, dtype="<f8")
                a2 = a.reshape(a.shape[0], -1)
                c.execute(
                    "INSERT OR REPLACE INTO histories VALUES (?, ?, ?, ?, ?)",
                    (j.job_id, name, a2.shape[0], a2.shape[1] if a.ndim > 1 else 0, a.tobytes()),
                )

    def set_meta(self, **values: Any) -> None:
        """Store execution figures under ``meta`` (values as text)."""
        with self._transaction() as c:
            c.executemany(
                "INSERT OR REPLACE INTO meta VALUES (?, ?)",
                [(k, str(v)) for k, v in values.items()],
            )

    # reading ---------------------------------------------------------------------------

    def meta(self) -> dict[str, str]:
        """Every ``meta`` entry."""
        return dict(self._conn.execute("SELECT key, value FROM meta").fetchall())

    def finished_ids(self) -> set[str]:
        """Ids of the jobs in the store."""
        return {r[0] for r in self._conn.execute("SELECT job_id FROM jobs")}

    def rows(self) -> list[JobRow]:
        """Every job row, sorted by job id."""
        cols = [c for c in RESULT_COLUMNS if c != "study_hash"] + list(TIMING_COLUMNS)
        cur = self._conn.execute(f"SELECT {', '.join(cols)} FROM jobs ORDER BY job_id")
        out = []
        for r in cur:
            d = dict(zip(cols, r, strict=True))
            d["peaks"] = json.loads(d["peaks"])
            out.append(JobRow(**d))
        return out

    def result_table(self) -> list[tuple]:
        """The result columns of every row, sorted by job id (for exact comparisons)."""
        cur = self._conn.execute(f"SELECT {', '.join(RESULT_COLUMNS)} FROM jobs ORDER BY job_id")
        return cur.fetchall()

    def history(self, job: str) -> dict[str, np.ndarray]:
        """Stored histories of a job (empty if the study kept none), SI."""
        out = {}
        q = "SELECT name, rows, cols, data FROM histories WHERE job_id = ? ORDER BY name"
        for name, rows, cols, data in self._conn.execute(q, (job,)):
            a = np.frombuffer(data, dtype="<f8").astype(float)
            out[name] = a.reshape(rows, cols) if cols else a
        return out

    def close(self) -> None:
        """Close the connection (committed rows are already on disk)."""
        self._conn.close()


def _connect(path: Path) -> sqlite3.Connection:
    conn = sqlite3.connect(path, isolation_level=None, timeout=30.0)
    conn.execute("PRAGMA journal_mode=WAL")
    # In WAL mode NORMAL keeps every committed transaction through a crash of the
    # process; only a power failure may lose the last few (never corrupts).
    conn.execute("PRAGMA synchronous=NORMAL")
    return conn


def open_store(outdir: str | Path, study: Study, resume: bool) -> Store:
    """Open (or create) the store of a study in ``outdir``.

    Parameters
    ----------
    outdir : str or Path
        Output folder; the store is ``outdir/study.sqlite``.
    study : Study
    resume : bool
        Continue an existing store. Without it an existing store that holds
        jobs is refused, so that finished work is never overwritten.

    Raises
    ------
    InputError
        The store belongs to a different study (its hash differs), or it holds
        jobs and ``resume`` is not set, or it is not a thist store.
    """
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    path = outdir / STORE_NAME
    existed = path.exists()
    conn = _connect(path)
    try:
        conn.executescript(_SCHEMA)
        meta = dict(conn.execute("SELECT key, value FROM meta").fetchall())
        count = conn.execute("SELECT COUNT(*) FROM jobs").fetchone()[0]
    except sqlite3.DatabaseError as exc:
        conn.close()
        raise InputError(f"not a study store: {exc}", None, str(path)) from None
    stored = meta.get("study_hash")
    if existed and (stored or count):
        if not resume:
            conn.close()
            raise InputError(
                f"already holds a study store with {count} finished job(s); add --resume to "
                "continue it, or choose another output folder",
                None,
                str(path),
            )
        if stored != study.sha256:
            conn.close()
            raise InputError(
                "the study, its case file or a record file changed since this store was "
                f"made (store hash {str(stored)[:12]}…, study now {study.sha256[:12]}…); "
                "resume refused: run the changed study into another output folder",
                None,
                str(path),
            )
    store = Store(path, conn, study)
    if not stored:
        store.set_meta(
            study_hash=study.sha256,
            study_file=study.path,
            kind=study.kind,
            created=_dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
            thist_version=__version__,
        )
    return store


def read_store(path: str | Path) -> list[JobRow]:
    """Every job row of a store file, sorted by job id, without a study (read-only).

    Parameters
    ----------
    path : str or Path
        A ``study.sqlite`` file.
    """
    uri = f"file:{Path(path)}?mode=ro"
    with closing(sqlite3.connect(uri, uri=True)) as conn:
        store = Store(Path(path), conn, None)  # type: ignore[arg-type]
        return store.rows()
