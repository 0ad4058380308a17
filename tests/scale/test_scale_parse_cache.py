"""The parse cache: exact round trips, keys, laziness, eviction, and several writers at once."""

from __future__ import annotations

import json
import multiprocessing
import sqlite3
import zlib

import pytest
from scale_helpers import CountingParser, parsed

from gendertrace.parse.cache import CachedParser, ParseCache, decode_parse, default_cache_dir, encode_parse


def test_a_parse_survives_encoding_exactly():
    p = parsed("Llegó la cirujana Noa")
    assert decode_parse(encode_parse(p), p.text, p.lang) == p


def test_stored_values_are_compressed_json_not_pickles(tmp_path):
    cache = ParseCache(tmp_path)
    cache.put_many("counting:es==1", [parsed("Llegó la piloto")])
    (blob,) = sqlite3.connect(cache.path).execute("SELECT value FROM parses").fetchone()
    rows = json.loads(zlib.decompress(blob))
    assert [row[1] for row in rows] == ["Llegó", "la", "piloto"]


def test_a_text_is_found_only_under_the_signature_it_was_stored_with(tmp_path):
    cache = ParseCache(tmp_path)
    p = parsed("Llegó la piloto")
    cache.put_many("counting:es==1", [p])
    assert cache.get_many("counting:es==1", "es", [p.text, "Otra frase"]) == [p, None]
    assert cache.get_many("counting:es==2", "es", [p.text]) == [None]
    assert cache.get_many("counting:es==1", "fr", [p.text]) == [None]


def test_the_cached_parser_parses_only_what_the_cache_lacks(tmp_path):
    cache = ParseCache(tmp_path)
    backend = CountingParser()
    first = CachedParser("es", lambda: backend, cache)
    first.parse_many(["Llegó la piloto", "Sonrió la jueza"])
    again = CachedParser("es", lambda: backend, cache)
    out = again.parse_many(["Sonrió la jueza", "Habló el enfermero"])
    assert backend.asked == ["Llegó la piloto", "Sonrió la jueza", "Habló el enfermero"]
    assert out == [parsed("Sonrió la jueza"), parsed("Habló el enfermero")]
    assert (again.hits, again.parsed) == (1, 1)


def test_texts_repeated_in_one_call_are_parsed_once():
    backend = CountingParser()
    parser = CachedParser("es", lambda: backend)
    out = parser.parse_many(["Llegó la piloto", "Llegó la piloto", "Sonrió"])
    assert backend.asked == ["Llegó la piloto", "Sonrió"]
    assert out[0] == out[1] == parsed("Llegó la piloto")


def test_a_fully_cached_call_never_builds_the_real_parser(tmp_path):
    cache = ParseCache(tmp_path)
    cache.put_many("counting:es==1", [parsed("Llegó la piloto")])

    def factory():
        raise AssertionError("the pipeline was loaded")

    parser = CachedParser("es", factory, cache, signature="counting:es==1")
    assert parser.parse_many(["Llegó la piloto"]) == [parsed("Llegó la piloto")]
    assert not parser.loaded


def test_beyond_its_bound_the_cache_evicts_the_least_recently_used(tmp_path):
    sig = "counting:es==1"
    texts = [f"Frase número {k} de la prueba con la jueza Noa" for k in range(40)]
    probe = ParseCache(tmp_path / "probe")
    probe.put_many(sig, [parsed(t) for t in texts[:10]])
    ten = probe.stats().bytes
    # Room for about 20 parses: storing 40 must evict, and the oldest unused ones go first.
    cache = ParseCache(tmp_path / "bounded", max_mb=2 * ten / (1024 * 1024))
    cache.put_many(sig, [parsed(t) for t in texts[:10]])
    for t in texts[10:]:
        cache.get_many(sig, "es", [texts[0]])  # texts[0] stays in use; texts[1] is never used again
        cache.put_many(sig, [parsed(t)])
    found = cache.get_many(sig, "es", texts)
    assert cache.stats().bytes <= 2 * ten
    assert found[0] is not None
    assert found[1] is None
    assert found[-1] is not None


def test_forget_drops_the_parses_of_one_parser_only(tmp_path):
    cache = ParseCache(tmp_path)
    cache.put_many("counting:es==1", [parsed("Llegó la piloto")])
    cache.put_many("counting:en==1", [parsed("The pilot landed", "en")])
    assert cache.forget("counting:en==1") == 1
    assert cache.get_many("counting:es==1", "es", ["Llegó la piloto"]) != [None]
    assert cache.get_many("counting:en==1", "en", ["The pilot landed"]) == [None]
    assert cache.stats().entries == 1


def _write_many(folder: str, offset: int) -> None:
    cache = ParseCache(folder)
    for k in range(offset, offset + 60):
        cache.put_many("counting:es==1", [parsed(f"Frase {k} de la jueza"), parsed("Frase compartida")])


def test_processes_writing_at_once_lose_nothing(tmp_path):
    context = multiprocessing.get_context("spawn")
    writers = [context.Process(target=_write_many, args=(str(tmp_path), k * 60)) for k in range(3)]
    for w in writers:
        w.start()
    for w in writers:
        w.join(60)
    assert [w.exitcode for w in writers] == [0, 0, 0]
    cache = ParseCache(tmp_path)
    texts = [f"Frase {k} de la jueza" for k in range(180)] + ["Frase compartida"]
    assert None not in cache.get_many("counting:es==1", "es", texts)
    stats = cache.stats()
    assert stats.entries == 181
    (total,) = sqlite3.connect(cache.path).execute("SELECT SUM(size) FROM parses").fetchone()
    assert stats.bytes == total  # the running total kept by triggers matches the stored values


def test_the_default_folder_follows_the_environment(monkeypatch, tmp_path):
    monkeypatch.setenv("GENDERTRACE_CACHE_DIR", str(tmp_path / "here"))
    assert default_cache_dir() == tmp_path / "here"
    monkeypatch.delenv("GENDERTRACE_CACHE_DIR")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert default_cache_dir() == tmp_path / "xdg" / "gendertrace" / "parses"


@pytest.mark.slow
def test_the_signature_known_without_loading_is_the_loaded_parsers():
    from gendertrace.parse.cache import known_signature
    from gendertrace.parse.spacy_backend import SpacyParser

    for lang in ("es", "en"):
        assert known_signature("spacy", lang) == SpacyParser(lang).signature()
