"""Integrity of the bundled demo corpus (corpora/demo): input files, gold findings and gold coreference.

Standard library only: the corpus must stay readable whatever state the package is in.
"""

from __future__ import annotations

import json
import unicodedata
from collections import Counter
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[1] / "corpora" / "demo"
GOLD = DEMO / "gold"
HEADER = ["doc_id", "seg_id", "source", "target"]
FINDINGS_HEADER = ["file", "doc_id", "seg_id", "kind", "start", "end", "text", "expected", "found"]
KINDS = {"contradiction", "inconsistency", "assumption"}
GENDERS = {"fem", "masc", "neutral"}  # neutral: a declared non-binary person (entities.yaml)
SIDES = {"source", "target"}
# direction -> minimum number of documents
DIRECTIONS = {"es-en": 7, "en-es": 7, "fr-en": 3, "en-fr": 3, "es-fr": 3}
VERSIONS = ("v1", "v2")


def _read_tsv(path: Path) -> tuple[list[str], list[list[str]]]:
    text = path.read_text(encoding="utf-8")
    assert not text.startswith("\ufeff"), f"{path.name}: unexpected byte order mark"
    assert "\r" not in text, f"{path.name}: CR characters"
    assert text.endswith("\n"), f"{path.name}: no final newline"
    lines = text[:-1].split("\n")
    header = lines[0].split("\t")
    return header, [line.split("\t") for line in lines[1:]]


def _corpus(path: Path) -> dict[str, list[tuple[str, str, str]]]:
    """doc_id -> [(seg_id, source, target)], checking the shape of every row on the way."""
    header, rows = _read_tsv(path)
    assert header == HEADER, f"{path.name}: header {header}"
    docs: dict[str, list[tuple[str, str, str]]] = {}
    last = None
    for n, row in enumerate(rows, start=2):
        assert len(row) == 4, f"{path.name}:{n}: {len(row)} columns"
        doc_id, seg_id, source, target = row
        assert doc_id and seg_id and source.strip() and target.strip(), f"{path.name}:{n}: empty cell"
        for cell in row:
            assert cell == cell.strip(), f"{path.name}:{n}: surrounding whitespace in {cell!r}"
            assert cell == unicodedata.normalize("NFC", cell), f"{path.name}:{n}: text not in NFC"
        if doc_id != last:
            assert doc_id not in docs, f"{path.name}:{n}: rows of {doc_id} are not consecutive"
            docs[doc_id] = []
            last = doc_id
        docs[doc_id].append((seg_id, source, target))
    return docs


def _input_files() -> list[Path]:
    return [DEMO / f"{d}.{v}.tsv" for d in DIRECTIONS for v in VERSIONS]


@pytest.fixture(scope="module")
def corpora() -> dict[str, dict[str, list[tuple[str, str, str]]]]:
    return {p.name: _corpus(p) for p in _input_files()}


def _segments(corpora) -> dict[tuple[str, str, str], tuple[str, str]]:
    return {
        (fname, doc_id, seg_id): (src, tgt)
        for fname, docs in corpora.items()
        for doc_id, segs in docs.items()
        for seg_id, src, tgt in segs
    }


def test_expected_files_exist():
    for path in _input_files():
        assert path.is_file(), f"missing {path.name}"
    assert (GOLD / "findings.tsv").is_file()
    assert (GOLD / "coref.jsonl").is_file()
    assert (DEMO / "README.md").is_file()
    extra = {p.name for p in DEMO.glob("*.tsv")} - {p.name for p in _input_files()}
    assert not extra, f"unexpected input files {sorted(extra)}"


@pytest.mark.parametrize("path", _input_files(), ids=lambda p: p.name)
def test_documents_and_segments(path):
    docs = _corpus(path)
    direction = path.name.split(".")[0]
    assert len(docs) >= DIRECTIONS[direction], f"{path.name}: only {len(docs)} documents"
    for doc_id, segs in docs.items():
        assert doc_id.startswith(direction + "-"), f"{path.name}: doc id {doc_id}"
        assert 4 <= len(segs) <= 12, f"{path.name}: {doc_id} has {len(segs)} segments"
        ids = [s for s, _, _ in segs]
        dup = [s for s, c in Counter(ids).items() if c > 1]
        assert not dup, f"{path.name}: {doc_id} repeats seg_id {dup}"


@pytest.mark.parametrize("direction", list(DIRECTIONS))
def test_versions_share_documents_and_sources(corpora, direction):
    v1 = corpora[f"{direction}.v1.tsv"]
    v2 = corpora[f"{direction}.v2.tsv"]
    assert list(v1) == list(v2), f"{direction}: different documents in v1 and v2"
    differing = 0
    for doc_id in v1:
        a, b = v1[doc_id], v2[doc_id]
        assert [(s, src) for s, src, _ in a] == [(s, src) for s, src, _ in b], (
            f"{direction}: {doc_id} has different segment ids or sources in v1 and v2"
        )
        differing += sum(t1 != t2 for (_, _, t1), (_, _, t2) in zip(a, b, strict=True))
    assert differing, f"{direction}: v1 and v2 have identical targets"


def _findings() -> list[dict[str, str]]:
    header, rows = _read_tsv(GOLD / "findings.tsv")
    assert header == FINDINGS_HEADER, f"findings.tsv header {header}"
    out = []
    for n, row in enumerate(rows, start=2):
        assert len(row) == len(FINDINGS_HEADER), f"findings.tsv:{n}: {len(row)} columns"
        out.append(dict(zip(FINDINGS_HEADER, row, strict=True), line=str(n)))
    return out


def test_findings_vocabulary():
    for f in _findings():
        where = f"findings.tsv:{f['line']}"
        assert f["kind"] in KINDS, f"{where}: kind {f['kind']!r}"
        assert f["found"] in GENDERS, f"{where}: found {f['found']!r}"
        if f["kind"] == "contradiction":
            assert f["expected"] in GENDERS, f"{where}: expected {f['expected']!r}"
            assert f["expected"] != f["found"], f"{where}: a contradiction needs two different genders"
        else:
            assert f["expected"] == "", f"{where}: expected must be empty for {f['kind']}"


def test_findings_spans_match_targets(corpora):
    segments = _segments(corpora)
    seen = set()
    for f in _findings():
        where = f"findings.tsv:{f['line']}"
        key = (f["file"], f["doc_id"], f["seg_id"])
        assert key in segments, f"{where}: no segment {key}"
        target = segments[key][1]
        start, end = int(f["start"]), int(f["end"])
        assert 0 <= start < end <= len(target), f"{where}: offsets {start}-{end} out of range"
        assert target[start:end] == f["text"], (
            f"{where}: target[{start}:{end}] is {target[start:end]!r}, not {f['text']!r}"
        )
        assert f["text"] == f["text"].strip(), f"{where}: span has surrounding whitespace"
        span = key + (start, end)
        assert span not in seen, f"{where}: duplicate span"
        seen.add(span)


def test_findings_cover_both_versions_and_leave_clean_documents(corpora):
    findings = _findings()
    files = {f["file"] for f in findings}
    for direction in DIRECTIONS:
        flagged = {f["doc_id"] for f in findings if f["file"].startswith(direction + ".")}
        all_docs = set(corpora[f"{direction}.v1.tsv"])
        assert all_docs - flagged, f"{direction}: no document is clean in both versions"
    assert any(name.endswith(".v1.tsv") for name in files)
    assert any(name.endswith(".v2.tsv") for name in files)


def _coref() -> list[dict]:
    records = []
    for n, line in enumerate((GOLD / "coref.jsonl").read_text(encoding="utf-8").splitlines(), start=1):
        assert line.strip(), f"coref.jsonl:{n}: blank line"
        records.append(json.loads(line) | {"_line": n})
    return records


def test_coref_shape_and_coverage(corpora):
    records = _coref()
    keys = Counter()
    for r in records:
        where = f"coref.jsonl:{r['_line']}"
        assert set(r) == {"file", "doc_id", "side", "chains", "_line"}, f"{where}: keys {sorted(r)}"
        assert r["side"] in SIDES, f"{where}: side {r['side']!r}"
        assert r["file"] in corpora, f"{where}: unknown file {r['file']!r}"
        assert r["doc_id"] in corpora[r["file"]], f"{where}: unknown document {r['doc_id']!r}"
        assert isinstance(r["chains"], list) and r["chains"], f"{where}: no chains"
        labels = [c["person"] for c in r["chains"]]
        assert len(labels) == len(set(labels)), f"{where}: repeated person label"
        for c in r["chains"]:
            assert set(c) == {"person", "mentions"}, f"{where}: chain keys {sorted(c)}"
            assert isinstance(c["person"], str) and c["person"].strip()
            assert c["mentions"], f"{where}: empty chain for {c['person']!r}"
        keys[(r["file"], r["doc_id"], r["side"])] += 1
    assert all(n == 1 for n in keys.values()), "a (file, doc_id, side) appears more than once"
    for direction in DIRECTIONS:
        fname = f"{direction}.v1.tsv"
        for doc_id in corpora[fname]:
            for side in SIDES:
                assert (fname, doc_id, side) in keys, f"coref.jsonl: no {side} chains for {fname} {doc_id}"


def test_coref_mentions_match_text(corpora):
    segments = _segments(corpora)
    for r in _coref():
        where = f"coref.jsonl:{r['_line']}"
        idx = 0 if r["side"] == "source" else 1
        taken: dict[tuple[str, int, int], str] = {}
        for c in r["chains"]:
            for m in c["mentions"]:
                assert isinstance(m, list) and len(m) == 4, f"{where}: mention {m!r}"
                seg_id, start, end, text = m
                assert isinstance(seg_id, str) and isinstance(start, int) and isinstance(end, int)
                key = (r["file"], r["doc_id"], seg_id)
                assert key in segments, f"{where}: no segment {key}"
                string = segments[key][idx]
                assert 0 <= start < end <= len(string), f"{where}: offsets {start}-{end} out of range"
                assert string[start:end] == text, (
                    f"{where}: {r['side']}[{start}:{end}] of {r['doc_id']}/{seg_id} is "
                    f"{string[start:end]!r}, not {text!r}"
                )
                span = (seg_id, start, end)
                assert span not in taken, (
                    f"{where}: {text!r} is in two chains ({taken[span]!r}, {c['person']!r})"
                )
                taken[span] = c["person"]
