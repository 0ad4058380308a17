"""stanza backend: UD parses for languages without a spaCy pipeline, when stanza and its models are installed.

stanza is an optional extra (`pip install 'gendertrace[stanza]'`). Models are never downloaded by this module:
they must already be in the stanza resources folder (`STANZA_RESOURCES_DIR`, or stanza's default).
"""

from __future__ import annotations

import json
import os
from collections.abc import Sequence
from pathlib import Path

from gendertrace.errors import ModelError
from gendertrace.model import ParsedText, Token
from gendertrace.parse.labels import normalise_deprel, normalise_entity

# Processors the internal model needs, in pipeline order; mwt and ner are used when the language has them.
REQUIRED_PROCESSORS: tuple[str, ...] = ("tokenize", "pos", "lemma", "depparse")
OPTIONAL_PROCESSORS: tuple[str, ...] = ("mwt", "ner")
_ORDER: tuple[str, ...] = ("tokenize", "mwt", "pos", "lemma", "depparse", "ner")

PACKAGE_HINT = "install it with pip install 'gendertrace[stanza]', after installing a CPU build of torch"
MODEL_HINT = (
    "models are never downloaded at run time: on a machine with network access run "
    "python -c \"import stanza; stanza.download('{lang}', package='{package}')\", "
    "copy the resources folder here and point STANZA_RESOURCES_DIR at it"
)


def package_name(lang: str, override: str | None = None) -> str:
    """The stanza package to load for `lang`: the override, else GENDERTRACE_STANZA_<LANG>, else 'default'."""
    return override or os.environ.get(f"GENDERTRACE_STANZA_{lang.upper()}") or "default"


def resources_dir() -> Path:
    """The folder stanza models are read from (read at call time, so a changed environment is honoured)."""
    env = os.environ.get("STANZA_RESOURCES_DIR")
    if env:
        return Path(env)
    from stanza.resources.common import DEFAULT_MODEL_DIR

    return Path(DEFAULT_MODEL_DIR)


class StanzaParser:
    """Parses with a locally installed stanza pipeline; construction raises ModelError, never downloads."""

    def __init__(self, lang: str, model: str | None = None) -> None:
        stanza = _import_stanza()
        self.lang = lang
        self.package = package_name(lang, model)
        self.dir = resources_dir()
        processors = _available_processors(self.dir, lang, self.package)
        hint = MODEL_HINT.format(lang=lang, package=self.package)
        try:
            self.nlp = stanza.Pipeline(
                lang,
                dir=str(self.dir),
                package=self.package,
                processors=",".join(processors),
                download_method=None,  # models cannot be fetched at run time: fail instead of trying
                logging_level="WARN",
            )
        except Exception as exc:  # stanza signals missing parts with FileNotFoundError, ValueError or its own
            raise ModelError(
                f"cannot load stanza models for {lang!r} (package {self.package!r}) from {self.dir}: {exc}; "
                f"{hint}"
            ) from exc
        self.version = stanza.__version__
        self.name = f"stanza-{lang}-{self.package}"
        self.processors = tuple(processors)

    @classmethod
    def from_pipeline(
        cls, lang: str, nlp: object, package: str = "custom", version: str = "?"
    ) -> StanzaParser:
        """Wrap a stanza pipeline that the caller built (anything with `bulk_process(list[str])`)."""
        self = cls.__new__(cls)
        self.lang, self.package, self.nlp, self.version = lang, package, nlp, version
        self.dir = Path()
        self.name = f"stanza-{lang}-{package}"
        self.processors = ()
        return self

    def signature(self) -> str:
        return f"stanza:{self.lang}:{self.package}=={self.version}"

    def parse_many(self, texts: Sequence[str]) -> list[ParsedText]:
        """One ParsedText per text, in order; empty texts (untranslated segments) get no tokens."""
        out: list[ParsedText | None] = [None] * len(texts)
        todo = [k for k, t in enumerate(texts) if t.strip()]
        if todo:
            docs = self.nlp.bulk_process([texts[k] for k in todo])  # type: ignore[attr-defined]
            for k, doc in zip(todo, docs, strict=True):
                out[k] = stanza_doc_to_parsed(doc, self.lang)
        return [p if p is not None else ParsedText(texts[k], (), self.lang) for k, p in enumerate(out)]

    def parse(self, text: str) -> ParsedText:
        return self.parse_many([text])[0]


def _import_stanza():
    try:
        import stanza
    except ImportError as exc:
        raise ModelError(
            f"the stanza backend needs the stanza package, which is not importable ({exc}); {PACKAGE_HINT}"
        ) from exc
    return stanza


def _available_processors(folder: Path, lang: str, package: str) -> list[str]:
    """The processors to request, read from the local resources.json; ModelError naming what is missing."""
    hint = MODEL_HINT.format(lang=lang, package=package)
    index = folder / "resources.json"
    try:
        resources = json.loads(index.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ModelError(f"no stanza resources index at {index} ({exc.strerror}); {hint}") from exc
    except ValueError as exc:
        raise ModelError(f"stanza resources index {index} is not valid JSON ({exc}); {hint}") from exc
    entry = resources.get(lang)
    while isinstance(entry, dict) and "alias" in entry:
        entry = resources.get(entry["alias"])
    if not isinstance(entry, dict):
        raise ModelError(f"stanza resources index {index} has no language {lang!r}; {hint}")
    missing = [p for p in REQUIRED_PROCESSORS if p not in entry]
    if missing:
        raise ModelError(
            f"stanza resources for {lang!r} in {folder} lack the processors {', '.join(missing)}; {hint}"
        )
    return [p for p in _ORDER if p in REQUIRED_PROCESSORS or (p in OPTIONAL_PROCESSORS and p in entry)]


def stanza_doc_to_parsed(doc, lang: str) -> ParsedText:
    """Convert a stanza Document (one segment) into the internal model.

    Token indices run over the whole segment; heads point inside it; sentence k of the document gives
    `sent=k`. Features are parsed into a dict, relations normalised to UD, persons tagged "PER". Words of a
    multiword token get the token's character span. Offsets index the document text; when the document
    carries no text (one read from CoNLL-U without reconstruction) the text is the sentences' texts joined by
    a space and the offsets are found by locating each token in it.
    """
    sentences = list(doc.sentences)
    text = doc.text if doc.text is not None else " ".join(_sentence_text(s) for s in sentences)
    tokens: list[Token] = []
    cursor = 0
    for sent_no, sent in enumerate(sentences):
        base = len(tokens)
        n_words = len(sent.words)
        for tok in sent.tokens:
            start, end = _token_span(text, tok, cursor)
            cursor = end
            ent = normalise_entity(_entity_type(tok.ner))
            for word in tok.words:
                local = word.id - 1
                head = word.head
                if head is None or head == 0:
                    head_index = base + local
                elif 1 <= head <= n_words:
                    head_index = base + head - 1
                else:
                    raise ValueError(
                        f"stanza word {word.id} {word.text!r} has head {head} outside its sentence"
                    )
                tokens.append(
                    Token(
                        i=base + local,
                        text=word.text,
                        lemma=word.lemma if word.lemma not in (None, "_") else word.text,
                        upos=word.upos or "_",
                        feats=_feats(word.feats),
                        head=head_index,
                        deprel=normalise_deprel(word.deprel or "_"),
                        start=start,
                        end=end,
                        sent=sent_no,
                        ent=ent,
                    )
                )
    return ParsedText(text, tuple(tokens), lang)


def _sentence_text(sent) -> str:
    if sent.text:
        return sent.text
    # No `# text`: rebuild it from the tokens and their SpaceAfter marks.
    parts = []
    for tok in sent.tokens:
        parts.append(tok.text)
        parts.append("" if "SpaceAfter=No" in (tok.misc or "") else " ")
    return "".join(parts).rstrip()


def _token_span(text: str, tok, cursor: int) -> tuple[int, int]:
    """The token's own offsets when they fit the text, else its next occurrence from the cursor."""
    start, end = tok.start_char, tok.end_char
    if start is not None and end is not None and start >= cursor and text[start:end] == tok.text:
        return start, end
    at = text.find(tok.text, cursor)
    if at < 0 or text[cursor:at].strip():
        # Not found right after the cursor (a normalised form): place it at the next non-space character.
        at = cursor + (len(text[cursor:]) - len(text[cursor:].lstrip()))
    return at, min(at + len(tok.text), len(text))


def _entity_type(tag: str | None) -> str:
    """The entity type of a BIOES/BIO tag ("S-PER" -> "PER"); "" outside entities."""
    if not tag or tag == "O" or "-" not in tag:
        return ""
    return tag.split("-", 1)[1]


def _feats(value: str | None) -> dict[str, str]:
    if not value or value == "_":
        return {}
    out = {}
    for pair in value.split("|"):
        name, _, val = pair.partition("=")
        if name and val:
            out[name] = val
    return out
