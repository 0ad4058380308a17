"""`gendertrace history`: record scored runs per engine version, list them, compare two, chart and export."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from gendertrace.errors import GendertraceError
from gendertrace.history.defaults import (
    DEFAULT_ALPHA,
    DEFAULT_DB,
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
    DEFAULT_THRESHOLD,
    DEFAULT_TRIALS,
)
from gendertrace.io.outputs import check_outputs, staged_file

# Exit status of a failed gate, the same as `gendertrace score --fail-under`.
GATE_EXIT = 3


def _fail(exc: Exception) -> None:
    raise click.ClickException(str(exc)) from exc


def _db_option(f):
    return click.option(
        "--db", default=None, envvar="GENDERTRACE_HISTORY_DB", show_envvar=True,
        help=f"The store: a file path (SQLite) or a SQLAlchemy URL such as "
             f"postgresql+psycopg://user@host/dbname. Default: {DEFAULT_DB} under the current folder.",
    )(f)


def _store_file(db: str | None) -> str | None:
    """The file of a SQLite store named by --db (None for a database server)."""
    if db is not None and "://" in db:
        return db.removeprefix("sqlite:///") if db.startswith("sqlite:///") else None
    return str(Path(db or DEFAULT_DB).expanduser())


def _refuse_store_as_output(db: str | None, out: str) -> None:
    check_outputs([("--out", out)], [("--db", _store_file(db))])


def _open(db: str | None, create: bool = False):
    """The store; only `record` creates one, the other commands need it to exist."""
    from gendertrace.history.store import HistoryStore

    try:
        return HistoryStore(db, create=create)
    except GendertraceError as exc:
        _fail(exc)
        raise  # unreachable: _fail raises


@click.group()
def history() -> None:
    """Keep scored runs per engine version and compare them with honest statistics.

    Record each run (`gendertrace score` output) under an engine name and version, then compare two runs over
    the same documents: consistency rates with 95% intervals, the difference with a paired bootstrap interval
    and an approximate randomization p-value, the rate gap between entities with feminine and masculine
    evidence, and BLEU, chrF and TER when references were recorded. `compare --fail-on-regression` gates a
    release in CI.
    """


@history.command()
@click.argument("results", metavar="RESULTS.jsonl", type=click.Path(exists=True, dir_okay=False))
@click.option("--engine", required=True, help="Engine name (no ':'), e.g. the MT system and direction.")
@click.option("--version", "version", required=True, help="Engine version, e.g. 2024-06 or v2.")
@click.option("--input", "input_path", default=None, type=click.Path(exists=True, dir_okay=False),
              help="The input the results were scored from: keeps the texts for BLEU, chrF and TER.")
@click.option("--format", "fmt", type=click.Choice(["tsv", "csv", "jsonl"]), default=None,
              help="Format of --input; by default taken from its extension.")
@click.option("--replace", is_flag=True, help="Record again a run of this engine and version already stored.")
@click.option("--keep-incomplete", is_flag=True,
              help="Record a run whose signature says it is incomplete (killed, or failed before its last "
                   "document) as it is; `list` and `compare` then mark it incomplete.")
@_db_option
def record(results, engine, version, input_path, fmt, replace, keep_incomplete, db):
    """Store RESULTS.jsonl (and its RESULTS.jsonl.signature.json) as run ENGINE:VERSION.

    The whole run is written in one transaction: its signature, per-document statistics, findings, per-entity
    data and, with --input, the segment texts. An incomplete run (the partial OUT.part of a run that was
    killed or failed) is refused unless --keep-incomplete is given.
    """
    from gendertrace.history.runs import load_run

    if ":" in engine or not engine.strip():
        raise click.BadParameter(f"{engine!r}: an engine name is non-empty and holds no ':'",
                                 param_hint="--engine")
    try:
        check_outputs([("--db", _store_file(db))],
                      [("RESULTS.jsonl", results), ("its signature", f"{results}.signature.json"),
                       ("--input", input_path)])
        run = load_run(results, input_path, fmt, keep_incomplete=keep_incomplete)
        with _open(db, create=True) as store:
            info = store.record(run, engine, version, replace=replace)
            where = store.display_url
    except GendertraceError as exc:
        _fail(exc)
    rate = "n/a" if info.rate is None else f"{info.rate:.3f}"
    texts = ", with texts" if info.has_texts else ""
    state = " (incomplete run, kept as it is)" if info.incomplete else ""
    click.echo(f"recorded {info.name}{state}: {info.documents} documents, {info.consistent}/{info.checked} "
               f"consistent (rate {rate}){texts} in {where}")
    for note in run.notes:
        click.echo(f"note: {note}")


@history.command("list")
@click.option("--engine", default=None, help="Only the runs of this engine.")
@_db_option
def list_runs(engine, db):
    """A table of the recorded runs, oldest first."""
    from gendertrace.history.stats import wilson_interval

    try:
        with _open(db) as store:
            runs = store.runs(engine)
    except GendertraceError as exc:
        _fail(exc)
    if not runs:
        click.echo("no runs recorded" + (f" for engine {engine}" if engine else ""))
        return
    header = ("run", "recorded (UTC)", "docs", "consistent/checked", "rate", "95% Wilson", "texts", "tool",
              "rules", "state")
    rows = []
    for r in runs:
        w = wilson_interval(r.consistent, r.checked)
        rows.append((r.name, r.recorded_at[:19].replace("T", " "), str(r.documents),
                     f"{r.consistent}/{r.checked}",
                     "n/a" if r.rate is None else f"{r.rate:.3f}", w.fmt() if w else "n/a",
                     "yes" if r.has_texts else "no", str(r.signature.get("tool", "")),
                     str(r.signature.get("rules", "")), "incomplete" if r.incomplete else "complete"))
    widths = [max(len(h), *(len(row[k]) for row in rows)) for k, h in enumerate(header)]
    click.echo("  ".join(h.ljust(w) for h, w in zip(header, widths, strict=True)).rstrip())
    click.echo("  ".join("-" * w for w in widths))
    for row in rows:
        click.echo("  ".join(c.ljust(w) for c, w in zip(row, widths, strict=True)).rstrip())


@history.command()
@click.argument("run_a", metavar="A")
@click.argument("run_b", metavar="B")
@click.option("--force", is_flag=True,
              help="Compare even when the signatures differ (tool, rules, pipelines, thresholds), warning.")
@click.option("--fail-on-regression", is_flag=True,
              help=f"Exit with status {GATE_EXIT} when B is significantly worse than A (see the next two).")
@click.option("--regression-threshold", type=click.FloatRange(0, 1), default=DEFAULT_THRESHOLD,
              show_default=True,
              help="Smallest drop of the consistency rate (absolute) that counts as a regression.")
@click.option("--alpha", type=click.FloatRange(0, 1, min_open=True), default=DEFAULT_ALPHA, show_default=True,
              help="Significance level of the gate (approximate randomization p-value).")
@click.option("--samples", type=click.IntRange(100), default=DEFAULT_SAMPLES, show_default=True,
              help="Bootstrap resamples (of documents; of segments for the MT metrics).")
@click.option("--trials", type=click.IntRange(100), default=DEFAULT_TRIALS, show_default=True,
              help="Approximate randomization trials.")
@click.option("--seed", type=int, default=DEFAULT_SEED, show_default=True, help="Seed of every resampling.")
@click.option("--metrics/--no-metrics", default=True, show_default=True,
              help="BLEU, chrF and TER (when both runs were recorded with references).")
@_db_option
def compare(run_a, run_b, force, fail_on_regression, regression_threshold, alpha, samples, trials, seed,
            metrics, db):
    """Compare run B (the newer, e.g. demo:v2) against run A (the baseline, e.g. demo:v1).

    Runs are named ENGINE:VERSION and must cover the same documents. Runs scored with different settings
    are refused unless --force is given.
    """
    from gendertrace.history.compare import compare_runs, describe_differences
    from gendertrace.history.store import parse_run_name

    try:
        ea, va = parse_run_name(run_a)
        eb, vb = parse_run_name(run_b)
        with _open(db) as store:
            info_a, data_a = store.load(ea, va)
            info_b, data_b = store.load(eb, vb)
        result = compare_runs(info_a, data_a, info_b, data_b, force=force, samples=samples, trials=trials,
                              seed=seed, metrics=metrics)
    except GendertraceError as exc:
        _fail(exc)
    if result.differences:
        for line in describe_differences(result.differences, info_a.name, info_b.name):
            click.echo(f"warning: signatures differ: {line}", err=True)
    for info in (info_a, info_b):
        if info.incomplete:
            click.echo(f"warning: {info.name} is an incomplete run (recorded with --keep-incomplete)", err=True)
    click.echo(result.render(regression_threshold, alpha))
    if fail_on_regression and result.regressed(regression_threshold, alpha):
        click.echo(f"{info_b.name} regresses against {info_a.name}: rate {result.delta:+.3f} "
                   f"(p = {result.randomization.p_value:.4f})", err=True)
        sys.exit(GATE_EXIT)


@history.command()
@click.option("--out", "-o", required=True, type=click.Path(dir_okay=False),
              help="FILE.png, or FILE.html (one self-contained page).")
@click.option("--engine", "engines", multiple=True,
              help="Engine to chart (repeatable; default: every engine).")
@click.option("--title", default="", help="Chart title.")
@click.option("--samples", type=click.IntRange(100), default=DEFAULT_SAMPLES, show_default=True,
              help="Bootstrap resamples for the bands.")
@click.option("--seed", type=int, default=DEFAULT_SEED, show_default=True, help="Seed of the resampling.")
@_db_option
def chart(out, engines, title, samples, seed, db):
    """Chart the consistency rate across versions (95% band) and the feminine/masculine gap."""
    from gendertrace.history.chart import write_chart

    try:
        _refuse_store_as_output(db, out)
        with _open(db) as store, staged_file(out) as tmp:
            write_chart(store, tmp, list(engines) or None, samples, seed, title)
    except GendertraceError as exc:
        _fail(exc)
    click.echo(f"chart written to {out}")


@history.command()
@click.option("--out", "-o", required=True, type=click.Path(dir_okay=False), help="FILE.csv or FILE.parquet.")
@click.option("--table", type=click.Choice(["runs", "documents", "entities", "findings", "segments"]),
              default="documents", show_default=True, help="What to export, one row per item of each run.")
@click.option("--engine", default=None, help="Only the runs of this engine.")
@_db_option
def export(out, table, engine, db):
    """Export a table of the store for analysis elsewhere (pandas; Parquet needs pyarrow)."""
    from gendertrace.history.export import write_export

    try:
        _refuse_store_as_output(db, out)
        with _open(db) as store:
            n = write_export(store, out, table, engine)
    except GendertraceError as exc:
        _fail(exc)
    click.echo(f"{n} rows of {table} written to {out}")
