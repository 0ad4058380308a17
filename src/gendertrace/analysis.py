"""One document while it is scored: both sides' parses, mentions and chains, the links between them, the
entities, evidence and findings. Every stage of the scorer reads and writes this object (docs/design.md).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from gendertrace.model import (
    Chain,
    Document,
    DocumentResult,
    DocumentStats,
    Entity,
    EvidenceItem,
    Finding,
    Link,
    Mention,
    ParsedText,
    Side,
)
from gendertrace.results import aligned_source_words
from gendertrace.rules import LanguageRules

if TYPE_CHECKING:
    from gendertrace.coref.sieves import Resolution
    from gendertrace.declared.policy import Policy
    from gendertrace.declared.sheet import EntitySheet
    from gendertrace.link.align import Alignment


@dataclass(frozen=True)
class ScoringContext:
    """What a direction's stages need besides the document: languages, rules, lexicon and settings."""

    src_lang: str
    tgt_lang: str
    src_rules: LanguageRules
    tgt_rules: LanguageRules
    lexicon: dict[str, frozenset[str]]
    min_confidence: float
    policy: Policy
    entity_sheet: EntitySheet | None = None
    recognisers: tuple[bool, bool] = (True, True)  # whether each side's parser runs a named-entity recogniser


@dataclass
class SideAnalysis:
    """One side of a document: its parses, the person names known to it, its mentions and chains."""

    side: Side
    parses: tuple[ParsedText, ...]
    rules: LanguageRules
    names: set[str] = field(default_factory=set)  # name keys that count as person names on this side
    mentions: list[Mention] = field(default_factory=list)
    resolution: Resolution | None = None  # set by coreference

    @property
    def chains(self) -> list[Chain]:
        return self.resolution.chains if self.resolution else []

    def resolved(self) -> list[Mention]:
        """The mentions with their chain, antecedent and certainty set (after coreference), in extraction
        order."""
        if self.resolution is None:
            return list(self.mentions)
        by_id = {m.id: m for c in self.resolution.chains for m in c.mentions}
        return [by_id[m.id] for m in self.mentions]


@dataclass
class Analysis:
    """Everything known about one document while it is scored, filled stage by stage."""

    document: Document
    source: SideAnalysis
    target: SideAnalysis
    alignments: Sequence[Alignment]  # per segment, (source token, target token) pairs
    context: ScoringContext
    links: dict[str, Link] = field(default_factory=dict)  # target mention id -> its link to a source chain
    entities: list[Entity] = field(default_factory=list)
    # Per source segment, the gender marks of its person mentions (clitics that may stand for things aside).
    segment_evidence: list[list[EvidenceItem]] = field(default_factory=list)
    findings: list[Finding] = field(default_factory=list)
    stats: DocumentStats | None = None

    @property
    def seg_ids(self) -> list[str]:
        return [s.seg_id for s in self.document.segments]

    def side(self, side: Side) -> SideAnalysis:
        return self.source if side == "source" else self.target

    def result(self) -> DocumentResult:
        """The document's result line (model.DocumentResult)."""
        c = self.context
        assert self.stats is not None, "the findings stage has not run"
        return DocumentResult(self.document.doc_id, c.src_lang, c.tgt_lang, tuple(self.entities),
                              tuple(self.findings), self.stats, tuple(self.source.chains) + tuple(self.target.chains),
                              links=dict(self.links),
                              aligned=aligned_source_words(self.target.mentions, self.source.parses, self.alignments))


# A stage reads the analysis and writes its part of it; the scorer runs its stages in order.
Stage = Callable[[Analysis], None]
