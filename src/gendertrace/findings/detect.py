"""Findings: target words that give a person a gender the document's evidence does not support.

contradiction: the document's evidence, led by the source, settles the entity's gender and the target word
  says otherwise.
inconsistency: the source does not settle it, and the target gives the entity two genders.
assumption: nothing in the source speaks to the person's gender and the target commits to one (informational).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

from gendertrace.declared.policy import Policy
from gendertrace.evidence.resolve import STRENGTH_SCALE, dedupe, resolve_gender
from gendertrace.mentions.extract import W_PRONOUN
from gendertrace.model import DocumentStats, Entity, EvidenceItem, Finding, Link, Mention, Span
from gendertrace.settings import DEFAULT_MIN_CONFIDENCE, WEIGHTS
from gendertrace.vocab import (
    BINARY,
    FINDING_KINDS,
    NEVER_FLAGS_ALONE,
    NOMINAL_KINDS,
    PREDICATE_RULES,
    EvidenceKind,
    FindingKind,
    Gender,
    LinkMethod,
    MentionKind,
)


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

    @property
    def span(self) -> Span:
        return Span("target", self.seg, self.start, self.end)


def target_references(m: Mention, target_text: str) -> list[Reference]:
    """The mention's noun-phrase marks as one group (determiner to noun), and each predicate mark alone."""
    np_marks = [mk for mk in m.marks if mk.rule not in PREDICATE_RULES]
    refs = []
    if np_marks:
        genders = {mk.gender for mk in np_marks}
        if len(genders) == 1:
            start, end = min(mk.start for mk in np_marks), max(mk.end for mk in np_marks)
            if m.kind == MentionKind.NOUN:
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


# Factors and thresholds of the judgement: rules/scoring/weights.yaml, section "findings".
TARGET_FACTOR = WEIGHTS.findings.target_factor
SOURCE_DECISIVE = WEIGHTS.findings.source_decisive
SEGMENT_FACTOR = WEIGHTS.findings.segment_factor
SEGMENT_UNANIMITY = WEIGHTS.findings.segment_unanimity
ASSUMPTION_FACTOR = WEIGHTS.findings.assumption_factor


def _pooled_verdict(source: Sequence[EvidenceItem], others: Sequence[EvidenceItem]):
    """Verdict on the source evidence plus the other target words (down-weighted), source first in ties."""
    pool = list(source) + [replace(mk, weight=mk.weight * TARGET_FACTOR, side="source") for mk in others]
    return resolve_gender(pool)


@dataclass(frozen=True)
class JudgeContext:
    """What judging one document reads besides its entities: the links, the target segments, the source
    segments' gender marks and the settings. Target mentions carry their chain and certainty (coreference)."""

    links: Mapping[str, Link]
    target_texts: Sequence[str]
    seg_ids: Sequence[str]
    min_confidence: float = DEFAULT_MIN_CONFIDENCE
    segment_evidence: Sequence[Sequence[EvidenceItem]] | None = None
    policy: Policy = field(default_factory=Policy)
    # Per target chain, its gendered references whose attachment was certain (see `chain_references`).
    chain_refs: Mapping[str, list[Reference]] = field(default_factory=dict)

    def reach(self, r: Reference) -> float:
        """How surely the word is about the entity: a direct link says so; the target chain matters only where
        the link was inherited through it (and its certainty is already in the link's confidence)."""
        link = self.links.get(r.mention.id)
        return link.confidence if link else r.mention.certainty

    def finding(self, kind: str, r: Reference, expected: str | None, e: Entity, conf: float, support,
                basis: str = "the source says") -> Finding:
        return _finding(kind, r, expected, e, conf, support, self.seg_ids, basis)


@dataclass
class Tally:
    """What judging writes: the findings, the counts of the document's statistics, and per entity id its
    (checked, consistent) counts."""

    findings: list[Finding] = field(default_factory=list)
    references: int = 0
    checked: int = 0
    consistent: int = 0
    per_entity: dict[str, tuple[int, int]] = field(default_factory=dict)


def chain_references(entities: Sequence[Entity], target_texts: Sequence[str]) -> dict[str, list[Reference]]:
    """The target's own chains, where each attachment was certain, pool evidence across entities: a target
    pronoun tied by alignment to one source mention is still about the person its sentence calls "she"."""
    chain_refs: dict[str, list[Reference]] = {}
    for e in entities:
        for m in e.target_mentions:
            if m.certainty >= 1.0:
                chain_refs.setdefault(m.chain, []).extend(
                    r for r in target_references(m, target_texts[m.seg]) if r.gender in BINARY
                )
    return chain_refs


def detect_findings(entities: Sequence[Entity], ctx: JudgeContext) -> tuple[list[Finding], DocumentStats,
                                                                           dict[str, tuple[int, int]]]:
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
    tally = Tally()
    for e in entities:
        _judge_entity(e, ctx, tally)
    findings = sorted(tally.findings, key=lambda f: (f.seg, f.start))
    stats = DocumentStats(
        segments=len(ctx.target_texts),
        entities=len(entities),
        target_references=tally.references,
        checked=tally.checked,
        consistent=tally.consistent,
        findings={k: sum(1 for f in findings if f.kind == k) for k in FINDING_KINDS},
    )
    return findings, stats, tally.per_entity


def _entity_references(e: Entity, ctx: JudgeContext) -> list[Reference]:
    """The entity's checkable target references, in text order, one per word group."""
    refs: dict[Span, Reference] = {}
    for m in e.target_mentions:
        for r in target_references(m, ctx.target_texts[m.seg]):
            refs.setdefault(r.span, r)
    every = sorted(refs.values(), key=lambda r: (r.seg, r.start))
    return [r for r in every if _checkable(r.mention, ctx.links, e) and not _unmarked_only(r)]


def _judge_entity(e: Entity, ctx: JudgeContext, tally: Tally) -> None:
    every = _entity_references(e, ctx)
    if e.declared:
        n_checked, n_consistent = _judge_declared(e, every, ctx, tally.findings)
        tally.references += len(every)
        tally.checked += n_checked
        tally.consistent += n_consistent
        tally.per_entity[e.id] = (n_checked, n_consistent)
        return
    source_ev = [x for x in e.evidence if x.side == "source"]
    source_verdict = resolve_gender(source_ev) if source_ev else None
    neutral_refs = [r for r in every if r.gender == Gender.NEUTRAL]
    if neutral_refs and ctx.policy.neutral_for_binary == "flag":
        _flag_neutral_forms(e, neutral_refs, source_ev, source_verdict, ctx, tally)
    ordered = [r for r in every if r.gender in BINARY]
    tally.references += len(ordered)
    if ordered:
        _judge_gendered(e, ordered, source_ev, source_verdict, ctx, tally)


def _flag_neutral_forms(e: Entity, neutral_refs: Sequence[Reference], source_ev, source_verdict,
                        ctx: JudgeContext, tally: Tally) -> None:
    """A neutral form where the evidence settles a binary gender: a finding only if the client says so."""
    base = source_verdict if source_verdict and source_verdict.confidence >= SOURCE_DECISIVE else None
    if not (base and base.gender in BINARY):
        return
    for r in neutral_refs:
        conf = base.confidence * ctx.reach(r)
        if conf >= ctx.min_confidence:
            tally.references += 1
            tally.checked += 1
            tally.findings.append(ctx.finding(FindingKind.CONTRADICTION, r, base.gender, e, conf,
                                              [x for x in source_ev if x.gender == base.gender]))


def _judge_gendered(e: Entity, ordered: Sequence[Reference], source_ev, source_verdict, ctx: JudgeContext,
                    tally: Tally) -> None:
    """Each gendered target reference of an undeclared entity against the rest of the evidence; then the
    findings a title, an even split or a silent source imply."""
    judged = 0
    consistent_before = tally.consistent
    raised: list[Finding] = []  # the entity's findings
    agreed: set[Span] = set()  # words judged consistent
    nominal = _nominal_view(e, ordered, source_ev) if any(_title_only(r) for r in ordered) else None
    anchors: list[tuple[Reference, float]] = []  # titles that pronouns alone would have flagged
    for r in ordered:
        judged_as = _reference_verdict(r, e, ordered, source_ev, source_verdict, nominal, anchors, ctx)
        if judged_as is None:
            continue
        verdict, kind, support, conf = judged_as
        tally.checked += 1
        judged += 1
        if r.gender == verdict.gender:
            tally.consistent += 1
            agreed.add(r.span)
            continue
        expected = verdict.gender if kind == FindingKind.CONTRADICTION else None
        raised.append(ctx.finding(kind, r, expected, e, conf, support))
    for r, conf in anchors:
        # Where only the target disagrees with a title, the words attached by coreference are the odd ones.
        flagged = {f.span for f in raised} | agreed
        for o in ordered:
            if o.gender != r.gender and not _title_only(o) and o.span not in flagged:
                tally.checked += 1
                judged += 1
                raised.append(ctx.finding(FindingKind.INCONSISTENCY, o, None, e, conf, r.marks))
    for r, finding in _tie_partners(ordered, raised, agreed):
        # An even split has no majority: the words on the other side are as suspect as the flagged one,
        # and the finding already takes them to be about this person.
        tally.checked += 1
        judged += 1
        raised.append(ctx.finding(FindingKind.INCONSISTENCY, r, None, e, finding.confidence,
                                  [mk for o in ordered if o.gender != r.gender for mk in o.marks]))
    tally.findings.extend(raised)
    tally.per_entity[e.id] = (judged, tally.consistent - consistent_before)
    # A source that only uses neutral forms ("they") does not speak to a binary gender either.
    binary_source = any(x.gender in BINARY for x in source_ev)
    if not binary_source and judged == 0 and _entity_kind(e) in ctx.policy.assumptions:
        r = ordered[0]
        tally.findings.append(ctx.finding(FindingKind.ASSUMPTION, r, None, e, ASSUMPTION_FACTOR * ctx.reach(r), ()))


def _reference_verdict(r: Reference, e: Entity, ordered, source_ev, source_verdict, nominal, anchors,
                       ctx: JudgeContext):
    """(verdict, kind, support, confidence) for one reference, or None where nothing judges it: the entity's
    evidence, for a title its names and nouns only, and the aligned source word's own gender last."""
    judged_as = _entity_verdict(r, e, ordered, source_ev, source_verdict, ctx, whole=True)
    if nominal is not None and _title_only(r):
        # A title travels with the name by the string itself: only what the document says of the person in
        # names and nouns judges it, never pronouns or zero subjects that the resolver attached ("Mr. Ordóñez"
        # is no error because a later "she" was put in his chain).
        n_ordered, n_source, n_verdict = nominal
        by_name = _entity_verdict(r, e, n_ordered, n_source, n_verdict, ctx, whole=False)
        if (judged_as is not None and judged_as[1] == FindingKind.INCONSISTENCY
                and judged_as[0].gender != r.gender
                and (by_name is None or by_name[0].gender == r.gender)):
            anchors.append((r, judged_as[3]))
        judged_as = by_name
    # The source word the target word translates has the last say where it shows a gender itself: "Er wurde
    # befördert" / "She was promoted" is a contradiction whoever "Er" turns out to be, and "sie" / "she" is
    # consistent even where coreference put "sie" with someone else.
    direct = _direct_verdict(r, ctx.links, e)
    if direct is not None and direct[0].confidence * DIRECT_REACH >= ctx.min_confidence:
        own, own_support = direct
        kept = (judged_as is not None and judged_as[1] == FindingKind.CONTRADICTION
                and judged_as[0].gender == own.gender)
        if r.gender == own.gender or not kept:
            judged_as = (own, FindingKind.CONTRADICTION, own_support, own.confidence * DIRECT_REACH)
    return judged_as


def _tie_partners(ordered: Sequence[Reference], raised: Sequence[Finding],
                  agreed: set[Span]) -> list[tuple[Reference, Finding]]:
    """Where an entity's gendered target words split evenly between feminine and masculine and only some of
    them were flagged as inconsistent (the others' attachment to the person was less sure), the unflagged
    words of the split, each with the most confident finding raised against the other side. Not where any
    finding of the entity is a contradiction."""
    if not raised or any(f.kind != FindingKind.INCONSISTENCY for f in raised):
        return []  # where the source speaks, it decides: a split in the target is no tie
    fem = sum(1 for r in ordered if r.gender == Gender.FEM)
    if fem * 2 != len(ordered):
        return []
    flagged = {f.span for f in raised} | agreed
    out = []
    for r in ordered:
        if r.span in flagged or _title_only(r):  # a title is judged by names and nouns only
            continue
        against = [f for f in raised if f.found != r.gender]
        if against:
            out.append((r, max(against, key=lambda f: f.confidence)))
    return out


def _is_narrator_entity(e: Entity) -> bool:
    """The source's narrator or person addressed (first or second person outside quotations, coref's
    `narrator` and `addressee` sieves): their target words pool with no third person a target chain put them
    with ("estaba": 1st or 3rd person; "está": "usted" or a third person)."""
    return any(m.person in ("1", "2") and not m.quoted and m.number != "plur" for m in e.source_mentions)


def _entity_verdict(r: Reference, e: Entity, ordered, source_ev, source_verdict, ctx: JudgeContext,
                    whole: bool):
    """(verdict, kind, support, confidence) from the entity's evidence, or None where it is silent. `whole`:
    also the target chain's certain references and the segment's verdict (off for a title's nominal view)."""
    min_confidence = ctx.min_confidence
    if source_verdict and source_verdict.confidence >= max(min_confidence, SOURCE_DECISIVE):
        verdict, kind, support = source_verdict, FindingKind.CONTRADICTION, source_ev
    else:
        pool = {o.span: o for o in ordered}
        if whole and r.mention.certainty >= 1.0:
            narrator = _is_narrator_entity(e)
            for o in ctx.chain_refs.get(r.mention.chain, []):
                if not narrator or o.mention in e.target_mentions:
                    pool.setdefault(o.span, o)
        others = [mk for key, o in pool.items() if key != r.span for mk in o.marks]
        if not others and not source_ev:
            return None
        verdict = _pooled_verdict(source_ev, others)
        leaning = source_verdict.gender if source_verdict else None
        kind = FindingKind.CONTRADICTION if leaning == verdict.gender else FindingKind.INCONSISTENCY
        support = [x for x in source_ev if x.gender == verdict.gender] + [
            mk for mk in others if mk.gender == verdict.gender
        ]
    conf = verdict.confidence * ctx.reach(r)
    # Only for words tied to no source person: a linked word's own entity has spoken (even if silently).
    if (conf < min_confidence or verdict.gender not in BINARY) and not e.source_mentions and whole:
        seg_verdict = _segment_verdict(r.seg, ctx)
        if seg_verdict is not None:
            verdict, kind, support = seg_verdict, FindingKind.CONTRADICTION, list(ctx.segment_evidence[r.seg])
            conf = seg_verdict.confidence * SEGMENT_FACTOR
    if verdict.gender not in BINARY or conf < min_confidence:
        return None
    return verdict, kind, support, conf


def _segment_verdict(seg: int, ctx: JudgeContext):
    """The verdict of a source segment whose person words all show one binary gender, else None."""
    if not ctx.segment_evidence:
        return None
    seg_ev = ctx.segment_evidence[seg]
    seg_verdict = resolve_gender(seg_ev) if seg_ev else None
    if (
        seg_verdict
        and seg_verdict.gender in BINARY
        and seg_verdict.confidence
        >= SEGMENT_UNANIMITY * (1.0 - math.exp(-sum(x.weight for x in seg_ev) / STRENGTH_SCALE))
    ):
        return seg_verdict
    return None


# How surely a target word is about what the source word aligned to it is about ("findings.direct_reach").
DIRECT_REACH = WEIGHTS.findings.direct_reach


def _direct_verdict(r: Reference, links: dict[str, Link], e: Entity):
    """The gender the linked source mention shows by its own marks, with those marks; None if it shows none."""
    link = links.get(r.mention.id)
    if link is None or link.method not in (LinkMethod.ALIGNMENT, LinkMethod.PROJECTION) or not link.via:
        return None
    via = next((s for s in e.source_mentions if s.id == link.via), None)
    if via is None or not via.marks:
        return None
    marks = list(dedupe(via.marks))
    if (r.mention.kind == MentionKind.PRONOUN and r.mention.animate and not via.animate
            and r.mention.pron_type == via.pron_type):
        # A source pronoun that may stand for a thing ("ihn", "lo") translated by one of the same kind that only
        # stands for a person ("him") is about a person, and then its gender is the person's: it counts in
        # full. (A possessive "her" paired with an object "lo" is more likely a misalignment.)
        marks = [replace(mk, weight=W_PRONOUN) if mk.kind == EvidenceKind.PRONOUN and mk.side == "source" else mk
                 for mk in marks]
    verdict = resolve_gender(marks)
    if verdict.gender not in BINARY:
        return None
    return verdict, [mk for mk in marks if mk.gender == verdict.gender]


def _judge_declared(e: Entity, refs: Sequence[Reference], ctx: JudgeContext,
                    findings: list[Finding]) -> tuple[int, int]:
    """Every target form of a declared person against the declaration; returns (checked, consistent)."""
    declared = [x for x in e.evidence if x.kind == EvidenceKind.DECLARED]
    strength = resolve_gender(declared).confidence
    n_checked = n_consistent = 0
    flagged: list[Reference] = []
    for r in refs:
        if any(f.span.overlaps(r.span) for f in flagged):
            continue  # "el diseñador" and its noun as a predicate: one word group, one finding
        if r.gender in e.declared:
            n_checked += 1
            n_consistent += 1
            continue
        if e.declared == (Gender.NEUTRAL,) and not ctx.policy.gendered_for_nonbinary:
            continue  # the client accepts gendered forms for this person
        conf = strength * ctx.reach(r)
        if conf < ctx.min_confidence:
            continue
        n_checked += 1
        flagged.append(r)
        findings.append(ctx.finding(FindingKind.CONTRADICTION, r, e.declared[0], e, conf, declared,
                                    basis="the entity sheet declares"))
    return n_checked, n_consistent


def _title_only(r: Reference) -> bool:
    """Whether the reference is an honorific and nothing else ("Mr.", "Mme")."""
    return all(mk.kind == EvidenceKind.TITLE for mk in r.marks)


def _nominal_view(e: Entity, ordered: Sequence[Reference], source_ev: Sequence[EvidenceItem]):
    """The entity's evidence from its nominal mentions only (names, titles, role and kinship nouns): the target
    references of such mentions, the source evidence items such mentions carry, and the verdict on those."""
    nominal_marks = {mk.span for m in e.source_mentions if m.kind in NOMINAL_KINDS
                     for mk in m.marks}
    source = [x for x in source_ev if x.span in nominal_marks]
    return ([r for r in ordered if r.mention.kind in NOMINAL_KINDS], source,
            resolve_gender(source) if source else None)


def _entity_kind(e: Entity) -> str:
    """named (a person name among its mentions), roles (a role noun), or other (pronouns only)."""
    kinds = {m.kind for m in tuple(e.source_mentions) + tuple(e.target_mentions)}
    return "named" if "name" in kinds else "roles" if "noun" in kinds else "other"


def _unmarked_only(r: Reference) -> bool:
    """A bare generic masculine ("fue elegida presidente") is evidence, but never flagged alone."""
    return all(mk.rule in NEVER_FLAGS_ALONE for mk in r.marks)


def _checkable(m: Mention, links: dict[str, Link], e: Entity) -> bool:
    """A clitic that may stand for a thing ("lo", "la") is checked only when aligned to an object pronoun."""
    if m.animate:
        return True
    link = links.get(m.id)
    if link is None or link.method != LinkMethod.ALIGNMENT:
        return False
    via = next((s for s in e.source_mentions if s.id == link.via), None)
    return via is not None and via.kind == MentionKind.PRONOUN and via.case in ("acc", "dat")


def _finding(
    kind, r: Reference, expected, e: Entity, conf: float, support, seg_ids, basis: str = "the source says"
) -> Finding:
    found = r.gender
    if kind == FindingKind.CONTRADICTION:
        msg = f"{r.text!r} makes {e.label or e.id} {found}; {basis} {expected}"
    elif kind == FindingKind.INCONSISTENCY:
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
