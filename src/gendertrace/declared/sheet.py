"""The entity sheet: persons a client names, with the pronouns or gender they have declared.

A sheet is YAML, JSON or CSV (see docs/entities.md). Declared facts outrank every other evidence; they are
never inferred by the tool, only read from the sheet.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from gendertrace.errors import InputError
from gendertrace.io.yamlmarks import key_lines, yaml_error
from gendertrace.mentions.extract import name_key
from gendertrace.rules import load_rules
from gendertrace.rules.loader import rules_dir

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
    narrator: DeclaredPerson | None = None  # the first person of every document (YAML/JSON key `narrator`)

    def person_for(self, key: str) -> DeclaredPerson | None:
        """The person whose name or alias has this name key (see mentions.extract.name_key)."""
        k = name_key(key)
        return next((p for p in self.persons if k in p.keys), None)

    @property
    def name_keys(self) -> set[str]:
        return {k for p in self.persons for k in p.keys}


def known_languages() -> tuple[str, ...]:
    """The language codes that have a rules file (a declaration in another language could not be applied)."""
    return tuple(sorted(p.stem for p in rules_dir().glob("*.yaml") if p.stem.isalpha() and 2 <= len(p.stem) <= 3))


# Where a value of the sheet is: a function from its path of keys, e.g. ("persons", 0, "gender"), to its line.
Lines = Callable[[tuple[Any, ...]], int | None]


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


def _checked_forms(lang: str, forms: tuple[str, ...], where: str, path: str, line: int | None) -> None:
    """Every declared form must be a pronoun of the language's rules, and one of them must give a gender:
    a form the rules do not know could not be applied, and the declaration would vanish without a word."""
    rules = load_rules(lang)
    for form in forms:
        if not rules.pronoun(form):
            known = sorted(k for k, v in rules.pronouns.items() if any(f.type == "personal" for f in v))
            shown = ", ".join(known[:12]) + (", ..." if len(known) > 12 else "")
            raise InputError(path, line, f"{where}: unknown pronoun form {form!r} for {lang} (expected a "
                                         f"pronoun of the {lang} rules, such as {shown})")
    if not any(f.gender or f.singular_neutral for form in forms for f in rules.pronoun(form)):
        raise InputError(path, line, f"{where}: the forms {'/'.join(forms)!r} give no gender in the {lang} rules; "
                                     f"declare a gendered or a neutral form, or a gender")


def _person(entry: Any, where: str, path: str, lines: Lines, at: tuple[Any, ...]) -> DeclaredPerson:
    """One validated person; `at` is the entry's path of keys (its line comes from `lines`)."""
    line = lines(at)
    if not isinstance(entry, dict):
        raise InputError(path, line, f"{where}: expected a mapping with 'name', found {entry!r}")
    unknown = [k for k in entry if k not in ("name", "aliases", "pronouns", "gender", "note")]
    if unknown:
        raise InputError(
            path,
            lines((*at, unknown[0])),
            f"{where}.{unknown[0]}: unknown key (expected name, aliases, pronouns, gender, note)",
        )
    name = entry.get("name")
    if not isinstance(name, str) or not name.strip():
        raise InputError(path, lines((*at, "name")), f"{where}.name: expected a non-empty name, found {name!r}")
    aliases = entry.get("aliases") or []
    if isinstance(aliases, str):
        aliases = [a for a in (x.strip() for x in aliases.split(";")) if a]
    if not isinstance(aliases, list) or not all(isinstance(a, str) and a.strip() for a in aliases):
        raise InputError(path, lines((*at, "aliases")),
                         f"{where}.aliases: expected a list of names, found {aliases!r}")
    pron = entry.get("pronouns") or {}
    if not isinstance(pron, dict):
        raise InputError(
            path, lines((*at, "pronouns")),
            f"{where}.pronouns: expected language: forms (e.g. en: they/them), found {pron!r}"
        )
    pronouns = []
    languages = known_languages()
    for lang, forms in pron.items():
        here = lines((*at, "pronouns", lang))
        code = lang.lower() if isinstance(lang, str) else lang
        if code not in languages:
            raise InputError(path, here, f"{where}.pronouns: unknown language {lang!r} (rules exist for: "
                                         f"{', '.join(languages)})")
        if any(c == code for c, _ in pronouns):
            raise InputError(path, here, f"{where}.pronouns: language {lang!r} is given twice")
        split = _split_forms(forms, f"{where}.pronouns.{lang}", path, here)
        _checked_forms(code, split, f"{where}.pronouns.{lang}", path, here)
        pronouns.append((code, split))
    gender = entry.get("gender") or None
    if gender is not None and gender not in DECLARED_GENDERS:
        raise InputError(path, lines((*at, "gender")),
                         f"{where}.gender: expected fem, masc or neutral, found {gender!r}")
    if not pronouns and gender is None:
        raise InputError(path, line, f"{where}: {name!r} declares neither pronouns nor a gender")
    return DeclaredPerson(
        name.strip(), tuple(a.strip() for a in aliases), tuple(pronouns), gender, str(entry.get("note") or "")
    )


def _from_csv(text: str, path: str) -> list[tuple[Any, int]]:
    """CSV columns: name, aliases (;-separated), gender, and pronouns_<lang> for each language."""
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)
    try:
        header = next(reader, None)
        if header is None:
            raise InputError(path, None, "empty file: expected a header row with 'name'")
        columns = [c.strip() for c in header]
        for col in columns:
            if not (col in ("name", "aliases", "gender", "note") or col.startswith("pronouns_")):
                raise InputError(
                    path, 1, f"unknown column {col!r} (expected name, aliases, gender, note, pronouns_<lang>)"
                )
        languages = known_languages()
        for col in columns:
            if col.startswith("pronouns_") and col[len("pronouns_"):].lower() not in languages:
                raise InputError(path, 1, f"column {col!r}: unknown language {col[len('pronouns_'):]!r} "
                                          f"(rules exist for: {', '.join(languages)})")
        if len(set(columns)) < len(columns):
            twice = next(c for c in columns if columns.count(c) > 1)
            raise InputError(path, 1, f"column {twice!r} appears twice in the header")
        if "name" not in columns:
            raise InputError(path, 1, "missing column 'name' in the header")
        out = []
        start = reader.line_num + 1
        for cells in reader:
            line, start = start, reader.line_num + 1
            if not cells:
                continue
            if len(cells) != len(columns):
                raise InputError(path, line, f"expected {len(columns)} fields as in the header, "
                                             f"found {len(cells)}")
            entry: dict[str, Any] = {"pronouns": {}}
            for col, value in zip(columns, cells, strict=True):
                value = value.strip()
                if value and col.startswith("pronouns_"):
                    entry["pronouns"][col[len("pronouns_"):]] = value
                elif value:
                    entry[col] = value
            out.append((entry, line))
    except csv.Error as exc:
        raise InputError(path, reader.line_num, f"malformed CSV record ({exc})") from exc
    return out


def _unique_keys(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    keys = [k for k, _ in pairs]
    twice = next((k for k in keys if keys.count(k) > 1), None)
    if twice is not None:
        raise ValueError(f"key {twice!r} is given twice in one object")
    return dict(pairs)


def _from_mapping(text: str, path: str, suffix: str) -> tuple[list[tuple[Any, tuple[Any, ...]]], Lines]:
    """The persons of a YAML or JSON sheet with their paths, and the lines of its keys (the YAML loader's
    node marks; JSON is read by the YAML composer for its lines only)."""
    try:
        data = json.loads(text, object_pairs_hook=_unique_keys) if suffix == ".json" else yaml.safe_load(text)
    except json.JSONDecodeError as exc:
        raise InputError(path, exc.lineno, f"not valid JSON: {exc.msg}") from exc
    except ValueError as exc:  # a key given twice in one JSON object
        marks = key_lines(text)
        raise InputError(path, marks.duplicates[0][1] if marks.duplicates else None, str(exc)) from exc
    except yaml.YAMLError as exc:
        raise yaml_error(path, exc, text) from exc
    marks = key_lines(text)
    if marks.duplicates:
        keys, line = marks.duplicates[0]
        shown = ".".join(str(k) if isinstance(k, str) else f"[{k}]" for k in keys).replace(".[", "[")
        raise InputError(path, line, f"{shown}: key given twice (the second would silently replace the first)")
    if not isinstance(data, dict) or not isinstance(data.get("persons"), list):
        raise InputError(path, marks.line(("persons",)), "expected a mapping with a list under 'persons'")
    unknown = [k for k in data if k not in ("persons", "narrator")]
    if unknown:
        raise InputError(path, marks.line((unknown[0],)),
                         f"unknown top-level key {unknown[0]!r} (expected persons, narrator)")
    narrator = [(data["narrator"], ("narrator",))] if "narrator" in data else []
    return [(e, ("persons", k)) for k, e in enumerate(data["persons"])] + narrator, marks.line


def _narrator(entry: Any, path: str, lines: Lines) -> DeclaredPerson:
    """The sheet's `narrator`: pronouns and/or a gender (and a note) for the first person outside quotations,
    validated as a person's are; it has no name, so it matches no name mention."""
    if not isinstance(entry, dict):
        raise InputError(path, lines(("narrator",)), f"narrator: expected a mapping with pronouns or a gender, "
                                                     f"found {entry!r}")
    unknown = [k for k in entry if k not in ("pronouns", "gender", "note")]
    if unknown:
        raise InputError(path, lines(("narrator", unknown[0])),
                         f"narrator.{unknown[0]}: unknown key (expected pronouns, gender, note)")
    return _person({"name": "narrator", **entry}, "narrator", path, lambda at: lines(at[1:]), ("", "narrator"))


def load_entity_sheet(path: str | Path) -> EntitySheet:
    """Read and validate an entity sheet (.yaml/.yml, .json or .csv); errors name file, line, key and value.

    As strict as the rules: unknown keys, columns and languages, pronoun forms the language's rules do not
    know, and a name or alias listed twice (whatever the genders) are errors, since a declaration that cannot
    be applied would otherwise vanish without a word.
    """
    p = Path(path)
    try:
        raw = p.read_bytes()
        text = raw.decode("utf-8-sig")
    except OSError as exc:
        raise InputError(str(p), None, f"cannot read the entity sheet: {exc.strerror}") from exc
    except UnicodeDecodeError as exc:
        raise InputError(str(p), None, f"not valid UTF-8 at byte {exc.start}") from exc
    suffix = p.suffix.lower()
    entries: list[tuple[Any, tuple[Any, ...]]]
    if suffix == ".csv":
        rows = _from_csv(text, str(p))
        row_lines = {("row", k): line for k, (_, line) in enumerate(rows)}
        entries = [(entry, ("row", k)) for k, (entry, _) in enumerate(rows)]

        def lines(at: tuple[Any, ...]) -> int | None:
            return row_lines.get(at[:2])
    elif suffix in (".yaml", ".yml", ".json"):
        entries, lines = _from_mapping(text, str(p), suffix)
    else:
        raise InputError(
            str(p), None, f"unknown entity sheet format {suffix!r} (expected .yaml, .json or .csv)"
        )
    persons = []
    narrator = None
    seen: dict[str, tuple[str, int | None, str]] = {}  # name key -> (name, line, where)
    for entry, at in entries:
        if at == ("narrator",):
            narrator = _narrator(entry, str(p), lines)
            continue
        where = "row" if at[0] == "row" else f"persons[{at[1]}]"
        person = _person(entry, where, str(p), lines, at)
        line = lines(at)
        for key in person.keys:
            if key in seen:
                first, first_line, first_where = seen[key]
                before = f"line {first_line}" if first_line else first_where
                raise InputError(str(p), line, f"{where}: name {key!r} is already listed for {first!r} "
                                               f"({before}); every name and alias belongs to one person only")
            seen[key] = (person.name, line, where)
        persons.append(person)
    return EntitySheet(tuple(persons), hashlib.sha256(raw).hexdigest()[:12], str(p), narrator)
