"""The ``thist study`` subcommand: arguments, run, terminal summary, files.

``thist study STUDY.toml [-o DIR] [--workers N] [--scheduler ADDRESS] [--resume]``
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from thist import __version__, cautions
from thist.batch.execute import INSTALL_HINT, SCHEDULER_ENV, Interrupted
from thist.batch.store import STORE_NAME

HELP = "run a record suite or an incremental dynamic analysis (locally or on a Dask cluster)"


def add_arguments(sp: argparse.ArgumentParser) -> None:
    """Arguments of ``thist study``."""
    sp.add_argument("study", help="study file (TOML)")
    sp.add_argument(
        "-o", "--output", metavar="DIR", help="output folder (default reports/<study name>/)"
    )
    sp.add_argument(
        "--workers",
        type=int,
        metavar="N",
        help="local worker processes (default: the machine's cores; 1 runs in this process)",
    )
    sp.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help=f"Dask scheduler, e.g. tcp://10.0.0.5:8786 (default ${SCHEDULER_ENV}); needs "
        f"{INSTALL_HINT}",
    )
    sp.add_argument(
        "--resume",
        action="store_true",
        help="continue the store in DIR: skip finished jobs (refused if the study changed)",
    )


def cmd_study(args: argparse.Namespace) -> int:
    """Run a study; write study.sqlite, the CSV files and report.pdf; print a summary."""
    from thist.batch.export import write_exports
    from thist.batch.run import run_study
    from thist.batch.store import open_store
    from thist.batch.study import load_study
    from thist.report.study import write_study_report

    study = load_study(args.study)
    outdir = Path(args.output) if args.output else Path("reports") / Path(args.study).stem
    print(f"thist {__version__}: {study.title}")
    n_jobs = len(study.records) * len(study.levels) * len(study.methods)
    print(
        f"{study.kind}: {len(study.records)} records x {len(study.levels)} level(s) x "
        f"{len(study.methods)} method(s) = {n_jobs} jobs; store {outdir / STORE_NAME}"
    )
    try:
        result = run_study(
            study, outdir, workers=args.workers, scheduler=args.scheduler, resume=args.resume
        )
    except Interrupted as exc:
        print(
            f"interrupted: {exc.done} of {exc.total} jobs are kept in {outdir / STORE_NAME}; "
            f"run the same command with --resume to continue",
            file=sys.stderr,
        )
        return 130
    ex = result.execution
    if ex is None:
        print("nothing left to run: every job is in the store")
    else:
        print(
            f"ran {ex.ran} jobs on {ex.executor} ({ex.slots} worker(s)) in {ex.wall:.1f} s; "
            f"chunks of {ex.chunk_size} (overhead {ex.overhead * 1e3:.2g} ms per chunk, "
            f"{ex.job_time * 1e3:.3g} ms per job)"
        )
    print(_summary(result))
    store = open_store(outdir, study, resume=True)
    try:
        files = write_exports(
            outdir, study, store, result.statistics, result.curves, result.fragility
        )
    finally:
        store.close()
    files.append(write_study_report(outdir / "report.pdf", result))
    print("\n" + cautions.SHORT)
    shown = [f for f in files if f.parent == outdir]
    extra = len(files) - len(shown)
    print(
        "\nwrote "
        + ", ".join(str(f) for f in [outdir / STORE_NAME, *shown])
        + (f" and {extra} history file(s)" if extra else "")
    )
    return 0


def _summary(result) -> str:
    s = result.study
    lines = []
    if s.kind == "suite":
        for stat in result.statistics:
            dr = stat.stats.get("drift_ratio")
            if dr is None or not stat.records:
                continue
            lines.append(
                f"{stat.method}: peak story drift ratio over {len(stat.records)} records - "
                f"mean {dr.mean.max():.4g}, median {dr.median.max():.4g}, "
                f"maximum {dr.maximum.max():.4g} (largest over the stories)"
            )
    else:
        ida = s.ida
        for method, f in result.fragility:
            if f.fit is None:
                lines.append(f"{method}: {f.name}: {f.note}")
            else:
                lines.append(
                    f"{method}: {f.name}: median {f.fit.median / ida.unit_si:.4g} {ida.unit}, "
                    f"dispersion {f.fit.dispersion:.3f}"
                )
        from thist.batch.fragility import CAUTION

        lines.append(CAUTION)
    for r in result.failed:
        lines.append(f"failed: {r.job_id} ({r.record}, {r.method}): {r.error}")
    if not result.complete:
        lines.append("the store is incomplete: run again with --resume to finish")
    return "\n".join(lines)
