"""Streaming scoring through the API: input order, results written batch by batch, worker processes, the
parse cache across engine versions, and the frozen alignment model. Inputs are the invented demo corpus."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from scale_helpers import DEMO, HEADER, demo_copies, demo_size, doc_ids

from gendertrace import Scorer
from gendertrace.api import score_file, score_file_report
from gendertrace.errors import InputError
from gendertrace.io.readers import read_corpus
from gendertrace.scale import executors
from gendertrace.scale.plan import ScoringPlan, build_scorer

pytestmark = pytest.mark.slow

V1, V2 = DEMO / "es-en.v1.tsv", DEMO / "es-en.v2.tsv"


def _plan(tmp_path: Path, **kw) -> ScoringPlan:
    kw.setdefault("cache_dir", str(tmp_path / "cache"))
    return ScoringPlan("es", "en", **kw)


def _expected_lines(path: Path) -> list[str]:
    return [json.dumps(r.to_json(), ensure_ascii=False) for r in Scorer("es", "en").score(read_corpus(path))]


def test_streamed_results_are_the_scorers_in_input_order(tmp_path):
    out = tmp_path / "out.jsonl"
    summary = score_file(V1, out, _plan(tmp_path, batch_docs=2))
    assert out.read_text(encoding="utf-8").splitlines() == _expected_lines(V1)
    assert summary.documents == len(read_corpus(V1))


def test_each_batch_is_written_before_the_next_one_is_scored(tmp_path, monkeypatch):
    out = tmp_path / "out.jsonl"
    partial = tmp_path / "out.jsonl.part"  # results stream here until the run is complete
    seen = []
    real = executors.iter_outcomes

    def spy(scorer, batch):
        seen.append((batch.start, len(partial.read_text(encoding="utf-8").splitlines())))
        return real(scorer, batch)

    monkeypatch.setattr(executors, "iter_outcomes", spy)
    score_file(V1, out, _plan(tmp_path, batch_docs=2))
    n, _ = demo_size()
    assert seen == [(k, k) for k in range(0, n, 2)]  # batch k starts when the k documents before it are out


def test_within_a_batch_each_result_is_written_before_the_next_document_is_scored(tmp_path, monkeypatch):
    out = tmp_path / "out.jsonl"
    partial = tmp_path / "out.jsonl.part"  # results stream here until the run is complete
    written_before = []
    real = Scorer.score_parsed

    def spy(self, pd, alignments):
        written_before.append(len(partial.read_text(encoding="utf-8").splitlines()))
        return real(self, pd, alignments)

    monkeypatch.setattr(Scorer, "score_parsed", spy)
    n, _ = demo_size()
    score_file(V1, out, _plan(tmp_path, batch_docs=n))  # the whole file in one batch
    assert written_before == list(range(n))


def test_rows_of_one_document_apart_are_gathered_as_the_input_contract_allows(tmp_path):
    rows = [("b", "1", "La jueza llegó.", "The judge arrived."),
            ("a", "1", "El enfermero sonrió.", "The nurse smiled."),
            ("b", "2", "Estaba cansada.", "He was tired.")]
    inp = tmp_path / "apart.tsv"
    inp.write_text(HEADER + "".join("\t".join(r) + "\n" for r in rows), encoding="utf-8")
    out = tmp_path / "out.jsonl"
    score_file(inp, out, _plan(tmp_path))
    assert doc_ids(out) == ["b", "a"]
    assert out.read_text(encoding="utf-8").splitlines() == _expected_lines(inp)


def test_an_input_error_stops_the_run_before_any_result_is_written(tmp_path):
    inp = tmp_path / "bad.tsv"
    inp.write_text(HEADER + "a\t1\tHola.\tHello.\nb\t1\tsolo tres celdas\n", encoding="utf-8")
    out = tmp_path / "out.jsonl"
    with pytest.raises(InputError, match="bad.tsv:3"):
        score_file(inp, out, _plan(tmp_path))
    assert not out.exists()


def test_jobs_two_writes_what_jobs_one_writes(tmp_path):
    one, two = tmp_path / "one.jsonl", tmp_path / "two.jsonl"
    score_file(V1, one, _plan(tmp_path, batch_docs=2, cache_dir=None))
    report = score_file_report(V1, two, _plan(tmp_path, batch_docs=2, cache_dir=str(tmp_path / "c2")), jobs=2)
    assert report.executor == "2 worker processes"
    assert two.read_bytes() == one.read_bytes()


def test_a_single_batch_is_scored_in_this_process_whatever_the_jobs(tmp_path):
    report = score_file_report(V1, tmp_path / "out.jsonl", _plan(tmp_path), jobs=4)
    assert report.executor == "this process"


def test_a_second_engine_version_parses_only_its_new_targets(tmp_path):
    plan = _plan(tmp_path)
    first = score_file_report(V1, tmp_path / "v1.jsonl", plan)
    scorer = build_scorer(plan)  # a fresh Scorer: nothing loaded, nothing remembered but the disk cache
    second = score_file_report(V2, tmp_path / "v2.jsonl", scorer)
    v1_targets = {s.target for d in read_corpus(V1) for s in d.segments}
    v2_segments = [s for d in read_corpus(V2) for s in d.segments]
    new_targets = {s.target for s in v2_segments} - v1_targets
    assert new_targets  # the demo's engine v2 does change some translations
    assert first.parsed == 2 * len(v2_segments)
    assert second.parsed == len(new_targets)
    assert second.cache_hits == 2 * len(v2_segments) - len(new_targets)
    assert not scorer.src_parser.loaded  # every source came from the cache: its pipeline was never loaded
    assert (tmp_path / "v2.jsonl").read_text(encoding="utf-8").splitlines() == _expected_lines(V2)


def test_the_frozen_alignment_model_does_not_depend_on_the_batch_size(tmp_path):
    inp = demo_copies(tmp_path / "twice.tsv", 2)  # two copies: one batch large enough for eflomal
    n, segments = demo_size()
    priors = tmp_path / "es-en.priors"
    plan = _plan(tmp_path, batch_docs=2 * n, learn_priors=True)
    learnt = score_file_report(inp, tmp_path / "learn.jsonl", plan, save_align_priors=priors)
    assert learnt.learned.sentences == 2 * segments and priors.is_file()
    frozen = {"align_mode": "frozen", "align_priors": str(priors)}
    score_file(inp, tmp_path / "one.jsonl", _plan(tmp_path, batch_docs=1, **frozen))
    score_file(inp, tmp_path / "all.jsonl", _plan(tmp_path, batch_docs=2 * n, **frozen))
    assert (tmp_path / "one.jsonl").read_bytes() == (tmp_path / "all.jsonl").read_bytes()


def test_the_signature_records_the_batching_and_the_alignment(tmp_path):
    out = tmp_path / "out.jsonl"
    score_file(V1, out, _plan(tmp_path, batch_docs=3))
    signature = json.loads(Path(str(out) + ".signature.json").read_text(encoding="utf-8"))
    assert signature["batch_docs"] == 3
    assert signature["alignment"] == "eflomal sampled per batch"
    assert signature["documents"] == demo_size()[0]
    assert "state" not in signature  # the run finished


def test_worker_processes_leave_every_parse_in_the_cache(tmp_path):
    # Workers exit without tearing their heap down (gendertrace.scale.executors): what they stored must stay.
    plan = _plan(tmp_path, batch_docs=2)
    first = score_file_report(V1, tmp_path / "one.jsonl", plan, jobs=2)
    assert first.executor == "2 worker processes" and first.parsed > 0
    again = score_file_report(V1, tmp_path / "two.jsonl", build_scorer(plan))
    assert again.parsed == 0
    assert again.cache_hits == again.sides == first.sides
    assert (tmp_path / "two.jsonl").read_bytes() == (tmp_path / "one.jsonl").read_bytes()
