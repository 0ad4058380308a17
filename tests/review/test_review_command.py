"""`gendertrace review` on the command line: outputs, option errors, and a real run from XLIFF to notes."""

from __future__ import annotations

import csv
import io
import re

import pytest
from click.testing import CliRunner
from review_samples import TMX, XLIFF12, finding, result, write_jsonl

from gendertrace.cli import main


def run(*args: str):
    return CliRunner().invoke(main, ["review", *map(str, args)], catch_exceptions=False)


def test_review_is_a_command_of_the_main_cli():
    out = CliRunner().invoke(main, ["--help"])
    assert re.search(r"^\s+review\s", out.output, re.M)


def test_writes_the_report_and_the_csv(tsv_case, tmp_path):
    inp, res = tsv_case
    report, sheet = tmp_path / "r.html", tmp_path / "f.csv"
    out = run(res, "--input", inp, "--out", report, "--csv", sheet, "--bom")
    assert out.exit_code == 0, out.output
    assert f"report: {report} (2 documents, 3 findings)" in out.output
    assert f"csv: {sheet} (3 rows)" in out.output
    html = report.read_text(encoding="utf-8")
    assert html.count('class="fmark"') == 3
    assert sheet.read_bytes().startswith(b"\xef\xbb\xbf")


def test_bom_without_csv_is_a_usage_error(tsv_case, tmp_path):
    inp, res = tsv_case
    out = run(res, "--input", inp, "--out", tmp_path / "r.html", "--bom")
    assert out.exit_code == 2
    assert "--bom applies to the CSV output" in out.output


def test_xliff_out_needs_an_xliff_input(tsv_case, tmp_path):
    inp, res = tsv_case
    out = run(res, "--input", inp, "--out", tmp_path / "r.html", "--xliff-out", tmp_path / "x.xlf")
    assert out.exit_code == 2
    assert "is tsv, not XLIFF" in out.output


def test_bad_results_are_one_line_errors(tsv_case, tmp_path):
    inp, _ = tsv_case
    bad = tmp_path / "bad.jsonl"
    bad.write_text('{"doc_id": "brisa"}\n', encoding="utf-8")
    out = run(bad, "--input", inp, "--out", tmp_path / "r.html")
    assert out.exit_code == 1
    assert re.search(r"Error: .*bad\.jsonl:1: results object has no 'findings'", out.output)
    assert "Traceback" not in out.output


def test_results_of_another_input_are_warned_about(tsv_case, tmp_path):
    inp, _ = tsv_case
    res = write_jsonl(tmp_path / "other.jsonl", [result("elsewhere", [])])
    out = CliRunner().invoke(main, ["review", str(res), "--input", str(inp), "--out",
                                    str(tmp_path / "r.html")])
    assert out.exit_code == 0
    assert "1 document(s) of the results are not in" in out.output


def test_xliff_input_gets_notes_and_a_report(tmp_path):
    inp = tmp_path / "in.xlf"
    inp.write_text(XLIFF12, encoding="utf-8")
    res = write_jsonl(tmp_path / "res.jsonl", [result("harbour-note", [finding("t2", 0, 2, "He")]),
                                               result("ward-note", [finding("t1", 18, 21, "she")])])
    out = run(res, "--input", inp, "--out", tmp_path / "r.html", "--xliff-out", tmp_path / "out.xlf")
    assert out.exit_code == 0, out.output
    assert "(2 notes on 2 units)" in out.output
    assert (tmp_path / "out.xlf").read_text(encoding="utf-8").count('<note from="gendertrace"') == 2


def test_tmx_input_grouped_by_its_document_property(tmp_path):
    inp = tmp_path / "memory.tmx"
    inp.write_text(TMX, encoding="utf-8")
    res = write_jsonl(tmp_path / "res.jsonl", [result("depot", [finding("2", 0, 2, "He")])])
    report = tmp_path / "r.html"
    out = run(res, "--input", inp, "--out", report, "--tmx-group", "x-document")
    assert out.exit_code == 0, out.output
    assert "This document is not in the input" not in report.read_text(encoding="utf-8")
    assert re.search(r'data-finding-id="f1-1"[^>]*>He<span class="ftag"', report.read_text(encoding="utf-8"))


# The worked example of docs/design.md as an XLIFF 1.2 file: the source's feminine agreement ("cansada") against
# the target's "He". Names and places are invented.
WORKED = """<?xml version="1.0" encoding="UTF-8"?>
<xliff version="1.2" xmlns="urn:oasis:names:tc:xliff:document:1.2">
  <file original="landing" source-language="es" target-language="en" datatype="plaintext">
    <body>
      <trans-unit id="1">
        <source>La piloto <g id="1">Amaia Zubelzu</g> aterrizó en Orbeta.</source>
        <target>Pilot <g id="1">Amaia Zubelzu</g> landed in Orbeta.</target>
      </trans-unit>
      <trans-unit id="2">
        <source>Estaba cansada, pero sonrió.</source>
        <target>He was tired, but <x id="2"/>smiled.</target>
      </trans-unit>
      <trans-unit id="3">
        <source>Nadie la esperaba.</source>
      </trans-unit>
    </body>
  </file>
</xliff>
"""


@pytest.mark.slow
def test_score_then_review_an_xliff_file_end_to_end(tmp_path):
    inp = tmp_path / "landing.xlf"
    inp.write_text(WORKED, encoding="utf-8")
    res = tmp_path / "res.jsonl"
    scored = CliRunner().invoke(main, ["score", str(inp), "-s", "es", "-t", "en", "-o", str(res), "-q"])
    assert scored.exit_code == 0, scored.output
    out = run(res, "--input", inp, "--out", tmp_path / "r.html", "--xliff-out", tmp_path / "out.xlf",
              "--csv", tmp_path / "f.csv")
    assert out.exit_code == 0, out.output
    rows = list(csv.DictReader(io.StringIO((tmp_path / "f.csv").read_text(encoding="utf-8"), newline="")))
    assert ("2", "contradiction", "⟦He⟧ was tired, but smiled.") in [(r["segment"], r["kind"], r["target"])
                                                                      for r in rows]
    annotated = (tmp_path / "out.xlf").read_text(encoding="utf-8")
    assert annotated.count('<note from="gendertrace"') == len(rows)
    unit2 = re.search(r'<trans-unit id="2">.*?</trans-unit>', annotated, re.S).group(0)
    assert "contradiction" in unit2 and "'He'" in unit2
