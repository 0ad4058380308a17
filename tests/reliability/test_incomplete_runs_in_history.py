"""`history record` refuses a run whose signature says it is incomplete, unless told to keep it; a kept one is
marked incomplete in `list` and `compare`."""

from __future__ import annotations

import json

from gendertrace.scale import executors
from gendertrace.scale.work import BatchError


def _partial_run(ws, monkeypatch) -> None:
    """res.jsonl.part and its signature as a run that failed after its first two documents leaves them."""
    real = executors.iter_outcomes

    def failing(scorer, batch):
        if batch.start >= 2:
            raise BatchError("worker lost")
        return real(scorer, batch)

    monkeypatch.setattr(executors, "iter_outcomes", failing)
    ws.score("in.tsv", "--batch-docs", "1", "--jobs", "1", "-o", "res.jsonl", code=1)
    monkeypatch.setattr(executors, "iter_outcomes", real)


def test_record_refuses_an_incomplete_run(ws, monkeypatch):
    _partial_run(ws, monkeypatch)
    before = ws.snapshot()
    result = ws.run("history", "record", "res.jsonl.part", "--engine", "lumen", "--version", "1", "--db", "h.db",
                    code=1)
    assert ("Error: res.jsonl.part.signature.json: state 'incomplete': the run stopped (killed, or failed) "
            "after 2 documents; finish it with `gendertrace score --resume`, or record it as it is with "
            "--keep-incomplete") in result.output
    assert ws.snapshot() == before  # not even an empty store


def test_a_kept_incomplete_run_is_marked_in_list_and_compare(ws, monkeypatch):
    _partial_run(ws, monkeypatch)
    result = ws.run("history", "record", "res.jsonl.part", "--engine", "lumen", "--version", "1", "--db", "h.db",
                    "--keep-incomplete", code=0)
    assert "recorded lumen:1 (incomplete run, kept as it is): 2 documents" in result.output
    # The same two documents, complete, as the second version.
    ws.copy("res.jsonl.part", "two.jsonl")
    signature = json.loads((ws.root / "res.jsonl.part.signature.json").read_text(encoding="utf-8"))
    del signature["state"]
    (ws.root / "two.jsonl.signature.json").write_text(json.dumps(signature), encoding="utf-8")
    ws.run("history", "record", "two.jsonl", "--engine", "lumen", "--version", "2", "--db", "h.db", code=0)

    listing = ws.run("history", "list", "--db", "h.db", code=0).output.splitlines()
    assert listing[0].split()[-1] == "state"
    assert listing[2].split()[0] == "lumen:1" and listing[2].split()[-1] == "incomplete"
    assert listing[3].split()[0] == "lumen:2" and listing[3].split()[-1] == "complete"
    compared = ws.run("history", "compare", "lumen:1", "lumen:2", "--db", "h.db", "--samples", "100",
                      "--trials", "100", "--no-metrics", code=0)
    assert "warning: lumen:1 is an incomplete run (recorded with --keep-incomplete)" in compared.output
    assert "signatures differ" not in compared.output  # being incomplete is not a setting
