"""The findings spreadsheet: one row per finding, flagged words marked, UTF-8 with an optional BOM."""

from __future__ import annotations

import csv
import io

from review_samples import TSV_ROWS, finding, result, tsv_results, write_jsonl, write_tsv

from gendertrace.io.readers import read_corpus
from gendertrace.review.csvout import COLUMNS, write_csv
from gendertrace.review.results import load_review


def documents(tmp_path, rows=TSV_ROWS, results=None):
    inp = write_tsv(tmp_path / "in.tsv", rows)
    res = write_jsonl(tmp_path / "res.jsonl", tsv_results() if results is None else results)
    return load_review(res, read_corpus(inp))


def read_rows(path, encoding="utf-8"):
    return list(csv.DictReader(io.StringIO(path.read_text(encoding=encoding), newline="")))


def test_one_row_per_finding_with_the_flagged_words_marked(tmp_path):
    out = tmp_path / "f.csv"
    assert write_csv(documents(tmp_path), out) == 3
    rows = read_rows(out)
    assert [r["finding"] for r in rows] == ["f1-1", "f1-2", "f1-3"]
    first = rows[0]
    assert first["document"] == "brisa" and first["segment"] == "2" and first["kind"] == "contradiction"
    assert first["target"] == "⟦He⟧ was tired, but smiled."
    assert (first["flagged"], first["start"], first["end"]) == ("He", "0", "2")
    assert (first["expected"], first["found"], first["confidence"]) == ("fem", "masc", "0.800")
    assert first["person"] == "Ilune Garaikoa (E1)"
    assert first["evidence"] == "'La' (source, segment 1, morphology, fem); 'cansada' (source, segment 2, " \
                                "agreement, fem)"
    # Two findings in one segment: each row marks only its own words.
    assert rows[1]["target"] == "The doctor arrived late; ⟦he⟧ apologised and she left."
    assert rows[2]["target"] == "The doctor arrived late; he apologised and ⟦she⟧ left."
    assert rows[1]["expected"] == "" and rows[1]["evidence"] == ""


def test_header_names_the_columns_and_rows_end_with_crlf(tmp_path):
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path), out)
    raw = out.read_bytes()
    assert raw.startswith(",".join(COLUMNS).encode() + b"\r\n")  # RFC 4180, section 2: CRLF line breaks
    assert not raw.startswith(b"\xef\xbb\xbf")


def test_bom_option_starts_the_file_with_the_utf8_byte_order_mark(tmp_path):
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path), out, bom=True)
    raw = out.read_bytes()
    # EF BB BF is U+FEFF encoded in UTF-8 (The Unicode Standard, "Byte Order Mark"; from memory).
    assert raw.startswith(b"\xef\xbb\xbffinding,")
    assert read_rows(out, encoding="utf-8-sig")[0]["target"] == "⟦He⟧ was tired, but smiled."


def test_cells_that_a_spreadsheet_would_evaluate_are_neutralised(tmp_path):
    rows = [("d", "1", "La jueza habló.", '=HYPERLINK("x") he said.'),
            ("d", "2", "Ella rió.", "-He laughed.")]
    at = rows[0][3].index(" he ") + 1
    results = [result("d", [finding("1", at, at + 2, "he"), finding("2", 1, 3, "He")], labels={"E1": "+1 for him"})]
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path, rows, results), out)
    got = read_rows(out)
    assert got[0]["target"] == "'=HYPERLINK(\"x\") ⟦he⟧ said."
    assert got[0]["person"] == "'+1 for him (E1)"
    assert got[1]["target"] == "'-⟦He⟧ laughed."
    assert got[1]["flagged"] == "He"


def test_multiline_and_quoted_text_survives_the_round_trip(tmp_path):
    rows = [("d", "1", "La jueza habló.", 'She said "no", then he left')]
    at = rows[0][3].index(" he ") + 1
    results = [result("d", [finding("1", at, at + 2, "he")], labels={"E1": 'line one\nline "two", three'})]
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path, rows, results), out)
    (got,) = read_rows(out)
    assert got["target"] == 'She said "no", then ⟦he⟧ left'
    assert got["person"] == 'line one\nline "two", three (E1)'


def test_finding_the_input_does_not_hold_is_marked_alone(tmp_path):
    results = [result("brisa", [finding("9", 0, 2, "He")])]
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path, results=results), out)
    assert read_rows(out)[0]["target"] == "⟦He⟧"


def test_the_csv_carries_the_suggested_form_and_empty_decision_columns(tmp_path):
    out = tmp_path / "f.csv"
    write_csv(documents(tmp_path), out)
    rows = read_rows(out)
    assert list(rows[0])[-2:] == ["decision", "comment"]
    # English "He" for a person the source makes feminine is "She" (a reference grammar of English, from memory);
    # an assumption or an inconsistency has no expected gender, so no suggestion.
    assert [(r["kind"], r["suggestion"]) for r in rows] == [("contradiction", "She"), ("assumption", ""),
                                                            ("inconsistency", "")]
    assert all(r["decision"] == r["comment"] == "" for r in rows)
