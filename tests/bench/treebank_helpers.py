"""Invented CoNLL-U treebanks for the benchmark tests: a compact row notation and a writer."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path


@dataclass(frozen=True)
class Sent:
    """Invented sentence; rows: "ID FORM UPOS FEATS HEAD DEPREL", or "A-B FORM" for a multiword token."""

    sent_id: str
    text: str
    rows: str
    newdoc: str | None = None


def conllu(sentences: Sequence[Sent]) -> str:
    """The CoNLL-U text of the sentences (LEMMA is the lower-cased form; XPOS, DEPS and MISC are empty)."""
    out = []
    for s in sentences:
        if s.newdoc:
            out.append(f"# newdoc id = {s.newdoc}")
        out.append(f"# sent_id = {s.sent_id}")
        out.append(f"# text = {s.text}")
        for line in s.rows.strip().splitlines():
            cols = line.split()
            if "-" in cols[0]:
                out.append("\t".join([cols[0], cols[1]] + ["_"] * 8))
                continue
            tid, form, upos, feats, head, deprel = cols
            out.append("\t".join([tid, form, form.lower(), upos, "_", feats, head, deprel, "_", "_"]))
        out.append("")
    return "\n".join(out) + "\n"


def write_treebank(folder: Path, lang: str, sentences: Sequence[Sent]) -> Path:
    path = folder / f"{lang}_pud-news.conllu"
    path.write_text(conllu(sentences), encoding="utf-8")
    return path
