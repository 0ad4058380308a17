"""No command writes over one of its inputs: the same path, `./` spellings, symbolic and hard links are all
refused with one line before anything is written, and the folder is left exactly as it was."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

REFUSED = "names an input"


@pytest.mark.parametrize("spelling", ["in.tsv", "./in.tsv", "sub/../in.tsv", "link.jsonl", "hard.jsonl"])
def test_score_refuses_an_output_that_is_its_input(ws, spelling):
    (ws.root / "sub").mkdir()
    os.symlink("in.tsv", ws.root / "link.jsonl")
    os.link(ws.root / "in.tsv", ws.root / "hard.jsonl")
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", spelling, code=1)
    shown = Path(spelling)  # as the user wrote it, short of a leading ./
    assert f"Error: {shown}: the output --out {REFUSED}, INPUT (in.tsv); nothing written" in result.output
    assert len(result.output.strip().splitlines()) == 1
    assert ws.snapshot() == before


@pytest.mark.parametrize("option, value, named", [
    ("-o", "src.conllu", "--src-conllu (src.conllu)"),
    ("-o", "tgt.conllu", "--tgt-conllu (tgt.conllu)"),
    ("--save-align-priors", "in.tsv", "INPUT (in.tsv)"),
])
def test_score_refuses_any_output_over_any_input(ws, option, value, named):
    extra = ["-o", "out.jsonl"] if option != "-o" else []
    before = ws.snapshot()
    result = ws.score("in.tsv", option, value, *extra, code=1)
    assert f"{REFUSED}, {named}" in result.output
    assert ws.snapshot() == before


def test_score_refuses_an_output_whose_sidecar_is_an_input(ws):
    # OUT.signature.json would be written over the input here.
    ws.copy("in.tsv", "x.signature.json")
    before = ws.snapshot()
    result = ws.score("x.signature.json", "--format", "tsv", "-o", "x", code=1)
    assert f"x.signature.json: the output signature {REFUSED}, INPUT (x.signature.json)" in result.output
    assert ws.snapshot() == before


@pytest.mark.parametrize("option, value, named", [
    ("--out", "res.jsonl", "--out names an input, RESULTS.jsonl (res.jsonl)"),
    ("--out", "res.jsonl.signature.json", "--out names an input, its signature"),
    ("--csv", "in.tsv", "--csv names an input, --input (in.tsv)"),
    ("--csv", "./res.jsonl", "--csv names an input, RESULTS.jsonl (res.jsonl)"),
])
def test_review_refuses_an_output_that_is_its_results_or_input(ws, option, value, named):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    before = ws.snapshot()
    args = ["--out", "r.html"] if option != "--out" else []
    result = ws.run("review", "res.jsonl", "-i", "in.tsv", option, value, *args, code=1)
    assert named in result.output
    assert ws.snapshot() == before


def test_review_refuses_to_write_the_annotated_xliff_over_the_input_xliff(ws):
    (ws.root / "in.xlf").write_text(
        '<?xml version="1.0" encoding="UTF-8"?>\n'
        '<xliff version="1.2" xmlns="urn:oasis:names:tc:xliff:document:1.2">\n'
        '<file original="d1" source-language="en" target-language="es" datatype="plaintext"><body>\n'
        '<trans-unit id="1"><source>Nerea Ubillos smiled.</source><target>Nerea Ubillos sonrió.</target>'
        '</trans-unit>\n'
        '<trans-unit id="2"><source>She was tired.</source><target>Él estaba cansado.</target></trans-unit>\n'
        '</body></file></xliff>\n', encoding="utf-8")
    ws.score("in.xlf", "-o", "resx.jsonl", code=0)
    before = ws.snapshot()
    result = ws.run("review", "resx.jsonl", "-i", "in.xlf", "-o", "r.html", "--xliff-out", "./in.xlf", code=1)
    assert f"--xliff-out {REFUSED}, --input (in.xlf)" in result.output
    assert ws.snapshot() == before


def test_review_writes_all_its_outputs_or_none(ws, monkeypatch):
    """A failure while writing the CSV leaves the earlier report in place (outputs are renamed together)."""
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    ws.run("review", "res.jsonl", "-i", "in.tsv", "-o", "r.html", code=0)
    before = ws.snapshot()

    def broken(documents, path, bom=False):
        path.write_text("half a spreadsheet", encoding="utf-8")
        raise OSError(28, "No space left on device", str(path))

    monkeypatch.setattr("gendertrace.review.csvout.write_csv", broken)  # imported when the command runs
    result = ws.run("review", "res.jsonl", "-i", "in.tsv", "-o", "r.html", "--csv", "f.csv", code=1)
    assert "No space left on device" in result.output
    assert ws.snapshot() == before  # no new r.html, no f.csv, no temporary file left


@pytest.mark.parametrize("command", [["history", "export"], ["history", "chart"]])
def test_history_outputs_refuse_the_store_itself(ws, command):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    ws.run("history", "record", "res.jsonl", "--engine", "lumen", "--version", "1", "--db", "h.db", code=0)
    before = ws.snapshot()
    result = ws.run(*command, "--db", "h.db", "--out", "./h.db", code=1)
    assert f"--out {REFUSED}, --db (h.db)" in result.output
    assert ws.snapshot() == before
    assert "lumen:1" in ws.run("history", "list", "--db", "h.db", code=0).output


def test_history_record_refuses_a_store_that_is_the_results(ws):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    before = ws.snapshot()
    result = ws.run("history", "record", "res.jsonl", "--engine", "e", "--version", "1", "--db", "res.jsonl",
                    code=1)
    assert f"--db {REFUSED}, RESULTS.jsonl (res.jsonl)" in result.output
    assert ws.snapshot() == before


def test_demo_refuses_to_write_into_its_corpus(ws):
    corpus = ws.root / "corpus"
    corpus.mkdir()
    ws.copy("in.tsv", "corpus/en-es.v1.tsv")
    before = ws.snapshot()
    result = ws.run("demo", "--out", "corpus", "--corpus", "corpus", code=1)
    assert f"corpus: the output --out {REFUSED}, --corpus (corpus)" in result.output
    assert ws.snapshot() == before


def test_bench_refuses_a_report_over_a_treebank(ws):
    (ws.root / "ud").mkdir()
    (ws.root / "ud" / "en_pud-news.conllu").write_text(ws.root.joinpath("src.conllu").read_text("utf-8"),
                                                         encoding="utf-8")
    before = ws.snapshot()
    result = ws.run("bench", "--data", "ud", "--report", "ud/en_pud-news.conllu", "--directions", "en-es",
                    code=1)
    assert f"--report {REFUSED}, a treebank of --data" in result.output
    assert ws.snapshot() == before
