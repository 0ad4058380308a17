"""On a real demo run: every contradiction names the source word its flagged word is linked through and
proposes the corrected form; the results stay small and the panel words indirect evidence as such."""

from __future__ import annotations

import json

from gendertrace.io.readers import read_corpus
from gendertrace.results import DECISIVE_ITEMS, SCHEMA_VERSION, read_results
from gendertrace.review.html import render_report
from gendertrace.review.results import load_review

# English subject and possessive pronouns by gender (Quirk et al., A Comprehensive Grammar of the English
# Language, personal pronouns; from memory).
FEMININE_OF = {"he": "she", "He": "She", "his": "her", "His": "Her", "him": "her", "himself": "herself"}


def test_every_contradiction_shows_its_source_word_and_a_fix(demo_run):
    source, results = demo_run
    docs = load_review(results, read_corpus(source))
    contradictions = [f for d in docs for f in d.findings if f.kind == "contradiction"]
    assert len(contradictions) >= 4
    for f in contradictions:
        assert f.source is not None, f"{f.id} {f.text!r}: no source word"
        seg = next(d for d in docs if d.doc_id == f.doc_id).segment(f.source.seg_id)
        assert seg.source[f.source.start : f.source.end] == f.source.text
        assert f.expected == "fem" and f.suggestion == FEMININE_OF[f.text]
    page = render_report(docs)
    for f in contradictions:
        assert f'id="detail-{f.id}"' in page
    # The message never names a pronoun as the person.
    for f in contradictions:
        assert not f.message.startswith(f"'{f.text}' makes su ") and " makes le " not in f.message


def test_results_carry_links_and_only_the_decisive_evidence(demo_run):
    _, results = demo_run
    lines = [json.loads(x) for x in results.read_text(encoding="utf-8").splitlines()]
    assert {line["schema"] for line in lines} == {SCHEMA_VERSION}
    for line in lines:
        for e in line["entities"]:
            for m in e["target_mentions"]:
                assert m["link"]["method"] in ("name", "lexicon", "alignment", "projection", "chain")
        for f in line["findings"]:
            assert len(f["evidence"]) <= DECISIVE_ITEMS or f.get("source")
            assert f["evidence_total"] >= len(f["evidence"])
    # Read back through the one reader, the totals are the lines' own.
    docs = list(read_results(results))
    assert sum(d.stats.checked for d in docs) == sum(line["stats"]["checked"] for line in lines)
