"""The default statistical-slot aligner: fixed bilingual word pairs, spelling and position, one segment at a time.

Each segment pair is aligned on its own from a fixed model shipped with the package (the word-pair lists in
`lexicons/`, built from FreeDict dictionaries by scripts/build_alignment_lexicon.py), so a document's links
depend on that document only: not on the batch, the process, the machine or a random draw. A source and a
target word score by what joins them (a listed translation of their forms or lemmas, an identical or
cognate spelling, or only the same part of speech) times their closeness to the segment's diagonal; each word
links to its best partner on the other side and the two directions are symmetrised as eflomal's are. Words
are compared only within a band around the diagonal, so the cost grows linearly with segment length.
"""

from __future__ import annotations

import hashlib
import math
import unicodedata
from collections.abc import Sequence
from functools import cache
from pathlib import Path

from gendertrace.link.align import Alignment, symmetrise
from gendertrace.model import ParsedText

LEXICONS = Path(__file__).resolve().parent / "lexicons"
# What joins two words, before closeness: listed translation, same spelling, cognate, same part of speech.
LISTED, IDENTICAL, COGNATE, SAME_CLASS = 1.0, 1.0, 0.6, 0.12
DIAGONAL_WEIGHT = 4.0  # how fast closeness decays with the difference of relative positions
MIN_SCORE = 0.03  # a best partner scoring below this is no link
BAND = 40  # target tokens compared with source tokens at most this far from the diagonal position
COGNATE_PREFIX = 0.6  # shared de-accented prefix, as a share of the longer word, for a cognate (4 letters at least)
# Coarse word classes: a noun may translate as a proper noun, an auxiliary as a verb.
CLASS = {"PROPN": "NOUN", "AUX": "VERB", "SCONJ": "CCONJ"}
SKIP = {"PUNCT", "SYM", "X", "SPACE"}
# Pronouns are paired by the anchors, which weigh their type, person, number and gender: a pronoun they left
# unpaired has no counterpart of its kind, so the part of speech alone does not pair it either.
PAIRED_APART = {"PRON"}


@cache
def _pairs_file(a: str, b: str) -> tuple[Path | None, bool]:
    """The word-pair file of a language pair and whether it is stored the other way round."""
    for first, second, flipped in ((a, b, False), (b, a, True)):
        path = LEXICONS / f"{first}-{second}.tsv"
        if path.is_file():
            return path, flipped
    return None, False


@cache
def load_word_pairs(src: str, tgt: str) -> tuple[frozenset[tuple[str, str]], str]:
    """The listed (source word, target word) pairs of a direction, lower-cased, and the file's digest
    ("none" when the pair has no list: spelling and position then align alone)."""
    path, flipped = _pairs_file(src, tgt)
    if path is None:
        return frozenset(), "none"
    raw = path.read_bytes()
    pairs = set()
    for line in raw.decode("utf-8").splitlines():
        if not line or line.startswith("#"):
            continue
        a, b = line.split("\t")
        pairs.add((b, a) if flipped else (a, b))
    return frozenset(pairs), hashlib.sha256(raw).hexdigest()[:12]


def _plain(word: str) -> str:
    return "".join(c for c in unicodedata.normalize("NFD", word) if not unicodedata.combining(c))


def _cognate(a: str, b: str) -> bool:
    if len(a) < 4 or len(b) < 4 or a[:4] != b[:4]:
        return False
    n = 0
    for x, y in zip(a, b, strict=False):
        if x != y:
            break
        n += 1
    return n >= COGNATE_PREFIX * max(len(a), len(b))


class WordPairAligner:
    """Deterministic alignment of each segment pair from fixed word pairs (see the module docstring)."""

    def __init__(self, src_lang: str, tgt_lang: str) -> None:
        self.pairs, digest = load_word_pairs(src_lang, tgt_lang)
        self.label = f"word pairs {src_lang}-{tgt_lang} {digest}"

    def __call__(self, sources: Sequence[ParsedText], targets: Sequence[ParsedText]) -> list[Alignment]:
        return [self.align_pair(s, t) for s, t in zip(sources, targets, strict=True)]

    def align_pair(self, src: ParsedText, tgt: ParsedText) -> Alignment:
        """Links of one segment pair; the same pair always gets the same links."""
        s_side = [self._word(t) for t in src.tokens]
        t_side = [self._word(t) for t in tgt.tokens]
        ns, nt = max(len(s_side), 1), max(len(t_side), 1)
        best_for_tgt: dict[int, tuple[float, int]] = {}
        best_for_src: dict[int, tuple[float, int]] = {}
        pairs = self.pairs
        for j, tw in enumerate(t_side):
            if tw is None:
                continue
            t_keys, t_plain, t_class, t_case = tw
            centre = round(j * ns / nt)
            for i in range(max(0, centre - BAND), min(len(s_side), centre + BAND + 1)):
                sw = s_side[i]
                if sw is None:
                    continue
                s_keys, s_plain, s_class, s_case = sw
                if s_plain == t_plain:
                    join = IDENTICAL
                elif any((a, b) in pairs for a in s_keys for b in t_keys) and not (s_case and t_case
                                                                                  and s_case != t_case):
                    # A pronoun's lemma drops its case ("La" -> "él"): pronouns of two cases are no translation.
                    join = LISTED
                elif _cognate(s_plain, t_plain):
                    join = COGNATE
                elif s_class == t_class and s_class not in PAIRED_APART:
                    join = SAME_CLASS
                else:
                    continue
                score = join * math.exp(-DIAGONAL_WEIGHT * abs(i / ns - j / nt))
                if score < MIN_SCORE:
                    continue
                # Ties go to the earlier word: strict ">" keeps the first best.
                if j not in best_for_tgt or score > best_for_tgt[j][0]:
                    best_for_tgt[j] = (score, i)
                if i not in best_for_src or score > best_for_src[i][0]:
                    best_for_src[i] = (score, j)
        fwd = {(i, j) for j, (_, i) in best_for_tgt.items()}
        rev = {(i, j) for i, (_, j) in best_for_src.items()}
        return symmetrise(fwd, rev)

    @staticmethod
    def _word(t) -> tuple[tuple[str, ...], str, str, str | None] | None:
        if t.upos in SKIP:
            return None
        form, lemma = t.text.lower(), (t.lemma or t.text).lower()
        keys = (form,) if lemma == form else (form, lemma)
        return keys, _plain(form), CLASS.get(t.upos, t.upos), t.feat("Case") if t.upos == "PRON" else None


def default_aligner(src_lang: str, tgt_lang: str) -> WordPairAligner:
    """The aligner a Scorer uses unless told otherwise."""
    return WordPairAligner(src_lang, tgt_lang)
