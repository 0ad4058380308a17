"""The unit of work of a scaled run: one batch of consecutive documents, parsed, aligned and scored together.

A batch is what eflomal is trained on, so its composition (the documents from `start` to `start + size` of the
input) depends only on the input and the batch size, never on how many processes or machines share the work.
"""

from __future__ import annotations

import json
import threading
from collections.abc import Iterable, Iterator
from dataclasses import dataclass

from gendertrace.errors import GendertraceError
from gendertrace.model import Document, DocumentStats
from gendertrace.parse.cache import CachedParser
from gendertrace.pipeline import Scorer
from gendertrace.scale.plan import ScoringPlan, scorer_for
from gendertrace.scale.priors import PriorCounts


class BatchError(GendertraceError):
    """A batch failed in a worker; carries the worker's message (plain, so that it crosses processes)."""


@dataclass(frozen=True)
class Batch:
    index: int
    start: int  # position of the first document in the input
    documents: tuple[Document, ...]


@dataclass(frozen=True)
class BatchOutcome:
    """What a worker sends back: each document's output line and statistics, in input order."""

    index: int
    start: int
    lines: tuple[str, ...]
    stats: tuple[DocumentStats, ...]
    learned: PriorCounts | None = None
    sides: int = 0  # segment sides the parsers were asked for
    cache_hits: int = 0  # of those, answered by the parse cache
    parsed: int = 0  # distinct texts parsed


def iter_batches(documents: Iterable[Document], size: int, first: int = 0) -> Iterator[Batch]:
    """Cut a document stream into batches of `size` at fixed input positions (0, size, 2*size...), leaving out
    the batches that end at or before position `first` (already done)."""
    run: list[Document] = []
    start = 0
    for doc in documents:
        run.append(doc)
        if len(run) == size:
            if start + size > first:
                yield Batch(start // size, start, tuple(run))
            start += size
            run = []
    if run and start + len(run) > first:
        yield Batch(start // size, start, tuple(run))


def score_batch_with(scorer: Scorer, batch: Batch) -> BatchOutcome:
    """Parse, align and score one batch with the given Scorer."""
    counters = [p for p in (scorer.src_parser, scorer.tgt_parser) if isinstance(p, CachedParser)]
    before = [(p.asked, p.hits, p.parsed) for p in counters]
    results = list(scorer.score_parsed_batch(scorer.parse(batch.documents)))
    take = getattr(scorer.statistical_aligner, "take_learned", None)
    return BatchOutcome(
        index=batch.index,
        start=batch.start,
        lines=tuple(json.dumps(r.to_json(), ensure_ascii=False) for r in results),
        stats=tuple(r.stats for r in results),
        learned=take() if take else None,
        sides=sum(p.asked for p in counters) - sum(b[0] for b in before),
        cache_hits=sum(p.hits for p in counters) - sum(b[1] for b in before),
        parsed=sum(p.parsed for p in counters) - sum(b[2] for b in before),
    )


# A Scorer (its pipelines, its cache connection) serves one batch at a time; a cluster worker that runs
# several threads therefore scores its batches one after another.
_ONE_AT_A_TIME = threading.Lock()


def score_batch(plan: ScoringPlan, batch: Batch) -> BatchOutcome:
    """Score one batch in this process with the plan's Scorer (the task workers and cluster nodes run)."""
    try:
        with _ONE_AT_A_TIME:
            return score_batch_with(scorer_for(plan), batch)
    except GendertraceError as exc:
        # Some of the tool's errors take several constructor arguments and would not survive pickling.
        first, last = batch.documents[0].doc_id, batch.documents[-1].doc_id
        raise BatchError(f"{exc} (batch {batch.index}, documents {first}..{last})") from None
