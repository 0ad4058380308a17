"""Specification of the input readers: TSV, CSV and JSONL document sets, and every way an input can be bad."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from gendertrace.errors import InputError
from gendertrace.io import (
    ReadReport,
    SegmentRef,
    detect_format,
    is_untranslated,
    iter_documents,
    read_corpus,
    read_corpus_with_report,
)
from gendertrace.model import Document, Segment

HEADER = "doc_id\tseg_id\tsource\ttarget\n"


def write(tmp_path: Path, name: str, content: str | bytes) -> Path:
    path = tmp_path / name
    path.write_bytes(content.encode("utf-8") if isinstance(content, str) else content)
    return path


def jsonl(*records: object) -> str:
    return "".join(json.dumps(r, ensure_ascii=False) + "\n" for r in records)


def rec(doc: str, seg: str, source: str = "s", target: str = "t", **extra: object) -> dict:
    return {"doc_id": doc, "seg_id": seg, "source": source, "target": target, **extra}


def error_of(path: Path, fmt: str | None = None) -> InputError:
    with pytest.raises(InputError) as info:
        read_corpus(path, fmt)
    return info.value


# ----------------------------------------------------------------------------------------------------
# Each format


def test_tsv_gives_documents_in_order_with_their_segments(tmp_path):
    path = write(
        tmp_path,
        "set.tsv",
        "doc_id\tseg_id\tsource\ttarget\treference\n"
        "a\t1\tLa jueza habló.\tThe judge spoke.\tThe judge spoke.\n"
        "a\t2\tEstaba tranquila.\tShe was calm.\t\n"
        "b\t1\tEl panadero cantó.\tThe baker sang.\tThe baker sang.\n",
    )
    docs = read_corpus(path)
    assert [d.doc_id for d in docs] == ["a", "b"]
    assert docs[0] == Document(
        "a",
        (
            Segment("1", "La jueza habló.", "The judge spoke.", "The judge spoke.", line=2),
            Segment("2", "Estaba tranquila.", "She was calm.", None, line=3),  # empty reference cell: none
        ),
        origin=str(path),
    )
    assert docs[1].segments[0].line == 4


def test_tsv_ignores_extra_columns_in_any_order(tmp_path):
    path = write(
        tmp_path,
        "set.tsv",
        "engine\ttarget\tnote\tsource\tseg_id\tdoc_id\nv2\tShe left.\tx\tSe fue.\t7\td\n",
    )
    (doc,) = read_corpus(path)
    assert doc.doc_id == "d"
    assert doc.segments[0] == Segment("7", "Se fue.", "She left.", None, line=2)


def test_tsv_cells_are_taken_literally_quotes_included(tmp_path):
    # TSV has no quoting convention: a quote at the start of a cell is text (common practice, no source).
    path = write(tmp_path, "set.tsv", HEADER + 'd\t1\t"Hola", dijo.\t"Hi," she said.\n')
    seg = read_corpus(path)[0].segments[0]
    assert seg.source == '"Hola", dijo.'
    assert seg.target == '"Hi," she said.'


def test_csv_reads_quoted_cells_with_commas_quotes_and_newlines(tmp_path):
    path = write(
        tmp_path,
        "set.csv",
        "doc_id,seg_id,source,target\n"
        'd,1,"Llegó, por fin, la doctora.","The doctor arrived, at last."\n'
        'd,2,"Dijo ""basta"".\nY se fue.","She said ""enough"".\nAnd left."\n'
        "d,3,Sonrió.,She smiled.\n",
    )
    segs = read_corpus(path)[0].segments
    assert segs[0].source == "Llegó, por fin, la doctora."
    assert segs[0].target == "The doctor arrived, at last."
    assert segs[1].source == 'Dijo "basta".\nY se fue.'
    assert segs[1].target == 'She said "enough".\nAnd left.'
    # Record 2 holds two line breaks (lines 3 to 5), so record 3 starts on physical line 6.
    assert [s.line for s in segs] == [2, 3, 6]


def test_jsonl_reads_objects_ignoring_unknown_keys_and_blank_lines(tmp_path):
    path = write(
        tmp_path,
        "set.jsonl",
        jsonl(rec("d", "1", "Une actrice.", "An actress.", reference=None, engine="v3"))
        + "\n"
        + jsonl(rec("d", "2", "Elle rit.", "She laughs.", reference="She laughs.")),
    )
    (doc,) = read_corpus(path)
    assert doc.segments == (
        Segment("1", "Une actrice.", "An actress.", None, line=1),
        Segment("2", "Elle rit.", "She laughs.", "She laughs.", line=3),
    )


def test_ndjson_extension_reads_as_jsonl(tmp_path):
    path = write(tmp_path, "set.ndjson", jsonl(rec("d", "1")))
    assert read_corpus(path)[0].segments[0].seg_id == "1"


def test_extension_is_case_insensitive_and_fmt_overrides_it(tmp_path):
    assert detect_format("x.TSV") == "tsv"
    assert detect_format("x.Csv") == "csv"
    assert detect_format("x.txt", "ndjson") == "jsonl"
    path = write(tmp_path, "set.txt", HEADER + "d\t1\ts\tt\n")
    assert read_corpus(path, fmt="tsv")[0].doc_id == "d"


def test_identifiers_lose_surrounding_whitespace_texts_do_not(tmp_path):
    path = write(tmp_path, "set.tsv", HEADER + " d \t 1\t  dos espacios \tt \n")
    (doc,) = read_corpus(path)
    assert doc.doc_id == "d"
    assert doc.segments[0].seg_id == "1"
    assert doc.segments[0].source == "  dos espacios "
    assert doc.segments[0].target == "t "


# ----------------------------------------------------------------------------------------------------
# Encodings and line endings


@pytest.mark.parametrize(
    "name, content",
    [
        ("set.tsv", HEADER + "d\t1\ts\tt\n"),
        ("set.csv", "doc_id,seg_id,source,target\nd,1,s,t\n"),
        ("set.jsonl", jsonl(rec("d", "1"))),
    ],
)
def test_utf8_bom_at_start_is_accepted(tmp_path, name, content):
    path = write(tmp_path, name, b"\xef\xbb\xbf" + content.encode("utf-8"))
    (doc,) = read_corpus(path)
    assert doc.doc_id == "d"  # not "\ufeffd", and the first header column is still doc_id
    assert doc.segments[0].target == "t"


@pytest.mark.parametrize(
    "name, content",
    [
        ("set.tsv", "doc_id\tseg_id\tsource\ttarget\r\nd\t1\tLa reina.\tThe queen.\r\nd\t2\tx\ty\r\n"),
        ("set.csv", "doc_id,seg_id,source,target\r\nd,1,La reina.,The queen.\r\nd,2,x,y\r\n"),
        ("set.jsonl", jsonl(rec("d", "1", "La reina.", "The queen.")).replace("\n", "\r\n")),
    ],
)
def test_crlf_line_endings_are_not_part_of_the_text(tmp_path, name, content):
    (doc,) = read_corpus(write(tmp_path, name, content))
    assert doc.segments[0].source == "La reina."
    assert doc.segments[0].target == "The queen."
    assert all("\r" not in s.target for s in doc.segments)


def test_csv_keeps_a_line_break_inside_a_quoted_cell_with_crlf_endings(tmp_path):
    path = write(tmp_path, "set.csv", 'doc_id,seg_id,source,target\r\nd,1,"uno\r\ndos",t\r\nd,2,x,y\r\n')
    segs = read_corpus(path)[0].segments
    assert segs[0].source == "uno\r\ndos"
    assert segs[1].line == 4


@pytest.mark.parametrize("name", ["bad.tsv", "bad.csv", "bad.jsonl"])
def test_invalid_utf8_names_file_line_and_byte(tmp_path, name):
    good = {
        "bad.tsv": HEADER + "d\t1\ts\tt\n",
        "bad.csv": "doc_id,seg_id,source,target\nd,1,s,t\n",
        "bad.jsonl": jsonl(rec("d", "1")) + jsonl(rec("d", "0")),
    }[name].encode()
    bad_line = b"d\t2\tcaf\xe9\tt\n" if name == "bad.tsv" else b"d,2,caf\xe9,t\n"
    if name == "bad.jsonl":
        bad_line = b'{"doc_id": "d", "seg_id": "2", "source": "caf\xe9", "target": "t"}\n'
    err = error_of(write(tmp_path, name, good + bad_line))
    assert f"{name}:3:" in str(err)  # the bad byte is on line 3 of each file
    assert err.line == 3
    assert "0xe9" in str(err)
    assert "UTF-8" in str(err)


# ----------------------------------------------------------------------------------------------------
# Header and format errors


@pytest.mark.parametrize(
    "name, header",
    [
        ("set.tsv", "doc_id\tseg_id\tsource\ttranslation\n"),
        ("set.csv", "doc_id,seg_id,source,translation\n"),
    ],
)
def test_missing_required_column_is_named_with_the_columns_found(tmp_path, name, header):
    err = error_of(write(tmp_path, name, header))
    assert f"{name}:1:" in str(err)
    assert "'target'" in str(err)
    assert "'doc_id', 'seg_id', 'source', 'translation'" in str(err)


def test_repeated_known_column_in_header_is_an_error(tmp_path):
    err = error_of(write(tmp_path, "set.tsv", "doc_id\tseg_id\tsource\ttarget\tsource\n"))
    assert "set.tsv:1:" in str(err)
    assert "'source'" in str(err)


def test_unknown_extension_is_named(tmp_path):
    err = error_of(write(tmp_path, "set.xlsx", "whatever"))
    assert "set.xlsx" in str(err)
    assert "'.xlsx'" in str(err)
    assert ".tsv" in str(err)  # says what was expected


def test_unknown_format_name_is_named(tmp_path):
    err = error_of(write(tmp_path, "set.tsv", HEADER), fmt="xml")
    assert "set.tsv" in str(err)
    assert "'xml'" in str(err)


def test_missing_file_is_an_input_error(tmp_path):
    err = error_of(tmp_path / "absent.tsv")
    assert "absent.tsv" in str(err)


def test_tsv_row_with_wrong_cell_count_names_both_counts(tmp_path):
    err = error_of(write(tmp_path, "set.tsv", HEADER + "d\t1\ts\tt\n" + "d\t2\ts\tt\tstray\n"))
    assert "set.tsv:3:" in str(err)
    assert "expected 4" in str(err)
    assert "found 5" in str(err)


def test_csv_with_broken_quoting_names_the_record_line(tmp_path):
    err = error_of(write(tmp_path, "set.csv", 'doc_id,seg_id,source,target\nd,1,s,t\nd,2,"ab"c,t\n'))
    assert "set.csv:3:" in str(err)
    assert "CSV" in str(err)


def test_csv_with_an_unclosed_quote_names_the_line_where_it_opens(tmp_path):
    err = error_of(write(tmp_path, "set.csv", 'doc_id,seg_id,source,target\nd,1,s,t\nd,2,"open,t\nmore\n'))
    assert "set.csv:3:" in str(err)


# ----------------------------------------------------------------------------------------------------
# JSONL record errors


def test_malformed_json_line_names_line_and_json_error(tmp_path):
    path = write(tmp_path, "set.jsonl", jsonl(rec("d", "1")) + '{"doc_id": "d", "seg_id": "2",, }\n')
    err = error_of(path)
    assert "set.jsonl:2:" in str(err)
    assert "Expecting" in str(err)  # json's own description of the error
    assert '"seg_id": "2",,' in str(err)  # the offending text


def test_json_line_that_is_not_an_object_names_what_it_is(tmp_path):
    err = error_of(write(tmp_path, "set.jsonl", jsonl(rec("d", "1")) + '["d", "2", "s", "t"]\n'))
    assert "set.jsonl:2:" in str(err)
    assert "array" in str(err)
    assert '["d", "2"' in str(err)


def test_json_record_missing_a_key_names_it_and_the_keys_found(tmp_path):
    err = error_of(write(tmp_path, "set.jsonl", '{"doc_id": "d", "seg_id": "1", "source": "s"}\n'))
    assert "set.jsonl:1:" in str(err)
    assert "'target'" in str(err)
    assert "'doc_id', 'seg_id', 'source'" in str(err)


def test_json_record_with_a_non_string_key_names_key_and_value(tmp_path):
    err = error_of(write(tmp_path, "set.jsonl", jsonl(rec("d", "1"), {**rec("d", "x"), "seg_id": 17})))
    assert "set.jsonl:2:" in str(err)
    assert "'seg_id'" in str(err)
    assert "number 17" in str(err)


def test_json_reference_must_be_string_or_null(tmp_path):
    err = error_of(write(tmp_path, "set.jsonl", jsonl(rec("d", "1", reference=["x"]))))
    assert "set.jsonl:1:" in str(err)
    assert "'reference'" in str(err)
    assert '["x"]' in str(err)


# ----------------------------------------------------------------------------------------------------
# Identifier errors


@pytest.mark.parametrize(
    "name, content, key",
    [
        ("set.tsv", HEADER + "d\t1\ts\tt\n\t2\ts\tt\n", "doc_id"),
        ("set.csv", "doc_id,seg_id,source,target\nd,1,s,t\nd,  ,s,t\n", "seg_id"),
        ("set.jsonl", jsonl(rec("d", "1"), rec("d", "")), "seg_id"),
    ],
)
def test_empty_identifier_names_the_key_and_line(tmp_path, name, content, key):
    err = error_of(write(tmp_path, name, content))
    expected_line = 3 if name != "set.jsonl" else 2
    assert f"{name}:{expected_line}:" in str(err)
    assert f"empty {key}" in str(err)


def test_repeated_seg_id_in_a_document_names_both_lines(tmp_path):
    err = error_of(write(tmp_path, "set.tsv", HEADER + "d\t1\ts\tt\nd\t2\ts\tt\nd\t1\ts\tt\n"))
    assert "set.tsv:4:" in str(err)
    assert "'1'" in str(err)
    assert "lines 2 and 4" in str(err)


def test_repeated_seg_id_across_non_consecutive_rows_is_caught(tmp_path):
    path = write(tmp_path, "set.jsonl", jsonl(rec("d", "1"), rec("e", "1"), rec("d", "1")))
    err = error_of(path)
    assert "set.jsonl:3:" in str(err)
    assert "lines 1 and 3" in str(err)


def test_same_seg_id_in_two_documents_is_fine(tmp_path):
    docs = read_corpus(write(tmp_path, "set.tsv", HEADER + "d\t1\ts\tt\ne\t1\ts\tt\n"))
    assert [(d.doc_id, d.segments[0].seg_id) for d in docs] == [("d", "1"), ("e", "1")]


# ----------------------------------------------------------------------------------------------------
# Empty inputs


@pytest.mark.parametrize(
    "name, says",
    [("empty.tsv", "empty file"), ("empty.csv", "empty file"), ("empty.jsonl", "no JSON records")],
)
def test_empty_file_is_an_error_naming_the_file(tmp_path, name, says):
    err = error_of(write(tmp_path, name, b""))
    assert name in str(err)
    assert says in str(err)


@pytest.mark.parametrize(
    "name, content", [("head.tsv", HEADER), ("head.csv", "doc_id,seg_id,source,target\n\n")]
)
def test_header_without_rows_is_an_error(tmp_path, name, content):
    err = error_of(write(tmp_path, name, content))
    assert name in str(err)
    assert "no data rows" in str(err)


def test_jsonl_of_blank_lines_is_an_error(tmp_path):
    err = error_of(write(tmp_path, "blank.jsonl", "\n  \n\n"))
    assert "blank.jsonl" in str(err)
    assert "no JSON records" in str(err)


# ----------------------------------------------------------------------------------------------------
# Grouping and streaming


NON_CONSECUTIVE = HEADER + "a\t1\ts1\tt1\nb\t1\ts2\tt2\na\t2\ts3\tt3\nc\t1\ts4\tt4\n"


def test_non_consecutive_rows_of_one_document_are_gathered(tmp_path):
    docs = read_corpus(write(tmp_path, "set.tsv", NON_CONSECUTIVE))
    assert [d.doc_id for d in docs] == ["a", "b", "c"]  # order of first appearance
    assert [(s.seg_id, s.source, s.line) for s in docs[0].segments] == [("1", "s1", 2), ("2", "s3", 4)]


def test_streaming_names_a_document_that_comes_back(tmp_path):
    stream = iter_documents(write(tmp_path, "set.tsv", NON_CONSECUTIVE))
    assert next(stream).doc_id == "a"
    assert next(stream).doc_id == "b"
    with pytest.raises(InputError) as info:
        next(stream)
    assert "set.tsv:4:" in str(info.value)
    assert "'a'" in str(info.value)
    assert "line 2" in str(info.value)


def test_streaming_yields_a_document_before_reading_the_rest(tmp_path):
    # The second row of the second document holds an undecodable byte: the first document still comes out
    # (it is complete once the first row of the next one has been read).
    path = write(
        tmp_path, "set.tsv", (HEADER + "a\t1\ts\tt\na\t2\ts\tt\nb\t1\ts\tt\n").encode() + b"b\t2\t\xff\tt\n"
    )
    stream = iter_documents(path)
    first = next(stream)
    assert [s.seg_id for s in first.segments] == ["1", "2"]
    with pytest.raises(InputError) as info:
        next(stream)
    assert info.value.line == 5


def test_streaming_and_list_agree_on_consecutive_input(tmp_path):
    path = write(tmp_path, "set.jsonl", jsonl(rec("a", "1"), rec("a", "2"), rec("b", "1")))
    assert list(iter_documents(path)) == read_corpus(path)


# ----------------------------------------------------------------------------------------------------
# Untranslated segments


def test_empty_target_is_kept_and_reported_as_untranslated(tmp_path):
    path = write(
        tmp_path,
        "set.csv",
        'doc_id,seg_id,source,target\nd,1,Ella llegó.,She arrived.\nd,2,Ella se fue.,\ne,1,Hola.,"  "\n',
    )
    docs, report = read_corpus_with_report(path)
    assert docs[0].segments[1] == Segment("2", "Ella se fue.", "", None, line=3)
    assert docs[1].segments[0].target == "  "  # kept as written
    assert report == ReadReport(
        path=str(path),
        fmt="csv",
        documents=2,
        segments=3,
        untranslated=(SegmentRef("d", "2", 3), SegmentRef("e", "1", 4)),
    )


def test_is_untranslated_means_empty_or_blank_target():
    assert is_untranslated(Segment("1", "Hola.", ""))
    assert is_untranslated(Segment("1", "Hola.", " \t"))
    assert not is_untranslated(Segment("1", "Hola.", "Hi."))


def test_jsonl_empty_target_is_not_an_error(tmp_path):
    docs, report = read_corpus_with_report(write(tmp_path, "set.jsonl", jsonl(rec("d", "1", "Hola.", ""))))
    assert docs[0].segments[0].target == ""
    assert report.untranslated == (SegmentRef("d", "1", 1),)
