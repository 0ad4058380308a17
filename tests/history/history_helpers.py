"""Invented scored runs for the history tests: results files in the shape `gendertrace score` writes.

A person is described by the gender of their source evidence and how many of their gendered target words
agree with it; the helper writes the entities, evidence, findings and per-document statistics that follow.
"""

from __future__ import annotations

import csv
import json
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

SIGNATURE = {
    "tool": "gendertrace 0.1.0",
    "rules": "0a1b2c3d4e5f",
    "src": "es:spacy:es_model==1.0",
    "tgt": "en:spacy:en_model==1.0",
    "min_confidence": 0.5,
}

PRONOUN = {"fem": "she", "masc": "he"}
OTHER = {"fem": "masc", "masc": "fem"}


@dataclass(frozen=True)
class Person:
    """gender: of the source evidence (None: the source is silent); refs target words, `wrong` of them off."""

    gender: str | None
    refs: int
    wrong: int = 0


def document(doc_id: str, people: Sequence[Person], extra_entity_keys: bool = False) -> dict:
    entities, findings = [], []
    checked = consistent = 0
    for i, p in enumerate(people):
        eid = f"E{i + 1}"
        evidence = []
        if p.gender:
            evidence.append({"side": "source", "seg_id": "1", "start": 3, "end": 11, "text": "capitana",
                             "gender": p.gender, "kind": "lexical", "weight": 0.9, "rule": "gendered noun"})
        for k in range(p.refs):
            said = p.gender if (p.gender and k < p.refs - p.wrong) else OTHER.get(p.gender or "", "masc")
            seg = str(k + 2)
            evidence.append({"side": "target", "seg_id": seg, "start": 0, "end": len(PRONOUN[said]),
                             "text": PRONOUN[said], "gender": said, "kind": "pronoun", "weight": 1.0,
                             "rule": "personal pronoun"})
            if p.gender and said != p.gender:
                findings.append({"kind": "contradiction", "seg_id": seg, "start": 0,
                                 "end": len(PRONOUN[said]), "text": PRONOUN[said], "expected": p.gender,
                                 "found": said, "entity": eid,
                                 "confidence": 0.8, "message": "", "evidence": evidence[:1]})
        if p.gender:
            checked += p.refs
            consistent += p.refs - p.wrong
        elif p.refs:
            findings.append({"kind": "assumption", "seg_id": "2", "start": 0, "end": 2, "text": "he",
                             "expected": None, "found": "masc", "entity": eid, "confidence": 0.5,
                             "message": "", "evidence": []})
        entity = {"id": eid, "label": f"person {i + 1}", "gender": p.gender,
                  "confidence": 0.9 if p.gender else 0.0, "source_mentions": [], "target_mentions": [],
                  "evidence": evidence}
        if extra_entity_keys and p.gender:
            entity["checked"], entity["consistent"] = p.refs, p.refs - p.wrong
        entities.append(entity)
    kinds = {k: sum(1 for f in findings if f["kind"] == k)
             for k in ("contradiction", "inconsistency", "assumption")}
    return {"doc_id": doc_id, "src_lang": "es", "tgt_lang": "en", "entities": entities, "findings": findings,
            "stats": {"segments": 1 + max((p.refs for p in people), default=0), "entities": len(people),
                      "target_references": checked, "checked": checked, "consistent": consistent,
                      "findings": kinds}}


def write_results(path: Path, docs: Sequence[dict], **signature) -> Path:
    """Write a results file and its signature sidecar; keyword arguments override signature entries."""
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "w", encoding="utf-8") as f:
        for d in docs:
            f.write(json.dumps(d, ensure_ascii=False) + "\n")
    sig = dict(SIGNATURE, input=str(path.with_suffix(".tsv")), documents=len(docs), **signature)
    Path(str(path) + ".signature.json").write_text(json.dumps(sig, indent=2), encoding="utf-8")
    return path


def simple_docs(rates: Sequence[tuple[int, int]], prefix: str = "d") -> list[dict]:
    """One document per (consistent, checked): a woman with `checked` words, `checked - consistent` off."""
    return [document(f"{prefix}{k:03d}", [Person("fem", chk, chk - cons)])
            for k, (cons, chk) in enumerate(rates)]


def write_input(path: Path, rows: Sequence[tuple[str, str, str, str, str | None]]) -> Path:
    """A TSV input: (doc_id, seg_id, source, target, reference or None)."""
    with open(path, "w", encoding="utf-8", newline="") as f:
        w = csv.writer(f, delimiter="\t", lineterminator="\n", quoting=csv.QUOTE_NONE, escapechar=None)
        w.writerow(("doc_id", "seg_id", "source", "target", "reference"))
        for doc_id, seg_id, source, target, reference in rows:
            w.writerow((doc_id, seg_id, source, target, reference or ""))
    return path
