"""Policies: what a run does with neutral language, declarations, assumptions and first names.

A policy is a client's or editor's choice, not a fact about anyone; it is recorded in the run signature.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

import yaml

from gendertrace.errors import InputError
from gendertrace.io.yamlmarks import key_lines, yaml_error

NEUTRAL_CHOICES = ("accept", "flag")
ASSUMPTION_KINDS = ("named", "roles", "other")  # named persons, role nouns, entities known only by pronouns


@dataclass(frozen=True)
class Policy:
    """neutral_for_binary: a neutral target form for an entity with binary evidence is accepted or flagged.
    gendered_for_nonbinary: gendered target forms for a person declared neutral (non-binary) are findings.
    assumptions: the entity kinds whose assumption findings are shown.
    first_names: a name list (TSV: name, fem|masc) used as weak evidence, or "package" for the list of the
        gender-guesser package from the package index; None (the default): no first names.
    """

    neutral_for_binary: str = "accept"
    gendered_for_nonbinary: bool = True
    assumptions: tuple[str, ...] = ASSUMPTION_KINDS
    first_names: str | None = None

    def __post_init__(self) -> None:
        if self.neutral_for_binary not in NEUTRAL_CHOICES:
            raise ValueError(f"neutral_for_binary: expected accept or flag, not {self.neutral_for_binary!r}")
        bad = [k for k in self.assumptions if k not in ASSUMPTION_KINDS]
        if bad:
            raise ValueError(
                f"assumptions: unknown entity kind {bad[0]!r} (expected {', '.join(ASSUMPTION_KINDS)})"
            )

    def to_json(self) -> dict:
        return {**asdict(self), "assumptions": list(self.assumptions)}

    def digest(self) -> str:
        return hashlib.sha256(json.dumps(self.to_json(), sort_keys=True).encode()).hexdigest()[:12]

    def describe(self) -> list[str]:
        return [
            f"neutral target form for binary evidence: {self.neutral_for_binary}",
            "gendered forms for a person declared non-binary: "
            + ("finding" if self.gendered_for_nonbinary else "accepted"),
            f"assumption findings shown for: {', '.join(self.assumptions) or 'none'}",
            f"first names as weak evidence: {self.first_names or 'off'}",
        ]


def load_policy(path: str | Path, base: Policy | None = None) -> Policy:
    """A policy from YAML (keys as in Policy); keys not given keep `base`'s values; InputError if bad."""
    p = Path(path)
    text = ""
    try:
        text = p.read_text(encoding="utf-8")
        data = yaml.safe_load(text)
    except OSError as exc:
        raise InputError(str(p), None, f"cannot read the policy: {exc.strerror}") from exc
    except UnicodeDecodeError as exc:
        raise InputError(str(p), None, f"not valid UTF-8 at byte {exc.start}") from exc
    except yaml.YAMLError as exc:
        raise yaml_error(str(p), exc, text) from exc
    marks = key_lines(text)
    if marks.duplicates:
        keys, line = marks.duplicates[0]
        raise InputError(str(p), line, f"{keys[0]}: key given twice (the second would silently replace the "
                                       f"first)")
    if data is None:
        data = {}
    if not isinstance(data, dict):
        raise InputError(str(p), None, f"expected a mapping of policy keys, found {type(data).__name__}")
    base = base or Policy()
    values: dict[str, Any] = asdict(base)
    for key, value in data.items():
        line = marks.line((key,))
        if key not in values:
            raise InputError(str(p), line, f"{key}: unknown policy key (expected {', '.join(values)})")
        if key == "gendered_for_nonbinary" and not isinstance(value, bool):
            raise InputError(str(p), line, f"{key}: expected true or false, found {value!r}")
        if key == "assumptions":
            if isinstance(value, str):
                value = [] if value == "none" else list(ASSUMPTION_KINDS) if value == "all" else [value]
            if not isinstance(value, list):
                raise InputError(str(p), line, f"{key}: expected a list of {', '.join(ASSUMPTION_KINDS)}")
            value = tuple(value)
        if key == "first_names" and value is not None and value != PACKAGE_NAME_LIST:
            value = (
                str((p.parent / str(value)).resolve()) if not Path(str(value)).is_absolute() else str(value)
            )
        values[key] = value
    try:
        return Policy(**values)
    except ValueError as exc:
        raise InputError(str(p), None, str(exc)) from exc


# `first_names: package` takes the list from the gender-guesser package (its name dictionary ships inside the
# package, offline): an optional extra, `pip install 'gendertrace[names]'`.
PACKAGE_NAME_LIST = "package"
_GUESSER_GENDERS = {"female": "fem", "mostly_female": "fem", "male": "masc", "mostly_male": "masc"}


class _PackageNames:
    """Mapping-like lookup of first names in the gender-guesser package; 'andy' and unknown names give nothing."""

    def __init__(self) -> None:
        try:
            from gender_guesser.detector import Detector
        except ImportError as exc:
            raise InputError(PACKAGE_NAME_LIST, None, "first_names: package needs the gender-guesser package "
                             "(pip install 'gendertrace[names]')") from exc
        self._detector = Detector(case_sensitive=False)
        self._cache: dict[str, str | None] = {}

    def _gender(self, name: str) -> str | None:
        if name not in self._cache:
            self._cache[name] = _GUESSER_GENDERS.get(self._detector.get_gender(name))
        return self._cache[name]

    def __contains__(self, name: object) -> bool:
        return isinstance(name, str) and self._gender(name) is not None

    def __getitem__(self, name: str) -> str:
        gender = self._gender(name)
        if gender is None:
            raise KeyError(name)
        return gender

    def __bool__(self) -> bool:
        return True


def load_first_names(path: str):
    """A first-name lookup: `package` (the gender-guesser package's list), or a file with one
    'name<TAB>fem|masc' per line ('#' comments); InputError names the line."""
    if path == PACKAGE_NAME_LIST:
        return _PackageNames()
    out: dict[str, str] = {}
    try:
        lines = Path(path).read_text(encoding="utf-8").splitlines()
    except OSError as exc:
        raise InputError(path, None, f"cannot read the first-name list: {exc.strerror}") from exc
    for n, line in enumerate(lines, 1):
        if not line.strip() or line.startswith("#"):
            continue
        parts = line.split("\t")
        if len(parts) != 2 or parts[1].strip() not in ("fem", "masc"):
            raise InputError(path, n, f"expected 'name<TAB>fem|masc', found {line!r}")
        out[parts[0].strip().lower()] = parts[1].strip()
    return out
