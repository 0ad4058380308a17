"""Continuing an interrupted run: what the partial results already hold, a torn last line repaired.

A run streams its results into OUT.part (one line per document, in input order, each line flushed whole)
beside a digest file, OUT.part.digests, holding one line per document (its id and a digest of its input rows),
each written before the document's result line. After any interruption (even SIGKILL) OUT.part holds a
prefix of the results, possibly followed by part of one more line, and the digest file at least as many
complete lines. Repairing cuts the torn part off; the run then goes on from the first document without a
complete line, after checking that the kept documents' input rows are unchanged. A complete run renames
OUT.part to OUT (and OUT.part.digests to OUT.digests).
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import Document, DocumentStats

# Signature keys that describe the input or the run's progress, not the settings that produced the scores.
NOT_SETTINGS: tuple[str, ...] = ("input", "documents", "state")
PARTIAL_SUFFIX = ".part"


def signature_path(results: str | Path) -> Path:
    """The signature sidecar of a results file: RESULTS.signature.json."""
    return Path(str(results) + ".signature.json")


def digests_path(results: str | Path) -> Path:
    """The input digests of a results file: RESULTS.digests (one 'doc_id<TAB>digest' line per result)."""
    return Path(str(results) + ".digests")


@dataclass(frozen=True)
class RunFiles:
    """The files of a run writing OUT: the final trio, and the partial trio it streams into."""

    out: Path
    partial: Path

    @classmethod
    def for_output(cls, out: str | Path) -> RunFiles:
        return cls(Path(out), Path(str(out) + PARTIAL_SUFFIX))

    @property
    def outputs(self) -> list[tuple[str, Path]]:
        """What the run may write, named for messages."""
        return [("--out", self.out), ("signature", signature_path(self.out)), ("digests", digests_path(self.out)),
                ("partial results", self.partial), ("partial signature", signature_path(self.partial)),
                ("partial digests", digests_path(self.partial))]


def document_digest(document: Document) -> str:
    """A digest of a document's input rows (ids, source, target and reference of every segment, in order)."""
    rows = [document.doc_id, [[s.seg_id, s.source, s.target, s.reference] for s in document.segments]]
    return hashlib.sha256(json.dumps(rows, ensure_ascii=False).encode("utf-8")).hexdigest()[:16]


def kept_digests(path: str | Path, count: int) -> list[tuple[str, str]]:
    """(doc_id, digest) of the first COUNT documents of a digest file, which is cut to those lines.

    InputError when the file holds fewer complete lines (it does not belong to the results beside it).
    """
    path = Path(path)
    kept: list[tuple[str, str]] = []
    keep_bytes = 0
    with open(path, "rb") as f:
        for lineno, raw in enumerate(f, 1):
            if len(kept) == count or not raw.endswith(b"\n"):
                break
            doc_id, tab, digest = raw.decode("utf-8").rstrip("\n").rpartition("\t")
            if not tab:
                raise InputError(str(path), lineno, f"expected 'doc_id<TAB>digest', found {raw[:60]!r}")
            kept.append((doc_id, digest))
            keep_bytes += len(raw)
    if len(kept) < count:
        raise InputError(str(path), None, f"holds digests of {len(kept)} documents but the results beside it "
                                          f"hold {count}: cannot check the kept documents; score afresh "
                                          f"without --resume")
    with open(path, "r+b") as f:
        f.truncate(keep_bytes)
    return kept


def repair_results(path: str | Path) -> int:
    """Cut a half-written last line off the results file; return how many complete lines it holds."""
    path = Path(path)
    with open(path, "r+b") as f:
        data_end = f.seek(0, 2)
        keep = 0
        # Search backwards for the last newline in modest steps (the file may be large).
        step = 1 << 16
        pos = data_end
        while pos > 0:
            start = max(0, pos - step)
            f.seek(start)
            chunk = f.read(pos - start)
            at = chunk.rfind(b"\n")
            if at >= 0:
                keep = start + at + 1
                break
            pos = start
        if keep != data_end:
            f.truncate(keep)
        f.seek(0)
        return sum(chunk.count(b"\n") for chunk in iter(lambda: f.read(1 << 20), b""))


def completed_records(path: str | Path) -> Iterator[tuple[str, DocumentStats]]:
    """(doc_id, statistics) of each complete line of a results file, in order (after `repair_results`)."""
    with open(path, encoding="utf-8") as f:
        for lineno, line in enumerate(f, 1):
            try:
                obj = json.loads(line)
                yield obj["doc_id"], stats_from_json(obj["stats"])
            except (json.JSONDecodeError, KeyError, TypeError) as exc:
                raise InputError(str(path), lineno,
                                 f"not a result line of gendertrace ({exc}); cannot resume") from exc


def stats_from_json(obj: dict) -> DocumentStats:
    return DocumentStats(obj["segments"], obj["entities"], obj["target_references"], obj["checked"],
                         obj["consistent"], dict(obj["findings"]))


def settings_differences(old: dict, new: dict) -> list[str]:
    """Names of the settings whose values differ between two run signatures."""
    keys = (old.keys() | new.keys()) - set(NOT_SETTINGS)
    return sorted(k for k in keys if old.get(k) != new.get(k))
