"""Hand-built parses for the stage tests: CoNLL-U word lines read by the project's own CoNLL-U reader, so that
no pipeline model decides what a test sees. Sentences, people and places are invented."""

from __future__ import annotations

from gendertrace.model import ParsedText
from gendertrace.parse.conllu_backend import sentence_from_rows


def parse(lang: str, text: str, rows: str) -> ParsedText:
    """One sentence from lines "ID FORM LEMMA UPOS FEATS HEAD DEPREL [MISC]" (whitespace-separated, `_` for
    none); XPOS and DEPS are left empty. Character offsets come from `text`."""
    table = []
    for k, line in enumerate(x for x in rows.strip().splitlines() if x.strip()):
        tid, form, lemma, upos, feats, head, deprel, *misc = line.split()
        table.append((k + 1, [tid, form, lemma, upos, "_", feats, head, deprel, "_", misc[0] if misc else "_"]))
    return sentence_from_rows(table, {"text": text}, lang, "<hand-built>")


# Spanish and English sentences used by several stage tests.
ES_NAME = ("Ana Ruiz llegó .", """
1 Ana Ana PROPN _ 3 nsubj NE=PER
2 Ruiz Ruiz PROPN _ 1 flat NE=PER
3 llegó llegar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
4 . . PUNCT _ 3 punct
""")
ES_TIRED = ("Estaba cansada .", """
1 Estaba estar AUX Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin 2 cop
2 cansada cansado ADJ Gender=Fem|Number=Sing 0 root
3 . . PUNCT _ 2 punct
""")
EN_NAME = ("Ana Ruiz arrived .", """
1 Ana Ana PROPN Number=Sing 2 compound NE=PER
2 Ruiz Ruiz PROPN Number=Sing 3 nsubj NE=PER
3 arrived arrive VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
4 . . PUNCT _ 3 punct
""")
EN_SHE_TIRED = ("She was tired .", """
1 She she PRON Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs 3 nsubj
2 was be AUX Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 3 cop
3 tired tired ADJ Degree=Pos 0 root
4 . . PUNCT _ 3 punct
""")

# A first-person narrator (UD v2 guidelines: the copula "be"/"estar" is `cop`, the predicate heads the clause).
EN_I_MOTHER = ("I am a mother .", """
1 I I PRON Case=Nom|Number=Sing|Person=1|PronType=Prs 4 nsubj
2 am be AUX Mood=Ind|Number=Sing|Person=1|Tense=Pres|VerbForm=Fin 4 cop
3 a a DET Definite=Ind|PronType=Art 4 det
4 mother mother NOUN Number=Sing 0 root
5 . . PUNCT _ 4 punct
""")
EN_I_TIRED = ("I was tired .", """
1 I I PRON Case=Nom|Number=Sing|Person=1|PronType=Prs 3 nsubj
2 was be AUX Mood=Ind|Number=Sing|Person=1|Tense=Past|VerbForm=Fin 3 cop
3 tired tired ADJ Degree=Pos 0 root
4 . . PUNCT _ 3 punct
""")
ES_SOY_MADRE = ("Soy madre .", """
1 Soy ser AUX Mood=Ind|Number=Sing|Person=1|Tense=Pres|VerbForm=Fin 2 cop
2 madre madre NOUN Gender=Fem|Number=Sing 0 root
3 . . PUNCT _ 2 punct
""")


def es_i_was_tired(adjective: str, gender: str) -> tuple[str, str]:
    """ "Estaba cansada/cansado ." with a first-person imperfect copula (Spanish grammar, from memory: the
    imperfect "estaba" serves the 1st and 3rd persons singular; the tag here says 1st)."""
    return (f"Estaba {adjective} .", f"""
1 Estaba estar AUX Mood=Ind|Number=Sing|Person=1|Tense=Imp|VerbForm=Fin 2 cop
2 {adjective} cansado ADJ Gender={gender}|Number=Sing 0 root
3 . . PUNCT _ 2 punct
""")
