"""The German, Italian and Portuguese rules files and their lexicons: they load, they are consistent, and they
say what the grammars say.

Grammar facts are cited in a comment at each test. The sentences in the behaviour tests are invented for
these tests (gold-style UD rows written by hand).
"""

from __future__ import annotations

from pathlib import Path

import pytest
import yaml

from gendertrace.mentions.extract import extract_mentions
from gendertrace.rules import load_lexicon, load_rules, rules_dir
from scoring_helpers import conllu_parsed, conllu_rows

LANGS = ("de", "it", "pt")


def raw(lang: str) -> dict:
    return yaml.safe_load((rules_dir() / f"{lang}.yaml").read_text(encoding="utf-8"))


def first(rules, form: str):
    """The reading the mention extractor takes for a non-possessive use: the first non-possessive entry."""
    return next(f for f in rules.pronoun(form) if f.type != "possessive")


def first_possessive(rules, form: str):
    return next(f for f in rules.pronoun(form) if f.type == "possessive")


# ----------------------------------------------------------------------------------------------------------
# Loading and consistency


@pytest.mark.parametrize("lang", LANGS)
def test_rules_file_loads_and_names_its_language(lang):
    rules = load_rules(lang)
    assert rules.lang == lang
    assert rules.name == {"de": "German", "it": "Italian", "pt": "Portuguese"}[lang]
    assert rules.pronouns and rules.articles and rules.honorifics and rules.noun_genders


@pytest.mark.parametrize("lang", LANGS)
def test_lexicon_loads_in_both_directions(lang):
    forward = load_lexicon(lang, "en")
    backward = load_lexicon("en", lang)
    assert len(forward) > 100
    # every English form reached forward leads back to the source form
    for src, targets in forward.items():
        for t in targets:
            assert src in backward[t]


@pytest.mark.parametrize("lang", LANGS)
def test_every_value_in_the_file_is_text_where_text_is_expected(lang):
    # YAML 1.1 reads bare no/yes/on/off as booleans: a Portuguese "no" left unquoted would become False
    data = raw(lang)
    for k, item in enumerate(data["pronouns"]):
        assert isinstance(item["form"], str), f"pronouns[{k}]"
    for form in data["articles"]:
        assert isinstance(form, str), form
    for pair in data["person_nouns"]["pairs"]:
        assert all(isinstance(p, str) for p in pair), pair


@pytest.mark.parametrize("lang", LANGS)
def test_no_noun_form_is_listed_with_two_genders(lang):
    # the loader keeps the first reading of a form and silently drops later ones: a form that is masculine in
    # one pair and feminine in another, or paired and also common, would lose a reading unnoticed
    nouns = raw(lang)["person_nouns"]
    masc = {m.lower() for m, _ in nouns["pairs"]}
    fem = {f.lower() for _, f in nouns["pairs"]}
    common = {c.lower() for c in nouns["common"]}
    assert not masc & fem
    assert not (masc | fem) & common


@pytest.mark.parametrize("lang", LANGS)
def test_article_counterparts_have_the_other_gender(lang):
    rules = load_rules(lang)
    for form, (gender, counterpart) in rules.articles.items():
        if gender is None or counterpart is None or counterpart not in rules.articles:
            continue
        other = rules.article_gender(counterpart)
        assert other in (None, {"masc": "fem", "fem": "masc"}[gender]), (form, counterpart)


@pytest.mark.parametrize("lang", LANGS)
def test_lexicon_forms_are_person_nouns_on_both_sides(lang):
    # the linker matches lexicon forms against noun mentions: a form the rules do not know can never link
    rules, en = load_rules(lang), load_rules("en")
    lexicon = load_lexicon(lang, "en")
    assert set(lexicon) <= set(rules.noun_genders)
    assert all(en.is_person_noun(t) for targets in lexicon.values() for t in targets if " " not in t)
    # and the paired forms of one noun travel together: a feminine with an entry has its masculine too
    for form, (gender, counterpart) in rules.noun_genders.items():
        if gender == "fem" and form in lexicon:
            assert counterpart in lexicon, form


# ----------------------------------------------------------------------------------------------------------
# German (Duden-style reference grammar facts, from memory)


def test_german_aerztin_is_the_feminine_of_arzt_and_case_forms_are_masculine():
    de = load_rules("de")
    assert de.noun_counterpart("Ärztin") == ("fem", "arzt")
    assert de.noun_counterpart("Arzt") == ("masc", "ärztin")
    # genitive of a strong noun and the -en form of a weak noun are singular masculine forms (from memory)
    assert de.noun_counterpart("Arztes") == ("masc", "ärztin")
    assert de.noun_counterpart("Präsidenten") == ("masc", "präsidentin")
    assert de.noun_counterpart("Lehrerin") == ("fem", "lehrer")
    assert de.noun_counterpart("Ministerin") == ("fem", "minister")


def test_german_nominalised_adjectives_are_common_and_fixed_gender_nouns_are_absent():
    de = load_rules("de")
    # "der/die Abgeordnete": one stem, the determiner shows the gender (from memory)
    assert de.noun_counterpart("Abgeordnete") == ("common", "abgeordnete")
    # "die Person", "der Mensch", "das Opfer" keep their grammatical gender whoever is meant (from memory)
    for form in ("Person", "Mensch", "Opfer", "Gast"):
        assert not de.is_person_noun(form)


def test_german_possessives_mark_the_possessor():
    de = load_rules("de")
    # "sein" for a masculine (or neuter) possessor, "ihr" for a feminine (or plural) one (from memory)
    assert de.possessive_agrees_with == "possessor"
    assert first_possessive(de, "seine").gender == "masc"
    assert first_possessive(de, "ihrem").gender == "fem"
    assert any(f.type == "possessive" and f.number == "plur" for f in de.pronoun("ihre"))


def test_german_pronouns_and_what_is_left_out():
    de = load_rules("de")
    assert not de.pro_drop
    er = first(de, "er")
    assert (er.gender, er.number, er.case) == ("masc", "sing", "nom")
    sie = first(de, "sie")
    assert (sie.gender, sie.number) == ("fem", "sing")
    # "sie" is also the 3rd-person plural (from memory)
    assert any(f.number == "plur" for f in de.pronoun("sie"))
    # object forms may stand for things and only join a chain a person opened
    assert not first(de, "ihn").animate
    # "es" is neuter and mostly expletive: not a person pronoun here
    assert de.pronoun("es") == ()


def test_german_determiners_and_agreement():
    de = load_rules("de")
    # "der" is masculine nominative but also feminine dative and genitive (from memory)
    assert de.article_gender("der") is None
    # "den" is masculine accusative singular, always "die" in the feminine
    assert (de.article_gender("den"), de.article_counterpart("den")) == ("masc", "die")
    # "die" is feminine in the singular; its masculine depends on the case (der / den)
    assert (de.article_gender("die"), de.article_counterpart("die")) == ("fem", None)
    # predicative adjectives and participles do not inflect (from memory)
    assert de.copulas == frozenset() and de.agreeing_aux == frozenset()
    assert {"haben", "sein"} <= de.invariable_aux


def test_german_honorifics():
    de = load_rules("de")
    assert de.honorific("Frau") == "fem"
    assert de.honorific("Herrn") == "masc"
    assert de.honorific("Dr.") is None


# ----------------------------------------------------------------------------------------------------------
# Italian (standard reference grammar facts, from memory)


def test_italian_lei_is_feminine_singular_nominative_and_lui_masculine():
    it = load_rules("it")
    assert it.pro_drop
    lei = first(it, "lei")
    assert (lei.gender, lei.number, lei.case, lei.type) == ("fem", "sing", "nom", "personal")
    assert first(it, "lui").gender == "masc"
    assert first(it, "egli").gender == "masc" and first(it, "ella").gender == "fem"
    # clitics also stand for things
    assert not first(it, "la").animate


def test_italian_possessives_agree_with_the_possessed_noun():
    it = load_rules("it")
    # "sua moglie", "suo marito" whoever the possessor is (from memory)
    assert it.possessive_agrees_with == "possessed"
    assert all(f.gender is None for form in ("suo", "sua", "suoi", "sue") for f in it.pronoun(form))


def test_italian_auxiliaries():
    it = load_rules("it")
    # "ha operato": the participle after avere does not agree with the subject (from memory)
    assert "avere" in it.invariable_aux
    # "è arrivata", "è stata eletta", "venne eletta" agree (from memory)
    assert {"essere", "venire"} <= it.agreeing_aux
    assert {"essere", "venire"} <= it.passive_aux
    assert {"essere", "sembrare", "diventare", "restare"} <= it.copulas


def test_italian_and_portuguese_agreement_endings():
    it, pt = load_rules("it"), load_rules("pt")
    # -o/-a inflection; "felice", "ottimista" one singular form for both genders (from memory)
    assert it.ending_gender("arrivata") == (True, "fem") and it.ending_gender("operato") == (True, "masc")
    assert it.ending_gender("felice") == (True, None) and it.ending_gender("ottimista") == (True, None)
    # "eleita", "cristã" feminine; "feliz" invariable (from memory)
    assert pt.ending_gender("eleita") == (True, "fem") and pt.ending_gender("cristão") == (True, "masc")
    assert pt.ending_gender("cristã") == (True, "fem") and pt.ending_gender("feliz") == (True, None)
    # German adjective endings follow case as much as gender: none listed
    assert load_rules("de").endings == ()


def test_italian_nouns_and_articles():
    it = load_rules("it")
    assert it.noun_counterpart("chirurga") == ("fem", "chirurgo")
    assert it.noun_counterpart("ministra") == ("fem", "ministro")
    # "il/la giudice", "il/la presidente" (from memory)
    assert it.noun_counterpart("giudice")[0] == "common"
    assert it.noun_counterpart("presidente")[0] == "common"
    # "la politica" is also politics: not listed
    assert not it.is_person_noun("politica")
    assert it.article_gender("lo") == "masc" and it.article_gender("la") == "fem"
    # "un'amica" (feminine only), "l'" hides the gender (from memory)
    assert it.article_gender("un'") == "fem"
    assert it.article_gender("l'") is None
    assert it.honorific("Sig.ra") == "fem" and it.honorific("signor") == "masc"


# ----------------------------------------------------------------------------------------------------------
# Portuguese (standard reference grammar facts, European and Brazilian, from memory)


def test_portuguese_dela_marks_a_feminine_possessor_and_seu_marks_none():
    pt = load_rules("pt")
    assert pt.pro_drop
    assert pt.possessive_agrees_with == "possessed"
    dela = first_possessive(pt, "dela")
    assert (dela.gender, dela.number) == ("fem", "sing")
    assert first_possessive(pt, "dele").gender == "masc"
    assert all(f.gender is None for form in ("seu", "sua") for f in pt.pronoun(form))


def test_portuguese_auxiliaries_and_copulas():
    pt = load_rules("pt")
    # "tem operado": invariable after ter/haver; "foi eleita": agrees after ser (from memory)
    assert {"ter", "haver"} <= pt.invariable_aux
    assert {"ser", "estar"} <= pt.passive_aux
    assert {"ser", "estar", "ficar", "parecer", "tornar"} <= pt.copulas


def test_portuguese_nouns_articles_and_honorifics():
    pt = load_rules("pt")
    assert pt.noun_counterpart("cirurgiã") == ("fem", "cirurgião")
    assert pt.noun_counterpart("juíza") == ("fem", "juiz")
    assert pt.noun_counterpart("presidente")[0] == "common"
    # "a vítima", "a testemunha", "a criança" are feminine whoever is meant (from memory)
    for form in ("vítima", "testemunha", "criança", "pessoa"):
        assert not pt.is_person_noun(form)
    # "no" (em + o) is read as the word, not as YAML's false
    assert pt.article_gender("no") == "masc" and pt.article_counterpart("na") == "no"
    assert first(pt, "no").gender == "masc"
    assert pt.honorific("Sra.") == "fem" and pt.honorific("Sr.ª") == "fem" and pt.honorific("Sr.") == "masc"


# ----------------------------------------------------------------------------------------------------------
# Lexicons (general bilingual knowledge, from memory)


def test_lexicons_map_known_pairs():
    de = load_lexicon("de", "en")
    assert {"doctor", "physician"} <= de["ärztin"]
    assert "judge" in de["richterin"] and "king" in de["königin"]
    it = load_lexicon("it", "en")
    assert "judge" in it["giudice"] and "surgeon" in it["chirurga"] and "wife" in it["moglie"]
    pt = load_lexicon("pt", "en")
    assert "surgeon" in pt["cirurgiã"] and "judge" in pt["juíza"] and "mother" in pt["mãe"]
    # read backwards for English sources
    assert {"chirurg", "chirurgin"} <= load_lexicon("en", "de")["surgeon"]


# ----------------------------------------------------------------------------------------------------------
# Behaviour: the rules through the mention extractor, on invented gold-style parses


def parse(tmp_path: Path, lang: str, text: str, rows: str):
    """One sentence from rows "ID FORM LEMMA UPOS FEATS HEAD DEPREL"."""
    return conllu_parsed(tmp_path, lang, text, conllu_rows(*(row.split() for row in rows.strip().splitlines())))


def mentions(parsed, lang):
    return extract_mentions(parsed, 0, "t1", "source", load_rules(lang))


def test_german_der_before_a_feminine_dative_counts_as_feminine(tmp_path):
    p = parse(tmp_path, "de", "Er sprach mit der Ministerin.", """
        1 Er er PRON Case=Nom|Gender=Masc|Number=Sing|Person=3|PronType=Prs 2 nsubj
        2 sprach sprechen VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
        3 mit mit ADP _ 5 case
        4 der der DET Case=Dat|Definite=Def|Gender=Fem|Number=Sing|PronType=Art 5 det
        5 Ministerin Ministerin NOUN Case=Dat|Gender=Fem|Number=Sing 2 obl
        6 . . PUNCT _ 2 punct
    """)
    by_text = {m.text: m for m in mentions(p, "de")}
    assert {mk.gender for mk in by_text["Ministerin"].marks} == {"fem"}
    assert any(mk.text == "der" for mk in by_text["Ministerin"].marks)
    assert by_text["Er"].gender == "masc" and by_text["Er"].animate


def test_italian_participle_agrees_after_essere_but_not_after_avere(tmp_path):
    arrived = parse(tmp_path, "it", "È arrivata ieri.", """
        1 È essere AUX Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 2 aux
        2 arrivata arrivare VERB Gender=Fem|Number=Sing|Tense=Past|VerbForm=Part 0 root
        3 ieri ieri ADV _ 2 advmod
        4 . . PUNCT _ 2 punct
    """)
    (zero,) = [m for m in mentions(arrived, "it") if m.kind == "zero"]
    assert {mk.gender for mk in zero.marks} == {"fem"}
    operated = parse(tmp_path, "it", "Ha operato ieri.", """
        1 Ha avere AUX Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin 2 aux
        2 operato operare VERB Gender=Masc|Number=Sing|Tense=Past|VerbForm=Part 0 root
        3 ieri ieri ADV _ 2 advmod
        4 . . PUNCT _ 2 punct
    """)
    (zero,) = [m for m in mentions(operated, "it") if m.kind == "zero"]
    assert zero.marks == ()


def test_portuguese_passive_participle_agrees_after_ser_but_not_after_ter(tmp_path):
    elected = parse(tmp_path, "pt", "Foi eleita ontem.", """
        1 Foi ser AUX Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 2 aux:pass
        2 eleita eleger VERB Gender=Fem|Number=Sing|VerbForm=Part|Voice=Pass 0 root
        3 ontem ontem ADV _ 2 advmod
        4 . . PUNCT _ 2 punct
    """)
    (zero,) = [m for m in mentions(elected, "pt") if m.kind == "zero"]
    assert {mk.gender for mk in zero.marks} == {"fem"}
    operated = parse(tmp_path, "pt", "Tinha operado ontem.", """
        1 Tinha ter AUX Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin 2 aux
        2 operado operar VERB Gender=Masc|Number=Sing|VerbForm=Part 0 root
        3 ontem ontem ADV _ 2 advmod
        4 . . PUNCT _ 2 punct
    """)
    (zero,) = [m for m in mentions(operated, "pt") if m.kind == "zero"]
    assert zero.marks == ()
