"""Copies of a parallel document with exactly one gender error injected into the target, from gold data.

For one `PudDocument` every *injection site* of the target side is enumerated, and each site gives one
`InjectedCopy`: the document's target sentences with that one site flipped to the other gender. Everything is
decided from the gold UD annotation (forms, UPOS, features, dependencies) and the project's language rules;
the same document, rules and seed always give the same copies.

Sites
-----
English target, a 3rd-person singular personal pronoun (gold PronType=Prs, Person=3, Number=Sing, and a gold
Gender that matches the form): he <-> she; him <-> her, where the *her* read as an object is gold Case=Acc
without Poss=Yes; his <-> her, where the *her* read as a possessive is gold Poss=Yes (an independent *his*,
one not attached as nmod:poss, becomes *hers*, and *hers* becomes *his*); himself <-> herself. A *her* with
neither Case=Acc nor Poss=Yes is skipped. English he/she/him/her/his/himself/herself are taken to refer to
persons.

Spanish target: él <-> ella. French target: subject il <-> elle (deprel nsubj or nsubj:pass; the inverted
forms -il, -t-il, -elle, -t-elle keep their hyphens), and after a preposition (the pronoun has a `case`
dependent) elle <-> lui; expletive subjects (deprel expl...) and clitic *lui* are skipped. These pronouns also
stand for things, and the treebanks carry no coreference, so a pronoun is taken to *refer to a person* only by
this approximation: the aligned source sentence is English and contains a 3rd-person singular personal pronoun
with gold Gender (he, she, him, her, his, hers, himself, herself) of the same gender as the target pronoun.
When the source is not English, Spanish and French pronoun sites are not produced.

Spanish and French determiner + person noun: a singular NOUN with gold Gender that the rules know as a person
noun (`rules.noun_counterpart`), with exactly one gendered `det` dependent before it, of the same gender,
whose flip the rules give (`rules.article_counterpart`): *el ministro* -> *la ministra*, *un avocat* -> *une
avocate*. For a common-gender noun (*el periodista*) only the determiner flips; after an elided French *l'*
only the noun flips (*l'avocat* -> *l'avocate*). The contracted determiners del, al (Spanish) and du, au
(French) split when they turn feminine (*del ministro* -> *de la ministra*), and a feminine article right
after de or a/à contracts when it turns masculine (*de la ministra* -> *del ministro*). Words between the
determiner and the noun are allowed when they carry no gold Gender; they stay unchanged inside the reported
span.

Skipped, as not cleanly flippable: plural forms; forms whose gold Gender disagrees with the form or the rules;
a noun with an agreeing amod, acl or second det dependent (the copy would carry an agreement error inside the
noun phrase besides the injected one); a common-gender noun after an elided *l'*; a French result that would
need elision or *cet* (a new noun that starts with a vowel or h after le, la, ce, du, au); a contracted
determiner the module does not know how to split; a French pronoun whose flip would change the elision of
the word before it (*s'il* / *si elle*, *d'elle* / *de lui*, *que lui*); a site whose words are not found at
their offsets in the sentence text.

Evidence
--------
`evidenced` says whether the document carries a gendered word about the same person besides the flipped words.
There is no gold coreference, so "the same person" is approximated, and the rule is a pure function of the
gold data. A *person word* is, on either side of any sentence of the document:

1. an English 3rd-person singular personal, possessive or reflexive pronoun with gold Gender (the forms
   above);
2. a 3rd-person singular personal pronoun of another language with gold Gender (PronType=Prs, Number=Sing),
   not possessive (Poss=Yes: in Spanish, French, Italian, Portuguese and German the possessive's gender is the
   possessed noun's), not reflexive, not expletive, not a det or fixed dependent, whose form the language's
   rules (when given) list as gendered, singular and not accusative (object clitics also stand for clauses and
   things); it counts only when *anchored*: the aligned sentence on the other side is English and holds a
   pronoun of kind 1 of the same gender;
3. a singular noun the rules know as a gendered person noun, with that gender (and with the same gold Gender
   where the treebank gives one);
4. a singular noun the rules know as a common-gender person noun, whose gendered det or amod dependents all
   carry one gold Gender: that gender (the word is the noun with those dependents);
5. an adjective or participle with gold Gender and Number=Sing predicated of a subject (it has a `cop` or
   `aux:pass` dependent, or an `aux` whose lemma the rules list as agreeing, so *ha operado*/*a opéré* do not
   count), not 1st or 2nd person, whose subject (nsubj or nsubj:pass) is a person noun from the rules, or is
   absent (a zero subject), a proper noun or a personal pronoun and then the word counts only when anchored as
   in 2.

The copy is `evidenced` when some person word with the site's original gender exists that shares no word with
the flipped span, and the sentence side it stands in (one sentence of source or target) holds no person word
of the other gender, which would make the attribution ambiguous. The aligned source sentence, the changed
target sentence and every other sentence of the document on both sides are searched, in that order;
`evidence_note` names the first person word found, or says why none counts. The approximation is plain: any
person of the original gender in the document counts as the same person, and anchoring through an English
pronoun assumes the aligned pronoun and the word refer to the same person.

An evidenced copy is an `even_split` when that evidence is a single target word: the source holds no person word
of the original gender in any sentence, and the target exactly one besides the flipped words. After the injection
the document then says each gender once of what the rule takes to be one person ("She signed the lease. Then he
paid the deposit." over two zero subjects in the source), so no reading of the document can tell which of the two
words is the error: a checker that flags both catches the error at the price of a false finding, and one that
flags either catches it half the time. The benchmark reports these copies apart.
"""

from __future__ import annotations

import random
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from gendertrace.bench.pud import PudDocument
from gendertrace.model import Document, ParsedText, Segment, Token
from gendertrace.parse.conllu_backend import ConlluSentence

__all__ = ["InjectedCopy", "PersonWord", "copy_document", "inject_corpus", "inject_document", "person_words"]

PRONOUN = "pronoun"
DET_NOUN = "det-noun"
_OTHER = {"masc": "fem", "fem": "masc"}
_GENDERED = ("masc", "fem")

# English pronoun forms and their gender; the counterparts are chosen in _english_flip (the rules files list
# pronoun forms but not their other-gender counterparts).
_EN_PRONOUNS = {
    "he": "masc",
    "him": "masc",
    "his": "masc",
    "himself": "masc",
    "she": "fem",
    "her": "fem",
    "hers": "fem",
    "herself": "fem",
}
_EN_REFLEXIVE = {"himself": "herself", "herself": "himself"}
_ES_PRONOUNS = {"él": ("masc", "ella"), "ella": ("fem", "él")}
_FR_INVERTED = re.compile(r"(-t-|-)?(il|elle|lui)")

# Preposition + masculine article contractions: surface -> (preposition, article). Spanish and French
# orthography (common practice, no source).
_CONTRACTIONS = {
    "es": {"del": ("de", "el"), "al": ("a", "el")},
    "fr": {"du": ("de", "le"), "au": ("à", "le")},
}
# French forms that elide or change before a vowel or mute h (le, la -> l'; ce -> cet; du, au -> de l', à l').
_FR_PRE_VOWEL = {"le", "la", "ce"}
_FR_VOWEL_START = tuple("aeiouyàâäéèêëîïôöùûüœæh")
_APOSTROPHES = ("'", "’")
_FR_SI_ELIDED = ("s'", "s’")


@dataclass(frozen=True)
class InjectedCopy:
    """One copy of a document whose target carries exactly one injected gender error.

    `target_texts` are all target sentence texts of the document, the changed one (index `sentence`)
    replaced. `start`/`end` locate the changed words in the new sentence text (end exclusive): `new_text ==
    target_texts[sentence][start:end]`; `orig_start`/`orig_end` locate `original` in the original text.
    """

    doc_id: str
    copy_id: str
    sentence: int
    sent_id: str
    target_texts: tuple[str, ...]
    start: int
    end: int
    orig_start: int
    orig_end: int
    original: str
    new_text: str
    original_gender: str
    injected_gender: str
    kind: str  # "pronoun" or "det-noun"
    evidenced: bool
    evidence_note: str
    even_split: bool = False


@dataclass(frozen=True)
class PersonWord:
    """A gendered word about a person, found in one sentence side by the rules of the module docstring."""

    side: str  # "source" or "target"
    sentence: int
    sent_id: str
    tokens: tuple[int, ...]
    text: str
    gender: str
    kind: str  # pronoun, noun, determiner, agreement


@dataclass(frozen=True)
class _Site:
    sentence: int
    tokens: tuple[int, ...]
    orig_start: int
    orig_end: int
    replacement: str
    original_gender: str
    kind: str


# ------------------------------------------------------------------------------------------------------------
# Small readers of the gold annotation


def _match_case(model: str, word: str) -> str:
    """`word` written with the capitalisation of `model` (all capitals, initial capital, or as is)."""
    if len(model) > 1 and model.isupper():
        return word.upper()
    if model[:1].isupper():
        return word[:1].upper() + word[1:]
    return word


def _is_3sg_personal(tok: Token) -> bool:
    return (
        tok.upos == "PRON"
        and tok.feat("PronType") == "Prs"
        and tok.feat("Person") == "3"
        and tok.feat("Number") == "Sing"
        and tok.gender in _GENDERED
    )


def _is_english_person_pronoun(tok: Token) -> bool:
    return _is_3sg_personal(tok) and _EN_PRONOUNS.get(tok.text.lower()) == tok.gender


def _english_genders(parsed: ParsedText) -> frozenset[str]:
    """Genders of the English 3rd-person singular gendered pronouns of a sentence (the anchors)."""
    return frozenset(t.gender for t in parsed.tokens if _is_english_person_pronoun(t))


def _multiword(sent: ConlluSentence) -> dict[int, tuple[int, int, str]]:
    """Word index -> (first word, last word, surface form) for the words of multiword tokens."""
    out: dict[int, tuple[int, int, str]] = {}
    pending: list[int] = []
    form, last, k = "", -1, -1
    for cols in sent.rows:
        tid = cols[0]
        if "." in tid:
            continue
        if "-" in tid:
            a, b = tid.split("-")
            form, last, pending = cols[1], int(b), []
            continue
        k += 1
        if last >= 0:
            pending.append(k)
            if int(tid) == last:
                for w in pending:
                    out[w] = (pending[0], pending[-1], form)
                last = -1
    return out


def _is_elided(tok: Token, lang: str) -> bool:
    return lang == "fr" and tok.text.endswith(_APOSTROPHES)


def _word_at(text: str, tok: Token) -> bool:
    return text[tok.start : tok.end] == tok.text


def _rules_call(rules: Any, name: str, *args: Any) -> Any:
    fn = getattr(rules, name, None) if rules is not None else None
    return fn(*args) if fn is not None else None


# ------------------------------------------------------------------------------------------------------------
# Person words (evidence)


def _pronoun_form_ok(tok: Token, rules: Any) -> bool:
    """Whether the rules (when they list pronouns) know the form as gendered, singular, not accusative."""
    if rules is None or getattr(rules, "pronoun", None) is None:
        return True
    bare = tok.text.lower().lstrip("-")
    if bare.startswith("t-"):
        bare = bare[2:]
    return any(
        p.gender == tok.gender and p.number == "sing" and p.type == "personal" and p.case != "acc"
        for p in rules.pronoun(bare)
    )


def _person_noun_gender(parsed: ParsedText, tok: Token, rules: Any) -> tuple[str, tuple[int, ...]] | None:
    """(gender, words) when `tok` is a singular person noun whose gender the word or its dependents show."""
    if tok.upos != "NOUN" or tok.feat("Number") == "Plur":
        return None
    entry = _rules_call(rules, "noun_counterpart", tok.text.lower())
    if not entry:
        return None
    gender = entry[0]
    if gender in _GENDERED:
        if tok.gender is not None and tok.gender != gender:
            return None
        return gender, (tok.i,)
    if gender != "common":
        return None
    deps = [
        c
        for c in parsed.children(tok.i)
        if c.deprel in ("det", "amod") and c.gender in _GENDERED and not _is_elided(c, parsed.lang)
    ]
    genders = {c.gender for c in deps}
    if len(genders) != 1:
        return None
    return genders.pop(), tuple(sorted([tok.i] + [c.i for c in deps]))


def _is_person_noun(tok: Token, rules: Any) -> bool:
    return (
        tok.upos == "NOUN"
        and tok.feat("Number") != "Plur"
        and bool(_rules_call(rules, "noun_counterpart", tok.text.lower()))
    )


def _agrees_with_subject(parsed: ParsedText, tok: Token, rules: Any) -> bool:
    agreeing = getattr(rules, "agreeing_aux", None) or frozenset()
    for c in parsed.children(tok.i):
        if c.deprel in ("cop", "aux:pass"):
            return True
        if c.deprel == "aux" and c.lemma.lower() in agreeing:
            return True
    return False


def person_words(
    parsed: ParsedText,
    rules: Any,
    anchors: frozenset[str] | None,
    side: str = "target",
    sentence: int = 0,
    sent_id: str = "",
) -> list[PersonWord]:
    """The person words of one sentence side (module docstring, items 1 to 5), in text order.

    `rules` are the sentence language's rules (duck-typed; None when the language has none), `anchors` the
    genders of the English person pronouns of the aligned sentence (None when the other side is not English).
    """
    english = parsed.lang == "en"
    text = parsed.text
    out: list[PersonWord] = []

    def add(words: Sequence[int], gender: str, kind: str) -> None:
        toks = [parsed.tokens[w] for w in words]
        start, end = min(t.start for t in toks), max(t.end for t in toks)
        out.append(PersonWord(side, sentence, sent_id, tuple(words), text[start:end], gender, kind))

    anchored = anchors or frozenset()
    for tok in parsed.tokens:
        if english:
            if _is_english_person_pronoun(tok):
                add([tok.i], tok.gender, "pronoun")
            elif (noun := _person_noun_gender(parsed, tok, rules)) and noun[1] == (tok.i,):
                add(noun[1], noun[0], "noun")
            continue
        if _is_3sg_personal(tok):
            if (
                tok.feat("Poss") != "Yes"
                and tok.feat("Reflex") != "Yes"
                and not tok.deprel.startswith("expl")
                and tok.deprel not in ("det", "fixed")
                and _pronoun_form_ok(tok, rules)
                and tok.gender in anchored
            ):
                add([tok.i], tok.gender, "pronoun")
            continue
        noun = _person_noun_gender(parsed, tok, rules)
        if noun:
            add(noun[1], noun[0], "noun" if noun[1] == (tok.i,) else "determiner")
            continue
        predicative = tok.upos == "ADJ" or (tok.upos in ("VERB", "AUX") and tok.feat("VerbForm") == "Part")
        if not (predicative and tok.gender in _GENDERED and tok.feat("Number") == "Sing"):
            continue
        if not _agrees_with_subject(parsed, tok, rules):
            continue
        kids = parsed.children(tok.i)
        if any(c.feat("Person") in ("1", "2") for c in kids if c.deprel in ("cop", "aux", "aux:pass")):
            continue
        subjects = [c for c in kids if c.deprel in ("nsubj", "nsubj:pass")]
        if subjects and _is_person_noun(subjects[0], rules):
            add([tok.i], tok.gender, "agreement")
        elif (
            not subjects or subjects[0].upos == "PROPN" or subjects[0].feat("PronType") == "Prs"
        ) and tok.gender in anchored:
            add([tok.i], tok.gender, "agreement")
    return out


# ------------------------------------------------------------------------------------------------------------
# Sites


def _english_flip(tok: Token) -> str | None:
    low, gender = tok.text.lower(), tok.gender
    if _EN_PRONOUNS.get(low) != gender:
        return None
    if low in _EN_REFLEXIVE:
        return _EN_REFLEXIVE[low]
    if low == "he":
        return "she"
    if low == "she":
        return "he"
    if low == "him":
        return "her" if tok.feat("Poss") != "Yes" else None
    if low == "her":
        if tok.feat("Poss") == "Yes":
            return "his"
        return "him" if tok.feat("Case") == "Acc" else None
    if low == "his":
        return "her" if tok.deprel == "nmod:poss" else "hers"
    if low == "hers":
        return "his"
    return None


def _pronoun_sites(
    sent: ConlluSentence, index: int, lang: str, anchors: frozenset[str] | None, mwt: dict
) -> list[_Site]:
    parsed = sent.parsed
    out = []
    for tok in parsed.tokens:
        if not _is_3sg_personal(tok):
            continue
        # a pronoun that opens a multiword token ("He'd") is the prefix of the token's surface form
        start, end = tok.start, tok.start + len(tok.text)
        if sent.text[start:end] != tok.text or (tok.i in mwt and mwt[tok.i][0] != tok.i):
            continue
        new: str | None = None
        if lang == "en":
            new = _english_flip(tok)
        elif anchors is None or tok.gender not in anchors:
            continue  # no person test possible (module docstring)
        elif lang == "es":
            entry = _ES_PRONOUNS.get(tok.text.lower())
            new = entry[1] if entry and entry[0] == tok.gender else None
        elif lang == "fr":
            new = _french_flip(parsed, tok)
        if new and tok.gender:
            out.append(_Site(index, (tok.i,), start, end, _match_case(tok.text, new), tok.gender, PRONOUN))
    return out


def _french_flip(parsed: ParsedText, tok: Token) -> str | None:
    m = _FR_INVERTED.fullmatch(tok.text.lower())
    if not m or tok.deprel.startswith("expl"):
        return None
    prefix, bare = m.group(1) or "", m.group(2)
    subject = tok.deprel in ("nsubj", "nsubj:pass")
    after_preposition = any(c.deprel == "case" for c in parsed.children(tok.i))
    before = parsed.tokens[tok.i - 1].text.lower() if tok.i > 0 else ""
    new = None
    # the word before must keep its form: s'il / si elle, d'elle / de lui, qu'elle / que lui would change it
    if bare == "il" and tok.gender == "masc" and subject and before not in _FR_SI_ELIDED:
        new = "elle"
    elif bare == "elle" and tok.gender == "fem" and subject and before != "si":
        new = "il"
    elif bare == "elle" and tok.gender == "fem" and after_preposition and not prefix:
        new = None if before.endswith(_APOSTROPHES) else "lui"
    elif bare == "lui" and tok.gender == "masc" and after_preposition and not prefix:
        new = None if before in ("de", "que") else "elle"
    return prefix + new if new else None


def _det_noun_sites(sent: ConlluSentence, index: int, lang: str, rules: Any, mwt: dict) -> list[_Site]:
    parsed, text = sent.parsed, sent.text
    out = []
    for noun in parsed.tokens:
        site = _det_noun_site(parsed, text, index, lang, rules, mwt, noun)
        if site:
            out.append(site)
    return out


def _det_noun_site(
    parsed: ParsedText, text: str, index: int, lang: str, rules: Any, mwt: dict, noun: Token
) -> _Site | None:
    if noun.upos != "NOUN" or noun.feat("Number") != "Sing" or noun.gender not in _GENDERED:
        return None
    if noun.i in mwt or not _word_at(text, noun):
        return None
    entry = rules.noun_counterpart(noun.text.lower())
    if not entry or entry[0] not in ("common", noun.gender):
        return None
    common, counterpart = entry[0] == "common", entry[1]
    kids = parsed.children(noun.i)
    # an elided French l' shows no gender, whatever its gold features say
    dets = [c for c in kids if c.deprel == "det" and (c.gender in _GENDERED or _is_elided(c, lang))]
    if len(dets) != 1 or dets[0].upos != "DET" or dets[0].i > noun.i:
        return None
    det = dets[0]
    if det.gender not in (None, noun.gender) or det.feat("Number") == "Plur":
        return None
    if any(c.deprel in ("amod", "acl") and c.gender in _GENDERED for c in kids):
        return None  # an agreeing modifier would be left with the old gender
    between = parsed.tokens[det.i + 1 : noun.i]
    if any(t.gender is not None or t.i in mwt for t in between):
        return None
    gender = noun.gender
    new_noun = noun.text if common else _match_case(noun.text, counterpart)
    if _is_elided(det, lang):
        # only the noun can change, and it must still begin with a vowel or h
        if common or not new_noun.lower().startswith(_FR_VOWEL_START):
            return None
        return _Site(index, (noun.i,), noun.start, noun.end, new_noun, gender, DET_NOUN)
    new_det = rules.article_counterpart(det.text.lower())
    if not new_det or " " in new_det:
        return None
    if lang == "fr" and new_det in _FR_PRE_VOWEL and new_noun.lower().startswith(_FR_VOWEL_START):
        return None

    contractions = _CONTRACTIONS.get(lang, {})
    words = [det.i] + ([] if common else [noun.i])
    if det.i in mwt:
        first, last, surface = mwt[det.i]
        split = contractions.get(surface.lower())
        if last != det.i or first != det.i - 1 or not split or split[1] != det.text.lower():
            return None
        if text[det.start : det.end] != surface:
            return None
        det_start, det_end = det.start, det.end
        new_det_surface = _match_case(surface, f"{split[0]} {new_det}")
        words.insert(0, first)
    else:
        if not _word_at(text, det):
            return None
        det_start, det_end = det.start, det.end
        new_det_surface = _match_case(det.text, new_det)
        prev = parsed.tokens[det.i - 1] if det.i > 0 else None
        joined = {v: k for k, v in contractions.items()}
        if (
            prev is not None
            and prev.i not in mwt
            and (prev.text.lower(), new_det) in joined
            and text[prev.end : det.start] == " "
            and _word_at(text, prev)
        ):
            # "de la ministra" -> "del ministro": the new masculine article contracts with the preposition
            det_start = prev.start
            new_det_surface = _match_case(prev.text, joined[(prev.text.lower(), new_det)])
            words.insert(0, prev.i)
    if common:
        return _Site(index, tuple(words), det_start, det_end, new_det_surface, gender, DET_NOUN)
    replacement = new_det_surface + text[det_end : noun.start] + new_noun
    return _Site(index, tuple(words), det_start, noun.end, replacement, gender, DET_NOUN)


# ------------------------------------------------------------------------------------------------------------
# Documents


def _side_anchors(own_lang: str, other: ParsedText) -> frozenset[str] | None:
    if own_lang == "en" or other.lang != "en":
        return None
    return _english_genders(other)


def _document_words(
    doc: PudDocument, tgt_lang: str, rules: Any, src_rules: Any
) -> list[tuple[list[PersonWord], list[PersonWord]]]:
    """(source words, target words) per sentence pair."""
    out = []
    for k, pair in enumerate(doc.pairs):
        src, tgt = pair.source.parsed, pair.target.parsed
        src_words = person_words(src, src_rules, _side_anchors(src.lang, tgt), "source", k, pair.sent_id)
        tgt_words = person_words(tgt, rules, _side_anchors(tgt_lang, src), "target", k, pair.sent_id)
        out.append((src_words, tgt_words))
    return out


def _describe(word: PersonWord) -> str:
    return f"{word.side} {word.sent_id}: {word.text!r} ({word.kind}, {word.gender})"


def _evidence(site: _Site, words: list[tuple[list[PersonWord], list[PersonWord]]]) -> tuple[bool, str]:
    gender, other = site.original_gender, _OTHER[site.original_gender]
    flipped = set(site.tokens)
    order = [("source", site.sentence), ("target", site.sentence)]
    order += [(side, k) for k in range(len(words)) if k != site.sentence for side in ("target", "source")]
    ambiguous: list[PersonWord] = []
    for side, k in order:
        side_words = words[k][0] if side == "source" else words[k][1]
        if side == "target" and k == site.sentence:
            side_words = [w for w in side_words if not flipped.intersection(w.tokens)]
        candidates = [w for w in side_words if w.gender == gender]
        if not candidates:
            continue
        if any(w.gender == other for w in side_words):
            ambiguous.append(candidates[0])
            continue
        return True, _describe(candidates[0])
    if ambiguous:
        return False, f"{gender} person words only beside a {other} one: " + _describe(ambiguous[0])
    return False, f"no other {gender} person word in the document"


def _even_split(site: _Site, words: list[tuple[list[PersonWord], list[PersonWord]]]) -> bool:
    """Whether the document's only person word of the site's original gender, besides the flipped words, is one
    target word, with none in the source. After the injection that word and the injected one are one against
    one, and nothing in the document says which of the two is wrong (module docstring)."""
    gender, flipped = site.original_gender, set(site.tokens)
    if any(w.gender == gender for src, _ in words for w in src):
        return False
    rest = [w for k, (_, tgt) in enumerate(words) for w in tgt
            if w.gender == gender and not (k == site.sentence and flipped.intersection(w.tokens))]
    return len(rest) == 1


def _sites(doc: PudDocument, tgt_lang: str, rules: Any) -> list[_Site]:
    sites: list[_Site] = []
    for k, pair in enumerate(doc.pairs):
        sent = pair.target
        mwt = _multiword(sent)
        anchors = _side_anchors(tgt_lang, pair.source.parsed)
        found = _pronoun_sites(sent, k, tgt_lang, anchors, mwt)
        if tgt_lang in ("es", "fr") and rules is not None:
            found += _det_noun_sites(sent, k, tgt_lang, rules, mwt)
        sites.extend(sorted(found, key=lambda s: s.orig_start))
    return sites


def inject_document(
    doc: PudDocument,
    tgt_lang: str,
    rules: Any,
    *,
    src_rules: Any = None,
    seed: int = 0,
    max_per_doc: int | None = None,
) -> list[InjectedCopy]:
    """One copy per injection site of the document's target (module docstring), in text order.

    `rules` are the target language's rules and `src_rules` the source language's (both duck-typed:
    `noun_counterpart`, `article_counterpart`, optionally `pronoun` and `agreeing_aux`; None where a language
    has none). Copy ids are `<doc_id>#<n>`, n counting all sites from 1, so a copy keeps its id when
    `max_per_doc` keeps a seeded sample of the sites; the sample depends only on the seed and the doc_id.
    """
    sites = _sites(doc, tgt_lang, rules)
    numbered = list(enumerate(sites, 1))
    if max_per_doc is not None and len(numbered) > max_per_doc:
        rng = random.Random(f"{seed}/{doc.doc_id}")
        numbered = sorted(rng.sample(numbered, max_per_doc))
    if not numbered:
        return []
    words = _document_words(doc, tgt_lang, rules, src_rules)
    texts = tuple(pair.target.text for pair in doc.pairs)
    out = []
    for n, site in numbered:
        old = texts[site.sentence]
        new_sentence = old[: site.orig_start] + site.replacement + old[site.orig_end :]
        evidenced, note = _evidence(site, words)
        split = evidenced and _even_split(site, words)
        out.append(
            InjectedCopy(
                doc_id=doc.doc_id,
                copy_id=f"{doc.doc_id}#{n}",
                sentence=site.sentence,
                sent_id=doc.pairs[site.sentence].sent_id,
                target_texts=texts[: site.sentence] + (new_sentence,) + texts[site.sentence + 1 :],
                start=site.orig_start,
                end=site.orig_start + len(site.replacement),
                orig_start=site.orig_start,
                orig_end=site.orig_end,
                original=old[site.orig_start : site.orig_end],
                new_text=site.replacement,
                original_gender=site.original_gender,
                injected_gender=_OTHER[site.original_gender],
                kind=site.kind,
                evidenced=evidenced,
                evidence_note=note,
                even_split=split,
            )
        )
    return out


def inject_corpus(
    docs: Iterable[PudDocument],
    tgt_lang: str,
    rules: Any,
    *,
    src_rules: Any = None,
    seed: int = 0,
    max_per_doc: int | None = None,
) -> list[InjectedCopy]:
    """`inject_document` over many documents, concatenated in document order."""
    out: list[InjectedCopy] = []
    for doc in docs:
        out.extend(
            inject_document(doc, tgt_lang, rules, src_rules=src_rules, seed=seed, max_per_doc=max_per_doc)
        )
    return out


def copy_document(doc: PudDocument, copy: InjectedCopy) -> Document:
    """The injected copy as an input Document: one segment per sentence pair, the copy's target texts."""
    if copy.doc_id != doc.doc_id or len(copy.target_texts) != len(doc.pairs):
        raise ValueError(f"copy {copy.copy_id} was not made from document {doc.doc_id}")
    segments = tuple(
        Segment(pair.sent_id, pair.source.text, target)
        for pair, target in zip(doc.pairs, copy.target_texts, strict=True)
    )
    return Document(copy.copy_id, segments, origin=doc.doc_id)
