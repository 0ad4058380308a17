"""A corrected target form for a flagged word group, built from the language rules alone.

Each word of the flagged text is re-inflected for the expected gender by the first rule that knows it:
a pronoun by its paradigm (the form of the same type, case, number and person in the other gender), a
determiner by its counterpart, a person noun by its pair, an agreeing adjective or participle by swapping
its gendered ending for the other gender's. A word that no rule knows, a paradigm that offers two forms the
context cannot choose between, or a result the rules would not read as the expected gender gives no
suggestion: the post-editor is never handed a guess.
"""

from __future__ import annotations

import re
from functools import lru_cache

from gendertrace.rules.loader import LanguageRules, load_rules

_WORD = re.compile(r"\w+(?:['’-]\w+)*|\S", re.UNICODE)
GENDERED = ("fem", "masc")


class _NoForm(Exception):
    """A word the rules know whose form for the other gender they cannot decide: no suggestion at all."""


@lru_cache(maxsize=16)
def _rules(lang: str) -> LanguageRules | None:
    try:
        return load_rules(lang)
    except Exception:  # noqa: BLE001 - a language without rules simply gets no suggestions
        return None


def suggest(text: str, found: str | None, expected: str | None, lang: str, after: str = "",
            rules: LanguageRules | None = None, nouns: frozenset[str] = frozenset()) -> str | None:
    """TEXT re-inflected from FOUND to EXPECTED gender in LANG, or None when the rules cannot build it.

    AFTER is the target text that follows the flagged words; it tells a dependent possessive ("her
    book") from an independent one ("hers"). NOUNS are the words of TEXT known to be nouns (the person's
    noun mentions): a noun changes only by its pair in the rules, never by an adjective ending.
    """
    try:
        return _suggest(text, found, expected, lang, after, rules, nouns)
    except _NoForm:
        return None


def _suggest(text, found, expected, lang, after, rules, nouns) -> str | None:
    if found not in GENDERED or expected not in GENDERED or found == expected:
        return None
    rules = rules or _rules(lang)
    if rules is None:
        return None
    pieces = [(m.start(), m.end()) for m in _WORD.finditer(text)]
    if not pieces:
        return None
    # The group's noun is the person's noun mention when it is among the words, else its last word.
    named_noun = any(text[a:b].lower() in nouns for a, b in pieces)
    out, last, changed = [], 0, False
    for k, (a, b) in enumerate(pieces):
        word = text[a:b]
        nxt = text[b:] + after if k == len(pieces) - 1 else text[b:]
        if not any(ch.isalpha() for ch in word):
            new = word
        else:
            noun = word.lower() in nouns if named_noun else len(pieces) > 1 and k == len(pieces) - 1
            new = _word(word, found, expected, rules, nxt, final=k == len(pieces) - 1, noun=noun)
            if new is None:
                return None
        out.append(text[last:a] + new)
        last = b
        changed = changed or new != word
    out.append(text[last:])
    return "".join(out) if changed else None


def _word(word: str, found: str, expected: str, rules: LanguageRules, after: str, final: bool,
          noun: bool) -> str | None:
    # A word another word of the group follows is read as a determiner first ("la" of "la ingeniera"); the
    # group's last word as a pronoun first (the clitic "la"). The head noun of a group (its last word) and a
    # known noun take no adjective ending ("poeta" is no feminine of "poeto").
    order = (_pronoun, _article, _noun, _ending) if final else (_article, _noun, _ending, _pronoun)
    if noun:
        order = tuple(b for b in order if b is not _ending)
    for build in order:
        new = build(word.lower(), found, expected, rules, after)
        if new is not None:
            return _same_case(word, new) if new else word
    return None


def _same_case(model: str, new: str) -> str:
    if model.isupper() and len(model) > 1:
        return new.upper()
    if model[:1].isupper():
        return new[:1].upper() + new[1:]
    return new


def _pronoun(low: str, found: str, expected: str, rules: LanguageRules, after: str) -> str | None:
    forms = rules.pronoun(low)
    if not forms:
        return None
    mine = [f for f in forms if f.gender == found]
    if not mine:
        if all(f.gender is None for f in forms):
            return ""  # an ungendered word stays as it is
        raise _NoForm(low)
    same = [(f, o) for f in mine for p in rules.pronouns.values() for o in p
            if o.type == f.type and o.number == f.number and o.person == f.person]
    # The form of the other gender in the same case; else any that serves ("elle" for "il"; for "elle",
    # which gives no case, "il" and "lui" both serve, and the context must choose).
    candidates = {o.form for f, o in same if o.gender == expected and o.case == f.case}
    if not candidates:
        candidates = {o.form for f, o in same if (o.gender == expected or (o.gender is None and o.stressed == expected))
                      and (o.case is None or f.case is None)}
    if len(candidates) == 2:
        candidates = _possessive_position(candidates, after)
    if len(candidates) != 1:
        raise _NoForm(low)
    return candidates.pop()


def _possessive_position(candidates: set[str], after: str) -> set[str]:
    """Of a dependent and an independent possessive ("her" / "hers"): the one the position calls for.

    The pair is recognised by form, the independent one being the dependent plus -s (her/hers, their/theirs,
    your/yours: a reference grammar of English, from memory); a word following means the dependent form.
    """
    short, long_ = sorted(candidates, key=len)
    if long_ != short + "s":
        return candidates
    follows = re.match(r"\s+\w", after) is not None
    return {short if follows else long_}


def _article(low: str, found: str, expected: str, rules: LanguageRules, after: str) -> str | None:
    if rules.article_gender(low) != found:
        return None
    other = rules.article_counterpart(low)
    return other if other and rules.article_gender(other.split()[-1]) in (expected, None) else None


def _noun(low: str, found: str, expected: str, rules: LanguageRules, after: str) -> str | None:
    entry = rules.noun_counterpart(low)
    if entry is None:
        return None
    gender, other = entry
    if gender == "common":
        return ""  # one form for both genders: the word stays
    return other if gender == found else None


def _ending(low: str, found: str, expected: str, rules: LanguageRules, after: str) -> str | None:
    matched, gender = rules.ending_gender(low)
    if not matched:
        return None
    if gender is None:
        return ""  # an invariable ending: the word stays
    if gender != found:
        return None
    ending = max((e for e, g in rules.endings if g == gender and low.endswith(e) and len(low) > len(e)), key=len)
    stem = low[: len(low) - len(ending)]
    others = [e for e, g in rules.endings if g == expected]
    if not others:
        return None
    # The other gender's ending that shares most of this one (é/ée, eux/euse); a tie leaves no suggestion.
    scored = sorted(((_shared(ending, e), e) for e in others), reverse=True)
    if len(scored) > 1 and scored[0][0] == scored[1][0]:
        return None
    new = stem + scored[0][1]
    return new if rules.ending_gender(new) == (True, expected) else None


def _shared(a: str, b: str) -> int:
    n = 0
    while n < min(len(a), len(b)) and a[n] == b[n]:
        n += 1
    return n
