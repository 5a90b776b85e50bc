"""Running a study end to end: store, jobs, executor, statistics, CSV files and report.

:func:`run_study` opens the store (refusing a changed study on resume), runs the
jobs not yet stored on the chosen executor, and then derives everything else
from the store alone (:func:`summarize_study`), so an interrupted and resumed
study gives the same files as one that ran straight through.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from thist.batch.execute import ExecutionSummary, Interrupted, execute, make_executor
from thist.batch.fragility import Fragility, fragilities
from thist.batch.gate import Gate
from thist.batch.jobs import make_jobs, study_context
from thist.batch.stats import IdaCurves, SuiteStatistics, ida_curves, suite_statistics
from thist.batch.store import JobRow, Store, open_store
from thist.batch.study import Study


@dataclass(frozen=True)
class StudyResult:
    """What a study produced, derived from its store.

    Attributes
    ----------
    study : Study
    rows : list of JobRow
        Every stored job, sorted by job id.
    total_jobs : int
        Jobs of the study (an IDA's stopped chains leave some never run).
    complete : bool
        Every job that the stop rules want is stored.
    statistics : list of SuiteStatistics
        Per method (and, for an IDA, per level).
    curves : list of IdaCurves
        IDA only, per method.
    fragility : list of (str, Fragility)
        IDA only: (method label, fragility) per damage state and collapse.
    execution : ExecutionSummary or None
        How this invocation ran (None if nothing was left to run).
    """

    study: Study
    rows: list[JobRow]
    total_jobs: int
    complete: bool
    statistics: list[SuiteStatistics]
    curves: list[IdaCurves] = field(default_factory=list)
    fragility: list[tuple[str, Fragility]] = field(default_factory=list)
    execution: ExecutionSummary | None = None

    @property
    def failed(self) -> list[JobRow]:
        """Rows of failed jobs."""
        return [r for r in self.rows if r.status == "failed"]


def summarize_study(
    study: Study, rows: list[JobRow], execution: ExecutionSummary | None = None
) -> StudyResult:
    """Statistics, IDA curves and fragilities from the store's rows.

    Parameters
    ----------
    study : Study
    rows : list of JobRow
        Sorted by job id.
    execution : ExecutionSummary, optional
    """
    jobs = make_jobs(study)
    gate = Gate(study.ida is not None, len(study.levels), ((r.job, r.status) for r in rows))
    done = {r.job_id for r in rows}
    complete = all(j.job_id in done or not gate.wanted(j) for j in jobs)
    stats = [
        suite_statistics(study, rows, mi, li)
        for mi in range(len(study.methods))
        for li in range(len(study.levels))
    ]
    curves: list[IdaCurves] = []
    frags: list[tuple[str, Fragility]] = []
    if study.ida is not None:
        for mi, m in enumerate(study.methods):
            c = ida_curves(study, rows, mi)
            curves.append(c)
            frags += [(m.label, f) for f in fragilities(study, c)]
    return StudyResult(study, rows, len(jobs), complete, stats, curves, frags, execution)


def run_study(
    study: Study,
    outdir: str | Path,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    resume: bool = False,
    progress: bool | None = None,
) -> StudyResult:
    """Run the study's jobs that are not yet in the store, then summarise the store.

    Parameters
    ----------
    study : Study
    outdir : str or Path
        Folder of the store (``study.sqlite``) and of the output files.
    workers : int, optional
        Local worker processes (default: the machine's cores; 1 runs here).
    scheduler : str, optional
        Dask scheduler address; default the ``THIST_SCHEDULER`` environment
        variable; if neither, local.
    resume : bool
        Continue an existing store (refused if the study changed).
    progress : bool, optional
        Force the progress bar on or off (default: on a terminal).

    Returns
    -------
    StudyResult

    Raises
    ------
    InputError
        A store of another study, or an existing store without ``resume``, or a
        scheduler that cannot be reached.
    thist.batch.execute.Interrupted
        Ctrl-C: the finished jobs are in the store; ``resume`` continues.
    """
    store: Store = open_store(outdir, study, resume)
    try:
        rows = store.rows()
        gate = Gate(study.ida is not None, len(study.levels), ((r.job, r.status) for r in rows))
        done = {r.job_id for r in rows}
        todo = [j for j in make_jobs(study) if j.job_id not in done and gate.wanted(j)]
        summary = None
        if todo:
            ctx = study_context(study)
            executor = make_executor(ctx, workers, scheduler)
            try:
                summary = execute(
                    todo, executor, gate, store.write, progress=progress, desc=study.name
                )
            except Interrupted:
                raise Interrupted(len(store.finished_ids()), len(make_jobs(study))) from None
            store.set_meta(
                executor=summary.executor,
                slots=summary.slots,
                chunk_size=summary.chunk_size,
                overhead_s=repr(summary.overhead),
                job_time_s=repr(summary.job_time),
            )
        return summarize_study(study, store.rows(), summary)
    finally:
        store.close()
