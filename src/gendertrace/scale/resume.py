"""Continuing an interrupted run: what OUT.jsonl already holds, a torn last line repaired.

Results are written one line per document, in input order, each line flushed whole; so after any interruption
(even SIGKILL) OUT holds a prefix of the results, possibly followed by part of one more line. Repairing cuts
that part off; the run then goes on from the first document without a complete line.
"""

from __future__ import annotations

import json
from collections.abc import Iterator
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import DocumentStats

# Signature keys that describe the input or the run's progress, not the settings that produced the scores.
NOT_SETTINGS: tuple[str, ...] = ("input", "documents", "state")


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
