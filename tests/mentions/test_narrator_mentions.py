"""The narrator's mentions on hand-built parses: the first-person singular outside quotations, with the words
that agree with it; inside a quotation the first person stays the quoted speaker's."""

from __future__ import annotations

from gendertrace.mentions.extract import SegmentSide, _quoted_tokens, extract_mentions, narrator_mentions
from gendertrace.rules import load_rules
from handparse import EN_I_MOTHER, es_i_was_tired, parse

ES, EN = load_rules("es"), load_rules("en")


def _marks(m) -> list[tuple[str, str, str]]:
    return sorted((mk.text, mk.gender, mk.rule) for mk in m.marks)


def test_a_first_person_zero_subject_outside_quotations_carries_its_predicate():
    # Spanish grammar (from memory): a predicative adjective after "estar" agrees with the subject, here "yo".
    p = parse("es", *es_i_was_tired("cansada", "Fem"))
    (m,) = extract_mentions(p, 0, "1", "target", ES)
    assert (m.kind, m.text, m.person, m.number, m.quoted) == ("zero", "Estaba", "1", "sing", False)
    assert _marks(m) == [("cansada", "fem", "predicative with copula")]


def test_the_english_first_person_subject_is_a_mention_of_its_own():
    p = parse("en", *EN_I_MOTHER)
    ms = extract_mentions(p, 0, "1", "source", EN)
    assert [(m.kind, m.text, m.person) for m in ms] == [("pronoun", "I", "1"), ("noun", "mother", "3")]


def test_a_pronominal_verb_keeps_its_predicative_adjective():
    # Spanish grammar (from memory): "sentirse" is pronominal; its clitic "me" is no object, and the adjective
    # after it agrees with the subject. Taggers often label that adjective `obj` (spaCy's es_core_news does).
    p = parse("es", "Me sentí orgullosa .", """
1 Me yo PRON Case=Acc,Dat|Number=Sing|Person=1|PronType=Prs|Reflex=Yes 2 obj
2 sentí sentir VERB Mood=Ind|Number=Sing|Person=1|Tense=Past|VerbForm=Fin 0 root
3 orgullosa orgulloso ADJ Gender=Fem|Number=Sing 2 obj
4 . . PUNCT _ 2 punct
""")
    ms = extract_mentions(p, 0, "1", "target", ES)
    assert [(m.kind, m.text, m.person) for m in ms] == [("pronoun", "Me", "1"), ("zero", "sentí", "1")]
    assert _marks(ms[1]) == [("orgullosa", "fem", "secondary predicate")]


def test_a_quoted_first_person_is_the_speaker_not_the_narrator():
    p = parse("es", "« Estoy cansada » , dijo Ana .", """
1 « « PUNCT _ 3 punct
2 Estoy estar AUX Mood=Ind|Number=Sing|Person=1|Tense=Pres|VerbForm=Fin 3 cop
3 cansada cansado ADJ Gender=Fem|Number=Sing 6 ccomp
4 » » PUNCT _ 3 punct
5 , , PUNCT _ 6 punct
6 dijo decir VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
7 Ana Ana PROPN _ 6 nsubj NE=PER
8 . . PUNCT _ 6 punct
""")
    first = [m for m in extract_mentions(p, 0, "1", "target", ES) if m.person == "1"]
    assert [(m.text, m.quoted) for m in first] == [("Estoy", True)]
    sc = SegmentSide(p, 0, "1", "target", ES, set(), _quoted_tokens(p))
    assert narrator_mentions(sc) == []
