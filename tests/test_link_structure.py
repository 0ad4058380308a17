"""Linking a subject pronoun where the word aligner paired it by its form.

Sentences and people are invented. The fact behind the rule (common practice, no source): a statistical word
aligner pairs pronouns mostly by their forms, so a target pronoun of the wrong gender is drawn to a source
pronoun of its own gender elsewhere in the sentence; subject-verb structure does not depend on the form.
"""

from __future__ import annotations

import pytest

from gendertrace.coref.sieves import resolve_chains
from gendertrace.link.linker import link_mentions
from gendertrace.mentions.extract import extract_mentions
from gendertrace.parse.base import get_parser
from gendertrace.rules import load_rules

pytestmark = pytest.mark.slow

SOURCE = "If his rival won, he promised that she would regret it."


def _link(target: str, pairs: list[tuple[str, int, str, int]]):
    """Links of the target mentions, with an alignment given as (source word, nth, target word, nth) pairs."""
    src, tgt = get_parser("en").parse(SOURCE), get_parser("es").parse(target)

    def index(parsed, word, nth):
        return [t.i for t in parsed.tokens if t.text == word][nth]

    alignment = frozenset((index(src, a, k), index(tgt, b, n)) for a, k, b, n in pairs)
    src_ms = extract_mentions(src, 0, "s1", "source", load_rules("en"))
    tgt_ms = extract_mentions(tgt, 0, "s1", "target", load_rules("es"))
    src_res = resolve_chains(src_ms, [src], "source", use_gender=True)
    tgt_res = resolve_chains(tgt_ms, [tgt], "target", use_gender=False)
    links = link_mentions(src_ms, tgt_ms, src_res, tgt_res, [src], [tgt], [alignment], {})
    she_chain = src_res.chain_of[next(m.id for m in src_ms if m.text == "she")]
    he_chain = src_res.chain_of[next(m.id for m in src_ms if m.text == "he")]
    return tgt_ms, links, she_chain, he_chain


WORDS = [("If", 0, "Si", 0), ("his", 0, "su", 0), ("rival", 0, "rival", 0), ("won", 0, "ganara", 0),
         ("he", 0, "él", 0), ("promised", 0, "prometió", 0), ("that", 0, "que", 0),
         ("regret", 0, "lamentaría", 0), ("would", 0, "lamentaría", 0), ("it", 0, "lo", 0)]


def test_a_pronoun_paired_by_its_form_is_linked_by_its_clause():
    # The aligner paired the second "él" with "he" as well; "he" is the subject of "promised", whose
    # translation has its own subject (the first "él"), and the clause of the second "él" translates the one
    # whose subject is "she".
    tgt_ms, links, she_chain, _ = _link("Si su rival ganara, él prometió que él lo lamentaría.",
                                        WORDS + [("he", 0, "él", 1)])
    second = [m for m in tgt_ms if m.text == "él"][1]
    assert links[second.id].source_chain == she_chain
    assert links[second.id].method == "projection"


def test_a_pronoun_paired_with_its_own_clauses_subject_keeps_its_alignment():
    tgt_ms, links, _, he_chain = _link("Si su rival ganara, él prometió que ella lo lamentaría.",
                                       WORDS + [("she", 0, "ella", 0)])
    first = next(m for m in tgt_ms if m.text == "él")
    assert links[first.id].source_chain == he_chain
    assert links[first.id].method == "alignment"
