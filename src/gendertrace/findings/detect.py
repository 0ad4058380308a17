"""Findings: target words that give a person a gender the document's evidence does not support.

contradiction: the entity's source evidence settles its gender and the target word says otherwise.
inconsistency: no usable source evidence, and the target gives the entity two genders (the minority is flagged).
assumption: nothing in the source speaks to the person's gender and the target commits to one (informational).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from gendertrace.evidence.resolve import resolve_gender
from gendertrace.model import DocumentStats, Entity, EvidenceItem, Finding, Link, Mention

PREDICATE_RULES = ("predicative with copula", "participle with agreeing auxiliary", "secondary predicate")


@dataclass(frozen=True)
class Reference:
    """A gendered target word group about a person: what is checked."""

    mention: Mention
    seg: int
    seg_id: str
    start: int
    end: int
    text: str
    gender: str
    marks: tuple[EvidenceItem, ...]


def target_references(m: Mention, target_text: str) -> list[Reference]:
    """The mention's noun-phrase marks as one group (determiner to noun), and each predicate mark alone."""
    np_marks = [mk for mk in m.marks if mk.rule not in PREDICATE_RULES]
    refs = []
    if np_marks:
        genders = {mk.gender for mk in np_marks}
        if len(genders) == 1:
            start, end = min(mk.start for mk in np_marks), max(mk.end for mk in np_marks)
            refs.append(Reference(m, m.seg, np_marks[0].seg_id, start, end, target_text[start:end], genders.pop(),
                                  tuple(np_marks)))
        else:
            for mk in np_marks:
                refs.append(Reference(m, m.seg, mk.seg_id, mk.start, mk.end, mk.text, mk.gender, (mk,)))
    for mk in m.marks:
        if mk.rule in PREDICATE_RULES:
            refs.append(Reference(m, m.seg, mk.seg_id, mk.start, mk.end, mk.text, mk.gender, (mk,)))
    return refs


def detect_findings(
    entities: Sequence[Entity],
    links: dict[str, Link],
    target_texts: Sequence[str],
    seg_ids: Sequence[str],
    certainty: dict[str, float],
    min_confidence: float = 0.5,
) -> tuple[list[Finding], DocumentStats]:
    findings: list[Finding] = []
    total_refs = checked = consistent = 0
    for e in entities:
        refs: dict[tuple[int, int, int], Reference] = {}
        for m in e.target_mentions:
            for r in target_references(m, target_texts[m.seg]):
                refs.setdefault((r.seg, r.start, r.end), r)
        ordered = sorted(refs.values(), key=lambda r: (r.seg, r.start))
        ordered = [r for r in ordered if r.gender in ("fem", "masc") and _checkable(r.mention, links, e)]
        total_refs += len(ordered)
        if not ordered:
            continue
        source_ev = [x for x in e.evidence if x.side == "source"]
        source_verdict = resolve_gender(source_ev) if source_ev else None

        def reach(r: Reference) -> float:
            link = links.get(r.mention.id)
            return (link.confidence if link else 1.0) * certainty.get(r.mention.id, 1.0)

        if source_verdict and source_verdict.confidence * 1.0 >= min_confidence:
            for r in ordered:
                conf = source_verdict.confidence * reach(r)
                if conf < min_confidence:
                    continue
                checked += 1
                if r.gender == source_verdict.gender:
                    consistent += 1
                    continue
                findings.append(_finding("contradiction", r, source_verdict.gender, e, conf, source_ev, seg_ids))
            continue
        genders = {r.gender for r in ordered}
        if len(genders) > 1:
            weights: dict[str, float] = {}
            for r in ordered:
                weights[r.gender] = weights.get(r.gender, 0.0) + max(mk.weight for mk in r.marks)
            majority = max(weights, key=lambda g: (weights[g], -_first_index(ordered, g)))
            margin = (weights[majority] - sum(w for g, w in weights.items() if g != majority)) / sum(weights.values())
            for r in ordered:
                conf = (0.5 + 0.5 * margin) * reach(r)
                if conf < min_confidence:
                    continue
                checked += 1
                if r.gender == majority:
                    consistent += 1
                    continue
                support = tuple(mk for o in ordered if o.gender == majority for mk in o.marks)
                findings.append(_finding("inconsistency", r, None, e, conf, support, seg_ids))
            continue
        if not source_ev:
            r = ordered[0]
            findings.append(
                _finding("assumption", r, None, e, 0.5 * reach(r), (), seg_ids)
            )
    findings.sort(key=lambda f: (f.seg, f.start))
    counts = {k: sum(1 for f in findings if f.kind == k) for k in ("contradiction", "inconsistency", "assumption")}
    stats = DocumentStats(
        segments=len(target_texts), entities=len(entities), target_references=total_refs, checked=checked,
        consistent=consistent, findings=counts,
    )
    return findings, stats


def _checkable(m: Mention, links: dict[str, Link], e: Entity) -> bool:
    """A clitic that may stand for a thing ("lo", "la") is checked only when aligned to an object pronoun."""
    if m.animate:
        return True
    link = links.get(m.id)
    if link is None or link.method != "alignment":
        return False
    via = next((s for s in e.source_mentions if s.id == link.via), None)
    return via is not None and via.kind == "pronoun" and via.case in ("acc", "dat")


def _first_index(refs: Sequence[Reference], gender: str) -> int:
    return next(k for k, r in enumerate(refs) if r.gender == gender)


def _finding(kind, r: Reference, expected, e: Entity, conf: float, support, seg_ids) -> Finding:
    found = r.gender
    if kind == "contradiction":
        msg = f"{r.text!r} makes {e.label or e.id} {found}; the source says {expected}"
    elif kind == "inconsistency":
        msg = f"{r.text!r} makes {e.label or e.id} {found}; elsewhere the target says otherwise"
    else:
        msg = f"{r.text!r} makes {e.label or e.id} {found}; nothing in the source says so"
    return Finding(
        kind=kind, seg_id=seg_ids[r.seg], start=r.start, end=r.end, text=r.text, expected=expected, found=found,
        entity=e.id, confidence=round(conf, 4), evidence=tuple(support), message=msg, seg=r.seg,
    )
