"""Entities and their evidence: each source chain with the target mentions linked to it, and a resolved gender.

Source-side evidence outranks the target's own: the gender is resolved from the source when it has any, and only
from the target when the source is silent. Evidence that conflicts within the source lowers the confidence.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace

from gendertrace.coref.sieves import Resolution
from gendertrace.model import Entity, EvidenceItem, Link, Mention
from gendertrace.settings import WEIGHTS
from gendertrace.vocab import MentionKind

# Evidence weight at which a single kind of evidence is fairly strong: rules/scoring/weights.yaml, "resolution".
STRENGTH_SCALE = WEIGHTS.resolution.strength_scale


def dedupe(items: Iterable[EvidenceItem]) -> tuple[EvidenceItem, ...]:
    """One item per located word: two mentions of one chain may share an agreeing word."""
    seen: dict[tuple, EvidenceItem] = {}
    for it in items:
        key = it.span
        if key not in seen or it.weight > seen[key].weight:
            seen[key] = it
    return tuple(sorted(seen.values(), key=lambda e: (e.side != "source", e.seg, e.start)))


@dataclass(frozen=True)
class Verdict:
    gender: str | None
    confidence: float
    basis: str  # "source", "target" or "none"


def resolve_gender(evidence: Sequence[EvidenceItem]) -> Verdict:
    """The gender the evidence supports and how confidently (from the weight by which it leads)."""
    source = [e for e in evidence if e.side == "source"]
    pool, basis = (source, "source") if source else ([e for e in evidence if e.side == "target"], "target")
    if not pool:
        return Verdict(None, 0.0, "none")
    totals: dict[str, float] = {}
    for e in pool:
        totals[e.gender] = totals.get(e.gender, 0.0) + e.weight
    ranked = sorted(totals.items(), key=lambda kv: -kv[1])
    top_gender, top = ranked[0]
    rest = sum(w for _, w in ranked[1:])
    # Confidence grows with the weight by which the leading gender outweighs the others, and saturates:
    # one pronoun alone gives about 0.76, two agreeing words over 0.9, equal evidence on both sides 0.
    return Verdict(top_gender, round(1.0 - math.exp(-(top - rest) / STRENGTH_SCALE), 4), basis)


def build_entities(
    src_res: Resolution,
    tgt_res: Resolution,
    tgt_mentions: Sequence[Mention],
    links: dict[str, Link],
) -> tuple[list[Entity], dict[str, str]]:
    """Entities of one document and the entity id of every target mention."""
    entities: list[Entity] = []
    entity_of_target: dict[str, str] = {}
    by_source_chain: dict[str, list[Mention]] = {}
    unlinked: dict[str, list[Mention]] = {}
    for m in tgt_mentions:
        if m.id in links:
            by_source_chain.setdefault(links[m.id].source_chain, []).append(m)
        else:
            unlinked.setdefault(tgt_res.chain_of[m.id], []).append(m)
    n = 0
    for ch in src_res.chains:
        targets = by_source_chain.get(ch.id, [])
        if not any(m.animate for m in ch.mentions + tuple(t for t in targets if t.kind != MentionKind.ZERO)):
            # Only pronouns that may stand for things ("it", "lo") on both sides: no person is meant. Where the
            # translation says "him" or "she" for such a clitic ("le ho chiesto"), it speaks of a person; a zero
            # subject says nothing of the kind ("it was restored" / "∅ fue restaurada").
            continue
        # A source mark counts as much as its mention is surely part of the chain.
        source_marks = [
            replace(mk, weight=mk.weight * src_res.certainty.get(m.id, 1.0))
            for m in ch.mentions
            for mk in m.marks
        ]
        evidence = dedupe(source_marks + [mk for m in targets for mk in m.marks])
        verdict = resolve_gender(evidence)
        n += 1
        eid = f"E{n}"
        entities.append(
            Entity(
                eid,
                ch.mentions,
                tuple(targets),
                evidence,
                verdict.gender,
                verdict.confidence,
                _label(ch.mentions),
            )
        )
        for m in targets:
            entity_of_target[m.id] = eid
    for _, targets in sorted(unlinked.items(), key=lambda kv: (kv[1][0].seg, kv[1][0].start)):
        if not any(m.animate for m in targets):
            continue
        evidence = dedupe(mk for m in targets for mk in m.marks)
        verdict = resolve_gender(evidence)
        n += 1
        eid = f"E{n}"
        entities.append(
            Entity(eid, (), tuple(targets), evidence, verdict.gender, verdict.confidence, _label(targets))
        )
        for m in targets:
            entity_of_target[m.id] = eid
    return entities, entity_of_target


def _label(mentions: Sequence[Mention]) -> str:
    for kind in ("name", "noun", "pronoun", "zero"):
        for m in mentions:
            if m.kind == kind:
                return m.text
    return ""
