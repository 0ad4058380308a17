"""The bundled demo: score every file of corpora/demo and compare the findings with the reviewers' gold."""

from __future__ import annotations

import csv
from collections import defaultdict
from dataclasses import dataclass
from pathlib import Path

from gendertrace.api import Summary, score_file
from gendertrace.declared.sheet import load_entity_sheet
from gendertrace.errors import InputError
from gendertrace.io.outputs import staged_file
from gendertrace.pipeline import Scorer, ScoreSettings


def demo_dir() -> Path:
    return Path(__file__).resolve().parents[2] / "corpora" / "demo"


@dataclass(frozen=True)
class GoldFinding:
    file: str
    doc_id: str
    seg_id: str
    kind: str
    start: int
    end: int
    text: str
    expected: str | None
    found: str | None


def read_gold(path: Path) -> list[GoldFinding]:
    out = []
    with open(path, encoding="utf-8", newline="") as f:
        for line, row in enumerate(csv.DictReader(f, delimiter="\t"), 2):
            try:
                out.append(
                    GoldFinding(
                        row["file"],
                        row["doc_id"],
                        row["seg_id"],
                        row["kind"],
                        int(row["start"]),
                        int(row["end"]),
                        row["text"],
                        row["expected"] or None,
                        row["found"] or None,
                    )
                )
            except (KeyError, ValueError) as exc:
                raise InputError(str(path), line, f"bad gold row: {exc}") from exc
    return out


@dataclass
class Agreement:
    """Counts for precision and recall of one finding kind against the gold."""

    system: int = 0
    system_matched: int = 0
    gold: int = 0
    gold_matched: int = 0

    @property
    def precision(self) -> float | None:
        return self.system_matched / self.system if self.system else None

    @property
    def recall(self) -> float | None:
        return self.gold_matched / self.gold if self.gold else None


def compare(system: list[tuple], gold: list[GoldFinding], kind: str) -> Agreement:
    """system: (file, doc_id, seg_id, kind, start, end); a match needs the same segment and overlapping spans."""
    sys_k = [s for s in system if s[3] == kind]
    gold_k = [g for g in gold if g.kind == kind]

    def overlaps(s, g) -> bool:
        return (s[0], s[1], s[2]) == (g.file, g.doc_id, g.seg_id) and s[4] < g.end and g.start < s[5]

    return Agreement(
        system=len(sys_k),
        system_matched=sum(1 for s in sys_k if any(overlaps(s, g) for g in gold_k)),
        gold=len(gold_k),
        gold_matched=sum(1 for g in gold_k if any(overlaps(s, g) for s in sys_k)),
    )


def _fmt(x: float | None) -> str:
    return "  n/a" if x is None else f"{x:5.2f}"


def run_demo(out: Path, corpus: Path | None = None) -> str:
    """Score each demo file into OUT/<file>.jsonl; return a printable report (summaries and gold agreement)."""
    import json

    corpus = corpus or demo_dir()
    files = sorted(corpus.glob("*-*.v*.tsv"))
    if not files:
        raise InputError(str(corpus), None, "no demo files (<src>-<tgt>.<version>.tsv) in this folder")
    gold_path = corpus / "gold" / "findings.tsv"
    gold = read_gold(gold_path) if gold_path.is_file() else []
    out.mkdir(parents=True, exist_ok=True)
    scorers: dict[tuple[str, str], Scorer] = {}
    # The client's entity sheet (declared pronouns), when the corpus has one.
    sheet = load_entity_sheet(corpus / "entities.yaml") if (corpus / "entities.yaml").is_file() else None
    lines = ["gendertrace demo: findings are aids for a human post-editor, not verdicts.", ""]
    header = (f"{'file':<14} {'docs':>4} {'checked':>7} {'consistent':>10} {'rate':>6} {'contra':>6} "
              f"{'incons':>6} {'assum':>5}")
    lines += [header, "-" * len(header)]
    system: list[tuple] = []
    by_direction: dict[str, list[tuple]] = defaultdict(list)
    for path in files:
        direction = path.name.split(".")[0]
        src, tgt = direction.split("-")
        if (src, tgt) not in scorers:
            scorers[(src, tgt)] = Scorer(src, tgt, ScoreSettings(entity_sheet=sheet))
        res_path = out / (path.stem + ".jsonl")
        s: Summary = score_file(path, res_path, scorers[(src, tgt)])
        rate = "  n/a" if s.rate is None else f"{s.rate:6.3f}"
        lines.append(
            f"{path.name:<14} {s.documents:>4} {s.checked:>7} {s.consistent:>10} {rate:>6} "
            f"{s.findings['contradiction']:>6} {s.findings['inconsistency']:>6} {s.findings['assumption']:>5}"
        )
        with open(res_path, encoding="utf-8") as f:
            for line in f:
                doc = json.loads(line)
                for fd in doc["findings"]:
                    row = (path.name, doc["doc_id"], fd["seg_id"], fd["kind"], fd["start"], fd["end"])
                    system.append(row)
                    by_direction[direction].append(row)
    if gold:
        lines += ["", "agreement with the reviewers' gold (contradiction findings; all engine versions):", ""]
        lines.append(f"{'direction':<10} {'gold':>5} {'found':>6} {'precision':>9} {'recall':>7}")
        for direction in sorted(by_direction.keys() | {g.file.split(".")[0] for g in gold}):
            g = [x for x in gold if x.file.split(".")[0] == direction]
            a = compare(by_direction.get(direction, []), g, "contradiction")
            lines.append(
                f"{direction:<10} {a.gold:>5} {a.system:>6} {_fmt(a.precision):>9} {_fmt(a.recall):>7}"
            )
        total = compare(system, gold, "contradiction")
        lines.append(
            f"{'all':<10} {total.gold:>5} {total.system:>6} {_fmt(total.precision):>9} "
            f"{_fmt(total.recall):>7}"
        )
        inc = compare(system, gold, "inconsistency")
        lines.append(
            f"(inconsistency: gold {inc.gold}, found {inc.system}, precision {_fmt(inc.precision).strip()}, "
            f"recall {_fmt(inc.recall).strip()})"
        )
    # The two engine versions go into a history store, compared with their statistics.
    from gendertrace.history.demo import record_demo

    db = out / "history.db"
    with staged_file(db) as tmp:  # rebuilt beside the earlier store, which it replaces only when complete
        tmp.unlink()
        recorded = record_demo(out, tmp, corpus).replace(str(tmp.resolve()), str(db.resolve()))
    lines += ["", "engine versions (history store):", "", recorded]
    lines += ["", f"results written to {out}/ (history store: {db})"]
    return "\n".join(lines)
