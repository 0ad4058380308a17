"""The evidence stage: entities (a source chain and the target mentions linked to it), their evidence and
resolved gender, declarations from the entity sheet, and each source segment's gender marks."""

from __future__ import annotations

from gendertrace.analysis import Analysis
from gendertrace.declared.apply import apply_declarations
from gendertrace.evidence.resolve import build_entities, dedupe


def gather_evidence(a: Analysis) -> None:
    """Reads both sides' chains, the target mentions and the links; writes `entities` and `segment_evidence`."""
    c = a.context
    entities, _ = build_entities(a.source.resolution, a.target.resolution, a.target.resolved(), a.links)
    if c.entity_sheet is not None or c.policy.first_names:
        entities = apply_declarations(entities, c.entity_sheet, c.src_lang, c.tgt_lang, a.seg_ids,
                                      c.policy.first_names)
    a.entities = entities
    # Per source segment, the gender marks of its person mentions (clitics that may stand for things aside).
    segment_evidence: list[list] = [[] for _ in a.document.segments]
    for m in a.source.mentions:
        if m.animate:
            segment_evidence[m.seg].extend(m.marks)
    a.segment_evidence = [list(dedupe(ev)) for ev in segment_evidence]
