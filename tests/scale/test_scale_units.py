"""Batches at fixed input positions, the results-file repair, and resumable settings (no pipelines loaded)."""

from __future__ import annotations

from gendertrace.model import Document, Segment
from gendertrace.scale.resume import repair_results, settings_differences
from gendertrace.scale.work import iter_batches


def _docs(n: int) -> list[Document]:
    return [Document(f"d{k}", (Segment("1", "Hola.", "Hello."),)) for k in range(n)]


def test_batches_start_at_multiples_of_their_size():
    batches = list(iter_batches(_docs(7), 3))
    assert [(b.index, b.start, [d.doc_id for d in b.documents]) for b in batches] == [
        (0, 0, ["d0", "d1", "d2"]), (1, 3, ["d3", "d4", "d5"]), (2, 6, ["d6"]),
    ]


def test_resuming_keeps_the_batch_that_holds_the_first_unfinished_document_whole():
    # Four documents done: batch 1 (d3..d5) is scored again whole, so it is aligned with the same neighbours.
    batches = list(iter_batches(_docs(7), 3, first=4))
    assert [(b.start, len(b.documents)) for b in batches] == [(3, 3), (6, 1)]


def test_resuming_after_a_full_batch_starts_with_the_next_one():
    assert [b.start for b in iter_batches(_docs(7), 3, first=6)] == [6]
    assert list(iter_batches(_docs(6), 3, first=6)) == []


def test_repair_cuts_off_a_half_written_last_line(tmp_path):
    out = tmp_path / "out.jsonl"
    out.write_bytes(b'{"doc_id": "a"}\n{"doc_id": "b"}\n{"doc_id": "c", "ent')
    assert repair_results(out) == 2
    assert out.read_bytes() == b'{"doc_id": "a"}\n{"doc_id": "b"}\n'


def test_repair_leaves_a_complete_file_alone(tmp_path):
    out = tmp_path / "out.jsonl"
    out.write_bytes(b'{"doc_id": "a"}\n{"doc_id": "b"}\n')
    assert repair_results(out) == 2
    assert out.read_bytes() == b'{"doc_id": "a"}\n{"doc_id": "b"}\n'


def test_repair_of_a_file_with_only_a_torn_line_leaves_it_empty(tmp_path):
    out = tmp_path / "out.jsonl"
    out.write_bytes(b'{"doc_id": "a", "findi')
    assert repair_results(out) == 0
    assert out.read_bytes() == b""


def test_repair_finds_the_last_newline_far_back_in_a_long_torn_line(tmp_path):
    out = tmp_path / "out.jsonl"
    torn = b'{"doc_id": "b", "text": "' + b"x" * 200_000
    out.write_bytes(b'{"doc_id": "a"}\n' + torn)
    assert repair_results(out) == 1
    assert out.read_bytes() == b'{"doc_id": "a"}\n'


def test_settings_differences_ignore_the_input_and_the_progress():
    before = {"tool": "gendertrace 0.1.0", "batch_docs": 500, "input": "a.tsv", "state": "incomplete"}
    now = {"tool": "gendertrace 0.1.0", "batch_docs": 200, "input": "./a.tsv", "documents": 9}
    assert settings_differences(before, now) == ["batch_docs"]
