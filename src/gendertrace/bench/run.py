"""The accuracy benchmark on the parallel UD treebanks: false alarms on human translations, recall on injected
errors, a segment-level baseline beside the engine, calibration, evidence accuracy, coreference and speed."""

from __future__ import annotations

import datetime
import os
import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from gendertrace.bench.baseline import baseline_findings
from gendertrace.bench.inject import InjectedCopy, copy_document, inject_corpus
from gendertrace.bench.pud import PudDocument, load_pud_pair, pud_path, select_half
from gendertrace.model import Document, DocumentResult, Finding, Segment
from gendertrace.parse.conllu_backend import ConlluParser
from gendertrace.parse.spacy_backend import load_fresh_pipeline, load_pipeline
from gendertrace.pipeline import Scorer
from gendertrace.rules import load_rules

SPACY_LANGS = ("en", "es", "fr")
DIRECTIONS = ("es-en", "fr-en", "en-es", "en-fr", "de-en", "it-en", "pt-en")
FLAGGING = ("contradiction", "inconsistency")
BINS = (0.5, 0.6, 0.7, 0.8, 0.9, 1.01)


@dataclass
class DirectionResult:
    direction: str
    documents: int = 0
    clean_flagged: int = 0
    injected: int = 0
    evidenced: int = 0
    caught: int = 0
    caught_evidenced: int = 0
    findings: int = 0
    findings_on_error: int = 0
    base_caught: int = 0
    base_caught_evidenced: int = 0
    base_findings: int = 0
    base_on_error: int = 0
    base_clean_flagged: int = 0
    # Evidenced copies whose only evidence is one other target word (InjectedCopy.even_split), and the findings
    # raised on those copies.
    split: int = 0
    caught_split: int = 0
    split_findings: int = 0
    split_on_error: int = 0
    calibration: list[tuple[float, float, int, int]] = field(default_factory=list)
    false_alarms: list[tuple[str, Finding, Document]] = field(default_factory=list)
    seconds: float = 0.0
    tokens: int = 0
    parse_seconds: float | None = None
    source_parser: str = ""


def _documents(docs: Sequence[PudDocument]) -> list[Document]:
    return [
        Document(d.doc_id, tuple(Segment(p.sent_id, p.source.text, p.target.text) for p in d.pairs))
        for d in docs
    ]


def _scorer(data: Path, src: str, tgt: str) -> Scorer:
    # Languages without a spaCy pipeline here come in through the CoNLL-U backend on the gold parses.
    src_parser = None if src in SPACY_LANGS else ConlluParser(src, [pud_path(data, src)])
    tgt_parser = None if tgt in SPACY_LANGS else ConlluParser(tgt, [pud_path(data, tgt)])
    return Scorer(src, tgt, src_parser=src_parser, tgt_parser=tgt_parser)


def _overlaps(f: Finding, c: InjectedCopy, seg_id: str) -> bool:
    return f.seg_id == seg_id and f.start < c.end and c.start < f.end


def _rate(a: int, b: int) -> str:
    return f"{a / b:.3f}" if b else "n/a"


def run_direction(
    data: Path, direction: str, seed: int, half: int | None = None, align_priors: Path | None = None
) -> DirectionResult:
    """Clean and injected runs of one direction, on the documents of `half` (1 or 2; None: all).

    With `align_priors` (a folder), alignments come from the frozen model `<folder>/<direction>.priors`, learned
    from the clean documents first when that file does not exist.
    """
    src, tgt = direction.split("-")
    pud = select_half(load_pud_pair(data, src, tgt), half)
    # New pipeline instances for every direction, so that the timed clean run below parses with a vocabulary
    # as fresh as the spaCy-only reference's (an earlier direction may have parsed the same sentences).
    load_pipeline.cache_clear()
    scorer = _scorer(data, src, tgt)
    res = DirectionResult(direction, documents=len(pud), source_parser=scorer.src_parser.signature())
    clean_docs = _documents(pud)
    if align_priors is not None:
        from gendertrace.bench.frozen import freeze_alignment

        freeze_alignment(scorer, Path(align_priors) / f"{direction}.priors", scorer.parse(clean_docs))

    # Clean run: the human translation as it is; every contradiction or inconsistency is a false alarm.
    t0 = time.perf_counter()
    parsed = scorer.parse(clean_docs)
    clean = list(scorer.score_parsed_batch(parsed))
    res.seconds = time.perf_counter() - t0
    res.tokens = sum(len(p.tokens) for pd in parsed for p in pd.source + pd.target)
    for r, d in zip(clean, clean_docs, strict=True):
        flagged = [f for f in r.findings if f.kind in FLAGGING]
        if flagged:
            res.clean_flagged += 1
            res.false_alarms.extend((r.doc_id, f, d) for f in flagged)
    res.base_clean_flagged = sum(
        1 for pd in parsed if baseline_findings(pd, scorer.src_rules, scorer.tgt_rules)
    )
    if src in SPACY_LANGS and tgt in SPACY_LANGS:
        res.parse_seconds = _spacy_only(scorer, clean_docs)

    # Injected run: one copy per injection site, each with exactly one gender error.
    copies = inject_corpus(pud, tgt, load_rules(tgt), src_rules=load_rules(src), seed=seed)
    by_doc = {d.doc_id: d for d in pud}
    inj_docs = [copy_document(by_doc[c.doc_id], c) for c in copies]
    inj_parsed = scorer.parse(inj_docs)
    results: list[DocumentResult] = list(scorer.score_parsed_batch(inj_parsed))
    res.injected = len(copies)
    scored: list[tuple[float, bool]] = []
    for c, r, pd in zip(copies, results, inj_parsed, strict=True):
        seg_id = c.sent_id
        flagged = [f for f in r.findings if f.kind in FLAGGING]
        hit = any(_overlaps(f, c, seg_id) for f in flagged)
        res.evidenced += c.evidenced
        res.caught += hit
        res.caught_evidenced += hit and c.evidenced
        res.findings += len(flagged)
        on = [f for f in flagged if _overlaps(f, c, seg_id)]
        res.findings_on_error += len(on)
        if c.even_split:
            res.split += 1
            res.caught_split += hit
            res.split_findings += len(flagged)
            res.split_on_error += len(on)
        scored += [(f.confidence, _overlaps(f, c, seg_id)) for f in flagged]
        base = baseline_findings(pd, scorer.src_rules, scorer.tgt_rules)
        bhit = any(b.seg_id == seg_id and b.start < c.end and c.start < b.end for b in base)
        res.base_caught += bhit
        res.base_caught_evidenced += bhit and c.evidenced
        res.base_findings += len(base)
        res.base_on_error += sum(
            1 for b in base if b.seg_id == seg_id and b.start < c.end and c.start < b.end
        )
    for lo, hi in zip(BINS, BINS[1:], strict=False):
        inside = [ok for conf, ok in scored if lo <= conf < hi]
        res.calibration.append((lo, min(hi, 1.0), len(inside), sum(inside)))
    return res


def _spacy_only(scorer: Scorer, docs: Sequence[Document]) -> float:
    """Time spaCy alone takes to parse both sides of the same documents.

    Each side is parsed by a new instance of the scorer's pipeline, loaded before the clock starts: a spaCy
    pipeline parses text it has seen before faster (its vocabulary already holds the words; about 1.7 s of
    4.5 s on the French side of this treebank), so reusing the scorer's instances would time a second pass
    against the scorer's first.
    """
    src = [s.source for d in docs for s in d.segments]
    tgt = [s.target for d in docs for s in d.segments]
    src_nlp = load_fresh_pipeline(scorer.src_parser.name)
    tgt_nlp = load_fresh_pipeline(scorer.tgt_parser.name)
    t0 = time.perf_counter()
    for _ in src_nlp.pipe(src, batch_size=64):
        pass
    for _ in tgt_nlp.pipe(tgt, batch_size=64):
        pass
    return time.perf_counter() - t0


def evidence_accuracy(data: Path, lang: str, half: int | None = None) -> tuple[int, int]:
    """Gendered evidence tokens the tagger-based extraction reports, and how many agree with gold UD Gender
    (on the documents of `half`, or all)."""
    from gendertrace.mentions.extract import extract_mentions
    from gendertrace.parse import get_parser

    other = "en" if lang != "en" else "es"
    docs = select_half(load_pud_pair(data, lang, other), half)
    sents = [p.source for d in docs for p in d.pairs]
    parser = get_parser(lang)
    rules = load_rules(lang)
    parsed = parser.parse_many([s.text for s in sents])
    compared = agree = 0
    for gold, sys_parse in zip(sents, parsed, strict=True):
        gold_by_span = {(t.start, t.end): t for t in gold.parsed.tokens}
        for m in extract_mentions(sys_parse, 0, gold.sent_id, "source", rules):
            for mk in m.marks:
                for ti in mk.tokens:
                    t = sys_parse.tokens[ti]
                    g = gold_by_span.get((t.start, t.end))
                    if g is None or g.gender not in ("fem", "masc"):
                        continue
                    compared += 1
                    agree += g.gender == mk.gender
    return compared, agree


def coreference_scores(demo: Path) -> list[tuple[str, str, float, float, float, float]]:
    """MUC, B-cubed, CEAF-e and their mean on the demo's hand-annotated person coreference (v1 files)."""
    import json

    from gendertrace.bench.corefmetrics import b_cubed, ceaf_e, muc
    from gendertrace.io.readers import read_corpus

    gold_path = demo / "gold" / "coref.jsonl"
    if not gold_path.is_file():
        return []
    gold_rows = [
        json.loads(line) for line in gold_path.read_text(encoding="utf-8").splitlines() if line.strip()
    ]
    out = []
    for side in ("source", "target"):
        keys: list = []
        responses: list = []
        for fname in sorted({r["file"] for r in gold_rows}):
            src, tgt = fname.split(".")[0].split("-")
            scorer = Scorer(src, tgt)
            docs = {d.doc_id: d for d in read_corpus(demo / fname)}
            results = {r.doc_id: r for r in scorer.score(list(docs.values()))}
            for row in (r for r in gold_rows if r["file"] == fname and r["side"] == side):
                doc = docs[row["doc_id"]]
                gold_chains = [
                    [(row["doc_id"], m[0], m[1], m[2]) for m in ch["mentions"]] for ch in row["chains"]
                ]
                gold_mentions = [m for ch in gold_chains for m in ch]
                sys_chains = []
                for ch in results[row["doc_id"]].chains:
                    if ch.side != side:
                        continue
                    ms = []
                    for m in ch.mentions:
                        seg_id = doc.segments[m.seg].seg_id
                        match = next(
                            (g for g in gold_mentions if g[1] == seg_id and g[2] < m.end and m.start < g[3]),
                            None,
                        )
                        ms.append(match or (row["doc_id"], seg_id, m.start, m.end))
                    sys_chains.append(ms)
                keys.extend(gold_chains)
                responses.extend(sys_chains)
        scores = [muc(keys, responses), b_cubed(keys, responses), ceaf_e(keys, responses)]
        mean = sum(s.f1 for s in scores) / 3
        out.append((side, "F1", scores[0].f1, scores[1].f1, scores[2].f1, mean))
    return out


def run_benchmark(
    data: Path,
    directions: Sequence[str] | None = None,
    seed: int = 13,
    report: Path | None = None,
    half: int | None = None,
    align_priors: Path | None = None,
    realmt: Path | None = None,
    realmt_systems: Sequence[str] | None = None,
    treebank: bool = True,
) -> str:
    """Run every direction and return (and optionally write) the Markdown report.

    `half` restricts the treebank figures to one half of the news documents (`bench.pud.document_half`);
    `align_priors` (a folder) freezes the word alignment of every run; `realmt` adds the real machine
    translation section (`bench.realmt`) on that folder; `treebank=False` leaves the treebank sections out.
    """
    from gendertrace import __version__
    from gendertrace.demo import demo_dir
    from gendertrace.rules import rules_digest

    started = datetime.datetime.now(datetime.timezone.utc)
    options = f" --directions {','.join(directions)}" if directions else ""
    options += f" --half {half}" if half else ""
    options += f" --align-priors {align_priors}" if align_priors else ""
    options += " --only realmt" if not treebank else ""
    options += f" --realmt-systems {','.join(realmt_systems)}" if realmt_systems else ""
    head = [
        "# Benchmarks",
        "",
        f"Command: `gendertrace bench --data {data}{options} --seed {seed}` (`make bench`)  ",
        f"Date: {started:%Y-%m-%d %H:%M} UTC; machine: {os.cpu_count()} cores  ",
        f"Signature: gendertrace {__version__}, rules {rules_digest()}",
        "",
    ]
    tail: list[str] = []
    if realmt is not None:
        from gendertrace.bench.realmt import judgements_path, load_judgements, realmt_section, run_realmt

        frozen = Path(align_priors) / "wmt-en-es.priors" if align_priors else None
        found = run_realmt(realmt, realmt_systems, frozen) if realmt.is_dir() else []
        tail = [""] + realmt_section(realmt, found, load_judgements(judgements_path()))
    if not treebank:
        text = "\n".join(head + tail[1:]) + "\n"
        if report:
            report.parent.mkdir(parents=True, exist_ok=True)
            report.write_text(text, encoding="utf-8")
        return text
    results = [run_direction(data, d, seed, half, align_priors) for d in (directions or DIRECTIONS)]
    which = f"half {half} of the news documents (`bench.pud.document_half`)" if half else "the news half"
    lines = head[:-2] + [
        head[-2] + ", pipelines: " + ", ".join(sorted({r.source_parser for r in results})),
        "",
        f"Data: {which} of the Parallel UD treebanks (human translations), documents grouped by `newdoc id`.",
        "Clean run: every contradiction or inconsistency on the human translation counts as a false alarm.",
        "Injected run: one copy per injection site, each with exactly one gender error (see",
        "`gendertrace.bench.inject` for the sites and the *evidenced* rule); an error is caught when a",
        "contradiction or inconsistency finding overlaps its characters. The baseline is a segment-level majority",
        "vote (no coreference, no alignment) on the same parses.",
        "",
        "| direction | system | docs | injected | evidenced | recall (all) | recall (evidenced) | precision | "
        "clean docs flagged |",
        "|---|---|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for r in results:
        lines.append(
            f"| {r.direction} | gendertrace | {r.documents} | {r.injected} | {r.evidenced} | "
            f"{_rate(r.caught, r.injected)} | {_rate(r.caught_evidenced, r.evidenced)} | "
            f"{_rate(r.findings_on_error, r.findings)} | {_rate(r.clean_flagged, r.documents)} |"
        )
        lines.append(
            f"| {r.direction} | baseline | {r.documents} | {r.injected} | {r.evidenced} | "
            f"{_rate(r.base_caught, r.injected)} | {_rate(r.base_caught_evidenced, r.evidenced)} | "
            f"{_rate(r.base_on_error, r.base_findings)} | {_rate(r.base_clean_flagged, r.documents)} |"
        )
    lines += [
        "",
        "## Errors the document cannot place",
        "",
        "An evidenced copy is an *even split* when its only evidence is one other target word: the source holds no",
        "person word of the original gender, and the target one besides the flipped word, so after the injection the",
        "document says each gender once and nothing in it tells which word is wrong (`InjectedCopy.even_split`,",
        "judged from the gold annotation). A checker is sure to catch such an error only by flagging both words, which",
        "puts a false finding beside every catch. The last two columns leave these copies out.",
        "",
        "| direction | evidenced | even splits | caught | findings in them: on the error / all | recall (evidenced, "
        "the rest) | precision (the rest) |",
        "|---|---:|---:|---:|---:|---:|---:|",
    ]
    for r in results:
        lines.append(
            f"| {r.direction} | {r.evidenced} | {r.split} | {r.caught_split} | "
            f"{r.split_on_error} / {r.split_findings} | "
            f"{_rate(r.caught_evidenced - r.caught_split, r.evidenced - r.split)} | "
            f"{_rate(r.findings_on_error - r.split_on_error, r.findings - r.split_findings)} |"
        )
    lines += [
        "",
        "## Calibration (injected runs, all directions)",
        "",
        "| confidence | findings | on an injected error | precision |",
        "|---|---:|---:|---:|",
    ]
    for k, (lo, hi, _, _) in enumerate(results[0].calibration if results else []):
        n = sum(r.calibration[k][2] for r in results)
        ok = sum(r.calibration[k][3] for r in results)
        lines.append(f"| {lo:.1f}-{hi:.1f} | {n} | {ok} | {_rate(ok, n)} |")
    lines += [
        "",
        "## Evidence accuracy (tagger-reported gendered evidence tokens against gold UD Gender)",
        "",
        "| language | tokens compared | agree | accuracy |",
        "|---|---:|---:|---:|",
    ]
    for lang in SPACY_LANGS:
        n, ok = evidence_accuracy(data, lang, half)
        lines.append(f"| {lang} | {n} | {ok} | {_rate(ok, n)} |")
    coref = coreference_scores(demo_dir())
    if coref:
        lines += [
            "",
            "## Coreference (demo corpus, hand-annotated person chains, v1 files)",
            "",
            "| side | MUC F1 | B-cubed F1 | CEAF-e F1 | mean |",
            "|---|---:|---:|---:|---:|",
        ]
        for side, _, m, b, c, mean in coref:
            lines.append(f"| {side} | {m:.3f} | {b:.3f} | {c:.3f} | {mean:.3f} |")
    lines += [
        "",
        "## Speed (clean run, one process)",
        "",
        "End-to-end: parsing both sides with the scorer's pipelines, aligning and scoring, pipelines loaded "
        "beforehand (new instances for each direction). spaCy-only: the same texts parsed by further new "
        "instances of the same pipelines, also loaded beforehand, so that neither parses text its vocabulary "
        "has seen. The ratio is the first over the second (target: at most 1.6).",
        "",
        "| direction | tokens | end-to-end s | tokens/s | spaCy-only parse s | ratio |",
        "|---|---:|---:|---:|---:|---:|",
    ]
    for r in results:
        ratio = f"{r.seconds / r.parse_seconds:.2f}" if r.parse_seconds else "n/a (gold parse)"
        ps = f"{r.parse_seconds:.1f}" if r.parse_seconds else "-"
        lines.append(
            f"| {r.direction} | {r.tokens} | {r.seconds:.1f} | {r.tokens / r.seconds:.0f} | {ps} | {ratio} |"
        )
    # Scale: memory, cores, re-scoring with a warm parse cache, the distributed executor (gendertrace.bench.scale).
    from gendertrace.bench.scale import scale_section

    lines += [""] + scale_section(data)
    # The narrator and the person addressed, on the real MT folder beside the treebanks (gendertrace.bench.narrator).
    from gendertrace.bench.narrator import narrator_section

    lines += [""] + narrator_section(data.parent / "wmt24-en-es-dev")
    # Treebank sentences stay out of the written report: it names documents, segments and words only.
    lines += ["", "## The 20 most confident false alarms (clean runs)", ""]
    alarms = sorted(
        (a for r in results for a in ((r.direction,) + x for x in r.false_alarms)),
        key=lambda a: -a[2].confidence,
    )[:20]
    shown = []
    for direction, doc_id, f, d in alarms:
        ev = "; ".join(f"{e.side} {e.text!r} {e.gender} ({e.rule})" for e in f.evidence)
        lines.append(
            f"- {direction} {doc_id} [{f.seg_id}] {f.kind} on {f.text!r} (expected {f.expected}, found "
            f"{f.found}, confidence {f.confidence:.2f}); evidence: {ev}"
        )
        seg = next(s for s in d.segments if s.seg_id == f.seg_id)
        shown.append(
            f"{direction} {doc_id} [{f.seg_id}] {f.text!r}\n    target: {seg.target}\n    source: {seg.source}"
        )
    text = "\n".join(lines + tail) + "\n"
    if report:
        report.parent.mkdir(parents=True, exist_ok=True)
        report.write_text(text, encoding="utf-8")
    return text + "\nFalse alarms in context (not written to the report):\n" + "\n".join(shown) + "\n"
