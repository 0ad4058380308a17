"""Reading parallel treebanks as documents of sentence pairs (invented sentences written into tmp_path)."""

from __future__ import annotations

import pytest
from treebank_helpers import Sent

from gendertrace.bench.pud import load_pud_pair, pud_path
from gendertrace.errors import InputError

# Tiny invented sentences; each row is "ID FORM UPOS FEATS HEAD DEPREL".
EN = [
    Sent(
        "a1",
        "Rain fell.",
        "1 Rain NOUN Number=Sing 2 nsubj\n2 fell VERB _ 0 root\n3 . PUNCT _ 2 punct",
        "doc-a",
    ),
    Sent(
        "b1",
        "Snow fell.",
        "1 Snow NOUN Number=Sing 2 nsubj\n2 fell VERB _ 0 root\n3 . PUNCT _ 2 punct",
        "doc-b",
    ),
    Sent("a2", "Wind blew.", "1 Wind NOUN Number=Sing 2 nsubj\n2 blew VERB _ 0 root\n3 . PUNCT _ 2 punct"),
]
ES = [
    # deliberately in another order than the English file: pairs are matched by sent_id
    Sent(
        "a2",
        "Sopló viento.",
        "1 Sopló VERB _ 0 root\n2 viento NOUN Gender=Masc|Number=Sing 1 nsubj\n3 . PUNCT _ 1 punct",
    ),
    Sent(
        "a1",
        "Cayó lluvia.",
        "1 Cayó VERB _ 0 root\n2 lluvia NOUN Gender=Fem|Number=Sing 1 nsubj\n3 . PUNCT _ 1 punct",
    ),
    Sent(
        "b1",
        "Cayó nieve.",
        "1 Cayó VERB _ 0 root\n2 nieve NOUN Gender=Fem|Number=Sing 1 nsubj\n3 . PUNCT _ 1 punct",
    ),
]


def test_documents_run_from_one_newdoc_comment_to_the_next(treebanks):
    folder = treebanks(en=EN, es=ES)
    docs = load_pud_pair(folder, "en", "es")
    assert [d.doc_id for d in docs] == ["doc-a", "doc-b"]
    # "a2" follows "b1" in the file, after the doc-b comment: it belongs to doc-b, not to doc-a
    assert [p.sent_id for p in docs[0].pairs] == ["a1"]
    assert [p.sent_id for p in docs[1].pairs] == ["b1", "a2"]


def test_pairs_are_matched_by_sent_id_not_by_position(treebanks):
    docs = load_pud_pair(treebanks(en=EN, es=ES), "en", "es")
    pair = docs[1].pairs[1]
    assert (pair.source.text, pair.target.text) == ("Wind blew.", "Sopló viento.")
    assert pair.target.parsed.tokens[1].gender == "masc"
    assert (docs[0].src_lang, docs[0].tgt_lang) == ("en", "es")


def test_sentences_before_the_first_newdoc_form_a_document_named_after_the_first(treebanks):
    en = [Sent("x1", "Rain fell.", EN[0].rows)] + EN
    es = [Sent("x1", "Cayó lluvia.", ES[1].rows)] + ES
    docs = load_pud_pair(treebanks(en=en, es=es), "en", "es")
    assert [d.doc_id for d in docs] == ["x1", "doc-a", "doc-b"]


def test_missing_folder_raises_file_not_found_naming_it(tmp_path):
    with pytest.raises(FileNotFoundError, match="folder .*nowhere.* not found"):
        load_pud_pair(tmp_path / "nowhere", "en", "es")


def test_missing_language_file_names_the_file_and_the_languages_present(treebanks):
    folder = treebanks(en=EN, es=ES)
    with pytest.raises(FileNotFoundError) as caught:
        load_pud_pair(folder, "en", "fr")
    message = str(caught.value)
    assert "fr_pud-news.conllu" in message
    assert "en, es" in message


def test_source_sentence_without_target_is_an_input_error(treebanks):
    folder = treebanks(en=EN, es=ES[:2])
    with pytest.raises(InputError, match="'b1' has no sentence in es_pud-news.conllu"):
        load_pud_pair(folder, "en", "es")


def test_pud_path_follows_the_file_naming(tmp_path):
    assert pud_path(tmp_path, "pt").name == "pt_pud-news.conllu"
