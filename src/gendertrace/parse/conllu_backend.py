"""CoNLL-U backend: pre-parsed input in any UD language, read with a light reader that knows its line numbers."""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.errors import InputError
from gendertrace.model import ParsedText, Token
from gendertrace.parse.labels import normalise_deprel


@dataclass
class ConlluSentence:
    """One sentence of a CoNLL-U file: its comments (sent_id, text, newdoc id...) and its parse."""

    sent_id: str
    text: str
    meta: dict[str, str]
    parsed: ParsedText
    line: int
    newdoc: str | None = None
    rows: list[list[str]] = field(default_factory=list, repr=False)


def _feats(value: str, path: str, line: int) -> dict[str, str]:
    if value in ("_", ""):
        return {}
    out = {}
    for pair in value.split("|"):
        if "=" not in pair:
            raise InputError(
                path, line, f"FEATS item {pair!r} is not Name=Value (UD guidelines, CoNLL-U format)"
            )
        k, v = pair.split("=", 1)
        out[k] = v
    return out


def _offsets(text: str, forms: Sequence[str]) -> list[tuple[int, int]]:
    """Character spans of consecutive surface forms in `text`; a form not found is placed at the cursor."""
    spans, pos = [], 0
    for form in forms:
        at = text.find(form, pos)
        if at < 0 or text[pos:at].strip():
            at = pos + (len(text[pos:]) - len(text[pos:].lstrip()))
        end = min(at + len(form), len(text))
        spans.append((at, end))
        pos = end
    return spans


def sentence_from_rows(
    rows: list[tuple[int, list[str]]], meta: dict[str, str], lang: str, path: str
) -> ParsedText:
    """Build a ParsedText from the 10-column rows of one sentence (multiword tokens give their span to their words)."""
    words: list[tuple[int, list[str]]] = []
    surface: list[tuple[str, list[int]]] = []  # surface form, indexes into words
    pending_range: tuple[int, int, str] | None = None
    for line, cols in rows:
        tid = cols[0]
        if "." in tid:
            continue  # empty nodes of enhanced dependencies carry no surface text
        if "-" in tid:
            a, b = tid.split("-")
            pending_range = (int(a), int(b), cols[1])
            surface.append((cols[1], []))
            continue
        n = int(tid)
        words.append((line, cols))
        if pending_range and pending_range[0] <= n <= pending_range[1]:
            surface[-1][1].append(len(words) - 1)
            if n == pending_range[1]:
                pending_range = None
        else:
            surface.append((cols[1], [len(words) - 1]))
    text = meta.get("text") or " ".join(form for form, _ in surface)
    spans = _offsets(text, [form for form, _ in surface])
    word_span: dict[int, tuple[int, int]] = {}
    for (_, idxs), span in zip(surface, spans, strict=True):
        for w in idxs:
            word_span[w] = span
    id_to_index = {cols[0]: k for k, (_, cols) in enumerate(words)}
    tokens, sent_no = [], 0
    for k, (line, cols) in enumerate(words):
        head_col = cols[6]
        if head_col == "0":
            head = k
        elif head_col in id_to_index:
            head = id_to_index[head_col]
        elif head_col == "_":
            head = k
        else:
            raise InputError(path, line, f"HEAD {head_col!r} names no word of this sentence")
        start, end = word_span[k]
        misc = cols[9]
        ent = "PER" if "NE=PER" in misc or "Entity=PER" in misc else ""
        tokens.append(
            Token(
                i=k,
                text=cols[1],
                lemma=cols[2] if cols[2] != "_" else cols[1],
                upos=cols[3],
                feats=_feats(cols[5], path, line),
                head=head,
                deprel=normalise_deprel(cols[7]),
                start=start,
                end=end,
                sent=sent_no,
                ent=ent,
            )
        )
    return ParsedText(text, tuple(tokens), lang)


def iter_conllu(path: str | Path, lang: str) -> Iterator[ConlluSentence]:
    """Read a CoNLL-U file sentence by sentence; malformed lines raise InputError with file and line."""
    path = str(path)
    try:
        # Binary, decoded line by line: a text-mode decode error surfaces per chunk and loses the line number.
        handle = open(path, "rb")
    except OSError as exc:
        raise InputError(path, None, f"cannot open: {exc.strerror}") from exc
    meta: dict[str, str] = {}
    rows: list[tuple[int, list[str]]] = []
    start_line = 1
    newdoc: str | None = None

    def flush() -> ConlluSentence:
        parsed = sentence_from_rows(rows, meta, lang, path)
        sid = meta.get("sent_id", f"{Path(path).name}:{start_line}")
        return ConlluSentence(sid, parsed.text, dict(meta), parsed, start_line, newdoc, [c for _, c in rows])

    with handle:
        for lineno, raw_bytes in enumerate(handle, 1):
            if lineno == 1 and raw_bytes.startswith(b"\xef\xbb\xbf"):
                raw_bytes = raw_bytes[3:]  # a byte order mark is not part of the first comment
            try:
                raw = raw_bytes.decode("utf-8")
            except UnicodeDecodeError as exc:
                raise InputError(
                    path, lineno, f"not valid UTF-8 ({exc.reason} at byte {exc.start} of the line)"
                ) from exc
            line = raw.rstrip("\n").rstrip("\r")
            if not line.strip():
                if rows:
                    yield flush()
                meta, rows, newdoc = {}, [], None
                start_line = lineno + 1
                continue
            restart = line.split("\t", 1)[0].split("-")[0] == "1" and any(c[0].isdigit() for _, c in rows)
            if rows and (line.startswith("#") or restart):
                raise InputError(path, lineno, f"a new sentence begins without the blank line that must end "
                                 f"sentence {meta.get('sent_id', '?')!r} (words from line {start_line}; CoNLL-U)")
            if line.startswith("#"):
                body = line[1:].strip()
                if "=" in body:
                    k, v = body.split("=", 1)
                    k, v = k.strip(), v.strip()
                    if k == "newdoc id":
                        newdoc = v
                    meta[k] = v
                continue
            cols = line.split("\t")
            if len(cols) != 10:
                raise InputError(
                    path, lineno, f"expected 10 tab-separated columns (CoNLL-U), found {len(cols)}"
                )
            tid = cols[0]
            if not (tid.isdigit() or ("-" in tid and tid.replace("-", "").isdigit()) or "." in tid):
                raise InputError(path, lineno, f"ID {tid!r} is not a word index, range or empty node")
            if not rows:
                start_line = lineno
            rows.append((lineno, cols))
        if rows:
            yield flush()


def read_conllu(path: str | Path, lang: str) -> list[ConlluSentence]:
    return list(iter_conllu(path, lang))


class ConlluParser:
    """A 'parser' that looks segments up in pre-parsed CoNLL-U files by their text (`# text` comment)."""

    def __init__(self, lang: str, paths: Sequence[str | Path]) -> None:
        self.lang = lang
        self.name = "conllu"
        self.paths = [str(p) for p in paths]
        self.by_text: dict[str, ParsedText] = {}
        for p in self.paths:
            for sent in iter_conllu(p, lang):
                self.by_text.setdefault(_norm(sent.text), sent.parsed)

    def signature(self) -> str:
        return "conllu:" + ",".join(Path(p).name for p in self.paths)

    def parse_many(self, texts: Sequence[str]) -> list[ParsedText]:
        out = []
        for text in texts:
            parsed = self.by_text.get(_norm(text))
            if parsed is None:
                raise InputError(
                    self.paths[0],
                    None,
                    f"no sentence with text {text[:60]!r} in the pre-parsed CoNLL-U input",
                )
            out.append(parsed)
        return out


def _norm(text: str) -> str:
    return " ".join(text.split())
