"""Comparing two recorded runs over the same documents: rates, intervals, tests, gender gap, MT metrics.

A comparison refuses runs over different document sets (naming the documents one lacks) and runs whose
signatures differ in anything but the input (tool version, rules digest, pipelines, thresholds), unless
forced, in which case every difference is printed as a warning at the top of the report.

The regression gate: B (the newer run) regresses against A when rate(B) - rate(A) < -threshold and the
approximate randomization p-value is below alpha. Both conditions: a significant but negligible drop does not
stop a release, nor does a large drop on too little data to tell from chance.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field

import numpy as np

from gendertrace.history.defaults import (
    DEFAULT_ALPHA,
    DEFAULT_SAMPLES,
    DEFAULT_SEED,
    DEFAULT_THRESHOLD,
    DEFAULT_TRIALS,
    FEW_DOCUMENTS,
)
from gendertrace.history.judged import FindingsDiff, Judged
from gendertrace.history.runs import RunData, comparable_signature, signature_differences
from gendertrace.history.stats import (
    BootstrapRate,
    GapEstimate,
    Interval,
    PairedBootstrap,
    RandomizationTest,
    approximate_randomization,
    bootstrap_rate,
    gap_bootstrap,
    paired_bootstrap,
    paired_gap_change,
    wilson_interval,
)
from gendertrace.history.store import HistoryError, RunInfo
from gendertrace.results import consistency_rate


@dataclass(frozen=True)
class RunRate:
    """One run's corpus rate with its two intervals."""

    consistent: int
    checked: int
    wilson: Interval | None
    bootstrap: BootstrapRate

    @property
    def rate(self) -> float | None:
        return consistency_rate(self.consistent, self.checked)


@dataclass(frozen=True)
class MetricLine:
    name: str  # as sacrebleu names it: BLEU, chrF2, TER
    score_a: float
    score_b: float
    p_value: float | None  # sacrebleu's paired bootstrap test of B against A
    signature: str


@dataclass(frozen=True)
class MTComparison:
    segments: int
    lines: tuple[MetricLine, ...]


@dataclass(frozen=True)
class Comparison:
    a: RunInfo
    b: RunInfo
    documents: int
    rate_a: RunRate
    rate_b: RunRate
    paired: PairedBootstrap
    randomization: RandomizationTest
    gap_a: GapEstimate | None
    gap_b: GapEstimate | None
    gap_change: Interval | None
    gap_note: str
    mt: MTComparison | None
    mt_note: str
    differences: tuple[tuple[str, object, object], ...] = ()
    seed: int | None = DEFAULT_SEED
    notes: tuple[str, ...] = field(default=())
    diff: FindingsDiff | None = None  # findings fixed, new and persisting, when both runs kept their words
    judged_a: Judged | None = None  # the post-editor's decisions on each run's findings, when recorded
    judged_b: Judged | None = None

    @property
    def delta(self) -> float:
        return self.paired.delta

    def regressed(self, threshold: float = DEFAULT_THRESHOLD, alpha: float = DEFAULT_ALPHA) -> bool:
        """B worse than A by more than THRESHOLD (absolute rate) with p < ALPHA."""
        return self.delta < -threshold and self.randomization.p_value < alpha

    def render(self, threshold: float = DEFAULT_THRESHOLD, alpha: float = DEFAULT_ALPHA) -> str:
        return render(self, threshold, alpha)


def check_documents(a: RunInfo, run_a: RunData, b: RunInfo, run_b: RunData) -> None:
    ids_a = [d.doc_id for d in run_a.documents]
    ids_b = [d.doc_id for d in run_b.documents]
    only_a = [d for d in ids_a if d not in set(ids_b)]
    only_b = [d for d in ids_b if d not in set(ids_a)]
    if only_a or only_b:
        parts = []
        if only_b:
            parts.append(f"{a.name} lacks {len(only_b)}: {_names(only_b)}")
        if only_a:
            parts.append(f"{b.name} lacks {len(only_a)}: {_names(only_a)}")
        raise HistoryError("the runs cover different documents, so they cannot be compared; "
                           + "; ".join(parts))


def _names(ids: Sequence[str], most: int = 10) -> str:
    return ", ".join(ids[:most]) + (f" and {len(ids) - most} more" if len(ids) > most else "")


def describe_differences(diffs: Sequence[tuple[str, object, object]], a: str, b: str) -> list[str]:
    return [f"{key}: {va!r} in {a}, {vb!r} in {b}" for key, va, vb in diffs]


def compare_runs(a: RunInfo, run_a: RunData, b: RunInfo, run_b: RunData, *, force: bool = False,
                 samples: int = DEFAULT_SAMPLES, trials: int = DEFAULT_TRIALS,
                 seed: int | None = DEFAULT_SEED, metrics: bool = True) -> Comparison:
    """Compare run B against run A (the baseline) over their common documents; see the module for refusals."""
    check_documents(a, run_a, b, run_b)
    diffs = tuple(signature_differences(a.signature, b.signature))
    if diffs and not force:
        raise HistoryError("the runs were scored with different settings, so their rates are not comparable "
                           "(use --force to compare anyway): "
                           + "; ".join(describe_differences(diffs, a.name, b.name)))
    docs_a = list(run_a.documents)
    by_id_b = {d.doc_id: d for d in run_b.documents}
    docs_b = [by_id_b[d.doc_id] for d in docs_a]
    counts_a = ([d.consistent for d in docs_a], [d.checked for d in docs_a])
    counts_b = ([d.consistent for d in docs_b], [d.checked for d in docs_b])
    if not sum(counts_a[1]) or not sum(counts_b[1]):
        empty = a.name if not sum(counts_a[1]) else b.name
        raise HistoryError(f"run {empty} has no checked references: there is no rate to compare")
    rate_a = _run_rate(counts_a, samples, seed)
    rate_b = _run_rate(counts_b, samples, seed)
    paired = paired_bootstrap(counts_a, counts_b, samples, seed)
    ar = approximate_randomization(counts_a, counts_b, trials, seed)
    gap_a = gap_b = gap_change = None
    gap_note = ""
    if not (a.has_entities and b.has_entities):
        gap_note = "not available: a run was recorded before the store kept per-entity data"
    else:
        order = [d.doc_id for d in docs_a]
        ga, gb = gap_counts(run_a, order), gap_counts(run_b, order)
        gap_a, gap_b = gap_bootstrap(ga, samples, seed), gap_bootstrap(gb, samples, seed)
        gap_change = paired_gap_change(ga, gb, samples, seed)
        kinds = {e.counts for e in run_a.entities + run_b.entities}
        if "estimated" in kinds:
            gap_note = ("per-entity counts are estimated from target evidence (the results count checks "
                        "per document only)")
    mt, mt_note = (None, "not computed (--no-metrics)")
    if metrics:
        mt, mt_note = mt_comparison(run_a, run_b, samples, seed)
    notes = tuple(dict.fromkeys(run_a.notes + run_b.notes))
    return Comparison(a, b, len(docs_a), rate_a, rate_b, paired, ar, gap_a, gap_b, gap_change, gap_note, mt,
                      mt_note, diffs, seed, notes)


def _run_rate(counts: tuple[list[int], list[int]], samples: int, seed: int | None) -> RunRate:
    cons, chk = sum(counts[0]), sum(counts[1])
    return RunRate(cons, chk, wilson_interval(cons, chk), bootstrap_rate(counts[0], counts[1], samples, seed))


def gap_counts(run: RunData, order: Sequence[str]) -> np.ndarray:
    """Per document (in ORDER): fem consistent, fem checked, masc consistent, masc checked.

    Only entities whose gender comes from source evidence count: what the document says about the person,
    not what the translation made of it.
    """
    row = {d: k for k, d in enumerate(order)}
    out = np.zeros((len(order), 4), dtype=np.int64)
    for e in run.entities:
        if e.basis != "source" or e.gender not in ("fem", "masc") or e.doc_id not in row:
            continue
        col = 0 if e.gender == "fem" else 2
        out[row[e.doc_id], col] += e.consistent
        out[row[e.doc_id], col + 1] += e.checked
    return out


# ---------------------------------------------------------------------------------------------------------
# MT metrics through sacrebleu


@contextmanager
def _sacrebleu_seed(seed: int | None):
    """sacrebleu's PairedTest reads its seed from SACREBLEU_SEED only: set it for the duration of one test."""
    old = os.environ.get("SACREBLEU_SEED")
    os.environ["SACREBLEU_SEED"] = "none" if seed is None else str(seed)
    try:
        yield
    finally:
        if old is None:
            os.environ.pop("SACREBLEU_SEED", None)
        else:
            os.environ["SACREBLEU_SEED"] = old


def mt_comparison(run_a: RunData, run_b: RunData, samples: int = DEFAULT_SAMPLES,
                  seed: int | None = DEFAULT_SEED) -> tuple[MTComparison | None, str]:
    """BLEU, chrF and TER of both runs on their shared referenced segments, with sacrebleu's paired test."""
    if not run_a.segments or not run_b.segments:
        return None, "not computed: record both runs with --input to keep their texts"
    seg_b = {(s.doc_id, s.seg_id): s for s in run_b.segments}
    hyps_a, hyps_b, refs = [], [], []
    differing = 0
    for s in run_a.segments:
        other = seg_b.get((s.doc_id, s.seg_id))
        if other is None or s.reference is None or other.reference is None:
            continue
        if s.reference != other.reference:
            differing += 1
            continue
        hyps_a.append(s.hypothesis)
        hyps_b.append(other.hypothesis)
        refs.append(s.reference)
    if differing:
        return None, f"not computed: the references differ between the runs in {differing} segment(s)"
    if not refs:
        return None, "not computed: the input had no references"
    from sacrebleu.metrics import BLEU, CHRF, TER
    from sacrebleu.significance import PairedTest

    with _sacrebleu_seed(seed):
        test = PairedTest([("A", hyps_a), ("B", hyps_b)], {"BLEU": BLEU(), "chrF": CHRF(), "TER": TER()},
                          [refs], test_type="bs", n_samples=samples)
        signatures, scores = test()
    lines = []
    for name, sig in signatures.items():
        ra, rb = scores[name]
        lines.append(MetricLine(name, float(ra.score), float(rb.score), rb.p_value, sig.format()))
    note = f"on {len(refs)} referenced segment(s)"
    return MTComparison(len(refs), tuple(lines)), note


# ---------------------------------------------------------------------------------------------------------
# Text


def _r(x: float | None, digits: int = 3, signed: bool = False) -> str:
    if x is None:
        return "n/a"
    return f"{x:+.{digits}f}" if signed else f"{x:.{digits}f}"


def _iv(iv: Interval | None, signed: bool = False) -> str:
    return "n/a" if iv is None else iv.fmt(3, signed)


def _p(p: float) -> str:
    return f"{p:.4f}"


def signature_line(signature: dict) -> str:
    return " | ".join(f"{k} {v}" for k, v in comparable_signature(signature).items())


def render(c: Comparison, threshold: float = DEFAULT_THRESHOLD, alpha: float = DEFAULT_ALPHA) -> str:
    lines: list[str] = []
    few = c.documents < FEW_DOCUMENTS
    if c.differences:
        lines.append("WARNING: the runs were scored with different settings; the comparison was forced")
        lines.append("WARNING: and its numbers mix a change of engine with a change of the checker:")
        lines += [f"WARNING:   {d}" for d in describe_differences(c.differences, c.a.name, c.b.name)]
        lines.append("")
    if few:
        lines.append(f"NOTE: only {c.documents} documents: intervals are coarse, and the resampling p-values "
                     f"below (bootstrap, randomization) are unreliable; read the findings lists instead")
        lines.append("")
    if c.diff is not None:
        d = c.diff
        lines.append(f"findings from A to B: {len(d.fixed)} fixed, {len(d.new)} new, {len(d.persisting)} "
                     f"persisting (matched by document, segment and the source word translated)")
    for label, j in (("A", c.judged_a), ("B", c.judged_b)):
        if j is not None:
            lines.append(f"decisions on {label}'s findings: {j.accepted} accepted, {j.rejected} rejected; "
                         f"precision of judged findings {_r(j.precision)}")
    if c.diff is not None or c.judged_a is not None or c.judged_b is not None:
        lines.append("")
    lines.append(f"A = {c.a.name}  (recorded {c.a.recorded_at[:19]})")
    lines.append(f"B = {c.b.name}  (recorded {c.b.recorded_at[:19]})")
    lines.append(f"{c.documents} documents in both runs; signature: {signature_line(c.a.signature)}")
    lines.append("")
    lines.append("consistency rate (consistent / checked gendered target references)")
    lines.append(f"  {'run':<4} {'consistent/checked':>18}  {'rate':>6}  {'95% Wilson':>16}  "
                 f"{'95% bootstrap (docs)':>20}")
    for label, r in (("A", c.rate_a), ("B", c.rate_b)):
        counts = f"{r.consistent}/{r.checked}"
        lines.append(f"  {label:<4} {counts:>18}  {_r(r.rate):>6}  {_iv(r.wilson):>16}  "
                     f"{_iv(r.bootstrap.interval):>20}")
    lines.append(f"  B - A {_r(c.delta, signed=True)}: 95% paired bootstrap {_iv(c.paired.interval, True)} "
                 f"({c.paired.samples} resamples of documents, seed {c.seed})")
    unreliable = " (unreliable: too few documents)" if few else ""
    lines.append(f"  approximate randomization p = {_p(c.randomization.p_value)} "
                 f"({c.randomization.trials} trials); paired bootstrap p = {_p(c.paired.p_value)}{unreliable}")
    lines.append("")
    lines.append("entities with feminine and with masculine source evidence")
    if c.gap_a is None or c.gap_b is None:
        lines.append(f"  {c.gap_note}")
    else:
        lines.append(f"  {'run':<4} {'feminine':>16} {'masculine':>16}  {'gap fem - masc':>14}  "
                     f"{'95% bootstrap':>16}")
        for label, g in (("A", c.gap_a), ("B", c.gap_b)):
            fem = f"{_r(g.fem_rate)} ({g.fem_consistent}/{g.fem_checked})"
            masc = f"{_r(g.masc_rate)} ({g.masc_consistent}/{g.masc_checked})"
            lines.append(f"  {label:<4} {fem:>16} {masc:>16}  {_r(g.gap, signed=True):>14}  "
                         f"{_iv(g.interval, True):>16}")
        change = None if c.gap_a.gap is None or c.gap_b.gap is None else c.gap_b.gap - c.gap_a.gap
        lines.append(f"  gap change B - A {_r(change, signed=True)}: 95% paired bootstrap "
                     f"{_iv(c.gap_change, True)}")
        if c.gap_note:
            lines.append(f"  note: {c.gap_note}")
    lines.append("")
    if c.mt is None:
        lines.append(f"MT metrics: {c.mt_note}")
    else:
        lines.append(f"MT metrics (sacrebleu, {c.mt_note}; p: paired bootstrap of B against A)")
        for m in c.mt.lines:
            p = "" if m.p_value is None else f"  p = {_p(m.p_value)}"
            lines.append(f"  {m.name:<6} A {m.score_a:6.2f}  B {m.score_b:6.2f}{p}")
            lines.append(f"         {m.signature}")
    if c.diff is not None:
        for title, items in (("fixed (in A, not in B)", c.diff.fixed), ("new (in B, not in A)", c.diff.new),
                             ("persisting (in both)", c.diff.persisting)):
            lines.append("")
            lines.append(f"{title}: {len(items)}")
            lines += [f"  {w.describe()}" for w in items]
    for n in c.notes:
        lines.append(f"note: {n}")
    lines.append("")
    verdict = "REGRESSION" if c.regressed(threshold, alpha) else "no regression"
    lines.append(f"gate: {verdict} (B fails when rate(B) - rate(A) < -{threshold:g} with p < {alpha:g}; "
                 f"here {_r(c.delta, signed=True)}, p = {_p(c.randomization.p_value)})")
    return "\n".join(lines)
