"""Scoring results read back for review: the results JSONL (docs/design.md, "Contracts") joined with the input.

Only what the review needs is kept. Every finding gets a stable id ("f<document>-<finding>", 1-based, in
results order) that the HTML report, the CSV and the XLIFF notes share, so a post-editor can cross-reference
them.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import Document, Segment

FINDING_KEYS = ("kind", "seg_id", "start", "end", "text", "confidence")
EVIDENCE_KEYS = ("side", "seg_id", "start", "end", "text")


@dataclass(frozen=True)
class ReviewEvidence:
    side: str  # "source" or "target"
    seg_id: str
    start: int
    end: int
    text: str
    gender: str | None
    kind: str  # pronoun, morphology, agreement, lexical, title, declared (or whatever the scorer says)
    rule: str

    @property
    def key(self) -> tuple[str, str, int, int]:
        return (self.side, self.seg_id, self.start, self.end)

    def summary(self) -> str:
        """'la' (source, segment 2, morphology, fem)"""
        parts = (self.side, f"segment {self.seg_id}", self.kind, self.gender or "")
        details = ", ".join(x for x in parts if x)
        return f"{self.text!r} ({details})"


@dataclass(frozen=True)
class ReviewFinding:
    id: str
    doc_id: str
    kind: str
    seg_id: str
    start: int
    end: int
    text: str
    expected: str | None
    found: str | None
    entity: str
    entity_label: str
    confidence: float
    message: str
    evidence: tuple[ReviewEvidence, ...]

    def evidence_summary(self) -> str:
        return "; ".join(e.summary() for e in self.evidence)


@dataclass(frozen=True)
class ReviewStats:
    segments: int
    checked: int
    consistent: int
    findings: Mapping[str, int]

    @property
    def rate(self) -> float | None:
        """Consistent over checked gendered target references; None when nothing could be checked."""
        return self.consistent / self.checked if self.checked else None


@dataclass(frozen=True)
class ReviewDocument:
    """One document's result, with its segments from the input when they were found there."""

    doc_id: str
    src_lang: str
    tgt_lang: str
    findings: tuple[ReviewFinding, ...]
    stats: ReviewStats
    segments: tuple[Segment, ...]
    skipped: str = ""
    line: int = 0  # line of the results file

    def segment(self, seg_id: str) -> Segment | None:
        return next((s for s in self.segments if s.seg_id == seg_id), None)

    def count(self, kind: str) -> int:
        return sum(1 for f in self.findings if f.kind == kind)

    def mismatches(self) -> list[ReviewFinding]:
        """Findings whose words are not where the input has them (results of another input, or edited)."""
        out = []
        for f in self.findings:
            seg = self.segment(f.seg_id)
            if seg is None or seg.target[f.start : f.end] != f.text:
                out.append(f)
        return out


def load_review(results_path: str | Path, documents: list[Document]) -> list[ReviewDocument]:
    """The results of RESULTS.jsonl in their order, each joined with the input document of the same id."""
    by_id = {d.doc_id: d for d in documents}
    out: list[ReviewDocument] = []
    path = str(results_path)
    try:
        lines = Path(results_path).read_text(encoding="utf-8-sig").splitlines()
    except OSError as exc:
        raise InputError(path, None, f"cannot open: {exc.strerror}") from exc
    except UnicodeDecodeError as exc:
        raise InputError(path, None, f"not valid UTF-8 ({exc.reason}); expected a results JSONL file") \
            from exc
    for lineno, text in enumerate(lines, 1):
        if not text.strip():
            continue
        try:
            obj = json.loads(text)
        except json.JSONDecodeError as exc:
            raise InputError(path, lineno, f"malformed JSON ({exc.msg} at column {exc.colno})") from exc
        if not isinstance(obj, dict):
            raise InputError(path, lineno, "expected one JSON object per document")
        try:
            out.append(_document(path, lineno, len(out) + 1, obj, by_id))
        except (TypeError, ValueError, AttributeError) as exc:
            raise InputError(path, lineno, f"unexpected value in the results ({exc})") from exc
    if not out:
        raise InputError(path, None, "no results: expected one JSON object per document")
    return out


def _document(path: str, line: int, number: int, obj: dict, by_id: dict[str, Document]) -> ReviewDocument:
    doc_id = _require(path, line, obj, "doc_id", str)
    labels = {e.get("id"): e.get("label", "") for e in obj.get("entities") or [] if isinstance(e, dict)}
    raw_findings = _require(path, line, obj, "findings", list)
    findings = tuple(
        _finding(path, line, f"f{number}-{k}", doc_id, f, labels) for k, f in enumerate(raw_findings, 1)
    )
    stats = obj.get("stats") or {}
    counts = stats.get("findings") or {}
    review_stats = ReviewStats(
        segments=int(stats.get("segments", 0)),
        checked=int(stats.get("checked", 0)),
        consistent=int(stats.get("consistent", 0)),
        findings={str(k): int(v) for k, v in counts.items()},
    )
    doc = by_id.get(doc_id)
    return ReviewDocument(
        doc_id=doc_id,
        src_lang=str(obj.get("src_lang", "")),
        tgt_lang=str(obj.get("tgt_lang", "")),
        findings=findings,
        stats=review_stats,
        segments=doc.segments if doc else (),
        skipped=str(obj.get("skipped", "")),
        line=line,
    )


def _finding(path: str, line: int, fid: str, doc_id: str, f: object, labels: dict) -> ReviewFinding:
    if not isinstance(f, dict):
        raise InputError(path, line, f"finding {fid}: expected a JSON object")
    for key in FINDING_KEYS:
        if key not in f:
            raise InputError(path, line, f"finding {fid} of document {doc_id!r} has no {key!r}")
    evidence = []
    for e in f.get("evidence") or []:
        if not isinstance(e, dict) or any(k not in e for k in EVIDENCE_KEYS):
            raise InputError(path, line, f"finding {fid}: evidence items need {', '.join(EVIDENCE_KEYS)}")
        evidence.append(ReviewEvidence(
            side=str(e["side"]), seg_id=str(e["seg_id"]), start=int(e["start"]), end=int(e["end"]),
            text=str(e["text"]), gender=e.get("gender"), kind=str(e.get("kind", "")),
            rule=str(e.get("rule", "")),
        ))
    entity = str(f.get("entity", ""))
    return ReviewFinding(
        id=fid, doc_id=doc_id, kind=str(f["kind"]), seg_id=str(f["seg_id"]), start=int(f["start"]),
        end=int(f["end"]), text=str(f["text"]), expected=f.get("expected"), found=f.get("found"),
        entity=entity,
        entity_label=str(labels.get(entity, "") or ""), confidence=float(f["confidence"]),
        message=str(f.get("message", "")), evidence=tuple(evidence),
    )


def _require(path: str, line: int, obj: dict, key: str, kind: type):
    if key not in obj:
        raise InputError(path, line, f"results object has no {key!r}")
    if not isinstance(obj[key], kind):
        raise InputError(path, line, f"{key!r} must be a {kind.__name__}, found {type(obj[key]).__name__}")
    return obj[key]
