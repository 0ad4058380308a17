"""Fixtures for the benchmark tests: small invented CoNLL-U treebanks written into tmp_path."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path

import pytest
from treebank_helpers import Sent, write_treebank


@pytest.fixture
def treebanks(tmp_path: Path) -> Callable[..., Path]:
    """Write treebanks, one per language: treebanks(en=[...], es=[...]) returns the folder."""

    def write(**by_lang: Sequence[Sent]) -> Path:
        for lang, sentences in by_lang.items():
            write_treebank(tmp_path, lang, sentences)
        return tmp_path

    return write
