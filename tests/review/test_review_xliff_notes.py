"""Writing the input XLIFF back with one note per finding, and nothing else changed.

The output is checked three ways: byte for byte against the input once the inserted notes are cut out; as
canonical XML (xml.etree.ElementTree.canonicalize, W3C Canonical XML 2.0) with the notes removed from the
tree; and through an independent XLIFF parser from the package index (translate-toolkit).
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import pytest
from review_samples import XLIFF12, XLIFF20, XLIFF20_PREFIXED, finding, result, write_jsonl
from translate.storage import xliff as tt_xliff
from translate.storage import xliff2 as tt_xliff2

from gendertrace.io.readers import read_corpus
from gendertrace.io.xliff import read_xliff
from gendertrace.review.results import load_review
from gendertrace.review.xliff_notes import annotate, write_annotated_xliff

NS12 = "urn:oasis:names:tc:xliff:document:1.2"  # XLIFF 1.2 specification, namespace
NS20 = "urn:oasis:names:tc:xliff:document:2.0"  # XLIFF 2.0 specification, section 4.1

RESULTS12 = [
    result("harbour-note", [
        finding("t2", 0, 2, "He"),
        finding("t1", 0, 7, "Captain", kind="assumption", expected=None, found="masc", confidence=0.4),
        finding("t2", 7, 16, "exhausted", kind="inconsistency", expected=None, found="masc"),
    ], labels={"E1": "Ilune <Garaikoa> & more"}),
    result("ward-note", [finding("t1", 18, 21, "she", expected="masc", found="fem")]),
]
RESULTS20 = [result("clinic-memo", [finding("u1/s2", 5, 7, "he"), finding("u2", 16, 19, "him")])]
RESULTS20_PREFIXED = [result("kiosk", [finding("k1", 19, 21, "he")])]


def annotated(tmp_path, sample, results, name="in.xlf", encoding="utf-8", bom=b""):
    src = tmp_path / name
    src.write_bytes(bom + sample.encode(encoding))
    res = write_jsonl(tmp_path / "res.jsonl", results)
    out = tmp_path / ("out-" + name)
    done = write_annotated_xliff(src, load_review(res, read_corpus(src)), out)
    return src.read_bytes(), out.read_bytes(), done


# The writer puts each note on a line of its own (a line break and the indentation of its neighbours) when the
# unit is laid out on lines, and a new 2.x <notes> also ends with the line break and indentation before the
# element it precedes. These patterns cut out exactly that.
CUT12 = re.compile(r'(\n[ \t]*)?<note from="gendertrace" annotates="target">[^<]*</note>')
CUT20_WRAPPED = re.compile(
    r'<(\w+:)?notes>(\s*<(\w+:)?note category="gendertrace" appliesTo="target">[^<]*</(\w+:)?note>)+'
    r"\s*</(\w+:)?notes>(\n[ \t]*)?")
CUT20_ADDED = re.compile(r'\n[ \t]*<note category="gendertrace" appliesTo="target">[^<]*</note>')


def without_notes_text(text: str) -> str:
    return CUT20_ADDED.sub("", CUT20_WRAPPED.sub("", CUT12.sub("", text)))


@pytest.mark.parametrize("sample, results", [(XLIFF12, RESULTS12), (XLIFF20, RESULTS20),
                                             (XLIFF20_PREFIXED, RESULTS20_PREFIXED)],
                         ids=["1.2", "2.0", "2.0-prefixed"])
def test_output_is_the_input_byte_for_byte_once_the_notes_are_cut_out(tmp_path, sample, results):
    before, after, done = annotated(tmp_path, sample, results)
    assert done.notes == sum(len(r["findings"]) for r in results)
    assert after != before
    assert without_notes_text(after.decode("utf-8")).encode("utf-8") == before


def strip_gendertrace_notes(root: ET.Element) -> None:
    """Remove the notes (and a 2.x <notes> left empty) with the line break and indentation before each."""
    parents = {c: p for p in root.iter() for c in p}

    def drop(el: ET.Element) -> None:
        parent = parents[el]
        kids = list(parent)
        k = kids.index(el)
        before = kids[k - 1].tail if k else parent.text
        before = before or ""
        cut = before[: before.rfind("\n")] if "\n" in before else before
        merged = cut + (el.tail or "")
        if k:
            kids[k - 1].tail = merged
        else:
            parent.text = merged
        parent.remove(el)

    for note in [n for n in root.iter() if n.tag.endswith("}note")]:
        if note.get("from") == "gendertrace" or note.get("category") == "gendertrace":
            drop(note)
    for notes in [n for n in root.iter() if n.tag == f"{{{NS20}}}notes" and len(n) == 0]:
        drop(notes)


def canonical(data: bytes, strip: bool) -> str:
    root = ET.fromstring(data, parser=ET.XMLParser(target=ET.TreeBuilder(insert_comments=True)))
    if strip:
        strip_gendertrace_notes(root)
    return ET.canonicalize(ET.tostring(root, encoding="unicode"), with_comments=True)


@pytest.mark.parametrize("sample, results", [(XLIFF12, RESULTS12), (XLIFF20, RESULTS20),
                                             (XLIFF20_PREFIXED, RESULTS20_PREFIXED)],
                         ids=["1.2", "2.0", "2.0-prefixed"])
def test_canonical_xml_is_unchanged_once_the_notes_are_removed(tmp_path, sample, results):
    before, after, _ = annotated(tmp_path, sample, results)
    assert canonical(after, strip=False) != canonical(before, strip=False)
    assert canonical(after, strip=True) == canonical(before, strip=False)


def test_xliff12_notes_land_on_their_units_as_an_independent_parser_reads_them(tmp_path):
    before, after, _ = annotated(tmp_path, XLIFF12, RESULTS12)
    old = tt_xliff.xlifffile.parsestring(before)
    new = tt_xliff.xlifffile.parsestring(after)
    # translate-toolkit ids are "<file original>\x04<trans-unit id>" for files with several <file>s.
    notes = {u.getid(): u.getnotes(origin="gendertrace") for u in new.units}
    assert re.findall(r"\((f\d-\d)\)", notes["harbour-note\x04t1"]) == ["f1-2"]
    assert re.findall(r"\((f\d-\d)\)", notes["harbour-note\x04t2"]) == ["f1-1", "f1-3"]
    assert re.findall(r"\((f\d-\d)\)", notes["ward-note\x04t1"]) == ["f2-1"]
    assert notes["harbour-note\x04t3"] == ""
    # The reviewer's own note is still there, and sources and targets are what they were.
    assert "Check the pronoun." in new.units[1].getnotes(origin="reviewer")
    assert [(u.getid(), u.source, u.target) for u in new.units] == [(u.getid(), u.source, u.target)
                                                                     for u in old.units]
    # The contradiction's note carries the corrected form ("He" for a woman: "She"); the inconsistency,
    # which has no expected gender, none.
    assert "Suggested form: 'She'." in notes["harbour-note\x04t2"].split("inconsistency")[0]
    assert notes["harbour-note\x04t2"].count("Suggested form") == 1
    # Markup in a message arrives as text (XML escaping), not as elements.
    assert "'He' makes Ilune <Garaikoa> & more masc" in notes["harbour-note\x04t2"]


def test_xliff12_note_follows_the_target_as_the_content_model_requires(tmp_path):
    _, after, _ = annotated(tmp_path, XLIFF12, RESULTS12)
    root = ET.fromstring(after)
    unit = root.find(f".//{{{NS12}}}trans-unit[@id='t1']")
    # XLIFF 1.2 specification, <trans-unit>: source, seg-source?, target?, then notes, alt-trans and others.
    assert [c.tag.split("}")[1] for c in unit] == ["source", "target", "note", "alt-trans"]


def test_xliff2_notes_go_in_the_units_notes_element(tmp_path):
    before, after, done = annotated(tmp_path, XLIFF20, RESULTS20)
    assert (done.notes, done.units) == (2, 2)
    new = tt_xliff2.Xliff2File.parsestring(after)
    old = tt_xliff2.Xliff2File.parsestring(before)
    assert [(u.getid(), u.source, u.target) for u in new.units] == [(u.getid(), u.source, u.target)
                                                                     for u in old.units]
    # translate-toolkit exposes segments as units; their parent is the XLIFF <unit> that holds the notes.
    by_unit = {}
    for u in new.units:
        unit = u.getunitelement()
        notes = unit.find(f"{{{NS20}}}notes")
        texts = [] if notes is None else [n.text for n in notes if n.get("category") == "gendertrace"]
        by_unit[unit.get("id")] = texts
    assert [re.findall(r"\((f\d-\d)\)", t)[0] for t in by_unit["u1"]] == ["f1-1"]
    assert [re.findall(r"\((f\d-\d)\)", t)[0] for t in by_unit["u2"]] == ["f1-2"]
    assert by_unit["u3"] == []
    root = ET.fromstring(after)
    u1 = root.find(f".//{{{NS20}}}unit[@id='u1']")
    u2 = root.find(f".//{{{NS20}}}unit[@id='u2']")
    # XLIFF 2.0 specification, <unit>: at most one <notes>, before <originalData> and the segments.
    assert [c.tag.split("}")[1] for c in u1] == ["notes", "originalData", "segment", "ignorable", "segment"]
    assert [c.get("category") for c in u1.find(f"{{{NS20}}}notes")] == ["client", "gendertrace"]
    assert [c.tag.split("}")[1] for c in u2] == ["notes", "segment"]


def test_new_elements_use_the_files_namespace_prefix(tmp_path):
    _, after, _ = annotated(tmp_path, XLIFF20_PREFIXED, RESULTS20_PREFIXED)
    assert b'<x:notes>\n        <x:note category="gendertrace" appliesTo="target">' in after
    unit = ET.fromstring(after).find(f".//{{{NS20}}}unit")
    assert unit.find(f"{{{NS20}}}notes/{{{NS20}}}note") is not None


def test_a_unit_on_one_line_gets_its_note_on_that_line(tmp_path):
    _, after, _ = annotated(tmp_path, XLIFF12, RESULTS12)
    line = next(x for x in after.decode().splitlines() if "ward-note" in x)
    assert "</target><note from=\"gendertrace\" annotates=\"target\">contradiction (f2-1)" in line


def test_findings_without_a_unit_are_reported_not_written(tmp_path):
    results = [result("harbour-note", [finding("t9", 0, 2, "He")]),
               result("elsewhere", [finding("1", 0, 1, "X")])]
    before, after, done = annotated(tmp_path, XLIFF12, results)
    assert (done.notes, done.units) == (0, 0)
    assert [f.seg_id for f in done.unplaced] == ["t9", "1"]
    assert after == before


def test_utf16_file_is_written_back_in_utf16_with_its_byte_order_mark(tmp_path):
    sample = XLIFF12.replace('encoding="UTF-8"', 'encoding="UTF-16"')
    before, after, done = annotated(tmp_path, sample, RESULTS12, encoding="utf-16-le", bom=b"\xff\xfe")
    assert done.notes == 4
    assert after.startswith(b"\xff\xfe")
    text = after[2:].decode("utf-16-le")
    assert without_notes_text(text) == sample
    assert "(f1-1)" in text


def test_notes_follow_the_findings_order_within_a_unit(tmp_path):
    xliff = read_xliff(_write(tmp_path, XLIFF12))
    res = write_jsonl(tmp_path / "r.jsonl", RESULTS12)
    data, _ = annotate(xliff, load_review(res, read_corpus(tmp_path / "a.xlf")))
    text = data.decode()
    assert text.index("(f1-1)") < text.index("(f1-3)") < text.index("Check the pronoun.")


def _write(tmp_path, sample):
    path = tmp_path / "a.xlf"
    path.write_text(sample, encoding="utf-8")
    return path
