"""Where scoring time goes and how it grows: stage profile, end to end against spaCy alone, growth with document
and segment length on invented text, and the determinism check.

Every end-to-end figure is a whole process (`python -m gendertrace.cli score --jobs 1 --no-cache`) against a
whole process that loads the same spaCy pipelines and parses both sides, run alternately; the stage profile
runs in this process with timers around the pipeline's stage functions. Real text is read at run time from
`../shared` (the real MT dev set and the treebank) and never written into the repository; the growth runs use
invented text made here (`invented_pair`).
"""

from __future__ import annotations

import json
import random
import statistics
import subprocess
import sys
import tempfile
import time
from collections import defaultdict
from collections.abc import Callable
from contextlib import contextmanager
from pathlib import Path

SCORE = [sys.executable, "-m", "gendertrace.cli", "score"]
DOC_LENGTHS = (1, 5, 20, 50, 2000)  # segments per document; 2000 segments in all for each
SEGMENT_KB = (0.5, 2, 10, 50, 200)  # size of the one source segment of a one-segment document
GROWTH_TIMEOUT = 180.0  # seconds a growth run may take before it is reported as unfinished
COREF_LIMIT = 10.0  # seconds of coreference on one size after which larger sizes skip it
# Parses both sides of a JSONL/TSV input with the spaCy pipelines alone, as the scorer would load them.
_SPACY_ONLY = (
    "import sys\n"
    "from gendertrace.io.readers import read_corpus\n"
    "from gendertrace.parse.spacy_backend import load_pipeline, pipeline_name\n"
    "docs = read_corpus(sys.argv[1])\n"
    "for side, lang in (('source', sys.argv[2]), ('target', sys.argv[3])):\n"
    "    nlp = load_pipeline(pipeline_name(lang))\n"
    "    for _ in nlp.pipe([getattr(s, side) for d in docs for s in d.segments], batch_size=64):\n"
    "        pass\n"
)

# Invented people, places and things; the sentences are written for this benchmark.
_NAMES = [("Maribel Quintana", "f"), ("Tobías Arnedo", "m"), ("Lucía Verbena", "f"), ("Ramiro Castellet", "m"),
          ("Irene Solvay", "f"), ("Damián Oquendo", "m")]
_PLACES = ["Villaseca del Monte", "Puerto Alborán", "Santa Eulària de Nerja", "Valdemora"]
_PAIRS = [
    ("{n} es {a_es} en {p}.", "{n} is {a_en} in {p}."),
    ("{P_es} dice que el informe de la comisión estará listo mañana.",
     "{P_en} says that the committee's report will be ready tomorrow."),
    ("Ayer {n} visitó el mercado con su hermano y compró pan.",
     "Yesterday {n} visited the market with {pos_en} brother and bought bread."),
    ("Según {n}, la nueva carretera llegará a {p} antes del invierno.",
     "According to {n}, the new road will reach {p} before winter."),
    ("{P_es} está {cansado} porque trabajó toda la noche.", "{P_en} is tired because {p_en} worked all night."),
]
_ROLES = {"f": ("la directora", "the director", "Ella", "She", "she", "her", "cansada"),
          "m": ("el director", "the director", "Él", "He", "he", "his", "cansado")}


def invented_pair(k: int, rng: random.Random) -> tuple[str, str]:
    """The k-th invented Spanish-English sentence pair (a person, a place, a gendered role)."""
    name, g = _NAMES[rng.randrange(len(_NAMES))]
    a_es, a_en, p_es, p_en, low_en, pos_en, tired = _ROLES[g]
    es, en = _PAIRS[k % len(_PAIRS)]
    fill = dict(n=name, p=_PLACES[rng.randrange(len(_PLACES))], a_es=a_es, a_en=a_en, P_es=p_es, P_en=p_en,
                p_en=low_en, pos_en=pos_en, cansado=tired)
    return es.format(**fill), en.format(**fill)


def write_invented(path: Path, docs: int, segments: int, sentences: int, seed: int = 5) -> int:
    """A TSV input of `docs` documents of `segments` segments of `sentences` invented sentence pairs each;
    returns the characters of the source side."""
    rng = random.Random(seed)
    chars, k = 0, 0
    with open(path, "w", encoding="utf-8") as f:
        f.write("doc_id\tseg_id\tsource\ttarget\n")
        for d in range(docs):
            for s in range(segments):
                es, en = [], []
                for _ in range(sentences):
                    a, b = invented_pair(k, rng)
                    k += 1
                    es.append(a)
                    en.append(b)
                src = " ".join(es)
                chars += len(src)
                f.write(f"d{d + 1}\t{s + 1}\t{src}\t{' '.join(en)}\n")
    return chars


def _run(cmd: list[str], timeout: float | None = None) -> float | None:
    """Wall seconds of a whole process, None when it did not finish within `timeout`."""
    started = time.perf_counter()
    try:
        proc = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None
    if proc.returncode != 0:
        raise RuntimeError(f"{' '.join(cmd[:4])} failed: {proc.stderr.strip()[-600:]}")
    return time.perf_counter() - started


def score_cmd(inp: Path, out: Path, src: str, tgt: str, *options: str) -> list[str]:
    return [*SCORE, str(inp), "-s", src, "-t", tgt, "--out", str(out), "--quiet", "--no-progress", *options]


def against_spacy(inp: Path, src: str, tgt: str, tmp: Path, runs: int = 3) -> tuple[float, float]:
    """Median wall seconds of `score --jobs 1 --no-cache` and of the spaCy-only parse of both sides, as whole
    processes run alternately."""
    ends, parses = [], []
    for r in range(runs):
        ends.append(_run(score_cmd(inp, tmp / f"e2e-{r}.jsonl", src, tgt, "--jobs", "1", "--no-cache")))
        parses.append(_run([sys.executable, "-c", _SPACY_ONLY, str(inp), src, tgt]))
    return statistics.median(ends), statistics.median(parses)


def doc_length_growth(tmp: Path, total: int = 2000) -> list[tuple[int, float | None]]:
    """Seconds per segment of one process scoring `total` two-sentence segments cut into documents of each
    length in DOC_LENGTHS."""
    out = []
    for n in DOC_LENGTHS:
        inp = tmp / f"doclen-{n}.tsv"
        write_invented(inp, total // n, n, 2)
        t = _run(score_cmd(inp, tmp / f"doclen-{n}.jsonl", "es", "en", "--jobs", "1", "--no-cache"),
                 GROWTH_TIMEOUT)
        out.append((n, None if t is None else t / total))
    return out


def segment_length_growth(tmp: Path) -> list[tuple[float, int, float | None]]:
    """(KB asked, source characters, seconds per character) of one document of one segment of each size in
    SEGMENT_KB, less the time of the same command on a one-sentence document (start-up and model loading)."""
    empty = tmp / "seglen-base.tsv"
    write_invented(empty, 1, 1, 1)
    base = _run(score_cmd(empty, tmp / "seglen-base.jsonl", "es", "en", "--jobs", "1", "--no-cache"))
    out = []
    for kb in SEGMENT_KB:
        sentences = max(1, round(kb * 1024 / 60))  # an invented Spanish sentence is about 60 characters
        inp = tmp / f"seglen-{kb}.tsv"
        chars = write_invented(inp, 1, 1, sentences)
        t = _run(score_cmd(inp, tmp / f"seglen-{kb}.jsonl", "es", "en", "--jobs", "1", "--no-cache"),
                 GROWTH_TIMEOUT)
        out.append((kb, chars, None if t is None else max(t - base, 0.0) / chars))
    return out


def stage_growth(kbs: tuple[float, ...] = SEGMENT_KB) -> list[tuple[float, int, float, float, float | None]]:
    """(KB asked, source characters, parse, alignment and mention-plus-coreference microseconds per character)
    of one invented es-en segment of each size, in this process; coreference is skipped (None) once one size
    took longer than COREF_LIMIT seconds (its cost grows faster than the text)."""
    from gendertrace.link.align import anchor_alignment
    from gendertrace.mentions.extract import extract_mentions
    from gendertrace.pipeline import Scorer, _chains_with_singular_they

    scorer = Scorer("es", "en")
    out, coref_ok = [], True
    for kb in kbs:
        path = Path(tempfile.mkdtemp(prefix="gendertrace-growth-")) / "one.tsv"
        chars = write_invented(path, 1, 1, max(1, round(kb * 1024 / 60)))
        from gendertrace.io.readers import read_corpus

        doc = read_corpus(path)[0]
        t0 = time.perf_counter()
        (pd,) = scorer.parse([doc])
        t1 = time.perf_counter()
        scorer.statistical_aligner(pd.source, pd.target)
        anchor_alignment(pd.source[0], pd.target[0], scorer.lexicon, scorer.pairs, scorer.src_rules,
                         scorer.tgt_rules)
        t2 = time.perf_counter()
        coref = None
        if coref_ok:
            mentions = extract_mentions(pd.target[0], 0, "1", "target", scorer.tgt_rules)
            _chains_with_singular_they(mentions, pd.target, "target", False, scorer.tgt_rules)
            coref = (time.perf_counter() - t2) * 1e6 / chars
            coref_ok = time.perf_counter() - t2 < COREF_LIMIT
        out.append((kb, chars, (t1 - t0) * 1e6 / chars, (t2 - t1) * 1e6 / chars, coref))
    return out


def by_doc(path: Path) -> dict[str, str]:
    return {json.loads(line)["doc_id"]: line for line in path.read_text(encoding="utf-8").splitlines()}


def determinism(inp: Path, src: str, tgt: str, tmp: Path, alone: str) -> dict[str, int]:
    """Documents whose result differs from a plain run (`--jobs 1`, default batches) under `--jobs 2`
    (batches of 20), under `--batch-docs 7`, and for document `alone` scored in a file of its own."""
    from gendertrace.io.readers import read_corpus

    base = tmp / "det-base.jsonl"
    _run(score_cmd(inp, base, src, tgt, "--jobs", "1", "--no-cache"))
    _run(score_cmd(inp, tmp / "det-j2.jsonl", src, tgt, "--jobs", "2", "--batch-docs", "20", "--no-cache"))
    _run(score_cmd(inp, tmp / "det-b7.jsonl", src, tgt, "--jobs", "1", "--batch-docs", "7", "--no-cache"))
    doc = next(d for d in read_corpus(inp) if d.doc_id == alone)
    single = tmp / "det-alone.jsonl.in"
    with open(single, "w", encoding="utf-8") as f:
        for s in doc.segments:
            f.write(json.dumps({"doc_id": doc.doc_id, "seg_id": s.seg_id, "source": s.source,
                                "target": s.target}, ensure_ascii=False) + "\n")
    _run(score_cmd(single, tmp / "det-alone.jsonl", src, tgt, "--jobs", "1", "--no-cache", "--format", "jsonl"))
    ref = by_doc(base)

    def differ(path: Path) -> int:
        other = by_doc(path)
        return sum(other.get(k) != ref.get(k) for k in other.keys() | (ref.keys() if len(other) > 1 else set()))

    return {"documents": len(ref), "jobs 2": differ(tmp / "det-j2.jsonl"),
            "batch-docs 7": differ(tmp / "det-b7.jsonl"), "alone": differ(tmp / "det-alone.jsonl")}


# ----------------------------------------------------------------------------------------------------
# Stage profile


STAGES = {  # pipeline module global -> stage
    "extract_mentions": "mentions", "resolve_chains": "coreference", "singular_they_ok": "coreference",
    "anchor_alignment": "alignment", "merge": "alignment", "link_mentions": "linking",
    "build_entities": "findings", "apply_declarations": "findings", "detect_findings": "findings",
}


@contextmanager
def _timed(module, name: str, totals: dict[str, float], stage: str):
    original = getattr(module, name)

    def wrapper(*args, **kwargs):
        t0 = time.perf_counter()
        try:
            return original(*args, **kwargs)
        finally:
            totals[stage] += time.perf_counter() - t0

    setattr(module, name, wrapper)
    try:
        yield
    finally:
        setattr(module, name, original)


def stage_profile(inp: Path, src: str, tgt: str) -> dict[str, float]:
    """Seconds per stage of scoring INPUT in this process (pipelines loaded beforehand, no cache): read, parse,
    mentions, coreference, alignment (the statistical aligner and the anchors), linking, findings (entities,
    declarations and findings), write (results as JSON lines), and the rest of the scoring."""
    from contextlib import ExitStack

    from gendertrace import pipeline
    from gendertrace.io.readers import read_corpus
    from gendertrace.pipeline import Scorer

    totals: dict[str, float] = defaultdict(float)
    t0 = time.perf_counter()
    docs = read_corpus(inp)
    totals["read"] = time.perf_counter() - t0
    scorer = Scorer(src, tgt)
    scorer.src_parser.parse_many(["Una frase."] if src == "es" else ["A sentence."])  # load the pipelines
    scorer.tgt_parser.parse_many(["A sentence."] if tgt == "en" else ["Una frase."])
    aligner: Callable = scorer.statistical_aligner

    def timed_aligner(s, t):
        a0 = time.perf_counter()
        try:
            return aligner(s, t)
        finally:
            totals["alignment"] += time.perf_counter() - a0

    scorer.statistical_aligner = timed_aligner
    with ExitStack() as stack:
        for name, stage in STAGES.items():
            stack.enter_context(_timed(pipeline, name, totals, stage))
        started = time.perf_counter()
        parsed = scorer.parse(docs)
        totals["parse"] = time.perf_counter() - started
        s0 = time.perf_counter()
        results = list(scorer.score_parsed_batch(parsed))
        scored = time.perf_counter() - s0
    w0 = time.perf_counter()
    with tempfile.TemporaryFile("w", encoding="utf-8") as f:
        for r in results:
            f.write(json.dumps(r.to_json(), ensure_ascii=False) + "\n")
    totals["write"] = time.perf_counter() - w0
    staged = sum(v for k, v in totals.items() if k not in ("read", "parse", "write"))
    totals["other scoring"] = max(scored - staged, 0.0)
    return dict(totals)


# ----------------------------------------------------------------------------------------------------
# The report section


def speed_section(data_dir: Path, realmt_dir: Path, treebank_tsv: Path | None = None) -> list[str]:
    """Markdown lines: stage profile, end to end against spaCy alone, growth, determinism."""
    lines = ["## Where the time goes, growth and determinism", ""]
    reference = realmt_dir / "reference.jsonl"
    with tempfile.TemporaryDirectory(prefix="gendertrace-speed-") as tmp_name:
        tmp = Path(tmp_name)
        corpora: list[tuple[str, Path, str, str, int]] = []
        if reference.is_file():
            corpora.append(("real MT dev set, reference (en-es)", reference, "en", "es", 3))
        from gendertrace.bench.pud import pud_path

        if treebank_tsv is None and all(pud_path(data_dir, lang).is_file() for lang in ("es", "en")):
            from gendertrace.bench.scale import write_corpus

            treebank_tsv = tmp / "treebank.tsv"
            write_corpus(data_dir, treebank_tsv)
        if treebank_tsv is not None:
            corpora.append(("treebank (es-en)", treebank_tsv, "es", "en", 1))
        if not corpora:
            return lines + [f"Skipped: neither {reference} nor the treebank in {data_dir}.", ""]
        lines += ["Stage profile: one process, pipelines loaded beforehand, no cache, timers around the "
                  "pipeline's stage functions (`gendertrace.bench.speed.stage_profile`); seconds and share.", "",
                  "| input | read | parse | mentions | coreference | alignment | linking | findings | other "
                  "scoring | write | all |", "|---|" + "---:|" * 10]
        for label, inp, src, tgt, _ in corpora:
            prof = stage_profile(inp, src, tgt)
            total = sum(prof.values())
            cells = " | ".join(f"{prof.get(k, 0.0):.1f} ({100 * prof.get(k, 0.0) / total:.0f}%)" for k in
                               ("read", "parse", "mentions", "coreference", "alignment", "linking", "findings",
                                "other scoring", "write"))
            lines.append(f"| {label} | {cells} | {total:.1f} |")
        lines += ["", "End to end (`score --jobs 1 --no-cache`, a whole process) against the spaCy-only parse of "
                  "both sides (a whole process loading the same pipelines), run alternately; median of the runs "
                  "(target: at most 1.3).", "",
                  "| input | runs | end to end s | spaCy only s | ratio |", "|---|---:|---:|---:|---:|"]
        for label, inp, src, tgt, runs in corpora:
            e2e, parse = against_spacy(inp, src, tgt, tmp, runs)
            lines.append(f"| {label} | {runs} | {e2e:.1f} | {parse:.1f} | {e2e / parse:.2f} |")
        lines += ["", "Growth with document length: 2,000 invented two-sentence es-en segments, cut into documents "
                  "of N segments, one process each (start-up included, the same for every N; target: at most "
                  "1.2x from 5 to 2,000).", "", "| segments per document | ms per segment |", "|---:|---:|"]
        for n, per in doc_length_growth(tmp):
            cell = f"did not finish in {GROWTH_TIMEOUT:.0f} s" if per is None else f"{1000 * per:.1f}"
            lines.append(f"| {n} | {cell} |")
        lines += ["", "Growth with segment length: one document of one invented segment, time less that of a "
                  "one-sentence document (start-up and loading).", "",
                  "| KB asked | source characters | us per character |", "|---:|---:|---:|"]
        for kb, chars, per in segment_length_growth(tmp):
            cell = f"did not finish in {GROWTH_TIMEOUT:.0f} s" if per is None else f"{1e6 * per:.1f}"
            lines.append(f"| {kb} | {chars} | {cell} |")
        lines += ["", "The same segments in this process, stage by stage (microseconds per character; parse is both "
                  "sides, alignment the fixed aligner and the anchors, coreference the target side's mentions and "
                  "chains).", "", "| KB asked | source characters | parse | alignment | mentions and coreference |",
                  "|---:|---:|---:|---:|---:|"]
        for kb, chars, parse_us, align_us, coref_us in stage_growth():
            cell = "not run (the size before took too long)" if coref_us is None else f"{coref_us:.1f}"
            lines.append(f"| {kb} | {chars} | {parse_us:.1f} | {align_us:.2f} | {cell} |")
        label, inp, src, tgt, _ = corpora[0]
        from gendertrace.io.readers import read_corpus

        docs = read_corpus(inp)
        alone = docs[len(docs) // 2].doc_id
        det = determinism(inp, src, tgt, tmp, alone)
        lines += ["", f"Determinism ({label}, {det['documents']} documents): against a plain run, "
                  f"`--jobs 2 --batch-docs 20` gives {det['jobs 2']} differing documents, `--batch-docs 7` "
                  f"{det['batch-docs 7']}, and document {alone} scored alone {det['alone']}.", ""]
    return lines


def main() -> None:  # pragma: no cover - for running the section alone
    data = Path(sys.argv[1]) if len(sys.argv) > 1 else Path("../shared/ud-pud")
    realmt = Path(sys.argv[2]) if len(sys.argv) > 2 else Path("../shared/wmt24-en-es-dev")
    print("\n".join(speed_section(data, realmt)))


if __name__ == "__main__":  # pragma: no cover
    main()
