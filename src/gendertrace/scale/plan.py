"""What a scaled run does, as one small frozen value that can travel to worker processes and cluster nodes.

A ScoringPlan names everything a worker needs to build its own Scorer (languages, parsers, the parse cache,
the alignment mode); each process builds it once (`scorer_for`) and keeps it for every batch it scores.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import partial

from gendertrace.declared.policy import Policy
from gendertrace.declared.sheet import load_entity_sheet
from gendertrace.parse.base import Parser, get_parser
from gendertrace.parse.cache import CachedParser, ParseCache, known_signature
from gendertrace.parse.spacy_backend import expect_languages
from gendertrace.pipeline import Scorer, ScoreSettings
from gendertrace.scale.priors import make_aligner
from gendertrace.settings import DEFAULT_BATCH_DOCS, DEFAULT_MIN_CONFIDENCE

ALIGN_MODES: tuple[str, ...] = ("fixed", "sampled", "frozen")


@dataclass(frozen=True)
class ScoringPlan:
    """The settings of a scaled run; see `gendertrace score --help` for what each one means."""

    src_lang: str
    tgt_lang: str
    min_confidence: float = DEFAULT_MIN_CONFIDENCE
    parser: str = "spacy"
    src_model: str | None = None
    tgt_model: str | None = None
    src_conllu: tuple[str, ...] = ()
    tgt_conllu: tuple[str, ...] = ()
    batch_docs: int = DEFAULT_BATCH_DOCS
    cache_dir: str | None = None  # None: no parse cache
    cache_max_mb: float | None = None
    align_mode: str = "fixed"
    align_priors: str | None = None
    align_threads: int | None = None  # OpenMP threads of eflomal in each worker (None: eflomal's default)
    learn_priors: bool = False
    entity_sheet: str | None = None  # path of the entity sheet (declared pronouns), read by each worker
    policy: Policy = Policy()

    def __post_init__(self) -> None:
        if self.batch_docs < 1:
            raise ValueError(f"batch_docs must be at least 1, not {self.batch_docs}")
        if self.align_mode not in ALIGN_MODES:
            raise ValueError(f"unknown alignment mode {self.align_mode!r} (expected one of {ALIGN_MODES})")
        if self.align_mode == "frozen" and not self.align_priors:
            raise ValueError("frozen alignment needs a priors file (align_priors)")
        if self.learn_priors and self.align_mode != "sampled":
            raise ValueError("alignment priors are learned by the sampled aligner only (align_mode 'sampled')")


def build_scorer(plan: ScoringPlan) -> Scorer:
    """A Scorer for the plan. spaCy pipelines load on the first text the cache cannot answer, not before."""
    cache = ParseCache(plan.cache_dir, plan.cache_max_mb) if plan.cache_dir else None
    settings = ScoreSettings(min_confidence=plan.min_confidence, batch_size=plan.batch_docs,
                             parser=plan.parser, src_model=plan.src_model, tgt_model=plan.tgt_model,
                             entity_sheet=load_entity_sheet(plan.entity_sheet) if plan.entity_sheet else None,
                             policy=plan.policy)
    if plan.parser == "spacy":
        expect_languages((lang, model) for lang, model, conllu in ((plan.src_lang, plan.src_model, plan.src_conllu),
                                                                   (plan.tgt_lang, plan.tgt_model, plan.tgt_conllu))
                         if not conllu)
    src = _side_parser(plan.src_lang, plan.parser, plan.src_model, plan.src_conllu, cache)
    tgt = _side_parser(plan.tgt_lang, plan.parser, plan.tgt_model, plan.tgt_conllu, cache)
    scorer = Scorer(plan.src_lang, plan.tgt_lang, settings, src, tgt)
    scorer.statistical_aligner = make_aligner(plan.align_mode, plan.align_priors, plan.align_threads,
                                              plan.learn_priors, plan.src_lang, plan.tgt_lang)
    return scorer


def _side_parser(lang: str, backend: str, model: str | None, conllu: tuple[str, ...],
                 cache: ParseCache | None) -> Parser:
    if conllu:
        from gendertrace.parse.conllu_backend import ConlluParser

        return ConlluParser(lang, list(conllu))  # already parsed: nothing worth caching
    return CachedParser(lang, partial(get_parser, lang, backend, model), cache,
                        known_signature(backend, lang, model))


_SCORERS: dict[ScoringPlan, Scorer] = {}


def scorer_for(plan: ScoringPlan) -> Scorer:
    """This process's Scorer for the plan, built on first use and kept (pipelines load once per process)."""
    scorer = _SCORERS.get(plan)
    if scorer is None:
        scorer = _SCORERS[plan] = build_scorer(plan)
    return scorer
