"""Fixtures for the review tests: invented inputs and results written into tmp_path, and one real demo run."""

from __future__ import annotations

from pathlib import Path

import pytest
from review_samples import TSV_ROWS, tsv_results, write_jsonl, write_tsv

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "corpora" / "demo"


@pytest.fixture
def tsv_case(tmp_path: Path) -> tuple[Path, Path]:
    """(input TSV, results JSONL) for the invented two-document set."""
    return write_tsv(tmp_path / "set.tsv", TSV_ROWS), write_jsonl(tmp_path / "set.jsonl", tsv_results())


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory) -> tuple[Path, Path]:
    """(input, results) of a real scoring run on one demo file (es-en, engine v1)."""
    from gendertrace import Scorer
    from gendertrace.api import write_results
    from gendertrace.io.readers import read_corpus

    source = DEMO / "es-en.v1.tsv"
    out = tmp_path_factory.mktemp("demo") / "es-en.v1.jsonl"
    with open(out, "w", encoding="utf-8") as handle:
        write_results(Scorer("es", "en").score(read_corpus(source)), handle)
    return source, out
