"""The weights file (rules/scoring/weights.yaml): validated on load, read by the stages, in the signature."""

from __future__ import annotations

import copy

import pytest
import yaml

from gendertrace.errors import RulesError
from gendertrace.settings import WEIGHTS, parse_weights, weights_digest, weights_path


def _shipped() -> dict:
    return yaml.safe_load(weights_path().read_text(encoding="utf-8"))


def test_shipped_weights_load_and_every_number_has_a_comment():
    assert parse_weights(_shipped(), weights_path()) == WEIGHTS
    lines = weights_path().read_text(encoding="utf-8").splitlines()
    for k, line in enumerate(lines):
        body = line.split("#")[0]
        if ":" in body and body.split(":", 1)[1].strip():  # a key with a value
            # The comment is on the line itself or on the line(s) just before it.
            assert "#" in line or lines[k - 1].lstrip().startswith("#"), f"line {k + 1} has no comment: {line}"


def test_missing_key_names_file_and_key():
    data = _shipped()
    del data["links"]["lexicon"]
    with pytest.raises(RulesError, match=r"weights\.yaml: links\.lexicon: missing"):
        parse_weights(data, weights_path())


def test_unknown_key_and_section_are_refused():
    data = copy.deepcopy(_shipped())
    data["findings"]["direct_rech"] = 0.85
    with pytest.raises(RulesError, match=r"findings\.direct_rech: unknown key"):
        parse_weights(data, weights_path())
    data = _shipped()
    data["extra"] = {}
    with pytest.raises(RulesError, match=r"extra: unknown section"):
        parse_weights(data, weights_path())


@pytest.mark.parametrize(
    ("section", "key", "value", "message"),
    [
        ("links", "alignment", 1.5, "expected a value between 0 and 1"),  # a confidence
        ("evidence", "pronoun", -1.0, "expected a value at least 0"),
        ("evidence", "pronoun", "heavy", "expected a number"),
        ("coreference", "pronoun_window", 2.5, "expected an integer"),
        ("defaults", "batch_docs", 0, "expected a value at least 1"),
    ],
)
def test_out_of_range_or_wrong_type_is_refused(section, key, value, message):
    data = _shipped()
    data[section][key] = value
    with pytest.raises(RulesError, match=f"{section}.{key}: {message}"):
        parse_weights(data, weights_path())


def test_stages_read_the_weights_file():
    from gendertrace.coref import sieves
    from gendertrace.findings import detect
    from gendertrace.link import linker
    from gendertrace.mentions import extract

    assert extract.W_PRONOUN == WEIGHTS.evidence.pronoun
    assert sieves.DISTANCE_CERTAINTY == WEIGHTS.coreference.distance_certainty
    assert linker.CONF_LEXICON == WEIGHTS.links.lexicon
    assert detect.DIRECT_REACH == WEIGHTS.findings.direct_reach


def test_signature_carries_the_weights_digest_and_version():
    from gendertrace import __version__
    from gendertrace.parse.conllu_backend import ConlluParser
    from gendertrace.pipeline import Scorer

    scorer = Scorer("es", "en", src_parser=ConlluParser("es", []), tgt_parser=ConlluParser("en", []))
    sig = scorer.signature()
    assert sig["weights"] == weights_digest() and len(sig["weights"]) == 12
    assert sig["tool"] == f"gendertrace {__version__}"
    assert scorer.settings.min_confidence == WEIGHTS.defaults.min_confidence
    assert scorer.settings.batch_size == WEIGHTS.defaults.batch_docs


def test_a_bad_weights_file_is_a_one_line_message_from_the_command_line(tmp_path):
    import os
    import shutil
    import subprocess
    import sys

    from gendertrace.rules.loader import rules_dir

    rules = tmp_path / "rules"
    shutil.copytree(rules_dir(), rules)
    weights = rules / "scoring" / "weights.yaml"
    text = weights.read_text(encoding="utf-8")
    weights.write_text(text.replace("  pronoun: 1.0", "  pronoun: heavy", 1), encoding="utf-8")
    corpus = tmp_path / "in.tsv"
    corpus.write_text("doc_id\tseg_id\tsource\ttarget\nd\t1\tElla llegó.\tShe arrived.\n", encoding="utf-8")
    run = subprocess.run(
        [sys.executable, "-m", "gendertrace.cli", "score", str(corpus), "-s", "es", "-t", "en", "-o",
         str(tmp_path / "out.jsonl")],
        capture_output=True, text=True, env={**os.environ, "GENDERTRACE_RULES": str(rules)}, timeout=300,
    )
    assert run.returncode == 1
    assert "Traceback" not in run.stderr
    assert run.stderr.strip().splitlines() == [
        f"Error: {weights}: evidence.pronoun: expected a number, found 'heavy'"]
