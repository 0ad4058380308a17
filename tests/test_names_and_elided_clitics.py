"""Names that only one side's recogniser could have found, and the gender an elided object clitic shows through
its participle.

Sentences, people and places are invented. Facts behind the rules: UD treebanks in CoNLL-U carry no entity
labels unless a MISC attribute adds them (CoNLL-U format documentation, from memory), so a document read from
them has names only where the other side's recogniser finds them; a past participle after the direct-object
clitic "l'" agrees with it in French and Italian ("elle l'a vue", "l'ha descritta"; handbook grammar, from
memory).
"""

from __future__ import annotations

from dataclasses import replace

import pytest

from gendertrace.mentions.extract import extract_mentions
from gendertrace.mentions.names import shared_unlabelled_names as _shared_unlabelled_names
from gendertrace.parse.base import get_parser
from gendertrace.rules import load_rules
from scoring_helpers import conllu_parsed, conllu_rows


@pytest.fixture()
def pair(tmp_path):
    # Source without entity labels (as the treebanks come); target with a recogniser that found "Odile" only.
    source = conllu_parsed(tmp_path, "es", "Dario Vell llamó a Odile desde Tarvel .", conllu_rows(
        ("1", "Dario", "Dario", "PROPN", "_", "3", "nsubj"),
        ("2", "Vell", "Vell", "PROPN", "_", "1", "flat"),
        ("3", "llamó", "llamar", "VERB", "Number=Sing|Person=3", "0", "root"),
        ("4", "a", "a", "ADP", "_", "5", "case"),
        ("5", "Odile", "Odile", "PROPN", "_", "3", "obj"),
        ("6", "desde", "desde", "ADP", "_", "7", "case"),
        ("7", "Tarvel", "Tarvel", "PROPN", "_", "3", "obl"),
        ("8", ".", ".", "PUNCT", "_", "3", "punct"),
    ))
    target = conllu_parsed(tmp_path, "en", "Dario Vell III called Odile from Tarvel Bay .", conllu_rows(
        ("1", "Dario", "Dario", "PROPN", "_", "4", "compound"),
        ("2", "Vell", "Vell", "PROPN", "_", "4", "compound"),
        ("3", "III", "III", "PROPN", "_", "4", "nsubj"),
        ("4", "called", "call", "VERB", "_", "0", "root"),
        ("5", "Odile", "Odile", "PROPN", "_", "4", "obj", "NE=PER"),
        ("6", "from", "from", "ADP", "_", "8", "case"),
        ("7", "Tarvel", "Tarvel", "PROPN", "_", "8", "compound"),
        ("8", "Bay", "Bay", "PROPN", "_", "4", "obl"),
        ("9", ".", ".", "PUNCT", "_", "4", "punct"),
    ))
    return source, target


def test_a_proper_noun_run_on_both_sides_that_no_recogniser_labelled_is_a_name(pair):
    source, target = pair
    # "Dario Vell" stands in both; "III" is a numeral the two taggers treat differently. "Tarvel" is one word on
    # the source side: a single proper noun is too weak a sign.
    # Both sides are read from CoNLL-U here (no recogniser); the target's one entity label marks it as labelled.
    assert _shared_unlabelled_names([source], [target], False, False) == {"dario vell", "dario", "vell"}


def test_a_run_the_recogniser_labelled_otherwise_is_no_name(pair):
    source, target = pair
    place = replace(target, tokens=tuple(replace(t, ent="LOC") if t.text in ("Dario", "Vell", "III") else t
                                         for t in target.tokens))
    assert _shared_unlabelled_names([source], [place], False, False) == set()


def test_sides_that_both_recognise_names_keep_their_own_labels(pair):
    source, target = pair
    labelled = replace(source, tokens=tuple(replace(t, ent="PER") if t.text == "Odile" else t
                                            for t in source.tokens))
    assert _shared_unlabelled_names([labelled], [target], False, False) == set()
    # A side whose parser runs a recogniser counts as labelled even where this document has no entity at all.
    assert _shared_unlabelled_names([source], [target], True, True) == set()


@pytest.mark.slow
def test_a_participle_shows_the_gender_of_an_elided_object_clitic():
    parsed = get_parser("fr").parse("Elle l'a vue hier au marché.")
    clitic = next(m for m in extract_mentions(parsed, 0, "s1", "target", load_rules("fr")) if m.text == "l'")
    assert [(mk.text, mk.gender, mk.rule) for mk in clitic.marks] == [
        ("vue", "fem", "participle agreeing with an object clitic")
    ]


@pytest.mark.slow
@pytest.mark.parametrize("text, name", [
    # The French tagger calls these surnames verbs; its recogniser calls them persons.
    ("Le syndicat affirme que Vogt ne parlait pas aux journalistes.", "Vogt"),
    ("Le maire pense que Kern viendra demain.", "Kern"),
])
def test_a_capitalised_person_inside_a_sentence_is_a_name_whatever_its_tag(text, name):
    parsed = get_parser("fr").parse(text)
    mentions = extract_mentions(parsed, 0, "s1", "source", load_rules("fr"))
    assert [(m.kind, m.text) for m in mentions if m.text == name] == [("name", name)]


@pytest.mark.slow
def test_a_sentence_initial_pronoun_is_never_a_name():
    parsed = get_parser("fr").parse("Elle affirme que le maire viendra demain.")
    assert [m.kind for m in extract_mentions(parsed, 0, "s1", "source", load_rules("fr"))
            if m.text == "Elle"] == ["pronoun"]


@pytest.mark.slow
def test_a_clitic_only_chain_is_a_person_where_the_translation_says_so():
    # French "la" may stand for a thing, so a chain of nothing else makes no entity by itself; linked to a
    # translation's "him", it is a person, and its feminine form counts (weakly) against "him".
    from gendertrace.coref.sieves import resolve_chains
    from gendertrace.evidence.resolve import build_entities
    from gendertrace.model import Link

    src = get_parser("fr").parse("Je la connais depuis longtemps.")
    tgt = get_parser("en").parse("I have known him for a long time.")
    src_ms = extract_mentions(src, 0, "s1", "source", load_rules("fr"))
    tgt_ms = extract_mentions(tgt, 0, "s1", "target", load_rules("en"))
    src_res = resolve_chains(src_ms, [src], "source", use_gender=True)
    tgt_res = resolve_chains(tgt_ms, [tgt], "target", use_gender=False)
    clitic = next(m for m in src_ms if m.text == "la")
    him = next(m for m in tgt_ms if m.text == "him")
    links = {him.id: Link(him.id, src_res.chain_of[clitic.id], "alignment", 0.85, clitic.id)}
    entities, _ = build_entities(src_res, tgt_res, tgt_ms, links)
    # "Je" is the narrator, a person of its own (docs/design.md, coreference).
    (entity,) = [e for e in entities if clitic.id in {m.id for m in e.source_mentions}]
    assert [m.text for m in entity.target_mentions] == ["him"]
    assert ("la", "fem") in [(mk.text, mk.gender) for mk in entity.evidence]
    # Without a person in the translation the clitic stays a thing.
    alone = build_entities(src_res, tgt_res, tgt_ms, {})[0]
    assert [e for e in alone if clitic.id in {m.id for m in e.source_mentions}] == []


@pytest.mark.slow
def test_a_fused_article_and_an_agreeing_determiner_show_the_nouns_gender():
    # "del" is "de" + "el" in one word (UD AdpType=Preppron); "propio" agrees with its noun like any determiner.
    from gendertrace import Scorer
    from scoring_helpers import score_pairs

    result = score_pairs(Scorer("es", "en"), [
        ("Según las notas del propio entrenador, ha ganado seis torneos.",
         "According to the coach's own notes, she has won six tournaments."),
    ])
    coach = next(e for e in result.entities if e.label == "entrenador")
    assert {(mk.text, mk.gender) for mk in coach.evidence} >= {("del", "masc"), ("propio", "masc")}
    assert [(f.kind, f.text, f.expected) for f in result.findings] == [("contradiction", "she", "masc")]


def test_a_bare_preposition_shaped_like_an_article_is_no_evidence(tmp_path):
    # Portuguese "ao" is "a" (preposition) + "o" (article); treebanks split it, and the "a" is no feminine article.
    parsed = conllu_parsed(tmp_path, "pt", "Falou ao cliente .", conllu_rows(
        ("1", "Falou", "falar", "VERB", "Mood=Ind|Number=Sing|Person=3|VerbForm=Fin", "0", "root"),
        ("2-3", "ao", "_", "_", "_", "_", "_"),
        ("2", "a", "a", "ADP", "_", "4", "case"),
        ("3", "o", "o", "DET", "Definite=Def|Gender=Masc|Number=Sing|PronType=Art", "4", "det"),
        ("4", "cliente", "cliente", "NOUN", "Gender=Masc|Number=Sing", "1", "obl"),
        ("5", ".", ".", "PUNCT", "_", "1", "punct"),
    ))
    client = next(m for m in extract_mentions(parsed, 0, "s1", "source", load_rules("pt")) if m.text == "cliente")
    assert [(mk.text, mk.gender) for mk in client.marks if mk.rule == "determiner agreement"] == [("o", "masc")]


@pytest.mark.slow
def test_a_thing_capable_clitic_translated_by_a_person_pronoun_counts_in_full():
    # "lo" may be "it"; translated by "her" it is a person, whom the source calls masculine (handbook grammar:
    # Spanish accusative clitics agree in gender with their referent, from memory).
    from gendertrace import Scorer
    from scoring_helpers import score_pairs

    result = score_pairs(Scorer("es", "en"), [("Lo conozco desde hace años.", "I have known her for years.")])
    assert [(f.kind, f.text, f.expected) for f in result.findings] == [("contradiction", "her", "masc")]
    # Translated by "it", the same clitic is a thing and raises nothing.
    thing = score_pairs(Scorer("es", "en"), [("Lo conozco desde hace años.", "I have known it for years.")])
    assert list(thing.findings) == []


@pytest.mark.slow
def test_an_unlabelled_proper_noun_that_says_something_is_a_person():
    # The English recogniser leaves "Marlow" unlabelled here; as the subject of "said" it is a person's name,
    # and the quotation's "she" no longer falls to the only other name of the text.
    parsed = get_parser("en").parse('"Some people understand it," Marlow said in an interview.')
    names = [m.text for m in extract_mentions(parsed, 0, "s1", "source", load_rules("en")) if m.kind == "name"]
    assert names == ["Marlow"]


@pytest.mark.slow
def test_an_unlabelled_proper_noun_that_does_something_else_stays_unnamed():
    parsed = get_parser("en").parse("Marlow opened a new office in the spring.")
    assert not parsed.tokens[0].ent, "precondition: the recogniser leaves the word unlabelled"
    names = [m.text for m in extract_mentions(parsed, 0, "s1", "source", load_rules("en")) if m.kind == "name"]
    assert names == []


def test_a_bare_preposition_before_a_person_noun_is_no_article(tmp_path):
    # Portuguese "promovido a presidente": "a" is the preposition (no article: a role after a verb of naming);
    # it says nothing of the person's gender, and "presidente" stays a common-gender noun without evidence.
    parsed = conllu_parsed(tmp_path, "pt", "Foi promovido a presidente .", conllu_rows(
        ("1", "Foi", "ser", "AUX", "Mood=Ind|Number=Sing|Person=3|VerbForm=Fin", "2", "aux:pass"),
        ("2", "promovido", "promover", "VERB", "Gender=Masc|Number=Sing|VerbForm=Part", "0", "root"),
        ("3", "a", "a", "ADP", "_", "4", "case"),
        ("4", "presidente", "presidente", "NOUN", "Number=Sing", "2", "obl"),
        ("5", ".", ".", "PUNCT", "_", "2", "punct"),
    ))
    (noun,) = [m for m in extract_mentions(parsed, 0, "s1", "source", load_rules("pt")) if m.text == "presidente"]
    assert not any(mk.text == "a" for mk in noun.marks)
