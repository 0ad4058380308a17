"""The narrator's link on hand-built parses: a first-person target mention goes to the source's narrator, by
the aligned clause where the aligner reached it, else by person."""

from __future__ import annotations

from gendertrace.coref.sieves import resolve_chains
from gendertrace.link.linker import LinkContext, link_all, resolved_in_order
from gendertrace.mentions.extract import extract_mentions
from gendertrace.rules import load_lexicon, load_rules
from gendertrace.settings import WEIGHTS
from handparse import EN_I_MOTHER, EN_I_TIRED, ES_SOY_MADRE, es_i_was_tired, parse


def _context(pairs, alignments) -> LinkContext:
    sides = []
    for side, lang, k in (("source", "en", 0), ("target", "es", 1)):
        rules = load_rules(lang)
        parses = [parse(lang, *pair[k]) for pair in pairs]
        ms = [m for i, p in enumerate(parses) for m in extract_mentions(p, i, str(i + 1), side, rules)]
        res = resolve_chains(ms, parses, side, use_gender=side == "source")
        sides.append((resolved_in_order(ms, res), parses))
    (src, src_p), (tgt, tgt_p) = sides
    return LinkContext(src, tgt, src_p, tgt_p, [frozenset(a) for a in alignments], load_lexicon("en", "es"))


PAIRS = [(EN_I_MOTHER, ES_SOY_MADRE), (EN_I_TIRED, es_i_was_tired("cansado", "Masc"))]


def test_an_unaligned_first_person_zero_subject_links_to_the_narrator_by_person():
    ctx = _context(PAIRS, [{(1, 0), (3, 1)}, set()])
    link = link_all(ctx)["t1.z1"]
    assert (link.source_chain, link.method, link.via, link.confidence) == (
        "S1", "narrator", "s1.0", WEIGHTS.links.narrator)


def test_an_aligned_clause_projects_the_zero_subject_to_the_english_i():
    # "was tired" / "Estaba cansado": the copula and the adjective aligned, so the clause decides.
    ctx = _context(PAIRS, [{(1, 0), (3, 1)}, {(1, 0), (2, 1)}])
    link = link_all(ctx)["t1.z1"]
    assert (link.source_chain, link.method, link.via) == ("S1", "projection", "s1.0")


def test_no_narrator_in_the_source_means_no_link_by_person():
    ctx = _context([(("Ana arrived .", """
1 Ana Ana PROPN Number=Sing 2 nsubj NE=PER
2 arrived arrive VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
3 . . PUNCT _ 2 punct
"""), es_i_was_tired("cansado", "Masc"))], [set()])
    assert "t0.z1" not in link_all(ctx)
