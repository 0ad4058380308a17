"""The HTML review report: structure, data attributes, escaping, self-containment, cautions."""

from __future__ import annotations

import base64
import hashlib
import re
from html.parser import HTMLParser

import pytest
from review_samples import TSV_ROWS, evidence, finding, result, tsv_results, write_jsonl, write_tsv

from gendertrace.errors import InputError
from gendertrace.io.readers import read_corpus
from gendertrace.review.html import CAUTIONS, _Span, render_marked, render_report
from gendertrace.review.results import load_review

# HTML Living Standard, "Void elements" (from memory): these have no end tag.
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


class Page(HTMLParser):
    """Start tags with attributes, the text, and a nesting check (every non-void element closed in order)."""

    def __init__(self, text: str) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.stack: list[str] = []
        self.errors: list[str] = []
        self.data: list[str] = []
        self.feed(text)
        self.close()

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
        else:
            self.stack.pop()

    def handle_data(self, data):
        self.data.append(data)

    def find(self, tag: str | None = None, **attrs: str) -> list[dict[str, str | None]]:
        out = []
        for t, a in self.tags:
            if tag is not None and t != tag:
                continue
            if all((a.get(k.replace("_", "-")) == v) if v is not True else k.replace("_", "-") in a
                   for k, v in attrs.items()):
                out.append(a)
        return out

    def classed(self, cls: str) -> list[dict[str, str | None]]:
        return [a for _, a in self.tags if cls in (a.get("class") or "").split()]

    @property
    def text(self) -> str:
        return "".join(self.data)


def build(tmp_path, rows=TSV_ROWS, results=None) -> str:
    inp = write_tsv(tmp_path / "in.tsv", rows)
    res = write_jsonl(tmp_path / "res.jsonl", tsv_results() if results is None else results)
    return render_report(load_review(res, read_corpus(inp)))


def test_report_is_well_nested_html(tmp_path):
    page = Page(build(tmp_path))
    assert page.errors == []
    assert page.stack == []


def test_one_highlight_per_finding_with_kind_confidence_and_id(tmp_path):
    page = Page(build(tmp_path))
    marks = [a for a in page.classed("fmark") if "cont" not in (a.get("class") or "").split()]
    assert [(m["data-finding-id"], m["data-kind"], m["data-confidence"]) for m in marks] == [
        ("f1-1", "contradiction", "0.800"),
        ("f1-2", "assumption", "0.400"),
        ("f1-3", "inconsistency", "0.650"),
    ]
    # Every highlight is reachable from the keyboard and names itself for screen readers.
    assert all(m.get("tabindex") == "0" and m.get("role") == "button" and m.get("aria-label") for m in marks)


def test_each_highlight_carries_a_kind_symbol_beside_it(tmp_path):
    html = build(tmp_path)
    # Meaning never by colour alone (WCAG 2.1, SC 1.4.1 Use of Color): the symbol and number follow the word.
    assert re.search(r'data-finding-id="f1-1"[^>]*>He<span class="ftag" aria-hidden="true">≠1</span></mark>',
                     html)
    assert '<span class="ftag" aria-hidden="true">?2</span>' in html
    assert '<span class="ftag" aria-hidden="true">⇄3</span>' in html


def test_evidence_words_are_marked_in_source_and_target_with_their_kinds(tmp_path):
    html = build(tmp_path)
    page = Page(html)
    contradiction = page.find("mark", data_finding_id="f1-1")[0]
    ids = contradiction["data-evidence"].split()
    spans = {a["data-evidence-id"]: a for a in page.classed("ev")}
    assert [(spans[i]["data-evidence-kind"], spans[i]["data-gender"]) for i in ids] == [
        ("morphology", "fem"), ("agreement", "fem")]
    # The source words themselves are wrapped, each with a label naming its kind.
    assert re.search(rf'data-evidence-id="{ids[0]}"[^>]*>La<span class="evlabel">morphology · fem</span>',
                     html)
    assert re.search(rf'data-evidence-id="{ids[1]}"[^>]*>cansada<span class="evlabel">agreement · fem</span>',
                     html)
    # A target evidence word that is itself a finding nests inside that finding's highlight.
    inconsistency = page.find("mark", data_finding_id="f1-3")[0]
    (he,) = inconsistency["data-evidence"].split()
    assert re.search(rf'data-finding-id="f1-2"[^>]*><span class="ev" data-evidence-id="{he}"[^>]*>he<span '
                     r'class="evlabel">pronoun · masc</span></span><span class="ftag"', html)


def test_detail_panel_holds_each_finding_hidden_until_selected(tmp_path):
    page = Page(build(tmp_path))
    details = page.classed("fdetail")
    assert [d["id"] for d in details] == ["detail-f1-1", "detail-f1-2", "detail-f1-3"]
    assert all("hidden" in d for d in details)
    text = page.text
    # The sample has no link data (results of schema 1), so the message says the evidence is indirect.
    for words in ("Ilune Garaikoa (E1)", "Expected",
                  "'He' makes Ilune Garaikoa masc; words linked to this person say fem", "0.80"):
        assert words in text


def test_untrusted_text_is_escaped_everywhere(tmp_path):
    evil = '<script>window.pwned=1</script><img src=x onerror="window.pwned=2">"\'&'
    rows = [(f"d{evil}", f"1{evil}", f"La jueza {evil} habló.", f"He {evil} spoke.")]
    results = [result(f"d{evil}", [finding(f"1{evil}", 0, 2, "He", message=evil, entity="E1",
                                           evidence_items=[evidence("source", f"1{evil}", 3, 8, "jueza",
                                                                    kind=evil, gender="fem")])],
                      labels={"E1": evil}, src_lang=evil, tgt_lang="en")]
    html = build(tmp_path, rows, results)
    page = Page(html)
    assert html.count("<script") == 1  # the report's own script only
    assert page.find("img") == []
    assert not any(k.startswith("on") for _, attrs in page.tags for k in attrs)
    assert evil in page.text  # shown to the reader as text
    assert page.errors == []
    # An invalid language tag is not written into a lang attribute at all.
    assert all(a.get("lang") in (None, "en") for _, a in page.tags)


def test_report_fetches_nothing_and_its_policy_admits_only_its_own_code(tmp_path):
    html = build(tmp_path)
    page = Page(html)
    assert page.find("link") == [] and page.find("img") == []
    assert not [a for _, a in page.tags if "src" in a]
    assert not re.search(r"""(href|src)\s*=\s*["']?(https?:)?//""", html)
    assert "@import" not in html and "url(" not in html
    (csp,) = [a["content"] for a in page.find("meta", http_equiv="Content-Security-Policy")]
    assert "default-src 'none'" in csp
    style = re.search(r"<style>(.*?)</style>", html, re.S).group(1)
    script = re.search(r"<script>(.*?)</script>", html, re.S).group(1)
    # CSP Level 3, hash-source: 'sha256-' followed by the base64 of the SHA-256 of the element's text.
    for text in (style, script):
        digest = base64.b64encode(hashlib.sha256(text.encode("utf-8")).digest()).decode()
        assert f"'sha256-{digest}'" in csp


def test_footer_carries_the_cautions(tmp_path):
    html = build(tmp_path)
    footer = Page(re.search(r"<footer.*?</footer>", html, re.S).group(0)).text
    for caution in CAUTIONS:
        assert caution in footer
    for words in ("aids for a human post-editor, not verdicts", "never decides anyone's gender",
                  "declared outrank all other evidence", "first name is weak evidence", "style guide",
                  "editor's judgement"):
        assert words in footer


def test_overview_counts_findings_by_kind_and_the_consistency_rate(tmp_path):
    page = Page(build(tmp_path))
    html_rows = re.findall(r'<tr data-doc-id="([^"]+)">(.*?)</tr>', build(tmp_path), re.S)
    values = {doc: re.findall(r'data-value="([^"]*)"', cells) for doc, cells in html_rows}
    # document, direction, segments, contradiction, inconsistency, assumption, rate (consistent / checked)
    assert values["brisa"] == ["brisa", "es-en", "3", "1", "1", "1", f"{1 / 3:.6f}"]
    assert values["mirador"] == ["mirador", "es-en", "1", "0", "0", "0", "1.000000"]
    assert "33%" in page.text and "1/3" in page.text
    headers = page.find("th", aria_sort="none")
    assert len(headers) == 7 and all(h.get("data-type") in ("text", "number") for h in headers)


def test_nothing_checkable_shows_no_rate(tmp_path):
    html = build(tmp_path, results=[result("mirador", [], checked=0, consistent=0)])
    assert 'data-value="-1">n/a' in html


def test_filters_offer_every_kind_and_a_confidence_floor(tmp_path):
    page = Page(build(tmp_path))
    assert [a["value"] for a in page.find("input", name="kind")] == ["contradiction", "inconsistency",
                                                                       "assumption"]
    (slider,) = page.find("input", id="min-confidence")
    assert (slider["type"], slider["min"], slider["max"]) == ("range", "0", "1")
    assert "Showing 3 of 3 findings" in page.text


def test_findings_that_do_not_match_the_input_are_listed_but_not_highlighted(tmp_path):
    results = tsv_results()
    results[0]["findings"][0]["start"] = 3  # "He" is not at 3-5 of segment 2
    page = Page(build(tmp_path, results=results))
    assert not page.find("mark", data_finding_id="f1-1")
    assert page.find("section", id="detail-f1-1")
    assert page.find("tr", data_finding_id="f1-1")
    assert "1 finding(s) do not match the input text" in page.text


def test_document_absent_from_the_input_is_noted(tmp_path):
    results = tsv_results() + [result("elsewhere", [finding("1", 0, 2, "He")])]
    page = Page(build(tmp_path, results=results))
    assert "This document is not in the input file" in page.text
    assert page.find("section", id="detail-f3-1")


def test_untranslated_segment_is_shown_as_such(tmp_path):
    rows = [*TSV_ROWS, ("mirador", "2", "Sin traducir.", "")]
    assert "(untranslated)" in Page(build(tmp_path, rows)).text


def test_print_stylesheet_hides_the_controls_and_keeps_the_text():
    from gendertrace.review.html import stylesheet

    css = stylesheet()
    block = css[css.index("@media print"):]
    assert re.search(r"\.toolbar, \.detail[^{]*\{ display: none !important; \}", block)
    assert "print-color-adjust: exact" in block


def test_crossing_spans_are_split_into_properly_nested_parts():
    def span(name, start, end, rank):
        return _Span(start, end, rank, lambda cont: f"<{name}{'+' if cont else ''}>",
                     lambda final: f"</{name}{'' if final else '~'}>")

    # a covers 0-4, b covers 2-6: b is closed when a ends and reopened as a continuation.
    assert render_marked("abcdef", [span("a", 0, 4, 0), span("b", 2, 6, 1)]) == \
        "<a>ab<b>cd</b~></a><b+>ef</b>"
    # At equal extents the lower rank is outside; text is escaped.
    assert render_marked("x<y", [span("e", 0, 3, 1), span("f", 0, 3, 0)]) == "<f><e>x&lt;y</e></f>"
    # Spans outside the text are ignored.
    assert render_marked("ab", [span("a", 1, 5, 0)]) == "ab"


def test_results_errors_name_the_file_and_line(tmp_path):
    bad = tmp_path / "bad.jsonl"
    bad.write_text('{"doc_id": "a", "findings": [], "stats": {}}\n{"doc_id": "b", "findings": [{}]}\n',
                   encoding="utf-8")
    with pytest.raises(InputError) as err:
        load_review(bad, [])
    assert "bad.jsonl:2:" in str(err.value) and "'kind'" in str(err.value)
    bad.write_text("{not json\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"bad\.jsonl:1: malformed JSON"):
        load_review(bad, [])
