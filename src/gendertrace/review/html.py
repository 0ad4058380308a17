"""The post-editor's review report: one self-contained HTML file (inline CSS and script, nothing fetched).

Layout: an overview table of documents (sortable), filters by finding kind and minimum confidence, then each
document's segments with source and target side by side. Every flagged target word is a highlight carrying a
kind symbol; selecting one (click, Enter, or the keys n/p) opens a detail panel and highlights the finding's
evidence words on both sides, each with a text label of its kind. Every text from the input or the results is
escaped, and a Content-Security-Policy admits only the report's own inline style and script (by hash).

The detail panel names the source word the flagged word is linked through first, then the corrected form
the rules build (when they can), the person's linked mentions on both sides with how each is linked, and
the evidence; the person's whole evidence and mentions are written once per person (`#person-...`), not once
per finding, so the page grows with the text. Each finding takes a decision (accept, reject) and a comment,
kept in the browser's local storage under the report's key and exported as a decisions file (see
gendertrace.review.decisions). The confidence filter starts at the run's minimum confidence.

Testable hooks: `.fmark[data-finding-id][data-kind][data-confidence]` (one per finding, plus `.cont` parts
when a highlight has to be split around other markup), `[data-evidence-id]`, `#detail-<finding id>`,
`#shown-count`, `.decision input[value=accept|reject]`, `.decision textarea`, `#export-decisions`,
`#decided-count`.
"""

from __future__ import annotations

import base64
import hashlib
import html
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from importlib import resources

from gendertrace import __version__
from gendertrace.model import FINDING_KINDS
from gendertrace.review.results import LINK_WORDS, ReviewDocument, ReviewEvidence, ReviewFinding

# The report's colours, all of them: the stylesheet uses only these (as CSS custom properties), and
# tests/review/test_review_contrast.py checks the contrast of every pair the stylesheet puts together.
PALETTE: dict[str, str] = {
    "paper": "#f5f4f0",
    "surface": "#ffffff",
    "ink": "#1c2830",
    "muted": "#4f5d68",
    "rule": "#d5d2ca",
    "accent": "#1d5a75",
    "focus": "#0b4f8a",
    "masthead": "#1f3a47",
    "masthead-ink": "#f5f4f0",
    "masthead-muted": "#c9d6dc",
    "zebra": "#faf9f6",
    "contradiction-bg": "#fbe4e1",
    "contradiction-ink": "#8a1c12",
    "contradiction-line": "#b3261e",
    "inconsistency-bg": "#fcefd2",
    "inconsistency-ink": "#6e4700",
    "inconsistency-line": "#9a6200",
    "assumption-bg": "#e2ebf6",
    "assumption-ink": "#1f4470",
    "assumption-line": "#3b6aa3",
    "evidence-bg": "#ddf0e6",
    "evidence-ink": "#15523a",
    "evidence-line": "#2a7654",
    "warning-bg": "#fff4d6",
    "warning-ink": "#5c3d00",
    "source-bg": "#efe3f7",
    "source-ink": "#4a1f66",
    "source-line": "#6b3a8c",
    "print-ink": "#000000",
    "print-paper": "#ffffff",
}

# A symbol beside every highlight, so that meaning never rests on colour alone (WCAG 2.1, SC 1.4.1).
KIND_SYMBOL = {"contradiction": "≠", "inconsistency": "⇄", "assumption": "?"}
KIND_LABEL = {
    "contradiction": "contradicts the document's evidence",
    "inconsistency": "the target gives this person two genders",
    "assumption": "the target commits to a gender nothing in the document states",
}
OTHER_SYMBOL = "•"

CAUTIONS = (
    "Findings are aids for a human post-editor, not verdicts.",
    "The tool checks that a translation is faithful to what the document says about a person; it never "
    "decides anyone's gender.",
    "Pronouns a person has declared outrank all other evidence.",
    "A first name is weak evidence, and used only when asked for.",
    "Publication decisions follow the client's style guide and the editor's judgement.",
)

_LANG_TAG = re.compile(r"^[A-Za-z]{2,8}(-[A-Za-z0-9]{1,8})*$")


def esc(text: object) -> str:
    return html.escape(str(text), quote=True)


def _asset(name: str) -> str:
    return resources.files("gendertrace.review").joinpath("assets").joinpath(name).read_text(encoding="utf-8")


def stylesheet() -> str:
    """The report's CSS: the palette as custom properties, then the rules (which use only those)."""
    props = "\n".join(f"  --{k}: {v};" for k, v in PALETTE.items())
    return f":root {{\n{props}\n}}\n" + _asset("report.css")


def script() -> str:
    return _asset("report.js")


def _csp_hash(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode("utf-8")).digest()).decode("ascii") + "'"


# ----------------------------------------------------------------------------------------------------
# Marked-up segment text


@dataclass(frozen=True)
class _Span:
    """A stretch of a segment to wrap: `opening(continued)` and `closing(final)` give its tags."""

    start: int
    end: int
    rank: int  # at equal extents the lower rank is the outer element
    opening: Callable[[bool], str]
    closing: Callable[[bool], str]


def render_marked(text: str, spans: Sequence[_Span]) -> str:
    """`text` escaped, with each span wrapped; spans that cross are split into properly nested parts."""
    spans = [s for s in spans if 0 <= s.start < s.end <= len(text)]
    cuts = sorted({0, len(text), *(s.start for s in spans), *(s.end for s in spans)})
    by_start: dict[int, list[_Span]] = {}
    for s in spans:
        by_start.setdefault(s.start, []).append(s)
    out: list[str] = []
    stack: list[_Span] = []
    for k, pos in enumerate(cuts):
        if any(s.end == pos for s in stack):
            deepest = min(i for i, s in enumerate(stack) if s.end == pos)
            reopen = [s for s in stack[deepest:] if s.end != pos]
            for s in reversed(stack[deepest:]):
                out.append(s.closing(s.end == pos))
            del stack[deepest:]
            for s in reopen:
                out.append(s.opening(True))
                stack.append(s)
        for s in sorted(by_start.get(pos, []), key=lambda s: (-s.end, s.rank)):
            out.append(s.opening(False))
            stack.append(s)
        if k + 1 < len(cuts):
            out.append(esc(text[pos : cuts[k + 1]]))
    return "".join(out)


# ----------------------------------------------------------------------------------------------------
# The report


SOURCE_WORD_KIND = "translated word"


def shown_evidence(f: ReviewFinding) -> list[ReviewEvidence]:
    """What the report highlights for a finding: the source word it is linked through, then its evidence."""
    out = list(f.evidence)
    if f.source is not None:
        s = f.source
        out.insert(0, ReviewEvidence("source", s.seg_id, s.start, s.end, s.text, None, SOURCE_WORD_KIND, ""))
    return out


@dataclass(frozen=True)
class _EvidenceMark:
    id: str
    item: ReviewEvidence


class _DocumentView:
    """One document prepared for rendering: numbered evidence, located findings."""

    def __init__(self, number: int, doc: ReviewDocument) -> None:
        self.number, self.doc = number, doc
        self.evidence_ids: dict[tuple, str] = {}
        self.evidence: list[_EvidenceMark] = []
        for f in doc.findings:
            for e in shown_evidence(f):
                key = (*e.key, e.kind, e.gender)
                if key not in self.evidence_ids:
                    eid = f"e{number}-{len(self.evidence) + 1}"
                    self.evidence_ids[key] = eid
                    self.evidence.append(_EvidenceMark(eid, e))
        self.unlocated = {f.id for f in doc.mismatches()}
        self.numbers = {f.id: k for k, f in enumerate(doc.findings, 1)}
        self.names: dict[str, str] = {}  # entity id -> how the panel names the person, worked out once

    def evidence_of(self, f: ReviewFinding) -> list[str]:
        return list(dict.fromkeys(self.evidence_ids[(*e.key, e.kind, e.gender)] for e in shown_evidence(f)))

    def evidence_located(self, e: ReviewEvidence) -> bool:
        seg = self.doc.segment(e.seg_id)
        if seg is None:
            return False
        text = seg.source if e.side == "source" else seg.target
        return text[e.start : e.end] == e.text

    def number_of(self, f: ReviewFinding) -> int:
        return self.numbers[f.id]


def render_report(documents: Sequence[ReviewDocument], title: str = "Gender consistency review",
                  results_name: str = "", input_name: str = "", min_confidence: float = 0.0,
                  hide_assumptions: bool = False) -> str:
    """The whole report as one HTML string.

    MIN_CONFIDENCE (the run's) is where the confidence filter starts: findings below it are hidden until the
    post-editor asks for them. HIDE_ASSUMPTIONS starts with assumption findings hidden.
    """
    views = [_DocumentView(k, d) for k, d in enumerate(documents, 1)]
    css, js = stylesheet(), script()
    total = sum(len(d.findings) for d in documents)
    csp = (f"default-src 'none'; style-src {_csp_hash(css)}; script-src {_csp_hash(js)}; img-src data:; "
           f"base-uri 'none'; form-action 'none'")
    meta = [f"{len(documents)} document{'s' * (len(documents) != 1)}", f"{total} finding{'s' * (total != 1)}"]
    if results_name:
        meta.append(f"results: {results_name}")
    if input_name:
        meta.append(f"input: {input_name}")
    meta.append(f"gendertrace {__version__}")
    store_key = decisions_key(documents, results_name)
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f'<meta http-equiv="Content-Security-Policy" content="{esc(csp)}">',
        f"<title>{esc(title)}</title>",
        f"<style>{css}</style>",
        "</head>",
        f'<body data-decisions-key="{store_key}" data-results="{esc(results_name)}">',
        '<a class="skip" href="#documents">Skip to the documents</a>',
        '<header class="masthead">',
        f"<h1>{esc(title)}</h1>",
        f'<p class="meta">{" · ".join(esc(m) for m in meta)}</p>',
        "</header>",
        _toolbar(total, min_confidence, hide_assumptions),
        '<div class="layout">',
        "<main>",
        _overview(views),
        _legend(),
        '<section id="documents" aria-label="Documents">',
        *(_document(v) for v in views),
        "</section>",
        "</main>",
        _panel(views),
        "</div>",
        _footer(),
        f"<script>{js}</script>",
        "</body>",
        "</html>",
    ]
    return "\n".join(parts) + "\n"


def decisions_key(documents: Sequence[ReviewDocument], results_name: str) -> str:
    """The report's local-storage key: the same results give the same key, so decisions survive a rebuild."""
    text = "\n".join([results_name, *(f"{f.id}:{f.doc_id}:{f.seg_id}:{f.start}:{f.text}"
                                      for d in documents for f in d.findings)])
    return "gendertrace-decisions:" + hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]


def _toolbar(total: int, min_confidence: float = 0.0, hide_assumptions: bool = False) -> str:
    boxes = "".join(
        f'<label class="kind-filter" data-kind="{k}"><input type="checkbox" name="kind" value="{k}"'
        f'{"" if hide_assumptions and k == "assumption" else " checked"}> '
        f'<span class="sym" aria-hidden="true">{KIND_SYMBOL[k]}</span> {k}</label>'
        for k in FINDING_KINDS
    )
    floor = f"{min_confidence:.2f}"
    return (
        '<div class="toolbar" role="region" aria-label="Filters">'
        f'<fieldset class="kinds"><legend>Kinds</legend>{boxes}</fieldset>'
        '<div class="confidence"><label for="min-confidence">Minimum confidence</label> '
        f'<input type="range" id="min-confidence" min="0" max="1" step="0.01" value="{floor}" '
        f'data-run-minimum="{floor}" aria-describedby="run-minimum"> '
        f'<output id="min-confidence-value" for="min-confidence">{floor}</output>'
        f'<span id="run-minimum" class="sub">the run reports from {floor}; lower the slider to see '
        "findings below it</span></div>"
        f'<p id="shown-count" aria-live="polite" data-total="{total}">Showing {total} of {total} findings</p>'
        '<p class="decisions-bar"><span id="decided-count" aria-live="polite">0 decided</span> '
        '<button type="button" id="export-decisions">Export decisions</button></p>'
        '<p class="keys">Keys: <kbd>n</kbd> next finding, <kbd>p</kbd> previous, <kbd>Esc</kbd> close</p>'
        "</div>"
    )


def _overview(views: list[_DocumentView]) -> str:
    heads = [("Document", "text"), ("Direction", "text"), ("Segments", "number"),
             *((f"{KIND_SYMBOL[k]} {k}", "number") for k in FINDING_KINDS), ("Consistency", "number")]
    num = ' class="num"'
    th = "".join(
        f'<th scope="col" aria-sort="none" data-type="{t}"{num if t == "number" else ""}>'
        f'<button type="button" data-sort-col="{i}">{esc(h)}</button></th>'
        for i, (h, t) in enumerate(heads)
    )
    rows = []
    for v in views:
        d = v.doc
        rate = d.stats.rate
        if rate is None:
            rate_cell = '<td class="num" data-value="-1">n/a <span class="sub">nothing checkable</span></td>'
        else:
            rate_cell = (f'<td class="num" data-value="{rate:.6f}">{rate:.0%} '
                         f'<span class="sub">{d.stats.consistent}/{d.stats.checked}</span></td>')
        counts = "".join(f'<td class="num" data-value="{d.count(k)}">{d.count(k)}</td>'
                         for k in FINDING_KINDS)
        segs = d.stats.segments or len(d.segments)
        rows.append(
            f'<tr data-doc-id="{esc(d.doc_id)}"><td data-value="{esc(d.doc_id)}">'
            f'<a href="#doc-{v.number}">{esc(d.doc_id)}</a></td>'
            f'<td data-value="{esc(d.src_lang)}-{esc(d.tgt_lang)}">{esc(d.src_lang)} → {esc(d.tgt_lang)}</td>'
            f'<td class="num" data-value="{segs}">{segs}</td>{counts}{rate_cell}</tr>'
        )
    return (
        '<section class="overview card" aria-labelledby="overview-h"><h2 id="overview-h">Documents</h2>'
        '<p class="hint">Consistency: gendered target words that agree with the document\'s evidence, out of '
        "those the evidence can judge. Click a column heading to sort.</p>"
        f'<table id="overview-table"><thead><tr>{th}</tr></thead><tbody>{"".join(rows)}</tbody></table>'
        "</section>"
    )


def _legend() -> str:
    items = "".join(
        f'<li><span class="chip" data-kind="{k}"><span aria-hidden="true">{KIND_SYMBOL[k]}</span> {k}</span> '
        f"{esc(KIND_LABEL[k])}</li>"
        for k in FINDING_KINDS
    )
    return (
        '<section class="legend card" aria-labelledby="legend-h">'
        '<h2 id="legend-h">How to read this report</h2>'
        f'<ul class="chips">{items}<li><span class="chip evidence">word <span class="evlabel-demo">'
        "kind · gender</span></span> evidence of the selected finding, labelled with its kind</li>"
        '<li><span class="chip source">word <span class="evlabel-demo">translated word</span></span> the source '
        "word the flagged word is linked through</li></ul>"
        '<p class="hint">Each highlighted target word is a finding; its symbol names the kind and its '
        "number the finding's place in the document's list. Select one to see what it rests on.</p></section>"
    )


def _lang_attr(lang: str) -> str:
    return f' lang="{esc(lang)}"' if _LANG_TAG.match(lang or "") else ""


def _finding_span(v: _DocumentView, f: ReviewFinding) -> _Span:
    sym = KIND_SYMBOL.get(f.kind, OTHER_SYMBOL)
    n = v.number_of(f)
    evidence = " ".join(v.evidence_of(f))
    label = (f"{f.kind} {n}: {f.text}, expected {f.expected or 'nothing stated'}, found {f.found or 'none'}, "
             f"confidence {f.confidence:.2f}")
    common = (f'data-finding-id="{f.id}" data-kind="{esc(f.kind)}" data-confidence="{f.confidence:.3f}" '
              f'data-evidence="{evidence}"')

    def opening(continued: bool) -> str:
        if continued:
            return f'<mark class="fmark cont" {common}>'
        return f'<mark class="fmark" {common} tabindex="0" role="button" aria-label="{esc(label)}">'

    def closing(final: bool) -> str:
        tag = f'<span class="ftag" aria-hidden="true">{sym}{n}</span>' if final else ""
        return tag + "</mark>"

    return _Span(f.start, f.end, 0, opening, closing)


def _evidence_span(m: _EvidenceMark) -> _Span:
    e = m.item
    label = " · ".join(x for x in (e.kind, e.gender or "") if x)

    cls = "ev src-word" if e.kind == SOURCE_WORD_KIND else "ev"

    def opening(continued: bool) -> str:
        return (f'<span class="{cls}" data-evidence-id="{m.id}" data-evidence-kind="{esc(e.kind)}" '
                f'data-gender="{esc(e.gender or "")}">')

    def closing(final: bool) -> str:
        return (f'<span class="evlabel">{esc(label)}</span>' if final else "") + "</span>"

    return _Span(e.start, e.end, 1, opening, closing)


def _document(v: _DocumentView) -> str:
    d = v.doc
    head = (f'<article class="doc card" id="doc-{v.number}" data-doc-id="{esc(d.doc_id)}" '
            f'aria-labelledby="doc-{v.number}-h">'
            f'<h2 id="doc-{v.number}-h">{esc(d.doc_id)} <span class="langs">{esc(d.src_lang)} → '
            f"{esc(d.tgt_lang)}</span></h2>")
    notes = []
    if d.skipped:
        notes.append(f"Not scored: {esc(d.skipped)}")
    if not d.segments:
        notes.append("This document is not in the input file given to the report, so its text cannot be "
                     "shown.")
    elif v.unlocated:
        notes.append(f"{len(v.unlocated)} finding(s) do not match the input text (was the report given the "
                     "input that was scored?); they are listed below but not highlighted.")
    warn = "".join(f'<p class="warning" role="note"><strong>Note:</strong> {n}</p>' for n in notes)
    rows = []
    marks_at: dict[str, list[_EvidenceMark]] = {}
    for m in v.evidence:
        marks_at.setdefault(m.item.seg_id, []).append(m)
    findings_at: dict[str, list[ReviewFinding]] = {}
    for f in d.findings:
        findings_at.setdefault(f.seg_id, []).append(f)
    for k, seg in enumerate(d.segments, 1):
        here = [m for m in marks_at.get(seg.seg_id, ()) if v.evidence_located(m.item)]
        src_spans = [_evidence_span(m) for m in here if m.item.side == "source"]
        tgt_spans = [_evidence_span(m) for m in here if m.item.side == "target"]
        tgt_spans += [_finding_span(v, f) for f in findings_at.get(seg.seg_id, ()) if f.id not in v.unlocated]
        target = (render_marked(seg.target, tgt_spans) if seg.target.strip()
                  else '<span class="untranslated">(untranslated)</span>')
        rows.append(
            f'<tr id="seg-{v.number}-{k}" data-seg-id="{esc(seg.seg_id)}">'
            f'<th scope="row">{esc(seg.seg_id)}</th>'
            f'<td class="src"{_lang_attr(d.src_lang)} dir="auto">{render_marked(seg.source, src_spans)}</td>'
            f'<td class="tgt"{_lang_attr(d.tgt_lang)} dir="auto">{target}</td></tr>'
        )
    table = ""
    if rows:
        table = (f'<table class="segments"><thead><tr><th scope="col">Seg.</th><th scope="col">Source '
                 f'({esc(d.src_lang)})</th><th scope="col">Target ({esc(d.tgt_lang)})</th></tr></thead>'
                 f'<tbody>{"".join(rows)}</tbody></table>')
    return head + warn + table + _finding_list(v) + "</article>"


def _finding_list(v: _DocumentView) -> str:
    d = v.doc
    if not d.findings:
        return '<p class="none">No findings in this document.</p>'
    rows = "".join(
        f'<tr data-finding-id="{f.id}" data-kind="{esc(f.kind)}" data-confidence="{f.confidence:.3f}">'
        f'<td><span class="chip" data-kind="{esc(f.kind)}"><span aria-hidden="true">'
        f"{KIND_SYMBOL.get(f.kind, OTHER_SYMBOL)}{v.number_of(f)}</span> {esc(f.kind)}</span></td>"
        f"<td>{esc(f.seg_id)}</td><td>{esc(f.text)}</td><td>{esc(f.expected or '–')}</td>"
        f'<td>{esc(f.found or "–")}</td><td class="num">{f.confidence:.2f}</td>'
        f"<td>{esc(f.message)}</td></tr>"
        for f in d.findings
    )
    return (
        f'<details class="findings-list" open><summary>Findings ({len(d.findings)})</summary>'
        '<table><thead><tr><th scope="col">Kind</th><th scope="col">Seg.</th><th scope="col">Words</th>'
        '<th scope="col">Expected</th><th scope="col">Found</th><th scope="col" class="num">Confidence</th>'
        f'<th scope="col">Message</th></tr></thead><tbody>{rows}</tbody></table></details>'
    )


def _panel(views: list[_DocumentView]) -> str:
    blocks = [_detail(v, f) for v in views for f in v.doc.findings]
    people = [_person(v, f) for v in views for f in _one_per_person(v.doc.findings)]
    return (
        '<aside class="detail" id="detail" aria-label="Finding details" aria-live="polite">'
        '<p class="detail-empty" id="detail-empty">Select a highlighted word, or press <kbd>n</kbd>, to see '
        "the finding and the evidence it rests on.</p>" + "".join(blocks) + "".join(people) + "</aside>"
    )


def _one_per_person(findings: Sequence[ReviewFinding]) -> list[ReviewFinding]:
    return list({f.entity: f for f in reversed(findings)}.values())[::-1]


def _person_id(v: _DocumentView, f: ReviewFinding) -> str:
    return f"person-{v.number}-{re.sub(r'[^A-Za-z0-9_-]', '_', f.entity or 'none')}"


def _evidence_item(v: _DocumentView, e: ReviewEvidence) -> str:
    where = " · ".join(x for x in (f"{e.side}, segment {e.seg_id}", e.rule) if x)
    note = "" if v.evidence_located(e) else " (not found in the input text)"
    ref = v.evidence_ids.get((*e.key, e.kind, e.gender))
    attr = f' data-evidence-ref="{ref}"' if ref else ""
    return (f'<li{attr}><span class="evword">{esc(e.text)}</span> <span class="evkind">{esc(e.kind or "evidence")}'
            f'{" · " + esc(e.gender) if e.gender else ""}</span>'
            f'<span class="evwhere sub">{esc(where)}{note}</span></li>')


def _person(v: _DocumentView, f: ReviewFinding) -> str:
    """The person's linked mentions on both sides and the rest of their evidence, written once per person."""
    rows = []
    for m in f.mentions:
        how = m.link_words()
        rows.append(f'<li data-side="{m.side}"><span class="evword">{esc(m.text)}</span> '
                    f'<span class="sub">{esc(m.side)}, segment {esc(m.seg_id)}, {esc(m.kind)}'
                    f'{", " + esc(how) if how else ""}</span></li>')
    mentions = (f'<h4>Words linked to this person ({len(f.mentions)})</h4><ul class="mention-list">{"".join(rows)}</ul>'
                if rows else "")
    items = "".join(_evidence_item(v, e) for e in f.person_evidence)
    rest = (f'<details class="other-evidence"><summary>All of this person\'s evidence '
            f'({len(f.person_evidence)})</summary><ol class="evidence-list">{items}</ol></details>' if items else "")
    return (f'<section class="pdetail" id="{_person_id(v, f)}" data-entity="{esc(f.entity)}" hidden>'
            f"{mentions}{rest}</section>")


def _detail(v: _DocumentView, f: ReviewFinding) -> str:
    sym = KIND_SYMBOL.get(f.kind, OTHER_SYMBOL)
    person = f.entity_label or f.entity or "–"
    if f.entity not in v.names:
        v.names[f.entity] = person_name_of(f)
    named = v.names[f.entity]
    if f.entity:
        person = f"{named} ({f.entity})"
    evidence = [_evidence_item(v, e) for e in f.evidence]
    more = f.evidence_total - len(f.evidence)
    ev_head = f"Decisive evidence ({len(f.evidence)}{f' of {f.evidence_total}' if more > 0 else ''})"
    ev_html = (f'<h4>{ev_head}</h4><ol class="evidence-list">{"".join(evidence)}</ol>'
               if evidence else '<h4>Evidence</h4><p class="sub">None: nothing in the document states this '
               "person's gender.</p>")
    unlocated = ('<p class="warning">These words are not at this place in the input text.</p>'
                 if f.id in v.unlocated else "")
    if f.source is not None:
        s = f.source
        ref = v.evidence_ids.get(("source", s.seg_id, s.start, s.end, SOURCE_WORD_KIND, None))
        attr = f' data-evidence-ref="{ref}"' if ref else ""
        how = LINK_WORDS.get(f.link.method, f.link.method) if f.link else ""
        if s.basis == "alignment":
            how = "paired by the word aligner" + (f"; linked {how}" if how else "")
        elif s.basis == "segment":
            how = "the person's one word in this source segment" + (f"; linked {how}" if how else "")
        elif s.kind == "zero":
            how = "the unexpressed subject of this verb" + (f"; {how}" if how else "")
        translates = (f'<dd class="translates"{attr}><span class="evword">{esc(s.text)}</span> '
                      f'<span class="sub">source, segment {esc(s.seg_id)}{", " + esc(how) if how else ""}'
                      "</span></dd>")
    else:
        how = f" ({esc(LINK_WORDS.get(f.link.method, f.link.method))})" if f.link else ""
        translates = f'<dd class="translates sub">no source word: linked to this person indirectly{how}</dd>'
    fix = (f'<dd class="suggestion">{esc(f.suggestion)}</dd>' if f.suggestion else
           '<dd class="suggestion sub">none: the rules cannot build one here</dd>')
    data = (f'data-doc-id="{esc(v.doc.doc_id)}" data-seg-id="{esc(f.seg_id)}" data-start="{f.start}" '
            f'data-end="{f.end}" data-text="{esc(f.text)}" data-person="{_person_id(v, f)}"')
    return (
        f'<section class="fdetail" id="detail-{f.id}" data-finding-id="{f.id}" data-kind="{esc(f.kind)}" '
        f"{data} hidden>"
        f'<h3><span class="chip" data-kind="{esc(f.kind)}"><span aria-hidden="true">{sym}{v.number_of(f)}'
        f"</span> {esc(f.kind)}</span></h3>{unlocated}"
        f'<dl><dt>Flagged</dt><dd class="flagged">{esc(f.text)} <span class="sub">segment {esc(f.seg_id)}'
        f"</span></dd>"
        f"<dt>Translates</dt>{translates}"
        f"<dt>Suggested</dt>{fix}"
        f"<dt>Person</dt><dd>{esc(person)}</dd>"
        f"<dt>Expected</dt><dd>{esc(f.expected or 'nothing stated')}</dd>"
        f"<dt>Found</dt><dd>{esc(f.found or 'none')}</dd>"
        f"<dt>Confidence</dt><dd>{f.confidence:.2f}</dd>"
        f'<dt>Message</dt><dd class="message">{esc(f.message or "–")}</dd>'
        f"<dt>Document</dt><dd>{esc(v.doc.doc_id)}</dd></dl>{ev_html}"
        f'<fieldset class="decision" data-finding-id="{f.id}"><legend>Your decision</legend>'
        f'<label><input type="radio" name="decision-{f.id}" value="accept"> accept (the finding is right)</label>'
        f'<label><input type="radio" name="decision-{f.id}" value="reject"> reject (it is not an error)</label>'
        f'<label class="comment">Comment <textarea name="comment-{f.id}" rows="2"></textarea></label>'
        '<button type="button" data-clear-decision>Clear</button></fieldset>'
        '<p class="step"><button type="button" data-step="-1">← Previous (p)</button> '
        '<button type="button" data-step="1">Next (n) →</button></p></section>'
    )


def person_name_of(f: ReviewFinding) -> str:
    """The person as the panel names them: a name or a noun, never a pronoun."""
    label = f.entity_label
    pronouns = {m.text.lower() for m in f.mentions if m.kind in ("pronoun", "zero")}
    if not label or label.lower() in pronouns:
        return "this person"
    return label


def _footer() -> str:
    items = "".join(f"<li>{esc(c)}</li>" for c in CAUTIONS)
    return (f'<footer class="cautions"><h2>Before you act on a finding</h2><ul>{items}</ul>'
            f'<p class="sub">Generated by gendertrace {__version__}.</p></footer>')
