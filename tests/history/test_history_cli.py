"""`gendertrace history` through the main command line: record, list, compare and its gate, chart, export."""

from __future__ import annotations

import base64
import re
import subprocess
import sys

import pytest
from click.testing import CliRunner
from history_helpers import Person, document, simple_docs, write_input, write_results

from gendertrace.cli import main

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


@pytest.fixture
def cli(tmp_path, monkeypatch):
    """Run `gendertrace ARGS` in a fresh folder (so the default store is the folder's own)."""
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("GENDERTRACE_HISTORY_DB", raising=False)
    runner = CliRunner()

    def run(*args, code=0):
        result = runner.invoke(main, list(args), catch_exceptions=False)
        assert result.exit_code == code, result.output + result.stderr
        return result

    return run


def _results(tmp_path, name, rates, **signature):
    return str(write_results(tmp_path / f"{name}.jsonl", simple_docs(rates), **signature))


def test_record_then_list_uses_the_default_store_in_the_current_folder(cli, tmp_path):
    out = cli("history", "record", _results(tmp_path, "a", [(3, 4), (2, 2)]), "--engine", "lumen",
              "--version", "1")
    assert "recorded lumen:1: 2 documents, 5/6 consistent (rate 0.833)" in out.output
    assert (tmp_path / ".gendertrace" / "history.db").is_file()
    cli("history", "record", _results(tmp_path, "b", [(4, 4), (2, 2)]), "--engine", "lumen", "--version", "2")
    listing = cli("history", "list").output.splitlines()
    assert listing[0].split()[:3] == ["run", "recorded", "(UTC)"]
    assert [line.split()[0] for line in listing[2:]] == ["lumen:1", "lumen:2"]
    assert "5/6" in listing[2] and "0.833" in listing[2] and "0a1b2c3d4e5f" in listing[2]


def test_reading_commands_do_not_create_a_store(cli, tmp_path):
    out = cli("history", "list", code=1)
    assert "no history store at .gendertrace/history.db (record a run first" in out.stderr
    assert not (tmp_path / ".gendertrace").exists()


def test_db_option_and_environment_name_the_store(cli, tmp_path, monkeypatch):
    cli("history", "record", _results(tmp_path, "a", [(1, 1)]), "--engine", "lumen", "--version", "1",
        "--db", str(tmp_path / "team.db"))
    assert (tmp_path / "team.db").is_file() and not (tmp_path / ".gendertrace").exists()
    monkeypatch.setenv("GENDERTRACE_HISTORY_DB", str(tmp_path / "team.db"))
    assert "lumen:1" in cli("history", "list").output


def test_recording_an_existing_run_fails_with_a_message(cli, tmp_path):
    args = ("history", "record", _results(tmp_path, "a", [(1, 1)]), "--engine", "lumen", "--version", "1")
    cli(*args)
    out = cli(*args, code=1)
    assert "lumen:1 is already recorded (use --replace" in out.stderr
    assert "recorded lumen:1" in cli(*args, "--replace").output


def test_an_engine_name_with_a_colon_is_a_usage_error(cli, tmp_path):
    out = cli("history", "record", _results(tmp_path, "a", [(1, 1)]), "--engine", "a:b", "--version", "1",
              code=2)
    assert "'a:b'" in out.stderr


def test_compare_prints_rates_intervals_tests_and_the_gate(cli, tmp_path):
    cli("history", "record", _results(tmp_path, "a", [(3, 5), (4, 4), (1, 3), (6, 7)]), "--engine", "lumen",
        "--version", "1")
    cli("history", "record", _results(tmp_path, "b", [(4, 5), (4, 4), (2, 3), (5, 7)]), "--engine", "lumen",
        "--version", "2")
    text = cli("history", "compare", "lumen:1", "lumen:2", "--seed", "7").output
    # Wilson for 14/19 as statsmodels' proportion_confint gives it: (0.5121, 0.8819).
    assert re.search(r"A\s+14/19\s+0\.737\s+\[0\.512, 0\.882\]", text)
    assert "B - A +0.053: 95% paired bootstrap" in text
    assert "approximate randomization p = " in text and "(10000 trials)" in text
    assert "gate: no regression" in text
    assert text == cli("history", "compare", "lumen:1", "lumen:2", "--seed", "7").output


def test_fail_on_regression_exits_with_status_3_only_on_a_regression(cli, tmp_path):
    cli("history", "record", _results(tmp_path, "a", [(19, 20)] * 30), "--engine", "lumen", "--version", "1")
    cli("history", "record", _results(tmp_path, "b", [(15, 20)] * 30), "--engine", "lumen", "--version", "2")
    worse = cli("history", "compare", "lumen:1", "lumen:2", "--fail-on-regression", "--trials", "2000",
                code=3)
    assert "lumen:2 regresses against lumen:1: rate -0.200" in worse.stderr
    # Without the flag the same comparison only reports; the other way round is an improvement.
    assert "gate: REGRESSION" in cli("history", "compare", "lumen:1", "lumen:2", "--trials", "2000").output
    cli("history", "compare", "lumen:2", "lumen:1", "--fail-on-regression", "--trials", "2000")
    # A threshold above the drop lets it pass.
    cli("history", "compare", "lumen:1", "lumen:2", "--fail-on-regression", "--regression-threshold", "0.25",
        "--trials", "2000")


def test_compare_refuses_other_settings_and_warns_loudly_when_forced(cli, tmp_path):
    cli("history", "record", _results(tmp_path, "a", [(1, 2)]), "--engine", "lumen", "--version", "1")
    cli("history", "record", _results(tmp_path, "b", [(1, 2)], rules="999999999999"), "--engine", "lumen",
        "--version", "2")
    refused = cli("history", "compare", "lumen:1", "lumen:2", code=1)
    assert "rules: '0a1b2c3d4e5f' in lumen:1, '999999999999' in lumen:2" in refused.stderr
    forced = cli("history", "compare", "lumen:1", "lumen:2", "--force")
    assert "warning: signatures differ: rules" in forced.stderr
    assert forced.stdout.startswith("WARNING:")


def test_compare_names_runs_it_cannot_find_or_parse(cli, tmp_path):
    cli("history", "record", _results(tmp_path, "a", [(1, 2)]), "--engine", "lumen", "--version", "1")
    assert "not named ENGINE:VERSION" in cli("history", "compare", "lumen", "lumen:1", code=1).stderr
    assert "no run lumen:7" in cli("history", "compare", "lumen:1", "lumen:7", code=1).stderr


def test_a_team_store_on_postgresql_records_and_compares(cli, tmp_path, pg_url):
    for version, rates in (("1", [(19, 20)] * 12), ("2", [(12, 20)] * 12)):
        cli("history", "record", _results(tmp_path, version, rates), "--engine", "lumen",
            "--version", version, "--db", pg_url)
    assert "lumen:2" in cli("history", "list", "--db", pg_url).output
    out = cli("history", "compare", "lumen:1", "lumen:2", "--db", pg_url, "--fail-on-regression",
              "--trials", "2000", code=3)
    assert "gate: REGRESSION" in out.stdout
    assert not (tmp_path / ".gendertrace").exists()


def test_record_with_input_keeps_texts_for_the_mt_metrics(cli, tmp_path):
    hyp = "the red kite circles over the quiet valley"
    ref = "the red kite circles above the quiet valley"
    for version, target in (("1", hyp), ("2", ref)):
        inp = write_input(tmp_path / f"in{version}.tsv", [("d000", "1", "El milano vuela.", target, ref)])
        out = cli("history", "record", _results(tmp_path, f"r{version}", [(1, 1)]), "--engine", "lumen",
                  "--version", version, "--input", str(inp))
        assert "with texts" in out.output
    text = cli("history", "compare", "lumen:1", "lumen:2").output
    assert "BLEU   A  50.00  B 100.00" in text  # worked out by hand in test_history_compare
    assert "version:" in text and "tok:13a" in text


def _record_series(cli, tmp_path):
    for version, docs in (("1", [Person("fem", 4, 2), Person("masc", 4)]),
                          ("2", [Person("fem", 4, 1), Person("masc", 4)]),
                          ("3", [Person("fem", 4), Person("masc", 4, 1)])):
        path = write_results(tmp_path / f"s{version}.jsonl", [document(f"d{k}", docs) for k in range(5)])
        cli("history", "record", str(path), "--engine", "lumen", "--version", version)


def test_chart_writes_a_png(cli, tmp_path):
    _record_series(cli, tmp_path)
    out = cli("history", "chart", "--out", "chart.png")
    assert "chart written to chart.png" in out.output
    data = (tmp_path / "chart.png").read_bytes()
    assert data.startswith(PNG_MAGIC)
    import matplotlib.image

    image = matplotlib.image.imread(str(tmp_path / "chart.png"))
    assert image.shape[0] > 400 and image.shape[1] > 600


def test_chart_html_is_self_contained_with_the_plotted_numbers(cli, tmp_path):
    _record_series(cli, tmp_path)
    cli("history", "chart", "--out", "chart.html", "--engine", "lumen")
    page = (tmp_path / "chart.html").read_text(encoding="utf-8")
    embedded = re.search(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', page)
    assert embedded and base64.b64decode(embedded.group(1)).startswith(PNG_MAGIC)
    assert not re.search(r'(src|href)="(https?:)?//', page)
    # Version 3: fem 20/20, masc 15/20, so the gap is +0.250.
    assert "<td>3</td>" in page and "<td>+0.250</td>" in page


def test_chart_refuses_an_unknown_engine_and_an_unknown_format(cli, tmp_path):
    _record_series(cli, tmp_path)
    assert "no runs of engine(s) other" in cli("history", "chart", "--out", "c.png", "--engine", "other",
                                               code=1).stderr
    assert "must end in .png or .html" in cli("history", "chart", "--out", "c.svg", code=1).stderr


def test_export_csv_has_one_row_per_document_of_each_run(cli, tmp_path):
    import pandas as pd

    _record_series(cli, tmp_path)
    assert "15 rows of documents written" in cli("history", "export", "--out", "docs.csv").output
    frame = pd.read_csv(tmp_path / "docs.csv", dtype={"version": str})
    assert len(frame) == 15
    assert {"engine", "version", "doc_id", "checked", "consistent"} <= set(frame.columns)
    assert frame.groupby("version")["checked"].sum().to_dict() == {"1": 40, "2": 40, "3": 40}


def test_export_parquet_of_entities(cli, tmp_path):
    pytest.importorskip("pyarrow", reason="Parquet export needs pyarrow (the test extra installs it)")
    import pandas as pd

    _record_series(cli, tmp_path)
    cli("history", "export", "--out", "ents.parquet", "--table", "entities", "--engine", "lumen")
    frame = pd.read_parquet(tmp_path / "ents.parquet")
    assert len(frame) == 30
    assert set(frame["gender"]) == {"fem", "masc"} and set(frame["counts"]) == {"estimated"}


def test_the_installed_command_has_the_history_group():
    out = subprocess.run([sys.executable, "-m", "gendertrace.cli", "history", "--help"], capture_output=True,
                         text=True, check=True).stdout
    for verb in ("record", "list", "compare", "chart", "export"):
        assert re.search(rf"^\s+{verb}\s", out, re.M), verb
