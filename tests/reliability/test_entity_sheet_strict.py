"""Entity sheets are validated as strictly as the rules: a declaration that could not be applied is an error
naming the file, the line and the value, never a silent loss (declarations outrank all other evidence)."""

from __future__ import annotations

import pytest

SHEETS = {
    "unknown pronoun form": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    pronouns:\n      en: zz/zzz\n",
        "people.yaml:4: persons[0].pronouns.en: unknown pronoun form 'zz' for en"),
    "unknown language key": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    pronouns:\n      en: she/her\n      xx: she\n",
        "people.yaml:5: persons[0].pronouns: unknown language 'xx' (rules exist for: de, en, es, fr, it, pt)"),
    "same name, other gender": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    gender: fem\n  - name: Nerea Ubillos\n"
                       "    gender: masc\n",
        "people.yaml:4: persons[1]: name 'nerea ubillos' is already listed for 'Nerea Ubillos' (line 2)"),
    "same name, same gender": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    gender: fem\n  - name: Nerea Ubillos\n"
                       "    gender: fem\n",
        "people.yaml:4: persons[1]: name 'nerea ubillos' is already listed for 'Nerea Ubillos' (line 2)"),
    "an alias that is another person's name": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    gender: fem\n  - name: Iker Ubillos\n"
                       "    aliases: [Nerea Ubillos]\n    gender: masc\n",
        "people.yaml:4: persons[1]: name 'nerea ubillos' is already listed for 'Nerea Ubillos' (line 2)"),
    "misspelt top-level key": (
        "people.yaml", "persons: []\nperson:\n  - name: Nerea Ubillos\n    gender: fem\n",
        "people.yaml:2: unknown top-level key 'person' (expected persons, narrator)"),
    "misspelt person key": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    gendr: fem\n",
        "people.yaml:3: persons[0].gendr: unknown key (expected name, aliases, pronouns, gender, note)"),
    "a key given twice": (
        "people.yaml", "persons:\n  - name: Nerea Ubillos\n    gender: fem\n    gender: masc\n",
        "people.yaml:4: persons[0].gender: key given twice"),
    "JSON: same name twice": (
        "people.json", '{"persons": [\n  {"name": "Nerea Ubillos", "gender": "fem"},\n'
                       '  {"name": "Nerea Ubillos", "gender": "masc"}\n]}\n',
        "people.json:3: persons[1]: name 'nerea ubillos' is already listed for 'Nerea Ubillos' (line 2)"),
    "JSON: unknown pronoun form": (
        "people.json", '{"persons": [\n  {"name": "Nerea Ubillos",\n   "pronouns": {"es": "zz"}}\n]}\n',
        "people.json:3: persons[0].pronouns.es: unknown pronoun form 'zz' for es"),
    "CSV: unknown language column": (
        "people.csv", "name,pronouns_en,pronouns_xx\nNerea Ubillos,she/her,\n",
        "people.csv:1: column 'pronouns_xx': unknown language 'xx'"),
    "CSV: unknown pronoun form on its row": (
        "people.csv", 'name,pronouns_en\nIker Ubillos,he/him\n"Nerea\nUbillos",zz\n',
        "people.csv:3: row.pronouns.en: unknown pronoun form 'zz' for en"),
    "YAML syntax error": (
        "people.yaml", "persons:\n  - name: 'Nerea Ubillos\n    gender: fem\n",
        "people.yaml:2: not valid YAML: while scanning a quoted scalar, found unexpected end of stream"),
}


@pytest.mark.parametrize("case", list(SHEETS))
def test_a_sheet_whose_declarations_could_not_be_applied_is_refused(ws, case):
    name, text, message = SHEETS[case]
    (ws.root / name).write_text(text, encoding="utf-8")
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "out.jsonl", "--entities", name, code=1)
    assert f"Error: {message}" in result.output
    assert len(result.output.strip().splitlines()) == 1
    assert ws.snapshot() == before


def test_a_valid_sheet_still_applies_its_declaration(ws):
    # "she" is the English feminine third-person personal pronoun (from memory: Huddleston & Pullum, The
    # Cambridge Grammar of the English Language, 2002, ch. 17): the declared gender reaches the entity.
    (ws.root / "people.yaml").write_text("persons:\n  - name: Nerea Ubillos\n    pronouns:\n      en: she/her\n",
                                         encoding="utf-8")
    ws.score("in.tsv", "-o", "out.jsonl", "--entities", "people.yaml", code=0)
    first = (ws.root / "out.jsonl").read_text(encoding="utf-8").splitlines()[0]
    assert '"declared": ["fem"]' in first
