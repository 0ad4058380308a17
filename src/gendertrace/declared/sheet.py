"""The entity sheet: persons a client names, with the pronouns or gender they have declared.

A sheet is YAML, JSON or CSV (see docs/entities.md). Declared facts outrank every other evidence; they are
never inferred by the tool, only read from the sheet.
"""

from __future__ import annotations

import csv
import hashlib
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from gendertrace.errors import InputError
from gendertrace.mentions.extract import name_key

DECLARED_GENDERS = ("fem", "masc", "neutral")


@dataclass(frozen=True)
class DeclaredPerson:
    """One person of the sheet: a name, aliases, declared pronouns per language and/or a declared gender."""

    name: str
    aliases: tuple[str, ...] = ()
    pronouns: tuple[
        tuple[str, tuple[str, ...]], ...
    ] = ()  # (language, accepted forms in order of preference)
    gender: str | None = None
    note: str = ""

    @property
    def keys(self) -> tuple[str, ...]:
        return tuple(dict.fromkeys(name_key(n) for n in (self.name, *self.aliases)))

    def pronouns_for(self, lang: str) -> tuple[str, ...]:
        return next((forms for lg, forms in self.pronouns if lg == lang), ())

    def describe(self) -> str:
        parts = [f"{lg}: {' or '.join(forms)}" for lg, forms in self.pronouns]
        if self.gender:
            parts.append(f"gender: {self.gender}")
        return "; ".join(parts)


@dataclass(frozen=True)
class EntitySheet:
    """The persons of one sheet, and a digest of its content for the run signature."""

    persons: tuple[DeclaredPerson, ...]
    digest: str = ""
    path: str = ""

    def person_for(self, key: str) -> DeclaredPerson | None:
        """The person whose name or alias has this name key (see mentions.extract.name_key)."""
        k = name_key(key)
        return next((p for p in self.persons if k in p.keys), None)

    @property
    def name_keys(self) -> set[str]:
        return {k for p in self.persons for k in p.keys}


def _split_forms(value: Any, where: str, path: str, line: int | None) -> tuple[str, ...]:
    """'they/them', 'elle or ella', ['iel', 'elle']: the forms, lower-cased, first the preferred one."""
    if isinstance(value, str):
        chunks = [value]
    elif isinstance(value, list) and all(isinstance(v, str) for v in value):
        chunks = value
    else:
        raise InputError(path, line, f"{where}: expected pronoun forms such as 'they/them', found {value!r}")
    forms: list[str] = []
    for chunk in chunks:
        for alt in chunk.replace(",", " or ").split(" or "):
            forms.extend(f.strip().lower() for f in alt.split("/") if f.strip())
    if not forms:
        raise InputError(path, line, f"{where}: no pronoun forms in {value!r}")
    return tuple(dict.fromkeys(forms))


def _person(entry: Any, where: str, path: str, line: int | None) -> DeclaredPerson:
    if not isinstance(entry, dict):
        raise InputError(path, line, f"{where}: expected a mapping with 'name', found {entry!r}")
    unknown = set(entry) - {"name", "aliases", "pronouns", "gender", "note"}
    if unknown:
        raise InputError(
            path,
            line,
            f"{where}.{sorted(unknown)[0]}: unknown key (expected name, aliases, pronouns, gender, note)",
        )
    name = entry.get("name")
    if not isinstance(name, str) or not name.strip():
        raise InputError(path, line, f"{where}.name: expected a non-empty name, found {name!r}")
    aliases = entry.get("aliases") or []
    if isinstance(aliases, str):
        aliases = [a for a in (x.strip() for x in aliases.split(";")) if a]
    if not isinstance(aliases, list) or not all(isinstance(a, str) and a.strip() for a in aliases):
        raise InputError(path, line, f"{where}.aliases: expected a list of names, found {aliases!r}")
    pron = entry.get("pronouns") or {}
    if not isinstance(pron, dict):
        raise InputError(
            path, line, f"{where}.pronouns: expected language: forms (e.g. en: they/them), found {pron!r}"
        )
    pronouns = []
    for lang, forms in pron.items():
        if not (isinstance(lang, str) and 2 <= len(lang) <= 3 and lang.isalpha()):
            raise InputError(path, line, f"{where}.pronouns: expected a language code, found {lang!r}")
        pronouns.append((lang.lower(), _split_forms(forms, f"{where}.pronouns.{lang}", path, line)))
    gender = entry.get("gender") or None
    if gender is not None and gender not in DECLARED_GENDERS:
        raise InputError(path, line, f"{where}.gender: expected fem, masc or neutral, found {gender!r}")
    if not pronouns and gender is None:
        raise InputError(path, line, f"{where}: {name!r} declares neither pronouns nor a gender")
    return DeclaredPerson(
        name.strip(), tuple(a.strip() for a in aliases), tuple(pronouns), gender, str(entry.get("note") or "")
    )


def _from_csv(text: str, path: str) -> list[tuple[Any, int | None]]:
    """CSV columns: name, aliases (;-separated), gender, and pronouns_<lang> for each language."""
    rows = list(csv.DictReader(text.splitlines()))
    out = []
    for line, row in enumerate(rows, 2):
        if None in row:
            raise InputError(path, line, "more fields than the header has")
        entry: dict[str, Any] = {"pronouns": {}}
        for col, value in row.items():
            value = (value or "").strip()
            if col.startswith("pronouns_"):
                if value:
                    entry["pronouns"][col[len("pronouns_") :]] = value
            elif col in ("name", "aliases", "gender", "note"):
                if value:
                    entry[col] = value
            else:
                raise InputError(
                    path, 1, f"unknown column {col!r} (expected name, aliases, gender, note, pronouns_<lang>)"
                )
        out.append((entry, line))
    return out


def load_entity_sheet(path: str | Path) -> EntitySheet:
    """Read and validate an entity sheet (.yaml/.yml, .json or .csv); errors name file, line or key, value."""
    p = Path(path)
    try:
        raw = p.read_bytes()
        text = raw.decode("utf-8")
    except OSError as exc:
        raise InputError(str(p), None, f"cannot read the entity sheet: {exc.strerror}") from exc
    except UnicodeDecodeError as exc:
        raise InputError(str(p), None, f"not valid UTF-8 at byte {exc.start}") from exc
    suffix = p.suffix.lower()
    entries: list[tuple[Any, int | None]]
    if suffix == ".csv":
        entries = _from_csv(text, str(p))
    elif suffix in (".yaml", ".yml", ".json"):
        try:
            data = json.loads(text) if suffix == ".json" else yaml.safe_load(text)
        except json.JSONDecodeError as exc:
            raise InputError(str(p), exc.lineno, f"not valid JSON: {exc.msg}") from exc
        except yaml.YAMLError as exc:
            mark = getattr(exc, "problem_mark", None)
            raise InputError(
                str(p), mark.line + 1 if mark else None, f"not valid YAML: {getattr(exc, 'problem', exc)}"
            ) from exc
        if not isinstance(data, dict) or not isinstance(data.get("persons"), list):
            raise InputError(str(p), None, "expected a mapping with a list under 'persons'")
        entries = [(e, None) for e in data["persons"]]
    else:
        raise InputError(
            str(p), None, f"unknown entity sheet format {suffix!r} (expected .yaml, .json or .csv)"
        )
    persons = []
    seen: dict[str, str] = {}
    for k, (entry, line) in enumerate(entries):
        where = f"persons[{k}]" if line is None else "row"
        person = _person(entry, where, str(p), line)
        for key in person.keys:
            if key in seen and seen[key] != person.name:
                raise InputError(str(p), line, f"{where}: name {key!r} is already listed for {seen[key]!r}")
            seen[key] = person.name
        persons.append(person)
    return EntitySheet(tuple(persons), hashlib.sha256(raw).hexdigest()[:12], str(p))
