"""Scoring results joined with the input for review: what a post-editor needs to judge each finding.

The results are read through gendertrace.results (which owns the format). Every finding gets a stable id
("f<document>-<finding>", 1-based, in results order) that the HTML report, the CSV, the XLIFF notes and the
decisions file share, so a post-editor can cross-reference them. Each finding also carries the source word
its flagged word is linked through, the person's linked mentions on both sides, the rest of the person's
evidence, a message worded from all that, and a corrected form when the rules can build one.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.model import Document, Segment
from gendertrace.results import (
    ResultDocument,
    ResultEntity,
    ResultEvidence,
    ResultLink,
    ResultMention,
    ResultSpan,
    Summary,
    read_results,
)
from gendertrace.suggest import suggest

ReviewEvidence = ResultEvidence
ReviewStats = Summary
# How a target mention was tied to the person, in words.
LINK_WORDS = {
    "name": "same name",
    "lexicon": "translation of the source word",
    "alignment": "aligned with the source word",
    "projection": "subject of the aligned clause",
    "chain": "through the target's own chain",
    "declared": "declared on the entity sheet",
}


@dataclass(frozen=True)
class LinkedMention:
    """One mention of the person, on either side, with how a target mention is linked to the source."""

    side: str
    seg_id: str
    start: int
    end: int
    text: str
    kind: str  # name, noun, pronoun, zero
    link: ResultLink | None = None
    via_text: str = ""  # the source word a direct link goes through

    def link_words(self) -> str:
        if self.link is None:
            return "" if self.side == "source" else "not linked"
        words = LINK_WORDS.get(self.link.method, self.link.method)
        via = f" '{self.via_text}'" if self.via_text and self.link.method != "name" else ""
        return f"{words}{via} ({self.link.confidence:.2f})"


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
    message: str  # worded for the report from the structured data (the scorer's own is `scorer_message`)
    evidence: tuple[ReviewEvidence, ...]  # the decisive evidence, the aligned source word's marks first
    source: ResultSpan | None = None  # the source word the flagged word is linked through
    link: ResultLink | None = None
    suggestion: str | None = None
    mentions: tuple[LinkedMention, ...] = ()
    person_evidence: tuple[ReviewEvidence, ...] = ()  # all of the person's evidence (shared, not copied)
    evidence_total: int = 0
    scorer_message: str = ""

    def evidence_summary(self) -> str:
        return "; ".join(e.summary() for e in self.evidence)

    def source_summary(self) -> str:
        """'su' (segment 4), or '' when the flagged word is linked to the person only indirectly."""
        if self.source is None:
            return ""
        where = f"'{self.source.text}' (segment {self.source.seg_id})"
        # A zero subject is located at its verb: the word translated is the subject the verb implies.
        return f"the unexpressed subject of {where}" if self.source.kind == "zero" else where

    @property
    def direct(self) -> bool:
        """The source word the flagged word translates itself carries the expected gender."""
        return self.source is not None and any(_inside(e, self.source) and e.gender == self.expected
                                               for e in self.evidence)


def _inside(e: ReviewEvidence, span: ResultSpan) -> bool:
    return (e.side == "source" and e.seg_id == span.seg_id and span.start <= e.start and e.end <= span.end)


@dataclass(frozen=True)
class ReviewDocument:
    """One document's result, with its segments from the input when they were found there."""

    doc_id: str
    src_lang: str
    tgt_lang: str
    findings: tuple[ReviewFinding, ...]
    stats: Summary
    segments: tuple[Segment, ...]
    skipped: str = ""
    line: int = 0  # line of the results file

    def segment(self, seg_id: str) -> Segment | None:
        index = self.__dict__.get("_by_seg_id")
        if index is None:  # built once: a long document is looked up once per finding and evidence word
            index = {}
            for s in self.segments:
                index.setdefault(s.seg_id, s)
            object.__setattr__(self, "_by_seg_id", index)
        return index.get(seg_id)

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
    return [review_document(r, k, by_id.get(r.doc_id)) for k, r in enumerate(read_results(results_path), 1)]


def review_document(r: ResultDocument, number: int, doc: Document | None) -> ReviewDocument:
    segments = doc.segments if doc else ()
    seg_ids = [s.seg_id for s in segments]
    # Built once per person and shared by the person's findings, so memory grows with the text.
    mentions = {e.id: _mentions(e, seg_ids) for e in r.entities}
    names = {e.id: person_name(e) for e in r.entities}
    by_seg_id: dict[str, Segment] = {}
    for s in segments:
        by_seg_id.setdefault(s.seg_id, s)
    entities = {e.id: e for e in r.entities}
    findings = tuple(_finding(r, f"f{number}-{k}", f, by_seg_id, seg_ids, mentions, names, entities)
                     for k, f in enumerate(r.findings, 1))
    return ReviewDocument(r.doc_id, r.src_lang, r.tgt_lang, findings, r.stats, segments, r.skipped, r.line)


def _seg_id(m: ResultMention | ResultSpan, seg_ids: Sequence[str]) -> str:
    if m.seg_id:
        return m.seg_id
    return seg_ids[m.seg] if 0 <= m.seg < len(seg_ids) else str(m.seg)


def person_name(entity: ResultEntity | None, fallback: str = "") -> str:
    """How to name the person: the entity's label when it is a name or a noun, never a pronoun."""
    if entity is None:
        return fallback or "this person"
    label = entity.label.strip()
    pronouns = {m.text.lower() for m in entity.source_mentions + entity.target_mentions
                if m.kind in ("pronoun", "zero")}
    nominal = {m.text.lower() for m in entity.source_mentions + entity.target_mentions
               if m.kind in ("name", "noun")}
    if label and label.lower() not in pronouns and (label.lower() in nominal or not pronouns):
        return label
    return "this person"


def _mentions(entity: ResultEntity | None, seg_ids: Sequence[str]) -> tuple[LinkedMention, ...]:
    if entity is None:
        return ()
    out = [LinkedMention("source", _seg_id(m, seg_ids), m.start, m.end, m.text, m.kind)
           for m in entity.source_mentions]
    for m in entity.target_mentions:
        via = entity.source_mention(m.link.via) if m.link and m.link.via else None
        out.append(LinkedMention("target", _seg_id(m, seg_ids), m.start, m.end, m.text, m.kind, m.link,
                                 via.text if via else ""))
    return tuple(out)


def _finding(r: ResultDocument, fid: str, f, segments: dict[str, Segment], seg_ids: Sequence[str],
             mentions: dict[str, tuple[LinkedMention, ...]], names: dict[str, str],
             entities: dict[str, ResultEntity]) -> ReviewFinding:
    entity = entities.get(f.entity)
    source = f.source
    if source is not None and not source.seg_id:
        source = ResultSpan(_seg_id(source, seg_ids), source.start, source.end, source.text, source.kind,
                            source.seg, source.basis)
    seg = segments.get(f.seg_id)
    suggestion = None
    if f.kind != "assumption" and seg is not None and seg.target[f.start : f.end] == f.text:
        nouns = frozenset(m.text.lower() for m in (entity.target_mentions if entity else ())
                          if m.kind == "noun")
        suggestion = suggest(f.text, f.found, f.expected, r.tgt_lang, seg.target[f.end :], nouns=nouns)
    out = ReviewFinding(
        id=fid, doc_id=r.doc_id, kind=f.kind, seg_id=f.seg_id, start=f.start, end=f.end, text=f.text,
        expected=f.expected, found=f.found, entity=f.entity,
        entity_label=entity.label if entity else "", confidence=f.confidence, message="",
        evidence=f.evidence, source=source, link=f.link, suggestion=suggestion,
        mentions=mentions.get(f.entity, ()), person_evidence=entity.evidence if entity else (),
        evidence_total=f.evidence_total,
        scorer_message=f.message,
    )
    return _with_message(out, names.get(f.entity) or person_name(entity, f.entity))


def _with_message(f: ReviewFinding, person: str) -> ReviewFinding:
    from dataclasses import replace

    return replace(f, message=wording(f, person))


def wording(f: ReviewFinding, person: str) -> str:
    """The finding in words, saying whether the source word itself or only words linked to the person speak."""
    said = f"'{f.text}' makes {person} {f.found or 'ungendered'}"
    if f.kind == "assumption":
        return f"{said}; nothing in the source states this person's gender"
    if f.kind == "inconsistency":
        return f"{said}; other target words linked to this person say otherwise"
    if f.direct:
        return f"{said}; the source word it translates, {f.source_summary()}, is {f.expected}"
    if f.source is not None:
        return (f"{said}; it translates {f.source_summary()}, which shows no gender itself; "
                f"words linked to this person say {f.expected}")
    return f"{said}; words linked to this person say {f.expected}"
