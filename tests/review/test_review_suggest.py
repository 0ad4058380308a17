"""Suggested corrected forms against handbook inflection facts, and suggestions left out where the rules
cannot build one."""

from __future__ import annotations

import pytest

from gendertrace.suggest import suggest

# (flagged words, found, expected, language, following text) -> the form the grammar gives.
HANDBOOK = [
    # Spanish: -o/-a inflection of adjectives, participles and role nouns; el/la, un/una, del/de la (Real
    # Academia Española, Nueva gramática de la lengua española, chapters on gender and the article; from memory).
    ("el ingeniero", "masc", "fem", "es", "", "la ingeniera"),
    ("cansado", "masc", "fem", "es", "", "cansada"),
    ("La ingeniera", "fem", "masc", "es", "", "El ingeniero"),
    ("el nuevo director", "masc", "fem", "es", "", "la nueva directora"),
    ("del presidente", "masc", "fem", "es", "", "de la presidenta"),
    ("él", "masc", "fem", "es", "", "ella"),
    ("el periodista", "masc", "fem", "es", "", "la periodista"),  # common-gender noun: only the article changes
    # English: he/she, him/her, his/her (dependent) and his/hers (independent), himself/herself (Quirk et al.,
    # A Comprehensive Grammar of the English Language, personal and possessive pronouns; from memory).
    ("his", "masc", "fem", "en", " report", "her"),
    ("his", "masc", "fem", "en", ".", "hers"),
    ("He", "masc", "fem", "en", " said", "She"),
    ("himself", "masc", "fem", "en", "", "herself"),
    # French: feminine -e after a masculine participle in -é, -eux/-euse, il/elle, le/la (Grevisse, Le Bon
    # Usage, on the feminine of adjectives; from memory).
    ("fatigué", "masc", "fem", "fr", "", "fatiguée"),
    ("heureuse", "fem", "masc", "fr", "", "heureux"),
    ("il", "masc", "fem", "fr", "", "elle"),
    ("lui-même", "masc", "fem", "fr", "", "elle-même"),
]


@pytest.mark.parametrize("text, found, expected, lang, after, want", HANDBOOK)
def test_suggestions_follow_the_handbook(text, found, expected, lang, after, want):
    assert suggest(text, found, expected, lang, after) == want


def test_the_person_noun_is_known_by_its_mention_and_a_following_adjective_agrees():
    # Spanish adjectives mostly follow the noun and agree with it (Nueva gramática, from memory).
    assert suggest("El presidente electo", "masc", "fem", "es", nouns=frozenset({"presidente"})) == \
        "La presidenta electa"
    assert suggest("El presidente electo", "masc", "fem", "es") is None  # without it "electo" is read as the noun


@pytest.mark.parametrize("text, found, expected, lang", [
    ("her", "fem", "masc", "en"),  # "him" or "his": the paradigm offers two, the words do not choose
    ("elle", "fem", "masc", "fr"),  # "il" or "lui" (subject or stressed)
    ("el fontanero", "masc", "fem", "es"),  # a noun the rules do not list is never re-inflected by an ending
    ("he", "masc", None, "en"),  # nothing stated to correct towards
    ("he", "masc", "neutral", "en"),  # a neutral form is the writer's choice, not a rule's
])
def test_no_suggestion_where_the_rules_cannot_build_one(text, found, expected, lang):
    assert suggest(text, found, expected, lang) is None
