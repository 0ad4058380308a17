"""The default word aligner: fixed word pairs, lemmas, spelling and position, one segment at a time."""

from __future__ import annotations

from gendertrace.link.align import _best_pairing
from gendertrace.link.wordpairs import WordPairAligner, load_word_pairs
from gendertrace.matching import max_weight_matching
from gendertrace.model import ParsedText, Token


def _parse(words: list[tuple[str, str, str]], lang: str) -> ParsedText:
    """A hand-made parse from (form, lemma, UPOS) triples, one space between words."""
    text = " ".join(w for w, _, _ in words)
    tokens, pos = [], 0
    for i, (form, lemma, upos) in enumerate(words):
        tokens.append(Token(i=i, text=form, lemma=lemma, upos=upos, feats={}, head=0,
                            deprel="root" if i == 0 else "dep", start=pos, end=pos + len(form)))
        pos += len(form) + 1
    return ParsedText(text, tuple(tokens), lang)


def test_the_shipped_pairs_hold_dictionary_translations_and_a_digest():
    pairs, digest = load_word_pairs("es", "en")
    # FreeDict spa-eng lists "abogado" as "lawyer" and "casa" as "house" (Debian dict-freedict-spa-eng).
    assert ("abogado", "lawyer") in pairs and ("casa", "house") in pairs
    reverse, same = load_word_pairs("en", "es")
    assert ("lawyer", "abogado") in reverse and same == digest and len(digest) == 12
    assert load_word_pairs("es", "xx") == (frozenset(), "none")


def test_inflected_forms_meet_through_their_lemmas():
    src = _parse([("Las", "el", "DET"), ("abogadas", "abogado", "NOUN"), ("llegaron", "llegar", "VERB")], "es")
    tgt = _parse([("The", "the", "DET"), ("lawyers", "lawyer", "NOUN"), ("arrived", "arrive", "VERB")], "en")
    links = WordPairAligner("es", "en").align_pair(src, tgt)
    assert (1, 1) in links and (0, 0) in links


def test_a_pronoun_is_not_paired_by_its_part_of_speech_alone():
    src = _parse([("il", "il", "PRON"), ("part", "partir", "VERB")], "fr")
    tgt = _parse([("she", "she", "PRON"), ("leaves", "leave", "VERB")], "en")
    assert (0, 0) not in WordPairAligner("fr", "en").align_pair(src, tgt)


def test_links_depend_on_the_segment_only():
    aligner = WordPairAligner("es", "en")
    a = _parse([("la", "el", "DET"), ("casa", "casa", "NOUN")], "es")
    b = _parse([("the", "the", "DET"), ("house", "house", "NOUN")], "en")
    other = _parse([("un", "uno", "DET"), ("perro", "perro", "NOUN")], "es")
    alone = aligner([a], [b])
    assert aligner([other, a, other], [b, b, b])[1] == alone[0] == frozenset({(0, 0), (1, 1)})


def test_pronoun_pairing_is_an_exact_assignment():
    # Best total, not best first: greedy would give source 0 its best target 0 and leave source 1 unpaired.
    cands = [(-3.0, 0.0, 0, 10), (-2.9, 0.0, 0, 11), (-2.8, 0.0, 1, 10)]
    assert _best_pairing(cands) == {(0, 11), (1, 10)}
    # The minimum-cost assignment of this 3 x 3 matrix is rows to columns 1, 0, 2 (cost 5; the other five
    # permutations cost 6 to 11, checked by hand).
    assert max_weight_matching([[-4, -1, -3], [-2, 0, -5], [-3, -2, -2]]) == [(0, 1), (1, 0), (2, 2)]
