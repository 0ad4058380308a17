"""The results format: one JSON object per scored document, written and read here and nowhere else.

Every line carries `"schema": SCHEMA_VERSION`. Version 2 (this one) keeps the results' size linear in the
number of findings: a finding carries only its decisive evidence (the marks of the source word its flagged
word is linked through first, then the heaviest others, at most DECISIVE_ITEMS) and `evidence_total`, the
size of the full list; the full evidence is its entity's `evidence`, written once. Target mentions carry
their link (method, confidence, and the source mention it goes through); a finding names its target mention
and the aligned source word (`source`: the link's source mention, basis "link"; for a link without one, the
source words the aligner pairs the mention with, basis "alignment"; else the person's only mention in the
same source segment, basis "segment"). Lines without `schema` are
version 1 (every finding repeats its full evidence); they read the same way, without links.

The contract fields of every line: doc_id, src_lang, tgt_lang, entities, findings (kind, seg_id, start, end,
text, expected, found, entity, confidence, evidence items with side, seg_id, start, end, text), stats.

`Summary` is the one type for counts and the consistency rate, for a document or a whole corpus.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, TextIO

from gendertrace.errors import InputError

if TYPE_CHECKING:
    from gendertrace.model import DocumentResult, DocumentStats, EvidenceItem, Finding, Mention, ParsedText

SCHEMA_VERSION = 2
# A finding's own evidence list: the aligned source word's marks, then the heaviest others, this many at most.
DECISIVE_ITEMS = 6
FINDING_KINDS: tuple[str, ...] = ("contradiction", "inconsistency", "assumption")
FINDING_KEYS = ("kind", "seg_id", "start", "end", "text", "confidence")
EVIDENCE_KEYS = ("side", "seg_id", "start", "end", "text")


def consistency_rate(consistent: int, checked: int) -> float | None:
    """Consistent over checked gendered target references; None when nothing could be checked."""
    return consistent / checked if checked else None


@dataclass
class Summary:
    """Counts of one document or of a corpus, aggregated from per-document statistics."""

    documents: int = 0
    segments: int = 0
    untranslated: int = 0
    entities: int = 0
    target_references: int = 0
    checked: int = 0
    consistent: int = 0
    findings: dict[str, int] = field(default_factory=lambda: dict.fromkeys(FINDING_KINDS, 0))

    def add(self, r: DocumentResult) -> None:
        self.add_stats(r.stats)

    def add_stats(self, s: DocumentStats | Summary) -> None:
        """Count one document from its statistics alone (what a worker process sends back)."""
        self.documents += getattr(s, "documents", 1)
        self.segments += s.segments
        self.entities += s.entities
        self.target_references += s.target_references
        self.checked += s.checked
        self.consistent += s.consistent
        for k, v in s.findings.items():
            self.findings[k] = self.findings.get(k, 0) + v

    @property
    def rate(self) -> float | None:
        """Consistent over checked gendered target references; None when nothing could be checked."""
        return consistency_rate(self.consistent, self.checked)

    def table(self) -> str:
        rate = "n/a (nothing checkable)" if self.rate is None else f"{self.rate:.3f}"
        rows = [
            ("documents", str(self.documents)),
            ("segments", f"{self.segments} ({self.untranslated} untranslated, skipped)"),
            ("entities", str(self.entities)),
            ("gendered target references", str(self.target_references)),
            ("checked against evidence", str(self.checked)),
            ("consistent", str(self.consistent)),
            ("contradiction findings", str(self.findings.get("contradiction", 0))),
            ("inconsistency findings", str(self.findings.get("inconsistency", 0))),
            ("assumption findings", str(self.findings.get("assumption", 0))),
            ("consistency rate", rate),
        ]
        width = max(len(k) for k, _ in rows)
        return "\n".join(f"{k:<{width}}  {v}" for k, v in rows)


# ---------------------------------------------------------------------------------------------------------
# Writing


def _evidence_json(e: EvidenceItem) -> dict:
    return {"side": e.side, "seg_id": e.seg_id, "start": e.start, "end": e.end, "text": e.text,
            "gender": e.gender, "kind": e.kind, "weight": round(e.weight, 3), "rule": e.rule}


def _mention_json(m: Mention, seg_ids: Mapping[int, str]) -> dict:
    out = {"id": m.id, "seg": m.seg, "start": m.start, "end": m.end, "text": m.text, "kind": m.kind}
    if m.seg in seg_ids:
        out["seg_id"] = seg_ids[m.seg]
    return out


def aligned_source_words(mentions: Sequence[Mention], source: Sequence[ParsedText],
                         alignments: Sequence) -> dict[str, tuple[int, int, int, str]]:
    """Per target mention, the contiguous source words the word aligner pairs it with (none when scattered).

    A subject the aligner pairs with nothing stands, in a pro-drop source, for the unexpressed subject of the
    source verb its own verb is paired with: that verb, when it has no subject of its own, is the word.
    """
    out = {}
    for m in mentions:
        if m.seg >= len(source):
            continue
        pairs = alignments[m.seg] if m.seg < len(alignments) else ()
        parsed = source[m.seg]
        wanted = set(m.tokens)
        found = sorted({i for i, j in pairs if j in wanted})
        if not found and m.role in ("nsubj", "nsubj:pass") and m.clause >= 0:
            verbs = sorted({i for i, j in pairs if j == m.clause and parsed.tokens[i].upos in ("VERB", "AUX")
                            and not any(c.deprel.startswith("nsubj") for c in parsed.children(i))})
            found = verbs if len(verbs) == 1 else []
        if not found or found[-1] - found[0] + 1 != len(found):
            continue
        start, end = parsed.tokens[found[0]].start, parsed.tokens[found[-1]].end
        out[m.id] = (m.seg, start, end, parsed.text[start:end])
    return out


def decisive_evidence(f: Finding, via: Mention | None) -> list[EvidenceItem]:
    """The finding's evidence worth carrying: a declaration first (it outranks all other evidence), then the
    aligned source word's marks, then the heaviest of the rest."""
    declared = [e for e in f.evidence if e.kind == "declared"]
    own = [e for e in f.evidence if via is not None and e.side == "source" and e.seg_id == f.seg_id
           and via.start <= e.start and e.end <= via.end and e not in declared]
    if via is not None:
        own += [m for m in via.marks if m not in own and m not in declared]
    first = declared + own
    rest = sorted((e for e in f.evidence if e not in first), key=lambda e: -e.weight)
    return (first + rest)[:max(DECISIVE_ITEMS, len(first))]


def document_json(r: DocumentResult) -> dict:
    """One results line (a JSON object) for a scored document, in the current schema."""
    seg_ids = {m.seg: e.seg_id for ent in r.entities for m in ent.source_mentions + ent.target_mentions
               for e in m.marks}
    for f in r.findings:
        seg_ids.setdefault(f.seg, f.seg_id)
    source_by_id = {m.id: m for ent in r.entities for m in ent.source_mentions}
    entity_by_id = {ent.id: ent for ent in r.entities}
    entities = []
    for ent in r.entities:
        targets = []
        for m in ent.target_mentions:
            row = _mention_json(m, seg_ids)
            link = r.links.get(m.id)
            if link is not None:
                row["link"] = {"method": link.method, "confidence": round(link.confidence, 3)}
                if link.via:
                    row["link"]["via"] = link.via
            targets.append(row)
        out = {
            "id": ent.id, "label": ent.label, "gender": ent.gender, "confidence": round(ent.confidence, 3),
            "checked": ent.checked, "consistent": ent.consistent,
            "source_mentions": [_mention_json(m, seg_ids) for m in ent.source_mentions],
            "target_mentions": targets,
            "evidence": [_evidence_json(e) for e in ent.evidence],
        }
        if ent.declared:
            out["declared"] = list(ent.declared)
        entities.append(out)
    findings = []
    for f in r.findings:
        link = r.links.get(f.mention) if f.mention else None
        via = source_by_id.get(link.via) if link is not None and link.via else None
        basis, span = "link", None
        if via is not None:
            span = (via.seg, via.start, via.end, via.text, via.kind)
        elif f.mention in r.aligned:
            # No link through a source mention (a chain link): the source words the aligner pairs it with.
            seg, start, end, text = r.aligned[f.mention]
            basis, span = "alignment", (seg, start, end, text, "")
        elif f.entity in entity_by_id:
            # Nor aligned: the person's only mention in the same source segment is the word it stands for.
            here = [m for m in entity_by_id[f.entity].source_mentions if m.seg == f.seg]
            if len(here) == 1:
                basis, span = "segment", (here[0].seg, here[0].start, here[0].end, here[0].text, here[0].kind)
        decisive = decisive_evidence(f, via)
        row = {
            "kind": f.kind, "seg_id": f.seg_id, "start": f.start, "end": f.end, "text": f.text,
            "expected": f.expected, "found": f.found, "entity": f.entity, "confidence": round(f.confidence, 3),
            "message": f.message, "evidence": [_evidence_json(e) for e in decisive],
            "evidence_total": len(set(f.evidence) | set(decisive)),
        }
        if f.mention:
            row["mention"] = f.mention
        if link is not None:
            row["link"] = {"method": link.method, "confidence": round(link.confidence, 3)}
        if span is not None:
            seg, start, end, text, kind = span
            row["source"] = {"seg": seg, "seg_id": f.seg_id if seg == f.seg else seg_ids.get(seg, ""),
                             "start": start, "end": end, "text": text, "kind": kind, "basis": basis}
        findings.append(row)
    out = {"schema": SCHEMA_VERSION, "doc_id": r.doc_id, "src_lang": r.src_lang, "tgt_lang": r.tgt_lang,
           "entities": entities, "findings": findings, "stats": r.stats.to_json()}
    if r.skipped:
        out["skipped"] = r.skipped
    return out


def write_results(results: Iterable[DocumentResult], out: TextIO) -> Summary:
    """Write one JSON object per document to the open text stream `out`, returning the totals."""
    summary = Summary()
    for r in results:
        out.write(json.dumps(document_json(r), ensure_ascii=False) + "\n")
        out.flush()
        summary.add(r)
    return summary


# ---------------------------------------------------------------------------------------------------------
# Reading


@dataclass(frozen=True)
class ResultEvidence:
    side: str  # "source" or "target"
    seg_id: str
    start: int
    end: int
    text: str
    gender: str | None
    kind: str  # pronoun, morphology, agreement, lexical, title, declared (or whatever the scorer says)
    rule: str
    weight: float = 0.0

    @property
    def key(self) -> tuple[str, str, int, int]:
        return (self.side, self.seg_id, self.start, self.end)

    def summary(self) -> str:
        """'la' (source, segment 2, morphology, fem)"""
        parts = (self.side, f"segment {self.seg_id}", self.kind, self.gender or "")
        details = ", ".join(x for x in parts if x)
        return f"{self.text!r} ({details})"


@dataclass(frozen=True)
class ResultLink:
    method: str  # name, lexicon, alignment, projection, chain
    confidence: float
    via: str = ""  # id of the source mention it goes through


@dataclass(frozen=True)
class ResultMention:
    id: str
    side: str
    seg: int
    seg_id: str
    start: int
    end: int
    text: str
    kind: str  # name, noun, pronoun, zero
    link: ResultLink | None = None


@dataclass(frozen=True)
class ResultEntity:
    id: str
    label: str
    gender: str | None
    confidence: float
    checked: int | None  # None when the results did not report per-entity counts
    consistent: int | None
    source_mentions: tuple[ResultMention, ...]
    target_mentions: tuple[ResultMention, ...]
    evidence: tuple[ResultEvidence, ...]
    declared: tuple[str, ...] = ()

    def source_mention(self, mention_id: str) -> ResultMention | None:
        index = self.__dict__.get("_by_id")
        if index is None:  # built once: every target mention of a long document looks its source up here
            index = {m.id: m for m in self.source_mentions}
            object.__setattr__(self, "_by_id", index)
        return index.get(mention_id)


@dataclass(frozen=True)
class ResultSpan:
    """A located word on the source side: the word a flagged target word is linked through."""

    seg_id: str  # empty when the results did not name it: `seg` then places it
    start: int
    end: int
    text: str
    kind: str = ""
    seg: int = -1
    basis: str = "link"  # link (the link goes through it), alignment (the aligner pairs them), segment


@dataclass(frozen=True)
class ResultFinding:
    kind: str
    seg_id: str
    start: int
    end: int
    text: str
    expected: str | None
    found: str | None
    entity: str
    confidence: float
    message: str
    evidence: tuple[ResultEvidence, ...]
    evidence_total: int
    mention: str = ""
    link: ResultLink | None = None
    source: ResultSpan | None = None


@dataclass(frozen=True)
class ResultDocument:
    """One results line, read back."""

    doc_id: str
    src_lang: str
    tgt_lang: str
    entities: tuple[ResultEntity, ...]
    findings: tuple[ResultFinding, ...]
    stats: Summary
    skipped: str = ""
    line: int = 0
    schema: int = 1

    def entity(self, entity_id: str) -> ResultEntity | None:
        return next((e for e in self.entities if e.id == entity_id), None)


def read_results(path: str | Path) -> Iterator[ResultDocument]:
    """The documents of a results file in order; InputError naming the file and line on anything malformed."""
    name = str(path)
    try:
        handle = open(path, encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(name, None, f"cannot open: {exc.strerror}") from exc
    count = 0
    with handle:
        try:
            for lineno, text in enumerate(handle, 1):
                if not text.strip():
                    continue
                try:
                    obj = json.loads(text)
                except json.JSONDecodeError as exc:
                    raise InputError(name, lineno, f"malformed JSON ({exc.msg} at column {exc.colno})") from exc
                if not isinstance(obj, dict):
                    raise InputError(name, lineno, "expected one JSON object per document")
                try:
                    doc = _document(name, lineno, obj)
                except (TypeError, ValueError, AttributeError, KeyError) as exc:
                    raise InputError(name, lineno, f"unexpected value in the results ({_describe(exc)})") \
                        from exc
                count += 1
                yield doc
        except UnicodeDecodeError as exc:
            raise InputError(name, None, f"not valid UTF-8 ({exc.reason}); expected a results JSONL file") \
                from exc
    if not count:
        raise InputError(name, None, "no results: expected one JSON object per document")


def read_signature(results_path: str | Path, required: tuple[str, ...] = ("tool", "rules")) -> dict:
    """The run signature beside RESULTS (RESULTS.signature.json); InputError when missing or malformed."""
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
    for key in required:
        if key not in signature:
            raise InputError(str(sidecar), None, f"the signature has no {key!r}")
    return signature


def _describe(exc: Exception) -> str:
    return f"missing key {exc.args[0]!r}" if isinstance(exc, KeyError) else str(exc)


def _require(path: str, line: int, obj: Mapping, key: str, kind: type):
    if key not in obj:
        raise InputError(path, line, f"results object has no {key!r}")
    if not isinstance(obj[key], kind):
        raise InputError(path, line, f"{key!r} must be a {kind.__name__}, found {type(obj[key]).__name__}")
    return obj[key]


def _evidence(path: str, line: int, where: str, items: object) -> tuple[ResultEvidence, ...]:
    out = []
    for e in items or []:
        if not isinstance(e, dict) or any(k not in e for k in EVIDENCE_KEYS):
            raise InputError(path, line, f"{where}: evidence items need {', '.join(EVIDENCE_KEYS)}")
        out.append(ResultEvidence(
            side=str(e["side"]), seg_id=str(e["seg_id"]), start=int(e["start"]), end=int(e["end"]),
            text=str(e["text"]), gender=e.get("gender"), kind=str(e.get("kind", "")), rule=str(e.get("rule", "")),
            weight=float(e.get("weight", 0.0)),
        ))
    return tuple(out)


def _link(obj: object) -> ResultLink | None:
    if not isinstance(obj, dict):
        return None
    return ResultLink(str(obj.get("method", "")), float(obj.get("confidence", 0.0)), str(obj.get("via", "")))


def _mentions(items: object, side: str) -> tuple[ResultMention, ...]:
    out = []
    for k, m in enumerate(items or []):
        seg = int(m.get("seg", 0))
        out.append(ResultMention(
            id=str(m.get("id", f"{side[0]}{seg}-{k}")), side=side, seg=seg, seg_id=str(m.get("seg_id", "")),
            start=int(m["start"]), end=int(m["end"]), text=str(m.get("text", "")), kind=str(m.get("kind", "")),
            link=_link(m.get("link")),
        ))
    return tuple(out)


def _entity(path: str, line: int, e: object) -> ResultEntity:
    if not isinstance(e, dict) or "id" not in e:
        raise InputError(path, line, "an entity needs an 'id'")
    reported = "checked" in e and "consistent" in e
    return ResultEntity(
        id=str(e["id"]), label=str(e.get("label", "") or ""), gender=e.get("gender"),
        confidence=float(e.get("confidence", 0.0)),
        checked=int(e["checked"]) if reported else None, consistent=int(e["consistent"]) if reported else None,
        source_mentions=_mentions(e.get("source_mentions"), "source"),
        target_mentions=_mentions(e.get("target_mentions"), "target"),
        evidence=_evidence(path, line, f"entity {e['id']}", e.get("evidence")),
        declared=tuple(str(x) for x in e.get("declared") or ()),
    )


def _finding(path: str, line: int, k: int, doc_id: str, f: object) -> ResultFinding:
    if not isinstance(f, dict):
        raise InputError(path, line, f"finding {k} of document {doc_id!r}: expected a JSON object")
    for key in FINDING_KEYS:
        if key not in f:
            raise InputError(path, line, f"finding {k} of document {doc_id!r} has no {key!r}")
    evidence = _evidence(path, line, f"finding {k}", f.get("evidence"))
    src = f.get("source")
    source = None
    if isinstance(src, dict):
        source = ResultSpan(str(src.get("seg_id", "")), int(src["start"]), int(src["end"]),
                            str(src.get("text", "")), str(src.get("kind", "")), int(src.get("seg", -1)),
                            str(src.get("basis", "link")))
    return ResultFinding(
        kind=str(f["kind"]), seg_id=str(f["seg_id"]), start=int(f["start"]), end=int(f["end"]), text=str(f["text"]),
        expected=f.get("expected"), found=f.get("found"), entity=str(f.get("entity", "")),
        confidence=float(f["confidence"]), message=str(f.get("message", "")), evidence=evidence,
        evidence_total=int(f.get("evidence_total", len(evidence))), mention=str(f.get("mention", "")),
        link=_link(f.get("link")), source=source,
    )


def _document(path: str, line: int, obj: dict) -> ResultDocument:
    schema = int(obj.get("schema", 1))
    if schema > SCHEMA_VERSION:
        raise InputError(path, line, f"results schema {schema} is newer than this program's {SCHEMA_VERSION}: "
                                     f"upgrade gendertrace to read it")
    doc_id = str(_require(path, line, obj, "doc_id", str))
    raw_findings = _require(path, line, obj, "findings", list)
    findings = tuple(_finding(path, line, k, doc_id, f) for k, f in enumerate(raw_findings, 1))
    stats = _require(path, line, obj, "stats", dict)
    entities = tuple(_entity(path, line, e) for e in obj.get("entities") or [])
    counts = stats.get("findings") or {}
    summary = Summary(
        documents=1, segments=int(stats.get("segments", 0)), entities=int(stats.get("entities", len(entities))),
        target_references=int(stats.get("target_references", 0)), checked=int(stats.get("checked", 0)),
        consistent=int(stats.get("consistent", 0)),
        findings={**dict.fromkeys(FINDING_KINDS, 0), **{str(k): int(v) for k, v in counts.items()}},
    )
    return ResultDocument(doc_id, str(obj.get("src_lang", "")), str(obj.get("tgt_lang", "")), entities, findings,
                          summary, skipped=str(obj.get("skipped", "")), line=line, schema=schema)


__all__ = [
    "DECISIVE_ITEMS", "SCHEMA_VERSION", "ResultDocument", "ResultEntity", "ResultEvidence", "ResultFinding",
    "ResultLink", "ResultMention", "ResultSpan", "Summary", "consistency_rate", "document_json",
    "read_results", "read_signature", "write_results",
]
