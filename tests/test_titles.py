"""Titles ("Mr.", "Mme") are judged by what the document says of the person in names and nouns.

Sentences, people and places are invented. The fact behind the rule: an honorific is bound to the name it
precedes by the string itself, while a pronoun or a pro-drop subject joins a person only through coreference
resolution, the less certain of the two attachments (common practice, no source).
"""

from __future__ import annotations

import pytest

from scoring_helpers import flags, score_pairs

pytestmark = pytest.mark.slow


def test_the_sources_own_title_contradicts_a_target_title(es_en):
    result = score_pairs(es_en, [("La señora Carmen Ordóñez firmó la carta ayer.",
                                  "Mr. Ordóñez signed the letter yesterday.")])
    assert flags(result) == [("contradiction", "Mr.", "fem")]


def test_a_title_is_not_flagged_by_a_pro_drop_subject_alone(es_en):
    # "cansada" is about whoever the zero subject of "Estaba" is; the resolver's choice does not overrule "Mr."
    result = score_pairs(es_en, [("Ordóñez firmó la carta ayer.", "Mr. Ordóñez signed the letter yesterday."),
                                 ("Estaba cansada.", "She was tired.")])
    assert flags(result) == []


def test_a_title_against_a_pronoun_with_a_silent_source_flags_the_pronoun(es_en):
    # Nothing in the source speaks to the gender; of the two target words, the pronoun is the one attached by
    # resolution, so it alone is flagged (before, both were: one of them necessarily a false alarm).
    result = score_pairs(es_en, [("Ordóñez firmó la carta ayer.", "Mr. Ordóñez signed the letter yesterday."),
                                 ("Luego se fue a casa.", "Then she went home.")])
    assert flags(result) == [("inconsistency", "she", None)]


def test_a_title_that_agrees_with_its_pronoun_raises_nothing(es_en):
    result = score_pairs(es_en, [("Ordóñez firmó la carta ayer.", "Mr. Ordóñez signed the letter yesterday."),
                                 ("Luego se fue a casa.", "Then he went home.")])
    assert flags(result) == []
