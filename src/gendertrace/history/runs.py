"""A scored run as the history store keeps it: signature, per-document statistics, findings, entities, texts.

`load_run` reads a results file (one JSON object per document) and its `.signature.json` sidecar, and,
when given the input the results were scored from, the target and reference texts of every segment.

Per-entity counts. The results give `checked` and `consistent` per document, not per entity. When an entity
carries its own `checked` and `consistent` keys they are taken as reported; otherwise they are estimated from
what the results do hold (`EntityRecord.counts == "estimated"`):

- checked: the entity's gendered (fem/masc) target-side evidence words, grouped the way the scorer groups a
  target reference (a determiner and its noun, or a noun and its adjective, in one noun phrase count once; a
  predicative adjective or participle counts alone); a group made only of a bare masculine role noun is left
  out, since the scorer never flags that form alone. Only entities whose source evidence is confident enough
  to judge (entity confidence at or above the run's `min_confidence`) are counted.
- consistent: checked minus the entity's contradiction and inconsistency findings (never below zero; checked
  is raised to the number of findings when the estimate falls short).

The estimate ignores the scorer's finer filters (clitics that may stand for things, link certainty), so it
can differ from the document totals by a reference or two; `RunData.entity_coverage` reports how far.
"""

from __future__ import annotations

import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import FINDING_KINDS

# Signature keys that describe the input (or how far the run got) rather than the settings: they may differ
# between comparable runs. An incomplete run is marked apart (`RunInfo.incomplete`), not as a setting.
INPUT_KEYS: tuple[str, ...] = ("input", "documents", "state")
INCOMPLETE = "incomplete"
# Rules (as written in the findings stage) for words that are checked one by one, not as a noun phrase.
PREDICATE_RULES: tuple[str, ...] = ("predicative with copula", "participle with agreeing auxiliary",
                                    "secondary predicate")
UNMARKED_RULE = "masculine noun form"
DEFAULT_MIN_CONFIDENCE = 0.5


@dataclass(frozen=True)
class DocumentRecord:
    """Sufficient statistics of one document of a run."""

    doc_id: str
    position: int
    segments: int
    entities: int
    target_references: int
    checked: int
    consistent: int
    findings: Mapping[str, int]
    skipped: str = ""


@dataclass(frozen=True)
class EntityRecord:
    """One person of one document: the gender its evidence resolves to, and its own checked/consistent counts.

    basis: "source" when the entity has source-side evidence (the gender is then the source's), "target" when
    only the target speaks, "none" when nothing does. counts: "reported" or "estimated" (see the module).
    """

    doc_id: str
    entity_id: str
    label: str
    gender: str | None
    confidence: float
    basis: str
    checked: int
    consistent: int
    counts: str


@dataclass(frozen=True)
class FindingRecord:
    doc_id: str
    kind: str
    seg_id: str
    start: int
    end: int
    text: str
    expected: str | None
    found: str | None
    entity: str
    confidence: float


@dataclass(frozen=True)
class SegmentText:
    """A segment's machine translation (hypothesis) and, when the input had one, its reference."""

    doc_id: str
    position: int
    seg_id: str
    hypothesis: str
    reference: str | None


@dataclass(frozen=True)
class RunData:
    """Everything the store keeps about one scored run."""

    signature: Mapping[str, object]
    documents: tuple[DocumentRecord, ...]
    entities: tuple[EntityRecord, ...]
    findings: tuple[FindingRecord, ...]
    segments: tuple[SegmentText, ...] = ()
    results_path: str = ""
    input_path: str = ""
    src_lang: str = ""
    tgt_lang: str = ""
    notes: tuple[str, ...] = field(default=())

    @property
    def checked(self) -> int:
        return sum(d.checked for d in self.documents)

    @property
    def consistent(self) -> int:
        return sum(d.consistent for d in self.documents)

    @property
    def entity_coverage(self) -> tuple[int, int]:
        """(sum of per-entity checked counts, sum of per-document checked counts)."""
        return sum(e.checked for e in self.entities), self.checked


def comparable_signature(signature: Mapping[str, object]) -> dict[str, object]:
    """The signature without the keys that describe the input: what must agree between comparable runs."""
    return {k: v for k, v in signature.items() if k not in INPUT_KEYS}


def signature_differences(a: Mapping[str, object],
                          b: Mapping[str, object]) -> list[tuple[str, object, object]]:
    """(key, value in a, value in b) for every setting that differs; a missing key shows as None."""
    ca, cb = comparable_signature(a), comparable_signature(b)
    return [(k, ca.get(k), cb.get(k)) for k in sorted(ca.keys() | cb.keys()) if ca.get(k) != cb.get(k)]


def read_signature(results_path: Path) -> dict[str, object]:
    sidecar = Path(str(results_path) + ".signature.json")
    if not sidecar.is_file():
        raise InputError(str(sidecar), None,
                         "no signature file beside the results (written by `gendertrace score`)")
    try:
        signature = json.loads(sidecar.read_text(encoding="utf-8"))
    except json.JSONDecodeError as exc:
        raise InputError(str(sidecar), exc.lineno, f"not valid JSON: {exc.msg}") from exc
    if not isinstance(signature, dict):
        raise InputError(str(sidecar), None, "expected a JSON object")
    for key in ("tool", "rules"):
        if key not in signature:
            raise InputError(str(sidecar), None, f"the signature has no {key!r}")
    return signature


def load_run(results_path: str | Path, input_path: str | Path | None = None,
             fmt: str | None = None, keep_incomplete: bool = False) -> RunData:
    """Read RESULTS.jsonl, its signature sidecar and (optionally) the input's texts into a RunData.

    A run whose signature says it is incomplete (killed, or failed before its last document) is refused
    unless `keep_incomplete`; then it keeps that mark in its signature.
    """
    results_path = Path(results_path)
    signature = read_signature(results_path)
    min_conf = float(signature.get("min_confidence", DEFAULT_MIN_CONFIDENCE))  # type: ignore[arg-type]
    documents: list[DocumentRecord] = []
    entities: list[EntityRecord] = []
    findings: list[FindingRecord] = []
    langs: set[tuple[str, str]] = set()
    seen: set[str] = set()
    try:
        f = open(results_path, encoding="utf-8")
    except OSError as exc:
        raise InputError(str(results_path), None, f"cannot read: {exc.strerror}") from exc
    with f:
        for line_no, line in enumerate(f, 1):
            if not line.strip():
                continue
            try:
                doc = json.loads(line)
                rec, ents, fds = _document(doc, len(documents), min_conf)
            except json.JSONDecodeError as exc:
                raise InputError(str(results_path), line_no, f"not valid JSON: {exc.msg}") from exc
            except (KeyError, TypeError, ValueError) as exc:
                raise InputError(str(results_path), line_no,
                                 f"not a gendertrace result: {_describe(exc)}") from exc
            if rec.doc_id in seen:
                raise InputError(str(results_path), line_no, f"document {rec.doc_id!r} appears twice")
            seen.add(rec.doc_id)
            documents.append(rec)
            entities.extend(ents)
            findings.extend(fds)
            langs.add((str(doc.get("src_lang", "")), str(doc.get("tgt_lang", ""))))
    if not documents:
        raise InputError(str(results_path), None, "no documents in the results")
    if signature.get("state") == INCOMPLETE and not keep_incomplete:
        raise InputError(f"{results_path}.signature.json", None,
                         f"state {INCOMPLETE!r}: the run stopped (killed, or failed) after {len(documents)} "
                         f"documents; finish it with `gendertrace score --resume`, or record it as it is "
                         f"with --keep-incomplete")
    src_lang, tgt_lang = sorted(langs)[0] if len(langs) == 1 else ("", "")
    segments: tuple[SegmentText, ...] = ()
    if input_path is not None:
        segments = _texts(Path(input_path), fmt, [d.doc_id for d in documents])
    notes = ()
    if any(e.counts == "estimated" for e in entities):
        est, total = sum(e.checked for e in entities), sum(d.checked for d in documents)
        notes = (f"per-entity checked counts estimated from target evidence ({est} against {total} checked "
                 f"references in the document totals)",)
    return RunData(signature, tuple(documents), tuple(entities), tuple(findings), segments,
                   results_path=str(results_path), input_path=str(input_path or ""),
                   src_lang=src_lang, tgt_lang=tgt_lang, notes=notes)


def _describe(exc: Exception) -> str:
    return f"missing key {exc.args[0]!r}" if isinstance(exc, KeyError) else str(exc)


def _document(doc: Mapping, position: int, min_conf: float
              ) -> tuple[DocumentRecord, list[EntityRecord], list[FindingRecord]]:
    doc_id = str(doc["doc_id"])
    stats = doc["stats"]
    by_kind = {k: int(stats.get("findings", {}).get(k, 0)) for k in FINDING_KINDS}
    rec = DocumentRecord(
        doc_id=doc_id, position=position, segments=int(stats.get("segments", 0)),
        entities=int(stats.get("entities", len(doc.get("entities", [])))),
        target_references=int(stats.get("target_references", 0)),
        checked=int(stats["checked"]), consistent=int(stats["consistent"]),
        findings=by_kind, skipped=str(doc.get("skipped", "")),
    )
    if rec.consistent > rec.checked or rec.checked < 0 or rec.consistent < 0:
        raise ValueError(f"document {doc_id!r}: consistent {rec.consistent} is not within "
                         f"0..checked {rec.checked}")
    findings = [
        FindingRecord(doc_id, str(fd["kind"]), str(fd["seg_id"]), int(fd["start"]), int(fd["end"]),
                      str(fd.get("text", "")), fd.get("expected"), fd.get("found"), str(fd.get("entity", "")),
                      float(fd.get("confidence", 0.0)))
        for fd in doc.get("findings", [])
    ]
    flagged: dict[str, int] = {}
    for fd in findings:
        if fd.kind in ("contradiction", "inconsistency"):
            flagged[fd.entity] = flagged.get(fd.entity, 0) + 1
    entities = [_entity(doc_id, e, flagged.get(str(e["id"]), 0), min_conf) for e in doc.get("entities", [])]
    return rec, entities, findings


def _entity(doc_id: str, e: Mapping, flagged: int, min_conf: float) -> EntityRecord:
    evidence = e.get("evidence", [])
    sides = {ev.get("side") for ev in evidence}
    basis = "source" if "source" in sides else "target" if "target" in sides else "none"
    gender = e.get("gender")
    confidence = float(e.get("confidence", 0.0))
    if "checked" in e and "consistent" in e:
        checked, consistent, counts = int(e["checked"]), int(e["consistent"]), "reported"
    else:
        checked = estimate_checked(evidence) if basis == "source" and confidence >= min_conf else 0
        checked = max(checked, flagged)
        consistent, counts = checked - flagged, "estimated"
    return EntityRecord(doc_id, str(e["id"]), str(e.get("label", "")), gender, confidence, basis, checked,
                        consistent, counts)


def estimate_checked(evidence: Sequence[Mapping]) -> int:
    """Target references an entity's evidence implies: noun-phrase words grouped, predicate words alone."""
    marks = sorted((ev for ev in evidence
                    if ev.get("side") == "target" and ev.get("gender") in ("fem", "masc")),
                   key=lambda ev: (_seg_key(str(ev["seg_id"])), int(ev["start"])))
    groups: list[list[Mapping]] = []
    for ev in marks:
        last = groups[-1][-1] if groups else None
        # Words of one noun phrase sit next to each other: at most one character (a space) between them.
        if (last is not None and ev.get("rule") not in PREDICATE_RULES
                and last.get("rule") not in PREDICATE_RULES
                and last["seg_id"] == ev["seg_id"] and 0 <= int(ev["start"]) - int(last["end"]) <= 1):
            groups[-1].append(ev)
        else:
            groups.append([ev])
    return sum(1 for g in groups if not all(ev.get("rule") == UNMARKED_RULE for ev in g))


def _seg_key(seg_id: str) -> tuple[int, int, str]:
    return (0, int(seg_id), "") if seg_id.isdigit() else (1, 0, seg_id)


def _texts(input_path: Path, fmt: str | None, doc_ids: Sequence[str]) -> tuple[SegmentText, ...]:
    from gendertrace.io.readers import read_corpus

    docs = {d.doc_id: d for d in read_corpus(input_path, fmt)}
    missing = [d for d in doc_ids if d not in docs]
    if missing:
        raise InputError(str(input_path), None, f"the input lacks {len(missing)} document(s) of the results: "
                         + ", ".join(missing[:10]) + (" ..." if len(missing) > 10 else ""))
    out = []
    for doc_id in doc_ids:
        for k, s in enumerate(docs[doc_id].segments):
            out.append(SegmentText(doc_id, k, s.seg_id, s.target, s.reference))
    return tuple(out)
