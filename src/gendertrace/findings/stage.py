"""The findings stage: every gendered target reference judged against the document's evidence; statistics."""

from __future__ import annotations

from dataclasses import replace

from gendertrace.analysis import Analysis
from gendertrace.findings.detect import JudgeContext, chain_references, detect_findings


def judge(a: Analysis) -> None:
    """Reads the entities (their target mentions resolved), links and segment evidence; writes `findings`,
    `stats` and each entity's checked and consistent counts."""
    texts = [s.target for s in a.document.segments]
    ctx = JudgeContext(a.links, texts, a.seg_ids, a.context.min_confidence, a.segment_evidence, a.context.policy,
                       chain_references(a.entities, texts))
    findings, stats, per_entity = detect_findings(a.entities, ctx)
    a.findings, a.stats = findings, stats
    a.entities = [replace(e, checked=per_entity.get(e.id, (0, 0))[0], consistent=per_entity.get(e.id, (0, 0))[1])
                  for e in a.entities]
