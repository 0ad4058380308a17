"""Findings matched between versions by their source word, decisions checked against the run, judged
precision."""

from __future__ import annotations

import json

import pytest

from gendertrace.errors import InputError
from gendertrace.history.judged import FindingWord, findings_diff, judged, judged_decisions


def word(doc, seg, text, src=None, kind="contradiction", fid="f1-1", start=0):
    s = src or ("", -1, -1, "")
    return FindingWord(fid, doc, kind, seg, start, start + len(text), text, s[0], s[1], s[2], s[3])


def test_findings_are_matched_by_document_segment_and_source_word():
    a = [word("d1", "2", "he", ("2", 10, 12, "su")), word("d1", "4", "him", ("4", 0, 5, "Ella")),
         word("d2", "1", "his")]
    # B retranslated segment 2 (the flagged word moved and changed, the source word is the same) and fixed
    # segment 4; it also gets a new error in d2.
    b = [word("d1", "2", "his", ("2", 10, 12, "su"), start=30), word("d2", "1", "his"),
         word("d2", "3", "he", ("3", 0, 3, "él"))]
    d = findings_diff(a, b)
    assert [w.text for w in d.fixed] == ["him"]
    assert [w.text for w in d.persisting] == ["his", "his"]
    assert [w.text for w in d.new] == ["he"]


def test_two_findings_on_one_source_word_count_one_by_one():
    a = [word("d", "1", "he", ("1", 0, 2, "él"))] * 2
    b = [word("d", "1", "he", ("1", 0, 2, "él"))]
    d = findings_diff(a, b)
    assert (len(d.fixed), len(d.new), len(d.persisting)) == (1, 0, 1)


def test_precision_is_accepted_over_judged():
    j = judged({"f1-1": ("accept", ""), "f1-2": ("reject", "a colleague"), "f1-3": ("", "ask the client")})
    assert (j.accepted, j.rejected, j.commented) == (1, 1, 2)
    assert j.precision == pytest.approx(0.5)
    assert judged({}).precision is None


def test_decisions_of_another_run_are_refused(tmp_path):
    path = tmp_path / "d.json"
    path.write_text(json.dumps({"format": "gendertrace-decisions", "version": 1, "decisions": [
        {"finding": "f1-1", "document": "d1", "segment": "2", "start": 0, "end": 2, "text": "he",
         "decision": "accept", "comment": ""}]}), encoding="utf-8")
    assert [d.decision for d in judged_decisions(path, [word("d1", "2", "he")])] == ["accept"]
    with pytest.raises(InputError, match=r"d\.json: 1 decision\(s\) do not match a finding of this run"):
        judged_decisions(path, [word("d1", "2", "she")])


def test_a_bad_verdict_names_the_file_and_line(tmp_path):
    path = tmp_path / "f.csv"
    path.write_text("finding,document,segment,start,end,flagged,decision,comment\r\n"
                    "f1-1,d1,2,0,2,he,maybe,\r\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"f\.csv:2: decision 'maybe': expected accept, reject or nothing"):
        judged_decisions(path, [word("d1", "2", "he")])
