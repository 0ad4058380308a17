"""The scale options of `gendertrace score`: what they refuse, and what they report."""

from __future__ import annotations

import pytest
from click.testing import CliRunner
from scale_helpers import DEMO, demo_copies, demo_distinct_texts, demo_size

from gendertrace.cli import main

V1 = DEMO / "es-en.v1.tsv"


def _score(tmp_path, *extra: str, inp=V1):
    out = tmp_path / "o.jsonl"
    return CliRunner().invoke(main, ["score", str(inp), "-s", "es", "-t", "en", "--out", str(out), *extra])


@pytest.mark.parametrize(("extra", "message"), [
    (("--executor", "dask"), "--executor dask needs --scheduler"),
    (("--scheduler", "tcp://127.0.0.1:8786"), "--scheduler is for --executor dask"),
    (("--no-cache", "--cache", "somewhere"), "--cache and --no-cache exclude each other"),
    (("--align-mode", "frozen"), "frozen alignment needs a model"),
    (("--jobs", "0"), "--jobs"),
    (("--batch-docs", "0"), "--batch-docs"),
])
def test_contradictory_or_impossible_options_are_refused_in_one_line(tmp_path, extra, message):
    result = _score(tmp_path, *extra)
    assert result.exit_code == 2
    assert message in result.output
    assert not (tmp_path / "o.jsonl").exists()


def test_saving_priors_from_the_frozen_model_is_refused(tmp_path):
    priors = tmp_path / "p.priors"
    priors.write_text("LEX\tla\tthe\t1\n", encoding="utf-8")
    result = _score(tmp_path, "--align-mode", "frozen", "--align-priors", str(priors), "--save-align-priors",
                    str(tmp_path / "new.priors"))
    assert result.exit_code == 2
    assert "nothing to learn" in result.output


@pytest.mark.slow
def test_the_cache_line_and_the_priors_line_report_what_happened(tmp_path):
    inp = demo_copies(tmp_path / "twice.tsv", 2)
    n, segments = demo_size()
    args = ("--cache", str(tmp_path / "cache"), "--batch-docs", str(2 * n), "--align-mode", "sampled",
            "--save-align-priors", str(tmp_path / "es-en.priors"), "--jobs", "1")
    first = _score(tmp_path, *args, inp=inp)
    assert first.exit_code == 0, first.output
    # Two copies: 4 segment sides per segment pair of the file; each distinct text is parsed once.
    assert f"parse cache: 0 of {4 * segments} segment sides read from" in first.stderr
    assert f"; {demo_distinct_texts()} texts parsed" in first.stderr
    assert f"alignment priors learned from {2 * segments} segment pairs" in first.stderr
    second = _score(tmp_path, "--cache", str(tmp_path / "cache"), "--jobs", "1", inp=inp)
    assert f"parse cache: {4 * segments} of {4 * segments} segment sides" in second.stderr
    assert "; 0 texts parsed" in second.stderr


@pytest.mark.slow
def test_no_priors_are_written_when_no_batch_was_aligned_statistically(tmp_path):
    result = _score(tmp_path, "--no-cache", "--batch-docs", "2", "--align-mode", "sampled", "--save-align-priors",
                    str(tmp_path / "es-en.priors"))
    assert result.exit_code == 0, result.output
    assert "no alignment priors written" in result.stderr
    assert not (tmp_path / "es-en.priors").exists()
