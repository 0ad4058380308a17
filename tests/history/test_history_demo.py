"""The demo's history step: both engine versions of every direction recorded and compared."""

from __future__ import annotations

from history_helpers import Person, document, write_input, write_results

from gendertrace.history.demo import record_demo
from gendertrace.history.store import HistoryStore


def _demo_results(folder):
    for direction in ("es-en", "fr-en"):
        for version, wrong in (("v1", 2), ("v2", 1)):
            docs = [document(f"{direction}-0{k}",
                             [Person("fem", 3, wrong if k == 1 else 0), Person("masc", 2)])
                    for k in range(1, 4)]
            write_results(folder / f"{direction}.{version}.jsonl", docs)
    (folder / "notes.jsonl").write_text("", encoding="utf-8")  # not a demo results file: ignored


def test_record_demo_records_each_direction_and_returns_the_comparisons(tmp_path):
    results = tmp_path / "demo-results"
    _demo_results(results)
    db = tmp_path / "history.db"
    text = record_demo(results, db)
    assert "== demo-es-en: v1 -> v2 ==" in text and "== demo-fr-en: v1 -> v2 ==" in text
    assert text.count("gate: no regression") == 2
    assert "A   " in text and "13/15" in text and "14/15" in text
    with HistoryStore(db) as store:
        assert [r.name for r in store.runs()] == ["demo-es-en:v1", "demo-es-en:v2", "demo-fr-en:v1",
                                                  "demo-fr-en:v2"]


def test_record_demo_can_run_again_and_keeps_texts_from_the_corpus(tmp_path):
    results = tmp_path / "demo-results"
    _demo_results(results)
    corpus = tmp_path / "corpus"
    corpus.mkdir()
    for direction in ("es-en", "fr-en"):
        for version in ("v1", "v2"):
            write_input(corpus / f"{direction}.{version}.tsv",
                        [(f"{direction}-0{k}", "1", "La capitana llegó.", "The captain arrived.", None)
                         for k in range(1, 4)])
    db = tmp_path / "history.db"
    record_demo(results, db, corpus=corpus)
    again = record_demo(results, db, corpus=corpus)
    assert "MT metrics: not computed: the input had no references" in again
    with HistoryStore(db) as store:
        assert len(store.runs()) == 4 and all(r.has_texts for r in store.runs())
