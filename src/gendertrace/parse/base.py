"""The parser protocol and the factory that picks a backend by name."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Protocol

from gendertrace.model import ParsedText


class Parser(Protocol):
    """Parses many texts of one language at once; the single text is a special case."""

    name: str

    def parse_many(self, texts: Sequence[str]) -> list[ParsedText]: ...

    def signature(self) -> str: ...


def get_parser(lang: str, backend: str = "spacy", model: str | None = None) -> Parser:
    """A parser for `lang` from the named backend ("spacy" or "stanza"); `model` overrides the pipeline name."""
    if backend == "spacy":
        from gendertrace.parse.spacy_backend import SpacyParser

        return SpacyParser(lang, model)
    if backend == "stanza":
        from gendertrace.parse.stanza_backend import StanzaParser

        return StanzaParser(lang, model)
    raise ValueError(f"unknown parser backend {backend!r} (expected 'spacy' or 'stanza')")
