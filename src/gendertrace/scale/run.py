"""The streaming scorer behind `gendertrace score`: read, score and write one batch after another.

Memory holds the batches in flight and nothing that grows with the corpus: documents are read lazily
(`iter_documents`), each result line is written and flushed as soon as every document before it is done, and
only per-document statistics are summed. The signature sidecar is written before the first result (marked
incomplete) and again at the end, so an interrupted run can be resumed with the settings it started with.
"""

from __future__ import annotations

import json
import math
import os
import sys
import tempfile
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.errors import GendertraceError, InputError
from gendertrace.io.readers import iter_documents, read_corpus, untranslated_in
from gendertrace.model import Document
from gendertrace.pipeline import Scorer
from gendertrace.results import Summary
from gendertrace.scale.executors import DaskExecutor, InlineExecutor, ProcessExecutor
from gendertrace.scale.plan import ScoringPlan, scorer_for
from gendertrace.scale.priors import PriorCounts
from gendertrace.scale.resume import completed_records, repair_results, settings_differences
from gendertrace.scale.work import iter_batches

DEFAULT_ALIGNMENT = "eflomal sampled per batch"


@dataclass
class RunReport:
    """What a run did besides writing its results."""

    summary: Summary
    executor: str = ""
    resumed_after: int = 0  # documents already complete in OUT when the run started
    sides: int = 0  # segment sides (sources and targets) scored, pre-parsed CoNLL-U sides aside
    cache_hits: int = 0  # of those, answered by the parse cache
    parsed: int = 0  # distinct texts parsed (texts repeated within a batch are parsed once)
    learned: PriorCounts = field(default_factory=PriorCounts)
    priors_written: str | None = None


def open_documents(
    path: str | Path, fmt: str | None = None, tmx_group: str | None = None
) -> tuple[Callable[[], Iterator[Document]], int]:
    """A way to read the input's documents again and again, and how many there are.

    Streams when the rows of each document are consecutive; otherwise (rows of one document apart, which the
    input contract allows) the documents are gathered in memory first. Any other input error is raised here,
    before a single result is written.
    """
    try:
        count = sum(1 for _ in iter_documents(path, fmt, tmx_group))
        return (lambda: iter_documents(path, fmt, tmx_group)), count
    except InputError:
        docs = read_corpus(path, fmt, tmx_group)  # raises the same error again unless the rows were only apart
        return (lambda: iter(docs)), len(docs)


def alignment_label(scorer: Scorer) -> str:
    return getattr(scorer.statistical_aligner, "label", DEFAULT_ALIGNMENT)


def score_stream(
    input_path: str | Path,
    out_path: str | Path,
    *,
    plan: ScoringPlan | None = None,
    scorer: Scorer | None = None,
    fmt: str | None = None,
    jobs: int = 1,
    scheduler: str | None = None,
    resume: bool = False,
    progress: bool = False,
    save_priors: str | Path | None = None,
    tmx_group: str | None = None,
) -> RunReport:
    """Score INPUT into OUT (JSONL, input order) and OUT.signature.json; see the module docstring.

    Give a `plan` (any executor) or a ready `scorer` (this process only). `jobs` > 1 runs batches in that many
    worker processes, `scheduler` on a dask cluster; `resume` continues the results already in OUT.
    """
    if (plan is None) == (scorer is None):
        raise ValueError("give a plan or a scorer")
    if scorer is not None and (jobs > 1 or scheduler):
        raise ValueError("worker processes and clusters build their own Scorer: give a ScoringPlan")
    main_scorer = scorer if scorer is not None else scorer_for(plan)  # type: ignore[arg-type]
    size = plan.batch_docs if plan is not None else main_scorer.settings.batch_size
    documents, total = open_documents(input_path, fmt, tmx_group)
    out_path = Path(out_path)
    out_path.parent.mkdir(parents=True, exist_ok=True)
    sidecar = Path(str(out_path) + ".signature.json")
    signature = dict(main_scorer.signature(), batch_docs=size, alignment=alignment_label(main_scorer),
                     input=str(input_path))

    done = _resume_point(out_path, sidecar, signature, total) if resume and out_path.exists() else 0
    _write_json(sidecar, dict(signature, state="incomplete"))

    remaining = math.ceil(total / size) - done // size
    if scheduler:
        executor = DaskExecutor(plan, scheduler)  # type: ignore[arg-type]
    elif jobs > 1 and remaining > 1:
        executor = ProcessExecutor(plan, min(jobs, remaining))  # type: ignore[arg-type]
    else:
        executor = InlineExecutor(plan=plan) if scorer is None else InlineExecutor(scorer=scorer)

    report = RunReport(Summary(), resumed_after=done)
    tally = {"untranslated": 0}
    batches = iter_batches(_watched(documents(), out_path, done, report.summary, tally), size, first=done)
    bar = _progress_bar(total, done) if progress else None
    try:
        with open(out_path, "a" if done else "w", encoding="utf-8") as out:
            for outcome in executor.run(batches):
                drop = max(0, done - outcome.start)  # the part of a batch that an earlier run completed
                for line, stats in zip(outcome.lines[drop:], outcome.stats[drop:], strict=True):
                    out.write(line + "\n")
                    out.flush()
                    report.summary.add_stats(stats)
                    if bar is not None:
                        bar.update(1)
                report.sides += outcome.sides
                report.cache_hits += outcome.cache_hits
                report.parsed += outcome.parsed
                if outcome.learned is not None:
                    report.learned.merge(outcome.learned)
    finally:
        if bar is not None:
            bar.close()
    report.executor = executor.describe()
    report.summary.untranslated = tally["untranslated"]
    _write_json(sidecar, dict(signature, documents=report.summary.documents))
    if save_priors is not None and report.learned.sentences:
        report.learned.write(save_priors)
        report.priors_written = str(save_priors)
    return report


def _resume_point(out_path: Path, sidecar: Path, signature: dict, total: int) -> int:
    """How many documents OUT already holds, after checking it was written with the same settings."""
    if not sidecar.is_file():
        raise GendertraceError(f"cannot resume {out_path}: no {sidecar.name} beside it, so the settings of "
                               f"the interrupted run are unknown")
    try:
        before = json.loads(sidecar.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise InputError(str(sidecar), exc.lineno, f"not valid JSON ({exc.msg}); cannot resume") from exc
    differ = settings_differences(before, signature)
    if differ:
        shown = ", ".join(f"{k} ({before.get(k)!r} before, {signature.get(k)!r} now)" for k in differ)
        raise GendertraceError(f"cannot resume {out_path}: the run was started with other settings: {shown}")
    done = repair_results(out_path)
    if done > total:
        raise GendertraceError(f"cannot resume {out_path}: it holds {done} results but the input has only "
                               f"{total} documents")
    return done


def _watched(docs: Iterable[Document], out_path: Path, done: int, summary: Summary,
             tally: dict[str, int]) -> Iterator[Document]:
    """The input documents, counted; the first `done` are checked against OUT's lines and summed from them."""
    records = completed_records(out_path) if done else iter(())
    for k, doc in enumerate(docs):
        tally["untranslated"] += len(untranslated_in(doc))
        if k < done:
            doc_id, stats = next(records)
            if doc_id != doc.doc_id:
                raise GendertraceError(
                    f"cannot resume {out_path}: its line {k + 1} is document {doc_id!r} but the input's "
                    f"document {k + 1} is {doc.doc_id!r} (results of another input?)"
                )
            summary.add_stats(stats)
        yield doc


def _progress_bar(total: int, done: int):
    from tqdm import tqdm

    return tqdm(total=total, initial=done, unit="doc", desc="scoring", leave=False, file=sys.stderr)


def _write_json(path: Path, obj: dict) -> None:
    """Write a small JSON file atomically (a rename), so a kill never leaves half of it."""
    fd, tmp = tempfile.mkstemp(prefix=path.name + ".", suffix=".part", dir=path.parent)
    with os.fdopen(fd, "w", encoding="utf-8") as f:
        f.write(json.dumps(obj, indent=2) + "\n")
    os.chmod(tmp, 0o644)  # mkstemp makes it private; a results sidecar is not
    os.replace(tmp, path)
