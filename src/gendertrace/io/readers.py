"""Readers for the input contract: TSV, CSV or JSONL rows of doc_id, seg_id, source, target, [reference].

What the readers promise:

- The format comes from the extension (`.tsv`, `.csv`, `.jsonl` or `.ndjson`, any case) unless `fmt` names it.
  `.xlf`/`.xliff` and `.tmx` files are read by `gendertrace.io.xliff` and `gendertrace.io.tmx` (their
  docstrings say what those promise); a TMX file is one document unless `tmx_group` names a grouping property.
- TSV and CSV start with a header row; columns other than the five known ones are ignored, in any order.
  TSV cells are taken literally (no quoting), so a TSV cell cannot hold a tab or a line break; CSV follows the
  usual double-quote convention, so quoted cells may hold commas, quotes (doubled) and line breaks.
- JSONL holds one JSON object per non-blank line; unknown keys are ignored; `reference` may be absent or null.
- A UTF-8 byte order mark at the start of the file is accepted; LF and CRLF line endings are both accepted,
  and the line terminator is never part of a text.
- Texts are kept exactly as written (offsets into them are part of the output contract); `doc_id` and `seg_id`
  lose surrounding whitespace, so a stray space in a spreadsheet cell does not split a document.
- An empty `reference` cell means "no reference" (None).
- An empty or whitespace-only `target` is not an error: the segment is kept with its target as written, and
  `read_corpus_with_report` lists it in `ReadReport.untranslated` (streaming callers use `untranslated_in`).
- Every other problem raises `InputError(path, line, message)`, the message naming what was expected and the
  offending value.

Documents come out in order of first appearance. `read_corpus` gathers the rows of one `doc_id` even when they
are not consecutive; `iter_documents` streams and therefore needs the rows of each document to be consecutive.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import Document, Segment

FORMATS: tuple[str, ...] = ("tsv", "csv", "jsonl", "xliff", "tmx")
XML_FORMATS: tuple[str, ...] = ("xliff", "tmx")
EXTENSIONS = {".tsv": "tsv", ".csv": "csv", ".jsonl": "jsonl", ".ndjson": "jsonl",
              ".xlf": "xliff", ".xliff": "xliff", ".tmx": "tmx"}
FORMAT_ALIASES = {"tsv": "tsv", "csv": "csv", "jsonl": "jsonl", "ndjson": "jsonl",
                  "xliff": "xliff", "xlf": "xliff", "tmx": "tmx"}
REQUIRED_FIELDS: tuple[str, ...] = ("doc_id", "seg_id", "source", "target")
OPTIONAL_FIELDS: tuple[str, ...] = ("reference",)

_BOM = b"\xef\xbb\xbf"


@dataclass(frozen=True)
class SegmentRef:
    """Where a segment is: its document, its id and the input line it starts on."""

    doc_id: str
    seg_id: str
    line: int


@dataclass(frozen=True)
class ReadReport:
    """What a reader noticed that is not an error: untranslated segments, and how much it read."""

    path: str
    fmt: str
    documents: int
    segments: int
    untranslated: tuple[SegmentRef, ...] = ()


@dataclass(frozen=True)
class _Row:
    line: int
    doc_id: str
    segment: Segment


# ----------------------------------------------------------------------------------------------------
# Public API


def detect_format(path: str | Path, fmt: str | None = None) -> str:
    """The input format (one of FORMATS) named by `fmt`, else by the file's extension."""
    if fmt is not None:
        key = fmt.lower().lstrip(".")
        if key not in FORMAT_ALIASES:
            raise InputError(
                str(path), None,
                f"unknown input format {fmt!r}: expected one of tsv, csv, jsonl (or ndjson), xliff, tmx",
            )
        return FORMAT_ALIASES[key]
    suffix = Path(path).suffix.lower()
    if suffix not in EXTENSIONS:
        shown = suffix or "(none)"
        raise InputError(
            str(path),
            None,
            f"unknown input format: extension {shown!r} is none of "
            f".tsv, .csv, .jsonl, .ndjson, .xlf, .xliff, .tmx",
        )
    return EXTENSIONS[suffix]


def iter_documents(
    path: str | Path, fmt: str | None = None, tmx_group: str | None = None
) -> Iterator[Document]:
    """Yield the documents of a file one at a time, reading it lazily (XLIFF and TMX files are parsed whole).

    The rows of each document must be consecutive: a `doc_id` that comes back after another document raises
    InputError naming both lines (`read_corpus` gathers such rows instead).
    """
    path_s = str(path)
    if detect_format(path_s, fmt) in XML_FORMATS:
        yield from _xml_documents(path_s, detect_format(path_s, fmt), tmx_group)
        return
    done: dict[str, int] = {}  # doc_id -> first line, for documents already yielded
    for doc_id, first_line, rows in _runs(path_s, fmt):
        if doc_id in done:
            raise InputError(
                path_s,
                first_line,
                f"doc_id {doc_id!r} comes back after other documents (first seen at line {done[doc_id]}); "
                f"streaming needs the rows of one document to be consecutive",
            )
        done[doc_id] = first_line
        yield Document(doc_id, _checked_segments(path_s, doc_id, rows), origin=path_s)


def read_corpus(path: str | Path, fmt: str | None = None, tmx_group: str | None = None) -> list[Document]:
    """All documents of a file, in order of first appearance; rows sharing a `doc_id` are gathered."""
    return read_corpus_with_report(path, fmt, tmx_group)[0]


def read_corpus_with_report(
    path: str | Path, fmt: str | None = None, tmx_group: str | None = None
) -> tuple[list[Document], ReadReport]:
    """The documents of a file (as `read_corpus`) and a report listing its untranslated segments."""
    path_s = str(path)
    if detect_format(path_s, fmt) in XML_FORMATS:
        documents = _xml_documents(path_s, detect_format(path_s, fmt), tmx_group)
    else:
        gathered: dict[str, list[_Row]] = {}
        for doc_id, _, rows in _runs(path_s, fmt):
            gathered.setdefault(doc_id, []).extend(rows)
        documents = [
            Document(doc_id, _checked_segments(path_s, doc_id, rows), origin=path_s)
            for doc_id, rows in gathered.items()
        ]
    untranslated = tuple(ref for doc in documents for ref in untranslated_in(doc))
    report = ReadReport(
        path=path_s,
        fmt=detect_format(path_s, fmt),
        documents=len(documents),
        segments=sum(len(d.segments) for d in documents),
        untranslated=untranslated,
    )
    return documents, report


def is_untranslated(segment: Segment) -> bool:
    """True when the segment has no translation (an empty or whitespace-only target)."""
    return not segment.target.strip()


def untranslated_in(document: Document) -> list[SegmentRef]:
    """The segments of a document that have no translation, with the lines they came from."""
    return [SegmentRef(document.doc_id, s.seg_id, s.line) for s in document.segments if is_untranslated(s)]


# ----------------------------------------------------------------------------------------------------
# Grouping


def _xml_documents(path: str, kind: str, tmx_group: str | None) -> list[Document]:
    if kind == "xliff":
        from gendertrace.io.xliff import xliff_documents

        return xliff_documents(path)
    from gendertrace.io.tmx import tmx_documents

    return tmx_documents(path, group_by=tmx_group)


def _runs(path: str, fmt: str | None) -> Iterator[tuple[str, int, list[_Row]]]:
    """Runs of consecutive rows with one doc_id: (doc_id, first line, rows). Raises on an empty input."""
    kind = detect_format(path, fmt)
    rows = {"tsv": _tsv_rows, "csv": _csv_rows, "jsonl": _jsonl_rows}[kind](path)
    run: list[_Row] = []
    for row in rows:
        if run and row.doc_id != run[0].doc_id:
            yield run[0].doc_id, run[0].line, run
            run = []
        run.append(row)
    if not run:
        what = "no JSON records" if kind == "jsonl" else "no data rows after the header"
        raise InputError(path, None, f"{what}: expected at least one segment")
    yield run[0].doc_id, run[0].line, run


def _checked_segments(path: str, doc_id: str, rows: list[_Row]) -> tuple[Segment, ...]:
    seen: dict[str, int] = {}
    for row in rows:
        sid = row.segment.seg_id
        if sid in seen:
            raise InputError(
                path,
                row.line,
                f"seg_id {sid!r} repeated in document {doc_id!r} (lines {seen[sid]} and {row.line}); "
                f"expected each seg_id once per document",
            )
        seen[sid] = row.line
    return tuple(r.segment for r in rows)


def _make_row(path: str, line: int, values: dict[str, str | None]) -> _Row:
    doc_id = (values["doc_id"] or "").strip()
    seg_id = (values["seg_id"] or "").strip()
    for key, value in (("doc_id", doc_id), ("seg_id", seg_id)):
        if not value:
            raise InputError(path, line, f"empty {key} {values[key]!r}: expected a non-empty identifier")
    reference = values.get("reference")
    segment = Segment(
        seg_id=seg_id,
        source=values["source"] or "",
        target=values["target"] or "",
        reference=reference if reference else None,
        line=line,
    )
    return _Row(line, doc_id, segment)


# ----------------------------------------------------------------------------------------------------
# Lines, with the encoding checked line by line so that an error names its line


def _lines(path: str) -> Iterator[tuple[int, str]]:
    """(line number, decoded line with its terminator) for each physical line; a leading BOM is dropped."""
    try:
        handle = open(path, "rb")
    except OSError as exc:
        raise InputError(path, None, f"cannot open: {exc.strerror}") from exc
    with handle:
        # A newline byte never occurs inside a multibyte UTF-8 sequence, so decoding line by line is exact.
        for lineno, raw in enumerate(handle, 1):
            if lineno == 1 and raw.startswith(_BOM):
                raw = raw[len(_BOM) :]
            try:
                yield lineno, raw.decode("utf-8")
            except UnicodeDecodeError as exc:
                bad = raw[exc.start : exc.start + 1]
                raise InputError(
                    path,
                    lineno,
                    f"not valid UTF-8: byte 0x{bad.hex()} at column {exc.start + 1} ({exc.reason}); "
                    f"expected UTF-8 text",
                ) from exc


def _strip_eol(text: str) -> str:
    if text.endswith("\n"):
        text = text[:-1]
    if text.endswith("\r"):
        text = text[:-1]
    return text


def _header_columns(path: str, line: int, names: list[str], sep_name: str) -> dict[str, int]:
    """Column index of each known field; raises on a missing required column or a repeated known column."""
    cleaned = [n.strip() for n in names]
    index: dict[str, int] = {}
    for k, name in enumerate(cleaned):
        if name in REQUIRED_FIELDS + OPTIONAL_FIELDS:
            if name in index:
                raise InputError(path, line, f"column {name!r} appears twice in the header ({sep_name})")
            index[name] = k
    for name in REQUIRED_FIELDS:
        if name not in index:
            found = ", ".join(repr(n) for n in cleaned) or "none"
            raise InputError(
                path,
                line,
                f"missing required column {name!r} in the header ({sep_name}); columns found: {found}; "
                f"expected {', '.join(REQUIRED_FIELDS)}",
            )
    return index


def _table_rows(path: str, records: Iterable[tuple[int, list[str]]], sep_name: str) -> Iterator[_Row]:
    """Rows of a table whose first record is the header."""
    index: dict[str, int] | None = None
    width = 0
    for line, cells in records:
        if index is None:
            index = _header_columns(path, line, cells, sep_name)
            width = len(cells)
            continue
        if len(cells) != width:
            raise InputError(
                path, line, f"expected {width} {sep_name} cells as in the header, found {len(cells)}"
            )
        values: dict[str, str | None] = {name: cells[k] for name, k in index.items()}
        yield _make_row(path, line, values)
    if index is None:
        raise InputError(path, None, f"empty file: expected a header row naming {', '.join(REQUIRED_FIELDS)}")


def _tsv_rows(path: str) -> Iterator[_Row]:
    def records() -> Iterator[tuple[int, list[str]]]:
        for lineno, text in _lines(path):
            body = _strip_eol(text)
            if body:  # blank lines (a trailing one, say) carry no row
                yield lineno, body.split("\t")

    return _table_rows(path, records(), "tab-separated")


def _csv_rows(path: str) -> Iterator[_Row]:
    def records() -> Iterator[tuple[int, list[str]]]:
        lines = _lines(path)
        reader = csv.reader((text for _, text in lines), strict=True)
        consumed = 0
        while True:
            start = consumed + 1
            try:
                cells = next(reader)
            except StopIteration:
                return
            except csv.Error as exc:
                raise InputError(
                    path, start, f"malformed CSV record ({exc}); expected RFC 4180 double-quoted cells"
                ) from exc
            consumed = reader.line_num
            if cells:  # a blank line reads as an empty record
                yield start, cells

    return _table_rows(path, records(), "comma-separated")


def _jsonl_rows(path: str) -> Iterator[_Row]:
    for lineno, text in _lines(path):
        if not text.strip():
            continue
        try:
            obj = json.loads(text)
        except json.JSONDecodeError as exc:
            snippet = _strip_eol(text)
            snippet = snippet if len(snippet) <= 60 else snippet[:57] + "..."
            raise InputError(
                path, lineno, f"malformed JSON ({exc.msg} at column {exc.colno}): {snippet!r}"
            ) from exc
        if not isinstance(obj, dict):
            raise InputError(
                path, lineno, f"expected a JSON object per line, found {_json_type(obj)} {_short(obj)}"
            )
        values: dict[str, str | None] = {}
        for key in REQUIRED_FIELDS:
            if key not in obj:
                found = ", ".join(repr(k) for k in obj) or "none"
                raise InputError(path, lineno, f"missing key {key!r}; keys found: {found}")
            if obj[key] is None:
                hint = ' (an untranslated segment has "target": "")' if key == "target" else ""
                raise InputError(path, lineno, f"key {key!r} is null: expected a string{hint}")
            if not isinstance(obj[key], str):
                raise InputError(
                    path,
                    lineno,
                    f"key {key!r} must be a string, found {_json_type(obj[key])} {_short(obj[key])}",
                )
            values[key] = obj[key]
        ref = obj.get("reference")
        if ref is not None and not isinstance(ref, str):
            raise InputError(
                path,
                lineno,
                f"key 'reference' must be a string or null, found {_json_type(ref)} {_short(ref)}",
            )
        values["reference"] = ref
        yield _make_row(path, lineno, values)


def _json_type(value: object) -> str:
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, (int, float)):
        return "number"
    if isinstance(value, list):
        return "array"
    if isinstance(value, dict):
        return "object"
    if value is None:
        return "null"
    return "string"


def _short(value: object) -> str:
    text = json.dumps(value, ensure_ascii=False)
    return text if len(text) <= 40 else text[:37] + "..."
