"""Partitive predicates agree with the subject: "Ana es una de mis amigas", "Tomás es uno de mis amigos".

Sentences and people are invented. Grammar fact: in a copular clause the partitive pronoun (Spanish uno/una)
takes the gender of the subject it describes, not of the group after "de" (handbook grammar, from memory).
Spanish "uno" is a pronoun only (the article is "un"), so it is known by the tagger's features, not by the
rules' article list.
"""

from __future__ import annotations

import pytest

from scoring_helpers import score_pairs

pytestmark = pytest.mark.slow


def _evidence(result, label: str) -> list[tuple[str, str]]:
    entity = next(e for e in result.entities if e.label == label)
    return [(x.text, x.gender) for x in entity.evidence if x.side == "source"]


def test_a_masculine_partitive_pronoun_is_evidence_about_the_subject(es_en):
    result = score_pairs(es_en, [("Tomás Arrieta es uno de mis mejores amigos.",
                                  "Tomás Arrieta is one of my best friends."),
                                 ("Por eso me dolió verlo tan triste.", "That is why it hurt to see her so sad.")])
    assert ("uno", "masc") in _evidence(result, "Tomás Arrieta")


def test_a_feminine_partitive_article_form_is_evidence_about_the_subject(es_en):
    result = score_pairs(es_en, [("Tomasa Arrieta es una de mis mejores amigas.",
                                  "Tomasa Arrieta is one of my best friends.")])
    assert ("una", "fem") in _evidence(result, "Tomasa Arrieta")


def test_an_indefinite_pronoun_without_a_group_is_no_partitive(es_en):
    # "es uno solo" has no plural group under the pronoun: it counts a thing, it describes no person.
    result = score_pairs(es_en, [("Tomás Arrieta dijo que el problema es uno solo.",
                                  "Tomás Arrieta said the problem is only one.")])
    assert all(x.text != "uno" for e in result.entities for x in e.evidence)
