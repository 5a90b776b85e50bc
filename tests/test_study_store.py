"""The results store: failed jobs, order- and worker-independence, crash and resume.

Behaviours required by the design notes (DESIGN.md §6-7): a failed job is kept
with its error and does not stop the others; the stored results are identical,
bit for bit, whatever the number of workers and the order in which jobs finish;
a process killed with SIGKILL leaves a store that opens, holds only complete
rows of finished jobs, and resumes to the same final results.
"""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
import time

from tests.test_study_files import (
    IDA_TABLE,
    STRUCTURE,
    make_records,
    records_toml,
    write_ida,
)
from thist.batch import load_study, run_study
from thist.batch.execute import InProcess, execute
from thist.batch.gate import Gate
from thist.batch.jobs import make_jobs, study_context
from thist.batch.store import STORE_NAME, open_store
from thist.cli import main
from thist.synthetic import synthesize, write_record


def _table(outdir):
    path = outdir / STORE_NAME
    with sqlite3.connect(path) as conn:
        from thist.batch.store import RESULT_COLUMNS

        return conn.execute(
            f"SELECT {', '.join(RESULT_COLUMNS)} FROM jobs ORDER BY job_id"
        ).fetchall()


def test_failed_job_is_recorded_and_the_others_run(tmp_path, capsys):
    """A record sampled at 0.001 s under an analysis step of 0.01 s fails at run time
    (the step would skip record content); the other two records run; the command
    still writes its files and exits 0."""
    names = make_records(tmp_path, 2)
    fine = synthesize(2.0, 0.001, 5, omega_g=12.0, zeta_g=0.6, target_pga=2.0)
    write_record(tmp_path / "rec" / "fine.txt", fine)
    text = f'title = "t"\nkind = "suite"\n{STRUCTURE}' + records_toml([names[0], "fine", names[1]])
    (tmp_path / "s.toml").write_text(text)
    status = main(
        ["study", str(tmp_path / "s.toml"), "-o", str(tmp_path / "out"), "--workers", "1"]
    )
    out = capsys.readouterr().out
    assert status == 0
    rows = _table(tmp_path / "out")
    assert [r[8] for r in rows] == ["ok", "failed", "ok"]
    assert "coarser than the record's" in rows[1][15]
    assert "failed: r0001-l000-m00 (fine" in out
    assert (tmp_path / "out" / "report.pdf").stat().st_size > 10_000
    assert "failed" in (tmp_path / "out" / "jobs.csv").read_text()


def test_store_is_identical_whatever_workers_and_finishing_order(tmp_path):
    """The same IDA (with stop rules) in this process, on two pool workers, and with the
    jobs sent in reverse order (every higher level finishes before the lower ones):
    the result columns of the store are equal, float for float."""
    study = load_study(write_ida(tmp_path, 3))
    a = run_study(study, tmp_path / "one", workers=1, progress=False)
    assert any(r.status == "collapsed" for r in a.rows)
    assert len(a.rows) < a.total_jobs  # the stop rule left levels out
    run_study(study, tmp_path / "two", workers=2, progress=False)
    store = open_store(tmp_path / "rev", study, resume=False)
    try:
        jobs = list(reversed(make_jobs(study)))
        execute(jobs, InProcess(study_context(study)), Gate(True, len(study.levels)), store.write,
                progress=False)  # fmt: skip
    finally:
        store.close()
    ref = _table(tmp_path / "one")
    assert _table(tmp_path / "two") == ref
    assert _table(tmp_path / "rev") == ref


def _slow_ida(folder):
    """An IDA of 4 records x 30 levels at a fine step (about 2 s of work in all)."""
    names = make_records(folder, 4)
    ida = IDA_TABLE.replace("collapse_drift_ratio = 0.006", "collapse_drift_ratio = 0.02")
    ida = ida.replace("last = 3.0, step = 0.2", "last = 6.0, step = 0.2")
    text = f'title = "k"\nkind = "ida"\n{STRUCTURE.replace("0.01 s", "0.002 s")}{ida}'
    path = folder / "k.toml"
    path.write_text(text + records_toml(names))
    return path


def test_sigkill_mid_study_leaves_a_store_that_resumes_to_the_same_results(tmp_path):
    """Kill the whole `thist study` process group with SIGKILL once a few rows are in
    the store; the store must open and pass SQLite's integrity check, every row in it
    must equal the uninterrupted run's row, and a resume must give the same table."""
    path = _slow_ida(tmp_path)
    study = load_study(path)
    run_study(study, tmp_path / "ref", workers=1, progress=False)
    ref = _table(tmp_path / "ref")
    out = tmp_path / "killed"
    proc = subprocess.Popen(
        [sys.executable, "-m", "thist", "study", str(path), "-o", str(out), "--workers", "1"],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
        start_new_session=True,
    )
    deadline = time.monotonic() + 120
    count = 0
    try:
        while time.monotonic() < deadline and proc.poll() is None:
            if (out / STORE_NAME).exists():
                try:
                    with sqlite3.connect(out / STORE_NAME, timeout=0.1) as c:
                        count = c.execute("SELECT COUNT(*) FROM jobs").fetchone()[0]
                except sqlite3.OperationalError:
                    count = 0
                if count >= 5:
                    break
            time.sleep(0.005)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(30)
    assert proc.returncode == -signal.SIGKILL
    with sqlite3.connect(out / STORE_NAME) as c:
        assert c.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    partial = _table(out)
    assert 5 <= len(partial) < len(ref)
    by_id = {r[0]: r for r in ref}
    assert all(by_id[r[0]] == r for r in partial)
    resumed = run_study(load_study(path), out, workers=1, resume=True, progress=False)
    assert resumed.execution is not None and resumed.execution.ran < len(ref) + 10
    assert _table(out) == ref
