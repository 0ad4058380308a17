"""The real-MT section of the benchmark: judgement files, the ranking in the data README, the report table, and
one end-to-end run on a tiny invented folder (a reference and an engine that flips a mayor's gender)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from gendertrace.bench.realmt import (
    COLUMNS,
    REFERENCE,
    FlaggedWord,
    SystemResult,
    load_judgements,
    read_autorank,
    realmt_section,
    realmt_systems,
    run_realmt,
)
from gendertrace.errors import InputError
from gendertrace.link.align import MIN_STATISTICAL

HEADER = "\t".join(COLUMNS) + "\n"


def _write(path: Path, rows: list[str]) -> Path:
    path.write_text(HEADER + "".join(r + "\n" for r in rows), encoding="utf-8")
    return path


def test_judgements_are_keyed_by_system_document_segment_offsets_and_text(tmp_path):
    path = _write(tmp_path / "j.tsv", [
        "EngineX\td1\t2\t0\t10\tEl alcalde\treal\treal\tthe mayor is a woman",
        "EngineX\td1\t2\t31\t39\tcontento\tfalse\tnot-a-person\tinvented row",
    ])
    got = load_judgements(path)
    assert set(got) == {("EngineX", "d1", "2", 0, 10, "El alcalde"), ("EngineX", "d1", "2", 31, 39, "contento")}
    assert got[("EngineX", "d1", "2", 0, 10, "El alcalde")].label == "real"
    assert load_judgements(tmp_path / "absent.tsv") == {}


@pytest.mark.parametrize(
    ("row", "says"),
    [
        ("EngineX\td1\t2\t0\t10\tEl alcalde\tmaybe\treal\tx", "label 'maybe'"),
        ("EngineX\td1\t2\tzero\t10\tEl alcalde\treal\treal\tx", "not numbers"),
        ("EngineX\td1\t2\t0\t10\tEl alcalde\treal", "7 columns"),
    ],
)
def test_a_bad_judgement_row_names_file_line_and_value(tmp_path, row, says):
    path = _write(tmp_path / "j.tsv", ["EngineX\td1\t1\t0\t2\tLa\tfalse\tother\tfine", row])
    with pytest.raises(InputError) as err:
        load_judgements(path)
    assert err.value.line == 3 and says in err.value.message and str(path) in str(err.value)


def test_the_same_finding_judged_twice_is_an_error(tmp_path):
    row = "EngineX\td1\t1\t0\t2\tLa\tfalse\tother\tx"
    with pytest.raises(InputError, match="judged twice"):
        load_judgements(_write(tmp_path / "j.tsv", [row, row]))


def test_autorank_is_read_from_the_readme_paragraph_that_gives_it(tmp_path):
    readme = tmp_path / "README.md"
    readme.write_text(
        "# Invented data\n\nSome words 2024 and 3.5 elsewhere.\n\n"
        "- The ranking (AutoRank, lower is better; from a report): Alpha-7B 1.0, Beta.X 2.5,\n"
        "  Gamma 10.0. It ranks quality.\n\nAfter 9.9 nothing counts.\n",
        encoding="utf-8",
    )
    assert read_autorank(readme) == {"Alpha-7B": 1.0, "Beta.X": 2.5, "Gamma": 10.0}
    assert read_autorank(tmp_path / "none.md") == {}


def test_the_section_is_skipped_with_a_message_when_the_folder_is_absent(tmp_path):
    lines = realmt_section(tmp_path / "missing")
    assert any(line.startswith("Skipped: no real MT folder at") for line in lines)


def _result(system: str, words: list[tuple[str, int, int, str]], checked: int, consistent: int) -> SystemResult:
    found = tuple(FlaggedWord(system, "d1", seg, s, e, t, "contradiction") for seg, s, e, t in words)
    return SystemResult(system, 2, 1 if found else 0, found, checked, consistent)


def _row(lines: list[str], system: str) -> list[str]:
    return next(line for line in lines if line.startswith(f"| {system} |")).strip("|").split("|")


def test_precision_counts_judged_findings_and_leaves_unjudged_ones_apart(tmp_path):
    (tmp_path / "data").mkdir()
    judged = load_judgements(_write(tmp_path / "j.tsv", [
        "A\td1\t1\t0\t2\tEl\treal\treal\tx",
        "A\td1\t1\t5\t9\tsola\tfalse\tmerged-persons\tx",
        "B\td1\t2\t3\t5\tla\tfalse\tnot-a-person\tx",
    ]))
    results = [
        _result(REFERENCE, [], 4, 4),
        _result("A", [("1", 0, 2, "El"), ("1", 5, 9, "sola"), ("3", 1, 4, "una")], 10, 7),
        _result("B", [("2", 3, 5, "la")], 10, 9),
        _result("C", [], 10, 10),
    ]
    ranks = {"A": 3.0, "B": 2.0, "C": 1.0}
    lines = realmt_section(tmp_path / "data", results, judged, ranks)
    a = [c.strip() for c in _row(lines, "A")]
    # docs, docs flagged, findings, judged, real, precision, unjudged, rate, AutoRank
    assert a[1:] == ["2", "1", "3", "2", "1", "0.500", "1", "0.700", "3.0"]
    total = [c.strip() for c in _row(lines, "all engines")]
    assert total[3:8] == ["4", "3", "1", "0.333", "1"]
    assert "Human reference: 0 of 2 documents flagged, 0 findings." in lines
    # Rates 0.7, 0.9, 1.0 against ranks 3, 2, 1 are in exactly reverse order: Spearman's rho is -1
    # (rho = 1 - 6 * sum(d^2) / (n (n^2 - 1)) = 1 - 6 * 8 / 24; Spearman's rank correlation, textbook formula).
    assert any("Spearman rho -1.000" in line for line in lines)
    causes = [line for line in lines if line.startswith("| merged-persons |") or line.startswith("| not-a-person |")]
    assert len(causes) == 2


def test_systems_list_the_reference_first(tmp_path):
    for name in ("Zeta", "reference", "Alpha"):
        (tmp_path / f"{name}.jsonl").write_text("", encoding="utf-8")
    assert realmt_systems(tmp_path) == ["reference", "Alpha", "Zeta"]


@pytest.mark.slow
def test_a_flipped_mayor_is_flagged_on_the_engine_and_not_on_the_reference(tmp_path, monkeypatch):
    # Invented town and person. Spanish agreement facts (handbook grammar): "alcaldesa" is the feminine of
    # "alcalde", and a predicative adjective agrees with its subject ("contenta" / "contento").
    monkeypatch.setenv("GENDERTRACE_CACHE_DIR", str(tmp_path / "cache"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    src = ["Marta Quiroga is the new mayor of Valdelobos. She was elected on Sunday.",
           "The mayor said she was very happy."]
    ref = ["Marta Quiroga es la nueva alcaldesa de Valdelobos. Fue elegida el domingo.",
           "La alcaldesa dijo que estaba muy contenta."]
    eng = [ref[0], "El alcalde dijo que estaba muy contento."]
    data = tmp_path / "data"
    data.mkdir()
    # Enough documents for the statistical aligner to learn from (the engine flips the first one only).
    docs = MIN_STATISTICAL // 2 + 1
    for name, tgt in ((REFERENCE, ref), ("EngineX", eng)):
        rows = [{"doc_id": f"d{k}", "seg_id": str(i + 1), "source": s, "target": t if k == 1 else ref[i],
                 "domain": "news"} for k in range(1, docs + 1) for i, (s, t) in enumerate(zip(src, tgt, strict=True))]
        (data / f"{name}.jsonl").write_text("".join(json.dumps(r) + "\n" for r in rows), encoding="utf-8")
    ref_res, eng_res = run_realmt(data)
    assert ref_res.system == REFERENCE and ref_res.findings == () and ref_res.flagged_documents == 0
    assert eng_res.flagged_documents == 1
    flagged = {(w.doc_id, w.seg_id, w.text) for w in eng_res.findings}
    assert ("d1", "2", "El alcalde") in flagged
    assert eng_res.rate is not None and eng_res.rate < ref_res.rate
    # The frozen model is learned from the reference when missing, then read back on the next run.
    priors = tmp_path / "wmt.priors"
    first = run_realmt(data, align_priors=priors)
    assert priors.is_file()
    assert [r.findings for r in run_realmt(data, align_priors=priors)] == [r.findings for r in first]


def test_unjudged_findings_are_listed_by_id_and_word(tmp_path):
    (tmp_path / "data").mkdir()
    results = [_result("A", [("1", 0, 2, "El"), ("3", 1, 4, "una")], 10, 8)]
    judged = load_judgements(_write(tmp_path / "j.tsv", ["A\td1\t1\t0\t2\tEl\treal\treal\tx"]))
    lines = realmt_section(tmp_path / "data", results, judged, {})
    assert "- A d1 [3] 1-4 'una'" in lines
    assert not any(line.startswith("- A d1 [1]") for line in lines)


def test_bench_command_says_the_real_mt_part_is_skipped_when_its_folder_is_absent(tmp_path):
    from click.testing import CliRunner

    from gendertrace.cli import main

    report = tmp_path / "report.md"
    result = CliRunner().invoke(main, ["bench", "--only", "realmt", "--realmt", str(tmp_path / "none"),
                                       "--report", str(report)])
    assert result.exit_code == 0
    assert "real MT section skipped: no folder at" in result.output
    assert "Skipped: no real MT folder at" in report.read_text(encoding="utf-8")
