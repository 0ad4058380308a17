"""The post-editor's decisions on findings, read back from the report's export or from the findings CSV.

The decisions file (written by the report's "Export decisions" button) is JSON:
{"format": "gendertrace-decisions", "version": 1, "results": NAME, "exported_at": ISO time,
 "decisions": [{"finding", "document", "segment", "start", "end", "text", "kind", "decision", "comment",
 "decided_at"}]}
where "finding" is the id the report, the CSV and the XLIFF notes share and decision is accept, reject or ""
(a comment alone). The CSV of `gendertrace review --csv` gives the same through its finding, document, segment,
start, end, flagged, decision and comment columns. A decision is matched to a finding by its id and checked
against the finding's place and words, so decisions made on another run's report are refused, not misapplied.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError

FORMAT = "gendertrace-decisions"
VERDICTS = ("accept", "reject", "")
_FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


@dataclass(frozen=True)
class Decision:
    finding: str
    document: str
    segment: str
    start: int
    end: int
    text: str
    decision: str  # accept, reject, or "" for a comment alone
    comment: str = ""
    decided_at: str = ""


class DecisionsError(InputError):
    """A decisions file that cannot be read or does not fit the run."""


def read_decisions(path: str | Path) -> list[Decision]:
    """The decisions of an exported decisions file (JSON) or a findings CSV; rows with nothing decided skipped."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise DecisionsError(str(p), None, f"cannot read: {exc.strerror}") from exc
    except UnicodeDecodeError as exc:
        raise DecisionsError(str(p), None, f"not valid UTF-8 ({exc.reason})") from exc
    if text.lstrip().startswith("{"):
        return _from_json(str(p), text)
    return _from_csv(str(p), text)


def _verdict(path: str, line: int | None, value: object) -> str:
    v = str(value or "").strip().lower()
    if v not in VERDICTS:
        raise DecisionsError(path, line, f"decision {value!r}: expected accept, reject or nothing")
    return v


def _from_json(path: str, text: str) -> list[Decision]:
    try:
        data = json.loads(text)
    except json.JSONDecodeError as exc:
        raise DecisionsError(path, exc.lineno, f"not valid JSON: {exc.msg}") from exc
    if not isinstance(data, dict) or data.get("format") != FORMAT:
        raise DecisionsError(path, None, f"not a decisions file (expected \"format\": \"{FORMAT}\")")
    out = []
    for k, d in enumerate(data.get("decisions") or [], 1):
        try:
            out.append(Decision(str(d["finding"]), str(d["document"]), str(d["segment"]), int(d["start"]),
                                int(d["end"]), str(d["text"]), _verdict(path, None, d.get("decision")),
                                str(d.get("comment") or ""), str(d.get("decided_at") or "")))
        except (KeyError, TypeError, ValueError) as exc:
            raise DecisionsError(path, None, f"decision {k}: {exc!r} (needs finding, document, segment, start, "
                                             "end, text)") from exc
    return [d for d in out if d.decision or d.comment.strip()]


def _plain(cell: str) -> str:
    """A CSV text cell as written before the formula guard added its apostrophe."""
    return cell[1:] if cell.startswith("'") and cell[1:].startswith(_FORMULA_STARTS) else cell


def _from_csv(path: str, text: str) -> list[Decision]:
    rows = csv.DictReader(text.splitlines(keepends=True))
    need = ("finding", "document", "segment", "start", "end", "flagged", "decision", "comment")
    missing = [c for c in need if c not in (rows.fieldnames or [])]
    if missing:
        raise DecisionsError(path, 1, f"not a findings CSV with decisions: no column {missing[0]!r}")
    out = []
    for row in rows:
        line = rows.line_num
        try:
            d = Decision(row["finding"], _plain(row["document"]), _plain(row["segment"]), int(row["start"]),
                         int(row["end"]), _plain(row["flagged"]), _verdict(path, line, row["decision"]),
                         _plain(row["comment"] or ""))
        except ValueError as exc:
            raise DecisionsError(path, line, f"start and end must be numbers ({exc})") from exc
        if d.decision or d.comment.strip():
            out.append(d)
    return out


@dataclass(frozen=True)
class FindingKey:
    """Where a finding is: what a decision is checked against."""

    finding: str
    document: str
    segment: str
    start: int
    end: int
    text: str


def match_decisions(decisions: Sequence[Decision], findings: Iterable[FindingKey], path: str = "") -> list[
        tuple[FindingKey, Decision]]:
    """Each decision with its finding; DecisionsError when one names a finding the run does not have there."""
    by_id = {f.finding: f for f in findings}
    out, bad = [], []
    for d in decisions:
        f = by_id.get(d.finding)
        if f is None or (f.document, f.segment, f.start, f.end, f.text) != (d.document, d.segment, d.start,
                                                                              d.end, d.text):
            bad.append(d)
            continue
        out.append((f, d))
    if bad:
        first = bad[0]
        raise DecisionsError(path, None, f"{len(bad)} decision(s) do not match a finding of this run, e.g. "
                                         f"{first.finding} ({first.document!r}, segment {first.segment}, "
                                         f"{first.text!r}): were they made on another run's report?")
    return out


def finding_keys(documents) -> list[FindingKey]:
    """The finding ids as the report numbers them ("f<document>-<finding>"), from results read back."""
    return [FindingKey(f"f{n}-{k}", d.doc_id, f.seg_id, f.start, f.end, f.text)
            for n, d in enumerate(documents, 1) for k, f in enumerate(d.findings, 1)]
