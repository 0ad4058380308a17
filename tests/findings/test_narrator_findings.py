"""Findings about the narrator on hand-built parses, the whole chain of stages: a first-person agreement word
against what the English says of the narrator elsewhere in the document, and a default choice where it says
nothing."""

from __future__ import annotations

from gendertrace.model import Document, ParsedDocument, Segment
from gendertrace.parse.conllu_backend import ConlluParser
from gendertrace.pipeline import Scorer
from handparse import EN_I_MOTHER, EN_I_TIRED, ES_SOY_MADRE, es_i_was_tired, parse

EN_I_ARRIVED = ("I arrived .", """
1 I I PRON Case=Nom|Number=Sing|Person=1|PronType=Prs 2 nsubj
2 arrived arrive VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
3 . . PUNCT _ 2 punct
""")
ES_LLEGUE = ("Llegué .", """
1 Llegué llegar VERB Mood=Ind|Number=Sing|Person=1|Tense=Past|VerbForm=Fin 0 root
2 . . PUNCT _ 1 punct
""")


def _analyse(pairs, alignments):
    scorer = Scorer("en", "es", src_parser=ConlluParser("en", []), tgt_parser=ConlluParser("es", []))
    source = tuple(parse("en", *s) for s, _ in pairs)
    target = tuple(parse("es", *t) for _, t in pairs)
    doc = Document("narra", tuple(Segment(str(k + 1), s.text, t.text)
                                  for k, (s, t) in enumerate(zip(source, target, strict=True))))
    return scorer.analyse(ParsedDocument(doc, source, target), [frozenset(a) for a in alignments])


def _found(a) -> list[tuple[str, str, str, str | None, str | None]]:
    return [(f.kind, f.seg_id, f.text, f.expected, f.found) for f in a.findings]


def test_a_masculine_predicate_contradicts_what_the_narrator_said_of_themself():
    # Spanish grammar (from memory): "cansado" is the masculine of the adjective agreeing with "yo"; the
    # English "mother" is feminine (a gendered person noun in any English dictionary).
    a = _analyse([(EN_I_MOTHER, ES_SOY_MADRE), (EN_I_TIRED, es_i_was_tired("cansado", "Masc"))],
                 [{(1, 0), (3, 1)}, {(1, 0), (2, 1)}])
    assert _found(a) == [("contradiction", "2", "cansado", "fem", "masc")]
    assert [e.text for e in a.findings[0].evidence] == ["mother"]


def test_an_agreeing_predicate_is_consistent():
    a = _analyse([(EN_I_MOTHER, ES_SOY_MADRE), (EN_I_TIRED, es_i_was_tired("cansada", "Fem"))],
                 [{(1, 0), (3, 1)}, {(1, 0), (2, 1)}])
    assert _found(a) == []


def test_where_the_english_says_nothing_of_the_narrator_a_gendered_form_is_an_assumption():
    a = _analyse([(EN_I_ARRIVED, ES_LLEGUE), (EN_I_TIRED, es_i_was_tired("cansado", "Masc"))],
                 [{(1, 0)}, {(1, 0), (2, 1)}])
    assert _found(a) == [("assumption", "2", "cansado", None, "masc")]
