"""Even splits, intensifying reflexives, names in fronted adjuncts and title-only person nouns.

Sentences, people and places are invented. The grammar facts: an intensifying reflexive ("the mayor herself")
stands in apposition to the noun phrase it emphasises and means the same person (handbook grammar, from memory);
binding principle C bars a pronoun from commanding a coreferent name, and a subject does not command an adjunct
placed before it ("In Tomas's office, he keeps a piano" is coreferent; from memory); "count" is a noble title
only as a title, otherwise a tally (common practice, no source).
"""

from __future__ import annotations

import pytest

from gendertrace import Scorer
from gendertrace.rules import load_rules
from scoring_helpers import chain_texts, score_pairs

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def en_es() -> Scorer:
    return Scorer("en", "es")




def test_an_even_split_flags_both_words(es_en):
    # The second possessive joins the first only as a fallback (less surely), so before this rule only the
    # first word was flagged, as if it alone were the odd one out.
    result = score_pairs(es_en, [("Su sueño es cerrar aquí su carrera.", "It is his dream to close her career here.")])
    flagged = sorted((f.kind, f.text) for f in result.findings)
    assert flagged == [("inconsistency", "her"), ("inconsistency", "his")]
    confidences = {f.confidence for f in result.findings}
    assert len(confidences) == 1  # neither side of an even split is likelier to be the wrong one


def test_an_uneven_split_flags_only_the_minority(es_en):
    result = score_pairs(es_en, [
        ("Su sueño es cerrar aquí su carrera.", "It is his dream to close his career here."),
        ("Después volvió a su pueblo.", "Then she went back to his village."),
    ])
    assert [f.text for f in result.findings if f.kind == "inconsistency"] == ["she"]


def test_an_intensifying_reflexive_is_the_person_it_follows(es_en):
    result = score_pairs(es_en, [("La propia Carla Menéndez presentó el plan ayer.",
                             "Carla Menéndez himself presented the plan yesterday.")])
    assert chain_texts(result, "target", "himself") == ["Carla Menéndez", "himself"]
    assert [(f.kind, f.text, f.expected) for f in result.findings] == [("contradiction", "himself", "fem")]


def test_a_reflexive_after_a_preposition_is_no_intensifier(en_es):
    # "a portrait of himself": the reflexive is bound by the subject, and is not in apposition to "portrait".
    result = score_pairs(en_es, [("Wendel Ostrak painted a portrait of himself.",
                             "Wendel Ostrak pintó un retrato de sí mismo.")])
    chain = chain_texts(result, "source", "himself")
    assert "Wendel Ostrak" in chain and "portrait" not in chain


def test_a_name_in_a_fronted_adjunct_can_be_the_subject(es_en):
    result = score_pairs(es_en, [("Según el informe de la directora, ha cerrado tres fábricas.",
                             "According to the director's report, he has closed three factories.")])
    assert chain_texts(result, "target", "he") == ["director", "he"]
    assert "directora" in chain_texts(result, "source", "ha")
    assert [(f.kind, f.text, f.expected) for f in result.findings] == [("contradiction", "he", "fem")]


def test_a_name_after_the_subject_stays_apart_from_it(es_en):
    # Principle C still holds where the subject comes first: "he said that the director..." is two people.
    result = score_pairs(es_en, [("Dijo que la directora cerrará tres fábricas.",
                             "He said that the director will close three factories.")])
    assert "director" not in chain_texts(result, "target", "He")


def test_count_is_a_person_only_as_a_title():
    rules = load_rules("en")
    assert "count" in rules.title_only and rules.noun_counterpart("count") == ("masc", "countess")
    scorer = Scorer("en", "es")
    tally = score_pairs(scorer, [("The count of votes ended late, she said.",
                                  "El recuento de votos terminó tarde, dijo.")])
    assert not any(m.text == "count" for c in tally.chains for m in c.mentions)
    title = score_pairs(scorer, [("Count Orsolani opened the archive.", "El conde Orsolani abrió el archivo.")])
    assert any("Count" in m.text for c in title.chains for m in c.mentions if c.side == "source")


def test_a_reflexive_in_a_relative_clause_is_bound_by_the_noun_it_describes(es_en):
    # "who" carries no PronType from the English tagger: the pronoun opening the clause is taken as relative.
    result = score_pairs(es_en, [("La ingeniera Nerea Olabide es una persona que solo piensa en sí misma.",
                             "The engineer Nerea Olabide is a person who only thinks about himself.")])
    assert chain_texts(result, "target", "himself") == ["engineer", "Nerea Olabide", "person", "himself"]
    assert [(f.kind, f.text, f.expected) for f in result.findings] == [("contradiction", "himself", "fem")]


def test_person_is_an_epicene_noun_in_english():
    rules = load_rules("en")
    assert rules.noun_counterpart("person") == ("epicene", "person")
    assert rules.noun_counterpart("victim") == ("epicene", "victim")


def test_the_subject_and_the_object_of_one_verb_stay_apart_through_a_shared_antecedent(es_en):
    # Principle B (from memory): "La describió" has two people. Both could take the earlier "she", but not
    # both at once, so the object and the subject end in different chains on each side.
    result = score_pairs(es_en, [("Tenía noventa años.", "She was ninety."),
                            ("La describió como una pintora generosa.", "He described her as a generous painter.")])
    assert "La" not in chain_texts(result, "source", "describió")
    assert "her" not in chain_texts(result, "target", "He")
    assert "painter" in chain_texts(result, "target", "her")


def _french_pronouns(text: str) -> dict[str, str | None]:
    from gendertrace.mentions.extract import extract_mentions
    from gendertrace.parse.spacy_backend import SpacyParser

    parsed = SpacyParser("fr").parse(text)
    return {m.text: m.gender for m in extract_mentions(parsed, 0, "s0", "target", load_rules("fr"))
            if m.kind == "pronoun"}


def test_french_lui_is_masculine_only_where_it_stands_stressed():
    # "lui" after a preposition is the stressed masculine form (feminine "elle"); before a verb it is the
    # dative clitic of either gender (handbook grammar, from memory).
    assert _french_pronouns("Selon lui, la réforme arrive trop tard.")["lui"] == "masc"
    assert _french_pronouns("Rien ne change chez lui depuis l'hiver.")["lui"] == "masc"
    assert _french_pronouns("Je lui ai parlé hier.")["lui"] is None
    assert _french_pronouns("Elle a gagné en lui parlant franchement.")["lui"] is None
    assert load_rules("fr").pronoun("lui")[0].stressed == "masc"


def test_an_inverted_subject_clitic_is_a_pronoun_whatever_its_tag():
    # The French pipeline tags the "-elle" of "dit-elle" as an adjective.
    assert _french_pronouns("« Je reviendrai », dit-elle à la foule.")["-elle"] == "fem"
