"""The narrator sieve on hand-built parses: one person for the first-person singular outside quotations, through
the whole document, with the person noun predicated of it."""

from __future__ import annotations

from gendertrace.coref.sieves import SIEVES, narrator, resolve_chains
from gendertrace.mentions.extract import extract_mentions
from gendertrace.rules import load_rules
from handparse import EN_I_MOTHER, EN_I_TIRED, EN_SHE_TIRED, parse

EN = load_rules("en")


def _side(*sentences):
    parses = [parse("en", text, rows) for text, rows in sentences]
    mentions = [m for k, p in enumerate(parses) for m in extract_mentions(p, k, str(k + 1), "source", EN)]
    return mentions, parses


def _chains(res) -> list[list[str]]:
    return [[m.text for m in c.mentions] for c in res.chains]


def test_the_narrator_is_one_chain_across_segments_with_the_noun_said_of_them():
    # UD v2 guidelines: in "I am a mother" the nominal predicate heads the clause and "I" is its nsubj.
    ms, ps = _side(EN_I_MOTHER, EN_I_TIRED)
    res = resolve_chains(ms, ps, "source", use_gender=True)
    assert _chains(res) == [["I", "mother", "I"]]


def test_without_the_sieve_the_first_persons_stay_apart():
    ms, ps = _side(EN_I_MOTHER, EN_I_TIRED)
    res = resolve_chains(ms, ps, "source", use_gender=True, sieves=tuple(s for s in SIEVES if s is not narrator))
    assert _chains(res) == [["I"], ["mother"], ["I"]]


def test_a_third_person_pronoun_does_not_take_up_the_narrator():
    ms, ps = _side(EN_I_MOTHER, EN_SHE_TIRED)
    res = resolve_chains(ms, ps, "source", use_gender=True)
    assert ["She"] in _chains(res)
    assert ["I", "mother"] in _chains(res)
