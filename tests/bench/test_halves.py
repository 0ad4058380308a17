"""The treebank's news documents split in two by document id, for checking a rule on data it was not tuned on."""

from __future__ import annotations

import hashlib

import pytest
from treebank_helpers import Sent

from gendertrace.bench.pud import HALVES, document_half, load_pud_pair, select_half

ROW = "1 Rain NOUN Number=Sing 2 nsubj\n2 fell VERB _ 0 root\n3 . PUNCT _ 2 punct"


def test_a_document_half_is_fixed_by_its_id_alone():
    ids = [f"doc-{k:03d}" for k in range(200)]
    halves = [document_half(i) for i in ids]
    assert set(halves) == set(HALVES)
    # SHA-256 of the id, read as an integer, modulo 2 (FIPS 180-4 digest; the split is that digest's parity).
    assert halves == [1 + int(hashlib.sha256(i.encode()).hexdigest(), 16) % 2 for i in ids]
    # Neither half is tiny: a digest's parity is close to a fair coin over 200 ids.
    assert 70 <= halves.count(1) <= 130


def test_select_half_keeps_whole_documents_and_both_halves_cover_all(treebanks):
    en = [Sent(f"s{k}", "Rain fell.", ROW, f"doc-{k}") for k in range(12)]
    es = [Sent(f"s{k}", "Rain fell.", ROW) for k in range(12)]
    docs = load_pud_pair(treebanks(en=en, es=es), "en", "es")
    one, two = select_half(docs, 1), select_half(docs, 2)
    assert {d.doc_id for d in one} | {d.doc_id for d in two} == {d.doc_id for d in docs}
    assert not {d.doc_id for d in one} & {d.doc_id for d in two}
    assert all(document_half(d.doc_id) == 1 for d in one)
    assert select_half(docs, None) == docs
    with pytest.raises(ValueError, match="half must be 1 or 2"):
        select_half(docs, 3)
