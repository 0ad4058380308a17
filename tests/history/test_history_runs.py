"""Reading a results file and its signature into a run: statistics, findings, per-entity counts, texts."""

from __future__ import annotations

import json

import pytest
from history_helpers import Person, document, simple_docs, write_input, write_results

from gendertrace.errors import InputError
from gendertrace.history.runs import estimate_checked, load_run, signature_differences


def _ev(seg, start, end, gender, rule, side="target"):
    return {"side": side, "seg_id": seg, "start": start, "end": end, "text": "x" * (end - start),
            "gender": gender, "kind": "morphology", "weight": 0.8, "rule": rule}


def test_a_run_keeps_documents_in_order_with_their_statistics(tmp_path):
    docs = [document("zulu", [Person("fem", 3, 1)]), document("alpha", [Person("masc", 2)])]
    run = load_run(write_results(tmp_path / "r.jsonl", docs))
    assert [(d.doc_id, d.position, d.consistent, d.checked) for d in run.documents] == [("zulu", 0, 2, 3),
                                                                                        ("alpha", 1, 2, 2)]
    assert run.documents[0].findings == {"contradiction": 1, "inconsistency": 0, "assumption": 0}
    assert (run.src_lang, run.tgt_lang) == ("es", "en")
    assert run.signature["rules"] == "0a1b2c3d4e5f"
    assert [(f.doc_id, f.kind, f.entity, f.expected, f.found) for f in run.findings] == [
        ("zulu", "contradiction", "E1", "fem", "masc")]


def test_entity_counts_are_estimated_from_target_evidence_and_findings(tmp_path):
    docs = [document("d", [Person("fem", 4, 1), Person("masc", 2), Person(None, 2)])]
    run = load_run(write_results(tmp_path / "r.jsonl", docs))
    got = [(e.entity_id, e.gender, e.basis, e.checked, e.consistent, e.counts) for e in run.entities]
    assert got == [("E1", "fem", "source", 4, 3, "estimated"), ("E2", "masc", "source", 2, 2, "estimated"),
                   ("E3", None, "target", 0, 0, "estimated")]
    assert run.entity_coverage == (6, 6)
    assert run.notes and "estimated" in run.notes[0]


def test_entity_counts_given_by_the_results_are_taken_as_reported(tmp_path):
    doc = document("d", [Person("fem", 4, 1)], extra_entity_keys=True)
    doc["entities"][0]["checked"], doc["entities"][0]["consistent"] = 7, 5
    run = load_run(write_results(tmp_path / "r.jsonl", [doc]))
    (e,) = run.entities
    assert (e.checked, e.consistent, e.counts) == (7, 5, "reported")
    assert run.notes == ()


def test_a_determiner_and_its_noun_count_as_one_reference():
    evidence = [_ev("1", 0, 2, "fem", "determiner agreement"), _ev("1", 3, 12, "fem", "gendered noun")]
    assert estimate_checked(evidence) == 1


def test_a_predicative_adjective_counts_alone_even_beside_its_noun():
    evidence = [_ev("1", 0, 2, "fem", "determiner agreement"), _ev("1", 3, 12, "fem", "gendered noun"),
                _ev("1", 13, 20, "fem", "predicative with copula")]
    assert estimate_checked(evidence) == 2


def test_words_in_other_segments_or_far_apart_are_separate_references():
    evidence = [_ev("1", 0, 3, "fem", "personal pronoun"), _ev("1", 30, 33, "fem", "personal pronoun"),
                _ev("2", 0, 3, "masc", "personal pronoun")]
    assert estimate_checked(evidence) == 3


def test_a_bare_masculine_role_noun_is_not_counted_and_source_words_never_are():
    evidence = [_ev("1", 0, 10, "masc", "masculine noun form"),
                _ev("1", 0, 3, "fem", "gendered noun", "source"),
                _ev("2", 0, 5, "neutral", "personal pronoun")]
    assert estimate_checked(evidence) == 0


def test_an_entity_the_source_cannot_judge_gets_no_estimated_checks(tmp_path):
    doc = document("d", [Person("fem", 3)])
    doc["entities"][0]["confidence"] = 0.2  # below the run's min_confidence of 0.5
    (e,) = load_run(write_results(tmp_path / "r.jsonl", [doc])).entities
    assert (e.checked, e.consistent) == (0, 0)


def test_texts_come_from_the_input_in_segment_order(tmp_path):
    results = write_results(tmp_path / "r.jsonl", simple_docs([(1, 1), (1, 1)]))
    inp = write_input(tmp_path / "in.tsv", [
        ("d001", "1", "Irune llegó.", "Irune arrived.", "Irune came."),
        ("d000", "1", "Irune salió.", "Irune left.", None),
        ("d000", "2", "Sonrió.", "She smiled.", "She smiled."),
    ])
    run = load_run(results, inp)
    assert [(s.doc_id, s.seg_id, s.hypothesis, s.reference) for s in run.segments] == [
        ("d000", "1", "Irune left.", None), ("d000", "2", "She smiled.", "She smiled."),
        ("d001", "1", "Irune arrived.", "Irune came.")]


def test_an_input_lacking_documents_of_the_results_is_refused_by_name(tmp_path):
    results = write_results(tmp_path / "r.jsonl", simple_docs([(1, 1), (1, 1)]))
    inp = write_input(tmp_path / "in.tsv", [("d000", "1", "Salió.", "She left.", None)])
    with pytest.raises(InputError, match=r"lacks 1 document\(s\) of the results: d001"):
        load_run(results, inp)


def test_results_without_a_signature_are_refused(tmp_path):
    path = tmp_path / "r.jsonl"
    path.write_text(json.dumps(simple_docs([(1, 1)])[0]) + "\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"r\.jsonl\.signature\.json: no signature file"):
        load_run(path)


def test_a_broken_results_line_is_named(tmp_path):
    path = write_results(tmp_path / "r.jsonl", simple_docs([(1, 1)]))
    with open(path, "a", encoding="utf-8") as f:
        f.write('{"doc_id": "x", "entities": []}\n')
    with pytest.raises(InputError, match=r"r\.jsonl:2: results object has no 'findings'"):
        load_run(path)


def test_a_document_listed_twice_is_refused(tmp_path):
    docs = simple_docs([(1, 1)]) * 2
    with pytest.raises(InputError, match=r":2: document 'd000' appears twice"):
        load_run(write_results(tmp_path / "r.jsonl", docs))


def test_signatures_differ_in_settings_but_not_in_input():
    a = {"tool": "gendertrace 0.1.0", "rules": "aa", "min_confidence": 0.5, "input": "a.tsv", "documents": 3}
    b = {"tool": "gendertrace 0.1.0", "rules": "bb", "min_confidence": 0.6, "input": "b.tsv", "documents": 4,
         "src": "es:x"}
    assert signature_differences(a, b) == [("min_confidence", 0.5, 0.6), ("rules", "aa", "bb"),
                                           ("src", None, "es:x")]
    assert signature_differences(a, dict(a, input="elsewhere.tsv")) == []
