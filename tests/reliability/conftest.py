"""The workspace every test of this folder runs its commands in (see reliability_helpers)."""

import pytest
from reliability_helpers import Workspace


@pytest.fixture
def ws(tmp_path, monkeypatch) -> Workspace:
    monkeypatch.chdir(tmp_path)
    return Workspace(tmp_path)
