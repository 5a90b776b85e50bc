"""The Dask path: a real distributed.LocalCluster on loopback with two workers.

The same IDA as a local in-process run must give the same store, float for float
(DESIGN.md §7: results must not depend on where or in which order jobs ran).
"""

from __future__ import annotations

import logging

import pytest

from tests.test_study_files import write_ida
from tests.test_study_store import _table
from thist.batch import load_study, run_study

distributed = pytest.importorskip("distributed")


def test_local_cluster_gives_the_local_results(tmp_path):
    study = load_study(write_ida(tmp_path, 3))
    run_study(study, tmp_path / "local", workers=1, progress=False)
    with distributed.LocalCluster(
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        host="127.0.0.1",
        dashboard_address=None,
        silence_logs=logging.ERROR,
    ) as cluster:
        result = run_study(
            study, tmp_path / "dask", scheduler=cluster.scheduler_address, progress=False
        )
    assert result.execution.executor == "Dask cluster"
    assert result.execution.slots == 2
    assert _table(tmp_path / "dask") == _table(tmp_path / "local")
