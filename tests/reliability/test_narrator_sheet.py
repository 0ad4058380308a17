"""The entity sheet's `narrator` entry: validated as strictly as a person (docs/entities.md)."""

from __future__ import annotations

import pytest

from gendertrace.declared import load_entity_sheet
from gendertrace.errors import GendertraceError


def _sheet(tmp_path, text: str):
    p = tmp_path / "people.yaml"
    p.write_text(text, encoding="utf-8")
    return load_entity_sheet(p)


def test_the_narrator_entry_declares_the_first_person_and_no_name(tmp_path):
    sheet = _sheet(tmp_path, "narrator:\n  pronouns:\n    es: ella\n  note: told in the first person\npersons: []\n")
    assert sheet.narrator is not None and sheet.narrator.pronouns_for("es") == ("ella",)
    assert sheet.persons == () and "narrator" not in sheet.name_keys


@pytest.mark.parametrize("body, message", [
    ("narrator:\n  pronoun: she\npersons: []\n", "people.yaml:2: narrator.pronoun: unknown key"),
    ("narrator:\n  gender: nonbinary\npersons: []\n", "people.yaml:2: narrator.gender: expected fem, masc or neutral"),
    ("narrator:\n  pronouns:\n    es: zz\npersons: []\n", "people.yaml:3: narrator.pronouns.es: unknown pronoun form"),
    ("narrator: she\npersons: []\n", "people.yaml:1: narrator: expected a mapping"),
    ("narrator:\n  note: nothing declared\npersons: []\n",
     "narrator: 'narrator' declares neither pronouns nor a gender"),
])
def test_a_bad_narrator_entry_is_a_one_line_error_naming_line_and_key(tmp_path, body, message):
    with pytest.raises(GendertraceError) as exc:
        _sheet(tmp_path, body)
    assert message in str(exc.value)
