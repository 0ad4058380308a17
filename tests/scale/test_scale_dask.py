"""The dask executor on a real LocalCluster (two worker processes, loopback only) gives the local results."""

from __future__ import annotations

from pathlib import Path

import pytest
from scale_helpers import DEMO, demo_copies, demo_size

from gendertrace.api import score_file, score_file_report
from gendertrace.scale.plan import ScoringPlan

distributed = pytest.importorskip("distributed")
pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None) as local:
        yield local


def _sorted_lines(path: Path) -> list[str]:
    return sorted(path.read_text(encoding="utf-8").splitlines())


def _workers_holding_a_scorer(cluster) -> int:
    def count() -> int:
        from gendertrace.scale import plan

        return len(plan._SCORERS)

    with distributed.Client(cluster.scheduler_address) as client:
        return sum(1 for n in client.run(count).values() if n)


def test_dask_results_equal_the_local_results(cluster, tmp_path):
    inp = DEMO / "es-en.v1.tsv"
    local, remote = tmp_path / "local.jsonl", tmp_path / "dask.jsonl"
    plan = ScoringPlan("es", "en", batch_docs=1, cache_dir=str(tmp_path / "cache"))
    score_file(inp, local, plan)
    report = score_file_report(inp, remote, plan, scheduler=cluster.scheduler_address)
    assert report.executor.startswith("dask cluster") and "(2 worker threads)" in report.executor
    assert _sorted_lines(remote) == _sorted_lines(local)
    assert remote.read_bytes() == local.read_bytes()  # written in input order too
    assert _workers_holding_a_scorer(cluster) == 2  # both workers took batches


def test_dask_and_local_agree_with_statistical_alignment_fixed_by_a_frozen_model(cluster, tmp_path):
    # eflomal's random draws differ run to run, so sampled alignment cannot be compared byte for byte; the
    # frozen model, learned once, gives every batch statistical links that are the same wherever it runs.
    inp = demo_copies(tmp_path / "twice.tsv", 2)
    n, _ = demo_size()
    priors = tmp_path / "es-en.priors"
    score_file(inp, tmp_path / "learn.jsonl", ScoringPlan("es", "en", batch_docs=2 * n, align_mode="sampled",
                                                                  learn_priors=True),
               save_align_priors=priors)
    assert priors.is_file()
    plan = ScoringPlan("es", "en", batch_docs=3, align_mode="frozen", align_priors=str(priors))
    local, remote = tmp_path / "local.jsonl", tmp_path / "dask.jsonl"
    score_file(inp, local, plan, jobs=2)
    score_file(inp, remote, plan, scheduler=cluster.scheduler_address)
    assert _sorted_lines(remote) == _sorted_lines(local)
