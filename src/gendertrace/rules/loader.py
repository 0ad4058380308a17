"""Load `rules/<lang>.yaml` and `rules/lexicon/<a>-<b>.yaml`, validating every key against a small schema."""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

import yaml

from gendertrace.errors import RulesError

GENDER_VALUES = {"fem", "masc", "neutral", None}
NUMBER_VALUES = {"sing", "plur", None}
PRONOUN_TYPES = {"personal", "possessive", "reflexive"}
CASE_VALUES = {"nom", "acc", "dat", "gen", None}


def rules_dir() -> Path:
    """The rules folder: $GENDERTRACE_RULES, else the copy inside an installed wheel, else the repository's."""
    env = os.environ.get("GENDERTRACE_RULES")
    if env:
        return Path(env)
    bundled = Path(__file__).resolve().parents[1] / "rules_data"
    if bundled.is_dir():
        return bundled
    return Path(__file__).resolve().parents[3] / "rules"


def pronoun_key(text: str) -> str:
    """Lookup key of a pronoun token: lower case, and French inverted subjects ("-il", "-t-elle") without hyphens."""
    low = text.lower()
    return low.rsplit("-", 1)[-1] if low.startswith("-") and len(low) > 1 else low


@dataclass(frozen=True)
class PronounForm:
    form: str
    gender: str | None
    number: str | None
    type: str
    case: str | None = None
    animate: bool = True
    person: str = "3"
    singular_neutral: bool = False  # a plural form also used for one person (English singular they)
    # The gender of an ungendered form where it stands stressed, after a preposition (French "pour lui").
    stressed: str | None = None


@dataclass(frozen=True)
class LanguageRules:
    """Everything the pipeline knows about one language, read from its rules file."""

    lang: str
    name: str
    path: str
    pro_drop: bool
    possessive_agrees_with: str
    pronouns: dict[str, tuple[PronounForm, ...]]
    honorifics: dict[str, str]
    articles: dict[str, tuple[str | None, str | None]]  # form -> (gender, counterpart)
    noun_genders: dict[str, tuple[str, str]]  # form -> (gender or "common", counterpart form)
    dependents: frozenset[str]
    copulas: frozenset[str]
    agreeing_aux: frozenset[str]
    passive_aux: frozenset[str]
    invariable_aux: frozenset[str]
    endings: tuple[tuple[str, str | None], ...] = ()
    generic_masculine: frozenset[str] = frozenset()
    # Person nouns that are also common words ("count"): persons only as a title, capitalised or before a name.
    title_only: frozenset[str] = frozenset()
    role_markers: frozenset[str] = frozenset()
    # Subject pronouns that also stand for things ("la police ... a-t-elle ajouté"): a thing noun before them
    # competes with the person the resolver picks.
    thing_pronouns: frozenset[str] = frozenset()
    # Verbs of saying (lemmas): an unlabelled proper noun as their subject is a person's name.
    speech_verbs: frozenset[str] = frozenset()
    # Adjectives that, nominalised after a demonstrative, take up an earlier referent ("cette dernière").
    latter_words: frozenset[str] = frozenset()
    # Verbs (lemmas) whose finite forms have no subject at all where none is written (existential "hay",
    # weather "hace frío"): they make no zero-subject mention.
    subjectless_verbs: frozenset[str] = frozenset()
    expletive_pronouns: frozenset[str] = frozenset()
    expletive_verbs: frozenset[str] = frozenset()
    expletive_clausal_verbs: frozenset[str] = frozenset()
    expletive_clitics: frozenset[str] = frozenset()
    expletive_clitic_verbs: frozenset[str] = frozenset()  # empty: the clitic makes any verb impersonal
    expletive_copular_clause: bool = False
    neutral_words: dict[str, str] = field(default_factory=dict)  # form -> number (sing/plur) of neutral forms
    neutral_doublet_conjunctions: frozenset[str] = frozenset()
    neutral_midpoints: frozenset[str] = frozenset()
    neutral_plural_endings: tuple[str, ...] = ("s", "es", "x")  # last part of a split form that makes it plural

    def pronoun(self, form: str) -> tuple[PronounForm, ...]:
        return self.pronouns.get(pronoun_key(form), ())

    def is_person_noun(self, form: str) -> bool:
        return form.lower() in self.noun_genders

    def noun_counterpart(self, form: str) -> tuple[str, str] | None:
        """(gender of this singular person-noun form, the form of the other gender); "common" for invariable
        nouns whose determiner shows the person's gender; "epicene" for nouns of one fixed grammatical gender
        whoever is meant (persona, victime), which show nothing."""
        return self.noun_genders.get(form.lower())

    def article_counterpart(self, form: str) -> str | None:
        entry = self.articles.get(form.lower())
        return entry[1] if entry else None

    def article_gender(self, form: str) -> str | None:
        entry = self.articles.get(form.lower())
        return entry[0] if entry else None

    def ending_gender(self, form: str) -> tuple[bool, str | None]:
        """(matched, gender) from the agreement endings: the longest matching ending decides."""
        low = form.lower()
        best = None
        for ending, gender in self.endings:
            if (
                low.endswith(ending)
                and len(low) > len(ending)
                and (best is None or len(ending) > len(best[0]))
            ):
                best = (ending, gender)
        return (True, best[1]) if best else (False, None)

    def honorific(self, form: str) -> str | None:
        return self.honorifics.get(form.lower().rstrip("."))


def _fail(path: Path, key: str, message: str) -> RulesError:
    return RulesError(str(path), key, message)


def _require(data: dict, key: str, kind: type | tuple[type, ...], path: Path, where: str = "") -> Any:
    full = f"{where}{key}"
    if key not in data:
        raise _fail(path, full, "missing")
    value = data[key]
    if not isinstance(value, kind):
        names = kind.__name__ if isinstance(kind, type) else " or ".join(k.__name__ for k in kind)
        raise _fail(path, full, f"expected {names}, found {type(value).__name__} {value!r}")
    return value


def _str_list(data: dict, key: str, path: Path, where: str) -> list[str]:
    value = _require(data, key, list, path, where)
    for k, item in enumerate(value):
        if not isinstance(item, str):
            raise _fail(path, f"{where}{key}[{k}]", f"expected a string, found {item!r}")
    return value


def _optional_words(data: dict, key: str, path: Path) -> frozenset[str]:
    """An optional top-level list of words, lower-cased (empty where the file leaves the key out)."""
    return frozenset(w.lower() for w in _str_list({key: [], **data}, key, path, ""))


TOP_KEYS = {
    "language",
    "name",
    "pro_drop",
    "possessive_agrees_with",
    "pronouns",
    "honorifics",
    "articles",
    "agreement",
    "person_nouns",
    "expletives",
    "role_markers",
    "thing_pronouns",
    "speech_verbs",
    "latter_words",
    "subjectless_verbs",
    "neutral_language",
}


def _pronouns(data: dict, path: Path) -> dict[str, tuple[PronounForm, ...]]:
    """`pronouns`: each listed form, validated, by its lower-cased form."""
    pronouns: dict[str, list[PronounForm]] = {}
    for k, item in enumerate(_require(data, "pronouns", list, path)):
        form = _pronoun_form(item, f"pronouns[{k}]", path)
        pronouns.setdefault(form.form, []).append(form)
    return {k: tuple(v) for k, v in pronouns.items()}


def _pronoun_form(item: Any, where: str, path: Path) -> PronounForm:
    """One entry of `pronouns`, validated."""
    if not isinstance(item, dict):
        raise _fail(path, where, f"expected a mapping, found {item!r}")
    extra = set(item) - {
        "form",
        "gender",
        "number",
        "type",
        "case",
        "animate",
        "person",
        "singular_neutral",
        "stressed",
    }
    if extra:
        raise _fail(path, f"{where}.{sorted(extra)[0]}", "unknown key")
    form = _require(item, "form", str, path, where + ".")
    gender = item.get("gender")
    if gender not in GENDER_VALUES:
        raise _fail(path, f"{where}.gender", f"expected fem, masc, neutral or null, found {gender!r}")
    number = item.get("number")
    if number not in NUMBER_VALUES:
        raise _fail(path, f"{where}.number", f"expected sing, plur or null, found {number!r}")
    ptype = _require(item, "type", str, path, where + ".")
    if ptype not in PRONOUN_TYPES:
        raise _fail(path, f"{where}.type", f"expected one of {sorted(PRONOUN_TYPES)}, found {ptype!r}")
    if item.get("case") not in CASE_VALUES:
        raise _fail(
            path,
            f"{where}.case",
            f"expected one of nom, acc, dat, gen or null, found {item.get('case')!r}",
        )
    animate = item.get("animate", True)
    if not isinstance(animate, bool):
        raise _fail(path, f"{where}.animate", f"expected true or false, found {animate!r}")
    person = str(item.get("person", 3))
    if person not in ("1", "2", "3"):
        raise _fail(path, f"{where}.person", f"expected 1, 2 or 3, found {item.get('person')!r}")
    singular_neutral = item.get("singular_neutral", False)
    if not isinstance(singular_neutral, bool) or (singular_neutral and number != "plur"):
        raise _fail(
            path,
            f"{where}.singular_neutral",
            f"expected true or false on a plural form, found {singular_neutral!r}",
        )
    stressed = item.get("stressed")
    if stressed not in (None, "fem", "masc") or (stressed and gender is not None):
        raise _fail(path, f"{where}.stressed", f"expected fem or masc on a form without gender, found {stressed!r}")
    return PronounForm(
        form.lower(), gender, number, ptype, item.get("case"), animate, person, singular_neutral, stressed
    )


def _honorifics(data: dict, path: Path) -> dict[str, str]:
    """`honorifics`: form (lower case, no final dot) -> gender."""
    honorifics: dict[str, str] = {}
    hon = _require(data, "honorifics", dict, path)
    for gender in hon:
        if gender not in ("fem", "masc", "neutral"):
            raise _fail(path, f"honorifics.{gender}", "expected fem, masc or neutral")
        for form in _str_list(hon, gender, path, "honorifics."):
            honorifics[form.lower().rstrip(".")] = gender

    return honorifics


def _articles(data: dict, path: Path) -> dict[str, tuple[str | None, str | None]]:
    """`articles`: form -> (gender, counterpart)."""
    articles: dict[str, tuple[str | None, str | None]] = {}
    for form, spec in _require(data, "articles", dict, path).items():
        where = f"articles.{form}"
        if not isinstance(spec, dict) or spec.get("gender") not in GENDER_VALUES:
            raise _fail(path, where, f"expected {{gender: fem|masc|null, counterpart: form}}, found {spec!r}")
        articles[str(form).lower()] = (spec.get("gender"), spec.get("counterpart"))

    return articles


def _agreement(data: dict, path: Path) -> tuple[list[tuple[str, str | None]], dict[str, frozenset[str]]]:
    """`agreement`: the endings, and the lists of relations, copulas and auxiliaries."""
    agreement = _require(data, "agreement", dict, path)
    endings = []
    for k, item in enumerate(agreement.get("endings", [])):
        if not (
            isinstance(item, list)
            and len(item) == 2
            and isinstance(item[0], str)
            and item[1] in ("fem", "masc", None)
        ):
            raise _fail(path, f"agreement.endings[{k}]", f"expected [ending, fem|masc|null], found {item!r}")
        endings.append((item[0].lower(), item[1]))
    unknown_agr = set(agreement) - {
        "dependents",
        "copulas",
        "agreeing_aux",
        "passive_aux",
        "invariable_aux",
        "endings",
    }
    if unknown_agr:
        raise _fail(path, f"agreement.{sorted(unknown_agr)[0]}", "unknown key")
    lists = {
        k: frozenset(_str_list(agreement, k, path, "agreement."))
        for k in ("dependents", "copulas", "agreeing_aux", "passive_aux", "invariable_aux")
    }

    return endings, lists


def _person_nouns(data: dict, path: Path) -> tuple[dict[str, tuple[str, str]], frozenset[str], frozenset[str]]:
    """`person_nouns`: form -> (gender or common/epicene, counterpart), the generic masculines, the title-only
    forms."""
    nouns = _require(data, "person_nouns", dict, path)
    noun_genders: dict[str, tuple[str, str]] = {}
    for k, pair in enumerate(_require(nouns, "pairs", list, path, "person_nouns.")):
        if not (isinstance(pair, list) and len(pair) == 2 and all(isinstance(p, str) for p in pair)):
            raise _fail(path, f"person_nouns.pairs[{k}]", f"expected [masculine, feminine], found {pair!r}")
        masc, fem = (p.lower() for p in pair)
        noun_genders.setdefault(masc, ("masc", fem))
        noun_genders.setdefault(fem, ("fem", masc))
    for form in _str_list(nouns, "common", path, "person_nouns."):
        noun_genders.setdefault(form.lower(), ("common", form.lower()))
    generic = frozenset(
        f.lower()
        for f in _str_list({"generic_masculine": [], **nouns}, "generic_masculine", path, "person_nouns.")
    )
    title_only = frozenset(
        f.lower() for f in _str_list({"title_only": [], **nouns}, "title_only", path, "person_nouns.")
    )
    stray = sorted(title_only - set(noun_genders))
    if stray:
        raise _fail(path, "person_nouns.title_only", f"{stray[0]!r} is not listed as a person noun")
    for form in _str_list({"epicene": [], **nouns}, "epicene", path, "person_nouns."):
        noun_genders[form.lower()] = ("epicene", form.lower())

    return noun_genders, generic, title_only


def _expletives(data: dict, path: Path) -> tuple[dict[str, frozenset[str]], bool]:
    """`expletives`: the word lists and whether a copular clause with a clausal subject is impersonal."""
    expl = data.get(
        "expletives",
        {"pronouns": [], "verbs": [], "clausal_verbs": [], "clitics": [], "copular_clause": False},
    )
    if not isinstance(expl, dict):
        raise _fail(path, "expletives", f"expected a mapping, found {expl!r}")
    # Optional: verbs impersonal only with a clausal complement; verbs the clitics make impersonal.
    expl = {"clausal_verbs": [], "clitic_verbs": [], **expl}
    expl_lists = {
        k: frozenset(w.lower() for w in _str_list(expl, k, path, "expletives."))
        for k in ("pronouns", "verbs", "clausal_verbs", "clitics", "clitic_verbs")
    }
    copular_clause = _require(expl, "copular_clause", bool, path, "expletives.")

    return expl_lists, copular_clause


def parse_rules(data: Any, path: Path) -> LanguageRules:
    """Validate a loaded rules document and build LanguageRules; errors name the file and the key."""
    if not isinstance(data, dict):
        raise _fail(path, "(top)", f"expected a mapping, found {type(data).__name__}")
    unknown = set(data) - TOP_KEYS
    if unknown:
        raise _fail(path, sorted(unknown)[0], f"unknown key (expected one of {', '.join(sorted(TOP_KEYS))})")
    lang = _require(data, "language", str, path)
    name = _require(data, "name", str, path)
    pro_drop = _require(data, "pro_drop", bool, path)
    poss = _require(data, "possessive_agrees_with", str, path)
    if poss not in ("possessor", "possessed"):
        raise _fail(path, "possessive_agrees_with", f"expected 'possessor' or 'possessed', found {poss!r}")

    pronouns = _pronouns(data, path)
    honorifics = _honorifics(data, path)
    articles = _articles(data, path)
    endings, lists = _agreement(data, path)
    noun_genders, generic, title_only = _person_nouns(data, path)
    expl_lists, copular_clause = _expletives(data, path)
    neutral_words, conjunctions, midpoints = _neutral_language(data.get("neutral_language", {}), path)
    plural_endings = tuple(
        w.lower()
        for w in _str_list({"plural_endings": ["s", "es", "x"], **data.get("neutral_language", {})},
                           "plural_endings", path, "neutral_language.")
    )

    return LanguageRules(
        lang=lang,
        name=name,
        path=str(path),
        pro_drop=pro_drop,
        possessive_agrees_with=poss,
        pronouns=pronouns,
        honorifics=honorifics,
        articles=articles,
        noun_genders=noun_genders,
        **lists,
        endings=tuple(endings),
        generic_masculine=generic,
        title_only=title_only,
        role_markers=_optional_words(data, "role_markers", path),
        thing_pronouns=_optional_words(data, "thing_pronouns", path),
        speech_verbs=_optional_words(data, "speech_verbs", path),
        latter_words=_optional_words(data, "latter_words", path),
        subjectless_verbs=_optional_words(data, "subjectless_verbs", path),
        expletive_pronouns=expl_lists["pronouns"],
        expletive_verbs=expl_lists["verbs"],
        expletive_clausal_verbs=expl_lists["clausal_verbs"],
        expletive_clitics=expl_lists["clitics"],
        expletive_clitic_verbs=expl_lists["clitic_verbs"],
        expletive_copular_clause=copular_clause,
        neutral_words=neutral_words,
        neutral_doublet_conjunctions=conjunctions,
        neutral_midpoints=midpoints,
        neutral_plural_endings=plural_endings,
    )


def _neutral_language(spec: Any, path: Path) -> tuple[dict[str, str], frozenset[str], frozenset[str]]:
    """`neutral_language`: words (forms marking no binary gender, each with its number), doublet_conjunctions
    (words joining a masculine and a feminine form into a doubled form) and midpoints (characters of split
    forms such as étudiant·e)."""
    if not isinstance(spec, dict):
        raise _fail(path, "neutral_language", f"expected a mapping, found {spec!r}")
    unknown = set(spec) - {"words", "doublet_conjunctions", "midpoints", "plural_endings"}
    if unknown:
        raise _fail(path, f"neutral_language.{sorted(unknown)[0]}", "unknown key")
    words: dict[str, str] = {}
    for k, item in enumerate(spec.get("words", [])):
        where = f"neutral_language.words[{k}]"
        if not (
            isinstance(item, dict)
            and isinstance(item.get("form"), str)
            and item.get("number") in ("sing", "plur")
            and set(item) <= {"form", "number"}
        ):
            raise _fail(path, where, f"expected {{form: word, number: sing|plur}}, found {item!r}")
        words[item["form"].lower()] = item["number"]
    conj = frozenset(
        w.lower()
        for w in _str_list(
            {"doublet_conjunctions": [], **spec}, "doublet_conjunctions", path, "neutral_language."
        )
    )
    mids = _str_list({"midpoints": [], **spec}, "midpoints", path, "neutral_language.")
    for k, ch in enumerate(mids):
        if len(ch) != 1 or ch.isalnum():
            raise _fail(
                path, f"neutral_language.midpoints[{k}]", f"expected one non-letter character, found {ch!r}"
            )
    return words, conj, frozenset(mids)


def _read_yaml(path: Path) -> Any:
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise _fail(path, "(file)", f"not valid UTF-8 at byte {exc.start}") from exc
    try:
        return yaml.safe_load(text)
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f"line {mark.line + 1}" if mark else "(file)"
        raise _fail(path, where, f"not valid YAML: {getattr(exc, 'problem', exc)}") from exc


@lru_cache(maxsize=32)
def load_rules(lang: str, folder: str | None = None) -> LanguageRules:
    """The rules of one language; RulesError when the language has no rules file or the file is invalid."""
    base = Path(folder) if folder else rules_dir()
    path = base / f"{lang}.yaml"
    if not path.is_file():
        have = sorted(p.stem for p in base.glob("*.yaml"))
        raise RulesError(
            str(path), "(file)", f"no rules for language {lang!r} (rules exist for: {', '.join(have)})"
        )
    rules = parse_rules(_read_yaml(path), path)
    if rules.lang != lang:
        raise _fail(path, "language", f"expected {lang!r} (the file name), found {rules.lang!r}")
    return rules


@lru_cache(maxsize=32)
def load_lexicon(src: str, tgt: str, folder: str | None = None) -> dict[str, frozenset[str]]:
    """Person-noun translations from src to tgt (lower-cased forms); read from either direction's file.

    Returns an empty mapping when the pair has no lexicon file: linking then relies on names and alignment.
    """
    base = (Path(folder) if folder else rules_dir()) / "lexicon"
    forward, backward = base / f"{src}-{tgt}.yaml", base / f"{tgt}-{src}.yaml"
    path = forward if forward.is_file() else backward if backward.is_file() else None
    if path is None:
        return {}
    data = _read_yaml(path)
    if not isinstance(data, dict):
        raise _fail(path, "(top)", "expected a mapping")
    entries = _require(data, "entries", dict, path)
    for key in ("source", "target"):
        _require(data, key, str, path)
    out: dict[str, set[str]] = {}
    for a, targets in entries.items():
        if not isinstance(targets, list) or not all(isinstance(t, str) for t in targets):
            raise _fail(path, f"entries.{a}", f"expected a list of forms, found {targets!r}")
        for b in targets:
            x, y = (a.lower(), b.lower()) if path == forward else (b.lower(), a.lower())
            out.setdefault(x, set()).add(y)
    return {k: frozenset(v) for k, v in out.items()}


def rules_digest(folder: str | None = None) -> str:
    """A short digest of every rules file, recorded in each run's signature."""
    base = Path(folder) if folder else rules_dir()
    h = hashlib.sha256()
    for p in sorted(base.rglob("*.yaml")):
        h.update(p.relative_to(base).as_posix().encode())
        h.update(p.read_bytes())
    return h.hexdigest()[:12]
