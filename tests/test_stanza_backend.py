"""The stanza backend: how it converts stanza Documents, and that it never downloads models.

stanza is an optional extra; the tests that need it skip when it is not importable. They build real stanza
Documents offline from CoNLL-U (stanza.utils.conll.CoNLL.conll2doc) and hold the conversion to what the
project's own CoNLL-U backend reads from the same text.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

from gendertrace.errors import ModelError
from gendertrace.parse import get_parser
from gendertrace.parse.conllu_backend import read_conllu
from gendertrace.parse.stanza_backend import StanzaParser, stanza_doc_to_parsed
from scoring_helpers import conllu_rows as rows

SKIP_REASON = "stanza is not installed (optional extra: pip install 'gendertrace[stanza]')"


@pytest.fixture(scope="module")
def conll():
    pytest.importorskip("stanza", reason=SKIP_REASON)
    from stanza.utils.conll import CoNLL

    return CoNLL


# Invented sentences. Spanish with the contraction del = de + el, French with au = à + le.
ES = "# sent_id = es1\n# text = La jefa volvió del puerto.\n" + rows(
    ("1", "La", "el", "DET", "Definite=Def|Gender=Fem|Number=Sing|PronType=Art", "2", "det"),
    ("2", "jefa", "jefe", "NOUN", "Gender=Fem|Number=Sing", "3", "nsubj"),
    ("3", "volvió", "volver", "VERB", "Mood=Ind|Number=Sing|Person=3|Tense=Past|VerbForm=Fin", "0", "root"),
    ("4-5", "del", "_", "_", "_", "_", "_"),
    ("4", "de", "de", "ADP", "_", "6", "case"),
    ("5", "el", "el", "DET", "Definite=Def|Gender=Masc|Number=Sing|PronType=Art", "6", "det"),
    ("6", "puerto", "puerto", "NOUN", "Gender=Masc|Number=Sing", "3", "obl", "SpaceAfter=No"),
    ("7", ".", ".", "PUNCT", "_", "3", "punct"),
)
FR = "# sent_id = fr1\n# text = L'avocate a été reçue au tribunal.\n" + rows(
    ("1", "L'", "le", "DET", "Definite=Def|Number=Sing|PronType=Art", "2", "det", "SpaceAfter=No"),
    ("2", "avocate", "avocat", "NOUN", "Gender=Fem|Number=Sing", "5", "nsubj:pass"),
    ("3", "a", "avoir", "AUX", "Mood=Ind|Number=Sing|Person=3|Tense=Pres|VerbForm=Fin", "5", "aux"),
    ("4", "été", "être", "AUX", "Tense=Past|VerbForm=Part", "5", "aux:pass"),
    ("5", "reçue", "recevoir", "VERB", "Gender=Fem|Number=Sing|Tense=Past|VerbForm=Part", "0", "root"),
    ("6-7", "au", "_", "_", "_", "_", "_"),
    ("6", "à", "à", "ADP", "_", "8", "case"),
    ("7", "le", "le", "DET", "Definite=Def|Gender=Masc|Number=Sing|PronType=Art", "8", "det"),
    ("8", "tribunal", "tribunal", "NOUN", "Gender=Masc|Number=Sing", "5", "obl", "SpaceAfter=No"),
    ("9", ".", ".", "PUNCT", "_", "5", "punct"),
)
ES_SECOND = "# sent_id = es2\n# text = Estaba contenta.\n" + rows(
    ("1", "Estaba", "estar", "AUX", "Mood=Ind|Number=Sing|Person=3|Tense=Imp|VerbForm=Fin", "2", "cop"),
    ("2", "contenta", "contento", "ADJ", "Gender=Fem|Number=Sing", "0", "root", "SpaceAfter=No"),
    ("3", ".", ".", "PUNCT", "_", "2", "punct"),
)


def project_parse(tmp_path: Path, text: str, lang: str):
    path = tmp_path / f"{lang}.conllu"
    path.write_text(text + "\n", encoding="utf-8")
    return [s.parsed for s in read_conllu(path, lang)]


# ----------------------------------------------------------------------------------------------------
# Conversion of stanza Documents


@pytest.mark.parametrize("lang, text", [("es", ES), ("fr", FR)])
@pytest.mark.parametrize("reconstruct", [True, False], ids=["with-offsets", "without-offsets"])
def test_stanza_conversion_equals_the_conllu_backend(conll, tmp_path, lang, text, reconstruct):
    # reconstruct_text=True gives the document a text and character offsets, as a stanza pipeline does;
    # without it the adapter finds the offsets itself.
    doc = conll.conll2doc(input_str=text, reconstruct_text=reconstruct)
    (expected,) = project_parse(tmp_path, text, lang)
    got = stanza_doc_to_parsed(doc, lang)
    assert got == expected  # text, and every token: form, lemma, upos, feats, head, deprel, offsets, sent
    assert [t.text for t in got.tokens] == [t.text for t in expected.tokens]


def test_stanza_multiword_token_words_share_the_token_span(conll):
    got = stanza_doc_to_parsed(conll.conll2doc(input_str=FR, reconstruct_text=True), "fr")
    a, le = (t for t in got.tokens if t.text in ("à", "le"))
    assert (a.start, a.end) == (le.start, le.end)
    assert got.text[a.start : a.end] == "au"


def test_stanza_feats_are_a_dict_and_subtyped_relations_survive(conll):
    got = stanza_doc_to_parsed(conll.conll2doc(input_str=FR, reconstruct_text=True), "fr")
    avocate = got.tokens[1]
    assert dict(avocate.feats) == {"Gender": "Fem", "Number": "Sing"}
    assert avocate.gender == "fem"
    assert avocate.deprel == "nsubj:pass"
    assert got.tokens[4].is_root and got.tokens[4].deprel == "root"


def test_stanza_two_sentences_number_and_shift_like_the_conllu_backend(conll, tmp_path):
    text = ES + "\n" + ES_SECOND
    doc = conll.conll2doc(input_str=text, reconstruct_text=True)
    first, second = project_parse(tmp_path, text, "es")
    got = stanza_doc_to_parsed(doc, "es")
    assert got.text == first.text + " " + second.text
    n, shift = len(first.tokens), len(first.text) + 1
    assert got.tokens[:n] == first.tokens
    for t, ref in zip(got.tokens[n:], second.tokens, strict=True):
        assert (t.i, t.head, t.start, t.end, t.sent) == (
            ref.i + n,
            ref.head + n,
            ref.start + shift,
            ref.end + shift,
            1,
        )
        assert (t.text, t.lemma, t.upos, dict(t.feats), t.deprel) == (
            ref.text,
            ref.lemma,
            ref.upos,
            dict(ref.feats),
            ref.deprel,
        )
        assert got.text[t.start : t.end] == t.text


def test_stanza_ner_persons_become_per(conll):
    # stanza's NER writes BIOES tags (S-, B-, I-, E-) per token; English models say PERSON (stanza docs, from
    # memory). CoNLL-U read by conll2doc carries them in MISC as ner=...
    text = "# text = Nerea Goñi vio a Lía en Bilbao.\n" + rows(
        ("1", "Nerea", "Nerea", "PROPN", "_", "3", "nsubj", "ner=B-PER"),
        ("2", "Goñi", "Goñi", "PROPN", "_", "1", "flat", "ner=E-PER"),
        ("3", "vio", "ver", "VERB", "_", "0", "root", "ner=O"),
        ("4", "a", "a", "ADP", "_", "5", "case", "ner=O"),
        ("5", "Lía", "Lía", "PROPN", "_", "3", "obj", "ner=S-PERSON"),
        ("6", "en", "en", "ADP", "_", "7", "case", "ner=O"),
        ("7", "Bilbao", "Bilbao", "PROPN", "_", "3", "obl", "ner=S-LOC|SpaceAfter=No"),
        ("8", ".", ".", "PUNCT", "_", "3", "punct", "ner=O"),
    )
    got = stanza_doc_to_parsed(conll.conll2doc(input_str=text, reconstruct_text=True), "es")
    assert [t.ent for t in got.tokens] == ["PER", "PER", "", "", "PER", "", "LOC", ""]


def test_stanza_offsets_slice_the_text_when_the_document_has_none(conll):
    doc = conll.conll2doc(input_str=ES + "\n" + ES_SECOND)
    assert doc.text is None  # as read without reconstruction
    got = stanza_doc_to_parsed(doc, "es")
    assert got.text == "La jefa volvió del puerto. Estaba contenta."
    assert all(got.text[t.start : t.end] in (t.text, "del") for t in got.tokens)


# ----------------------------------------------------------------------------------------------------
# The parser around a pipeline


class RecordingPipeline:
    """A stand-in for stanza.Pipeline that answers with Documents read from CoNLL-U, one per known text."""

    def __init__(self, conll, by_text: dict[str, str]) -> None:
        self.conll = conll
        self.by_text = by_text
        self.calls: list[list[str]] = []

    def bulk_process(self, texts: list[str]):
        self.calls.append(list(texts))
        return [self.conll.conll2doc(input_str=self.by_text[t], reconstruct_text=True) for t in texts]


def test_parse_many_keeps_order_and_does_not_send_empty_texts(conll):
    nlp = RecordingPipeline(conll, {"La jefa volvió del puerto.": ES, "Estaba contenta.": ES_SECOND})
    parser = StanzaParser.from_pipeline("es", nlp, package="ancora", version="1.0")
    out = parser.parse_many(["Estaba contenta.", "", "La jefa volvió del puerto."])
    assert nlp.calls == [["Estaba contenta.", "La jefa volvió del puerto."]]
    assert [p.text for p in out] == ["Estaba contenta.", "", "La jefa volvió del puerto."]
    assert out[1].tokens == ()
    assert out[2].tokens[1].text == "jefa"
    assert parser.signature() == "stanza:es:ancora==1.0"


# ----------------------------------------------------------------------------------------------------
# Construction: missing parts are named, nothing is downloaded


@pytest.fixture
def no_downloads(monkeypatch):
    """Make any download attempt by stanza fail the test."""
    pytest.importorskip("stanza", reason=SKIP_REASON)
    import stanza.pipeline.core as core
    import stanza.resources.common as common

    def refuse(*args, **kwargs):
        raise AssertionError("stanza tried to download")

    for module in (core, common):
        for name in ("download_resources_json", "download_models", "download"):
            if hasattr(module, name):
                monkeypatch.setattr(module, name, refuse)


def write_resources(folder: Path, resources: dict) -> None:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "resources.json").write_text(json.dumps(resources), encoding="utf-8")


SPANISH_INDEX = {
    "es": {
        "lang_name": "Spanish",
        **{p: {"ancora": {}} for p in ("tokenize", "mwt", "pos", "lemma", "depparse")},
        "default_processors": {p: "ancora" for p in ("tokenize", "mwt", "pos", "lemma", "depparse")},
        "packages": {"default": {p: "ancora" for p in ("tokenize", "mwt", "pos", "lemma", "depparse")}},
    }
}


def test_missing_stanza_package_names_the_extra(monkeypatch):
    monkeypatch.setitem(sys.modules, "stanza", None)  # makes `import stanza` raise ImportError
    with pytest.raises(ModelError) as info:
        StanzaParser("es")
    assert "gendertrace[stanza]" in str(info.value)
    assert "torch" in str(info.value)


def test_empty_resources_folder_names_the_index_and_how_to_install(no_downloads, monkeypatch, tmp_path):
    monkeypatch.setenv("STANZA_RESOURCES_DIR", str(tmp_path))
    with pytest.raises(ModelError) as info:
        StanzaParser("es")
    message = str(info.value)
    assert str(tmp_path / "resources.json") in message
    assert "stanza.download('es', package='default')" in message
    assert "STANZA_RESOURCES_DIR" in message


def test_language_absent_from_the_index_is_named(no_downloads, monkeypatch, tmp_path):
    write_resources(tmp_path, SPANISH_INDEX)
    monkeypatch.setenv("STANZA_RESOURCES_DIR", str(tmp_path))
    with pytest.raises(ModelError) as info:
        StanzaParser("de")
    assert "no language 'de'" in str(info.value)


def test_language_without_a_parser_names_the_missing_processors(no_downloads, monkeypatch, tmp_path):
    write_resources(tmp_path, {"xx": {"tokenize": {"p": {}}, "pos": {"p": {}}}})
    monkeypatch.setenv("STANZA_RESOURCES_DIR", str(tmp_path))
    with pytest.raises(ModelError) as info:
        StanzaParser("xx")
    assert "lemma, depparse" in str(info.value)


def test_indexed_but_absent_model_files_fail_without_download(no_downloads, monkeypatch, tmp_path):
    write_resources(tmp_path, SPANISH_INDEX)
    monkeypatch.setenv("STANZA_RESOURCES_DIR", str(tmp_path))
    with pytest.raises(ModelError) as info:
        StanzaParser("es", model="ancora")
    message = str(info.value)
    assert "cannot load stanza models for 'es' (package 'ancora')" in message
    assert "stanza.download('es', package='ancora')" in message


def test_factory_routes_to_the_stanza_backend(no_downloads, monkeypatch, tmp_path):
    monkeypatch.setenv("STANZA_RESOURCES_DIR", str(tmp_path))
    with pytest.raises(ModelError, match="stanza"):
        get_parser("it", backend="stanza")
