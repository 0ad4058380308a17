"""Findings: target words that give a person a gender the document's evidence does not support.

contradiction: the document's evidence, led by the source, settles the entity's gender and the target word
  says otherwise.
inconsistency: the source does not settle it, and the target gives the entity two genders.
assumption: nothing in the source speaks to the person's gender and the target commits to one (informational).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

from gendertrace.declared.policy import Policy
from gendertrace.evidence.resolve import STRENGTH_SCALE, dedupe, resolve_gender
from gendertrace.mentions.extract import W_PRONOUN
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
            if m.kind == "noun":
                start, end = min(start, m.start), max(end, m.end)  # "la secrétaire": determiner to noun
            refs.append(
                Reference(
                    m,
                    m.seg,
                    np_marks[0].seg_id,
                    start,
                    end,
                    target_text[start:end],
                    genders.pop(),
                    tuple(np_marks),
                )
            )
        else:
            for mk in np_marks:
                refs.append(Reference(m, m.seg, mk.seg_id, mk.start, mk.end, mk.text, mk.gender, (mk,)))
    for mk in m.marks:
        if mk.rule in PREDICATE_RULES:
            refs.append(Reference(m, m.seg, mk.seg_id, mk.start, mk.end, mk.text, mk.gender, (mk,)))
    return refs


# The target's own words count for less than the source's when they are evidence about another target word.
TARGET_FACTOR = 0.8
# Source evidence this confident settles a gender alone; weaker source evidence is pooled with the target's.
SOURCE_DECISIVE = 0.6
# A segment-level verdict, used only when the entity's own evidence is silent, counts for this much.
SEGMENT_FACTOR = 0.75


def _pooled_verdict(source: Sequence[EvidenceItem], others: Sequence[EvidenceItem]):
    """Verdict on the source evidence plus the other target words (down-weighted), source first in ties."""
    pool = list(source) + [replace(mk, weight=mk.weight * TARGET_FACTOR, side="source") for mk in others]
    return resolve_gender(pool)


def detect_findings(
    entities: Sequence[Entity],
    links: dict[str, Link],
    target_texts: Sequence[str],
    seg_ids: Sequence[str],
    certainty: dict[str, float],
    min_confidence: float = 0.5,
    target_chain_of: dict[str, str] | None = None,
    segment_evidence: Sequence[Sequence[EvidenceItem]] | None = None,
    policy: Policy | None = None,
) -> tuple[list[Finding], DocumentStats, dict[str, tuple[int, int]]]:
    """Check every gendered target reference of every entity against the rest of the document's evidence.

    Each reference is judged leave-one-out: against the source evidence when that alone is confident, else
    against the source evidence pooled with the entity's other target references. A disagreement is a
    contradiction when the source leans the same way as the verdict, an inconsistency when only the target
    speaks. Where neither settles it, a source segment whose person words all have one gender speaks for the
    target words of that segment (less surely: the word may be about someone the segment does not name). An
    entity whose source is silent and whose target commits to one gender gets one assumption.
    A person declared on the entity sheet is judged against the declaration alone (every target form, neutral
    ones included); neutral target forms elsewhere follow the policy's neutral_for_binary.
    Returns the findings, the document's statistics, and per entity id its (checked, consistent) counts.
    """
    policy = policy or Policy()
    findings: list[Finding] = []
    total_refs = checked = consistent = 0
    per_entity: dict[str, tuple[int, int]] = {}
    # The target's own chains, where each attachment was certain, pool evidence across entities: a target
    # pronoun tied by alignment to one source mention is still about the person its sentence calls "she".
    chain_refs: dict[str, list[Reference]] = {}
    if target_chain_of:
        for e in entities:
            for m in e.target_mentions:
                if certainty.get(m.id, 1.0) >= 1.0:
                    chain_refs.setdefault(target_chain_of[m.id], []).extend(
                        r for r in target_references(m, target_texts[m.seg]) if r.gender in ("fem", "masc")
                    )
    for e in entities:
        refs: dict[tuple[int, int, int], Reference] = {}
        for m in e.target_mentions:
            for r in target_references(m, target_texts[m.seg]):
                refs.setdefault((r.seg, r.start, r.end), r)
        every = sorted(refs.values(), key=lambda r: (r.seg, r.start))
        every = [r for r in every if _checkable(r.mention, links, e) and not _unmarked_only(r)]
        ordered = [r for r in every if r.gender in ("fem", "masc")]
        neutral_refs = [r for r in every if r.gender == "neutral"]

        def reach(r: Reference) -> float:
            # A direct link says how surely the word is about this person; the target chain matters only
            # where the link was inherited through it (and its certainty is already in the link's confidence).
            link = links.get(r.mention.id)
            return link.confidence if link else certainty.get(r.mention.id, 1.0)

        if e.declared:
            n_checked, n_consistent = _judge_declared(
                e, every, reach, policy, min_confidence, seg_ids, findings
            )
            total_refs += len(every)
            checked += n_checked
            consistent += n_consistent
            per_entity[e.id] = (n_checked, n_consistent)
            continue
        source_ev = [x for x in e.evidence if x.side == "source"]
        source_verdict = resolve_gender(source_ev) if source_ev else None
        if neutral_refs and policy.neutral_for_binary == "flag":
            # A neutral form where the evidence settles a binary gender: a finding only if the client says so.
            base = source_verdict if source_verdict and source_verdict.confidence >= SOURCE_DECISIVE else None
            if base and base.gender in ("fem", "masc"):
                for r in neutral_refs:
                    conf = base.confidence * reach(r)
                    if conf >= min_confidence:
                        total_refs += 1
                        checked += 1
                        findings.append(
                            _finding(
                                "contradiction",
                                r,
                                base.gender,
                                e,
                                conf,
                                [x for x in source_ev if x.gender == base.gender],
                                seg_ids,
                            )
                        )
        total_refs += len(ordered)
        if not ordered:
            continue

        judged = 0
        consistent_before = consistent
        raised: list[Finding] = []  # the entity's findings
        agreed: set[tuple[int, int, int]] = set()  # words judged consistent
        nominal = _nominal_view(e, ordered, source_ev) if any(_title_only(r) for r in ordered) else None
        anchors: list[tuple[Reference, float]] = []  # titles that pronouns alone would have flagged
        for r in ordered:
            judged_as = _entity_verdict(r, e, ordered, source_ev, source_verdict, reach, chain_refs,
                                        target_chain_of, certainty, segment_evidence, min_confidence)
            if nominal is not None and _title_only(r):
                # A title travels with the name by the string itself: only what the document says of the
                # person in names and nouns judges it, never pronouns or zero subjects that the resolver
                # attached ("Mr. Ordóñez" is no error because a later "she" was put in his chain).
                n_ordered, n_source, n_verdict = nominal
                by_name = _entity_verdict(r, e, n_ordered, n_source, n_verdict, reach, {}, None, certainty,
                                          None, min_confidence)
                if (judged_as is not None and judged_as[1] == "inconsistency" and judged_as[0].gender != r.gender
                        and (by_name is None or by_name[0].gender == r.gender)):
                    anchors.append((r, judged_as[3]))
                judged_as = by_name
            # The source word the target word translates has the last say where it shows a gender itself:
            # "Er wurde befördert" / "She was promoted" is a contradiction whoever "Er" turns out to be, and
            # "sie" / "she" is consistent even where coreference put "sie" with someone else.
            direct = _direct_verdict(r, links, e)
            if direct is not None and direct[0].confidence * DIRECT_REACH >= min_confidence:
                own, own_support = direct
                kept = (judged_as is not None and judged_as[1] == "contradiction"
                        and judged_as[0].gender == own.gender)
                if r.gender == own.gender or not kept:
                    judged_as = (own, "contradiction", own_support, own.confidence * DIRECT_REACH)
            if judged_as is None:
                continue
            verdict, kind, support, conf = judged_as
            checked += 1
            judged += 1
            if r.gender == verdict.gender:
                consistent += 1
                agreed.add((r.seg, r.start, r.end))
                continue
            expected = verdict.gender if kind == "contradiction" else None
            findings.append(_finding(kind, r, expected, e, conf, support, seg_ids))
            raised.append(findings[-1])
        for r, conf in anchors:
            # Where only the target disagrees with a title, the words attached by coreference are the odd ones.
            flagged = {(f.seg, f.start, f.end) for f in raised} | agreed
            for o in ordered:
                if o.gender != r.gender and not _title_only(o) and (o.seg, o.start, o.end) not in flagged:
                    checked += 1
                    judged += 1
                    findings.append(_finding("inconsistency", o, None, e, conf, r.marks, seg_ids))
                    raised.append(findings[-1])
        for r, finding in _tie_partners(ordered, raised, agreed):
            # An even split has no majority: the words on the other side are as suspect as the flagged one,
            # and the finding already takes them to be about this person.
            checked += 1
            judged += 1
            findings.append(_finding("inconsistency", r, None, e, finding.confidence,
                                     [mk for o in ordered if o.gender != r.gender for mk in o.marks], seg_ids))
        per_entity[e.id] = (judged, consistent - consistent_before)
        # A source that only uses neutral forms ("they") does not speak to a binary gender either.
        binary_source = any(x.gender in ("fem", "masc") for x in source_ev)
        if not binary_source and judged == 0 and _entity_kind(e) in policy.assumptions:
            r = ordered[0]
            findings.append(_finding("assumption", r, None, e, 0.5 * reach(r), (), seg_ids))
    findings.sort(key=lambda f: (f.seg, f.start))
    counts = {
        k: sum(1 for f in findings if f.kind == k) for k in ("contradiction", "inconsistency", "assumption")
    }
    stats = DocumentStats(
        segments=len(target_texts),
        entities=len(entities),
        target_references=total_refs,
        checked=checked,
        consistent=consistent,
        findings=counts,
    )
    return findings, stats, per_entity


def _tie_partners(ordered: Sequence[Reference], raised: Sequence[Finding],
                  agreed: set[tuple[int, int, int]]) -> list[tuple[Reference, Finding]]:
    """Where an entity's gendered target words split evenly between feminine and masculine and only some of
    them were flagged as inconsistent (the others' attachment to the person was less sure), the unflagged
    words of the split, each with the most confident finding raised against the other side. Not where any
    finding of the entity is a contradiction."""
    if not raised or any(f.kind != "inconsistency" for f in raised):
        return []  # where the source speaks, it decides: a split in the target is no tie
    fem = sum(1 for r in ordered if r.gender == "fem")
    if fem * 2 != len(ordered):
        return []
    flagged = {(f.seg, f.start, f.end) for f in raised} | agreed
    out = []
    for r in ordered:
        if (r.seg, r.start, r.end) in flagged or _title_only(r):  # a title is judged by names and nouns only
            continue
        against = [f for f in raised if f.found != r.gender]
        if against:
            out.append((r, max(against, key=lambda f: f.confidence)))
    return out


def _entity_verdict(r: Reference, e: Entity, ordered, source_ev, source_verdict, reach, chain_refs,
                    target_chain_of, certainty, segment_evidence, min_confidence: float):
    """(verdict, kind, support, confidence) from the entity's evidence, or None where it is silent."""
    if source_verdict and source_verdict.confidence >= max(min_confidence, SOURCE_DECISIVE):
        verdict, kind, support = source_verdict, "contradiction", source_ev
    else:
        pool = {(o.seg, o.start, o.end): o for o in ordered}
        if target_chain_of and certainty.get(r.mention.id, 1.0) >= 1.0:
            for o in chain_refs.get(target_chain_of[r.mention.id], []):
                pool.setdefault((o.seg, o.start, o.end), o)
        others = [mk for key, o in pool.items() if key != (r.seg, r.start, r.end) for mk in o.marks]
        if not others and not source_ev:
            return None
        verdict = _pooled_verdict(source_ev, others)
        leaning = source_verdict.gender if source_verdict else None
        kind = "contradiction" if leaning == verdict.gender else "inconsistency"
        support = [x for x in source_ev if x.gender == verdict.gender] + [
            mk for mk in others if mk.gender == verdict.gender
        ]
    conf = verdict.confidence * reach(r)
    # Only for words tied to no source person: a linked word's own entity has spoken (even if silently).
    if (
        (conf < min_confidence or verdict.gender not in ("fem", "masc"))
        and not e.source_mentions
        and segment_evidence
    ):
        seg_ev = segment_evidence[r.seg]
        seg_verdict = resolve_gender(seg_ev) if seg_ev else None
        if (
            seg_verdict
            and seg_verdict.gender in ("fem", "masc")
            and seg_verdict.confidence
            >= 0.99 * (1.0 - math.exp(-sum(e.weight for e in seg_ev) / STRENGTH_SCALE))
        ):
            verdict, kind, support = seg_verdict, "contradiction", list(seg_ev)
            conf = seg_verdict.confidence * SEGMENT_FACTOR
    if verdict.gender not in ("fem", "masc") or conf < min_confidence:
        return None
    return verdict, kind, support, conf


# How surely a target word is about what the source word aligned to it (or the subject projected to it) is about.
DIRECT_REACH = 0.85


def _direct_verdict(r: Reference, links: dict[str, Link], e: Entity):
    """The gender the linked source mention shows by its own marks, with those marks; None if it shows none."""
    link = links.get(r.mention.id)
    if link is None or link.method not in ("alignment", "projection") or not link.via:
        return None
    via = next((s for s in e.source_mentions if s.id == link.via), None)
    if via is None or not via.marks:
        return None
    marks = list(dedupe(via.marks))
    if (r.mention.kind == "pronoun" and r.mention.animate and not via.animate
            and r.mention.pron_type == via.pron_type):
        # A source pronoun that may stand for a thing ("ihn", "lo") translated by one of the same kind that only
        # stands for a person ("him") is about a person, and then its gender is the person's: it counts in
        # full. (A possessive "her" paired with an object "lo" is more likely a misalignment.)
        marks = [replace(mk, weight=W_PRONOUN) if mk.kind == "pronoun" and mk.side == "source" else mk
                 for mk in marks]
    verdict = resolve_gender(marks)
    if verdict.gender not in ("fem", "masc"):
        return None
    return verdict, [mk for mk in marks if mk.gender == verdict.gender]


def _judge_declared(
    e: Entity,
    refs: Sequence[Reference],
    reach,
    policy: Policy,
    min_confidence: float,
    seg_ids,
    findings: list[Finding],
) -> tuple[int, int]:
    """Every target form of a declared person against the declaration; returns (checked, consistent)."""
    declared = [x for x in e.evidence if x.kind == "declared"]
    strength = resolve_gender(declared).confidence
    n_checked = n_consistent = 0
    flagged: list[Reference] = []
    for r in refs:
        if any(f.seg == r.seg and f.start < r.end and r.start < f.end for f in flagged):
            continue  # "el diseñador" and its noun as a predicate: one word group, one finding
        if r.gender in e.declared:
            n_checked += 1
            n_consistent += 1
            continue
        if e.declared == ("neutral",) and not policy.gendered_for_nonbinary:
            continue  # the client accepts gendered forms for this person
        conf = strength * reach(r)
        if conf < min_confidence:
            continue
        n_checked += 1
        flagged.append(r)
        findings.append(
            _finding(
                "contradiction",
                r,
                e.declared[0],
                e,
                conf,
                declared,
                seg_ids,
                basis="the entity sheet declares",
            )
        )
    return n_checked, n_consistent


NOMINAL_KINDS = ("name", "noun")


def _title_only(r: Reference) -> bool:
    """Whether the reference is an honorific and nothing else ("Mr.", "Mme")."""
    return all(mk.kind == "title" for mk in r.marks)


def _nominal_view(e: Entity, ordered: Sequence[Reference], source_ev: Sequence[EvidenceItem]):
    """The entity's evidence from its nominal mentions only (names, titles, role and kinship nouns): the target
    references of such mentions, the source evidence items such mentions carry, and the verdict on those."""
    nominal_marks = {(mk.side, mk.seg, mk.start, mk.end) for m in e.source_mentions if m.kind in NOMINAL_KINDS
                     for mk in m.marks}
    source = [x for x in source_ev if (x.side, x.seg, x.start, x.end) in nominal_marks]
    return ([r for r in ordered if r.mention.kind in NOMINAL_KINDS], source,
            resolve_gender(source) if source else None)


def _entity_kind(e: Entity) -> str:
    """named (a person name among its mentions), roles (a role noun), or other (pronouns only)."""
    kinds = {m.kind for m in tuple(e.source_mentions) + tuple(e.target_mentions)}
    return "named" if "name" in kinds else "roles" if "noun" in kinds else "other"


def _unmarked_only(r: Reference) -> bool:
    """A bare generic masculine ("fue elegida presidente") is evidence, but never flagged alone."""
    return all(mk.rule == "generic masculine noun" for mk in r.marks)


def _checkable(m: Mention, links: dict[str, Link], e: Entity) -> bool:
    """A clitic that may stand for a thing ("lo", "la") is checked only when aligned to an object pronoun."""
    if m.animate:
        return True
    link = links.get(m.id)
    if link is None or link.method != "alignment":
        return False
    via = next((s for s in e.source_mentions if s.id == link.via), None)
    return via is not None and via.kind == "pronoun" and via.case in ("acc", "dat")


def _finding(
    kind, r: Reference, expected, e: Entity, conf: float, support, seg_ids, basis: str = "the source says"
) -> Finding:
    found = r.gender
    if kind == "contradiction":
        msg = f"{r.text!r} makes {e.label or e.id} {found}; {basis} {expected}"
    elif kind == "inconsistency":
        msg = f"{r.text!r} makes {e.label or e.id} {found}; elsewhere the target says otherwise"
    else:
        msg = f"{r.text!r} makes {e.label or e.id} {found}; nothing in the source says so"
    return Finding(
        kind=kind,
        seg_id=seg_ids[r.seg],
        start=r.start,
        end=r.end,
        text=r.text,
        expected=expected,
        found=found,
        entity=e.id,
        confidence=round(conf, 4),
        evidence=tuple(support),
        message=msg,
        seg=r.seg,
        mention=r.mention.id,
    )
