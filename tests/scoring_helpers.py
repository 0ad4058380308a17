"""Helpers for tests that score small invented documents and look at their chains, or build CoNLL-U input."""

from __future__ import annotations

from pathlib import Path

from gendertrace import Scorer
from gendertrace.model import Document, DocumentResult, ParsedText, Segment
from gendertrace.parse.conllu_backend import read_conllu


def score_pairs(scorer: Scorer, pairs) -> DocumentResult:
    """Score one document made of (source, target) segment pairs."""
    doc = Document("d", tuple(Segment(str(k), s, t) for k, (s, t) in enumerate(pairs, 1)))
    return next(iter(scorer.score([doc])))


def flags(result: DocumentResult) -> list[tuple[str, str, str | None]]:
    """(kind, text, expected) of every finding but assumptions."""
    return [(f.kind, f.text, f.expected) for f in result.findings if f.kind != "assumption"]


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


def conllu_parsed(tmp_path: Path, lang: str, text: str, rows: str) -> ParsedText:
    """One sentence written as CoNLL-U (`rows` as from `conllu_rows`) into tmp_path and read back."""
    path = tmp_path / f"{lang}.conllu"
    path.write_text(f"# sent_id = s1\n# text = {text}\n{rows}\n", encoding="utf-8")
    (sent,) = read_conllu(path, lang)
    return sent.parsed
