"""XML with positions: a light element tree whose every node and text run knows where it is in the file.

The XLIFF and TMX readers need more than a parsed tree: the plain text of a segment must be traceable back
to the bytes it came from, and the XLIFF writer inserts notes at exact byte positions without re-serialising
anything. The standard library's expat parser (the one beneath `xml.etree`) reports the byte index of every
event, which is all that takes.

Every file is parsed in a *working copy* encoded as UTF-8: UTF-8 files (with or without a byte order mark) are
their own working copy; UTF-16 and other encodings are transcoded once and written back in their own encoding.
Positions (`start`, `end`, `TextMap.locate`) are byte offsets into the working copy.
"""

from __future__ import annotations

import codecs
import re
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from xml.parsers import expat

from gendertrace.errors import InputError

XML_NS = "http://www.w3.org/XML/1998/namespace"

_DECLARED_ENCODING = re.compile(rb"""^<\?xml[^>]*?encoding\s*=\s*["']([A-Za-z0-9._-]+)["']""")


# ----------------------------------------------------------------------------------------------------
# The tree


@dataclass(frozen=True)
class XmlText:
    """A run of character data: its text after XML decoding and the bytes it came from."""

    text: str
    start: int
    end: int


@dataclass(eq=False)
class XmlNode:
    """An element: namespace, local name, attributes (namespaced ones keyed "uri local") and positions.

    `start` is the index of its '<', `start_tag_end` the index just past its start tag, `end_tag_start` the
    index of its end tag (equal to `start_tag_end` for an empty-element tag) and `end` the index just past the
    element.
    """

    ns: str
    name: str
    attrs: dict[str, str]
    start: int
    start_tag_end: int
    line: int
    column: int  # 1-based
    parent: XmlNode | None = None
    children: list[XmlNode | XmlText] = field(default_factory=list)
    empty: bool = False
    end_tag_start: int = -1
    end: int = -1

    def elements(self, ns: str | None = None, name: str | None = None) -> Iterator[XmlNode]:
        """Child elements, optionally only those of one namespace and local name."""
        for c in self.children:
            if isinstance(c, XmlNode) and (ns is None or c.ns == ns) and (name is None or c.name == name):
                yield c

    def first(self, ns: str, name: str) -> XmlNode | None:
        return next(self.elements(ns, name), None)

    def attr(self, name: str, ns: str = "") -> str | None:
        return self.attrs.get(f"{ns} {name}" if ns else name)


@dataclass(frozen=True)
class XmlSource:
    """A parsed file: its path, its working copy (UTF-8 bytes), its original encoding and its root element."""

    path: str
    data: bytes
    encoding: str  # Python codec name of the file as stored
    bom: bytes  # byte order mark the file started with (kept on write-back), b"" for none
    root: XmlNode

    def qname(self, node: XmlNode) -> str:
        """The element's name as written in the file, with its prefix if any."""
        m = re.match(rb"<([^\s/>]+)", self.data[node.start : node.start + 200])
        return m.group(1).decode("utf-8") if m else node.name

    def prefix_of(self, node: XmlNode) -> str:
        """The namespace prefix the element is written with, including the colon ("" for the default)."""
        q = self.qname(node)
        return q[: q.index(":") + 1] if ":" in q else ""

    def line_indent(self, pos: int) -> str | None:
        """The whitespace before `pos` on its line, or None when anything else comes first on that line."""
        line_start = self.data.rfind(b"\n", 0, pos) + 1
        lead = self.data[line_start:pos]
        if line_start == 0 or lead.strip(b" \t"):
            return None
        return lead.decode("ascii")

    def encode(self, text: str) -> bytes:
        """Bytes of the working copy for `text`, as the original encoding will be able to store it."""
        if self.encoding != "utf-8":
            text = text.encode(self.encoding, "xmlcharrefreplace").decode(self.encoding)
        return text.encode("utf-8")

    def to_original(self, working: bytes) -> bytes:
        """A working copy (possibly edited) back in the file's own encoding."""
        if self.encoding == "utf-8":
            return working
        return self.bom + working.decode("utf-8").encode(self.encoding)


# ----------------------------------------------------------------------------------------------------
# Plain text and its map back into the XML


@dataclass(frozen=True)
class TextPiece:
    """A stretch of plain text [start, end) that came from bytes [xml_start, xml_end) of the working copy.

    A literal piece maps character by character (the bytes are the characters themselves); any other piece
    (an entity or character reference, a line break normalised by the parser, a code point element) maps as a
    whole.
    """

    start: int
    end: int
    xml_start: int
    xml_end: int
    literal: bool
    text: str


@dataclass(frozen=True)
class TextMap:
    """Locates character offsets of a plain text in the XML it was extracted from."""

    pieces: tuple[TextPiece, ...] = ()

    def locate(self, start: int, end: int) -> tuple[int, int]:
        """The byte span of the working copy holding plain-text characters [start, end) (end exclusive).

        Raises ValueError when the span is empty or outside the text.
        """
        if not (0 <= start < end) or not self.pieces or end > self.pieces[-1].end:
            raise ValueError(f"span {start}-{end} is outside the text")
        return self._byte(start, first=True), self._byte(end - 1, first=False)

    def _byte(self, offset: int, first: bool) -> int:
        for p in self.pieces:
            if p.start <= offset < p.end:
                if not p.literal:
                    return p.xml_start if first else p.xml_end
                k = offset - p.start + (0 if first else 1)
                return p.xml_start + len(p.text[:k].encode("utf-8"))
        raise ValueError(f"offset {offset} is in no piece")  # pieces are contiguous, so this cannot happen


def flatten(
    src: XmlSource,
    node: XmlNode,
    dropped: Callable[[XmlNode], bool],
    replacement: Callable[[XmlNode], str | None] = lambda n: None,
) -> tuple[str, TextMap]:
    """The plain text inside `node` and its map.

    Elements for which `dropped` is true contribute nothing (placeholders, native codes); an element for which
    `replacement` gives a string contributes that string (mapped to the whole element); every other element
    contributes its text content.
    """
    parts: list[str] = []
    pieces: list[TextPiece] = []
    pos = 0

    def walk(n: XmlNode) -> None:
        nonlocal pos
        for c in n.children:
            if isinstance(c, XmlText):
                raw = src.data[c.start : c.end]
                literal = raw == c.text.encode("utf-8")
                add(c.text, c.start, c.end, literal)
            elif (rep := replacement(c)) is not None:
                add(rep, c.start, c.end, False)
            elif not dropped(c):
                walk(c)

    def add(text: str, xml_start: int, xml_end: int, literal: bool) -> None:
        nonlocal pos
        if not text:
            return
        parts.append(text)
        pieces.append(TextPiece(pos, pos + len(text), xml_start, xml_end, literal, text))
        pos += len(text)

    walk(node)
    return "".join(parts), TextMap(tuple(pieces))


# ----------------------------------------------------------------------------------------------------
# Parsing


def read_xml(path: str | Path) -> XmlSource:
    """Parse a file into a positioned tree. Malformed XML raises InputError with the line and column."""
    path_s = str(path)
    try:
        raw = Path(path).read_bytes()
    except OSError as exc:
        raise InputError(path_s, None, f"cannot open: {exc.strerror}") from exc
    encoding, bom = _encoding_of(path_s, raw)
    if encoding == "utf-8":
        data = raw
    else:
        try:
            data = raw[len(bom) :].decode(encoding).encode("utf-8")
        except UnicodeDecodeError as exc:
            line = raw[: exc.start].count(b"\n") + 1 if encoding != "utf-16-le" else None
            raise InputError(path_s, line, f"not valid {encoding} ({exc.reason})") from exc
    return XmlSource(path_s, data, encoding, bom, _Builder(path_s, data).parse())


def _encoding_of(path: str, raw: bytes) -> tuple[str, bytes]:
    """The Python codec of a file and its byte order mark: from the BOM, else the declaration, else UTF-8."""
    for bom, name in ((codecs.BOM_UTF8, "utf-8"), (codecs.BOM_UTF16_LE, "utf-16-le"),
                      (codecs.BOM_UTF16_BE, "utf-16-be")):
        if raw.startswith(bom):
            return name, bom
    if raw.startswith(b"<\x00?\x00"):
        return "utf-16-le", b""
    if raw.startswith(b"\x00<\x00?"):
        return "utf-16-be", b""
    m = _DECLARED_ENCODING.match(raw[:300])
    if not m:
        return "utf-8", b""
    declared = m.group(1).decode("ascii")
    try:
        name = codecs.lookup(declared).name
    except LookupError as exc:
        raise InputError(path, 1, f"unknown encoding {declared!r} in the XML declaration") from exc
    if name in ("utf-8", "ascii"):
        return "utf-8", b""
    if name.startswith("utf-16"):
        # Declared UTF-16 without a byte order mark is not something expat or Python can read reliably.
        raise InputError(path, 1, "UTF-16 declared but the file has no byte order mark")
    return name, b""


class _Builder:
    """Builds the positioned tree from expat's events."""

    def __init__(self, path: str, data: bytes) -> None:
        self.path, self.data = path, data
        # The encoding argument overrides the document's declaration: the working copy is always UTF-8.
        p = expat.ParserCreate(encoding="UTF-8", namespace_separator=" ")
        p.buffer_text = False  # one event per run, so that entity references stay runs of their own
        p.ordered_attributes = False
        p.StartElementHandler = self._start
        p.EndElementHandler = self._end
        p.CharacterDataHandler = self._text
        p.CommentHandler = lambda _: self._close_text()
        p.ProcessingInstructionHandler = lambda *_: self._close_text()
        p.StartCdataSectionHandler = self._close_text
        p.EndCdataSectionHandler = self._close_text
        p.EntityDeclHandler = self._entity_decl
        self.parser = p
        self.root: XmlNode | None = None
        self.stack: list[XmlNode] = []
        self.pending: tuple[str, int] | None = None  # text whose end is the next event's position

    def parse(self) -> XmlNode:
        try:
            self.parser.Parse(self.data, True)
        except expat.ExpatError as exc:
            raise InputError(
                self.path, exc.lineno,
                f"malformed XML at line {exc.lineno}, column {exc.offset + 1}: {expat.ErrorString(exc.code)}",
            ) from exc
        assert self.root is not None  # expat rejects a document without a root element
        return self.root

    def _close_text(self) -> None:
        if self.pending is not None:
            text, start = self.pending
            self.pending = None
            if self.stack:
                self.stack[-1].children.append(XmlText(text, start, self.parser.CurrentByteIndex))

    def _start(self, name: str, attrs: dict[str, str]) -> None:
        self._close_text()
        ns, _, local = name.rpartition(" ")
        start = self.parser.CurrentByteIndex
        tag_end = tag_end_at(self.data, start)
        node = XmlNode(ns, local, attrs, start, tag_end, self.parser.CurrentLineNumber,
                       self.parser.CurrentColumnNumber + 1, self.stack[-1] if self.stack else None)
        node.empty = self.data[tag_end - 2 : tag_end] == b"/>"
        if node.parent is not None:
            node.parent.children.append(node)
        else:
            self.root = node
        self.stack.append(node)

    def _end(self, name: str) -> None:
        self._close_text()
        node = self.stack.pop()
        if node.empty:
            node.end_tag_start = node.end = node.start_tag_end
        else:
            node.end_tag_start = self.parser.CurrentByteIndex
            node.end = tag_end_at(self.data, node.end_tag_start)

    def _text(self, text: str) -> None:
        self._close_text()
        self.pending = (text, self.parser.CurrentByteIndex)

    def _entity_decl(self, name: str, *_: object) -> None:
        # Translation files have no use for entity declarations, and they are the usual vector of expansion
        # attacks on untrusted XML.
        raise InputError(self.path, self.parser.CurrentLineNumber,
                         f"entity declaration {name!r} in the DTD: entity declarations are not accepted")


def tag_end_at(data: bytes, start: int) -> int:
    """The index just past the tag that opens at `start` (attribute values may hold '>')."""
    quote = 0
    for i in range(start + 1, len(data)):
        b = data[i]
        if quote:
            if b == quote:
                quote = 0
        elif b in (0x22, 0x27):  # " or '
            quote = b
        elif b == 0x3E:  # >
            return i + 1
    return len(data)


def escape_text(text: str) -> str:
    """Character data for XML: &, < and > escaped (> too, so that ']]>' can never occur)."""
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def escape_attr(text: str) -> str:
    return escape_text(text).replace('"', "&quot;")
