"""Every check that can be made before writing is made first, and a run that fails later leaves the earlier
results and their signature as they were: results stream into OUT.part and are renamed into place only when
complete, and `--resume` continues the partial file."""

from __future__ import annotations

import json

import pytest
from reliability_helpers import ROWS, SRC_CONLLU, tsv

from gendertrace.scale import executors
from gendertrace.scale.work import BatchError


def _earlier_results(ws) -> dict[str, bytes]:
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    return ws.snapshot()


def test_a_conllu_sentence_missing_for_a_late_document_leaves_earlier_results_untouched(ws):
    before = _earlier_results(ws)
    tsv(ws.root / "late.tsv", [*ROWS, ("d9", "1", "Nerea Ubillos laughed.", "Nerea Ubillos sonrió.")])
    before["late.tsv"] = (ws.root / "late.tsv").read_bytes()
    result = ws.score("late.tsv", "--batch-docs", "1", "-o", "res.jsonl", code=1)
    # The input file and the line of the segment, the side, the value and the CoNLL-U file it is missing from.
    assert ("Error: late.tsv:6: the source of segment '1' of document 'd9', 'Nerea Ubillos laughed.', is no "
            "sentence of the source CoNLL-U (src.conllu)") in result.output
    assert ws.snapshot() == before  # results, signature and digests as they were; no partial file


def test_a_missing_blank_line_names_the_sentence_it_should_end(ws):
    # UD guidelines, CoNLL-U format: a sentence ends with a blank line and its comments come before its words.
    joined = SRC_CONLLU.replace("4\t.\t.\tPUNCT\t_\t_\t3\tpunct\t_\t_\n\n# sent_id = s2",
                                "4\t.\t.\tPUNCT\t_\t_\t3\tpunct\t_\t_\n# sent_id = s2", 1)
    (ws.root / "joined.conllu").write_text(joined, encoding="utf-8")
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "out.jsonl", conllu="joined.conllu", code=1)
    assert ("Error: joined.conllu:7: a new sentence begins without the blank line that must end sentence "
            "'s1' (words from line 3; CoNLL-U)") in result.output
    assert ws.snapshot() == before


def test_word_lines_starting_over_without_a_blank_line_are_refused(ws):
    words = [line for line in SRC_CONLLU.splitlines() if line and not line.startswith("#")]
    (ws.root / "words.conllu").write_text("# text = Nerea Ubillos smiled.\n" + "\n".join(words) + "\n\n",
                                          encoding="utf-8")
    result = ws.score("in.tsv", "-o", "out.jsonl", conllu="words.conllu", code=1)
    assert "words.conllu:6: a new sentence begins without the blank line" in result.output
    assert not (ws.root / "out.jsonl").exists()


def test_a_run_failing_half_way_keeps_earlier_results_and_resume_finishes_it(ws, monkeypatch):
    whole = _earlier_results(ws)["res.jsonl"]  # what an uninterrupted run writes
    ws.copy("res.jsonl", "keep.jsonl")
    (ws.root / "res.jsonl").write_text('{"earlier": "results"}\n', encoding="utf-8")  # marks the old file
    earlier = ws.snapshot()
    real = executors.iter_outcomes

    def failing(scorer, batch):
        if batch.start >= 2:
            raise BatchError("worker lost")
        return real(scorer, batch)

    monkeypatch.setattr(executors, "iter_outcomes", failing)
    result = ws.score("in.tsv", "--batch-docs", "1", "--jobs", "1", "-o", "res.jsonl", code=1)
    assert ("worker lost (res.jsonl and its signature are as they were; the 2 results written so far are in "
            "res.jsonl.part, which --resume continues)") in result.output
    after = ws.snapshot()
    for name, data in earlier.items():
        assert after[name] == data, name
    assert (ws.root / "res.jsonl.part").read_bytes() == b"".join(whole.splitlines(keepends=True)[:2])
    state = json.loads((ws.root / "res.jsonl.part.signature.json").read_text(encoding="utf-8"))["state"]
    assert state == "incomplete"

    monkeypatch.setattr(executors, "iter_outcomes", real)
    ws.score("in.tsv", "--batch-docs", "1", "-o", "res.jsonl", "--resume", code=0)
    assert (ws.root / "res.jsonl").read_bytes() == whole
    assert not (ws.root / "res.jsonl.part").exists()
    assert "state" not in json.loads((ws.root / "res.jsonl.signature.json").read_text(encoding="utf-8"))


@pytest.mark.parametrize("doc_id", ["d1", "d3"])
def test_resume_refuses_kept_documents_whose_input_rows_changed(ws, doc_id):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    # Same document ids, one text changed (to a sentence the CoNLL-U also holds).
    rows = [(d, s, "Nerea Ubillos smiled." if d == doc_id and src == "She was tired." else src, tgt)
            for d, s, src, tgt in ROWS]
    tsv(ws.root / "in.tsv", rows)
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "res.jsonl", "--resume", code=1)
    line = {"d1": 2, "d3": 5}[doc_id]
    assert (f"Error: cannot resume res.jsonl: the input rows of document {doc_id!r} (in.tsv:{line}) "
            f"changed since it was scored; score afresh without --resume") in result.output
    assert ws.snapshot() == before


def test_resume_refuses_results_without_their_digests(ws):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    (ws.root / "res.jsonl.digests").unlink()
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "res.jsonl", "--resume", code=1)
    assert "cannot resume res.jsonl: no res.jsonl.digests beside it" in result.output
    assert ws.snapshot() == before
