"""The command line and the Python API behind it: `gendertrace score` and `gendertrace explain`.

Commands run in-process through click's CliRunner (the spaCy pipelines load once per process); one test
runs the installed console script for real. Documents, people and places are invented.
"""

from __future__ import annotations

import csv
import json
import subprocess
import sys
from pathlib import Path

import click
import pytest
from click.testing import CliRunner, Result

from gendertrace import Scorer
from gendertrace.api import score_file
from gendertrace.cli import main
from gendertrace.io.readers import read_corpus
from gendertrace.model import FINDING_KINDS

pytestmark = pytest.mark.slow

HEADER = ("doc_id", "seg_id", "source", "target")

# Three documents, deliberately not in alphabetical order. "zeta" is the worked example of docs/design.md
# (one contradiction); "alpha" agrees with its source; "mid" commits where the source is silent.
ROWS = [
    ("zeta", "1", "La piloto Amaia Zubelzu aterrizó en Orbeta.", "Pilot Amaia Zubelzu landed in Orbeta."),
    ("zeta", "2", "Estaba cansada, pero sonrió.", "He was tired, but smiled."),
    ("alpha", "1", "La cirujana Noa Berrizbeitia llegó a Usarte.",
     "Surgeon Noa Berrizbeitia arrived in Usarte."),
    ("alpha", "2", "Estaba cansada.", "She was tired."),
    ("mid", "1", "Amaia Zubelzu aterrizó en Orbeta.", "Amaia Zubelzu landed in Orbeta."),
    ("mid", "2", "Sonrió al público.", "He smiled at the audience."),
]
DOC_ORDER = ["zeta", "alpha", "mid"]
LANGS = ["--src-lang", "es", "--tgt-lang", "en"]

# Contract keys (docs/design.md, "Contracts that other tools rely on").
DOC_KEYS = {"doc_id", "src_lang", "tgt_lang", "entities", "findings", "stats"}
FINDING_KEYS = {
    "kind", "seg_id", "start", "end", "text", "expected", "found", "entity", "confidence", "evidence",
}
EVIDENCE_KEYS = {"side", "seg_id", "start", "end", "text"}
GENDER_VALUES = {"fem", "masc", "neutral", None}


def _tsv(path: Path, rows, header=HEADER) -> Path:
    path.write_text("\n".join("\t".join(r) for r in [header, *rows]) + "\n", encoding="utf-8")
    return path


def _csv(path: Path, rows) -> Path:
    with open(path, "w", encoding="utf-8", newline="") as f:
        csv.writer(f).writerows([HEADER, *rows])
    return path


def _jsonl(path: Path, rows) -> Path:
    lines = [json.dumps(dict(zip(HEADER, r, strict=True)), ensure_ascii=False) for r in rows]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _run(*args: str) -> Result:
    return CliRunner().invoke(main, [str(a) for a in args])


def _score(inp: Path, out: Path, *extra: str) -> Result:
    return _run("score", inp, *LANGS, "--out", out, *extra)


def _read_out(out: Path) -> list[dict]:
    return [json.loads(line) for line in out.read_text(encoding="utf-8").splitlines()]


def _findings(objs: list[dict]) -> list[tuple]:
    return [(o["doc_id"], f["kind"], f["seg_id"], f["start"], f["end"], f["text"], f["expected"], f["found"])
            for o in objs for f in o["findings"]]


def _one_line_error(result: Result) -> str:
    assert result.exit_code != 0
    assert isinstance(result.exception, SystemExit)  # click's handled error, not a crash
    assert "Traceback" not in result.output
    lines = [ln for ln in result.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, result.stderr
    return lines[0]


@pytest.fixture(scope="module")
def scored(tmp_path_factory):
    """The three-document corpus scored once through the CLI: (input, output, result, parsed output)."""
    folder = tmp_path_factory.mktemp("scored")
    inp, out = _tsv(folder / "batch.tsv", ROWS), folder / "out.jsonl"
    result = _score(inp, out)
    assert result.exit_code == 0, result.output
    return inp, out, result, _read_out(out)


# -------------------------------------------------------------------------------------------------------
# score: the output contract


def test_score_writes_one_object_per_document_in_input_order(scored):
    _, _, _, objs = scored
    assert [o["doc_id"] for o in objs] == DOC_ORDER


def test_score_output_objects_have_the_contract_keys(scored):
    _, _, _, objs = scored
    for o in objs:
        assert DOC_KEYS <= set(o)
        assert (o["src_lang"], o["tgt_lang"]) == ("es", "en")
        assert isinstance(o["stats"], dict)


def test_score_findings_have_the_contract_keys_and_values(scored):
    _, _, _, objs = scored
    findings = [(o, f) for o in objs for f in o["findings"]]
    assert findings  # the worked example alone gives one
    for o, f in findings:
        assert FINDING_KEYS <= set(f)
        assert f["kind"] in FINDING_KINDS
        assert f["expected"] in GENDER_VALUES and f["found"] in GENDER_VALUES
        assert 0.0 <= f["confidence"] <= 1.0
        assert f["entity"] in {e["id"] for e in o["entities"]}
        for ev in f["evidence"]:
            assert EVIDENCE_KEYS <= set(ev)
            assert ev["side"] in ("source", "target")


def test_every_finding_text_is_the_flagged_slice_of_its_target(scored):
    inp, _, _, objs = scored
    targets = {(d.doc_id, s.seg_id): s.target for d in read_corpus(inp) for s in d.segments}
    checked = 0
    for o in objs:
        for f in o["findings"]:
            assert f["text"] == targets[(o["doc_id"], f["seg_id"])][f["start"]:f["end"]]
            checked += 1
    assert checked >= 2


def test_score_finds_the_worked_example_contradiction_and_the_assumption(scored):
    _, _, _, objs = scored
    assert _findings(objs) == [
        ("zeta", "contradiction", "2", 0, 2, "He", "fem", "masc"),
        ("mid", "assumption", "2", 0, 2, "He", None, "masc"),
    ]


def test_score_writes_the_run_signature_beside_the_output(scored):
    _, out, _, _ = scored
    signature = json.loads(Path(str(out) + ".signature.json").read_text(encoding="utf-8"))
    assert {"tool", "rules", "src", "tgt", "min_confidence"} <= set(signature)
    assert signature["documents"] == len(DOC_ORDER)


# -------------------------------------------------------------------------------------------------------
# score: formats


@pytest.mark.parametrize("writer, name", [
    (_csv, "batch.csv"), (_jsonl, "batch.jsonl"), (_jsonl, "batch.NDJSON"),
])
def test_format_is_taken_from_the_extension(scored, tmp_path, writer, name):
    _, _, _, expected = scored
    out = tmp_path / "out.jsonl"
    result = _score(writer(tmp_path / name, ROWS), out)
    assert result.exit_code == 0, result.output
    assert _read_out(out) == expected


def test_format_option_reads_a_file_with_another_extension(scored, tmp_path):
    _, _, _, expected = scored
    out = tmp_path / "out.jsonl"
    result = _score(_tsv(tmp_path / "batch.txt", ROWS), out, "--format", "tsv")
    assert result.exit_code == 0, result.output
    assert _read_out(out) == expected


def test_format_option_overrides_the_extension(scored, tmp_path):
    _, _, _, expected = scored
    out = tmp_path / "out.jsonl"
    result = _score(_jsonl(tmp_path / "batch.csv", ROWS), out, "--format", "jsonl")
    assert result.exit_code == 0, result.output
    assert _read_out(out) == expected


def test_unknown_extension_without_format_is_an_error_naming_it(tmp_path):
    line = _one_line_error(_score(_tsv(tmp_path / "batch.txt", ROWS), tmp_path / "out.jsonl"))
    assert "batch.txt" in line and "'.txt'" in line


# -------------------------------------------------------------------------------------------------------
# score: summary and CI gate


def test_score_prints_the_summary(scored):
    _, _, result, _ = scored
    rows = {ln.rsplit("  ", 1)[0].strip(): ln.split()[-1] for ln in result.stdout.splitlines() if ln.strip()}
    assert rows["documents"] == "3"
    assert (rows["contradiction findings"], rows["assumption findings"]) == ("1", "1")
    assert rows["consistency rate"] == "0.500"  # zeta: 0 of 1 checked references consistent; alpha: 1 of 1


def test_quiet_prints_no_summary(tmp_path):
    result = _score(_tsv(tmp_path / "b.tsv", ROWS[:2]), tmp_path / "out.jsonl", "--quiet")
    assert result.exit_code == 0
    assert result.stdout == ""


def test_fail_under_exits_non_zero_below_the_rate(tmp_path):
    # zeta alone: its one checked reference contradicts the source, rate 0.0.
    result = _score(_tsv(tmp_path / "b.tsv", ROWS[:2]), tmp_path / "out.jsonl", "--fail-under", "0.5")
    assert result.exit_code == 3  # the status `score --help` documents for --fail-under
    assert "below --fail-under" in result.stderr


def test_fail_under_exits_zero_above_the_rate(tmp_path):
    # alpha alone: its one checked reference agrees with the source, rate 1.0.
    result = _score(_tsv(tmp_path / "b.tsv", ROWS[2:4]), tmp_path / "out.jsonl", "--fail-under", "0.5")
    assert result.exit_code == 0, result.output
    assert "1.000" in result.stdout


def test_empty_target_is_reported_as_untranslated(tmp_path):
    rows = [*ROWS[2:4], ("alpha", "3", "Sonrió.", "")]
    out = tmp_path / "out.jsonl"
    result = _score(_tsv(tmp_path / "b.tsv", rows), out)
    assert result.exit_code == 0, result.output
    assert "1 untranslated" in result.stdout
    (obj,) = _read_out(out)
    assert obj["doc_id"] == "alpha"
    assert obj["stats"]["segments"] == 3  # the untranslated segment is counted, not dropped


# -------------------------------------------------------------------------------------------------------
# explain


def test_explain_prints_chains_evidence_and_findings(scored):
    inp, _, _, _ = scored
    result = _run("explain", inp, "--doc", "zeta", *LANGS)
    assert result.exit_code == 0, result.output
    text = result.stdout
    assert "chains:" in text and "Estaba@2 (zero subject)" in text
    assert "He@2" in text
    assert "entities:" in text and "'cansada'" in text and "'La'" in text
    assert "contradiction [2] 0-2 'He': expected fem, found masc" in text


def test_explain_unknown_doc_id_is_a_clear_error(scored):
    inp, _, _, _ = scored
    result = _run("explain", inp, "--doc", "nope", *LANGS)
    assert result.exit_code == 2  # click's usage error status
    assert "Traceback" not in result.output
    assert "no document 'nope'" in result.stderr and "--doc" in result.stderr


# -------------------------------------------------------------------------------------------------------
# Bad input: one line naming file and line, no traceback


def test_missing_column_is_a_one_line_error(tmp_path):
    inp = _tsv(tmp_path / "b.tsv", [r[:3] for r in ROWS[:2]], header=HEADER[:3])
    line = _one_line_error(_score(inp, tmp_path / "out.jsonl"))
    assert "b.tsv:1:" in line and "'target'" in line


def test_repeated_seg_id_is_a_one_line_error(tmp_path):
    inp = _tsv(tmp_path / "b.tsv", [ROWS[0], ROWS[0]])
    line = _one_line_error(_score(inp, tmp_path / "out.jsonl"))
    assert "b.tsv:3:" in line and "seg_id '1' repeated" in line


def test_invalid_utf8_is_a_one_line_error(tmp_path):
    inp = tmp_path / "b.tsv"
    inp.write_bytes(b"doc_id\tseg_id\tsource\ttarget\nd1\t1\tSonri\xf3.\tHe smiled.\n")  # Latin-1 "ó"
    line = _one_line_error(_score(inp, tmp_path / "out.jsonl"))
    assert "b.tsv:2:" in line and "UTF-8" in line


def test_malformed_conllu_line_is_a_one_line_error(tmp_path):
    conllu = tmp_path / "src.conllu"
    conllu.write_text("# text = Sonrió.\n1\tSonrió\tsonreír\tVERB\n\n", encoding="utf-8")
    inp = _tsv(tmp_path / "b.tsv", [("d1", "1", "Sonrió.", "He smiled.")])
    line = _one_line_error(_score(inp, tmp_path / "out.jsonl", "--src-conllu", conllu))
    assert "src.conllu:2:" in line and "10 tab-separated columns" in line


def test_language_without_rules_is_a_one_line_error(tmp_path):
    inp = _tsv(tmp_path / "b.tsv", ROWS[:2])
    result = _run("score", inp, "--src-lang", "xx", "--tgt-lang", "en", "--out", tmp_path / "out.jsonl")
    line = _one_line_error(result)
    assert "xx.yaml" in line and "'xx'" in line
    assert "rules exist for: " in line and "en, es, fr" in line


# -------------------------------------------------------------------------------------------------------
# Help


@pytest.mark.parametrize("command", ["score", "explain", "demo", "bench"])
def test_help_documents_every_option(command):
    result = _run(command, "--help")
    assert result.exit_code == 0
    cmd = main.commands[command]
    first_words = " ".join(cmd.help.split()[:4])
    assert first_words in " ".join(result.stdout.split())  # the docstring is the command's description
    for param in cmd.params:
        if isinstance(param, click.Option) and param.name != "help":
            assert param.help, f"{command} {param.opts[0]} has no help text"
            assert all(opt in result.stdout for opt in param.opts)


def test_installed_console_script_prints_help():
    script = Path(sys.executable).with_name("gendertrace")
    proc = subprocess.run([str(script), "--help"], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0
    for command in ("score", "explain", "demo", "bench"):
        assert command in proc.stdout


# -------------------------------------------------------------------------------------------------------
# The Python API gives what the command line gives


def test_score_file_writes_what_the_cli_writes(scored, tmp_path):
    inp, _, _, expected = scored
    out = tmp_path / "api.jsonl"
    summary = score_file(inp, out, Scorer("es", "en"))
    assert _read_out(out) == expected
    assert summary.documents == len(DOC_ORDER)
    assert (summary.checked, summary.consistent) == (2, 1)


def test_scorer_score_gives_the_cli_findings(scored):
    inp, _, _, expected = scored
    results = list(Scorer("es", "en").score(read_corpus(inp)))
    assert [r.doc_id for r in results] == DOC_ORDER
    assert [r.to_json() for r in results] == expected
