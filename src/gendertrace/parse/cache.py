"""An on-disk cache of parses: re-scoring the same sources (a new engine version) parses only the new text.

What the cache promises:

- A parse is looked up by the exact segment text, its language and the parser's `signature()` (backend,
  pipeline name and version), plus a format version of this module and the tool version (the conversion into
  the internal model is part of the tool). A new pipeline version or tool version never reads an old parse.
- The stored value is the `ParsedText`'s token fields as JSON, zlib-compressed; nothing is ever unpickled, so
  a cache folder shared with others can hold no code.
- It is one SQLite database (`parses.sqlite` in the cache folder) in WAL mode, safe for several processes
  writing at once on one machine (SQLite's locking; it needs a local file system, not a network share).
- With a size bound, the least recently used parses are evicted once the stored values exceed it, down to 80%
  of the bound (the database file itself reuses freed pages rather than shrinking).
"""

from __future__ import annotations

import hashlib
import json
import os
import sqlite3
import time
import zlib
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace._version import __version__
from gendertrace.model import ParsedText, Token
from gendertrace.parse.base import Parser

FORMAT = 1  # bump when the encoding below changes
DB_NAME = "parses.sqlite"
ENV_DIR = "GENDERTRACE_CACHE_DIR"
EVICT_TO = 0.8  # eviction frees down to this share of the bound, so that it does not run on every write

_SCHEMA = """
CREATE TABLE IF NOT EXISTS parses (
    key BLOB PRIMARY KEY,
    parser TEXT NOT NULL,
    value BLOB NOT NULL,
    size INTEGER NOT NULL,
    used REAL NOT NULL
) WITHOUT ROWID;
CREATE INDEX IF NOT EXISTS parses_by_use ON parses (used);
CREATE TABLE IF NOT EXISTS totals (id INTEGER PRIMARY KEY CHECK (id = 0), bytes INTEGER NOT NULL);
INSERT OR IGNORE INTO totals VALUES (0, 0);
CREATE TRIGGER IF NOT EXISTS parses_added AFTER INSERT ON parses
    BEGIN UPDATE totals SET bytes = bytes + new.size WHERE id = 0; END;
CREATE TRIGGER IF NOT EXISTS parses_removed AFTER DELETE ON parses
    BEGIN UPDATE totals SET bytes = bytes - old.size WHERE id = 0; END;
"""


def default_cache_dir() -> Path:
    """The cache folder used when none is given: $GENDERTRACE_CACHE_DIR, else the user's cache folder
    ($XDG_CACHE_HOME or ~/.cache) under gendertrace/parses, shared by every project of the user."""
    env = os.environ.get(ENV_DIR)
    if env:
        return Path(env)
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "gendertrace" / "parses"


# ----------------------------------------------------------------------------------------------------
# Encoding


def encode_parse(parsed: ParsedText) -> bytes:
    """The token fields of a parse as compressed JSON (the text itself is the key, not the value)."""
    rows = [[t.i, t.text, t.lemma, t.upos, dict(t.feats), t.head, t.deprel, t.start, t.end, t.sent, t.ent]
            for t in parsed.tokens]
    return zlib.compress(json.dumps(rows, ensure_ascii=False, separators=(",", ":")).encode("utf-8"), 6)


def decode_parse(blob: bytes, text: str, lang: str) -> ParsedText:
    """The ParsedText that `encode_parse` stored for `text`."""
    rows = json.loads(zlib.decompress(blob).decode("utf-8"))
    tokens = tuple(
        Token(i=i, text=tx, lemma=lemma, upos=upos, feats=feats, head=head, deprel=deprel, start=start,
              end=end, sent=sent, ent=ent)
        for i, tx, lemma, upos, feats, head, deprel, start, end, sent, ent in rows
    )
    return ParsedText(text, tokens, lang)


def cache_key(signature: str, lang: str, text: str) -> bytes:
    material = "\x00".join((str(FORMAT), __version__, lang, signature, text))
    return hashlib.sha256(material.encode("utf-8")).digest()


# ----------------------------------------------------------------------------------------------------
# The store


@dataclass(frozen=True)
class CacheStats:
    entries: int
    bytes: int  # stored (compressed) values


class ParseCache:
    """Parses on disk, keyed by text, language and parser signature; see the module docstring."""

    def __init__(self, folder: str | Path, max_mb: float | None = None) -> None:
        self.folder = Path(folder)
        self.folder.mkdir(parents=True, exist_ok=True)
        self.path = self.folder / DB_NAME
        self.max_bytes = None if max_mb is None else int(max_mb * 1024 * 1024)
        # isolation_level=None: transactions are explicit (BEGIN IMMEDIATE takes the write lock up front).
        self._db = sqlite3.connect(self.path, timeout=60, isolation_level=None, check_same_thread=False)
        self._db.execute("PRAGMA busy_timeout = 60000")
        self._db.execute("PRAGMA journal_mode = WAL")
        self._db.execute("PRAGMA synchronous = NORMAL")
        self._db.executescript(_SCHEMA)  # idempotent, so processes opening the cache at once agree

    def _write(self):
        return _Transaction(self._db)

    def get_many(self, signature: str, lang: str, texts: Sequence[str]) -> list[ParsedText | None]:
        """The cached parse of each text, or None where there is none; hits count as a use (for eviction)."""
        keys = [cache_key(signature, lang, t) for t in texts]
        found: dict[bytes, bytes] = {}
        for chunk in _chunks(sorted(set(keys)), 500):
            marks = ",".join("?" * len(chunk))
            found.update(self._db.execute(f"SELECT key, value FROM parses WHERE key IN ({marks})", chunk))
        if found:
            now = time.time()
            with self._write():
                self._db.executemany("UPDATE parses SET used = ? WHERE key = ?", [(now, k) for k in found])
        return [decode_parse(found[k], t, lang) if k in found else None
                for k, t in zip(keys, texts, strict=True)]

    def put_many(self, signature: str, parses: Sequence[ParsedText]) -> None:
        """Store parses (a text already present keeps its first value: both came from the same parser)."""
        if not parses:
            return
        now = time.time()
        rows = []
        for p in parses:
            blob = encode_parse(p)
            rows.append((cache_key(signature, p.lang, p.text), signature, blob, len(blob), now))
        with self._write():
            self._db.executemany(
                "INSERT OR IGNORE INTO parses (key, parser, value, size, used) VALUES (?, ?, ?, ?, ?)", rows
            )
            self._evict()

    def _evict(self) -> None:
        if self.max_bytes is None:
            return
        (total,) = self._db.execute("SELECT bytes FROM totals WHERE id = 0").fetchone()
        if total <= self.max_bytes:
            return
        excess = total - int(self.max_bytes * EVICT_TO)
        doomed, freed = [], 0
        for key, size in self._db.execute("SELECT key, size FROM parses ORDER BY used"):
            if freed >= excess:
                break
            doomed.append((key,))
            freed += size
        self._db.executemany("DELETE FROM parses WHERE key = ?", doomed)

    def forget(self, signature: str) -> int:
        """Drop every parse made by the parser with this signature; returns how many were dropped."""
        with self._write():
            return self._db.execute("DELETE FROM parses WHERE parser = ?", (signature,)).rowcount

    def stats(self) -> CacheStats:
        (entries,) = self._db.execute("SELECT COUNT(*) FROM parses").fetchone()
        (stored,) = self._db.execute("SELECT bytes FROM totals WHERE id = 0").fetchone()
        return CacheStats(entries, stored)

    def close(self) -> None:
        self._db.close()


class _Transaction:
    """BEGIN IMMEDIATE ... COMMIT (ROLLBACK on error): one writer at a time across processes."""

    def __init__(self, db: sqlite3.Connection) -> None:
        self.db = db

    def __enter__(self) -> sqlite3.Connection:
        self.db.execute("BEGIN IMMEDIATE")
        return self.db

    def __exit__(self, kind, value, tb) -> None:
        self.db.execute("COMMIT" if kind is None else "ROLLBACK")


def _chunks(items: list, size: int):
    for k in range(0, len(items), size):
        yield items[k:k + size]


# ----------------------------------------------------------------------------------------------------
# A parser in front of the cache


class CachedParser:
    """A Parser that answers from the cache and hands only the missing texts to the real parser.

    The real parser is built by `factory` on the first miss, so a run whose texts are all cached never loads a
    pipeline (given a `signature` known without loading it, see `known_signature`). `cache` may be None: the
    parser is then only lazy. Texts repeated within one call are parsed once.
    """

    def __init__(self, lang: str, factory: Callable[[], Parser], cache: ParseCache | None = None,
                 signature: str | None = None) -> None:
        self.lang = lang
        self._factory = factory
        self._parser: Parser | None = None
        self._signature = signature
        self.cache = cache
        self.asked = 0  # texts asked for
        self.hits = 0  # of those, answered by the cache
        self.parsed = 0  # distinct texts handed to the real parser

    @property
    def parser(self) -> Parser:
        if self._parser is None:
            self._parser = self._factory()
            if self._signature is not None and self._parser.signature() != self._signature:
                # The pipeline found on loading is not the one the signature named: trust the loaded one.
                self._signature = self._parser.signature()
        return self._parser

    @property
    def name(self) -> str:
        return self.parser.name

    @property
    def loaded(self) -> bool:
        return self._parser is not None

    def signature(self) -> str:
        if self._signature is None:
            self._signature = self.parser.signature()
        return self._signature

    def parse_many(self, texts: Sequence[str]) -> list[ParsedText]:
        texts = list(texts)
        signature = self.signature()
        found = self.cache.get_many(signature, self.lang, texts) if self.cache else [None] * len(texts)
        missing = list(dict.fromkeys(t for t, p in zip(texts, found, strict=True) if p is None))
        fresh: dict[str, ParsedText] = {}
        if missing:
            parses = self.parser.parse_many(missing)
            fresh = dict(zip(missing, parses, strict=True))
            signature = self.signature()  # loading may have corrected it
            if self.cache:
                self.cache.put_many(signature, parses)
        self.asked += len(texts)
        self.hits += sum(p is not None for p in found)
        self.parsed += len(missing)
        return [p if p is not None else fresh[t] for t, p in zip(texts, found, strict=True)]


def known_signature(backend: str, lang: str, model: str | None = None) -> str | None:
    """The signature a backend's parser will report, read from the installed pipeline package's meta.json
    without importing spaCy or loading the pipeline; None when it cannot be known that way (the parser is
    then loaded to ask it)."""
    if backend != "spacy":
        return None
    from gendertrace.parse.spacy_backend import pipeline_folder, pipeline_name

    try:
        name = pipeline_name(lang, model)
        meta = json.loads((pipeline_folder(name) / "meta.json").read_text(encoding="utf-8"))  # type: ignore[operator]
    except Exception:  # noqa: BLE001 - a path, a missing package, no meta.json: "load it and ask"
        return None
    return f"spacy:{name}=={meta.get('version', '?')}"
