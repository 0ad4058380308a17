"""XLIFF 1.2 and 2.x input: each <file> is a document, each translation unit (1.2 <trans-unit>, or each
<segment> of a 2.x <unit>) a segment.

What the reader promises:

- Source and target are reduced to plain text. Inline codes that wrap text keep it (1.2 `g`, `mrk`; 2.x `pc`,
  `mrk`); placeholders and native codes give nothing (1.2 `x`, `bx`, `ex`, `ph`, `bpt`, `ept`, `it`, `ut`;
  2.x `ph`, `sc`, `ec`, `sm`, `em`); a 2.x `cp` gives the character it stands for. Each segment keeps a
  `TextMap`, so an offset into its plain text can be located in the XML.
- A unit without a target (or with an empty one) is kept with an empty target: `is_untranslated` is true for
  it and the readers count it as untranslated.
- The document id is the file's `original` attribute (2.x: `original`, else `id`); a repeated one gets
  "#2", "#3"... The segment id is the 1.2 trans-unit `id`; in 2.x the unit `id` when the unit has one segment,
  else "unit/segment" with the segment's `id` (or its position).
- Malformed XML raises InputError naming the file, line and column; so does a file that is not XLIFF.
- Each unit records where notes can be inserted without breaking its content model (see `NoteAnchor`).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.io.xmltext import TextMap, XmlNode, XmlSource, flatten, read_xml
from gendertrace.model import Document, Segment

NS_PREFIX = "urn:oasis:names:tc:xliff:document:"
# Namespace of the XLIFF 2.0 core (XLIFF 2.0 specification, section 4.1; XLIFF 2.1 keeps it, from memory).
XLIFF2_NS = "urn:oasis:names:tc:xliff:document:2.0"

# Inline elements whose content is native code or nothing at all (XLIFF 1.2 specification, "Inline Elements").
DROPPED_12 = frozenset({"x", "bx", "ex", "ph", "bpt", "ept", "it", "ut"})
# XLIFF 2.0 specification, section 4.2.3 "Inline Elements": ph, sc, ec are empty codes; sm, em empty markers.
DROPPED_20 = frozenset({"ph", "sc", "ec", "sm", "em"})


@dataclass(frozen=True)
class NoteAnchor:
    """Where notes about a unit go, as a byte position in the working copy and the layout around it.

    XLIFF 1.2: after the unit's <target> (or <seg-source>, or <source>), where the trans-unit content
    model allows <note> (XLIFF 1.2 specification, <trans-unit>). XLIFF 2.x: at the end of the unit's <notes>,
    or, when it has none, a new <notes> right before its first <originalData>, <segment> or <ignorable>
    (XLIFF 2.0 specification, <unit>: notes come before originalData and the segments).
    """

    position: int
    indent: str | None  # whitespace of the line the notes go on; None when the unit is laid out on one line
    wrap: bool  # 2.x only: a <notes> element must be created around the notes
    inner_indent: str | None  # indentation of <note> inside a new <notes>
    prefix: str  # namespace prefix the unit's elements are written with ("" or "x:")


@dataclass(frozen=True)
class XliffSegment:
    seg_id: str
    source: str
    target: str | None  # None: the unit has no target element
    source_map: TextMap
    target_map: TextMap | None
    line: int
    column: int


@dataclass(frozen=True)
class XliffUnit:
    unit_id: str
    line: int
    segments: tuple[XliffSegment, ...]
    anchor: NoteAnchor


@dataclass(frozen=True)
class XliffDocument:
    doc_id: str
    src_lang: str | None
    tgt_lang: str | None
    units: tuple[XliffUnit, ...]

    def segments(self) -> list[XliffSegment]:
        return [s for u in self.units for s in u.segments]


@dataclass(frozen=True)
class XliffFile:
    source: XmlSource
    version: str  # "1.2", "2.0", "2.1"...
    documents: tuple[XliffDocument, ...]

    @property
    def major(self) -> int:
        return int(self.version.split(".")[0])

    def to_documents(self) -> list[Document]:
        """The documents in the project's model; units without a target get an empty target."""
        return [
            Document(
                d.doc_id,
                tuple(Segment(s.seg_id, s.source, s.target or "", None, s.line) for s in d.segments()),
                origin=self.source.path,
            )
            for d in self.documents
            if d.units
        ]

    def unit_of(self, doc_id: str, seg_id: str) -> XliffUnit | None:
        for d in self.documents:
            if d.doc_id == doc_id:
                for u in d.units:
                    if any(s.seg_id == seg_id for s in u.segments):
                        return u
        return None


def read_xliff(path: str | Path) -> XliffFile:
    """Parse an XLIFF 1.x or 2.x file."""
    src = read_xml(path)
    root = src.root
    if root.name != "xliff" or not (root.ns.startswith(NS_PREFIX) or root.ns == ""):
        raise InputError(src.path, root.line,
                         f"root element is <{src.qname(root)}>: expected an XLIFF <xliff>")
    version = root.attr("version") or (root.ns[len(NS_PREFIX):] if root.ns else "")
    if not version or version[0] not in "12":
        raise InputError(src.path, root.line,
                         f"XLIFF version {version!r} is not supported: expected 1.x or 2.x")
    reader = _Reader12(src) if version.startswith("1") else _Reader2(src)
    documents = reader.documents()
    if not any(d.units for d in documents):
        raise InputError(src.path, None, "no translation units: expected at least one segment")
    return XliffFile(src, version, tuple(documents))


def xliff_documents(path: str | Path) -> list[Document]:
    return read_xliff(path).to_documents()


# ----------------------------------------------------------------------------------------------------


class _Reader:
    unit_name = ""

    def __init__(self, src: XmlSource) -> None:
        self.src = src
        self.ns = src.root.ns
        self.doc_ids: dict[str, int] = {}

    def documents(self) -> list[XliffDocument]:
        return [self.document(k, f) for k, f in enumerate(self.src.root.elements(self.ns, "file"), 1)]

    def document(self, k: int, file: XmlNode) -> XliffDocument:
        raise NotImplementedError

    def doc_id(self, wanted: str) -> str:
        n = self.doc_ids.get(wanted, 0) + 1
        self.doc_ids[wanted] = n
        return wanted if n == 1 else f"{wanted}#{n}"

    def units_in(self, node: XmlNode) -> list[XmlNode]:
        """Units in document order, inside any depth of <group>."""
        out: list[XmlNode] = []
        for c in node.elements(self.ns):
            if c.name == self.unit_name:
                out.append(c)
            elif c.name in ("group", "body"):
                out.extend(self.units_in(c))
        return out

    def text(self, node: XmlNode, dropped: frozenset[str]) -> tuple[str, TextMap]:
        return flatten(self.src, node, lambda n: n.name in dropped, self.replacement)

    def replacement(self, node: XmlNode) -> str | None:
        return None

    def check_ids(self, doc_id: str, segments: list[XliffSegment]) -> None:
        seen: dict[str, int] = {}
        for s in segments:
            if s.seg_id in seen:
                raise InputError(self.src.path, s.line,
                                 f"segment id {s.seg_id!r} repeated in document {doc_id!r} (lines "
                                 f"{seen[s.seg_id]} and {s.line}); expected each id once per <file>")
            seen[s.seg_id] = s.line

    def required_id(self, node: XmlNode, fallback: int) -> str:
        uid = (node.attr("id") or "").strip()
        return uid or str(fallback)


class _Reader12(_Reader):
    unit_name = "trans-unit"

    def document(self, k: int, file: XmlNode) -> XliffDocument:
        doc_id = self.doc_id((file.attr("original") or "").strip() or f"file{k}")
        units = [self.unit(n, u) for n, u in enumerate(self.units_in(file), 1)]
        self.check_ids(doc_id, [s for u in units for s in u.segments])
        return XliffDocument(doc_id, file.attr("source-language"), file.attr("target-language"), tuple(units))

    def unit(self, n: int, node: XmlNode) -> XliffUnit:
        source = node.first(self.ns, "source")
        if source is None:
            raise InputError(self.src.path, node.line,
                             f"<trans-unit> at line {node.line}, column {node.column} has no <source>")
        target = node.first(self.ns, "target")
        src_text, src_map = self.text(source, DROPPED_12)
        tgt_text, tgt_map = self.text(target, DROPPED_12) if target is not None else (None, None)
        uid = self.required_id(node, n)
        seg = XliffSegment(uid, src_text, tgt_text, src_map, tgt_map, node.line, node.column)
        after = target or node.first(self.ns, "seg-source") or source
        indent = self.src.line_indent(after.start)
        anchor = NoteAnchor(after.end, indent, False, None, self.src.prefix_of(node))
        return XliffUnit(seg.seg_id, node.line, (seg,), anchor)


class _Reader2(_Reader):
    unit_name = "unit"

    def document(self, k: int, file: XmlNode) -> XliffDocument:
        root = self.src.root
        wanted = (file.attr("original") or "").strip() or (file.attr("id") or "").strip() or f"file{k}"
        doc_id = self.doc_id(wanted)
        units = [self.unit(n, u) for n, u in enumerate(self.units_in(file), 1)]
        units = [u for u in units if u.segments]
        self.check_ids(doc_id, [s for u in units for s in u.segments])
        return XliffDocument(doc_id, root.attr("srcLang"), root.attr("trgLang"), tuple(units))

    def replacement(self, node: XmlNode) -> str | None:
        if node.name != "cp":
            return None
        # <cp hex="..."/> stands for one Unicode character (XLIFF 2.0 specification, <cp>).
        try:
            return chr(int(node.attr("hex") or "", 16))
        except ValueError as exc:
            raise InputError(self.src.path, node.line, f"<cp hex={node.attr('hex')!r}>: expected a hex code "
                             f"point") from exc

    def unit(self, n: int, node: XmlNode) -> XliffUnit:
        uid = self.required_id(node, n)
        seg_nodes = list(node.elements(self.ns, "segment"))
        segments = []
        for k, s in enumerate(seg_nodes, 1):
            source = s.first(self.ns, "source")
            if source is None:
                raise InputError(self.src.path, s.line,
                                 f"<segment> at line {s.line}, column {s.column} has no <source>")
            target = s.first(self.ns, "target")
            src_text, src_map = self.text(source, DROPPED_20)
            tgt_text, tgt_map = self.text(target, DROPPED_20) if target is not None else (None, None)
            sid = uid if len(seg_nodes) == 1 else f"{uid}/{(s.attr('id') or '').strip() or k}"
            segments.append(XliffSegment(sid, src_text, tgt_text, src_map, tgt_map, s.line, s.column))
        anchor = self.anchor(node) if segments else NoteAnchor(node.start_tag_end, None, True, None, "")
        return XliffUnit(uid, node.line, tuple(segments), anchor)

    def anchor(self, unit: XmlNode) -> NoteAnchor:
        prefix = self.src.prefix_of(unit)
        notes = unit.first(self.ns, "notes")
        if notes is not None and not notes.empty:
            last = list(notes.elements(self.ns, "note"))
            if last:
                return NoteAnchor(last[-1].end, self.src.line_indent(last[-1].start), False, None, prefix)
            return NoteAnchor(notes.start_tag_end, None, False, None, prefix)
        first = next(c for c in unit.elements(self.ns) if c.name in ("originalData", "segment", "ignorable"))
        indent = self.src.line_indent(first.start)
        unit_indent = self.src.line_indent(unit.start)
        inner = None
        if indent is not None:
            nested = unit_indent is not None and indent.startswith(unit_indent)
            step = indent[len(unit_indent):] if nested and unit_indent is not None else ""
            inner = indent + (step or "  ")
        return NoteAnchor(first.start, indent, True, inner, prefix)
