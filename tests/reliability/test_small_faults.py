"""The smaller faults: a gate with nothing to check, language codes, a JSONL null, YAML syntax error lines."""

from __future__ import annotations

import pytest
from reliability_helpers import tsv

from gendertrace.cli import NOTHING_CHECKED_EXIT
from gendertrace.rules.loader import rules_dir


def test_fail_under_with_nothing_checkable_has_its_own_status(ws):
    tsv(ws.root / "plain.tsv", [("d2", "1", "Nerea Ubillos smiled.", "Nerea Ubillos sonrió.")])
    result = ws.score("plain.tsv", "-o", "out.jsonl", "--fail-under", "0.9", code=NOTHING_CHECKED_EXIT)
    assert NOTHING_CHECKED_EXIT not in (0, 1, 2, 3)  # not success, an error, a usage error or the gate's 3
    assert ("consistency rate n/a: no gendered target reference of plain.tsv could be checked against "
            "evidence, so --fail-under 0.900 can neither pass nor fail") in result.output
    assert (ws.root / "out.jsonl").is_file()  # the results are written all the same


def test_fail_under_below_the_rate_keeps_status_3(ws):
    result = ws.score("in.tsv", "-o", "out.jsonl", "--fail-under", "0.9", code=3)
    assert "consistency rate 0.000 is below --fail-under 0.900" in result.output


def test_language_codes_are_case_insensitive(ws):
    ws.run("score", "in.tsv", "-s", "EN", "-t", "Es", "--src-conllu", "src.conllu", "--tgt-conllu",
           "tgt.conllu", "--no-cache", "-q", "-o", "out.jsonl", code=0)
    assert '"src_lang": "en", "tgt_lang": "es"' in (ws.root / "out.jsonl").read_text(encoding="utf-8")


def test_the_same_source_and_target_language_is_refused(ws):
    before = ws.snapshot()
    result = ws.run("score", "in.tsv", "-t", "es", "-s", "ES", "--src-conllu", "src.conllu", "--tgt-conllu",
                    "tgt.conllu", "-o", "out.jsonl", code=1)
    assert result.output.strip() == ("Error: --tgt-lang: 'es' is also the source language: a translation goes "
                                     "from one language to another")
    assert ws.snapshot() == before


def test_an_unknown_language_is_named_without_the_installation_path(ws):
    before = ws.snapshot()
    result = ws.run("score", "in.tsv", "-s", "xx", "-t", "es", "-o", "out.jsonl", code=1)
    assert result.output.strip() == ("Error: --src-lang: no rules for language 'xx' (no xx.yaml among the rules; "
                                     "rules exist for: de, en, es, fr, it, pt)")
    assert str(rules_dir().resolve()) not in result.output
    assert ws.snapshot() == before


@pytest.mark.parametrize("key, hint", [("target", ' (an untranslated segment has "target": "")'),
                                       ("source", "")])
def test_a_jsonl_null_is_named_plainly(ws, key, hint):
    record = {"doc_id": '"d1"', "seg_id": '"1"', "source": '"Nerea Ubillos smiled."', "target": '"x"'}
    record[key] = "null"
    (ws.root / "in.jsonl").write_text("{" + ", ".join(f'"{k}": {v}' for k, v in record.items()) + "}\n",
                                      encoding="utf-8")
    before = ws.snapshot()
    result = ws.score("in.jsonl", "-o", "out.jsonl", code=1)
    assert result.output.strip() == f"Error: in.jsonl:1: key {key!r} is null: expected a string{hint}"
    assert ws.snapshot() == before


@pytest.mark.parametrize("text, line", [
    ("neutral_for_binary: [accept\n", 1),             # a bracket left open: the line it opens on
    ("assumptions: named\nfirst_names: 'x\n", 2),     # a quote left open at the end of the file
    ("neutral_for_binary: accept\n  flag: x\n", 2),   # a bad indentation: where it is found
])
def test_a_policy_yaml_syntax_error_is_on_the_line_at_fault(ws, text, line):
    (ws.root / "policy.yaml").write_text(text, encoding="utf-8")
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "out.jsonl", "--policy", "policy.yaml", code=1)
    assert result.output.startswith(f"Error: policy.yaml:{line}: not valid YAML: ")
    assert len(result.output.strip().splitlines()) == 1
    assert ws.snapshot() == before


def test_a_policy_key_error_names_its_line(ws):
    (ws.root / "policy.yaml").write_text("neutral_for_binary: accept\nfirst_name: names.tsv\n", encoding="utf-8")
    result = ws.score("in.tsv", "-o", "out.jsonl", "--policy", "policy.yaml", code=1)
    assert "Error: policy.yaml:2: first_name: unknown policy key" in result.output


def test_a_bad_first_name_list_is_reported_before_any_result(ws):
    ws.score("in.tsv", "-o", "res.jsonl", code=0)
    (ws.root / "names.tsv").write_text("Nerea\tfem\nIker\tmale\n", encoding="utf-8")
    (ws.root / "policy.yaml").write_text("first_names: names.tsv\n", encoding="utf-8")
    before = ws.snapshot()
    result = ws.score("in.tsv", "-o", "res.jsonl", "--policy", "policy.yaml", code=1)
    assert "names.tsv:2: expected 'name<TAB>fem|masc', found 'Iker\\tmale'" in result.output
    assert ws.snapshot() == before
