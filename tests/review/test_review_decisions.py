"""The post-editor's loop end to end: decisions taken in the report (headless Chromium), exported, recorded
with the run, and shown by `history compare`; the findings CSV carries the same decisions back."""

from __future__ import annotations

import csv
import json
import shutil
import time
from pathlib import Path

import pytest
from click.testing import CliRunner
from test_review_browser import CHROMEDRIVER, CHROMIUM, FLAGS

from gendertrace.review.decisions import read_decisions

DEMO = Path(__file__).resolve().parents[2] / "corpora" / "demo"


@pytest.fixture(scope="module")
def demo_versions(tmp_path_factory) -> tuple[Path, dict[str, Path]]:
    """Both demo versions of es-en scored with their signatures, as `gendertrace score` writes them."""
    from gendertrace import Scorer
    from gendertrace.api import score_file

    folder = tmp_path_factory.mktemp("versions")
    scorer = Scorer("es", "en")
    out = {}
    for v in ("v1", "v2"):
        out[v] = folder / f"es-en.{v}.jsonl"
        score_file(DEMO / f"es-en.{v}.tsv", out[v], scorer)
    return folder, out


def _cli(*args: str) -> str:
    from gendertrace.cli import main

    got = CliRunner().invoke(main, list(args), catch_exceptions=False)
    assert got.exit_code == 0, got.output
    return got.output


@pytest.mark.skipif(not (CHROMIUM.exists() and CHROMEDRIVER.exists()),
                    reason="needs /usr/bin/chromium and /usr/bin/chromedriver (apt-get install -y chromium "
                           "chromium-driver)")
def test_decisions_made_in_the_report_reach_history_compare(demo_versions, tmp_path):
    webdriver = pytest.importorskip("selenium.webdriver")
    from selenium.webdriver.chrome.service import Service

    folder, runs = demo_versions
    page, table = tmp_path / "report.html", tmp_path / "findings.csv"
    _cli("review", str(runs["v1"]), "-i", str(DEMO / "es-en.v1.tsv"), "-o", str(page), "--csv", str(table))
    downloads = tmp_path / "downloads"
    downloads.mkdir()
    options = webdriver.ChromeOptions()
    options.binary_location = str(CHROMIUM)
    for flag in FLAGS:
        options.add_argument(flag)
    profile = tmp_path / "profile"
    options.add_argument(f"--user-data-dir={profile}")
    driver = webdriver.Chrome(service=Service(executable_path=str(CHROMEDRIVER)), options=options)
    try:
        driver.execute_cdp_cmd("Page.setDownloadBehavior", {"behavior": "allow", "downloadPath": str(downloads)})
        driver.get(page.as_uri())
        # The confidence filter starts at the run's minimum confidence (0.5 in the demo's signature).
        assert driver.find_element("css selector", "#min-confidence").get_attribute("value") == "0.5"
        marks = [m for m in driver.find_elements("css selector", ".fmark:not(.cont)") if m.is_displayed()
                 and "is-filtered" not in m.get_attribute("class")]
        assert len(marks) >= 3
        chosen = {}
        for mark, (verdict, comment) in zip(marks[:3], [("accept", ""), ("reject", "the aligned word is another "
                                                                                   "person's"), ("accept", "ok")],
                                            strict=True):
            mark.click()
            fid = mark.get_attribute("data-finding-id")
            detail = driver.find_element("css selector", f"#detail-{fid}")
            # The panel names the source word first, then the suggested form.
            labels = [dt.text for dt in detail.find_elements("css selector", "dt")]
            assert labels[:3] == ["Flagged", "Translates", "Suggested"]
            detail.find_element("css selector", f".decision input[value={verdict}]").click()
            if comment:
                detail.find_element("css selector", ".decision textarea").send_keys(comment)
            chosen[fid] = (verdict, comment)
        assert driver.find_element("css selector", "#decided-count").text == "3 decided"
        # Kept in the browser: a reload shows them again.
        driver.refresh()
        assert driver.find_element("css selector", "#decided-count").text == "3 decided"
        driver.find_element("css selector", "#export-decisions").click()
        target = downloads / "es-en.v1.decisions.json"
        for _ in range(50):
            if target.exists() and target.stat().st_size:
                break
            time.sleep(0.1)
        exported = json.loads(target.read_text(encoding="utf-8"))
    finally:
        driver.quit()
        shutil.rmtree(profile, ignore_errors=True)
    assert exported["format"] == "gendertrace-decisions"
    assert {d["finding"]: (d["decision"], d["comment"]) for d in exported["decisions"]} == chosen
    decisions = read_decisions(target)
    db = tmp_path / "h.db"
    said = _cli("history", "record", str(runs["v1"]), "--engine", "demo", "--version", "v1", "--db", str(db),
                "--decisions", str(target))
    assert "decisions: 3 on" in said and "2 accepted, 1 rejected, 2 with comments" in said
    _cli("history", "record", str(runs["v2"]), "--engine", "demo", "--version", "v2", "--db", str(db))
    report = _cli("history", "compare", "demo:v1", "demo:v2", "--db", str(db), "--no-metrics", "--samples", "200",
                  "--trials", "200")
    lines = report.splitlines()
    # Seven documents: the coarse-intervals note comes first, then the counts, then the decisions.
    assert lines[0].startswith("NOTE: only 7 documents: intervals are coarse")
    assert lines[2].startswith("findings from A to B:") and " fixed, " in lines[2]
    assert "decisions on A's findings: 2 accepted, 1 rejected; precision of judged findings 0.667" in report
    for title in ("fixed (in A, not in B):", "new (in B, not in A):", "persisting (in both):"):
        assert any(line.startswith(title) for line in lines)
    assert "(unreliable: too few documents)" in report
    # The CSV round-trips: the same decisions written into its columns read back the same.
    with open(table, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
        fields = list(rows[0].keys())
    assert fields[-2:] == ["decision", "comment"] and all(r["decision"] == r["comment"] == "" for r in rows)
    for r in rows:
        r["decision"], r["comment"] = chosen.get(r["finding"], ("", ""))
    with open(table, "w", encoding="utf-8", newline="") as f:
        w = csv.DictWriter(f, fieldnames=fields, lineterminator="\r\n")
        w.writeheader()
        w.writerows(rows)
    strip = [(d.finding, d.document, d.segment, d.start, d.end, d.text, d.decision, d.comment) for d in decisions]
    assert [(d.finding, d.document, d.segment, d.start, d.end, d.text, d.decision, d.comment)
            for d in read_decisions(table)] == strip
