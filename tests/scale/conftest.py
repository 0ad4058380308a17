"""Fixtures for the scale tests."""

from __future__ import annotations

import pytest


@pytest.fixture(autouse=True)
def _private_cache(tmp_path, monkeypatch):
    """No test writes to the user's cache folder: the default cache folder is inside tmp_path."""
    monkeypatch.setenv("GENDERTRACE_CACHE_DIR", str(tmp_path / "default-cache"))
