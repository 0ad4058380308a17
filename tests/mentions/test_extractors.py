"""The mention extractors on hand-built parses: which words make a mention, of which kind, with which marks."""

from __future__ import annotations

from gendertrace.mentions.extract import EXTRACTORS, extract_mentions
from gendertrace.rules import load_rules
from handparse import ES_NAME, ES_TIRED, parse

ES = load_rules("es")


def _marks(m) -> list[tuple[str, str, str]]:
    return sorted((mk.text, mk.gender, mk.rule) for mk in m.marks)


def test_extractors_run_names_nouns_pronouns_zero_subjects_in_that_order():
    assert [f.__name__ for f in EXTRACTORS] == [
        "name_mentions", "noun_mentions", "pronoun_mentions", "zero_subject_mentions", "narrator_mentions",
        "addressee_mentions"]


def test_role_noun_carries_its_form_and_its_determiner():
    # Spanish grammar: the article agrees with the noun in gender ("la ingeniera"), from memory.
    p = parse("es", "La ingeniera llegó .", """
1 La el DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 2 det
2 ingeniera ingeniero NOUN Gender=Fem|Number=Sing 3 nsubj
3 llegó llegar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
4 . . PUNCT _ 3 punct
""")
    (m,) = extract_mentions(p, 0, "1", "source", ES)
    assert (m.kind, m.text, m.role, m.key) == ("noun", "ingeniera", "nsubj", "ingeniero")
    assert _marks(m) == [("La", "fem", "determiner agreement"), ("ingeniera", "fem", "gendered noun")]


def test_a_name_takes_its_words_and_nothing_else_claims_them():
    p = parse("es", *ES_NAME)
    ms = extract_mentions(p, 0, "1", "source", ES)
    assert [(m.kind, m.text, m.key, m.span.start, m.span.end) for m in ms] == [("name", "Ana Ruiz", "ana ruiz", 0, 8)]


def test_zero_subject_of_a_copular_clause_carries_the_agreeing_predicate():
    # Spanish is pro-drop and the predicative adjective agrees with the subject ("estaba cansada"), from memory.
    p = parse("es", *ES_TIRED)
    (m,) = extract_mentions(p, 1, "2", "source", ES)
    assert (m.kind, m.text, m.id, m.person, m.number) == ("zero", "Estaba", "s1.z1", "3", "sing")
    assert _marks(m) == [("cansada", "fem", "predicative with copula")]


def test_existential_haber_makes_no_zero_subject():
    # Spanish grammar: existential "hay" has no subject at all (from memory); the verb list is rules data.
    assert "haber" in ES.subjectless_verbs
    p = parse("es", "Hay tres sillas .", """
1 Hay haber VERB Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 0 root
2 tres tres NUM _ 3 nummod
3 sillas silla NOUN Gender=Fem|Number=Plur 1 obj
4 . . PUNCT _ 1 punct
""")
    assert extract_mentions(p, 0, "1", "source", ES) == []
    q = parse("es", "Llegó tarde .", """
1 Llegó llegar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
2 tarde tarde ADV _ 1 advmod
3 . . PUNCT _ 1 punct
""")
    assert [m.kind for m in extract_mentions(q, 0, "1", "source", ES)] == ["zero"]


def test_english_gendered_pronoun_is_a_personal_pronoun_mark():
    # English personal pronouns mark the referent's gender (she/he), from memory.
    p = parse("en", "She was tired .", """
1 She she PRON Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs 3 nsubj
2 was be AUX Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 3 cop
3 tired tired ADJ Degree=Pos 0 root
4 . . PUNCT _ 3 punct
""")
    (m,) = extract_mentions(p, 0, "1", "target", load_rules("en"))
    assert (m.kind, m.pron_type, m.role, m.clause) == ("pronoun", "personal", "nsubj", 2)
    assert _marks(m) == [("She", "fem", "personal pronoun")]


def test_a_coordinated_participle_of_its_own_compound_tense_clause_is_no_agreement():
    # Spanish grammar: after "haber" the participle is invariable, and a conjunct with its own subject is
    # another clause (handbook grammar facts, from memory). Only "segura" agrees with the zero subject.
    p = parse("es", "Estaba segura , pero las fuerzas habían llegado y contenta .", """
1 Estaba estar AUX Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin 2 cop
2 segura seguro ADJ Gender=Fem|Number=Sing 0 root
3 , , PUNCT _ 8 punct
4 pero pero CCONJ _ 8 cc
5 las el DET Definite=Def|Gender=Fem|Number=Plur|PronType=Art 6 det
6 fuerzas fuerza NOUN Gender=Fem|Number=Plur 8 nsubj
7 habían haber AUX Mood=Ind|Number=Plur|Person=3|Tense=Imp|VerbForm=Fin 8 aux
8 llegado llegar VERB Gender=Masc|Number=Sing|Tense=Past|VerbForm=Part 2 conj
9 y y CCONJ _ 10 cc
10 contenta contento ADJ Gender=Fem|Number=Sing 2 conj
11 . . PUNCT _ 2 punct
""")
    (zero,) = [m for m in extract_mentions(p, 0, "1", "source", ES) if m.kind == "zero"]
    assert _marks(zero) == [("contenta", "fem", "predicative with copula"),
                            ("segura", "fem", "predicative with copula")]


def test_a_finite_verb_gets_no_gender_from_its_ending():
    # Spanish grammar: finite verbs do not inflect for gender; "-a" in "empieza" is a person ending, not a
    # feminine one (handbook grammar fact, from memory). A misparse made the verb the head of "es".
    p = parse("es", "Y es cuando empieza .", """
1 Y y CCONJ _ 4 advmod
2 es ser AUX Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 4 cop
3 cuando cuando SCONJ _ 4 mark
4 empieza empezar VERB Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 0 root
5 . . PUNCT _ 4 punct
""")
    (zero,) = [m for m in extract_mentions(p, 0, "1", "source", ES) if m.kind == "zero"]
    assert zero.marks == ()


def test_a_clause_with_a_neuter_demonstrative_has_no_zero_subject():
    # Spanish grammar: "eso", "esto" are neuter demonstratives that stand for a thing or a situation (handbook
    # grammar fact, from memory); the parser hung "eso" on the predicate as an adverbial modifier.
    p = parse("es", "¿ No es eso injusto ?", """
1 ¿ ¿ PUNCT _ 5 punct
2 No no ADV Polarity=Neg 5 advmod
3 es ser AUX Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 5 cop
4 eso ese PRON Number=Sing|PronType=Dem 5 advmod
5 injusto injusto ADJ Gender=Masc|Number=Sing 0 root
6 ? ? PUNCT _ 5 punct
""")
    assert [m.kind for m in extract_mentions(p, 0, "1", "source", ES)] == []
