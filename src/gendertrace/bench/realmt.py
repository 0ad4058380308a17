"""Real machine translation, English to Spanish: findings on a professional reference and on engine outputs.

The data folder (the benchmark reads `../shared/wmt24-en-es-dev` relative to the repository root) holds one
JSONL file per engine, `SYSTEM.jsonl`, and `reference.jsonl` for the human translation, all in the scorer's
input format, plus a README that gives the organisers' automatic quality ranking (AutoRank, lower is better).
Nothing says which findings are right, so the section reports what can be measured without gold:

- documents flagged on the human reference (the false-alarm floor every engine's figure sits on);
- findings per engine, and their precision over judgements made by reading (`corpora/judgements/`), with the
  findings nobody has judged yet counted apart;
- each engine's consistency rate beside its AutoRank, and the rank correlation of the two;
- the judged findings by cause.

The section names systems, documents and counts only: no sentence of the data enters the report.
"""

from __future__ import annotations

import csv
import re
from collections import Counter
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path

from gendertrace.errors import InputError

__all__ = [
    "FLAGGING",
    "LABELS",
    "REFERENCE",
    "Judgement",
    "SystemResult",
    "judgements_path",
    "load_judgements",
    "read_autorank",
    "realmt_section",
    "realmt_systems",
    "run_realmt",
    "score_system",
]

FLAGGING = ("contradiction", "inconsistency")
REFERENCE = "reference"
LABELS = ("real", "false")
COLUMNS = ("system", "doc_id", "seg_id", "start", "end", "text", "label", "cause", "note")

Key = tuple[str, str, str, int, int, str]
MAX_LISTED = 40  # unjudged findings listed in the report


@dataclass(frozen=True)
class Judgement:
    """One finding read by a bilingual post-editor: is it a real gender error, and if not, why not."""

    system: str
    doc_id: str
    seg_id: str
    start: int
    end: int
    text: str
    label: str  # "real" (a post-editor would fix it) or "false"
    cause: str  # a short code of the reason, e.g. not-a-person, merged-persons
    note: str = ""

    @property
    def key(self) -> Key:
        return (self.system, self.doc_id, self.seg_id, self.start, self.end, self.text)


@dataclass(frozen=True)
class FlaggedWord:
    """A contradiction or inconsistency finding of one system, reduced to what identifies it."""

    system: str
    doc_id: str
    seg_id: str
    start: int
    end: int
    text: str
    kind: str

    @property
    def key(self) -> Key:
        return (self.system, self.doc_id, self.seg_id, self.start, self.end, self.text)


@dataclass(frozen=True)
class SystemResult:
    """What the scorer found in one system's output."""

    system: str
    documents: int
    flagged_documents: int
    findings: tuple[FlaggedWord, ...]
    checked: int
    consistent: int

    @property
    def rate(self) -> float | None:
        """Consistent over checked gendered target references (the score command's consistency rate)."""
        return self.consistent / self.checked if self.checked else None


def judgements_path() -> Path:
    """The judgement file kept in the repository (corpora/judgements/en-es-realmt.tsv)."""
    return Path(__file__).resolve().parents[3] / "corpora" / "judgements" / "en-es-realmt.tsv"


def load_judgements(path: str | Path) -> dict[Key, Judgement]:
    """Read a judgement file (TSV with a header row of COLUMNS); a missing file means no judgements.

    Raises InputError naming the file and line for a short row, a label other than real/false, an offset that is
    not a number, or the same finding judged twice.
    """
    path = Path(path)
    if not path.is_file():
        return {}
    out: dict[Key, Judgement] = {}
    with open(path, encoding="utf-8", newline="") as f:
        rows = csv.reader(f, delimiter="\t", quoting=csv.QUOTE_NONE)
        header = next(rows, None)
        if header is None:
            return {}
        if tuple(header) != COLUMNS:
            raise InputError(str(path), 1, f"header should be {' '.join(COLUMNS)}, not {' '.join(header)}")
        for lineno, row in enumerate(rows, 2):
            if not row:
                continue
            if len(row) != len(COLUMNS):
                raise InputError(str(path), lineno, f"{len(row)} columns, expected {len(COLUMNS)}")
            system, doc_id, seg_id, start, end, text, label, cause, note = row
            if label not in LABELS:
                raise InputError(str(path), lineno, f"label {label!r} is not one of {', '.join(LABELS)}")
            if not (start.isdigit() and end.isdigit()):
                raise InputError(str(path), lineno, f"offsets {start!r}-{end!r} are not numbers")
            j = Judgement(system, doc_id, seg_id, int(start), int(end), text, label, cause, note)
            if j.key in out:
                raise InputError(str(path), lineno, f"finding {text!r} of {system} {doc_id} judged twice")
            out[j.key] = j
    return out


# "Name 1.0," pairs after the word AutoRank in the data README.
_RANK = re.compile(r"([A-Za-z][\w.+-]*)\s+(\d+(?:\.\d+)?)(?=[,.;]?(?:\s|$))")


def read_autorank(readme: str | Path) -> dict[str, float]:
    """The AutoRank of each system, read from the paragraph of the data README that gives it (empty if none)."""
    path = Path(readme)
    if not path.is_file():
        return {}
    text = path.read_text(encoding="utf-8")
    at = text.find("AutoRank")
    if at < 0:
        return {}
    para = text[at:].split("\n\n", 1)[0]
    colon = para.find(":")
    return {name: float(v) for name, v in _RANK.findall(para[colon + 1:] if colon >= 0 else para)}


def realmt_systems(data: str | Path) -> list[str]:
    """The systems of the data folder: the reference first, then the engines in name order."""
    names = sorted(p.stem for p in Path(data).glob("*.jsonl"))
    return ([REFERENCE] if REFERENCE in names else []) + [n for n in names if n != REFERENCE]


def score_system(data: str | Path, system: str, score: Callable[[list], Sequence]) -> SystemResult:
    """Score one system's file with `score` (documents -> results in order) and keep its flagging findings."""
    from gendertrace.io.readers import read_corpus

    docs = read_corpus(Path(data) / f"{system}.jsonl")
    results = score(docs)
    words: list[FlaggedWord] = []
    flagged = checked = consistent = 0
    for r in results:
        mine = [f for f in r.findings if f.kind in FLAGGING]
        flagged += bool(mine)
        words += [FlaggedWord(system, r.doc_id, f.seg_id, f.start, f.end, f.text, f.kind) for f in mine]
        checked += r.stats.checked
        consistent += r.stats.consistent
    return SystemResult(system, len(docs), flagged, tuple(words), checked, consistent)


def _rate(a: int, b: int) -> str:
    return f"{a / b:.3f}" if b else "n/a"


def _spearman(xs: Sequence[float], ys: Sequence[float]) -> tuple[float, float] | None:
    if len(xs) < 3:
        return None
    from scipy.stats import spearmanr

    rho, p = spearmanr(xs, ys)
    return float(rho), float(p)


def realmt_section(
    data: str | Path,
    results: Sequence[SystemResult] | None = None,
    judgements: dict[Key, Judgement] | None = None,
    ranks: dict[str, float] | None = None,
    command: str = "",
) -> list[str]:
    """The report section as Markdown lines; when `data` is not a folder, a note saying the section was skipped."""
    data = Path(data)
    lines = ["## Real machine translation, English to Spanish", ""]
    if not data.is_dir():
        return lines + [f"Skipped: no real MT folder at {data} (one SYSTEM.jsonl per engine and reference.jsonl)."]
    results = list(results or [])
    judgements = judgements or {}
    ranks = ranks if ranks is not None else read_autorank(data / "README.md")
    lines += [
        f"Data: {data.name}, English sources translated by each engine and by a professional translator "
        "(`reference`). Findings are the contradictions and inconsistencies; each was read by a bilingual "
        "post-editor where a judgement exists (`corpora/judgements/en-es-realmt.tsv`, keyed by system, document, "
        "segment, offsets and flagged text). *real*: the flagged word is about a person and its gender is wrong "
        "for that person given the English. Precision is real over judged; unjudged findings are counted apart. "
        "The consistency rate is the score command's; AutoRank is the organisers' automatic quality ranking "
        "(lower is better), from the data README.",
    ]
    if command:
        lines[-1] += f" Command: `{command}`."
    lines += [
        "",
        "| system | docs | docs flagged | findings | judged | real | precision | unjudged | consistency rate | "
        "AutoRank |",
        "|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|",
    ]
    tot_judged = tot_real = tot_unjudged = tot_findings = 0
    for r in results:
        judged = [judgements[w.key] for w in r.findings if w.key in judgements]
        real = sum(j.label == "real" for j in judged)
        unjudged = len(r.findings) - len(judged)
        if r.system != REFERENCE:
            tot_findings += len(r.findings)
            tot_judged += len(judged)
            tot_real += real
            tot_unjudged += unjudged
        rate = f"{r.rate:.3f}" if r.rate is not None else "n/a"
        rank = f"{ranks[r.system]:.1f}" if r.system in ranks else "-"
        lines.append(
            f"| {r.system} | {r.documents} | {r.flagged_documents} | {len(r.findings)} | {len(judged)} | {real} | "
            f"{_rate(real, len(judged))} | {unjudged} | {rate} | {rank} |"
        )
    lines.append(
        f"| all engines | | | {tot_findings} | {tot_judged} | {tot_real} | {_rate(tot_real, tot_judged)} | "
        f"{tot_unjudged} | | |"
    )
    ref = next((r for r in results if r.system == REFERENCE), None)
    lines.append("")
    if ref is not None:
        lines.append(
            f"Human reference: {ref.flagged_documents} of {ref.documents} documents flagged, "
            f"{len(ref.findings)} findings."
        )
    paired = [(r.rate, ranks[r.system]) for r in results
              if r.system != REFERENCE and r.system in ranks and r.rate is not None]
    corr = _spearman([a for a, _ in paired], [b for _, b in paired])
    if corr is not None:
        lines.append(
            f"Consistency rate against AutoRank over {len(paired)} engines: Spearman rho {corr[0]:+.3f} "
            f"(p = {corr[1]:.3f}); a rate that tracks quality would give a clearly negative rho, since a lower "
            "AutoRank is better."
        )
    causes: Counter = Counter()
    for r in results:
        for w in r.findings:
            j = judgements.get(w.key)
            if j is not None:
                causes[(j.cause, j.label, r.system == REFERENCE)] += 1
    if causes:
        lines += [
            "",
            "Judged findings by cause (engines and reference apart):",
            "",
            "| cause | label | engines | reference |",
            "|---|---|---:|---:|",
        ]
        for cause, label in sorted({(c, lab) for c, lab, _ in causes},
                                   key=lambda k: (-causes[(*k, False)] - causes[(*k, True)], k)):
            lines.append(f"| {cause} | {label} | {causes[(cause, label, False)]} | {causes[(cause, label, True)]} |")
    unjudged = [w for r in results for w in r.findings if w.key not in judgements]
    if unjudged:
        # Ids and the flagged word only, so that a reader can judge them and add rows to the judgement file.
        lines += ["", f"Findings not judged yet ({len(unjudged)}; system, document, segment, offsets, word):", ""]
        lines += [f"- {w.system} {w.doc_id} [{w.seg_id}] {w.start}-{w.end} {w.text!r}" for w in unjudged[:MAX_LISTED]]
    return lines


def run_realmt(
    data: str | Path, systems: Sequence[str] | None = None, align_priors: str | Path | None = None
) -> list[SystemResult]:
    """Score every system of the folder as `gendertrace score -s en -t es` would (parse cache on).

    With `align_priors`, alignments come from that frozen model (learned from the reference's parses first when
    the file does not exist), so that two runs differ only by the rules or code between them.
    """
    from gendertrace.parse.cache import default_cache_dir
    from gendertrace.scale.plan import ScoringPlan, build_scorer

    scorer = build_scorer(ScoringPlan("en", "es", cache_dir=str(default_cache_dir())))
    names = list(systems) if systems else realmt_systems(data)
    if align_priors is not None:
        from gendertrace.bench.frozen import freeze_alignment
        from gendertrace.io.readers import read_corpus

        first = REFERENCE if (Path(data) / f"{REFERENCE}.jsonl").is_file() else names[0]
        freeze_alignment(scorer, align_priors, scorer.parse(read_corpus(Path(data) / f"{first}.jsonl")))
    return [score_system(data, s, lambda docs: list(scorer.score(docs))) for s in names]
