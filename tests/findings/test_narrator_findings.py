"""Findings about the narrator on hand-built parses, the whole chain of stages: a first-person agreement word
against what the English says of the narrator elsewhere in the document, and a default choice where it says
nothing."""

from __future__ import annotations

from gendertrace.declared import load_entity_sheet
from gendertrace.model import Document, ParsedDocument, Segment
from gendertrace.parse.conllu_backend import ConlluParser
from gendertrace.pipeline import Scorer, ScoreSettings
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


def _analyse(pairs, alignments, sheet=None):
    scorer = Scorer("en", "es", ScoreSettings(entity_sheet=sheet),
                    src_parser=ConlluParser("en", []), tgt_parser=ConlluParser("es", []))
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


EN_YOU_WOMAN = ("You are the first woman .", """
1 You you PRON Case=Nom|Person=2|PronType=Prs 5 nsubj
2 are be AUX Mood=Ind|Person=2|Tense=Pres|VerbForm=Fin 5 cop
3 the the DET Definite=Def|PronType=Art 5 det
4 first first ADJ Degree=Pos|NumType=Ord 5 amod
5 woman woman NOUN Number=Sing 0 root
6 . . PUNCT _ 5 punct
""")
EN_YOU_READY = ("Are you ready ?", """
1 Are be AUX Mood=Ind|Person=2|Tense=Pres|VerbForm=Fin 3 cop
2 you you PRON Case=Nom|Person=2|PronType=Prs 3 nsubj
3 ready ready ADJ Degree=Pos 0 root
4 ? ? PUNCT _ 3 punct
""")
ES_ERES_MUJER = ("Eres la primera mujer .", """
1 Eres ser AUX Mood=Ind|Number=Sing|Person=2|Tense=Pres|VerbForm=Fin 4 cop
2 la el DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 4 det
3 primera primero ADJ Gender=Fem|Number=Sing|NumType=Ord 4 amod
4 mujer mujer NOUN Gender=Fem|Number=Sing 0 root
5 . . PUNCT _ 4 punct
""")


def es_are_you_ready(adjective: str, gender: str) -> tuple[str, str]:
    return (f"¿ Estás {adjective} ?", f"""
1 ¿ ¿ PUNCT _ 3 punct
2 Estás estar AUX Mood=Ind|Number=Sing|Person=2|Tense=Pres|VerbForm=Fin 3 cop
3 {adjective} listo ADJ Gender={gender}|Number=Sing 0 root
4 ? ? PUNCT _ 3 punct
""")


def test_the_person_addressed_is_judged_by_what_the_document_says_of_them():
    # UD v2 guidelines: "woman" heads the copular clause, "You" is its nsubj; Spanish grammar (from memory):
    # the adjective after "estás" agrees with "tú".
    pairs = [(EN_YOU_WOMAN, ES_ERES_MUJER), (EN_YOU_READY, es_are_you_ready("listo", "Masc"))]
    a = _analyse(pairs, [{(1, 0), (4, 3)}, {(0, 1), (2, 2)}])
    assert _found(a) == [("contradiction", "2", "listo", "fem", "masc")]
    ok = _analyse([pairs[0], (EN_YOU_READY, es_are_you_ready("lista", "Fem"))], [{(1, 0), (4, 3)}, {(0, 1), (2, 2)}])
    assert _found(ok) == []


def test_a_declared_narrator_outranks_the_silence_of_the_english(tmp_path):
    # docs/entities.md: declared pronouns outrank all other evidence; the sheet's `narrator` is the first person.
    sheet_path = tmp_path / "people.yaml"
    sheet_path.write_text("narrator:\n  pronouns:\n    en: she/her\n    es: ella\npersons: []\n", encoding="utf-8")
    a = _analyse([(EN_I_ARRIVED, ES_LLEGUE), (EN_I_TIRED, es_i_was_tired("cansado", "Masc"))],
                 [{(1, 0)}, {(1, 0), (2, 1)}], load_entity_sheet(sheet_path))
    assert _found(a) == [("contradiction", "2", "cansado", "fem", "masc")]
    assert [e.kind for e in a.findings[0].evidence] == ["declared"]
