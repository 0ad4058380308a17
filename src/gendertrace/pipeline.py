"""The scoring pipeline: documents in, one DocumentResult per document out, in input order."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, field
from functools import cached_property

from gendertrace._version import __version__
from gendertrace.analysis import Analysis, ScoringContext, SideAnalysis, Stage
from gendertrace.coref.stage import resolve_coreference
from gendertrace.declared.policy import Policy
from gendertrace.declared.sheet import EntitySheet
from gendertrace.evidence.stage import gather_evidence
from gendertrace.findings.stage import judge
from gendertrace.link.align import anchor_alignment, merge
from gendertrace.link.stage import link_sides
from gendertrace.link.wordpairs import default_aligner
from gendertrace.mentions.names import recognises
from gendertrace.mentions.stage import find_mentions
from gendertrace.model import Document, DocumentResult, ParsedDocument, ParsedText
from gendertrace.parse.base import Parser, get_parser
from gendertrace.parse.spacy_backend import expect_languages
from gendertrace.rules import LanguageRules, load_lexicon, load_rules, rules_digest
from gendertrace.settings import DEFAULT_BATCH_DOCS, DEFAULT_MIN_CONFIDENCE, WEIGHTS, weights_digest

# The scorer's stages, in order (docs/design.md): mentions, coreference, links, evidence, findings.
STAGES: tuple[Stage, ...] = (find_mentions, resolve_coreference, link_sides, gather_evidence, judge)


@dataclass
class ScoreSettings:
    """Everything that changes a score; recorded in the run signature."""

    min_confidence: float = DEFAULT_MIN_CONFIDENCE
    batch_size: int = DEFAULT_BATCH_DOCS  # documents whose segments are parsed and aligned together
    parser: str = "spacy"
    src_model: str | None = None
    tgt_model: str | None = None
    entity_sheet: EntitySheet | None = None  # declared pronouns and genders (docs/entities.md)
    policy: Policy = field(default_factory=Policy)


def pronoun_pairs(src: LanguageRules, tgt: LanguageRules) -> dict[tuple[str, str], float]:
    """Pronoun correspondences for the aligner, scored: same type is required and number must be compatible;
    equal case and equal gender score higher. Gender only ranks: a wrongly gendered pronoun still pairs."""
    pairs: dict[tuple[str, str], float] = {}
    w = WEIGHTS.pronoun_pairs
    for a, fa in src.pronouns.items():
        for b, fb in tgt.pronouns.items():
            best = None
            for x in fa:
                for y in fb:
                    if x.type != y.type or x.person != y.person or not (
                            x.number == y.number or None in (x.number, y.number)):
                        continue
                    # Object cases pair with each other: English "him" serves as both (objective case), and a
                    # dative clitic often translates as a direct object ("le permite" / "allowed him").
                    if x.case and y.case and x.case != y.case and {x.case, y.case} != {"acc", "dat"}:
                        continue
                    score = w.base + (w.same_case if x.case and x.case == y.case else 0.0)
                    score += w.same_gender if x.gender and x.gender == y.gender else 0.0
                    # A pronoun that stands only for persons pairs before a clitic that may stand for a thing
                    # ("la elegí a ella" / "I chose her": her is ella, the doubled clitic la is the same).
                    score -= w.thing_penalty if x.animate is False or y.animate is False else 0.0
                    best = score if best is None else max(best, score)
            if best is not None:
                pairs[(a, b)] = best
    return pairs


class Scorer:
    """Scores translated documents for one language direction.

    Parsers default to the spaCy pipelines; pass `src_parser`/`tgt_parser` (e.g. a ConlluParser) to use
    pre-parsed input.
    """

    def __init__(
        self,
        src_lang: str,
        tgt_lang: str,
        settings: ScoreSettings | None = None,
        src_parser: Parser | None = None,
        tgt_parser: Parser | None = None,
    ) -> None:
        self.src_lang, self.tgt_lang = src_lang, tgt_lang
        self.settings = settings or ScoreSettings()
        self.src_rules = load_rules(src_lang)
        self.tgt_rules = load_rules(tgt_lang)
        self.lexicon = load_lexicon(src_lang, tgt_lang)
        self.pairs = pronoun_pairs(self.src_rules, self.tgt_rules)
        s = self.settings
        if s.parser == "spacy":
            expect_languages(side for side, given in (((src_lang, s.src_model), src_parser),
                                                      ((tgt_lang, s.tgt_model), tgt_parser)) if given is None)
        self.src_parser = src_parser or get_parser(src_lang, s.parser, s.src_model)
        self.tgt_parser = tgt_parser or get_parser(tgt_lang, s.parser, s.tgt_model)
        # The stages, in order: each reads and writes the document's Analysis (docs/design.md).
        self.stages: list[Stage] = list(STAGES)
        # Hook: the batch's statistical aligner, by default a fixed model that aligns each segment on its own
        # (deterministic); gendertrace.scale swaps in eflomal sampled per batch or a frozen model.
        self.statistical_aligner: Callable[[Sequence[ParsedText], Sequence[ParsedText]], list | None] = (
            default_aligner(src_lang, tgt_lang)
        )

    def signature(self) -> dict:
        return {
            "tool": f"gendertrace {__version__}",
            "rules": rules_digest(),
            "weights": weights_digest(),
            "src": f"{self.src_lang}:{self.src_parser.signature()}",
            "tgt": f"{self.tgt_lang}:{self.tgt_parser.signature()}",
            "min_confidence": self.settings.min_confidence,
            "policy": self.settings.policy.to_json(),
            "entity_sheet": self.settings.entity_sheet.digest if self.settings.entity_sheet else None,
            "alignment": getattr(self.statistical_aligner, "label", "custom"),
        }

    def parse(self, docs: Sequence[Document]) -> list[ParsedDocument]:
        sources = self.src_parser.parse_many([s.source for d in docs for s in d.segments])
        targets = self.tgt_parser.parse_many([s.target for d in docs for s in d.segments])
        out, k = [], 0
        for d in docs:
            n = len(d.segments)
            out.append(ParsedDocument(d, tuple(sources[k:k + n]), tuple(targets[k:k + n])))
            k += n
        return out

    def score(
        self, docs: Iterable[Document], progress: Callable[[int], None] | None = None
    ) -> Iterator[DocumentResult]:
        """Score documents batch by batch, yielding results in input order."""
        batch: list[Document] = []
        for d in docs:
            batch.append(d)
            if len(batch) >= self.settings.batch_size:
                yield from self._score_batch(batch, progress)
                batch = []
        if batch:
            yield from self._score_batch(batch, progress)

    def _score_batch(self, docs, progress) -> Iterator[DocumentResult]:
        yield from self.score_parsed_batch(self.parse(docs), progress)

    def align(self, parsed: Sequence[ParsedDocument]) -> list[list]:
        """Word alignments of every segment of a batch: statistical over the batch, merged with anchors."""
        flat_src = [p for pd in parsed for p in pd.source]
        flat_tgt = [p for pd in parsed for p in pd.target]
        stat = self.statistical_aligner(flat_src, flat_tgt)
        out, k = [], 0
        for pd in parsed:
            aligns = []
            for j in range(len(pd.document.segments)):
                strong, weak = anchor_alignment(pd.source[j], pd.target[j], self.lexicon, self.pairs,
                                                self.src_rules, self.tgt_rules)
                aligns.append(merge(stat[k + j] if stat else None, strong, weak))
            k += len(pd.document.segments)
            out.append(aligns)
        return out

    def score_parsed_batch(
        self, parsed: Sequence[ParsedDocument], progress: Callable[[int], None] | None = None
    ) -> Iterator[DocumentResult]:
        """Score already parsed documents (aligned together as one batch), in order."""
        for pd, aligns in zip(parsed, self.align(parsed), strict=True):
            yield self.score_parsed(pd, aligns)
            if progress:
                progress(1)

    @cached_property
    def _recognisers(self) -> tuple[bool, bool]:
        """Whether the source and the target parser run a named-entity recogniser (asked once)."""
        return recognises(self.src_parser), recognises(self.tgt_parser)

    def context(self) -> ScoringContext:
        """What this direction's stages need besides the document."""
        s = self.settings
        return ScoringContext(self.src_lang, self.tgt_lang, self.src_rules, self.tgt_rules, self.lexicon,
                              s.min_confidence, s.policy, s.entity_sheet, self._recognisers)

    def analyse(self, pd: ParsedDocument, alignments) -> Analysis:
        """Run every stage on one parsed document given its per-segment word alignments; the filled analysis."""
        a = Analysis(pd.document, SideAnalysis("source", pd.source, self.src_rules),
                     SideAnalysis("target", pd.target, self.tgt_rules), alignments, self.context())
        for stage in self.stages:
            stage(a)
        return a

    def score_parsed(self, pd: ParsedDocument, alignments) -> DocumentResult:
        """Score one parsed document given its per-segment word alignments."""
        return self.analyse(pd, alignments).result()
