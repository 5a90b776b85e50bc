"""Throughput and parallel efficiency of `thist study`: 200 inelastic runs of the demo building.

Run as ``python -m benchmarks.bench_study``. Everything is measured in this one
process and printed as ratios; nothing is asserted.

Jobs: the first 200 jobs of an IDA of the demo building with yielding stories
(``inputs/clinic-bilinear.toml``, compiled inelastic kernels, peaks only) with the
seven synthetic suite records at 29 PGA levels, no stop rule (so every job runs),
written to a real store.

Figures:

* ``runs per second`` on 1 worker (in this process) and on 2 local pool workers.
  Every executor first runs a few jobs untimed, so that each worker process has
  loaded the compiled kernels (their one-time cost is bench_inelastic's).
* ``efficiency`` = (time in this process, 1 worker) / (time on 2 local pool
  workers) / 2; target >= 80 %. Given twice: steady state (workers already
  started, as on a running cluster), and including the pool's start-up.
* ``machine ceiling``: the same 200 jobs as two tasks of 100 on the two pool
  workers (no scheduling, no store), against the serial time: what the machine
  itself gives for two concurrent numerical processes. On a virtual machine whose
  two vCPUs share one core's vector units this is far below 100 %, and no
  executor can beat it; ``pool against the ceiling`` isolates thist's own cost.
* ``cluster / pool``: the same jobs on a ``distributed.LocalCluster`` (2 worker
  processes, 1 thread each, on loopback; the cluster and client started
  beforehand) against the steady-state pool time; target within 25 %.
"""

from __future__ import annotations

import logging
import os
import platform
import tempfile
import time
from pathlib import Path

from thist.batch.execute import DaskCluster, Executor, InProcess, LocalPool, execute
from thist.batch.gate import Gate
from thist.batch.jobs import make_jobs, study_context
from thist.batch.store import open_store
from thist.batch.study import Study, load_study

ROOT = Path(__file__).resolve().parent.parent
RUNS = 200

STUDY = """\
title = "benchmark: demo building, 7 records x 29 PGA levels"
kind = "ida"
case = "{case}"
methods = ["newmark-average"]
duration = "24 s"

[ida]
measure = "pga"
unit = "g"
levels = {{first = 0.05, last = 1.45, step = 0.05}}

[record_defaults]
time_column = "time_s"
acceleration_column = "accel_m_s2"
unit = "m/s^2"
"""


def _study(folder: Path) -> Study:
    text = STUDY.format(case=(ROOT / "inputs" / "clinic-bilinear.toml").as_posix())
    for i in range(1, 8):
        rec = (ROOT / "inputs" / "records" / f"suite-0{i}.txt").as_posix()
        text += f'\n[[records]]\nname = "suite-0{i}"\nfile = "{rec}"\n'
    path = folder / "bench.toml"
    path.write_text(text)
    return load_study(path)


def _warm(executor: Executor, study: Study) -> None:
    """Run a few jobs untimed, one per task, so that every worker has loaded the
    compiled kernels (a one-time cost per process, reported by bench_inelastic)."""
    futures = [executor.submit([job]) for job in make_jobs(study)[: 4 * executor.slots]]
    for f in futures:
        f.result()


def _run(study: Study, executor: Executor, outdir: Path) -> float:
    """Wall time of the 200 jobs on ``executor`` (already warmed up), s."""
    store = open_store(outdir, study, resume=False)
    try:
        jobs = make_jobs(study)[:RUNS]
        start = time.perf_counter()
        summary = execute(jobs, executor, Gate(True, len(study.levels)), store.write,
                          progress=False)  # fmt: skip
        wall = time.perf_counter() - start
    finally:
        store.close()
    print(
        f"  {executor.name:14s} {executor.slots} worker(s): {wall:7.2f} s, chunk "
        f"{summary.chunk_size}, overhead {summary.overhead * 1e3:.2f} ms/chunk, "
        f"job {summary.job_time * 1e3:.1f} ms"
    )
    return wall


def main() -> None:
    """Measure and print the ratios."""
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} CPUs")
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        study = _study(folder)
        ctx = study_context(study)
        print(
            f"{RUNS} inelastic runs of the demo building with yielding stories "
            f"({len(study.levels)} levels x 7 records)"
        )
        serial = InProcess(ctx)
        _warm(serial, study)
        t1 = _run(study, serial, folder / "serial")

        start = time.perf_counter()
        pool = LocalPool(ctx, 2)
        pool.warm_up()
        startup = time.perf_counter() - start
        _warm(pool, study)
        # The machine's own ceiling: two processes, each given half the jobs in one
        # task (no scheduling at all), against the serial time.
        jobs = make_jobs(study)[:RUNS]
        start = time.perf_counter()
        halves = [pool.submit(jobs[: RUNS // 2]), pool.submit(jobs[RUNS // 2 :])]
        for f in halves:
            f.result()
        t_ceiling = time.perf_counter() - start
        print(f"  two halves, one task each: {t_ceiling:7.2f} s (machine ceiling)")
        t2 = _run(study, pool, folder / "pool")
        print(f"  pool start-up: {startup:.2f} s")

        try:
            import distributed
        except ImportError:
            distributed = None
        t_dask = None
        if distributed is not None:
            with distributed.LocalCluster(
                n_workers=2,
                threads_per_worker=1,
                processes=True,
                host="127.0.0.1",
                dashboard_address=None,
                silence_logs=logging.ERROR,
            ) as cluster:
                cl = DaskCluster(ctx, cluster.scheduler_address)
                _warm(cl, study)
                t_dask = _run(study, cl, folder / "dask")

    print(f"\nruns per second, 1 worker:              {RUNS / t1:7.1f}")
    print(f"runs per second, 2 workers (steady):    {RUNS / t2:7.1f}")
    print(f"speed-up 2 workers vs 1 (steady state): {t1 / t2:.2f}")
    print(f"efficiency (steady state):               {t1 / t2 / 2:.0%}  (target >= 80 %)")
    print(f"efficiency including pool start-up:      {t1 / (t2 + startup) / 2:.0%}")
    print(f"machine ceiling (no scheduling at all):  {t1 / t_ceiling / 2:.0%}")
    print(f"pool against the ceiling:                {t_ceiling / t2:.0%}")
    if t_dask is not None:
        print(f"LocalCluster / process pool:             {t_dask / t2:.2f}  (target <= 1.25)")
    else:
        print("LocalCluster: not measured (pip install 'thist[cluster]')")


if __name__ == "__main__":
    main()
