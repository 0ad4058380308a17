"""Every CSV the tool writes goes through one writer that defuses formula-like cells (common practice, no
source; the OWASP guidance on CSV injection describes it): a text cell starting with =, +, -, @, a tab or a
carriage return gets a leading apostrophe, so a spreadsheet shows it instead of evaluating it."""

from __future__ import annotations

import csv

import pytest
from reliability_helpers import ROWS, tsv

from gendertrace.io.csvwrite import safe_cell

HOSTILE = '=HYPERLINK("http://example.invalid","x")'


def _read(path) -> list[dict[str, str]]:
    with open(path, encoding="utf-8", newline="") as f:
        return list(csv.DictReader(f))


@pytest.mark.parametrize("start", ["=", "+", "-", "@", "\t", "\r"])
def test_a_formula_like_text_cell_gets_an_apostrophe(start):
    assert safe_cell(start + "1+1") == "'" + start + "1+1"


@pytest.mark.parametrize("value, cell", [(-3, "-3"), (-0.25, "-0.25"), (None, ""), (float("nan"), ""),
                                         (True, "True"), ("plain", "plain"), ("'quoted", "'quoted")])
def test_numbers_and_plain_text_stay_as_they_are(value, cell):
    assert safe_cell(value) == cell


def test_history_export_defuses_ids_engine_and_version(ws):
    rows = [(HOSTILE if d == "d1" else d, s, src, tgt) for d, s, src, tgt in ROWS]
    tsv(ws.root / "in.tsv", rows)
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    ws.run("history", "record", "res.jsonl", "--engine", "@lumen", "--version", "-2", "--db", "h.db",
           "--input", "in.tsv", code=0)
    before = ws.snapshot()
    for table in ("documents", "findings", "segments", "runs"):
        result = ws.run("history", "export", "--db", "h.db", "--table", table, "--out", f"{table}.csv", code=0)
        assert f"rows of {table} written to {table}.csv" in result.output
    documents = _read(ws.root / "documents.csv")
    assert documents[0]["doc_id"] == "'" + HOSTILE
    assert {r["engine"] for r in documents} == {"'@lumen"} and {r["version"] for r in documents} == {"'-2"}
    assert documents[0]["checked"] == "2"  # numbers stay numbers
    assert _read(ws.root / "findings.csv")[0]["doc_id"] == "'" + HOSTILE
    assert _read(ws.root / "segments.csv")[0]["doc_id"] == "'" + HOSTILE
    assert (ws.root / "documents.csv").read_bytes().count(b"\r\n") == len(documents) + 1  # RFC 4180 CRLF
    after = ws.snapshot()
    assert {k: v for k, v in after.items() if k in before} == before  # the store and inputs untouched


def test_review_csv_defuses_the_same_cells_through_the_same_writer(ws):
    rows = [(HOSTILE if d == "d1" else d, s, src, tgt) for d, s, src, tgt in ROWS]
    tsv(ws.root / "in.tsv", rows)
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    ws.run("review", "res.jsonl", "-i", "in.tsv", "-o", "r.html", "--csv", "f.csv", code=0)
    findings = _read(ws.root / "f.csv")
    assert findings and findings[0]["document"] == "'" + HOSTILE
