"""Helpers for the scale tests: corpora made from the project's own invented demo files, small parses."""

from __future__ import annotations

import json
from pathlib import Path

from gendertrace.io.readers import read_corpus
from gendertrace.model import ParsedText, Token

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "corpora" / "demo"
HEADER = "doc_id\tseg_id\tsource\ttarget\n"


def demo_copies(path: Path, copies: int, name: str = "es-en.v1.tsv") -> Path:
    """A TSV input holding a demo file's documents `copies` times, under new document ids (c1-..., c2-...)."""
    docs = read_corpus(DEMO / name)
    with open(path, "w", encoding="utf-8") as f:
        f.write(HEADER)
        for k in range(copies):
            for d in docs:
                for s in d.segments:
                    f.write(f"c{k + 1}-{d.doc_id}\t{s.seg_id}\t{s.source}\t{s.target}\n")
    return path


def demo_size(name: str = "es-en.v1.tsv") -> tuple[int, int]:
    """(documents, segments) of a demo file, so that tests follow the demo corpus as it grows."""
    docs = read_corpus(DEMO / name)
    return len(docs), sum(len(d.segments) for d in docs)


def demo_distinct_texts(name: str = "es-en.v1.tsv") -> int:
    """Distinct source texts plus distinct target texts of a demo file."""
    segments = [s for d in read_corpus(DEMO / name) for s in d.segments]
    return len({s.source for s in segments}) + len({s.target for s in segments})


def doc_ids(path: Path) -> list[str]:
    return [json.loads(line)["doc_id"] for line in path.read_text(encoding="utf-8").splitlines()]


def parsed(text: str, lang: str = "es") -> ParsedText:
    """A hand-made parse: one token per space-separated word, each attached to the first."""
    tokens, pos = [], 0
    for i, word in enumerate(text.split(" ")):
        start = text.index(word, pos)
        pos = start + len(word)
        tokens.append(Token(i=i, text=word, lemma=word.lower(), upos="NOUN" if i else "VERB",
                            feats={"Gender": "Fem", "Number": "Sing"} if i == 1 else {},
                            head=0, deprel="root" if i == 0 else "nsubj", start=start, end=pos,
                            sent=0, ent="PER" if word.istitle() and i else ""))
    return ParsedText(text, tuple(tokens), lang)


class CountingParser:
    """A parser for tests: hand-made parses, and a record of every text it was asked to parse."""

    name = "counting"

    def __init__(self, lang: str = "es", version: str = "1") -> None:
        self.lang = lang
        self.version = version
        self.asked: list[str] = []

    def signature(self) -> str:
        return f"counting:{self.lang}=={self.version}"

    def parse_many(self, texts):
        self.asked.extend(texts)
        return [parsed(t, self.lang) for t in texts]
