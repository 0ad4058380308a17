"""Read the parallel UD treebanks (one CoNLL-U file per language, same `sent_id`s) as aligned documents.

Files are named `<lang>_pud-news.conllu` inside one folder (the benchmark reads `../shared/ud-pud` relative to
the repository root). A document runs from a `# newdoc id` comment to the next one, as in the source-language
file; target sentences are matched to source sentences by `sent_id`.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.parse.conllu_backend import ConlluSentence, iter_conllu

__all__ = ["HALVES", "PudDocument", "PudSentencePair", "document_half", "load_pud_pair", "pud_path", "select_half"]

# The news documents split in two by document, so that a rule tuned on one half can be checked on the other.
HALVES = (1, 2)


@dataclass(frozen=True)
class PudSentencePair:
    """One sentence in two languages, with its gold parse on each side."""

    sent_id: str
    source: ConlluSentence
    target: ConlluSentence


@dataclass(frozen=True)
class PudDocument:
    """The sentence pairs of one document, in file order."""

    doc_id: str
    pairs: tuple[PudSentencePair, ...]
    src_lang: str = ""
    tgt_lang: str = ""


def pud_path(data_dir: str | Path, lang: str) -> Path:
    """The file that holds the treebank of `lang` in `data_dir` (it may not exist)."""
    return Path(data_dir) / f"{lang}_pud-news.conllu"


def _checked_path(data_dir: Path, lang: str) -> Path:
    if not data_dir.is_dir():
        raise FileNotFoundError(f"parallel treebank folder {data_dir} not found")
    path = pud_path(data_dir, lang)
    if not path.is_file():
        have = sorted(p.name.split("_", 1)[0] for p in data_dir.glob("*_pud-news.conllu"))
        raise FileNotFoundError(
            f"no {lang!r} treebank in {data_dir}: {path.name} not found "
            f"(languages present: {', '.join(have) or 'none'})"
        )
    return path


def load_pud_pair(data_dir: str | Path, src_lang: str, tgt_lang: str) -> list[PudDocument]:
    """The documents of the source treebank, each sentence paired with the target sentence of its sent_id.

    Documents and sentences keep the source file's order and `# newdoc id` grouping; sentences before the
    first newdoc comment form a document named after their first sent_id. Raises FileNotFoundError (with a
    message naming the folder or file) when the folder or a language's file is missing, and InputError when a
    source sent_id has no target sentence or a sent_id occurs twice in one file.
    """
    base = Path(data_dir)
    src_path, tgt_path = _checked_path(base, src_lang), _checked_path(base, tgt_lang)
    targets: dict[str, ConlluSentence] = {}
    for sent in iter_conllu(tgt_path, tgt_lang):
        if sent.sent_id in targets:
            raise InputError(str(tgt_path), sent.line, f"sent_id {sent.sent_id!r} occurs twice")
        targets[sent.sent_id] = sent
    docs: list[tuple[str, list[PudSentencePair]]] = []
    seen: set[str] = set()
    for sent in iter_conllu(src_path, src_lang):
        if sent.sent_id in seen:
            raise InputError(str(src_path), sent.line, f"sent_id {sent.sent_id!r} occurs twice")
        seen.add(sent.sent_id)
        target = targets.get(sent.sent_id)
        if target is None:
            raise InputError(
                str(src_path), sent.line, f"sent_id {sent.sent_id!r} has no sentence in {tgt_path.name}"
            )
        if sent.newdoc is not None or not docs:
            docs.append((sent.newdoc if sent.newdoc is not None else sent.sent_id, []))
        docs[-1][1].append(PudSentencePair(sent.sent_id, sent, target))
    return [PudDocument(doc_id, tuple(pairs), src_lang, tgt_lang) for doc_id, pairs in docs]


def document_half(doc_id: str) -> int:
    """The half (1 or 2) a document belongs to: fixed by a digest of its id, whatever the file order or language."""
    return 1 + int(hashlib.sha256(doc_id.encode("utf-8")).hexdigest(), 16) % 2


def select_half(docs: Sequence[PudDocument], half: int | None) -> list[PudDocument]:
    """The documents of one half (1 or 2), or all of them when `half` is None."""
    if half is None:
        return list(docs)
    if half not in HALVES:
        raise ValueError(f"half must be 1 or 2, not {half!r}")
    return [d for d in docs if document_half(d.doc_id) == half]
