"""The shared vocabularies: values that serialise as their plain strings, and the evidence rules' flags."""

from __future__ import annotations

import json

from gendertrace.model import Span
from gendertrace.vocab import (
    BINARY,
    FINDING_KINDS,
    NEVER_FLAGS_ALONE,
    PREDICATE_RULES,
    UD_GENDER,
    FindingKind,
    Gender,
    Rule,
)


def test_enum_values_are_their_strings_in_results():
    assert json.dumps({"found": Gender.FEM, FindingKind.CONTRADICTION: 1}) == '{"found": "fem", "contradiction": 1}'
    assert Gender.MASC == "masc" and "masc" in BINARY and Gender.NEUTRAL not in BINARY
    assert FINDING_KINDS == ("contradiction", "inconsistency", "assumption")
    assert all(type(k) is str for k in FINDING_KINDS)  # column and key names stay plain strings


def test_ud_gender_values_map_to_the_project_genders():
    # UD guidelines, "Gender" feature page: the values Fem, Masc and Neut.
    assert UD_GENDER == {"Fem": "fem", "Masc": "masc", "Neut": "neutral"}


def test_rule_flags():
    assert PREDICATE_RULES == {"predicative with copula", "participle with agreeing auxiliary", "secondary predicate"}
    assert Rule.SECONDARY_PREDICATE.is_predicate and not Rule.ADJECTIVE_AGREEMENT.is_predicate
    # A bare generic masculine ("fue elegida presidente") is evidence but is never flagged alone.
    assert NEVER_FLAGS_ALONE == {"generic masculine noun"}
    assert Rule.pronoun("possessive") is Rule.POSSESSIVE_PRONOUN


def test_spans_overlap_only_on_one_side_of_one_segment():
    a = Span("target", 2, 10, 14)
    assert a.overlaps(Span("target", 2, 13, 20)) and not a.overlaps(Span("target", 2, 14, 20))
    assert not a.overlaps(Span("source", 2, 10, 14)) and not a.overlaps(Span("target", 3, 10, 14))
