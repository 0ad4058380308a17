"""The findings stage: every gendered target reference judged against the document's evidence; statistics."""

from __future__ import annotations

from dataclasses import replace

from gendertrace.analysis import Analysis
from gendertrace.findings.detect import detect_findings


def judge(a: Analysis) -> None:
    """Reads the entities, links, target chains and segment evidence; writes `findings`, `stats` and each
    entity's checked and consistent counts."""
    tgt = a.target.resolution
    findings, stats, per_entity = detect_findings(
        a.entities, a.links, [s.target for s in a.document.segments], a.seg_ids, tgt.certainty,
        a.context.min_confidence, tgt.chain_of, a.segment_evidence, a.context.policy,
    )
    a.findings, a.stats = findings, stats
    a.entities = [replace(e, checked=per_entity.get(e.id, (0, 0))[0], consistent=per_entity.get(e.id, (0, 0))[1])
                  for e in a.entities]
