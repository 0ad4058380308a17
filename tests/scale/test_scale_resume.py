"""Resumable runs: a torn last line is repaired, nothing is lost or written twice, settings must agree.
One test kills a real run with SIGKILL in a subprocess and resumes it."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from scale_helpers import DEMO, demo_copies, demo_size, doc_ids

from gendertrace.api import score_file, score_file_report
from gendertrace.errors import GendertraceError
from gendertrace.scale.plan import ScoringPlan

pytestmark = pytest.mark.slow


def _plan(tmp_path: Path, **kw) -> ScoringPlan:
    kw.setdefault("cache_dir", str(tmp_path / "cache"))
    return ScoringPlan("es", "en", **kw)


def test_resume_repairs_a_torn_line_and_finishes_the_run(tmp_path):
    inp = DEMO / "es-en.v1.tsv"
    whole, cut = tmp_path / "whole.jsonl", tmp_path / "cut.jsonl"
    plan = _plan(tmp_path, batch_docs=2)
    score_file(inp, whole, plan)
    lines = whole.read_bytes().splitlines(keepends=True)
    cut.write_bytes(b"".join(lines[:3]) + lines[3][: len(lines[3]) // 2])  # three results and half of one
    for sidecar in (".signature.json", ".digests"):
        Path(str(cut) + sidecar).write_bytes(Path(str(whole) + sidecar).read_bytes())
    report = score_file_report(inp, cut, plan, resume=True)
    assert report.resumed_after == 3
    assert cut.read_bytes() == whole.read_bytes()
    assert report.summary.documents == demo_size()[0]  # the summary covers the kept results too


def test_resuming_a_finished_run_writes_nothing_more(tmp_path):
    out = tmp_path / "out.jsonl"
    plan = _plan(tmp_path, batch_docs=2)
    score_file(DEMO / "es-en.v1.tsv", out, plan)
    before = out.read_bytes()
    report = score_file_report(DEMO / "es-en.v1.tsv", out, plan, resume=True)
    assert report.resumed_after == demo_size()[0]
    assert out.read_bytes() == before


def test_resume_refuses_a_run_started_with_other_settings(tmp_path):
    out = tmp_path / "out.jsonl"
    score_file(DEMO / "es-en.v1.tsv", out, _plan(tmp_path, batch_docs=2))
    with pytest.raises(GendertraceError, match=r"batch_docs \(2 before, 3 now\)"):
        score_file(DEMO / "es-en.v1.tsv", out, _plan(tmp_path, batch_docs=3), resume=True)


def test_resume_refuses_the_results_of_another_input(tmp_path):
    out = tmp_path / "out.jsonl"
    score_file(DEMO / "es-en.v1.tsv", out, _plan(tmp_path, batch_docs=2))
    other = demo_copies(tmp_path / "other.tsv", 2)  # same texts, other document ids
    with pytest.raises(GendertraceError, match="results of another input"):
        score_file(other, out, _plan(tmp_path, batch_docs=2), resume=True)


def test_resume_without_the_signature_beside_the_results_is_refused(tmp_path):
    out = tmp_path / "out.jsonl"
    out.write_text('{"doc_id": "es-en-01"}\n', encoding="utf-8")
    with pytest.raises(GendertraceError, match="settings of the interrupted run are unknown"):
        score_file(DEMO / "es-en.v1.tsv", out, _plan(tmp_path), resume=True)


def _score_cmd(inp: Path, out: Path, cache: Path, *extra: str) -> list[str]:
    return [sys.executable, "-m", "gendertrace.cli", "score", str(inp), "-s", "es", "-t", "en",
            "--out", str(out), "--batch-docs", "1", "--jobs", "1", "--cache", str(cache), "--quiet",
            "--no-progress", *extra]


def test_a_run_killed_mid_way_resumes_to_the_uninterrupted_result(tmp_path):
    inp = demo_copies(tmp_path / "many.tsv", 15)
    total = 15 * demo_size()[0]
    whole, killed = tmp_path / "whole.jsonl", tmp_path / "killed.jsonl"
    partial = tmp_path / "killed.jsonl.part"  # where a run streams its results until it is complete
    score_file(inp, whole, _plan(tmp_path, batch_docs=1))

    # A cold cache of its own keeps the run to be killed slow enough to be caught in the middle.
    proc = subprocess.Popen(_score_cmd(inp, killed, tmp_path / "cold"), stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE)
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if partial.exists() and partial.read_bytes().count(b"\n") >= 5:
            break
        time.sleep(0.02)
    assert proc.poll() is None, "the run finished before it could be killed"
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(30)
    assert proc.returncode == -signal.SIGKILL
    assert not killed.exists()
    done = partial.read_bytes().count(b"\n")
    assert 5 <= done < total
    signature = json.loads(Path(str(partial) + ".signature.json").read_text(encoding="utf-8"))
    assert signature["state"] == "incomplete"

    resumed = subprocess.run(_score_cmd(inp, killed, tmp_path / "cold", "--resume"), capture_output=True,
                             text=True, timeout=300)
    assert resumed.returncode == 0, resumed.stderr
    assert killed.read_bytes() == whole.read_bytes()
    assert not partial.exists()
    assert len(doc_ids(killed)) == len(set(doc_ids(killed))) == total


def test_killing_a_parallel_run_leaves_no_worker_behind(tmp_path):
    psutil = pytest.importorskip("psutil")  # comes with dask.distributed, in the test extra
    inp = demo_copies(tmp_path / "many.tsv", 15)
    out = tmp_path / "killed.jsonl.part"
    cmd = _score_cmd(inp, tmp_path / "killed.jsonl", tmp_path / "cold")
    cmd[cmd.index("--jobs") + 1] = "2"
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline and proc.poll() is None:
        if out.exists() and out.read_bytes().count(b"\n") >= 2:
            break
        time.sleep(0.02)
    assert proc.poll() is None, "the run finished before it could be killed"
    workers = psutil.Process(proc.pid).children(recursive=True)
    assert len(workers) >= 2
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(30)
    _, alive = psutil.wait_procs(workers, timeout=20)
    for p in alive:
        p.kill()  # clean up before failing
    assert alive == []
