"""Reading XLIFF 1.2 and 2.x: documents, segments, inline codes, offsets back into the XML, errors."""

from __future__ import annotations

import re

import pytest
from review_samples import XLIFF12, XLIFF20, XLIFF20_PREFIXED

from gendertrace.errors import InputError
from gendertrace.io.readers import detect_format, iter_documents, read_corpus_with_report
from gendertrace.io.xliff import read_xliff


def write(tmp_path, text, name="set.xlf", encoding="utf-8"):
    path = tmp_path / name
    path.write_bytes(text.encode(encoding))
    return path


def segments(xliff):
    return {(d.doc_id, s.seg_id): s for d in xliff.documents for s in d.segments()}


def test_xliff12_files_are_documents_and_trans_units_segments(tmp_path):
    x = read_xliff(write(tmp_path, XLIFF12))
    assert x.version == "1.2"
    assert [(d.doc_id, d.src_lang, d.tgt_lang) for d in x.documents] == [
        ("harbour-note", "es", "en"), ("ward-note", "es", "en")]
    assert list(segments(x)) == [("harbour-note", "t1"), ("harbour-note", "t2"), ("harbour-note", "t3"),
                                 ("ward-note", "t1")]


def test_xliff12_inline_codes_reduce_to_their_text(tmp_path):
    s = segments(read_xliff(write(tmp_path, XLIFF12)))
    # <g> and <mrk> keep their text; <x>, <ph>, <bpt>, <ept> (native code) give nothing.
    assert s["harbour-note", "t1"].source == "La capitana Ilune Garaikoa llegó a Berrenda."
    # The unit's own target, not the one inside <alt-trans>.
    assert s["harbour-note", "t1"].target == "Captain Ilune Garaikoa arrived in Berrenda."
    assert s["harbour-note", "t2"].source == "Estaba agotada, pero contenta."
    assert s["harbour-note", "t2"].target == "He was exhausted & happy."
    assert s["ward-note", "t1"].target == "The nurse smiled; she waved."


def test_xliff2_units_and_their_segments(tmp_path):
    x = read_xliff(write(tmp_path, XLIFF20))
    assert x.version == "2.0"
    (doc,) = x.documents
    assert (doc.doc_id, doc.src_lang, doc.tgt_lang) == ("clinic-memo", "es", "en")
    s = segments(x)
    # A unit with several segments gives "unit/segment" ids; a unit with one segment gives the unit id.
    assert list(s) == [("clinic-memo", "u1/s1"), ("clinic-memo", "u1/s2"), ("clinic-memo", "u2"),
                       ("clinic-memo", "u3")]
    assert s["clinic-memo", "u1/s1"].target == "Doctor Maren Oskoz attended."  # <pc> keeps its text
    assert s["clinic-memo", "u1/s2"].target == "Then he left\u00a0tired."  # <ph/> nothing, <cp> its character
    assert s["clinic-memo", "u2"].source == "Nadie la esperaba en casa."  # <sc/>, <ec/> nothing
    assert s["clinic-memo", "u2"].target == "Nobody expected him at home."  # <mrk> keeps its text


def test_prefixed_xliff2_is_read_like_the_default_namespace(tmp_path):
    s = segments(read_xliff(write(tmp_path, XLIFF20_PREFIXED)))
    assert s["kiosk", "k1"].target == "The seller smiled; he waved."


@pytest.mark.parametrize("sample", [XLIFF12, XLIFF20], ids=["1.2", "2.0"])
def test_every_word_of_the_plain_text_locates_its_bytes_in_the_xml(tmp_path, sample):
    x = read_xliff(write(tmp_path, sample))
    checked = 0
    for s in segments(x).values():
        for text, tmap in ((s.source, s.source_map), (s.target, s.target_map)):
            for m in re.finditer(r"\w+", text or ""):
                a, b = tmap.locate(m.start(), m.end())
                assert x.source.data[a:b].decode("utf-8") == m.group(), (s.seg_id, m.group())
                checked += 1
    assert checked > 25


def test_offsets_across_inline_codes_point_at_the_right_xml(tmp_path):
    x = read_xliff(write(tmp_path, XLIFF12))
    t2 = segments(x)["harbour-note", "t2"]
    data = x.source.data
    a, b = t2.target_map.locate(0, 2)  # "He", right after a <ph> whose content is dropped
    assert data[a - len(b"</ph>") : b] == b"</ph>He"
    a, b = t2.target_map.locate(7, 16)  # "exhausted", between <bpt> and <ept>
    assert data[a:b] == b"exhausted" and data[b : b + 8] == b"<ept id="
    a, b = t2.target_map.locate(17, 18)  # "&" comes from an entity reference: it maps to the whole of it
    assert data[a:b] == b"&amp;"
    u1s2 = segments(read_xliff(write(tmp_path, XLIFF20, "b.xlf")))["clinic-memo", "u1/s2"]
    x2 = read_xliff(tmp_path / "b.xlf")
    a, b = u1s2.target_map.locate(12, 13)  # the no-break space stands for a <cp> element
    assert x2.source.data[a:b] == b'<cp hex="00A0"/>'


def test_unit_without_target_is_kept_and_reported_untranslated(tmp_path):
    for name, sample, seg in (("a.xlf", XLIFF12, "t3"), ("b.xliff", XLIFF20, "u3")):
        docs, report = read_corpus_with_report(write(tmp_path, sample, name))
        assert report.fmt == "xliff"
        assert [(r.doc_id, r.seg_id) for r in report.untranslated] == [(docs[0].doc_id, seg)]
        kept = {s.seg_id: s for s in docs[0].segments}[seg]
        assert kept.target == "" and kept.source


def test_readers_detect_xliff_and_tmx_by_extension_or_name(tmp_path):
    assert detect_format("a.xlf") == detect_format("a.XLIFF") == "xliff"
    assert detect_format("a.tmx") == "tmx"
    assert detect_format("a.txt", "xlf") == "xliff"
    path = write(tmp_path, XLIFF12)
    streamed = list(iter_documents(path))
    assert [d.doc_id for d in streamed] == ["harbour-note", "ward-note"]
    assert streamed == read_corpus_with_report(path)[0]
    assert streamed[0].segments[1].line == 16  # the line of the <trans-unit>


def test_malformed_xml_names_file_line_and_column(tmp_path):
    text = XLIFF12.replace("<target>The <mrk", "<target>The <mrk").replace(
        "<source>Sin traducir todavía.</source>", "<source>Sin traducir todavía.</target>")
    line_no = next(k for k, line in enumerate(text.splitlines(), 1) if "todavía.</target>" in line)
    line = text.splitlines()[line_no - 1]
    with pytest.raises(InputError) as err:
        read_xliff(write(tmp_path, text, "broken.xlf"))
    message = str(err.value)
    assert "broken.xlf" in message
    assert err.value.line == line_no
    # Expat reports the mismatched end tag at its name, 0-based; the message gives 1-based columns.
    assert f"line {line_no}, column {line.index('</target>') + 3}" in message
    assert "mismatched tag" in message


def test_truncated_file_is_an_error_too(tmp_path):
    with pytest.raises(InputError, match=r"cut\.xlf:\d+: malformed XML at line \d+, column \d+"):
        read_xliff(write(tmp_path, XLIFF20[:700], "cut.xlf"))


def test_entity_declarations_are_refused(tmp_path):
    text = XLIFF12.replace("<!-- exported for review -->",
                           '<!DOCTYPE xliff [<!ENTITY boom "aaaaaaaaaa">]>').replace("{0}", "&boom;")
    with pytest.raises(InputError, match="entity declaration 'boom'"):
        read_xliff(write(tmp_path, text))


def test_a_file_that_is_not_xliff_is_named(tmp_path):
    with pytest.raises(InputError, match=r"root element is <tmx>: expected an XLIFF <xliff>"):
        read_xliff(write(tmp_path, '<?xml version="1.0"?><tmx version="1.4"><body/></tmx>'))


def test_repeated_unit_id_in_one_file_is_an_error(tmp_path):
    text = XLIFF12.replace('<trans-unit id="t2">', '<trans-unit id="t1">')
    with pytest.raises(InputError, match=r"segment id 't1' repeated in document 'harbour-note'"):
        read_xliff(write(tmp_path, text))


def test_utf16_file_reads_the_same_text(tmp_path):
    text = XLIFF12.replace('encoding="UTF-8"', 'encoding="UTF-16"')
    path = tmp_path / "wide.xlf"
    path.write_bytes(b"\xff\xfe" + text.encode("utf-16-le"))  # with a little-endian byte order mark
    wide = segments(read_xliff(path))
    narrow = segments(read_xliff(write(tmp_path, XLIFF12)))
    assert {k: (s.source, s.target) for k, s in wide.items()} == {
        k: (s.source, s.target) for k, s in narrow.items()}
