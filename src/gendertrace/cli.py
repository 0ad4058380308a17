"""Command line: `gendertrace score`, `explain`, `demo` and `bench`."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from gendertrace import __version__
from gendertrace.errors import GendertraceError


def _fail(exc: Exception) -> None:
    raise click.ClickException(str(exc)) from exc


def _scorer(src_lang, tgt_lang, parser, src_model, tgt_model, src_conllu, tgt_conllu, min_confidence):
    from gendertrace.parse.conllu_backend import ConlluParser
    from gendertrace.pipeline import Scorer, ScoreSettings

    settings = ScoreSettings(min_confidence=min_confidence, parser=parser, src_model=src_model, tgt_model=tgt_model)
    src_parser = ConlluParser(src_lang, src_conllu) if src_conllu else None
    tgt_parser = ConlluParser(tgt_lang, tgt_conllu) if tgt_conllu else None
    return Scorer(src_lang, tgt_lang, settings, src_parser, tgt_parser)


def _common_options(f):
    options = [
        click.option("--src-lang", "-s", required=True, help="Source language code (en, es, fr; de/it/pt need CoNLL-U)."),
        click.option("--tgt-lang", "-t", required=True, help="Target language code."),
        click.option("--format", "fmt", type=click.Choice(["tsv", "csv", "jsonl"]), default=None,
                     help="Input format; by default taken from the file extension."),
        click.option("--parser", type=click.Choice(["spacy", "stanza"]), default="spacy", show_default=True,
                     help="Parsing backend for sides not given as CoNLL-U."),
        click.option("--src-model", default=None, help="Pipeline name for the source language (overrides the default)."),
        click.option("--tgt-model", default=None, help="Pipeline name for the target language."),
        click.option("--src-conllu", multiple=True, type=click.Path(exists=True, dir_okay=False),
                     help="Pre-parsed source sentences (CoNLL-U, matched by their '# text'); repeatable."),
        click.option("--tgt-conllu", multiple=True, type=click.Path(exists=True, dir_okay=False),
                     help="Pre-parsed target sentences (CoNLL-U); repeatable."),
        click.option("--min-confidence", type=click.FloatRange(0, 1), default=0.5, show_default=True,
                     help="Findings below this confidence are not reported."),
    ]
    for opt in reversed(options):
        f = opt(f)
    return f


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
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
@click.option("--out", "-o", required=True, type=click.Path(dir_okay=False), help="Results, one JSON object per document.")
@click.option("--fail-under", type=click.FloatRange(0, 1), default=None,
              help="Exit with status 3 when the corpus consistency rate is below RATE (for CI gates).")
@click.option("--progress/--no-progress", default=None, help="Progress bar on stderr (default: when it is a terminal).")
@click.option("--quiet", "-q", is_flag=True, help="Do not print the summary.")
def score(input_path, src_lang, tgt_lang, fmt, parser, src_model, tgt_model, src_conllu, tgt_conllu,
          min_confidence, out, fail_under, progress, quiet):
    """Score a translated document set INPUT (TSV, CSV or JSONL with doc_id, seg_id, source, target).

    Writes OUT (one JSON object per document, in input order) and OUT's signature beside it
    (OUT.signature.json), and prints a summary: documents, entities, findings by kind and the corpus
    consistency rate (consistent gendered target references over checked ones).
    """
    from gendertrace.api import score_file

    try:
        summary = score_file(
            input_path, out, _scorer(src_lang, tgt_lang, parser, src_model, tgt_model, src_conllu, tgt_conllu,
                                     min_confidence),
            fmt=fmt, progress=sys.stderr.isatty() if progress is None else progress,
        )
    except GendertraceError as exc:
        _fail(exc)
    if not quiet:
        click.echo(summary.table())
    if fail_under is not None and summary.rate is not None and summary.rate < fail_under:
        click.echo(f"consistency rate {summary.rate:.3f} is below --fail-under {fail_under:.3f}", err=True)
        sys.exit(3)


@main.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(exists=True, dir_okay=False))
@click.option("--doc", "doc_id", required=True, help="The document id to explain.")
@_common_options
def explain(input_path, doc_id, src_lang, tgt_lang, fmt, parser, src_model, tgt_model, src_conllu, tgt_conllu,
            min_confidence):
    """Print one document's chains, entities with their evidence, and findings."""
    from gendertrace.api import explain_document
    from gendertrace.io.readers import read_corpus

    try:
        docs = [d for d in read_corpus(input_path, fmt) if d.doc_id == doc_id]
        if not docs:
            raise click.BadParameter(f"no document {doc_id!r} in {input_path}", param_hint="--doc")
        scorer = _scorer(src_lang, tgt_lang, parser, src_model, tgt_model, src_conllu, tgt_conllu, min_confidence)
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
    from gendertrace.demo import run_demo

    try:
        click.echo(run_demo(Path(out), Path(corpus) if corpus else None))
    except GendertraceError as exc:
        _fail(exc)


@main.command()
@click.option("--data", default="../shared/ud-pud", show_default=True, type=click.Path(),
              help="Folder with the parallel UD treebanks (<lang>_pud-news.conllu).")
@click.option("--report", default=None, type=click.Path(dir_okay=False), help="Write the tables as Markdown here.")
@click.option("--directions", default=None, help="Comma-separated directions, e.g. es-en,en-es (default: all).")
@click.option("--seed", default=13, show_default=True, help="Seed of the error injector.")
def bench(data, report, directions, seed):
    """Measure false alarms and recall on real translations with injected gender errors."""
    from gendertrace.bench.run import run_benchmark

    if not Path(data).is_dir():
        click.echo(f"benchmark skipped: no treebank folder at {data}", err=True)
        return
    try:
        text = run_benchmark(Path(data), directions.split(",") if directions else None, seed=seed,
                             report=Path(report) if report else None)
    except GendertraceError as exc:
        _fail(exc)
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
