"""Test-wide settings: runs under test never write into the user's parse cache."""

import pytest


@pytest.fixture(autouse=True, scope="session")
def _private_parse_cache(tmp_path_factory):
    mp = pytest.MonkeyPatch()
    mp.setenv("GENDERTRACE_CACHE_DIR", str(tmp_path_factory.mktemp("parse-cache")))
    yield
    mp.undo()
