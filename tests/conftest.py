"""Test-wide settings (runs under test never write into the user's parse cache) and shared scorers."""

import pytest

from gendertrace import Scorer


@pytest.fixture(autouse=True, scope="session")
def _private_parse_cache(tmp_path_factory):
    mp = pytest.MonkeyPatch()
    mp.setenv("GENDERTRACE_CACHE_DIR", str(tmp_path_factory.mktemp("parse-cache")))
    yield
    mp.undo()


@pytest.fixture(scope="session")
def es_en() -> Scorer:
    """A Spanish-to-English scorer with default settings, shared by the tests that only score with it."""
    return Scorer("es", "en")
