"""Command line: `gendertrace score`, `explain`, `demo` and `bench`."""

from __future__ import annotations

import sys
from dataclasses import replace
from pathlib import Path

import click

from gendertrace import __version__
from gendertrace.errors import GendertraceError

# Exit statuses of `score --fail-under`: the rate is below the bar; nothing was checkable (no rate at all).
GATE_EXIT = 3
NOTHING_CHECKED_EXIT = 4



def _default(name: str):
    """A default read from the weights file when the command runs (a bad file is then a one-line error)."""
    def read():
        from gendertrace.settings import WEIGHTS

        return getattr(WEIGHTS.defaults, name)

    return read


def _fail(exc: Exception) -> None:
    raise click.ClickException(str(exc)) from exc


def _scorer(src_lang, tgt_lang, parser, src_model, tgt_model, src_conllu, tgt_conllu, min_confidence):
    from gendertrace.parse.conllu_backend import ConlluParser
    from gendertrace.pipeline import Scorer, ScoreSettings

    settings = ScoreSettings(min_confidence=min_confidence, parser=parser, src_model=src_model, tgt_model=tgt_model)
    src_parser = ConlluParser(src_lang, src_conllu) if src_conllu else None
    tgt_parser = ConlluParser(tgt_lang, tgt_conllu) if tgt_conllu else None
    return Scorer(src_lang, tgt_lang, settings, src_parser, tgt_parser)


def _language(ctx, param, value: str | None) -> str | None:
    """A language code, lower-cased, that has a rules file (named without the installation's path)."""
    if value is None:
        return None
    from gendertrace.rules.loader import rules_dir

    code = value.strip().lower()
    have = sorted(p.stem for p in rules_dir().glob("*.yaml") if p.stem.isalpha() and 2 <= len(p.stem) <= 3)
    option = "--src-lang" if param.name == "src_lang" else "--tgt-lang"
    if code not in have:
        raise click.ClickException(f"{option}: no rules for language {value!r} (no {code}.yaml among the "
                                   f"rules; rules exist for: {', '.join(have)})")
    if param.name == "tgt_lang" and ctx.params.get("src_lang") == code:
        raise click.ClickException(f"--tgt-lang: {code!r} is also the source language: a translation goes "
                                   f"from one language to another")
    return code


def _common_options(f):
    options = [
        click.option("--src-lang", "-s", required=True, is_eager=True, callback=_language,
                     help="Source language code, any case (en, es, fr; de/it/pt need CoNLL-U)."),
        click.option("--tgt-lang", "-t", required=True, callback=_language,
                     help="Target language code, other than the source's."),
        click.option("--format", "fmt", type=click.Choice(["tsv", "csv", "jsonl", "xliff", "tmx"]), default=None,
                     help="Input format; by default taken from the file extension (.tsv .csv .jsonl .xlf .tmx)."),
        click.option("--parser", type=click.Choice(["spacy", "stanza"]), default="spacy", show_default=True,
                     help="Parsing backend for sides not given as CoNLL-U."),
        click.option("--src-model", default=None,
                     help="Pipeline name for the source language (overrides the default)."),
        click.option("--tgt-model", default=None, help="Pipeline name for the target language."),
        click.option("--src-conllu", multiple=True, type=click.Path(exists=True, dir_okay=False),
                     help="Pre-parsed source sentences (CoNLL-U, matched by their '# text'); repeatable."),
        click.option("--tgt-conllu", multiple=True, type=click.Path(exists=True, dir_okay=False),
                     help="Pre-parsed target sentences (CoNLL-U); repeatable."),
        click.option("--min-confidence", type=click.FloatRange(0, 1), default=_default("min_confidence"),
                     show_default="from rules/scoring/weights.yaml, 0.5 as shipped",
                     help="Findings below this confidence are not reported."),
    ]
    for opt in reversed(options):
        f = opt(f)
    return f


def _declared_options(f):
    """--entities, --policy and the policy flags (score and explain)."""
    options = [
        click.option("--entities", "entities", type=click.Path(exists=True, dir_okay=False), default=None,
                     help="Entity sheet (YAML, JSON or CSV, see docs/entities.md): persons with their "
                          "declared pronouns or gender. Declarations outrank all other evidence."),
        click.option("--policy", "policy_file", type=click.Path(exists=True, dir_okay=False), default=None,
                     help="Policy file (YAML, see docs/entities.md): neutral forms, declared non-binary "
                          "persons, assumption findings, first names."),
        click.option("--neutral-for-binary", type=click.Choice(["accept", "flag"]), default=None,
                     help="A neutral target form for a person with binary evidence: accepted, or a finding "
                          "[default: accept, or the policy file's choice]."),
        click.option("--assumptions", "assumption_kinds", default=None, metavar="KINDS",
                     help="Comma-separated entity kinds whose assumption findings are shown: named, roles, "
                          "other, or 'all'/'none' [default: all]."),
    ]
    for opt in reversed(options):
        f = opt(f)
    return f


def _policy(policy_file, neutral_for_binary, assumption_kinds):
    from gendertrace.declared.policy import ASSUMPTION_KINDS, Policy, load_policy

    policy = load_policy(policy_file) if policy_file else Policy()
    if neutral_for_binary:
        policy = replace(policy, neutral_for_binary=neutral_for_binary)
    if assumption_kinds is not None:
        kinds = [k.strip() for k in assumption_kinds.split(",") if k.strip()]
        kinds = list(ASSUMPTION_KINDS) if kinds == ["all"] else [] if kinds == ["none"] else kinds
        bad = [k for k in kinds if k not in ASSUMPTION_KINDS]
        if bad:
            raise click.BadParameter(f"unknown entity kind {bad[0]!r} "
                                     "(expected named, roles, other, all or none)",
                                     param_hint="--assumptions")
        policy = replace(policy, assumptions=tuple(kinds))
    return policy


class _Commands(click.Group):
    """Any GendertraceError a command lets through (a bad rules or weights file read on first use) is one line."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except GendertraceError as exc:
            _fail(exc)


@click.group(cls=_Commands, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="gendertrace")
def main() -> None:
    """Check machine-translated documents for gender consistency.

    Findings are aids for a human post-editor, not verdicts: the tool checks that a translation is faithful to
    what the document says about a person, and never decides anyone's gender. Publication decisions follow the
    client's style guide and the editor's judgement.
    """


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(exists=True, dir_okay=False))
@_common_options
@click.option("--out", "-o", required=True, type=click.Path(dir_okay=False),
              help="Results, one JSON object per document.")
@click.option("--fail-under", type=click.FloatRange(0, 1), default=None,
              help=f"Exit with status {GATE_EXIT} when the corpus consistency rate is below RATE (for CI "
                   f"gates), and with status {NOTHING_CHECKED_EXIT} when nothing was checkable (the rate is "
                   f"n/a, so the gate can neither pass nor fail).")
@click.option("--progress/--no-progress", default=None,
              help="Progress bar on stderr (default: when it is a terminal).")
@click.option("--quiet", "-q", is_flag=True, help="Do not print the summary.")
@click.option("--jobs", "-j", type=click.IntRange(min=1), default=None,
              help="Cores to use: batches run in this many worker processes, each aligner "
                   "single-threaded [default: all cores of this machine].")
@click.option("--batch-docs", type=click.IntRange(min=1), default=_default("batch_docs"),
              show_default="from rules/scoring/weights.yaml, 500 as shipped",
              help="Documents parsed and scored together (a unit of work for --jobs and --resume); it bounds "
                   "memory. With the default aligner findings do not depend on it; with --align-mode sampled "
                   "the aligner is trained on each batch. Part of the run signature.")
@click.option("--cache", "cache_dir", type=click.Path(file_okay=False), default=None,
              help="Folder of the parse cache [default: $GENDERTRACE_CACHE_DIR, else "
                   "gendertrace/parses in the user cache folder ($XDG_CACHE_HOME or ~/.cache)].")
@click.option("--no-cache", is_flag=True, help="Parse everything; read and write no parse cache.")
@click.option("--cache-max-mb", type=click.FloatRange(min=1), default=1024, show_default=True,
              help="Size bound of the parse cache; the least recently used parses are evicted beyond it.")
@click.option("--align-mode", type=click.Choice(["fixed", "sampled", "frozen"]), default="fixed",
              show_default=True,
              help="fixed: the word pairs shipped for the language pair, each segment aligned on its own "
                   "(deterministic); sampled: eflomal trained on each batch (random: two runs may differ); "
                   "frozen: a fixed model read from --align-priors, deterministic.")
@click.option("--align-priors", type=click.Path(exists=True, dir_okay=False), default=None,
              help="Alignment statistics saved by an earlier run of this language pair "
                   "(--save-align-priors): priors for the sampler, or the model itself with "
                   "--align-mode frozen.")
@click.option("--save-align-priors", type=click.Path(dir_okay=False), default=None,
              help="Write the alignment statistics this run learns (sampled mode) as a priors file; "
                   "after --resume it covers the batches scored by this invocation.")
@click.option("--resume", is_flag=True,
              help="Continue an interrupted run: results stream into OUT.part (beside OUT, with "
                   "OUT.part.signature.json and OUT.part.digests) and are renamed to OUT only when the run "
                   "is complete, so a killed or failed run leaves OUT as it was and its results so far in "
                   "OUT.part. --resume continues OUT.part (or, without one, the complete OUT): documents "
                   "complete there are kept and skipped, a half-written last line is cut off. The settings "
                   "must be those the run started with, and the kept documents' input rows unchanged "
                   "(checked by their digests).")
@click.option("--executor", type=click.Choice(["local", "dask"]), default="local", show_default=True,
              help="local: this machine (--jobs); dask: tasks on the dask.distributed cluster at "
                   "--scheduler.")
@click.option("--scheduler", default=None, metavar="ADDRESS",
              help="Address of the dask scheduler, e.g. tcp://10.1.2.3:8786 (with --executor dask).")
@click.option("--tmx-group", default=None, metavar="PROP",
              help="TMX input: group translation units into documents by the value of <prop type=\"PROP\"> "
                   "(default: one document per file).")
@_declared_options
def score(input_path, src_lang, tgt_lang, fmt, parser, src_model, tgt_model, src_conllu, tgt_conllu,
          min_confidence, out, fail_under, progress, quiet, jobs, batch_docs, cache_dir, no_cache,
          cache_max_mb, align_mode, align_priors, save_align_priors, resume, executor, scheduler, tmx_group,
          entities, policy_file, neutral_for_binary, assumption_kinds):
    """Score a translated document set INPUT (TSV, CSV or JSONL with doc_id, seg_id, source, target).

    Writes OUT (one JSON object per document, in input order, each line as soon as it is ready), OUT's
    signature beside it (OUT.signature.json) and the digests of the documents' input rows (OUT.digests), and
    prints a summary: documents, entities, findings by kind and the corpus consistency rate (consistent
    gendered target references over checked ones). INPUT is read through and checked before anything is
    written; no output may be one of the inputs. Lines stream into OUT.part, renamed to OUT when complete.

    Documents stream through in batches of --batch-docs, so memory stays flat however large INPUT is; rows of
    one document should be consecutive (otherwise INPUT is gathered in memory first). Parses are cached on
    disk, so re-scoring the same sources for another engine version parses only the new targets.
    """
    from gendertrace.api import score_file_report
    from gendertrace.parse.cache import default_cache_dir
    from gendertrace.scale.executors import available_cores
    from gendertrace.scale.plan import ScoringPlan

    if no_cache and cache_dir:
        raise click.UsageError("--cache and --no-cache exclude each other")
    if executor == "dask" and not scheduler:
        raise click.UsageError("--executor dask needs --scheduler ADDRESS")
    if scheduler and executor != "dask":
        raise click.UsageError("--scheduler is for --executor dask")
    if align_mode == "frozen" and not align_priors:
        raise click.BadParameter("frozen alignment needs a model: give --align-priors FILE",
                                 param_hint="--align-mode")
    if align_mode != "sampled" and save_align_priors:
        raise click.UsageError("--save-align-priors learns from sampled alignment; it has nothing to "
                               f"learn in --align-mode {align_mode}")
    try:
        policy = _policy(policy_file, neutral_for_binary, assumption_kinds)
        if entities:
            from gendertrace.declared.sheet import load_entity_sheet

            load_entity_sheet(entities)  # a bad sheet fails here, with its file, line or key and value
    except GendertraceError as exc:
        _fail(exc)
    plan = ScoringPlan(
        src_lang, tgt_lang, min_confidence=min_confidence, parser=parser, src_model=src_model,
        tgt_model=tgt_model, src_conllu=tuple(src_conllu), tgt_conllu=tuple(tgt_conllu),
        batch_docs=batch_docs,
        cache_dir=None if no_cache else str(cache_dir or default_cache_dir()), cache_max_mb=cache_max_mb,
        align_mode=align_mode, align_priors=align_priors, align_threads=1,
        learn_priors=save_align_priors is not None,
    )
    plan = replace(plan, entity_sheet=str(Path(entities).resolve()) if entities else None, policy=policy)
    try:
        report = score_file_report(
            input_path, out, plan, fmt=fmt, progress=sys.stderr.isatty() if progress is None else progress,
            jobs=jobs or available_cores(), scheduler=scheduler, resume=resume,
            save_align_priors=save_align_priors, tmx_group=tmx_group,
        )
    except GendertraceError as exc:
        _fail(exc)
    summary = report.summary
    if not quiet:
        click.echo(summary.table())
        if plan.cache_dir and report.sides:
            click.echo(f"parse cache: {report.cache_hits} of {report.sides} segment sides read from "
                       f"{plan.cache_dir}; {report.parsed} texts parsed", err=True)
        if report.resumed_after:
            click.echo(f"resumed: {report.resumed_after} documents were already complete in {out}", err=True)
    if save_align_priors:
        if report.priors_written:
            click.echo(f"alignment priors learned from {report.learned.sentences} segment pairs, written to "
                       f"{report.priors_written}", err=True)
        else:
            click.echo("no alignment priors written: no batch was large enough for statistical alignment "
                       "(raise --batch-docs)", err=True)
    if fail_under is not None and summary.rate is None:
        click.echo(f"consistency rate n/a: no gendered target reference of {input_path} could be checked "
                   f"against evidence, so --fail-under {fail_under:.3f} can neither pass nor fail", err=True)
        sys.exit(NOTHING_CHECKED_EXIT)
    if fail_under is not None and summary.rate < fail_under:
        click.echo(f"consistency rate {summary.rate:.3f} is below --fail-under {fail_under:.3f}", err=True)
        sys.exit(GATE_EXIT)


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(exists=True, dir_okay=False))
@click.option("--doc", "doc_id", required=True, help="The document id to explain.")
@_common_options
@_declared_options
def explain(input_path, doc_id, src_lang, tgt_lang, fmt, parser, src_model, tgt_model, src_conllu, tgt_conllu,
            min_confidence, entities, policy_file, neutral_for_binary, assumption_kinds):
    """Print one document's chains, entities with their evidence, and findings."""
    from gendertrace.api import explain_document
    from gendertrace.io.readers import read_corpus

    try:
        docs = [d for d in read_corpus(input_path, fmt) if d.doc_id == doc_id]
        if not docs:
            raise click.BadParameter(f"no document {doc_id!r} in {input_path}", param_hint="--doc")
        scorer = _scorer(src_lang, tgt_lang, parser, src_model, tgt_model, src_conllu, tgt_conllu, min_confidence)
        from gendertrace.declared.sheet import load_entity_sheet

        scorer.settings.policy = _policy(policy_file, neutral_for_binary, assumption_kinds)
        scorer.settings.entity_sheet = load_entity_sheet(entities) if entities else None
        click.echo(explain_document(scorer, docs[0]))
    except GendertraceError as exc:
        _fail(exc)


@main.command()
@click.option("--out", "-o", default="demo-results", show_default=True, type=click.Path(file_okay=False),
              help="Folder for the results files.")
@click.option("--corpus", default=None, type=click.Path(exists=True, file_okay=False),
              help="Demo corpus folder (default: corpora/demo of the repository).")
def demo(out, corpus):
    """Score the bundled demo corpus (every direction, both engine versions) and compare with its gold."""
    from gendertrace.demo import demo_dir, run_demo
    from gendertrace.io.outputs import check_outputs
    from gendertrace.scale.resume import RunFiles

    folder = Path(corpus) if corpus else demo_dir()
    try:
        inputs = [("--corpus", folder)] + [("a corpus file", p) for p in sorted(folder.rglob("*")) if p.is_file()]
        results = [RunFiles.for_output(Path(out) / f"{p.stem}.jsonl") for p in folder.glob("*-*.v*.tsv")]
        check_outputs([("--out", out), ("the history store", Path(out) / "history.db")]
                      + [item for files in results for item in files.outputs], inputs)
        click.echo(run_demo(Path(out), Path(corpus) if corpus else None))
    except GendertraceError as exc:
        _fail(exc)


@main.command()
@click.option("--data", default="../shared/ud-pud", show_default=True, type=click.Path(),
              help="Folder with the parallel UD treebanks (<lang>_pud-news.conllu).")
@click.option("--report", default=None, type=click.Path(dir_okay=False), help="Write the tables as Markdown here.")
@click.option("--directions", default=None, help="Comma-separated directions, e.g. es-en,en-es (default: all).")
@click.option("--seed", default=13, show_default=True, help="Seed of the error injector.")
@click.option("--half", type=click.Choice(["1", "2"]), default=None,
              help="Treebank figures on one half of the news documents only (split by document id).")
@click.option("--align-priors", type=click.Path(file_okay=False), default=None,
              help="Folder of frozen alignment models, one per direction (learned there when missing).")
@click.option("--realmt", default="../shared/wmt24-en-es-dev", show_default=True, type=click.Path(),
              help="Folder of real English-Spanish MT output (SYSTEM.jsonl files, reference.jsonl).")
@click.option("--realmt-systems", default=None, help="Comma-separated systems of --realmt (default: all).")
@click.option("--only", type=click.Choice(["treebank", "realmt"]), default=None, help="Run one part only.")
def bench(data, report, directions, seed, half, align_priors, realmt, realmt_systems, only):
    """Measure false alarms and recall on real translations with injected gender errors."""
    from gendertrace.bench.run import run_benchmark

    if only != "realmt" and not Path(data).is_dir():
        click.echo(f"benchmark skipped: no treebank folder at {data}", err=True)
        return
    if only != "treebank" and not Path(realmt).is_dir():
        click.echo(f"real MT section skipped: no folder at {realmt}", err=True)
    from gendertrace.io.outputs import StagedOutputs, check_outputs

    try:
        check_outputs([("--report", report)],
                      [("a treebank of --data", p) for p in sorted(Path(data).rglob("*")) if p.is_file()])
        with StagedOutputs() as staged:
            text = run_benchmark(Path(data), directions.split(",") if directions else None, seed=seed,
                                 report=staged.path(report) if report else None, half=int(half) if half else None,
                                 align_priors=Path(align_priors) if align_priors else None,
                                 realmt=None if only == "treebank" else Path(realmt),
                                 realmt_systems=realmt_systems.split(",") if realmt_systems else None,
                                 treebank=only != "realmt")
    except GendertraceError as exc:
        _fail(exc)
    except FileNotFoundError as exc:  # a treebank the directions need is not in --data
        raise click.ClickException(str(exc)) from exc
    click.echo(text)


def _register_optional_commands() -> None:
    """Commands that live in their own modules (review report, history store)."""
    import importlib

    for module, name in (("gendertrace.review.cli", "review"), ("gendertrace.history.cli", "history")):
        try:
            mod = importlib.import_module(module)
        except ModuleNotFoundError as exc:
            if exc.name and exc.name.startswith("gendertrace"):
                continue  # that part of the tool is not built yet
            raise
        main.add_command(getattr(mod, name))


_register_optional_commands()


if __name__ == "__main__":  # pragma: no cover
    main()
