"""The scoring core's weights and thresholds, read once from rules/scoring/weights.yaml into frozen settings.

Every number that changes a score lives in that file, with a comment; `weights()` validates it (every key
present, no unknown key, each value a number in range) and `weights_digest()` goes into the run signature.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass, fields
from functools import cache
from pathlib import Path
from typing import Any

import yaml

from gendertrace.errors import RulesError
from gendertrace.rules.loader import rules_dir

WEIGHTS_FILE = Path("scoring") / "weights.yaml"


@dataclass(frozen=True)
class EvidenceWeights:
    pronoun: float
    clitic: float
    title: float
    lexical: float
    unmarked_noun: float
    determiner: float
    adjective: float
    predicate: float
    zero_masc_predicate: float
    declared: float
    first_name: float


@dataclass(frozen=True)
class ResolutionWeights:
    strength_scale: float


@dataclass(frozen=True)
class CoreferenceWeights:
    pronoun_window: int
    distance_certainty: tuple[float, ...]
    alternative_certainty: float
    thing_certainty: float
    alternative_margin: float


@dataclass(frozen=True)
class SalienceWeights:
    per_segment: float
    per_word: float
    per_word_cap: float
    subject: float
    nominal: float
    same_sentence: float
    relative_head: float
    possessive_own_subject: float
    possessive_relative_antecedent: float
    per_mention: float
    per_mention_cap: float
    known_gender: float


@dataclass(frozen=True)
class LinkWeights:
    name: float
    partial_name: float
    lexicon: float
    alignment: float
    projection: float
    chain: float
    narrator: float


@dataclass(frozen=True)
class FindingWeights:
    target_factor: float
    source_decisive: float
    segment_factor: float
    segment_unanimity: float
    direct_reach: float
    assumption_factor: float


@dataclass(frozen=True)
class PronounPairWeights:
    base: float
    same_case: float
    same_gender: float
    thing_penalty: float


@dataclass(frozen=True)
class RunDefaults:
    min_confidence: float
    batch_docs: int


@dataclass(frozen=True)
class Weights:
    """Every weight and threshold of the scoring core (rules/scoring/weights.yaml)."""

    evidence: EvidenceWeights
    resolution: ResolutionWeights
    coreference: CoreferenceWeights
    salience: SalienceWeights
    links: LinkWeights
    findings: FindingWeights
    pronoun_pairs: PronounPairWeights
    defaults: RunDefaults


# Values that are probabilities or confidences must lie in [0, 1]; the others must be positive.
_UNIT = {"distance_certainty", "alternative_certainty", "thing_certainty", "partial_name", "lexicon", "alignment",
         "projection", "chain", "name", "target_factor", "source_decisive", "segment_factor", "segment_unanimity",
         "direct_reach", "assumption_factor", "min_confidence"}


def _number(value: Any, kind: type, path: Path, key: str, unit: bool) -> Any:
    if isinstance(value, bool) or not isinstance(value, int if kind is int else (int, float)):
        raise RulesError(str(path), key, f"expected {'an integer' if kind is int else 'a number'}, found {value!r}")
    if value < 0 or (unit and value > 1) or (kind is int and value < 1):
        bound = "between 0 and 1" if unit else "at least 1" if kind is int else "at least 0"
        raise RulesError(str(path), key, f"expected a value {bound}, found {value!r}")
    return kind(value)


def _section(cls: type, data: Any, path: Path, where: str) -> Any:
    if not isinstance(data, dict):
        raise RulesError(str(path), where, f"expected a mapping, found {data!r}")
    names = [f.name for f in fields(cls)]
    unknown = sorted(set(data) - set(names))
    if unknown:
        raise RulesError(str(path), f"{where}.{unknown[0]}", "unknown key")
    values = {}
    for f in fields(cls):
        key = f"{where}.{f.name}"
        if f.name not in data:
            raise RulesError(str(path), key, "missing")
        raw = data[f.name]
        if f.type == "tuple[float, ...]":
            if not isinstance(raw, list) or not raw:
                raise RulesError(str(path), key, f"expected a list of numbers, found {raw!r}")
            values[f.name] = tuple(_number(x, float, path, f"{key}[{k}]", f.name in _UNIT)
                                   for k, x in enumerate(raw))
        else:
            values[f.name] = _number(raw, int if f.type == "int" else float, path, key, f.name in _UNIT)
    return cls(**values)


def parse_weights(data: Any, path: Path) -> Weights:
    """Validated weights from the YAML data of `path`; a RulesError names the file and the key."""
    if not isinstance(data, dict):
        raise RulesError(str(path), "(top level)", "expected a mapping of sections")
    sections = {f.name: f.type for f in fields(Weights)}
    unknown = sorted(set(data) - set(sections))
    if unknown:
        raise RulesError(str(path), unknown[0], "unknown section")
    types = {"evidence": EvidenceWeights, "resolution": ResolutionWeights, "coreference": CoreferenceWeights,
             "salience": SalienceWeights, "links": LinkWeights, "findings": FindingWeights,
             "pronoun_pairs": PronounPairWeights, "defaults": RunDefaults}
    for name in sections:
        if name not in data:
            raise RulesError(str(path), name, "missing section")
    return Weights(**{name: _section(types[name], data[name], path, name) for name in sections})


def weights_path() -> Path:
    return rules_dir() / WEIGHTS_FILE


@cache
def weights() -> Weights:
    """The weights of this process, read and validated once."""
    path = weights_path()
    try:
        data = yaml.safe_load(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise RulesError(str(path), "(file)", f"cannot read the weights file ({exc.strerror})") from exc
    except yaml.YAMLError as exc:
        raise RulesError(str(path), "(file)", f"not valid YAML ({exc})") from exc
    return parse_weights(data, path)


@cache
def weights_digest() -> str:
    """A short digest of the weights file, recorded in each run's signature."""
    return hashlib.sha256(weights_path().read_bytes()).hexdigest()[:12]


WEIGHTS = weights()
DEFAULT_MIN_CONFIDENCE: float = WEIGHTS.defaults.min_confidence
DEFAULT_BATCH_DOCS: int = WEIGHTS.defaults.batch_docs
