"""Findings on hand-built parses: the whole chain of stages run by the scorer, with no pipeline model."""

from __future__ import annotations

from gendertrace.model import Document, ParsedDocument, Segment
from gendertrace.parse.conllu_backend import ConlluParser
from gendertrace.pipeline import STAGES, Scorer
from handparse import parse

# The worked example of docs/design.md, parsed by hand in UD (UD v2 guidelines: cop, flat, appos, conj).
SOURCE = [
    ("La piloto Amaia Zubelzu aterrizó en Orbeta .", """
1 La el DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 2 det
2 piloto piloto NOUN Number=Sing 5 nsubj
3 Amaia Amaia PROPN _ 2 appos NE=PER
4 Zubelzu Zubelzu PROPN _ 3 flat NE=PER
5 aterrizó aterrizar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
6 en en ADP _ 7 case
7 Orbeta Orbeta PROPN _ 5 obl
8 . . PUNCT _ 5 punct
"""),
    ("Estaba cansada , pero sonrió .", """
1 Estaba estar AUX Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin 2 cop
2 cansada cansado ADJ Gender=Fem|Number=Sing 0 root
3 , , PUNCT _ 5 punct
4 pero pero CCONJ _ 5 cc
5 sonrió sonreír VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 2 conj
6 . . PUNCT _ 2 punct
"""),
]
TARGET = [
    ("Pilot Amaia Zubelzu landed in Orbeta .", """
1 Pilot pilot NOUN Number=Sing 3 compound
2 Amaia Amaia PROPN Number=Sing 3 compound NE=PER
3 Zubelzu Zubelzu PROPN Number=Sing 4 nsubj NE=PER
4 landed land VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
5 in in ADP _ 6 case
6 Orbeta Orbeta PROPN Number=Sing 4 obl
7 . . PUNCT _ 4 punct
"""),
    ("{pronoun} was tired , but smiled .", """
1 {pronoun} {lemma} PRON Case=Nom|Gender={gender}|Number=Sing|Person=3|PronType=Prs 3 nsubj
2 was be AUX Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 3 cop
3 tired tired ADJ Degree=Pos 0 root
4 , , PUNCT _ 6 punct
5 but but CCONJ _ 6 cc
6 smiled smile VERB Mood=Ind|Tense=Past|VerbForm=Fin 3 conj
7 . . PUNCT _ 3 punct
"""),
]
ALIGNMENTS = [
    frozenset({(1, 0), (2, 1), (3, 2), (4, 3), (5, 4), (6, 5), (7, 6)}),
    frozenset({(0, 1), (1, 2), (2, 3), (3, 4), (4, 5), (5, 6)}),
]


def _analyse(pronoun: str, lemma: str, gender: str):
    scorer = Scorer("es", "en", src_parser=ConlluParser("es", []), tgt_parser=ConlluParser("en", []))
    source = tuple(parse("es", text, rows) for text, rows in SOURCE)
    target_rows = [(t.format(pronoun=pronoun), r.format(pronoun=pronoun, lemma=lemma, gender=gender))
                   for t, r in TARGET]
    target = tuple(parse("en", text, rows) for text, rows in target_rows)
    doc = Document("zeta", tuple(Segment(str(k + 1), s.text, t.text)
                                 for k, (s, t) in enumerate(zip(source, target, strict=True))))
    return scorer.analyse(ParsedDocument(doc, source, target), ALIGNMENTS)


def test_the_scorer_runs_the_stages_in_order():
    assert [s.__name__ for s in STAGES] == [
        "find_mentions", "resolve_coreference", "link_sides", "gather_evidence", "judge"]


def test_worked_example_he_contradicts_the_source():
    a = _analyse("He", "he", "Masc")
    assert len(a.findings) == 1
    f = a.findings[0]
    assert (f.kind, f.seg_id, f.start, f.end, f.text, f.expected, f.found) == (
        "contradiction", "2", 0, 2, "He", "fem", "masc")
    # Spanish grammar (from memory): the article agrees with "piloto" and the predicate with the subject.
    assert [(e.side, e.seg_id, e.text, e.gender) for e in f.evidence] == [
        ("source", "1", "La", "fem"), ("source", "2", "cansada", "fem")]
    # The finding's word is reachable through its link: projected from the source clause's zero subject.
    link = a.result().links[f.mention]
    assert (f.mention, link.method, link.via) == ("t1.0", "projection", "s1.z1")
    assert [(m.kind, m.text) for m in a.source.chains[0].mentions] == [
        ("noun", "piloto"), ("name", "Amaia Zubelzu"), ("zero", "Estaba"), ("zero", "sonrió")]
    stats = a.result().stats
    assert (stats.checked, stats.consistent, dict(stats.findings)) == (
        1, 0, {"contradiction": 1, "inconsistency": 0, "assumption": 0})


def test_worked_example_with_she_is_consistent():
    a = _analyse("She", "she", "Fem")
    assert a.findings == []
    assert (a.stats.checked, a.stats.consistent) == (1, 1)
    (entity,) = a.entities
    assert (entity.gender, entity.checked, entity.consistent) == ("fem", 1, 1)


def test_a_zero_subject_translating_it_makes_no_person_of_a_thing():
    # "it" stands for things as well as persons; a Spanish zero subject agrees with whatever its subject is
    # (handbook grammar facts, from memory), so neither side names a person here.
    scorer = Scorer("en", "es", src_parser=ConlluParser("en", []), tgt_parser=ConlluParser("es", []))
    source = (parse("en", "It was broken .", """
1 It it PRON Case=Nom|Gender=Neut|Number=Sing|Person=3|PronType=Prs 3 nsubj:pass
2 was be AUX Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 3 aux:pass
3 broken break VERB Tense=Past|VerbForm=Part|Voice=Pass 0 root
4 . . PUNCT _ 3 punct
"""),)
    target = (parse("es", "Estaba rota .", """
1 Estaba estar AUX Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin 2 cop
2 rota roto ADJ Gender=Fem|Number=Sing 0 root
3 . . PUNCT _ 2 punct
"""),)
    doc = Document("caja", (Segment("1", source[0].text, target[0].text),))
    a = scorer.analyse(ParsedDocument(doc, source, target), [frozenset({(1, 0), (2, 0), (2, 1), (3, 2)})])
    (zero,) = [m for m in a.target.resolved() if m.kind == "zero"]
    assert a.links[zero.id].method == "projection"  # the zero subject is tied to "It" ...
    assert a.entities == [] and a.findings == []  # ... which names no person
