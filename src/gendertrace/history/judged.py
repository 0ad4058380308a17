"""What the history keeps about findings beyond the store's own rows: the source word each finding is linked
through (to match findings between versions) and the post-editor's decisions (judged labels).

Two tables beside the store's, created when first written, each row tied to its run (deleted with it):
`run_finding_words` and `run_decisions`. Between two runs a finding is the same when its document, its
segment and the source word its flagged word translates are; a finding with no source word is matched by its
flagged words instead. Precision of accepted findings is accepted over accepted plus rejected.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

import sqlalchemy as sa

from gendertrace.history.store import HistoryStore, runs_table
from gendertrace.results import read_results
from gendertrace.review.decisions import Decision, FindingKey, match_decisions, read_decisions

_meta = sa.MetaData()

words_table = sa.Table(
    "run_finding_words", _meta,
    sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
    sa.Column("run_id", sa.Integer, sa.ForeignKey(runs_table.c.id, ondelete="CASCADE"), nullable=False,
              index=True),
    sa.Column("finding", sa.String(40), nullable=False),
    sa.Column("doc_id", sa.Text, nullable=False),
    sa.Column("kind", sa.String(20), nullable=False),
    sa.Column("seg_id", sa.Text, nullable=False),
    sa.Column("start_char", sa.Integer, nullable=False),
    sa.Column("end_char", sa.Integer, nullable=False),
    sa.Column("text", sa.Text, nullable=False),
    sa.Column("source_seg", sa.Text, nullable=True),
    sa.Column("source_start", sa.Integer, nullable=True),
    sa.Column("source_end", sa.Integer, nullable=True),
    sa.Column("source_text", sa.Text, nullable=True),
)

decisions_table = sa.Table(
    "run_decisions", _meta,
    sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
    sa.Column("run_id", sa.Integer, sa.ForeignKey(runs_table.c.id, ondelete="CASCADE"), nullable=False,
              index=True),
    sa.Column("finding", sa.String(40), nullable=False),
    sa.Column("decision", sa.String(10), nullable=False),
    sa.Column("comment", sa.Text, nullable=False),
    sa.Column("decided_at", sa.String(40), nullable=False),
)


@dataclass(frozen=True)
class FindingWord:
    """One finding of a run with the source word it is linked through (empty when none)."""

    finding: str
    doc_id: str
    kind: str
    seg_id: str
    start: int
    end: int
    text: str
    source_seg: str = ""
    source_start: int = -1
    source_end: int = -1
    source_text: str = ""

    @property
    def match_key(self) -> tuple:
        if self.source_text:
            return (self.doc_id, self.seg_id, "source", self.source_seg, self.source_start, self.source_end)
        return (self.doc_id, self.seg_id, "target", self.text.lower())

    def describe(self) -> str:
        via = f" <- '{self.source_text}'" if self.source_text else " (no source word)"
        return f"{self.doc_id} [{self.seg_id}] {self.kind} '{self.text}'{via}"


def finding_words(results_path: str | Path) -> list[FindingWord]:
    """Every finding of a results file, numbered as the report numbers them."""
    out = []
    for n, d in enumerate(read_results(results_path), 1):
        for k, f in enumerate(d.findings, 1):
            s = f.source
            seg = (s.seg_id or (f.seg_id if s.seg < 0 else str(s.seg))) if s else ""
            out.append(FindingWord(f"f{n}-{k}", d.doc_id, f.kind, f.seg_id, f.start, f.end, f.text, seg,
                                   s.start if s else -1, s.end if s else -1, s.text if s else ""))
    return out


def judged_decisions(decisions_path: str | Path, words: Sequence[FindingWord]) -> list[Decision]:
    """The decisions of DECISIONS_PATH, each checked against the run's findings (DecisionsError if one fails)."""
    keys = [FindingKey(w.finding, w.doc_id, w.seg_id, w.start, w.end, w.text) for w in words]
    return [d for _, d in match_decisions(read_decisions(decisions_path), keys, str(decisions_path))]


def save(store: HistoryStore, run_id: int, words: Sequence[FindingWord], decisions: Sequence[Decision]) -> None:
    """Replace what is kept for RUN_ID by WORDS and DECISIONS, in one transaction."""
    with store.engine.connect() as conn:
        conn = conn.execution_options(gendertrace_write=True)
        with conn.begin():
            _meta.create_all(conn, checkfirst=True)
            for t in (words_table, decisions_table):
                conn.execute(t.delete().where(t.c.run_id == run_id))
            if words:
                conn.execute(words_table.insert(), [
                    {"run_id": run_id, "finding": w.finding, "doc_id": w.doc_id, "kind": w.kind, "seg_id": w.seg_id,
                     "start_char": w.start, "end_char": w.end, "text": w.text, "source_seg": w.source_seg,
                     "source_start": w.source_start, "source_end": w.source_end, "source_text": w.source_text}
                    for w in words])
            if decisions:
                conn.execute(decisions_table.insert(), [
                    {"run_id": run_id, "finding": d.finding, "decision": d.decision, "comment": d.comment,
                     "decided_at": d.decided_at} for d in decisions])


def load(store: HistoryStore, run_id: int) -> tuple[list[FindingWord], dict[str, tuple[str, str]]]:
    """(the run's findings with their source words, finding id -> (decision, comment)); empty when not kept."""
    with store.engine.connect() as conn:
        if not sa.inspect(conn).has_table(words_table.name):
            return [], {}
        words = [FindingWord(r.finding, r.doc_id, r.kind, r.seg_id, r.start_char, r.end_char, r.text,
                             r.source_seg or "", r.source_start, r.source_end, r.source_text or "")
                 for r in conn.execute(sa.select(words_table).where(words_table.c.run_id == run_id)
                                       .order_by(words_table.c.id))]
        decided = {r.finding: (r.decision, r.comment)
                   for r in conn.execute(sa.select(decisions_table).where(decisions_table.c.run_id == run_id)
                                         .order_by(decisions_table.c.id))}
    return words, decided


@dataclass(frozen=True)
class FindingsDiff:
    fixed: tuple[FindingWord, ...]  # in A, not in B
    new: tuple[FindingWord, ...]  # in B, not in A
    persisting: tuple[FindingWord, ...]  # in both (as B has them)


def findings_diff(a: Sequence[FindingWord], b: Sequence[FindingWord]) -> FindingsDiff:
    """Findings fixed, new and persisting from A to B, matched by document, segment and source word."""
    left = Counter(w.match_key for w in a)
    fixed_left = Counter(left)
    persisting, new = [], []
    for w in b:
        if fixed_left[w.match_key] > 0:
            fixed_left[w.match_key] -= 1
            persisting.append(w)
        else:
            new.append(w)
    fixed = []
    for w in reversed(a):  # the last ones of a key are the unmatched ones
        if fixed_left[w.match_key] > 0:
            fixed_left[w.match_key] -= 1
            fixed.append(w)
    return FindingsDiff(tuple(reversed(fixed)), tuple(new), tuple(persisting))


@dataclass(frozen=True)
class Judged:
    accepted: int
    rejected: int
    commented: int

    @property
    def precision(self) -> float | None:
        n = self.accepted + self.rejected
        return self.accepted / n if n else None


def judged(decided: dict[str, tuple[str, str]]) -> Judged:
    verdicts = [v for v, _ in decided.values()]
    return Judged(verdicts.count("accept"), verdicts.count("reject"),
                  sum(1 for _, c in decided.values() if c.strip()))
