"""The input XLIFF written back with one note per finding on the unit it concerns, and nothing else changed.

The notes are inserted as text at byte positions recorded while reading (`NoteAnchor`), never by serialising
a tree, so every other element, attribute, inline code, comment, entity reference and whitespace survives
byte for byte. XLIFF 1.2 gets `<note from="gendertrace" annotates="target">` after the unit's target
(XLIFF 1.2 specification, <note>: attributes from, annotates); XLIFF 2.x gets
`<note category="gendertrace" appliesTo="target">` inside the unit's `<notes>`, which is created when missing
(XLIFF 2.0 specification, <notes> and <note>: attributes category, appliesTo).
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.io.xliff import XliffFile, XliffUnit, read_xliff
from gendertrace.io.xmltext import escape_text
from gendertrace.review.results import ReviewDocument, ReviewFinding

NOTE_FROM = "gendertrace"
# Characters XML 1.0 does not allow (XML 1.0 specification, "Char" production); results are untrusted input.
_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ud800-\udfff\ufffe\uffff]")


@dataclass(frozen=True)
class Annotation:
    """What a write-back did: notes written, units that got them, findings with no unit to go on."""

    notes: int
    units: int
    unplaced: tuple[ReviewFinding, ...]


def note_text(f: ReviewFinding) -> str:
    """The note for one finding: what, where, expected and found, confidence, message, evidence."""
    where = f"segment {f.seg_id}, characters {f.start}-{f.end} of the target"
    parts = [
        f"{f.kind} ({f.id}): '{f.text}' ({where}); expected {f.expected or 'nothing stated'}, "
        f"found {f.found or 'none'}; confidence {f.confidence:.2f}.",
    ]
    if f.message:
        parts.append(f.message.rstrip(".") + ".")
    if f.suggestion:
        parts.append(f"Suggested form: '{f.suggestion}'.")
    if f.evidence:
        parts.append("Evidence: " + f.evidence_summary() + ".")
    parts.append("An aid for the post-editor, not a verdict.")
    return " ".join(parts)


def _note_xml(xliff: XliffFile, prefix: str, f: ReviewFinding) -> str:
    if xliff.major == 1:
        attrs = f'from="{NOTE_FROM}" annotates="target"'
    else:
        attrs = f'category="{NOTE_FROM}" appliesTo="target"'
    text = _NOT_XML.sub("", note_text(f))
    return f"<{prefix}note {attrs}>{escape_text(text)}</{prefix}note>"


def _insertion(xliff: XliffFile, unit: XliffUnit, findings: list[ReviewFinding]) -> str:
    a = unit.anchor
    notes = [_note_xml(xliff, a.prefix, f) for f in findings]
    if not a.wrap:
        sep = "" if a.indent is None else "\n" + a.indent
        return "".join(sep + n for n in notes)
    if a.indent is None or a.inner_indent is None:
        return f"<{a.prefix}notes>" + "".join(notes) + f"</{a.prefix}notes>"
    inner = "".join("\n" + a.inner_indent + n for n in notes)
    return f"<{a.prefix}notes>{inner}\n{a.indent}</{a.prefix}notes>\n{a.indent}"


def annotate(xliff: XliffFile, documents: Sequence[ReviewDocument]) -> tuple[bytes, Annotation]:
    """The file's bytes with the notes inserted, and what was done."""
    per_unit: dict[int, tuple[XliffUnit, list[ReviewFinding]]] = {}
    unplaced: list[ReviewFinding] = []
    for d in documents:
        for f in d.findings:
            unit = xliff.unit_of(d.doc_id, f.seg_id)
            if unit is None:
                unplaced.append(f)
                continue
            per_unit.setdefault(unit.anchor.position, (unit, []))[1].append(f)
    data = xliff.source.data
    out: list[bytes] = []
    last = 0
    for position in sorted(per_unit):
        unit, findings = per_unit[position]
        out.append(data[last:position])
        out.append(xliff.source.encode(_insertion(xliff, unit, findings)))
        last = position
    out.append(data[last:])
    notes = sum(len(fs) for _, fs in per_unit.values())
    return xliff.source.to_original(b"".join(out)), Annotation(notes, len(per_unit), tuple(unplaced))


def write_annotated_xliff(input_path: str | Path, documents: Sequence[ReviewDocument],
                          out_path: str | Path) -> Annotation:
    """Read the XLIFF INPUT, add a note per finding, write OUT."""
    xliff = read_xliff(input_path)
    data, result = annotate(xliff, documents)
    try:
        Path(out_path).write_bytes(data)
    except OSError as exc:
        raise InputError(str(out_path), None, f"cannot write: {exc.strerror}") from exc
    return result
