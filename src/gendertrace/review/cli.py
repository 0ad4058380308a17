"""`gendertrace review`: the post-editor's report (HTML), annotated XLIFF and a findings spreadsheet (CSV)."""

from __future__ import annotations

from pathlib import Path

import click

from gendertrace.errors import GendertraceError
from gendertrace.io.outputs import StagedOutputs, check_outputs


@click.command()
@click.argument("results", metavar="RESULTS.jsonl", type=click.Path(exists=True, dir_okay=False))
@click.option("--input", "-i", "input_path", required=True, type=click.Path(exists=True, dir_okay=False),
              help="The input that was scored (TSV, CSV, JSONL, XLIFF or TMX), for the segment texts.")
@click.option("--out", "-o", required=True, type=click.Path(dir_okay=False),
              help="The HTML report to write (one self-contained file).")
@click.option("--xliff-out", default=None, type=click.Path(dir_okay=False),
              help="Also write the input XLIFF back with one note per finding on its unit.")
@click.option("--csv", "csv_out", default=None, type=click.Path(dir_okay=False),
              help="Also write the findings as CSV, one row per finding.")
@click.option("--bom", is_flag=True,
              help="Start the CSV with a UTF-8 byte order mark (for spreadsheet programs).")
@click.option("--format", "fmt", type=click.Choice(["tsv", "csv", "jsonl", "xliff", "tmx"]), default=None,
              help="Format of INPUT; by default taken from its extension.")
@click.option("--tmx-group", default=None, metavar="PROP",
              help="TMX input: group units into documents by <prop type=PROP> (as when it was scored).")
@click.option("--title", default="Gender consistency review", show_default=True, help="Title of the report.")
def review(results, input_path, out, xliff_out, csv_out, bom, fmt, tmx_group, title):
    """Build the review of RESULTS.jsonl (written by `gendertrace score`) for post-editors.

    The HTML report shows each document's source and target side by side with every flagged word
    highlighted; selecting one shows the finding and the evidence it rests on. Findings are aids for a
    human post-editor, not verdicts; publication decisions follow the client's style guide and the editor's
    judgement.
    """
    from gendertrace.io.readers import detect_format, read_corpus
    from gendertrace.review.csvout import write_csv
    from gendertrace.review.html import render_report
    from gendertrace.review.results import load_review

    if bom and not csv_out:
        raise click.UsageError("--bom applies to the CSV output: give --csv FILE as well")
    try:
        check_outputs([("--out", out), ("--csv", csv_out), ("--xliff-out", xliff_out)],
                      [("RESULTS.jsonl", results), ("its signature", f"{results}.signature.json"),
                       ("--input", input_path)])
        kind = detect_format(input_path, fmt)
        if xliff_out and kind != "xliff":
            raise click.BadParameter(f"{input_path} is {kind}, not XLIFF: --xliff-out needs an XLIFF input",
                                     param_hint="--xliff-out")
        documents = load_review(results, read_corpus(input_path, fmt, tmx_group=tmx_group))
        missing = [d.doc_id for d in documents if not d.segments]
        messages: list[tuple[str, bool]] = []  # printed once every output is in place
        # Every output goes to a temporary file first; all are renamed into place only when all are written.
        with StagedOutputs() as staged:
            report = render_report(documents, title=title, results_name=Path(results).name,
                                   input_name=Path(input_path).name)
            staged.write_text(out, report)
            findings = sum(len(d.findings) for d in documents)
            messages.append((f"report: {out} ({len(documents)} documents, {findings} findings)", False))
            if missing:
                shown = ", ".join(repr(m) for m in missing[:5]) + (" ..." if len(missing) > 5 else "")
                messages.append((f"warning: {len(missing)} document(s) of the results are not in "
                                 f"{input_path}: {shown}", True))
            if csv_out:
                rows = write_csv(documents, staged.path(csv_out), bom=bom)
                messages.append((f"csv: {csv_out} ({rows} rows)", False))
            if xliff_out:
                from gendertrace.review.xliff_notes import write_annotated_xliff

                done = write_annotated_xliff(input_path, documents, staged.path(xliff_out))
                messages.append((f"xliff: {xliff_out} ({done.notes} notes on {done.units} units)", False))
                if done.unplaced:
                    messages.append((f"warning: {len(done.unplaced)} finding(s) match no unit of "
                                     f"{input_path}", True))
    except GendertraceError as exc:
        raise click.ClickException(str(exc)) from exc
    except OSError as exc:
        raise click.ClickException(f"{exc.filename or out}: cannot write: {exc.strerror}") from exc
    for message, to_stderr in messages:
        click.echo(message, err=to_stderr)
