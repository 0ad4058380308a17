"""The streaming scorer behind `gendertrace score`: read, score and write one batch after another.

Memory holds the batches in flight and nothing that grows with the corpus: documents are read lazily
(`iter_documents`), each result line is written and flushed as soon as every document before it is done, and
only per-document statistics are summed.

Nothing is written before the input has been read through once: every input error (CoNLL-U sentences that a
segment's text lacks included) and every output that would overwrite an input is reported first. Results
then stream into OUT.part, beside OUT, with its signature (marked incomplete) and the digests of the
documents' input rows (see `scale.resume`); only a complete run renames them to OUT, OUT.signature.json and
OUT.digests. A run that is killed or fails therefore leaves OUT and its signature as they were, and
`--resume` continues OUT.part with the settings it started with.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import sys
import tempfile
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.api import Summary
from gendertrace.declared.policy import PACKAGE_NAME_LIST, load_first_names
from gendertrace.errors import GendertraceError, InputError
from gendertrace.io.outputs import check_outputs, replace_into, staged_file, temporary_beside
from gendertrace.io.readers import iter_documents, read_corpus, untranslated_in
from gendertrace.model import Document
from gendertrace.parse.conllu_backend import ConlluParser
from gendertrace.pipeline import Scorer
from gendertrace.scale.executors import DaskExecutor, InlineExecutor, ProcessExecutor
from gendertrace.scale.plan import ScoringPlan, scorer_for
from gendertrace.scale.priors import PriorCounts
from gendertrace.scale.resume import (
    RunFiles,
    completed_records,
    digests_path,
    document_digest,
    kept_digests,
    repair_results,
    settings_differences,
    signature_path,
)
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
    path: str | Path, fmt: str | None = None, tmx_group: str | None = None,
    check: Callable[[Document], None] | None = None,
) -> tuple[Callable[[], Iterator[Document]], int]:
    """A way to read the input's documents again and again, and how many there are.

    Streams when the rows of each document are consecutive; otherwise (rows of one document apart, which the
    input contract allows) the documents are gathered in memory first. Any input error, and any error `check`
    raises on a document, is raised here, before a single result is written.
    """
    try:
        count = _checked_count(iter_documents(path, fmt, tmx_group), check)
        return (lambda: iter_documents(path, fmt, tmx_group)), count
    except InputError as exc:
        if "streaming needs the rows" not in exc.message:
            raise
        docs = read_corpus(path, fmt, tmx_group)  # raises any other error again
        return (lambda: iter(docs)), _checked_count(docs, check)


def _checked_count(docs: Iterable[Document], check: Callable[[Document], None] | None) -> int:
    count = 0
    for doc in docs:
        if check is not None:
            check(doc)
        count += 1
    return count


def preparsed_check(scorer: Scorer, input_path: str | Path) -> Callable[[Document], None] | None:
    """A check that every text of a side given as CoNLL-U has its sentence there (None: no such side).

    Scoring would find a missing sentence only when its batch is parsed, after earlier results were written.
    """
    sides = [(name, parser) for name, parser in (("source", scorer.src_parser), ("target", scorer.tgt_parser))
             if isinstance(parser, ConlluParser)]
    if not sides:
        return None

    def check(doc: Document) -> None:
        for name, parser in sides:
            for seg in doc.segments:
                text = seg.source if name == "source" else seg.target
                try:
                    parser.parse_many([text])
                except InputError:
                    shown = text if len(text) <= 60 else text[:57] + "..."
                    raise InputError(str(input_path), seg.line or None,
                                     f"the {name} of segment {seg.seg_id!r} of document {doc.doc_id!r}, "
                                     f"{shown!r}, is no sentence of the {name} CoNLL-U "
                                     f"({', '.join(Path(p).name for p in parser.paths)}): expected a "
                                     f"'# text' comment with this text") from None

    return check


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
    files = RunFiles.for_output(out_path)
    check_outputs([*files.outputs, ("--save-align-priors", save_priors)],
                  run_inputs(input_path, plan, main_scorer))
    size = plan.batch_docs if plan is not None else main_scorer.settings.batch_size
    documents, total = open_documents(input_path, fmt, tmx_group, preparsed_check(main_scorer, input_path))
    policy = plan.policy if plan is not None else main_scorer.settings.policy
    if policy.first_names:
        load_first_names(policy.first_names)  # read when the first document is scored: a bad list fails now
    signature = dict(main_scorer.signature(), batch_docs=size, alignment=alignment_label(main_scorer),
                     input=str(input_path))

    done = _resume_point(files, signature, total, documents, input_path) if resume else 0
    files.partial.parent.mkdir(parents=True, exist_ok=True)
    _write_json(signature_path(files.partial), dict(signature, state="incomplete"))

    remaining = math.ceil(total / size) - done // size
    if scheduler:
        executor = DaskExecutor(plan, scheduler)  # type: ignore[arg-type]
    elif jobs > 1 and remaining > 1:
        executor = ProcessExecutor(plan, min(jobs, remaining))  # type: ignore[arg-type]
    else:
        executor = InlineExecutor(plan=plan) if scorer is None else InlineExecutor(scorer=scorer)

    report = RunReport(Summary(), resumed_after=done)
    tally = {"untranslated": 0}
    pending: deque[str] = deque()  # digest lines of the documents read but not yet written
    watched = _watched(documents(), files.partial, done, report.summary, tally, pending)
    batches = iter_batches(watched, size, first=done)
    bar = _progress_bar(total, done) if progress else None
    mode = "a" if done else "w"
    try:
        with open(files.partial, mode, encoding="utf-8") as out, \
                open(digests_path(files.partial), mode, encoding="utf-8") as digests:
            for outcome in executor.run(batches):
                drop = max(0, done - outcome.start)  # the part of a batch that an earlier run completed
                for line, stats in zip(outcome.lines[drop:], outcome.stats[drop:], strict=True):
                    digests.write(pending.popleft())  # before its result: a kept result always has a digest
                    digests.flush()
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
    except GendertraceError as exc:
        raise RunFailed(f"{exc} ({out_path} and its signature are as they were; the "
                        f"{report.summary.documents} results written so far are in {files.partial}, which "
                        f"--resume continues)") from exc
    finally:
        if bar is not None:
            bar.close()
    report.executor = executor.describe()
    report.summary.untranslated = tally["untranslated"]
    _finish(files, dict(signature, documents=report.summary.documents))
    if save_priors is not None and report.learned.sentences:
        with staged_file(save_priors) as tmp:
            report.learned.write(tmp)
        report.priors_written = str(save_priors)
    return report


class RunFailed(GendertraceError):
    """A run that stopped after writing some results: they are kept in the partial file for --resume."""


def run_inputs(input_path: str | Path, plan: ScoringPlan | None, scorer: Scorer) -> list[tuple[str, str | None]]:
    """Every file a run reads, named for messages (an output may be none of them)."""
    inputs: list[tuple[str, str | None]] = [("INPUT", str(input_path))]
    for option, parser in (("--src-conllu", scorer.src_parser), ("--tgt-conllu", scorer.tgt_parser)):
        if isinstance(parser, ConlluParser):
            inputs += [(option, p) for p in parser.paths]
    sheet = scorer.settings.entity_sheet
    policy = plan.policy if plan is not None else scorer.settings.policy
    inputs += [("--entities", plan.entity_sheet if plan is not None else sheet.path if sheet else None),
               ("--align-priors", plan.align_priors if plan is not None else None),
               ("the policy's first_names", policy.first_names if policy.first_names != PACKAGE_NAME_LIST
                else None)]
    return inputs


def _resume_point(files: RunFiles, signature: dict, total: int,
                  documents: Callable[[], Iterator[Document]], input_path: str | Path) -> int:
    """How many documents the partial results already hold (made from a complete OUT when there is no
    partial file), after checking they were written with these settings from the same input rows."""
    source = files.partial if files.partial.exists() else files.out
    if not source.exists():
        return 0
    sidecar, digests = signature_path(source), digests_path(source)
    if not sidecar.is_file():
        raise GendertraceError(f"cannot resume {source}: no {sidecar.name} beside it, so the settings of "
                               f"the interrupted run are unknown")
    try:
        before = json.loads(sidecar.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise InputError(str(sidecar), exc.lineno, f"not valid JSON ({exc.msg}); cannot resume") from exc
    differ = settings_differences(before, signature)
    if differ:
        shown = ", ".join(f"{k} ({before.get(k)!r} before, {signature.get(k)!r} now)" for k in differ)
        raise GendertraceError(f"cannot resume {source}: the run was started with other settings: {shown}")
    if not digests.is_file():
        raise GendertraceError(f"cannot resume {source}: no {digests.name} beside it, so the kept results "
                               f"cannot be checked against the input's texts; score afresh without --resume")
    if source == files.out:
        shutil.copyfile(files.out, files.partial)  # OUT itself stays as it is until the run completes
        shutil.copyfile(digests, digests_path(files.partial))
    try:
        done = repair_results(files.partial)
        if done > total:
            raise GendertraceError(f"cannot resume {source}: it holds {done} results but the input has only "
                                   f"{total} documents")
        _check_kept(documents(), source, kept_digests(digests_path(files.partial), done), input_path)
    except GendertraceError:
        if source == files.out:  # the copy was made by this run: leave the folder as it was
            files.partial.unlink(missing_ok=True)
            digests_path(files.partial).unlink(missing_ok=True)
        raise
    return done


def _finish(files: RunFiles, signature: dict) -> None:
    """Rename the complete partial files into place, the signature last (it vouches for the results)."""
    sidecar = temporary_beside(signature_path(files.out))
    sidecar.write_text(json.dumps(signature, indent=2) + "\n", encoding="utf-8")
    replace_into(digests_path(files.partial), digests_path(files.out))
    replace_into(files.partial, files.out)
    replace_into(sidecar, signature_path(files.out))
    signature_path(files.partial).unlink(missing_ok=True)


def _check_kept(docs: Iterable[Document], partial: Path, kept: list[tuple[str, str]],
                input_path: str | Path) -> None:
    """Refuse to resume when a kept result is of another document, or its document's input rows changed."""
    for k, (doc, (doc_id, digest)) in enumerate(zip(docs, kept, strict=False)):  # kept: a prefix of docs
        if doc_id != doc.doc_id:
            raise GendertraceError(
                f"cannot resume {partial}: its line {k + 1} is document {doc_id!r} but the input's "
                f"document {k + 1} is {doc.doc_id!r} (results of another input?)"
            )
        if digest != document_digest(doc):
            line = doc.segments[0].line if doc.segments else 0
            where = f" ({input_path}:{line})" if line else f" ({input_path})"
            raise GendertraceError(
                f"cannot resume {partial}: the input rows of document {doc.doc_id!r}{where} changed since "
                f"it was scored; score afresh without --resume"
            )


def _watched(docs: Iterable[Document], partial: Path, done: int, summary: Summary,
             tally: dict[str, int], pending: deque[str]) -> Iterator[Document]:
    """The input documents, counted: the first `done` (checked by `_check_kept`) are summed from their kept
    results, the digest line of each later one is queued for writing."""
    records = completed_records(partial) if done else iter(())
    for k, doc in enumerate(docs):
        tally["untranslated"] += len(untranslated_in(doc))
        if k < done:
            summary.add_stats(next(records)[1])
        else:
            pending.append(f"{doc.doc_id}\t{document_digest(doc)}\n")
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
