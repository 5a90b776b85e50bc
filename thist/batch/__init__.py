"""Studies: record suites and incremental dynamic analysis, locally or on a Dask cluster.

Modules, in the order data flows through them:

``study``      study file → :class:`~thist.batch.study.Study` (SI, validated)
``jobs``       the jobs of a study, the context sent once to workers, running one job
``gate``       IDA stop rules, applied so the store never depends on finishing order
``execute``    executors (in-process, local process pool, Dask) and chunked driving
``store``      the SQLite results store (WAL; one transaction per finished job)
``stats``      suite statistics; IDA curves and fractiles
``fragility``  lognormal fragility functions by maximum likelihood
``export``     CSV files from the store
``run``        the whole study: store → jobs → executor → statistics
"""

from __future__ import annotations

from thist.batch.execute import Interrupted
from thist.batch.run import StudyResult, run_study, summarize_study
from thist.batch.study import Study, load_study

__all__ = ["Interrupted", "Study", "StudyResult", "load_study", "run_study", "summarize_study"]
