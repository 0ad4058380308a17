"""Link methods on hand-built parses and a hand-made word alignment."""

from __future__ import annotations

from gendertrace.coref.sieves import resolve_chains
from gendertrace.link.linker import CHAIN_METHODS, DIRECT_METHODS, LinkContext, link_all, resolved_in_order
from gendertrace.mentions.extract import extract_mentions
from gendertrace.rules import load_lexicon, load_rules
from gendertrace.settings import WEIGHTS
from handparse import EN_NAME, EN_SHE_TIRED, ES_NAME, ES_TIRED, parse

ES_SHE_ARRIVED = ("Ella llegó .", """
1 Ella él PRON Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs 2 nsubj
2 llegó llegar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
3 . . PUNCT _ 2 punct
""")
EN_SHE_ARRIVED = ("She arrived .", """
1 She she PRON Case=Nom|Gender=Fem|Number=Sing|Person=3|PronType=Prs 2 nsubj
2 arrived arrive VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
3 . . PUNCT _ 2 punct
""")


def _context(pairs, alignments) -> LinkContext:
    sides = []
    for side, lang, k in (("source", "es", 0), ("target", "en", 1)):
        rules = load_rules(lang)
        parses = [parse(lang, *pair[k]) for pair in pairs]
        ms = [m for i, p in enumerate(parses) for m in extract_mentions(p, i, str(i + 1), side, rules)]
        res = resolve_chains(ms, parses, side, use_gender=side == "source")
        sides.append((resolved_in_order(ms, res), parses))
    (src, src_p), (tgt, tgt_p) = sides
    return LinkContext(src, tgt, src_p, tgt_p, [frozenset(a) for a in alignments], load_lexicon("es", "en"))


def test_methods_are_tried_most_certain_first():
    assert [f.__name__ for f in DIRECT_METHODS] == ["by_name", "by_lexicon", "by_alignment", "by_projection"]
    assert [f.__name__ for f in CHAIN_METHODS] == ["names_speak_for_nouns", "inherit_through_chain"]


def test_a_name_links_by_the_name_and_a_subject_by_its_clause():
    ctx = _context([(ES_NAME, EN_NAME), (ES_TIRED, EN_SHE_TIRED)],
                   [{(0, 0), (1, 1), (2, 2), (3, 3)}, {(0, 1), (1, 2), (2, 3)}])
    links = link_all(ctx)
    name = links["t0.1"]
    assert (name.source_chain, name.method, name.confidence, name.via) == ("S1", "name", 1.0, "s0.0")
    # "She" has no source word of its own (Spanish drops the subject): the clause "was tired" is aligned to
    # "Estaba cansada", whose zero subject is one segment after its antecedent.
    she = links["t1.0"]
    assert (she.source_chain, she.method, she.via) == ("S1", "projection", "s1.z1")
    expected = WEIGHTS.links.projection * WEIGHTS.coreference.distance_certainty[1]
    assert abs(she.confidence - expected) < 1e-9


def test_an_overt_pronoun_links_through_the_source_word_it_is_aligned_to():
    ctx = _context([(ES_SHE_ARRIVED, EN_SHE_ARRIVED)], [{(0, 0), (1, 1), (2, 2)}])
    link = link_all(ctx)["t0.0"]
    assert (link.method, link.via, link.confidence) == ("alignment", "s0.0", WEIGHTS.links.alignment)


def test_no_alignment_and_no_clause_means_no_link():
    ctx = _context([(ES_SHE_ARRIVED, EN_SHE_ARRIVED)], [set()])
    assert link_all(ctx) == {}
