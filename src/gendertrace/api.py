"""Python API with the powers of the command line: score a file, summarise, explain one document."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

from gendertrace.model import Document, DocumentResult
from gendertrace.pipeline import Scorer
from gendertrace.results import Summary, write_results

if TYPE_CHECKING:
    from gendertrace.scale.plan import ScoringPlan
    from gendertrace.scale.run import RunReport


def score_documents(scorer: Scorer, docs: list[Document], progress: bool = False) -> list[DocumentResult]:
    """Score documents in memory; results in input order."""
    return list(_with_progress(scorer, docs, progress))


def _with_progress(scorer: Scorer, docs: list[Document], progress: bool):
    if not progress:
        yield from scorer.score(docs)
        return
    from tqdm import tqdm

    with tqdm(total=len(docs), unit="doc", desc="scoring", leave=False) as bar:
        yield from scorer.score(docs, progress=bar.update)


def score_file(
    input_path,
    out_path,
    scorer: Scorer | ScoringPlan,
    fmt: str | None = None,
    progress: bool = False,
    *,
    jobs: int = 1,
    scheduler: str | None = None,
    resume: bool = False,
    save_align_priors: str | Path | None = None,
    tmx_group: str | None = None,
) -> Summary:
    """Read INPUT, score it, write OUT (JSONL) and OUT.signature.json; return the corpus summary.

    Documents stream through in batches (`scorer.settings.batch_size`, or the plan's `batch_docs`); each
    result line is written as soon as the documents before it are done. With a `ScoringPlan` instead of a
    Scorer, the batches can run in `jobs` worker processes or on the dask cluster at `scheduler` (see
    gendertrace.scale); `resume` continues an interrupted run, and `save_align_priors` writes the alignment
    statistics the run learned. Worker processes are spawned, so a script that uses `jobs` > 1 must call
    this under `if __name__ == "__main__":`, as for any spawned multiprocessing.
    `tmx_group` names the TMX `<prop type="...">` whose value groups translation units into documents (by
    default a TMX file is one document). The run's other facts (parse cache hits, executor) are in
    `score_file_report`.
    """
    return score_file_report(input_path, out_path, scorer, fmt, progress, jobs=jobs, scheduler=scheduler,
                             resume=resume, save_align_priors=save_align_priors, tmx_group=tmx_group).summary


def score_file_report(
    input_path,
    out_path,
    scorer: Scorer | ScoringPlan,
    fmt: str | None = None,
    progress: bool = False,
    *,
    jobs: int = 1,
    scheduler: str | None = None,
    resume: bool = False,
    save_align_priors: str | Path | None = None,
    tmx_group: str | None = None,
) -> RunReport:
    """`score_file`, returning the whole run report (summary, executor, cache hits, learned priors)."""
    from gendertrace.scale.plan import ScoringPlan
    from gendertrace.scale.run import score_stream

    kind = {"plan": scorer} if isinstance(scorer, ScoringPlan) else {"scorer": scorer}
    return score_stream(input_path, out_path, fmt=fmt, jobs=jobs, scheduler=scheduler, resume=resume,
                        progress=progress, save_priors=save_align_priors, tmx_group=tmx_group, **kind)


def explain_document(scorer: Scorer, doc: Document) -> str:
    """A terminal rendering of one document: segments, chains, entities with evidence, findings."""
    result = next(iter(scorer.score([doc])))
    lines = [f"document {doc.doc_id}  ({scorer.src_lang} -> {scorer.tgt_lang})", ""]
    for s in doc.segments:
        lines.append(f"  [{s.seg_id}] src: {s.source}")
        lines.append(f"  {' ' * (len(s.seg_id) + 2)} tgt: {s.target}")
    from gendertrace.mentions.extract import neutral_forms

    parsed = scorer.parse([doc])[0]
    neutral = [f"  [{s.seg_id}] {text!r} ({rule})" for s, p in zip(doc.segments, parsed.target, strict=True)
               for _, _, text, rule in neutral_forms(p, scorer.tgt_rules)]
    lines += ["", "neutral forms (target):" if neutral else "neutral forms (target): none"] + neutral
    lines += ["", "policy:"] + [f"  {x}" for x in scorer.settings.policy.describe()]
    sheet = scorer.settings.entity_sheet
    if sheet is not None:
        lines += ["", f"declared (entity sheet {sheet.path or '-'}, digest {sheet.digest}; "
                      "declarations outrank "
                      "all other evidence):"]
        lines += [f"  {p.name}: {p.describe()}" for p in sheet.persons]
    lines += ["", "chains:"]
    for c in result.chains:
        lines.append(f"  {c.id} ({c.side}): " + " | ".join(
            f"{m.text}@{doc.segments[m.seg].seg_id}" + (" (zero subject)" if m.kind == "zero" else "")
            for m in c.mentions))
    lines += ["", "entities:"]
    for e in result.entities:
        g = e.gender or "unknown"
        declared = f", declared: {' or '.join(e.declared)}" if e.declared else ""
        lines.append(f"  {e.id} {e.label!r}: {g} (confidence {e.confidence:.2f}{declared})")
        for ev in e.evidence:
            lines.append(f"      {ev.side:<6} [{ev.seg_id}] {ev.text!r:<18} {ev.gender:<5} {ev.kind} "
                         f"({ev.rule}, weight {ev.weight:.2f})")
    lines += ["", "findings:" if result.findings else "findings: none"]
    for f in result.findings:
        lines.append(f"  {f.kind} [{f.seg_id}] {f.start}-{f.end} {f.text!r}: expected {f.expected}, found "
                     f"{f.found}, confidence {f.confidence:.2f} ({f.entity})")
    s = result.stats
    lines += ["", f"checked {s.checked} of {s.target_references} gendered target references; "
                  f"{s.consistent} consistent"]
    return "\n".join(lines)


__all__ = ["Summary", "explain_document", "score_documents", "score_file", "score_file_report", "write_results"]
