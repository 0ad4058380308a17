"""The store on SQLite and on a real PostgreSQL server: round trips, transactions, concurrency, migration."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
import sqlalchemy as sa
from history_helpers import Person, document, simple_docs, write_results

from gendertrace.history.runs import load_run
from gendertrace.history.store import SCHEMA_VERSION, HistoryError, HistoryStore, database_url


def _run(tmp_path: Path, name: str, docs) -> object:
    return load_run(write_results(tmp_path / f"{name}.jsonl", docs))


def test_a_recorded_run_reads_back_as_it_was_written(store_url, tmp_path):
    docs = [document("alpha", [Person("fem", 3, 1), Person("masc", 2), Person(None, 1)]),
            document("beta", [Person("masc", 4, 2)])]
    run = _run(tmp_path, "r", docs)
    with HistoryStore(store_url) as store:
        info = store.record(run, "lumen", "2.1")
        again, back = store.load("lumen", "2.1")
    assert info.name == "lumen:2.1" and again == info
    assert (info.documents, info.consistent, info.checked) == (2, 6, 9)
    assert [d.doc_id for d in back.documents] == ["alpha", "beta"]
    assert back.documents == run.documents
    assert back.entities == run.entities
    assert back.findings == run.findings
    assert back.signature == run.signature


def test_recording_the_same_run_twice_is_refused_unless_replaced(store_url, tmp_path):
    with HistoryStore(store_url) as store:
        store.record(_run(tmp_path, "a", simple_docs([(1, 2)])), "lumen", "1")
        with pytest.raises(HistoryError, match=r"lumen:1 is already recorded"):
            store.record(_run(tmp_path, "b", simple_docs([(2, 2)])), "lumen", "1")
        store.record(_run(tmp_path, "b", simple_docs([(2, 2)])), "lumen", "1", replace=True)
        assert [(r.name, r.consistent) for r in store.runs()] == [("lumen:1", 2)]
        _, back = store.load("lumen", "1")
    assert [(d.consistent, d.checked) for d in back.documents] == [(2, 2)]


def test_an_unknown_run_is_named_with_the_engines_known_runs(store_url, tmp_path):
    with HistoryStore(store_url) as store:
        store.record(_run(tmp_path, "a", simple_docs([(1, 2)])), "lumen", "1")
        with pytest.raises(HistoryError, match=r"no run lumen:9 .*runs of lumen: lumen:1"):
            store.get("lumen", "9")


def test_engine_names_hold_no_colon(tmp_path):
    with HistoryStore(tmp_path / "h.db") as store, pytest.raises(HistoryError, match="hold no ':'"):
        store.record(_run(tmp_path, "a", simple_docs([(1, 2)])), "a:b", "1")


def test_default_location_is_a_sqlite_file_under_the_current_folder(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert database_url(None) == f"sqlite:///{tmp_path.resolve() / '.gendertrace' / 'history.db'}"
    assert (tmp_path / ".gendertrace").is_dir()
    assert database_url("postgresql+psycopg://u@/db") == "postgresql+psycopg://u@/db"


# ---------------------------------------------------------------------------------------------------------
# Two writers at once, and a writer killed half-way

WRITER = textwrap.dedent("""
    import sys, time
    from pathlib import Path
    from gendertrace.history.runs import load_run
    from gendertrace.history.store import HistoryStore

    url, results, version, marker, pause = sys.argv[1:6]
    run = load_run(results)
    store = HistoryStore(url)

    def slow(table, rows):
        Path(marker).touch()
        time.sleep(float(pause))

    store.record(run, "lumen", version, on_batch=slow)
    print("done", version)
""")


def _writer(tmp_path: Path, url: str, results: Path, version: str,
            pause: float) -> tuple[subprocess.Popen, Path]:
    script = tmp_path / "writer.py"
    script.write_text(WRITER, encoding="utf-8")
    marker = tmp_path / f"started-{version}"
    args = [sys.executable, str(script), url, str(results), version, str(marker), str(pause)]
    proc = subprocess.Popen(args, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    return proc, marker


def _wait_for(path: Path, proc: subprocess.Popen, timeout: float = 30.0) -> None:
    end = time.monotonic() + timeout
    while not path.exists():
        if proc.poll() is not None:
            pytest.fail(f"the writer ended early: {proc.stderr.read()}")
        if time.monotonic() > end:
            pytest.fail("the writer never started inserting")
        time.sleep(0.02)


def test_two_processes_recording_at_once_both_land(store_url, tmp_path):
    # 1,200 documents: three batches of document rows, each followed by a pause, so the writers overlap.
    results = write_results(tmp_path / "big.jsonl", simple_docs([(3, 4)] * 1200))
    # The store does not exist yet: the two writers also race to create its schema.
    first, m1 = _writer(tmp_path, store_url, results, "1", 0.2)
    second, m2 = _writer(tmp_path, store_url, results, "2", 0.2)
    outs = [p.communicate(timeout=60) for p in (first, second)]
    assert [p.returncode for p in (first, second)] == [0, 0], outs
    assert m1.exists() and m2.exists()
    with HistoryStore(store_url) as store:
        runs = {r.name: r for r in store.runs()}
        assert sorted(runs) == ["lumen:1", "lumen:2"]
        for version in ("1", "2"):
            _, back = store.load("lumen", version)
            assert len(back.documents) == 1200 and len(back.entities) == 1200
            assert runs[f"lumen:{version}"].checked == 4800


def test_a_writer_killed_mid_record_leaves_the_earlier_runs_intact(store_url, tmp_path):
    with HistoryStore(store_url) as store:
        store.record(_run(tmp_path, "small", simple_docs([(4, 5), (2, 2)])), "lumen", "1")
    results = write_results(tmp_path / "big.jsonl", simple_docs([(1, 2)] * 2000))
    proc, marker = _writer(tmp_path, store_url, results, "2", 60)
    _wait_for(marker, proc)  # the first batch of rows is in, the transaction still open
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait(timeout=10)
    assert proc.returncode == -signal.SIGKILL
    with HistoryStore(store_url, busy_timeout=10) as store:
        assert [r.name for r in store.runs()] == ["lumen:1"]
        _, back = store.load("lumen", "1")
        assert [(d.consistent, d.checked) for d in back.documents] == [(4, 5), (2, 2)]
        with store.engine.connect() as conn:
            orphans = conn.execute(sa.text("SELECT COUNT(*) FROM run_documents WHERE run_id NOT IN "
                                           "(SELECT id FROM runs)")).scalar()
            assert orphans == 0
            if store.is_sqlite:
                assert conn.execute(sa.text("PRAGMA integrity_check")).scalar() == "ok"
        # The lock died with the writer: the same run can be recorded now.
        store.record(load_run(results), "lumen", "2")
        assert [r.name for r in store.runs()] == ["lumen:1", "lumen:2"]


# ---------------------------------------------------------------------------------------------------------
# Schema versions


def _version_1_store(url: str) -> None:
    """The layout the first release of the store wrote: runs, their documents and findings, nothing else."""
    engine = sa.create_engine(url)
    serial = "INTEGER PRIMARY KEY AUTOINCREMENT" if engine.dialect.name == "sqlite" else "SERIAL PRIMARY KEY"
    signature = ('{"documents": 2, "input": "batch.tsv", "min_confidence": 0.5, "rules": "0a1b2c3d4e5f", '
                 '"src": "es:spacy:es_model==1.0", "tgt": "en:spacy:en_model==1.0", '
                 '"tool": "gendertrace 0.1.0"}')
    with engine.begin() as conn:
        for ddl in (
            "CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at VARCHAR(40) NOT NULL)",
            f"CREATE TABLE runs (id {serial}, engine VARCHAR(200) NOT NULL, version VARCHAR(200) NOT NULL, "
            "recorded_at VARCHAR(40) NOT NULL, results_path TEXT NOT NULL, signature TEXT NOT NULL, "
            "documents INTEGER NOT NULL, checked INTEGER NOT NULL, consistent INTEGER NOT NULL, "
            "CONSTRAINT uq_runs_engine_version UNIQUE (engine, version))",
            "CREATE TABLE run_documents (run_id INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE, "
            "position INTEGER NOT NULL, doc_id TEXT NOT NULL, segments INTEGER NOT NULL, "
            "entities INTEGER NOT NULL, "
            "target_references INTEGER NOT NULL, checked INTEGER NOT NULL, consistent INTEGER NOT NULL, "
            "contradiction INTEGER NOT NULL, inconsistency INTEGER NOT NULL, assumption INTEGER NOT NULL, "
            "skipped TEXT NOT NULL, PRIMARY KEY (run_id, position))",
            f"CREATE TABLE run_findings (id {serial}, "
            "run_id INTEGER NOT NULL REFERENCES runs(id) ON DELETE CASCADE, "
            "doc_id TEXT NOT NULL, kind VARCHAR(20) NOT NULL, seg_id TEXT NOT NULL, "
            "start_char INTEGER NOT NULL, "
            "end_char INTEGER NOT NULL, text TEXT NOT NULL, expected VARCHAR(10), found VARCHAR(10), "
            "entity TEXT NOT NULL, confidence FLOAT NOT NULL)",
        ):
            conn.execute(sa.text(ddl))
        conn.execute(sa.text("INSERT INTO schema_version VALUES (1, '2024-01-01T00:00:00+00:00')"))
        conn.execute(sa.text("INSERT INTO runs (engine, version, recorded_at, results_path, signature, "
                             "documents, checked, consistent) VALUES ('lumen', '1', "
                             "'2024-01-01T00:00:00+00:00', 'r.jsonl', :sig, 2, 7, 6)"), {"sig": signature})
        conn.execute(sa.text("INSERT INTO run_documents VALUES (1, 0, 'd000', 3, 1, 5, 5, 4, 1, 0, 0, ''), "
                             "(1, 1, 'd001', 3, 1, 2, 2, 2, 0, 0, 0, '')"))
        conn.execute(sa.text("INSERT INTO run_findings (run_id, doc_id, kind, seg_id, start_char, end_char, "
                             "text, expected, found, entity, confidence) VALUES (1, 'd000', 'contradiction', "
                             "'2', 0, 2, 'he', 'fem', 'masc', 'E1', 0.8)"))
    engine.dispose()


def test_a_version_1_store_is_migrated_to_the_current_schema(store_url, tmp_path):
    url = database_url(store_url)
    _version_1_store(url)
    with HistoryStore(store_url) as store:
        assert store.schema_version() == SCHEMA_VERSION == 2
        (old,) = store.runs()
        assert (old.name, old.checked, old.consistent) == ("lumen:1", 7, 6)
        assert (old.has_entities, old.has_texts) == (False, False)
        _, back = store.load("lumen", "1")
        assert [(d.doc_id, d.consistent, d.checked) for d in back.documents] == [("d000", 4, 5),
                                                                                 ("d001", 2, 2)]
        assert [(f.kind, f.text) for f in back.findings] == [("contradiction", "he")]
        with store.engine.connect() as conn:
            row = conn.execute(sa.text("SELECT tool, rules, src_pipeline, thresholds FROM runs")).one()
            versions = conn.execute(sa.text("SELECT version FROM schema_version ORDER BY version")
                                    ).scalars().all()
        # The signature's parts were copied into the new columns.
        assert tuple(row) == ("gendertrace 0.1.0", "0a1b2c3d4e5f", "es:spacy:es_model==1.0",
                              '{"min_confidence": 0.5}')
        assert versions == [1, 2]
        # New runs go in beside the migrated one, with the per-entity rows version 2 added.
        store.record(_run(tmp_path, "new", simple_docs([(4, 5), (2, 2)], prefix="d")), "lumen", "2")
        _, new = store.load("lumen", "2")
        assert len(new.entities) == 2
        assert [r.name for r in store.runs()] == ["lumen:1", "lumen:2"]


def test_a_store_newer_than_the_program_is_refused(tmp_path):
    path = tmp_path / "h.db"
    HistoryStore(path).close()
    engine = sa.create_engine(database_url(path))
    with engine.begin() as conn:
        conn.execute(sa.text("INSERT INTO schema_version VALUES (99, '2099-01-01T00:00:00+00:00')"))
    engine.dispose()
    with pytest.raises(HistoryError, match="schema version 99, newer than this program's 2"):
        HistoryStore(path)


def test_a_database_with_store_tables_but_no_version_is_not_taken_over(tmp_path):
    path = tmp_path / "h.db"
    engine = sa.create_engine(database_url(path))
    with engine.begin() as conn:
        conn.execute(sa.text("CREATE TABLE runs (id INTEGER PRIMARY KEY, note TEXT)"))
    engine.dispose()
    with pytest.raises(HistoryError, match="no schema_version: not a history store"):
        HistoryStore(path)
