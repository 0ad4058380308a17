"""Reading TMX: languages, inline codes, grouping into documents by a property, errors."""

from __future__ import annotations

import pytest
from review_samples import TMX

from gendertrace.errors import InputError
from gendertrace.io.readers import read_corpus, read_corpus_with_report
from gendertrace.io.tmx import DEFAULT_GROUP_PROP, read_tmx


def write(tmp_path, text, name="memory.tmx"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def line_of(text, needle):
    return next(k for k, line in enumerate(text.splitlines(), 1) if needle in line)


def test_whole_file_is_one_document_named_after_it(tmp_path):
    tmx = read_tmx(write(tmp_path, TMX))
    assert (tmx.src_lang, tmx.tgt_lang) == ("es", "en-GB")  # the header's srclang; the only other language
    (doc,) = tmx.documents
    assert doc.doc_id == "memory"
    # tuid when present, else the unit's position in its document.
    assert [s.seg_id for s in doc.segments] == ["1", "2", "3", "4"]


def test_inline_codes_reduce_to_their_text(tmp_path):
    segs = read_tmx(write(tmp_path, TMX)).documents[0].segments
    assert segs[0].source == "La mecánica Zuri Altuna revisó el tren."  # <hi> keeps its text
    assert segs[1].source == "Estaba satisfecha."  # <bpt>/<ept> hold native code
    assert segs[1].target == "He was satisfied."  # so does <ph>
    a, b = segs[1].target_map.locate(0, 2)
    assert read_tmx(tmp_path / "memory.tmx").source.data[a:b] == b"He"


def test_unit_without_a_target_variant_is_untranslated(tmp_path):
    docs, report = read_corpus_with_report(write(tmp_path, TMX))
    assert report.fmt == "tmx"
    assert [(r.doc_id, r.seg_id) for r in report.untranslated] == [("memory", "3")]
    assert docs[0].segments[2].target == ""


def test_grouping_by_the_document_property(tmp_path):
    path = write(tmp_path, TMX)
    docs = read_corpus(path, tmx_group=DEFAULT_GROUP_PROP)
    assert DEFAULT_GROUP_PROP == "x-document"
    assert [(d.doc_id, [s.seg_id for s in d.segments]) for d in docs] == [
        ("depot", ["1", "2"]), ("bakery", ["3", "2"])]
    assert docs[1].segments[1].target == "She greeted him."


def test_grouping_needs_the_property_on_every_unit(tmp_path):
    text = TMX.replace('<prop type="x-document">bakery</prop>\n      <tuv xml:lang="es"><seg>El', '<tuv '
                       'xml:lang="es"><seg>El', 1)
    with pytest.raises(InputError) as err:
        read_tmx(write(tmp_path, text), group_by="x-document")
    assert err.value.line == line_of(text, '<tu tuid="3">')
    assert "no <prop type=\"x-document\">" in str(err.value)


def test_several_target_languages_need_one_named(tmp_path):
    text = TMX.replace('<tuv xml:lang="en-GB"><seg>She greeted him.</seg></tuv>',
                       '<tuv xml:lang="en-GB"><seg>She greeted him.</seg></tuv>'
                       '<tuv xml:lang="fr"><seg>Elle le salua.</seg></tuv>')
    path = write(tmp_path, text)
    with pytest.raises(InputError, match="languages other than 'es' found: en-GB, fr"):
        read_tmx(path)
    french = read_tmx(path, tgt_lang="fr")
    assert [s.target for s in french.documents[0].segments] == [None, None, None, "Elle le salua."]
    # A bare language matches its regional variant.
    assert read_tmx(path, tgt_lang="en").documents[0].segments[0].target.startswith("Mechanic")


def test_header_for_all_languages_needs_the_source_named(tmp_path):
    path = write(tmp_path, TMX.replace('srclang="es"', 'srclang="*all*"'))
    with pytest.raises(InputError, match=r"srclang is '\*all\*': name the source language"):
        read_tmx(path)
    assert read_tmx(path, src_lang="es").tgt_lang == "en-GB"


def test_older_lang_attribute_is_accepted(tmp_path):
    # TMX 1.1 and 1.2 name a variant's language with `lang`, TMX 1.4 with `xml:lang` (from memory).
    tmx = read_tmx(write(tmp_path, TMX.replace("xml:lang=", "lang=")))
    assert tmx.documents[0].segments[3].target == "She greeted him."


def test_malformed_tmx_names_line_and_column(tmp_path):
    text = TMX.replace("<seg>El panadero abrió temprano.</seg>", "<seg>El panadero abrió temprano.</sgе>")
    with pytest.raises(InputError) as err:
        read_tmx(write(tmp_path, text, "bad.tmx"))
    line = line_of(text, "</sgе>")
    assert err.value.line == line
    assert f"bad.tmx:{line}: malformed XML at line {line}, column" in str(err.value)


@pytest.mark.slow
def test_score_groups_tmx_units_by_the_named_property(tmp_path):
    # The command line reaches the TMX grouping: one result line per <prop type="x-document"> value.
    import json

    from click.testing import CliRunner

    from gendertrace.cli import main

    path = write(tmp_path, TMX)
    out = tmp_path / "out.jsonl"
    result = CliRunner().invoke(main, ["score", str(path), "-s", "es", "-t", "en", "-o", str(out), "--no-cache",
                                       "--jobs", "1", "--tmx-group", DEFAULT_GROUP_PROP, "-q"])
    assert result.exit_code == 0, result.output
    assert [json.loads(line)["doc_id"] for line in out.read_text(encoding="utf-8").splitlines()] == [
        "depot", "bakery"]
