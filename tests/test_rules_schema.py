"""The rules folder as data: every file loads, the schema rejects what it should, paradigms match grammar.

Schema tests write small rules documents into a temporary folder and load them through the `folder`
argument, so the repository's own files are never touched.
"""

from __future__ import annotations

import copy
import shutil
from pathlib import Path

import pytest
import yaml

from gendertrace.errors import RulesError
from gendertrace.rules import load_lexicon, load_rules, rules_digest, rules_dir

RULES = rules_dir()
LANGS = sorted(p.stem for p in RULES.glob("*.yaml"))
LEXICONS = sorted((RULES / "lexicon").glob("*.yaml"))

# A small valid rules document, the base of every schema test (an invented language code, "qx").
MINIMAL = {
    "language": "qx",
    "name": "Test language",
    "pro_drop": False,
    "possessive_agrees_with": "possessor",
    "pronouns": [
        {"form": "he", "gender": "masc", "number": "sing", "type": "personal", "case": "nom"},
        {"form": "hers", "gender": "fem", "number": "sing", "type": "possessive"},
    ],
    "honorifics": {"masc": ["mr"], "fem": ["ms"]},
    "articles": {},
    "agreement": {
        "dependents": [], "copulas": [], "agreeing_aux": [], "passive_aux": [], "invariable_aux": [],
    },
    "person_nouns": {"pairs": [["actor", "actress"]], "common": ["pilot"]},
    "expletives": {"pronouns": [], "verbs": [], "clitics": [], "copular_clause": False},
}


def _write(folder: Path, data, lang: str = "qx") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"{lang}.yaml"
    text = data if isinstance(data, str) else yaml.safe_dump(data, allow_unicode=True)
    path.write_text(text, encoding="utf-8")
    return path


def _rejected(tmp_path: Path, data, lang: str = "qx") -> RulesError:
    path = _write(tmp_path, data, lang)
    with pytest.raises(RulesError) as info:
        load_rules(lang, str(tmp_path))
    err = info.value
    assert err.path == str(path)
    assert str(path) in str(err)
    return err


def _changed(**edits) -> dict:
    data = copy.deepcopy(MINIMAL)
    for key, value in edits.items():
        data[key] = value
    return data


# ---------------------------------------------------------------------------------------------------------
# The repository's files


def test_the_rules_folder_has_the_default_languages():
    # docs/design.md: directions es->en, fr->en, en->es, en->fr and es<->fr must work with the default install.
    assert {"en", "es", "fr"} <= set(LANGS)


@pytest.mark.parametrize("lang", LANGS)
def test_every_rules_file_loads(lang):
    rules = load_rules(lang)
    assert rules.lang == lang
    assert rules.pronouns and rules.noun_genders


@pytest.mark.parametrize("path", LEXICONS, ids=lambda p: p.stem)
def test_every_lexicon_loads_in_both_directions(path):
    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    src, tgt = data["source"], data["target"]
    forward, backward = load_lexicon(src, tgt), load_lexicon(tgt, src)
    assert forward and backward
    first, forms = next(iter(data["entries"].items()))
    assert set(forms) <= forward[first.lower()]
    assert all(first.lower() in backward[f.lower()] for f in forms)


def test_a_pair_without_a_lexicon_gives_an_empty_one(tmp_path):
    assert load_lexicon("qx", "qy", str(tmp_path)) == {}


@pytest.mark.parametrize("path", [pytest.param(p, id=p.stem) for p in LEXICONS])
def test_single_word_lexicon_forms_are_person_nouns_of_their_language(path):
    data = yaml.safe_load(path.read_text(encoding="utf-8"))
    src, tgt = load_rules(data["source"]), load_rules(data["target"])
    # The linker matches lexicon forms against single-token noun mentions only.
    entries = data["entries"]
    missing = [a for a in entries if " " not in a and not src.is_person_noun(a)]
    missing += [b for bs in entries.values() for b in bs if " " not in b and not tgt.is_person_noun(b)]
    assert missing == []


# ---------------------------------------------------------------------------------------------------------
# The schema


def test_the_minimal_document_is_valid(tmp_path):
    _write(tmp_path, MINIMAL)
    rules = load_rules("qx", str(tmp_path))
    assert rules.noun_counterpart("actress") == ("fem", "actor")
    assert rules.noun_counterpart("pilot") == ("common", "pilot")


def test_a_missing_key_is_rejected_by_name(tmp_path):
    data = copy.deepcopy(MINIMAL)
    del data["pro_drop"]
    err = _rejected(tmp_path, data)
    assert err.key == "pro_drop"
    assert "missing" in str(err)


def test_a_missing_nested_key_is_rejected_by_its_path(tmp_path):
    data = copy.deepcopy(MINIMAL)
    del data["agreement"]["copulas"]
    assert _rejected(tmp_path, data).key == "agreement.copulas"


def test_a_wrong_type_is_rejected_with_the_type_expected(tmp_path):
    err = _rejected(tmp_path, _changed(pro_drop="yes"))
    assert err.key == "pro_drop"
    assert "bool" in str(err) and "'yes'" in str(err)


def test_a_wrong_type_in_a_list_is_rejected_with_its_index(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["agreement"]["copulas"] = ["be", 3]
    assert _rejected(tmp_path, data).key == "agreement.copulas[1]"


def test_an_unknown_top_level_key_is_rejected(tmp_path):
    err = _rejected(tmp_path, _changed(colour="blue"))
    assert err.key == "colour"
    assert "unknown key" in str(err)


def test_an_unknown_pronoun_key_is_rejected(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][1]["animacy"] = True
    assert _rejected(tmp_path, data).key == "pronouns[1].animacy"


def test_a_stressed_gender_needs_an_ungendered_form(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][0]["stressed"] = "masc"
    if data["pronouns"][0].get("gender") is None:
        data["pronouns"][0]["gender"] = "fem"
    err = _rejected(tmp_path, data)
    assert err.key == "pronouns[0].stressed"


@pytest.mark.parametrize("value", ["male", "f", "Fem"])
def test_a_bad_pronoun_gender_is_rejected(tmp_path, value):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][0]["gender"] = value
    err = _rejected(tmp_path, data)
    assert err.key == "pronouns[0].gender"
    assert repr(value) in str(err)


def test_a_bad_honorific_gender_is_rejected(tmp_path):
    assert _rejected(tmp_path, _changed(honorifics={"male": ["mr"]})).key == "honorifics.male"


def test_a_bad_article_gender_is_rejected(tmp_path):
    assert _rejected(tmp_path, _changed(articles={"the": {"gender": "common"}})).key == "articles.the"


def test_a_bad_pronoun_type_is_rejected(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][0]["type"] = "demonstrative"
    err = _rejected(tmp_path, data)
    assert err.key == "pronouns[0].type"
    assert "'demonstrative'" in str(err)


def test_a_bad_pronoun_number_is_rejected(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][0]["number"] = "dual"
    assert _rejected(tmp_path, data).key == "pronouns[0].number"


def test_a_bad_pronoun_case_is_rejected(tmp_path):
    data = copy.deepcopy(MINIMAL)
    data["pronouns"][0]["case"] = "nominative"
    assert _rejected(tmp_path, data).key == "pronouns[0].case"


@pytest.mark.parametrize("pair", [["actor"], ["actor", "actress", "actrix"], "actor/actress", ["actor", 7]])
def test_a_malformed_noun_pair_is_rejected(tmp_path, pair):
    data = copy.deepcopy(MINIMAL)
    data["person_nouns"]["pairs"].append(pair)
    err = _rejected(tmp_path, data)
    assert err.key == "person_nouns.pairs[1]"
    assert "[masculine, feminine]" in str(err)


def test_invalid_yaml_is_rejected_with_its_line(tmp_path):
    text = "language: qx\nname: Test language\npro_drop: false\nbroken: a: b\n"
    err = _rejected(tmp_path, text)
    assert err.key == "line 4"
    assert "not valid YAML" in str(err)


def test_a_rules_file_that_is_not_a_mapping_is_rejected(tmp_path):
    assert _rejected(tmp_path, "- just\n- a list\n").key == "(top)"


def test_a_language_code_that_differs_from_the_file_name_is_rejected(tmp_path):
    assert _rejected(tmp_path, MINIMAL, lang="qy").key == "language"


def test_a_language_without_a_rules_file_names_those_that_have_one(tmp_path):
    shutil.copytree(RULES, tmp_path / "rules")
    with pytest.raises(RulesError) as info:
        load_rules("xx", str(tmp_path / "rules"))
    message = str(info.value)
    assert "'xx'" in message
    assert "rules exist for: " + ", ".join(LANGS) in message
    assert info.value.path.endswith("xx.yaml")


def test_a_malformed_lexicon_entry_is_rejected_by_name(tmp_path):
    (tmp_path / "lexicon").mkdir()
    (tmp_path / "lexicon" / "qx-qy.yaml").write_text(
        'source: qx\ntarget: qy\nentries:\n  "pilot": "pilote"\n', encoding="utf-8")
    with pytest.raises(RulesError) as info:
        load_lexicon("qx", "qy", str(tmp_path))
    assert info.value.key == "entries.pilot"
    assert "qx-qy.yaml" in str(info.value)


# ---------------------------------------------------------------------------------------------------------
# Paradigms against grammar facts


def _forms(lang: str, form: str) -> set[tuple]:
    return {(f.gender, f.number, f.type) for f in load_rules(lang).pronoun(form)}


@pytest.mark.parametrize("form, gender, kind", [
    # English personal, possessive and reflexive pronouns, 3rd person singular (English grammar, from memory).
    ("he", "masc", "personal"), ("him", "masc", "personal"), ("his", "masc", "possessive"),
    ("himself", "masc", "reflexive"), ("she", "fem", "personal"), ("hers", "fem", "possessive"),
    ("herself", "fem", "reflexive"),
])
def test_english_singular_pronouns(form, gender, kind):
    assert (gender, "sing", kind) in _forms("en", form)


def test_english_her_is_both_object_and_possessive():
    # English grammar: "her" is the accusative and the possessive determiner (from memory).
    assert _forms("en", "her") == {("fem", "sing", "personal"), ("fem", "sing", "possessive")}


def test_english_they_marks_no_gender():
    # English grammar: they/them/their carry no gender (from memory).
    assert all(g is None for g, _, _ in _forms("en", "they") | _forms("en", "them") | _forms("en", "their"))


@pytest.mark.parametrize("lang, form, gender", [
    # Spanish él/ella and French il/elle: 3rd person singular subject pronouns (grammar, from memory).
    ("es", "él", "masc"), ("es", "ella", "fem"), ("fr", "il", "masc"), ("fr", "elle", "fem"),
])
def test_romance_third_person_pronouns(lang, form, gender):
    assert (gender, "sing", "personal") in _forms(lang, form)


@pytest.mark.parametrize("lang, form", [
    ("es", "su"), ("es", "sus"), ("fr", "son"), ("fr", "sa"), ("fr", "ses"),
])
def test_romance_possessives_carry_no_possessor_gender(lang, form):
    # Spanish su/sus mark no gender; French son/sa/ses agree with the possessed noun (grammar, from memory).
    forms = _forms(lang, form)
    assert forms and all(g is None and kind == "possessive" for g, _, kind in forms)


@pytest.mark.parametrize("lang, agrees_with", [("en", "possessor"), ("es", "possessed"), ("fr", "possessed")])
def test_what_possessives_agree_with(lang, agrees_with):
    # English his/her follow the possessor; Spanish and French possessives the possessed noun (from memory).
    assert load_rules(lang).possessive_agrees_with == agrees_with


@pytest.mark.parametrize("lang, pro_drop", [("en", False), ("es", True), ("fr", False)])
def test_pro_drop(lang, pro_drop):
    # Spanish drops subject pronouns; English and French do not (grammar, from memory).
    assert load_rules(lang).pro_drop is pro_drop


@pytest.mark.parametrize("lang, invariable, agreeing", [("es", "haber", "ser"), ("fr", "avoir", "être")])
def test_compound_tense_and_passive_auxiliaries(lang, invariable, agreeing):
    # Participles after haber/avoir do not agree with the subject; after the passive ser/être they do
    # (Spanish and French grammar, from memory).
    rules = load_rules(lang)
    assert invariable in rules.invariable_aux and invariable not in rules.agreeing_aux
    assert agreeing in rules.agreeing_aux and agreeing in rules.passive_aux


@pytest.mark.parametrize("lang, masc, fem", [
    # Masculine/feminine noun pairs (Spanish, French and English lexicon, from memory).
    ("es", "cirujano", "cirujana"), ("es", "actor", "actriz"), ("fr", "acteur", "actrice"),
    ("fr", "directeur", "directrice"), ("en", "actor", "actress"), ("en", "father", "mother"),
])
def test_noun_pairs(lang, masc, fem):
    rules = load_rules(lang)
    assert rules.noun_counterpart(masc) == ("masc", fem)
    assert rules.noun_counterpart(fem) == ("fem", masc)


@pytest.mark.parametrize("lang, form", [("es", "piloto"), ("fr", "pilote"), ("en", "pilot")])
def test_common_gender_nouns(lang, form):
    # "piloto", "pilote", "pilot" serve for women and men alike (from memory).
    assert load_rules(lang).noun_counterpart(form) == ("common", form)


# ---------------------------------------------------------------------------------------------------------
# The digest recorded in every run signature


def test_rules_digest_of_the_default_folder_is_that_of_the_rules_dir():
    assert rules_digest() == rules_digest(str(RULES))


def test_rules_digest_changes_when_a_file_changes(tmp_path):
    folder = tmp_path / "rules"
    shutil.copytree(RULES, folder)
    before = rules_digest(str(folder))
    path = folder / "es.yaml"
    original = path.read_bytes()
    path.write_bytes(original + b"\n# an edit\n")
    assert rules_digest(str(folder)) != before
    path.write_bytes(original)
    assert rules_digest(str(folder)) == before


def test_rules_digest_changes_when_a_lexicon_is_added(tmp_path):
    folder = tmp_path / "rules"
    shutil.copytree(RULES, folder)
    before = rules_digest(str(folder))
    (folder / "lexicon" / "es-qx.yaml").write_text("source: es\ntarget: qx\nentries: {}\n", encoding="utf-8")
    assert rules_digest(str(folder)) != before
