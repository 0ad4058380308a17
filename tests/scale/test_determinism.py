"""Same input, same findings: with the default (fixed) aligner a document's result depends on that document only,
not on the worker processes, the batch it shares or the documents around it. Inputs are the invented demo corpus."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from scale_helpers import HEADER, demo_copies

from gendertrace.api import score_file, score_file_report
from gendertrace.io.readers import read_corpus
from gendertrace.scale.plan import ScoringPlan

pytestmark = pytest.mark.slow


def _by_doc(path: Path) -> dict[str, str]:
    lines = path.read_text(encoding="utf-8").splitlines()
    return {json.loads(line)["doc_id"]: line for line in lines}


def test_jobs_batches_and_a_document_alone_give_identical_results(tmp_path):
    inp = demo_copies(tmp_path / "in.tsv", 2)
    docs = read_corpus(inp)
    plan = ScoringPlan("es", "en", cache_dir=None)
    assert plan.align_mode == "fixed"
    score_file(inp, tmp_path / "base.jsonl", plan)
    report = score_file_report(inp, tmp_path / "jobs.jsonl", ScoringPlan("es", "en", cache_dir=None, batch_docs=3),
                               jobs=2)
    assert report.executor == "2 worker processes"
    score_file(inp, tmp_path / "seven.jsonl", ScoringPlan("es", "en", cache_dir=None, batch_docs=7))
    base = _by_doc(tmp_path / "base.jsonl")
    assert len(base) == len(docs) > 7
    assert _by_doc(tmp_path / "jobs.jsonl") == base
    assert _by_doc(tmp_path / "seven.jsonl") == base
    # A document scored alone, in a file of its own, with a parse cache this time.
    alone = docs[len(docs) // 2]
    single = tmp_path / "alone.tsv"
    single.write_text(HEADER + "".join(f"{alone.doc_id}\t{s.seg_id}\t{s.source}\t{s.target}\n"
                                       for s in alone.segments), encoding="utf-8")
    score_file(single, tmp_path / "alone.jsonl", ScoringPlan("es", "en", cache_dir=str(tmp_path / "cache")))
    assert _by_doc(tmp_path / "alone.jsonl") == {alone.doc_id: base[alone.doc_id]}
    # The findings of the demo's documents are not empty: the comparison covers real findings.
    assert any(json.loads(line)["findings"] for line in base.values())


def test_the_sampled_aligner_stays_available_as_an_option(tmp_path):
    out = tmp_path / "out.jsonl"
    score_file(demo_copies(tmp_path / "in.tsv", 1), out, ScoringPlan("es", "en", cache_dir=None,
                                                                      align_mode="sampled"))
    signature = json.loads(Path(str(out) + ".signature.json").read_text(encoding="utf-8"))
    assert signature["alignment"] == "eflomal sampled per batch"
