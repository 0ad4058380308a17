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


ES_TITLED = ("La directora Ana Ruiz llegó .", """
1 La el DET Definite=Def|Gender=Fem|Number=Sing|PronType=Art 2 det
2 directora director NOUN Gender=Fem|Number=Sing 5 nsubj
3 Ana Ana PROPN _ 2 appos NE=PER
4 Ruiz Ruiz PROPN _ 3 flat NE=PER
5 llegó llegar VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
6 . . PUNCT _ 5 punct
""")
EN_TITLED = ("Director Ana Ruiz arrived .", """
1 Director director NOUN Number=Sing 3 compound
2 Ana Ana PROPN Number=Sing 3 compound NE=PER
3 Ruiz Ruiz PROPN Number=Sing 4 nsubj NE=PER
4 arrived arrive VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
5 . . PUNCT _ 4 punct
""")
ES_HE_SMILED = ("El director sonrió .", """
1 El el DET Definite=Def|Gender=Masc|Number=Sing|PronType=Art 2 det
2 director director NOUN Gender=Masc|Number=Sing 3 nsubj
3 sonrió sonreír VERB Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin 0 root
4 . . PUNCT _ 3 punct
""")
EN_HE_SMILED = ("The director smiled .", """
1 The the DET Definite=Def|PronType=Art 2 det
2 director director NOUN Number=Sing 3 nsubj
3 smiled smile VERB Mood=Ind|Tense=Past|VerbForm=Fin 0 root
4 . . PUNCT _ 3 punct
""")


def test_a_name_speaks_for_the_noun_of_its_own_sentence_not_for_one_taken_up_by_its_head_later():
    ctx = _context([(ES_TITLED, EN_TITLED), (ES_HE_SMILED, EN_HE_SMILED)],
                   [{(1, 0), (2, 1), (3, 2), (4, 3), (5, 4)}, {(0, 0), (1, 1), (2, 2), (3, 3)}])
    ctx.lexicon = {}  # the nouns reach their source only through the aligner
    tgt = {m.id: m for m in ctx.tgt_mentions}
    title, later = (m for m in ctx.tgt_mentions if m.kind == "noun")
    assert title.chain == later.chain == tgt["t0.2"].chain  # one target chain: title, name, the same noun again
    links = link_all(ctx)
    # The source keeps "la directora Ana Ruiz" (S1) and "el director" (S2) apart by gender.
    assert links["t0.2"].source_chain == "S1" and links[title.id].source_chain == "S1"
    # The noun of the second segment was joined by its head only: its own alignment link stands.
    assert (links[later.id].source_chain, links[later.id].method) == ("S2", "alignment")
