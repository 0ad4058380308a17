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
    """What a worker sends back: output lines and statistics of consecutive documents from `start` on, in
    input order (a whole batch from worker processes, one document at a time in this process)."""

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


def iter_outcomes(scorer: Scorer, batch: Batch) -> Iterator[BatchOutcome]:
    """Parse and align one batch with the given Scorer, then yield each document's outcome as soon as it is
    scored (the first outcome also carries the batch's parsing counts and learned alignment counts)."""
    counters = [p for p in (scorer.src_parser, scorer.tgt_parser) if isinstance(p, CachedParser)]
    before = [(p.asked, p.hits, p.parsed) for p in counters]
    parsed = scorer.parse(batch.documents)
    aligned = iter(scorer.score_parsed_batch(parsed))  # aligns the whole batch, then scores one by one
    first = next(aligned, None)
    if first is None:
        return
    take = getattr(scorer.statistical_aligner, "take_learned", None)
    yield BatchOutcome(
        index=batch.index,
        start=batch.start,
        lines=(json.dumps(first.to_json(), ensure_ascii=False),),
        stats=(first.stats,),
        learned=take() if take else None,
        sides=sum(p.asked for p in counters) - sum(b[0] for b in before),
        cache_hits=sum(p.hits for p in counters) - sum(b[1] for b in before),
        parsed=sum(p.parsed for p in counters) - sum(b[2] for b in before),
    )
    for k, result in enumerate(aligned, 1):
        yield BatchOutcome(batch.index, batch.start + k, (json.dumps(result.to_json(), ensure_ascii=False),),
                           (result.stats,))


def score_batch_with(scorer: Scorer, batch: Batch) -> BatchOutcome:
    """Parse, align and score one batch with the given Scorer; one outcome for the whole batch."""
    parts = list(iter_outcomes(scorer, batch))
    if not parts:
        return BatchOutcome(batch.index, batch.start, (), ())
    head = parts[0]
    return BatchOutcome(
        index=batch.index,
        start=batch.start,
        lines=tuple(line for o in parts for line in o.lines),
        stats=tuple(st for o in parts for st in o.stats),
        learned=head.learned,
        sides=head.sides,
        cache_hits=head.cache_hits,
        parsed=head.parsed,
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
