"""The history store: recorded runs in SQLite (a local file) or any database SQLAlchemy reaches (PostgreSQL).

What the store promises:

- A run is written in one transaction: either all of it (run, documents, entities, findings, texts) is there
  or none of it, also when the writing process is killed half-way.
- Two processes may record at the same time; both land. SQLite writers queue on the file lock (a busy
  timeout, not an error), PostgreSQL ones run side by side.
- `schema_version` says which layout the store has; opening an older store migrates it step by step, each
  step in its own transaction; a store newer than this program is refused rather than guessed at.
- A run is named ENGINE:VERSION and recorded once; recording it again needs `replace=True`.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Iterable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

import sqlalchemy as sa
from sqlalchemy.engine import Connection, Engine

from gendertrace.errors import GendertraceError
from gendertrace.history.defaults import DEFAULT_DB
from gendertrace.history.runs import (
    INCOMPLETE,
    DocumentRecord,
    EntityRecord,
    FindingRecord,
    RunData,
    SegmentText,
    comparable_signature,
)
from gendertrace.model import FINDING_KINDS

SCHEMA_VERSION = 2
BATCH_ROWS = 500
# Any constant will do: it only has to be the same for every process that migrates a PostgreSQL store.
_PG_MIGRATION_LOCK = 0x67656E64


class HistoryError(GendertraceError):
    """A problem with the history store or with the runs asked of it."""


metadata = sa.MetaData()

schema_version_table = sa.Table(
    "schema_version", metadata,
    sa.Column("version", sa.Integer, primary_key=True, autoincrement=False),
    sa.Column("applied_at", sa.String(40), nullable=False),
)

runs_table = sa.Table(
    "runs", metadata,
    sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
    sa.Column("engine", sa.String(200), nullable=False),
    sa.Column("version", sa.String(200), nullable=False),
    sa.Column("recorded_at", sa.String(40), nullable=False),
    sa.Column("results_path", sa.Text, nullable=False),
    sa.Column("signature", sa.Text, nullable=False),
    sa.Column("documents", sa.Integer, nullable=False),
    sa.Column("checked", sa.Integer, nullable=False),
    sa.Column("consistent", sa.Integer, nullable=False),
    # Added in schema version 2 (filled from `signature` for older runs).
    sa.Column("input_path", sa.Text, nullable=True),
    sa.Column("src_lang", sa.String(16), nullable=True),
    sa.Column("tgt_lang", sa.String(16), nullable=True),
    sa.Column("tool", sa.Text, nullable=True),
    sa.Column("rules", sa.Text, nullable=True),
    sa.Column("src_pipeline", sa.Text, nullable=True),
    sa.Column("tgt_pipeline", sa.Text, nullable=True),
    sa.Column("thresholds", sa.Text, nullable=True),
    sa.Column("has_entities", sa.Boolean, nullable=True),
    sa.Column("has_texts", sa.Boolean, nullable=True),
    sa.UniqueConstraint("engine", "version", name="uq_runs_engine_version"),
)

documents_table = sa.Table(
    "run_documents", metadata,
    sa.Column("run_id", sa.Integer, sa.ForeignKey("runs.id", ondelete="CASCADE"), primary_key=True),
    sa.Column("position", sa.Integer, primary_key=True, autoincrement=False),
    sa.Column("doc_id", sa.Text, nullable=False),
    sa.Column("segments", sa.Integer, nullable=False),
    sa.Column("entities", sa.Integer, nullable=False),
    sa.Column("target_references", sa.Integer, nullable=False),
    sa.Column("checked", sa.Integer, nullable=False),
    sa.Column("consistent", sa.Integer, nullable=False),
    sa.Column("contradiction", sa.Integer, nullable=False),
    sa.Column("inconsistency", sa.Integer, nullable=False),
    sa.Column("assumption", sa.Integer, nullable=False),
    sa.Column("skipped", sa.Text, nullable=False),
)

findings_table = sa.Table(
    "run_findings", metadata,
    sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
    sa.Column("run_id", sa.Integer, sa.ForeignKey("runs.id", ondelete="CASCADE"), nullable=False, index=True),
    sa.Column("doc_id", sa.Text, nullable=False),
    sa.Column("kind", sa.String(20), nullable=False),
    sa.Column("seg_id", sa.Text, nullable=False),
    sa.Column("start_char", sa.Integer, nullable=False),
    sa.Column("end_char", sa.Integer, nullable=False),
    sa.Column("text", sa.Text, nullable=False),
    sa.Column("expected", sa.String(10), nullable=True),
    sa.Column("found", sa.String(10), nullable=True),
    sa.Column("entity", sa.Text, nullable=False),
    sa.Column("confidence", sa.Float, nullable=False),
)

# Schema version 2.
entities_table = sa.Table(
    "run_entities", metadata,
    sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
    sa.Column("run_id", sa.Integer, sa.ForeignKey("runs.id", ondelete="CASCADE"), nullable=False, index=True),
    sa.Column("doc_id", sa.Text, nullable=False),
    sa.Column("entity_id", sa.Text, nullable=False),
    sa.Column("label", sa.Text, nullable=False),
    sa.Column("gender", sa.String(10), nullable=True),
    sa.Column("confidence", sa.Float, nullable=False),
    sa.Column("basis", sa.String(10), nullable=False),
    sa.Column("checked", sa.Integer, nullable=False),
    sa.Column("consistent", sa.Integer, nullable=False),
    sa.Column("counts", sa.String(10), nullable=False),
)

segments_table = sa.Table(
    "run_segments", metadata,
    sa.Column("run_id", sa.Integer, sa.ForeignKey("runs.id", ondelete="CASCADE"), primary_key=True),
    sa.Column("doc_id", sa.Text, primary_key=True),
    sa.Column("position", sa.Integer, primary_key=True, autoincrement=False),
    sa.Column("seg_id", sa.Text, nullable=False),
    sa.Column("hypothesis", sa.Text, nullable=False),
    sa.Column("reference", sa.Text, nullable=True),
)

CHILD_TABLES = (findings_table, entities_table, segments_table, documents_table)
V2_RUN_COLUMNS = ("input_path", "src_lang", "tgt_lang", "tool", "rules", "src_pipeline", "tgt_pipeline",
                  "thresholds", "has_entities", "has_texts")


@dataclass(frozen=True)
class RunInfo:
    """A recorded run as `list` shows it."""

    id: int
    engine: str
    version: str
    recorded_at: str
    signature: dict
    documents: int
    checked: int
    consistent: int
    results_path: str
    input_path: str
    has_entities: bool
    has_texts: bool

    @property
    def name(self) -> str:
        return f"{self.engine}:{self.version}"

    @property
    def incomplete(self) -> bool:
        """True for a run recorded with --keep-incomplete: its signature says it stopped early."""
        return self.signature.get("state") == INCOMPLETE

    @property
    def rate(self) -> float | None:
        return self.consistent / self.checked if self.checked else None


def parse_run_name(name: str) -> tuple[str, str]:
    """ENGINE:VERSION into its two parts (the engine name holds no colon; the version may)."""
    engine, sep, version = name.partition(":")
    if not sep or not engine or not version:
        raise HistoryError(f"run {name!r} is not named ENGINE:VERSION")
    return engine, version


def database_url(location: str | Path | None, create: bool = True) -> str:
    """A SQLAlchemy URL for LOCATION: a URL as it is, a file path as a SQLite file.

    With `create`, the file's folder is made when missing; without it, a missing file is an error.
    """
    if location is None:
        location = DEFAULT_DB
    text = str(location)
    if "://" in text:
        return text
    path = Path(text).expanduser().resolve()
    if not create:
        if not path.is_file():
            raise HistoryError(f"no history store at {location} (record a run first, or name one with --db)")
    else:
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise HistoryError(f"cannot make the folder of the history store {location}: "
                               f"{exc.strerror}") from exc
    return f"sqlite:///{path}"


def _now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="microseconds")


def _thresholds(signature: dict) -> dict:
    """The numeric settings of a signature (min_confidence and any later threshold)."""
    return {k: v for k, v in comparable_signature(signature).items()
            if isinstance(v, (int, float)) and not isinstance(v, bool)}


def signature_columns(signature: dict) -> dict:
    return {
        "tool": str(signature.get("tool", "")),
        "rules": str(signature.get("rules", "")),
        "src_pipeline": str(signature.get("src", "")),
        "tgt_pipeline": str(signature.get("tgt", "")),
        "thresholds": json.dumps(_thresholds(signature), sort_keys=True),
    }


class HistoryStore:
    """Recorded runs in one database; opening it creates or migrates the schema as needed."""

    def __init__(self, location: str | Path | None = None, busy_timeout: float = 60.0,
                 create: bool = True) -> None:
        """Open (and with `create`, make) the store at LOCATION; see `database_url`."""
        self.url = database_url(location, create)
        self.busy_timeout = busy_timeout
        try:
            self.engine = self._create_engine()
            self._ensure_schema()
        except sa.exc.SQLAlchemyError as exc:
            raise HistoryError(f"cannot open the history store {self.display_url}: {_short(exc)}") from exc
        except ModuleNotFoundError as exc:
            hint = " (pip install 'gendertrace[postgres]')" if "psycopg" in str(exc.name) else ""
            raise HistoryError(f"cannot open the history store {self.display_url}: the database driver "
                               f"{exc.name!r} is not installed{hint}") from exc

    @property
    def display_url(self) -> str:
        return sa.engine.make_url(self.url).render_as_string(hide_password=True)

    @property
    def is_sqlite(self) -> bool:
        return self.engine.dialect.name == "sqlite"

    def close(self) -> None:
        self.engine.dispose()

    def __enter__(self) -> HistoryStore:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    # -----------------------------------------------------------------------------------------------------
    # Connections and transactions

    def _create_engine(self) -> Engine:
        url = sa.engine.make_url(self.url)
        if url.get_backend_name() != "sqlite":
            return sa.create_engine(url, pool_pre_ping=True)
        engine = sa.create_engine(url, connect_args={"timeout": self.busy_timeout})
        timeout_ms = int(self.busy_timeout * 1000)

        @sa.event.listens_for(engine, "connect")
        def _on_connect(dbapi_conn, _record) -> None:
            # The driver's own implicit transactions are off, so that BEGIN below is the only one.
            dbapi_conn.isolation_level = None
            cur = dbapi_conn.cursor()
            cur.execute("PRAGMA foreign_keys=ON")
            cur.execute(f"PRAGMA busy_timeout={timeout_ms}")
            cur.close()

        @sa.event.listens_for(engine, "begin")
        def _on_begin(conn: Connection) -> None:
            # A writer takes the write lock at BEGIN, so two writers queue instead of deadlocking on upgrade.
            write = conn.get_execution_options().get("gendertrace_write", False)
            conn.exec_driver_sql("BEGIN IMMEDIATE" if write else "BEGIN")

        return engine

    @contextmanager
    def _write_schema(self) -> Iterator[Connection]:
        with self.engine.connect() as conn:
            conn = conn.execution_options(gendertrace_write=True)
            with conn.begin():
                if conn.dialect.name == "postgresql":
                    conn.execute(sa.text("SELECT pg_advisory_xact_lock(:k)"), {"k": _PG_MIGRATION_LOCK})
                yield conn

    @contextmanager
    def _write_run(self) -> Iterator[Connection]:
        """A write transaction for recording: no advisory lock on PostgreSQL, so writers run side by side."""
        with self.engine.connect() as conn:
            conn = conn.execution_options(gendertrace_write=True)
            with conn.begin():
                yield conn

    @contextmanager
    def _read(self) -> Iterator[Connection]:
        with self.engine.connect() as conn, conn.begin():
            yield conn

    # -----------------------------------------------------------------------------------------------------
    # Schema

    def schema_version(self) -> int:
        with self._read() as conn:
            return _current_version(conn)

    def _ensure_schema(self) -> None:
        with self._read() as conn:
            if _current_version(conn) == SCHEMA_VERSION:
                return
        with self._write_schema() as conn:
            version = _current_version(conn)  # again, now that this process holds the lock
            if version == 0:
                if _has_store_tables(conn):
                    raise HistoryError(f"{self.display_url} holds tables but no schema_version: "
                                       f"not a history store")
                metadata.create_all(conn)
                conn.execute(schema_version_table.insert(),
                             [{"version": SCHEMA_VERSION, "applied_at": _now()}])
                return
            if version > SCHEMA_VERSION:
                raise HistoryError(f"the history store {self.display_url} has schema version {version}, "
                                   f"newer than this program's {SCHEMA_VERSION}: upgrade gendertrace to use "
                                   f"it")
        while version < SCHEMA_VERSION:
            with self._write_schema() as conn:
                version = _current_version(conn)
                if version >= SCHEMA_VERSION:
                    break
                MIGRATIONS[version](conn)
                version += 1
                conn.execute(schema_version_table.insert(), [{"version": version, "applied_at": _now()}])

    # -----------------------------------------------------------------------------------------------------
    # Writing

    def record(self, run: RunData, engine: str, version: str, replace: bool = False,
               on_batch: Callable[[str, int], None] | None = None) -> RunInfo:
        """Store RUN as ENGINE:VERSION in one transaction and return it as listed.

        `on_batch(table, rows)` is called after each batch of rows is sent (inside the transaction), for
        progress reporting.
        """
        if not engine or ":" in engine:
            raise HistoryError(f"engine name {engine!r} must be non-empty and hold no ':'")
        if not version:
            raise HistoryError("the engine version must be non-empty")
        sig = dict(run.signature)
        row = {
            "engine": engine, "version": version, "recorded_at": _now(), "results_path": run.results_path,
            "signature": json.dumps(sig, sort_keys=True), "documents": len(run.documents),
            "checked": run.checked, "consistent": run.consistent, "input_path": run.input_path,
            "src_lang": run.src_lang, "tgt_lang": run.tgt_lang, "has_entities": True,
            "has_texts": bool(run.segments), **signature_columns(sig),
        }
        try:
            with self._write_run() as conn:
                existing = conn.execute(sa.select(runs_table.c.id).where(
                    runs_table.c.engine == engine, runs_table.c.version == version)).scalar()
                if existing is not None:
                    if not replace:
                        raise HistoryError(f"run {engine}:{version} is already recorded (use --replace to "
                                           f"record it again)")
                    _delete_run(conn, existing)
                run_id = conn.execute(runs_table.insert().values(**row)).inserted_primary_key[0]
                _insert(conn, documents_table, (_document_row(run_id, d) for d in run.documents), on_batch)
                _insert(conn, entities_table, (_entity_row(run_id, e) for e in run.entities), on_batch)
                _insert(conn, findings_table, (_finding_row(run_id, f) for f in run.findings), on_batch)
                _insert(conn, segments_table, (_segment_row(run_id, s) for s in run.segments), on_batch)
        except sa.exc.IntegrityError as exc:
            raise HistoryError(f"run {engine}:{version} was recorded by another process meanwhile") from exc
        except sa.exc.SQLAlchemyError as exc:
            raise HistoryError(f"recording {engine}:{version} failed: {_short(exc)}") from exc
        return self.get(engine, version)

    def delete(self, engine: str, version: str) -> None:
        with self._write_run() as conn:
            run_id = conn.execute(sa.select(runs_table.c.id).where(
                runs_table.c.engine == engine, runs_table.c.version == version)).scalar()
            if run_id is None:
                raise HistoryError(f"no run {engine}:{version} in {self.display_url}")
            _delete_run(conn, run_id)

    # -----------------------------------------------------------------------------------------------------
    # Reading

    def runs(self, engine: str | None = None) -> list[RunInfo]:
        """Recorded runs, oldest first (optionally of one engine)."""
        q = sa.select(runs_table).order_by(runs_table.c.recorded_at, runs_table.c.id)
        if engine is not None:
            q = q.where(runs_table.c.engine == engine)
        with self._read() as conn:
            return [_run_info(r) for r in conn.execute(q).mappings()]

    def get(self, engine: str, version: str) -> RunInfo:
        with self._read() as conn:
            r = conn.execute(sa.select(runs_table).where(
                runs_table.c.engine == engine, runs_table.c.version == version)).mappings().first()
        if r is None:
            known = ", ".join(x.name for x in self.runs(engine)) or "none"
            raise HistoryError(f"no run {engine}:{version} in {self.display_url} (runs of {engine}: {known})")
        return _run_info(r)

    def load(self, engine: str, version: str) -> tuple[RunInfo, RunData]:
        """A recorded run with all its rows, as a RunData (documents in their original order)."""
        info = self.get(engine, version)
        with self._read() as conn:
            docs = conn.execute(sa.select(documents_table).where(documents_table.c.run_id == info.id)
                                .order_by(documents_table.c.position)).mappings().all()
            ents = conn.execute(sa.select(entities_table).where(entities_table.c.run_id == info.id)
                                .order_by(entities_table.c.id)).mappings().all()
            fds = conn.execute(sa.select(findings_table).where(findings_table.c.run_id == info.id)
                               .order_by(findings_table.c.id)).mappings().all()
            segs = conn.execute(sa.select(segments_table).where(segments_table.c.run_id == info.id)
                                .order_by(segments_table.c.doc_id, segments_table.c.position)
                                ).mappings().all()
        order = {d["doc_id"]: d["position"] for d in docs}
        run = RunData(
            signature=info.signature,
            documents=tuple(DocumentRecord(
                d["doc_id"], d["position"], d["segments"], d["entities"], d["target_references"],
                d["checked"], d["consistent"], {k: d[k] for k in FINDING_KINDS}, d["skipped"]) for d in docs),
            entities=tuple(EntityRecord(
                e["doc_id"], e["entity_id"], e["label"], e["gender"], e["confidence"], e["basis"],
                e["checked"], e["consistent"], e["counts"]) for e in ents),
            findings=tuple(FindingRecord(
                f["doc_id"], f["kind"], f["seg_id"], f["start_char"], f["end_char"], f["text"], f["expected"],
                f["found"], f["entity"], f["confidence"]) for f in fds),
            segments=tuple(sorted((SegmentText(s["doc_id"], s["position"], s["seg_id"], s["hypothesis"],
                                               s["reference"]) for s in segs),
                                  key=lambda s: (order.get(s.doc_id, 0), s.position))),
            results_path=info.results_path, input_path=info.input_path,
        )
        return info, run

    def table_frame(self, table: str, engine: str | None = None):
        """One table of the store as a pandas DataFrame, each row named by its run (engine, version)."""
        import pandas as pd

        tables = {"runs": runs_table, "documents": documents_table, "entities": entities_table,
                  "findings": findings_table, "segments": segments_table}
        if table not in tables:
            raise HistoryError(f"unknown table {table!r}: expected one of {', '.join(tables)}")
        t = tables[table]
        if t is runs_table:
            q = sa.select(runs_table)
        else:
            cols = [c for c in t.c if c.name != "id"]
            q = sa.select(runs_table.c.engine, runs_table.c.version, *cols).join(
                runs_table, runs_table.c.id == t.c.run_id)
        if engine is not None:
            q = q.where(runs_table.c.engine == engine)
        q = q.order_by(runs_table.c.recorded_at, runs_table.c.id)
        with self._read() as conn:
            rows = conn.execute(q).mappings().all()
            columns = list(conn.execute(q.limit(0)).keys())
        return pd.DataFrame([dict(r) for r in rows], columns=columns)


# ---------------------------------------------------------------------------------------------------------
# Rows


def _insert(conn: Connection, table: sa.Table, rows: Iterable[dict],
            on_batch: Callable[[str, int], None] | None) -> None:
    batch: list[dict] = []
    for row in rows:
        batch.append(row)
        if len(batch) >= BATCH_ROWS:
            conn.execute(table.insert(), batch)
            if on_batch:
                on_batch(table.name, len(batch))
            batch = []
    if batch:
        conn.execute(table.insert(), batch)
        if on_batch:
            on_batch(table.name, len(batch))


def _delete_run(conn: Connection, run_id: int) -> None:
    for t in CHILD_TABLES:
        conn.execute(t.delete().where(t.c.run_id == run_id))
    conn.execute(runs_table.delete().where(runs_table.c.id == run_id))


def _document_row(run_id: int, d: DocumentRecord) -> dict:
    return {"run_id": run_id, "position": d.position, "doc_id": d.doc_id, "segments": d.segments,
            "entities": d.entities, "target_references": d.target_references, "checked": d.checked,
            "consistent": d.consistent, "skipped": d.skipped,
            **{k: int(d.findings.get(k, 0)) for k in FINDING_KINDS}}


def _entity_row(run_id: int, e: EntityRecord) -> dict:
    return {"run_id": run_id, "doc_id": e.doc_id, "entity_id": e.entity_id, "label": e.label,
            "gender": e.gender, "confidence": e.confidence, "basis": e.basis, "checked": e.checked,
            "consistent": e.consistent, "counts": e.counts}


def _finding_row(run_id: int, f: FindingRecord) -> dict:
    return {"run_id": run_id, "doc_id": f.doc_id, "kind": f.kind, "seg_id": f.seg_id, "start_char": f.start,
            "end_char": f.end, "text": f.text, "expected": f.expected, "found": f.found, "entity": f.entity,
            "confidence": f.confidence}


def _segment_row(run_id: int, s: SegmentText) -> dict:
    return {"run_id": run_id, "doc_id": s.doc_id, "position": s.position, "seg_id": s.seg_id,
            "hypothesis": s.hypothesis, "reference": s.reference}


def _run_info(r) -> RunInfo:
    return RunInfo(
        id=r["id"], engine=r["engine"], version=r["version"], recorded_at=r["recorded_at"],
        signature=json.loads(r["signature"]), documents=r["documents"], checked=r["checked"],
        consistent=r["consistent"], results_path=r["results_path"], input_path=r["input_path"] or "",
        has_entities=bool(r["has_entities"]), has_texts=bool(r["has_texts"]),
    )


def _short(exc: Exception) -> str:
    text = str(getattr(exc, "orig", None) or exc)
    return text.splitlines()[0] if text else type(exc).__name__


# ---------------------------------------------------------------------------------------------------------
# Schema versions and migrations


def _current_version(conn: Connection) -> int:
    if not sa.inspect(conn).has_table("schema_version"):
        return 0
    return conn.execute(sa.select(sa.func.max(schema_version_table.c.version))).scalar() or 0


def _has_store_tables(conn: Connection) -> bool:
    return bool(set(sa.inspect(conn).get_table_names()) & set(metadata.tables))


def _migrate_1_to_2(conn: Connection) -> None:
    """Version 2 adds per-entity rows, segment texts and the signature's parts as columns of `runs`."""
    kinds = {"input_path": "TEXT", "src_lang": "VARCHAR(16)", "tgt_lang": "VARCHAR(16)", "tool": "TEXT",
             "rules": "TEXT", "src_pipeline": "TEXT", "tgt_pipeline": "TEXT", "thresholds": "TEXT",
             "has_entities": "BOOLEAN", "has_texts": "BOOLEAN"}
    present = {c["name"] for c in sa.inspect(conn).get_columns("runs")}
    for name in V2_RUN_COLUMNS:
        if name not in present:
            conn.execute(sa.text(f"ALTER TABLE runs ADD COLUMN {name} {kinds[name]}"))
    entities_table.create(conn, checkfirst=True)
    segments_table.create(conn, checkfirst=True)
    old = sa.table("runs", sa.column("id"), sa.column("signature"), *(sa.column(c) for c in V2_RUN_COLUMNS))
    for run_id, signature in conn.execute(sa.select(old.c.id, old.c.signature)).all():
        sig = json.loads(signature)
        conn.execute(old.update().where(old.c.id == run_id).values(
            **signature_columns(sig), src_lang=str(sig.get("src", "")).split(":")[0],
            tgt_lang=str(sig.get("tgt", "")).split(":")[0], input_path=str(sig.get("input", "")),
            has_entities=False, has_texts=False))


MIGRATIONS: dict[int, Callable[[Connection], None]] = {1: _migrate_1_to_2}


__all__ = (
    "DEFAULT_DB", "HistoryError", "HistoryStore", "RunInfo", "SCHEMA_VERSION", "database_url",
    "parse_run_name",
)
