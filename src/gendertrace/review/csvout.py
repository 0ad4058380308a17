"""Findings as a spreadsheet: one CSV row per finding.

Columns (in this order): finding, document, segment, kind, target (the segment's target with the flagged words
between ⟦ and ⟧), flagged, start, end, expected, found, confidence, person, message, evidence (each item as
'text' (side, segment N, kind, gender), separated by "; ").

UTF-8 throughout, rows ended by CRLF and cells quoted when needed (RFC 4180); `bom=True` starts the file
with a UTF-8 byte order mark so that spreadsheet programs recognise the encoding. Because the texts come from
untrusted input, a text cell that starts with =, +, -, @, a tab or a carriage return gets a leading
apostrophe, so that a spreadsheet program shows it instead of evaluating it as a formula.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from gendertrace.io.csvwrite import write_csv_rows
from gendertrace.review.results import ReviewDocument, ReviewFinding

COLUMNS: tuple[str, ...] = (
    "finding", "document", "segment", "kind", "target", "flagged", "start", "end", "expected", "found",
    "confidence", "person", "message", "evidence",
)
OPEN_MARK, CLOSE_MARK = "⟦", "⟧"
_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def marked_target(target: str, f: ReviewFinding) -> str:
    """The target with the finding's words marked; the flagged text alone when the target does not hold it."""
    if target[f.start : f.end] != f.text:
        return f"{OPEN_MARK}{f.text}{CLOSE_MARK}"
    return f"{target[: f.start]}{OPEN_MARK}{target[f.start : f.end]}{CLOSE_MARK}{target[f.end :]}"


def _cell(text: str) -> str:
    return "'" + text if text.startswith(_FORMULA_STARTS) else text


def finding_rows(documents: Sequence[ReviewDocument]) -> list[list[str]]:
    rows = []
    for d in documents:
        for f in d.findings:
            seg = d.segment(f.seg_id)
            person = f"{f.entity_label} ({f.entity})" if f.entity_label else f.entity
            target = marked_target(seg.target if seg else "", f)
            rows.append([
                f.id, _cell(d.doc_id), _cell(f.seg_id), f.kind, _cell(target), _cell(f.text), str(f.start),
                str(f.end), f.expected or "", f.found or "", f"{f.confidence:.3f}", _cell(person),
                _cell(f.message), _cell(f.evidence_summary()),
            ])
    return rows


def write_csv(documents: Sequence[ReviewDocument], path: str | Path, bom: bool = False) -> int:
    """Write the findings of `documents` to `path`; returns the number of rows written (header excluded)."""
    return write_csv_rows(path, COLUMNS, finding_rows(documents), bom=bom)
