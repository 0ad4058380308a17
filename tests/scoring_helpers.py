"""Helpers for tests that score small invented documents and look at their chains, or build CoNLL-U input."""

from __future__ import annotations

from gendertrace import Scorer
from gendertrace.model import Document, DocumentResult, Segment


def score_pairs(scorer: Scorer, pairs) -> DocumentResult:
    """Score one document made of (source, target) segment pairs."""
    doc = Document("d", tuple(Segment(str(k), s, t) for k, (s, t) in enumerate(pairs, 1)))
    return next(iter(scorer.score([doc])))


def chain_texts(result: DocumentResult, side: str, text: str) -> list[str]:
    """The mention texts of the chain on `side` that holds a mention reading `text`."""
    chain = next(c for c in result.chains if c.side == side and any(m.text == text for m in c.mentions))
    return [m.text for m in chain.mentions]


def conllu_rows(*rows: tuple) -> str:
    """Ten-column CoNLL-U word lines from tuples (ID, FORM, LEMMA, UPOS, FEATS, HEAD, DEPREL[, MISC])."""
    lines = []
    for r in rows:
        tid, form, lemma, upos, feats, head, deprel, *misc = r
        lines.append(
            "\t".join([tid, form, lemma, upos, "_", feats, head, deprel, "_", misc[0] if misc else "_"])
        )
    return "\n".join(lines) + "\n"
