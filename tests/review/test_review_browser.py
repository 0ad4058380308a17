"""The report in a real browser: headless Chromium driven by selenium.

The report is built from a real scoring run on a demo file. The tests skip only when Chromium or its driver is
not installed (Debian packages chromium and chromium-driver); they check what a post-editor does: count the
highlights, select one and see its evidence, filter, move with the keyboard, sort the overview.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

CHROMIUM = Path("/usr/bin/chromium")
CHROMEDRIVER = Path("/usr/bin/chromedriver")

pytestmark = pytest.mark.skipif(
    not (CHROMIUM.exists() and CHROMEDRIVER.exists()),
    reason="headless browser tests need /usr/bin/chromium and /usr/bin/chromedriver "
           "(apt-get install -y chromium chromium-driver)",
)

FLAGS = ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
         "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run",
         "--window-size=1400,1000")


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    webdriver = pytest.importorskip("selenium.webdriver")
    from selenium.webdriver.chrome.service import Service

    options = webdriver.ChromeOptions()
    options.binary_location = str(CHROMIUM)
    for flag in FLAGS:
        options.add_argument(flag)
    profile = tmp_path_factory.mktemp("chromium-profile")
    options.add_argument(f"--user-data-dir={profile}")
    options.set_capability("goog:loggingPrefs", {"browser": "ALL"})
    driver = webdriver.Chrome(service=Service(executable_path=str(CHROMEDRIVER)), options=options)
    driver.set_page_load_timeout(20)
    yield driver
    driver.quit()
    shutil.rmtree(profile, ignore_errors=True)


@pytest.fixture(scope="module")
def demo_report(demo_run, tmp_path_factory) -> tuple[Path, list[dict]]:
    from gendertrace.io.readers import read_corpus
    from gendertrace.review.html import render_report
    from gendertrace.review.results import load_review

    source, results = demo_run
    out = tmp_path_factory.mktemp("report") / "report.html"
    out.write_text(render_report(load_review(results, read_corpus(source))), encoding="utf-8")
    lines = results.read_text(encoding="utf-8").splitlines()
    findings = [f for line in lines for f in json.loads(line)["findings"]]
    assert len({f["kind"] for f in findings}) >= 2, "the demo run should give findings of several kinds"
    return out, findings


@pytest.fixture
def page(browser, demo_report):
    from selenium.webdriver.support.ui import WebDriverWait

    path, findings = demo_report
    browser.get(path.as_uri())
    WebDriverWait(browser, 10).until(lambda d: d.execute_script("return document.readyState") == "complete")
    return browser, findings


def css(driver, selector):
    from selenium.webdriver.common.by import By

    return driver.find_elements(By.CSS_SELECTOR, selector)


def selected_id(driver) -> str | None:
    shown = [d for d in css(driver, ".fdetail") if d.is_displayed()]
    assert len(shown) <= 1
    return shown[0].get_attribute("data-finding-id") if shown else None


def test_one_highlight_per_finding(page):
    driver, findings = page
    marks = css(driver, ".fmark:not(.cont)")
    assert len(marks) == len(findings)
    assert all(m.is_displayed() for m in marks)
    assert sorted(m.get_attribute("data-kind") for m in marks) == sorted(f["kind"] for f in findings)
    # The report's script ran under its Content-Security-Policy: nothing was blocked or failed.
    errors = [e for e in driver.get_log("browser") if e["level"] == "SEVERE"]
    assert errors == []


def test_clicking_a_highlight_shows_the_finding_and_its_evidence(page):
    driver, findings = page
    with_evidence = [k for k, f in enumerate(findings) if f["evidence"]]
    assert with_evidence, "the demo run should give a finding with evidence"
    k = with_evidence[0]
    mark = css(driver, ".fmark:not(.cont)")[k]
    fid = mark.get_attribute("data-finding-id")
    mark.click()
    assert selected_id(driver) == fid
    detail = css(driver, f"#detail-{fid}")[0]
    assert findings[k]["kind"] in detail.text and findings[k]["text"] in detail.text
    # Its evidence words light up in the segments, each with its kind written beside it.
    lit = [e for e in css(driver, ".ev.is-evidence") if e.is_displayed()]
    wanted = {(e["side"], e["seg_id"], e["start"], e["end"]) for e in findings[k]["evidence"]}
    source = findings[k].get("source")
    if source:  # the source word it is linked through lights up too, labelled as such
        wanted.add(("source", source["seg_id"], source["start"], source["end"]))
    assert len(lit) == len(wanted)
    labels = [e.find_element("css selector", ".evlabel") for e in lit]
    assert all(label.is_displayed() for label in labels)
    kinds = {e["kind"] for e in findings[k]["evidence"]} | ({"translated word"} if source else set())
    assert {label.text.split(" · ")[0] for label in labels} == kinds
    assert {e.find_element("xpath", "ancestor::td").get_attribute("class") for e in lit} <= {"src", "tgt"}
    # Nothing else is lit.
    assert len(css(driver, ".ev.is-evidence")) == len(wanted)


def test_filtering_by_kind_changes_the_visible_count(page):
    driver, findings = page
    contradictions = sum(1 for f in findings if f["kind"] == "contradiction")
    for kind in ("inconsistency", "assumption"):
        css(driver, f"input[name=kind][value={kind}]")[0].click()
    counter = css(driver, "#shown-count")[0].text
    assert counter == f"Showing {contradictions} of {len(findings)} findings"
    tags = [t for t in css(driver, ".fmark:not(.cont) .ftag") if t.is_displayed()]
    assert len(tags) == contradictions
    rows = [r for r in css(driver, ".findings-list tr[data-finding-id]") if r.is_displayed()]
    assert len(rows) == contradictions


def test_minimum_confidence_hides_weaker_findings(page):
    from selenium.webdriver.common.keys import Keys

    driver, findings = page
    slider = css(driver, "#min-confidence")[0]
    slider.click()
    slider.send_keys(Keys.HOME)
    for _ in range(70):  # 70 steps of 0.01 = 0.70
        slider.send_keys(Keys.ARROW_RIGHT)
    assert css(driver, "#min-confidence-value")[0].text == "0.70"
    strong = sum(1 for f in findings if f["confidence"] >= 0.7)
    assert css(driver, "#shown-count")[0].text == f"Showing {strong} of {len(findings)} findings"
    assert len([t for t in css(driver, ".ftag") if t.is_displayed()]) == strong


def test_keys_move_to_the_next_and_previous_finding(page):
    from selenium.webdriver.common.action_chains import ActionChains

    driver, findings = page
    ids = [m.get_attribute("data-finding-id") for m in css(driver, ".fmark:not(.cont)")]
    assert len(ids) >= 3
    body = css(driver, "body")[0]
    body.send_keys("n")
    assert selected_id(driver) == ids[0]
    ActionChains(driver).send_keys("n").send_keys("n").perform()
    assert selected_id(driver) == ids[2]
    ActionChains(driver).send_keys("p").perform()
    assert selected_id(driver) == ids[1]
    focused = driver.switch_to.active_element
    assert focused.get_attribute("data-finding-id") == ids[1]
    ActionChains(driver).send_keys("\ue00c").perform()  # Escape (WebDriver key code U+E00C)
    assert selected_id(driver) is None


def test_enter_on_a_focused_highlight_selects_it(page):
    from selenium.webdriver.common.keys import Keys

    driver, _ = page
    mark = css(driver, ".fmark:not(.cont)")[1]
    driver.execute_script("arguments[0].focus()", mark)
    mark.send_keys(Keys.ENTER)
    assert selected_id(driver) == mark.get_attribute("data-finding-id")


def test_overview_sorts_by_a_clicked_column(page):
    driver, _ = page
    header = css(driver, "#overview-table th button[data-sort-col='6']")[0]  # consistency
    last = "#overview-table tbody td:last-child"
    header.click()
    values = [float(td.get_attribute("data-value")) for td in css(driver, last)]
    assert values == sorted(values)
    header.click()
    values = [float(td.get_attribute("data-value")) for td in css(driver, last)]
    assert values == sorted(values, reverse=True)
    th = header.find_element("xpath", "..")
    assert th.get_attribute("aria-sort") == "descending"


def test_hostile_text_stays_text_in_the_browser(browser, tmp_path):
    from review_samples import evidence, finding, result, write_jsonl, write_tsv

    from gendertrace.io.readers import read_corpus
    from gendertrace.review.html import render_report
    from gendertrace.review.results import load_review

    evil = '<img src=x onerror="document.title=\'pwned\'"><script>document.title="pwned"</script>'
    inp = write_tsv(tmp_path / "in.tsv", [("d", "1", f"La jueza {evil} habló.", f"He spoke {evil}.")])
    flagged = finding("1", 0, 2, "He", message=evil, evidence_items=[evidence("source", "1", 3, 8, "jueza")])
    res = write_jsonl(tmp_path / "res.jsonl", [result("d", [flagged], labels={"E1": evil})])
    page = tmp_path / "r.html"
    page.write_text(render_report(load_review(res, read_corpus(inp)), title="hostile"), encoding="utf-8")
    browser.get(page.as_uri())
    assert browser.title == "hostile"
    assert css(browser, "img") == []
    css(browser, ".fmark")[0].click()
    assert evil in css(browser, "#detail-f1-1")[0].text
    assert browser.title == "hostile"
