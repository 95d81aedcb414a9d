"""The same sweep on local workers and on a Dask LocalCluster gives identical numbers."""

from __future__ import annotations

import csv

import pytest
from test_sweep_points import tiny_case

from whorl.cases.sweep import run_sweep

distributed = pytest.importorskip("distributed")

NUMERIC_SKIP = {"point", "status", "error"}


def _rows(folder):
    with open(folder / "summary.csv", newline="") as f:
        return list(csv.DictReader(f))


def test_dask_local_cluster_matches_local_workers(tmp_path):
    path = tiny_case(tmp_path, 'freq = ["200 Hz", "1 kHz"]\ngap = ["2 mm", "4 mm"]')
    local = run_sweep(path, out=tmp_path / "local", workers=2)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None, host="127.0.0.1") as cluster:
        dask = run_sweep(path, out=tmp_path / "dask", scheduler=cluster.scheduler_address)
    assert local.counts["done"] == dask.counts["done"] == 4
    assert dask.meshed == local.meshed == 2
    a, b = _rows(local.folder), _rows(dask.folder)
    assert [r.keys() for r in a] == [r.keys() for r in b]
    for ra, rb in zip(a, b, strict=True):
        assert ra == rb  # every number identical, to the last digit
    assert (dask.folder / "points" / "0004" / "results.json").exists()
    assert (dask.folder / "report.html").exists()


def test_unreachable_scheduler_is_a_clear_error(tmp_path):
    from whorl.cases.errors import CaseError
    from whorl.cases.sweep.cluster import DaskRunner

    with pytest.raises(CaseError, match="cannot reach the Dask scheduler"):
        DaskRunner("tcp://127.0.0.1:9", connect_timeout=1)
