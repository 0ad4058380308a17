"""Intervals and significance tests, checked against outside sources (each named beside its check)."""

from __future__ import annotations

import numpy as np
import pytest
from sacrebleu.metrics.base import Metric, Score
from sacrebleu.significance import Result, _paired_ar_test, _paired_bs_test, estimate_ci

from gendertrace.history.stats import (
    approximate_randomization,
    bootstrap_rate,
    gap_bootstrap,
    paired_bootstrap,
    paired_gap_change,
    wilson_interval,
)

# ---------------------------------------------------------------------------------------------------------
# Wilson


@pytest.mark.parametrize(("successes", "n"),
                         [(81, 263), (15, 148), (0, 20), (1, 29), (29, 29), (3, 7), (50, 100)])
def test_wilson_interval_matches_statsmodels(successes, n):
    # External check: statsmodels' proportion_confint(method="wilson").
    from statsmodels.stats.proportion import proportion_confint

    low, high = proportion_confint(successes, n, alpha=0.05, method="wilson")
    iv = wilson_interval(successes, n)
    assert iv.low == pytest.approx(low, abs=1e-12)
    assert iv.high == pytest.approx(high, abs=1e-12)


@pytest.mark.parametrize(("successes", "n", "low", "high"), [
    # Newcombe (1998), "Two-sided confidence intervals for the single proportion: comparison of seven
    # methods", Statistics in Medicine 17, Table I, method 3 (score interval without continuity correction).
    # Values from memory, to the four decimals the paper prints.
    (81, 263, 0.2553, 0.3662),
    (15, 148, 0.0624, 0.1605),
    (0, 20, 0.0000, 0.1611),
    (1, 29, 0.0061, 0.1718),
])
def test_wilson_interval_reproduces_newcombes_worked_examples(successes, n, low, high):
    iv = wilson_interval(successes, n)
    assert round(iv.low, 4) == low
    assert round(iv.high, 4) == high


def test_wilson_interval_is_none_with_nothing_checked():
    assert wilson_interval(0, 0) is None


def test_wilson_interval_rejects_more_successes_than_trials():
    with pytest.raises(ValueError, match="not within"):
        wilson_interval(5, 4)


# ---------------------------------------------------------------------------------------------------------
# sacrebleu's significance code run on the same per-document statistics


class RateMetric(Metric):
    """The consistency rate dressed as a sacrebleu Metric: each "hypothesis" is "consistent checked"."""

    def _extract_corpus_statistics(self, hypotheses, references):
        return [[float(x) for x in h.split()] for h in hypotheses]

    def _compute_score_from_stats(self, stats):
        stats = np.asarray(stats, dtype=np.float64)
        return Score("rate", float(stats[0] / stats[1]))

    def _aggregate_and_compute(self, stats):
        return self._compute_score_from_stats(np.asarray(stats, dtype=np.float64).sum(0))

    def _preprocess_segment(self, sent):
        return sent

    def _extract_reference_info(self, refs):
        return {}

    def _compute_segment_statistics(self, hypothesis, ref_kwargs):
        raise NotImplementedError


def _random_counts(rng, n_docs: int, low: int = 50, high: int = 500, skew: float = 0.0):
    checked = rng.integers(low, high, size=n_docs)
    p = np.clip(rng.uniform(0.6, 0.95, size=n_docs) + skew, 0, 1)
    consistent = rng.binomial(checked, p)
    return consistent.tolist(), checked.tolist()


def _sacrebleu_inputs(a, b):
    metric = RateMetric()
    hyps_a = [f"{c} {n}" for c, n in zip(*a, strict=True)]
    hyps_b = [f"{c} {n}" for c, n in zip(*b, strict=True)]
    bl_stats = metric._extract_corpus_statistics(hyps_a, None)
    baseline = {"rate": (bl_stats, Result(metric._aggregate_and_compute(bl_stats).score))}
    return metric, baseline, hyps_b


def test_paired_bootstrap_agrees_with_sacrebleus_paired_bootstrap():
    # External check: sacrebleu.significance._paired_bs_test (Koehn 2004, as sacrebleu implements it) on the
    # same per-document statistics and seed draws the same resamples, so p-value, mean and CI must agree.
    rng = np.random.default_rng(5)
    a = _random_counts(rng, 40)
    b = _random_counts(rng, 40, skew=0.02)
    metric, baseline, hyps_b = _sacrebleu_inputs(a, b)
    _, theirs = _paired_bs_test(baseline, "B", hyps_b, None, {"rate": metric}, n_samples=1000, seed=77)
    ours = paired_bootstrap(a, b, n_samples=1000, seed=77)
    assert ours.p_value == pytest.approx(theirs["rate"].p_value, abs=1e-12)
    assert ours.mean_b == pytest.approx(theirs["rate"].mean, abs=1e-9)
    assert ours.half_width_b == pytest.approx(theirs["rate"].ci, abs=1e-9)
    assert ours.delta == pytest.approx(theirs["rate"].score - baseline["rate"][1].score, abs=1e-12)


def test_approximate_randomization_agrees_with_sacrebleu_without_ties():
    # External check: sacrebleu.significance._paired_ar_test draws the same swap masks for the same seed.
    # sacrebleu counts trials strictly above the observed difference and we count ties too; with counts in
    # the hundreds no trial ties, so the two p-values must be equal.
    rng = np.random.default_rng(11)
    a = _random_counts(rng, 30)
    b = _random_counts(rng, 30, skew=0.01)
    metric, baseline, hyps_b = _sacrebleu_inputs(a, b)
    _, theirs = _paired_ar_test(baseline, "B", hyps_b, None, {"rate": metric}, n_samples=2000, seed=21)
    ours = approximate_randomization(a, b, n_trials=2000, seed=21)
    assert ours.p_value == pytest.approx(theirs["rate"].p_value, abs=1e-12)


def test_approximate_randomization_never_finds_identical_runs_different():
    # Every trial ties with an observed difference of zero: (t + 1) / (t + 1) = 1 (Riezler and Maxwell 2005).
    a = ([3, 4, 2, 5], [4, 4, 3, 6])
    result = approximate_randomization(a, a, n_trials=500, seed=1)
    assert result.observed == 0.0
    assert result.p_value == 1.0


def test_approximate_randomization_finds_a_consistent_drop_significant():
    a = ([19] * 30, [20] * 30)
    b = ([14] * 30, [20] * 30)
    result = approximate_randomization(a, b, n_trials=2000, seed=3)
    assert result.observed == pytest.approx(0.25)
    # Only the swaps that move as many documents each way tie; with 30 documents they are rare.
    assert result.p_value < 0.01


def test_approximate_randomization_is_reproducible_with_a_seed():
    rng = np.random.default_rng(2)
    a, b = _random_counts(rng, 12, 1, 8), _random_counts(rng, 12, 1, 8)
    first = approximate_randomization(a, b, 3000, seed=9)
    again = approximate_randomization(a, b, 3000, seed=9)
    other = approximate_randomization(a, b, 3000, seed=10)
    assert first == again
    assert other.at_least != first.at_least  # another seed, other swaps


# ---------------------------------------------------------------------------------------------------------
# Bootstrap over documents


def test_bootstrap_rate_interval_agrees_with_scipys_percentile_bootstrap():
    # External check: scipy.stats.bootstrap (paired resampling of documents, percentile method) on the same
    # ratio statistic. The draws differ, so the endpoints agree within Monte Carlo error only.
    from scipy.stats import bootstrap

    rng = np.random.default_rng(8)
    cons, chk = _random_counts(rng, 60, 1, 12)
    ours = bootstrap_rate(cons, chk, n_samples=4000, seed=4)
    theirs = bootstrap((np.array(cons, float), np.array(chk, float)), lambda c, n: c.sum() / n.sum(),
                       paired=True, vectorized=False, method="percentile", n_resamples=4000,
                       random_state=np.random.default_rng(4)).confidence_interval
    assert ours.rate == pytest.approx(sum(cons) / sum(chk))
    assert ours.interval.low == pytest.approx(theirs.low, abs=0.015)
    assert ours.interval.high == pytest.approx(theirs.high, abs=0.015)


def test_bootstrap_rate_interval_uses_sacrebleus_order_statistics():
    # External check: sacrebleu.significance.estimate_ci takes the n//40-th value from each end; on the same
    # resampled rates our interval's half-width and mean are its `ci` and mean.
    from gendertrace.history.stats import resample_indices

    cons, chk = [3, 5, 0, 7, 2, 9, 4], [4, 6, 2, 9, 2, 10, 5]
    ours = bootstrap_rate(cons, chk, n_samples=800, seed=6)
    idx = np.concatenate(list(resample_indices(len(cons), 800, 6)))
    c, n = np.array(cons)[idx].sum(1), np.array(chk)[idx].sum(1)
    mean, ci = estimate_ci(c / n)
    assert ours.mean == pytest.approx(mean)
    assert 0.5 * (ours.interval.high - ours.interval.low) == pytest.approx(ci)


def test_bootstrap_interval_is_wider_than_wilson_when_documents_cluster():
    # Each document is all right or all wrong: references within a document are not independent.
    cons = [10, 0] * 10
    chk = [10] * 20
    boot = bootstrap_rate(cons, chk, n_samples=2000, seed=1).interval
    wil = wilson_interval(sum(cons), sum(chk))
    assert boot.high - boot.low > 2 * (wil.high - wil.low)


def test_paired_bootstrap_interval_excludes_zero_when_every_document_improves():
    a = ([5, 6, 4, 7, 5, 6, 3, 8], [10] * 8)
    b = ([c + 2 for c in a[0]], [10] * 8)
    result = paired_bootstrap(a, b, n_samples=1000, seed=2)
    assert result.delta == pytest.approx(0.2)
    assert result.interval.low > 0
    # Pairing removes the between-document spread: every resample improves by exactly 0.2.
    assert result.interval.low == pytest.approx(0.2) and result.interval.high == pytest.approx(0.2)


def test_paired_runs_must_cover_the_same_documents():
    with pytest.raises(ValueError, match="same documents"):
        paired_bootstrap(([1, 2], [2, 2]), ([1], [2]))


# ---------------------------------------------------------------------------------------------------------
# The gender gap


def test_gap_is_feminine_rate_minus_masculine_rate():
    per_doc = np.array([[4, 5, 5, 5], [4, 5, 5, 5]])  # fem 8/10, masc 10/10
    gap = gap_bootstrap(per_doc, n_samples=500, seed=1)
    assert (gap.fem_rate, gap.masc_rate) == (0.8, 1.0)
    assert gap.gap == pytest.approx(-0.2)
    assert gap.interval.low == pytest.approx(-0.2) and gap.interval.high == pytest.approx(-0.2)


def test_gap_has_no_interval_when_one_gender_is_never_checked():
    gap = gap_bootstrap(np.array([[4, 5, 0, 0]]), n_samples=200, seed=1)
    assert gap.gap is None and gap.interval is None


def test_gap_change_interval_is_paired():
    a = np.array([[3, 5, 5, 5]] * 6)
    b = np.array([[5, 5, 5, 5]] * 6)
    iv = paired_gap_change(a, b, n_samples=300, seed=1)
    assert iv.low == pytest.approx(0.4) and iv.high == pytest.approx(0.4)
