"""TMX input: each <tu> is a segment; the whole file is one document, or the units are grouped into documents
by a property.

What the reader promises:

- The source variant (<tuv>) is the one in the source language: `src_lang` if given, else the unit's or the
  header's `srclang`. The target variant is the one in `tgt_lang` if given, else the file's only other
  language (several other languages without `tgt_lang` raise InputError naming them). Languages match
  case-insensitively, and a bare primary subtag matches its regional variants ("es" matches "es-MX").
  The language is the `xml:lang` attribute of the <tuv> (TMX 1.4), or `lang` (TMX 1.1 and 1.2).
- A unit with no variant in the target language is kept with an empty target (counted as untranslated).
- Plain text: `hi` keeps its text; `bpt`, `ept`, `it`, `ph`, `ut` hold native code and give nothing
  (TMX 1.4b specification, "Inline elements"). Each segment keeps a `TextMap` into the XML.
- Grouping: with `group_by=None` the document id is the file name without its extension. With
  `group_by="x-document"` (any property type), each <tu> must carry `<prop type="x-document">ID</prop>`, and
  units with the same ID form one document, in order of first appearance.
- The segment id is the unit's `tuid`, else its position in its document (1, 2, ...).
- Malformed XML raises InputError with the file, line and column.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.io.xmltext import XML_NS, TextMap, XmlNode, XmlSource, flatten, read_xml
from gendertrace.model import Document, Segment

DEFAULT_GROUP_PROP = "x-document"  # the property type documented for grouping (docs/review.md)
DROPPED = frozenset({"bpt", "ept", "it", "ph", "ut"})


@dataclass(frozen=True)
class TmxSegment:
    seg_id: str
    source: str
    target: str | None
    source_map: TextMap
    target_map: TextMap | None
    line: int


@dataclass(frozen=True)
class TmxDocument:
    doc_id: str
    segments: tuple[TmxSegment, ...]


@dataclass(frozen=True)
class TmxFile:
    source: XmlSource
    src_lang: str
    tgt_lang: str
    documents: tuple[TmxDocument, ...]

    def to_documents(self) -> list[Document]:
        return [
            Document(
                d.doc_id,
                tuple(Segment(s.seg_id, s.source, s.target or "", None, s.line) for s in d.segments),
                origin=self.source.path,
            )
            for d in self.documents
        ]


def read_tmx(
    path: str | Path, src_lang: str | None = None, tgt_lang: str | None = None, group_by: str | None = None
) -> TmxFile:
    """Parse a TMX file into documents of one language direction."""
    src = read_xml(path)
    root = src.root
    if root.name != "tmx":
        raise InputError(src.path, root.line, f"root element is <{src.qname(root)}>: expected a TMX <tmx>")
    header = root.first("", "header")
    body = root.first("", "body")
    units = list(body.elements("", "tu")) if body is not None else []
    if not units:
        raise InputError(src.path, None, "no <tu> units: expected at least one segment")
    header_src = header.attr("srclang") if header is not None else None
    source_lang = src_lang or header_src
    if not source_lang or source_lang == "*all*":
        raise InputError(src.path, header.line if header is not None else None,
                         f"the header's srclang is {header_src!r}: name the source language")
    target_lang = tgt_lang or _only_other_language(src, units, source_lang)

    grouped: dict[str, list[TmxSegment]] = {}
    for tu in units:
        doc_id = _group_of(src, tu, group_by) if group_by else Path(src.path).stem
        segs = grouped.setdefault(doc_id, [])
        segs.append(_segment(src, tu, len(segs) + 1, tu.attr("srclang") if src_lang is None else None,
                             source_lang, target_lang))
    documents = []
    for doc_id, segs in grouped.items():
        _check_ids(src.path, doc_id, segs)
        documents.append(TmxDocument(doc_id, tuple(segs)))
    return TmxFile(src, source_lang, target_lang, tuple(documents))


def tmx_documents(path: str | Path, src_lang: str | None = None, tgt_lang: str | None = None,
                  group_by: str | None = None) -> list[Document]:
    return read_tmx(path, src_lang, tgt_lang, group_by).to_documents()


# ----------------------------------------------------------------------------------------------------


def _lang_of(tuv: XmlNode) -> str:
    return (tuv.attr("lang", XML_NS) or tuv.attr("lang") or "").strip()


def _matches(lang: str, wanted: str) -> bool:
    a, b = lang.lower(), wanted.lower()
    return a == b or a.split("-")[0] == b or b.split("-")[0] == a


def _pick(tuvs: list[XmlNode], wanted: str) -> XmlNode | None:
    exact = [t for t in tuvs if _lang_of(t).lower() == wanted.lower()]
    if exact:
        return exact[0]
    return next((t for t in tuvs if _matches(_lang_of(t), wanted)), None)


def _only_other_language(src: XmlSource, units: list[XmlNode], source_lang: str) -> str:
    others: dict[str, None] = {}
    for tu in units:
        for tuv in tu.elements("", "tuv"):
            lang = _lang_of(tuv)
            if lang and not _matches(lang, tu.attr("srclang") or source_lang):
                others.setdefault(lang, None)
    if len(others) != 1:
        found = ", ".join(others) or "none"
        raise InputError(src.path, None, f"cannot tell the target language: languages other than "
                         f"{source_lang!r} found: {found}; name the target language")
    return next(iter(others))


def _group_of(src: XmlSource, tu: XmlNode, prop_type: str) -> str:
    for prop in tu.elements("", "prop"):
        if prop.attr("type") == prop_type:
            value = "".join(c.text for c in prop.children if not isinstance(c, XmlNode)).strip()
            if value:
                return value
    raise InputError(src.path, tu.line, f"<tu> at line {tu.line}, column {tu.column} has no "
                     f"<prop type=\"{prop_type}\"> naming its document")


def _segment(src: XmlSource, tu: XmlNode, position: int, unit_srclang: str | None, source_lang: str,
             target_lang: str) -> TmxSegment:
    tuvs = list(tu.elements("", "tuv"))
    source_tuv = _pick(tuvs, unit_srclang or source_lang)
    if source_tuv is None:
        raise InputError(src.path, tu.line, f"<tu> at line {tu.line}, column {tu.column} has no <tuv> in the "
                         f"source language {source_lang!r}")
    target_tuv = _pick([t for t in tuvs if t is not source_tuv], target_lang)
    source, source_map = _seg_text(src, source_tuv)
    target, target_map = _seg_text(src, target_tuv) if target_tuv is not None else (None, None)
    seg_id = (tu.attr("tuid") or "").strip() or str(position)
    return TmxSegment(seg_id, source, target, source_map, target_map, tu.line)


def _seg_text(src: XmlSource, tuv: XmlNode) -> tuple[str, TextMap]:
    seg = tuv.first("", "seg")
    if seg is None:
        raise InputError(src.path, tuv.line, f"<tuv> at line {tuv.line}, column {tuv.column} has no <seg>")
    return flatten(src, seg, lambda n: n.name in DROPPED)


def _check_ids(path: str, doc_id: str, segs: list[TmxSegment]) -> None:
    seen: dict[str, int] = {}
    for s in segs:
        if s.seg_id in seen:
            raise InputError(path, s.line, f"tuid {s.seg_id!r} repeated in document {doc_id!r} (lines "
                             f"{seen[s.seg_id]} and {s.line}); expected each tuid once per document")
        seen[s.seg_id] = s.line
