"""Injected flips of first-person agreement words in a Spanish translation, and the English cue to the narrator.

Everything here is decided from the parses and the project's language rules, so the same documents give the
same flips. A flip site is a Spanish word that agrees with the first-person singular speaker, the narrator:

1. an adjective (ADJ) or a participle, singular, whose ending the rules give a gender (`LanguageRules.
   ending_gender`: -o masculine, -a feminine) that the tagger's Gender does not contradict; or a person noun
   the rules know (`noun_counterpart`) with one gendered determiner before it whose counterpart the rules give
   (*una experta* -> *un experto*);
2. predicated of the first person singular, in one of these ways:
   - it has a `cop`, `aux` or `aux:pass` dependent whose lemma is an agreeing copula or auxiliary of the rules
     (`copulas`, `agreeing_aux`: *estoy cansada*, *soy una experta*, *fui elegido*) and is finite first person
     singular (Person=1, Number=Sing);
   - it has such a copula or auxiliary dependent of any person and the pronoun *yo* as its subject;
   - its copula or auxiliary is a form whose first and third person singular coincide (imperfect,
     conditional, subjunctive: *estaba*, which taggers often tag third person), it has no subject, and a
     verb coordinated with it is first person singular (*estaba dormida y sentí ...*), or the aligned English
     segment has *I* as a subject and no third-person singular pronoun subject (*I was tired* / *estaba
     cansada*);
   - it depends on a finite first-person singular verb that has no object but a first-person clitic, and
     either that verb's lemma is an agreeing copula of the rules (*me sentí orgullosa*, *me quedé dormido*,
     *estaré encantado*) or the word is its `xcomp` or `advcl`, or its `advmod` right after a comma (a
     predicative adjunct: *me puse en pie, enfadada*; *corrí rápido* is adverbial); an object would make the
     word agree with the object instead (*lo dejé listo*);
   - it is *mismo*/*misma* right after *mí* or *yo* (*por mí misma*), whatever its tag;
   - it is a `conj` of a site with no copula or subject of its own (*cansada y desanimada*).
   A participle after *haber* alone does not agree (*he cansado*); with a copula or a passive auxiliary of
   its own the word still does (*había estado asustada*, *he sido elegida*);
3. outside quotation marks: first person inside a quotation is the quoted speaker, not the narrator.

The flip turns the word to the other gender: the last letter o <-> a for adjectives and participles; the
rules' counterparts for a noun and its determiner (the reported span then runs from the determiner to the
noun).

The English cue to the narrator's gender is looked for outside quotation marks, in every segment of the
document, by two rules:

- *word*: an English person noun of one gender (`noun_genders`, not a title-only form) said of the speaker: the
  noun has the pronoun *I* as its subject, or its head is a form of *be* whose subject is *I* ("I am a
  mother"), or it is the object of *as* in a clause whose subject is *I* ("as a mother I ..."). Cues of both
  genders cancel each other.
- *name*: the speaker gives a name: "my name is NAME", "I am NAME" / "I'm NAME", or "this is NAME" / "it's
  NAME" in the first sentence of the document (how speakers and streamers introduce themselves). The name's
  gender comes only from a first-name lookup the caller passes (the first-name policy); a name alone says
  nothing certain about a person, so this cue is reported apart.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from gendertrace.model import ParsedText, Token
from gendertrace.rules import LanguageRules

OTHER = {"fem": "masc", "masc": "fem"}
_QUOTE_PAIRS = {"“": "”", "«": "»", "„": "“"}
_BE = {"be", "am", "is", "are", "was", "were", "'m", "’m", "being", "been"}


@dataclass(frozen=True)
class FlipSite:
    """One first-person agreement word of a target segment, and the same span in the other gender."""

    seg: int  # segment index in the document
    start: int
    end: int
    text: str
    new_text: str
    gender: str  # the word's gender before the flip
    rule: str  # which way of rule 2 made it a site


@dataclass(frozen=True)
class NarratorCue:
    """What the English says about the speaker's gender: `kind` is word or name."""

    kind: str
    gender: str
    seg: int
    text: str


def quoted_spans(text: str) -> list[tuple[int, int]]:
    """Character spans inside quotation marks: curly and angle pairs, and straight double quotes taken in
    pairs from the left; an unclosed mark runs to the end of the text."""
    spans: list[tuple[int, int]] = []
    straight: int | None = None
    i = 0
    while i < len(text):
        ch = text[i]
        if ch in _QUOTE_PAIRS:
            close = text.find(_QUOTE_PAIRS[ch], i + 1)
            end = len(text) if close < 0 else close
            spans.append((i, end + 1))
            i = end + 1
            continue
        if ch == '"':
            if straight is None:
                straight = i
            else:
                spans.append((straight, i + 1))
                straight = None
        i += 1
    if straight is not None:
        spans.append((straight, len(text)))
    return spans


def _inside(spans: Sequence[tuple[int, int]], start: int) -> bool:
    return any(a <= start < b for a, b in spans)


def _first_singular(t: Token) -> bool:
    return t.feats.get("Person") == "1" and t.feats.get("Number", "Sing") == "Sing" and t.finite


def _first_or_third(t: Token) -> bool:
    """A finite singular form whose first and third person coincide: the imperfect indicative, the conditional
    and the subjunctive (*estaba*, *sería*, *estuviera*), which taggers often tag third person."""
    if not t.finite or t.feats.get("Number", "Sing") != "Sing" or t.feats.get("Person", "3") not in ("1", "3"):
        return False
    mood = t.feats.get("Mood")
    return mood in ("Sub", "Cnd") or (mood == "Ind" and t.feats.get("Tense") == "Imp")


def _speaker_verb(p: ParsedText, v: Token) -> bool:
    """A finite first-person singular verb, or a predicate whose copula or auxiliary is one."""
    return _first_singular(v) or any(
        k.deprel in ("cop", "aux", "aux:pass") and _first_singular(k) for k in p.children(v.i))


def _object_free(p: ParsedText, v: Token) -> bool:
    """No object but a first-person clitic (*me sentí*): a predicative word then agrees with the subject."""
    return not any(k.deprel in ("obj", "iobj") and k.upos in ("NOUN", "PROPN", "PRON")
                   and k.feats.get("Person") != "1" for k in p.children(v.i))


def english_i_only(p: ParsedText) -> bool:
    """The English sentence side has *I* as a subject and no third-person singular pronoun subject."""
    subjects = [t.text.lower() for t in p.tokens if t.deprel.startswith("nsubj")]
    return "i" in subjects and not any(s in ("he", "she", "it", "this", "that") for s in subjects)


def _predicated_of_speaker(p: ParsedText, t: Token, rules: LanguageRules, english_i: bool = False) -> str | None:
    """How `t` is predicated of the first person singular (rule 2 of the module), or None."""
    if t.text.lower() in ("mismo", "misma") and t.i > 0 and p.tokens[t.i - 1].text.lower() in ("mí", "yo"):
        return "emphatic"
    kids = p.children(t.i)
    agreeing = [k for k in kids if k.deprel in ("cop", "aux", "aux:pass")
                and k.lemma.lower() in rules.copulas | rules.agreeing_aux]
    # A participle after haber alone does not agree (*he cansado*); with a copula or passive auxiliary of its
    # own the word still does (*había estado asustada*, *he sido elegida*).
    if not agreeing and any(k.deprel.startswith("aux") and k.lemma.lower() in rules.invariable_aux for k in kids):
        return None
    subject = [k for k in kids if k.deprel.startswith("nsubj")]
    if any(_first_singular(k) for k in agreeing):
        return "copula"
    if agreeing and any(k.text.lower() == "yo" for k in subject):
        return "yo"
    if agreeing and not subject and any(_first_or_third(k) for k in agreeing):
        coordinated = [k for k in kids if k.deprel == "conj"]
        head = p.head_of(t.i)
        if t.deprel == "conj" and head is not None:
            coordinated.append(head)
        if any(_speaker_verb(p, v) for v in coordinated):
            return "coordinated"
        if english_i:
            return "english-subject"
    head = p.head_of(t.i)
    if head is None or not _first_singular(head) or not _object_free(p, head):
        return None
    if head.lemma.lower() in rules.copulas:
        return "xcomp"
    # An adverbial use of an adjective (*corrí rápido*) is not set off by a comma; a predicative adjunct
    # usually is (*me puse en pie, enfadada*).
    if t.deprel in ("xcomp", "advcl") or (t.deprel == "advmod" and t.i > 0 and p.tokens[t.i - 1].text == ","):
        return "adjunct"
    return None


def _flip_word(t: Token, rules: LanguageRules) -> tuple[str, str] | None:
    """(gender, flipped form) of an agreeing adjective or participle, or None when it is not cleanly flippable."""
    if t.feats.get("Number", "Sing") != "Sing" or not t.text.isalpha():
        return None
    matched, gender = rules.ending_gender(t.text)
    if not matched or gender not in OTHER or (t.gender is not None and t.gender != gender):
        return None
    last = t.text[-1]
    swap = {"o": "a", "a": "o", "O": "A", "A": "O"}
    if last not in swap:
        return None
    return gender, t.text[:-1] + swap[last]


def _flip_noun(p: ParsedText, t: Token, rules: LanguageRules) -> tuple[str, str, Token] | None:
    """(gender, flipped determiner + noun, the determiner) of a person noun with one gendered determiner."""
    entry = rules.noun_counterpart(t.text)
    if entry is None or entry[0] not in OTHER or t.feats.get("Number", "Sing") != "Sing":
        return None
    gender, counterpart = entry
    dets = [k for k in p.children(t.i) if k.deprel == "det" and rules.article_gender(k.text) in OTHER]
    if len(dets) != 1 or dets[0].i > t.i or rules.article_gender(dets[0].text) != gender:
        return None
    det = dets[0]
    new_det = rules.article_counterpart(det.text)
    if not new_det or " " in new_det:
        return None
    if det.text[:1].isupper():
        new_det = new_det[:1].upper() + new_det[1:]
    if t.text[:1].isupper():
        counterpart = counterpart[:1].upper() + counterpart[1:]
    between = p.text[det.end:t.start]
    return gender, new_det + between + counterpart, det


def flip_sites(
    parses: Sequence[ParsedText], rules: LanguageRules, sources: Sequence[ParsedText] | None = None
) -> list[FlipSite]:
    """Every flip site of a document's target segments (the module's rules), in text order; `sources`, the
    English segments aligned with them, allow the rule on forms whose first and third person coincide."""
    out: list[FlipSite] = []
    for seg, p in enumerate(parses):
        quotes = quoted_spans(p.text)
        english_i = sources is not None and english_i_only(sources[seg])
        heads: dict[int, bool] = {}  # tokens already taken as sites: their conjuncts agree with them
        for t in p.tokens:
            if _inside(quotes, t.start):
                continue
            if t.upos == "NOUN":
                noun = _flip_noun(p, t, rules)
                if noun is None:
                    continue
                rule = _predicated_of_speaker(p, t, rules, english_i)
                if rule is None or rule == "emphatic":
                    continue
                gender, new, det = noun
                out.append(FlipSite(seg, det.start, t.end, p.text[det.start:t.end], new, gender, rule))
                continue
            if t.upos != "ADJ" and not t.participle and t.text.lower() not in ("mismo", "misma"):
                continue
            flip = _flip_word(t, rules)
            if flip is None:
                continue
            rule = _predicated_of_speaker(p, t, rules, english_i)
            if rule is None and t.deprel == "conj" and heads.get(t.head) and not any(
                    k.deprel in ("cop", "aux", "aux:pass") or k.deprel.startswith("nsubj") for k in p.children(t.i)):
                rule = "conjunct"
            if rule is None:
                continue
            heads[t.i] = True
            out.append(FlipSite(seg, t.start, t.end, t.text, flip[1], flip[0], rule))
    return out


def apply_flip(text: str, site: FlipSite) -> str:
    """The segment text with the site's span replaced by its flipped form."""
    assert text[site.start:site.end] == site.text, "the site must be read from this text"
    return text[:site.start] + site.new_text + text[site.end:]


def _subject_is_i(p: ParsedText, t: Token) -> bool:
    return any(k.deprel.startswith("nsubj") and k.text.lower() == "i" for k in p.children(t.i))


def word_cues(parses: Sequence[ParsedText], rules: LanguageRules) -> list[NarratorCue]:
    """English person nouns of one gender said of the speaker, outside quotation marks (the *word* rule)."""
    out: list[NarratorCue] = []
    for seg, p in enumerate(parses):
        quotes = quoted_spans(p.text)
        for t in p.tokens:
            if t.upos not in ("NOUN", "PROPN") or _inside(quotes, t.start):
                continue
            low = t.text.lower()
            entry = rules.noun_counterpart(low)
            if entry is None or entry[0] not in OTHER or low in rules.title_only:
                continue
            head = p.head_of(t.i)
            said = _subject_is_i(p, t)
            if not said and head is not None and head.text.lower() in _BE | {"’s", "'s"}:
                said = _subject_is_i(p, head)
            if not said and head is not None and head.text.lower() == "as":
                verb = p.head_of(head.i)
                said = verb is not None and _subject_is_i(p, verb)
            if said:
                out.append(NarratorCue("word", entry[0], seg, t.text))
    return out


_NAME_INTRO = re.compile(
    r"\b(?:my name is|i am|i'm|i’m)\s+([A-Z][a-zà-ÿ]+)\b"
    r"|^\W*(?:\w+\W+){0,3}?(?:this is|it's|it’s)\s+([A-Z][a-zà-ÿ]+)\b",
    re.IGNORECASE,
)


def name_cues(sources: Sequence[str], first_names: Mapping[str, str] | None) -> list[NarratorCue]:
    """Names the speaker gives themself (the *name* rule) whose gender the first-name lookup (lower-case name
    -> fem or masc, as `declared.policy.load_first_names` gives) knows; none without a lookup."""
    if not first_names:
        return []
    out: list[NarratorCue] = []
    for seg, text in enumerate(sources):
        quotes = quoted_spans(text)
        for m in _NAME_INTRO.finditer(text):
            if _inside(quotes, m.start()) or (m.group(2) and seg != 0):
                continue
            name = m.group(1) or m.group(2)
            if not name[:1].isupper():
                continue
            gender = first_names[name.lower()] if name.lower() in first_names else None
            if gender in OTHER:
                out.append(NarratorCue("name", gender, seg, name))
    return out


def narrator_gender(cues: Sequence[NarratorCue]) -> str | None:
    """The one gender the cues give, or None when they give none or both."""
    genders = {c.gender for c in cues}
    return genders.pop() if len(genders) == 1 else None
