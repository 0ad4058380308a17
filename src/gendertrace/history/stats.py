"""Statistics over per-document sufficient statistics: intervals, paired bootstrap, approximate randomization.

A run is a list of documents, each with `consistent` out of `checked` gendered target references. A corpus
rate is a ratio of sums, so every resampled statistic is cheap: resample documents (rows), sum, divide.

- Wilson score interval (Wilson 1927) for a rate seen as a proportion of independent references.
- Bootstrap over documents (Efron) for the corpus rate: references of one document are not independent (one
  wrong entity flips several), so this interval is the more honest one and is usually wider.
- Paired bootstrap resampling of the difference between two runs over the same documents (Koehn 2004).
  The resample indices are drawn exactly as `sacrebleu.significance` draws them, and the p-value follows its
  formula, so both can be checked against sacrebleu on the same statistics.
- Approximate randomization (Noreen 1989; Riezler and Maxwell 2005): each document's statistics are swapped
  between the two runs with probability one half; the p-value is (c + 1) / (t + 1), c counting trials whose
  absolute difference is at least the observed one. sacrebleu counts strictly greater ones; with rates of
  small integer counts ties are common, and counting them keeps the test from rejecting too easily.

Intervals from resampling use the same order statistics as sacrebleu's `estimate_ci` (the n//40-th value
from each end of the sorted resamples, a 95% interval).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

Z95 = 1.959963984540054  # the 0.975 quantile of the standard normal distribution
_CHUNK_CELLS = 2_000_000  # resample rows are generated in chunks of at most this many cells


@dataclass(frozen=True)
class Interval:
    low: float
    high: float

    def fmt(self, digits: int = 3, signed: bool = False) -> str:
        f = f"{{:+.{digits}f}}" if signed else f"{{:.{digits}f}}"
        return f"[{f.format(self.low)}, {f.format(self.high)}]"


def rate(consistent: float, checked: float) -> float | None:
    return consistent / checked if checked else None


def wilson_interval(successes: int, n: int, z: float = Z95) -> Interval | None:
    """Wilson score interval for successes out of n; None when n is 0."""
    if n <= 0:
        return None
    if not 0 <= successes <= n:
        raise ValueError(f"successes {successes} not within 0..{n}")
    p = successes / n
    z2 = z * z
    denom = 1 + z2 / n
    centre = (p + z2 / (2 * n)) / denom
    half = z * math.sqrt(p * (1 - p) / n + z2 / (4 * n * n)) / denom
    low = 0.0 if successes == 0 else max(0.0, centre - half)
    high = 1.0 if successes == n else min(1.0, centre + half)
    return Interval(low, high)


def resample_indices(n_items: int, n_samples: int, seed: int | None):
    """Bootstrap indices, n_samples rows of n_items, in chunks; the draws of sacrebleu's paired bootstrap."""
    rng = np.random.default_rng(seed)
    per_chunk = max(1, _CHUNK_CELLS // max(n_items, 1))
    done = 0
    while done < n_samples:
        k = min(per_chunk, n_samples - done)
        yield rng.choice(n_items, size=(k, n_items), replace=True)
        done += k


def order_interval(values: np.ndarray) -> Interval | None:
    """95% interval from resampled values (NaNs, from resamples with nothing checked, left out)."""
    v = np.sort(values[np.isfinite(values)])
    if len(v) == 0:
        return None
    lower = len(v) // 40
    return Interval(float(v[lower]), float(v[len(v) - lower - 1]))


def _ratio(num: np.ndarray, den: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(den > 0, num / np.where(den > 0, den, 1), np.nan)


def _as_counts(consistent: Sequence[int], checked: Sequence[int]) -> np.ndarray:
    a = np.column_stack([np.asarray(consistent, dtype=np.float64), np.asarray(checked, dtype=np.float64)])
    if a.ndim != 2 or a.shape[1] != 2:
        raise ValueError("expected one consistent and one checked count per document")
    return a


@dataclass(frozen=True)
class BootstrapRate:
    rate: float | None
    interval: Interval | None
    mean: float | None  # mean of the resampled rates
    samples: int


def bootstrap_rate(consistent: Sequence[int], checked: Sequence[int], n_samples: int = 1000,
                   seed: int | None = 13) -> BootstrapRate:
    """The corpus rate with a bootstrap interval over documents."""
    s = _as_counts(consistent, checked)
    observed = rate(s[:, 0].sum(), s[:, 1].sum())
    if len(s) == 0 or observed is None:
        return BootstrapRate(observed, None, None, n_samples)
    rates = np.concatenate([_ratio(s[idx, 0].sum(1), s[idx, 1].sum(1))
                            for idx in resample_indices(len(s), n_samples, seed)])
    finite = rates[np.isfinite(rates)]
    mean = float(finite.mean()) if len(finite) else None
    return BootstrapRate(observed, order_interval(rates), mean, n_samples)


@dataclass(frozen=True)
class PairedBootstrap:
    """B minus A over resampled documents."""

    delta: float
    interval: Interval | None
    p_value: float  # Koehn's test as sacrebleu computes it: mean-shifted |B - A| above the observed |B - A|
    mean_b: float  # mean of B's resampled rates, and half the width of B's interval (sacrebleu's `ci`)
    half_width_b: float
    samples: int
    seed: int | None


def _paired(a: tuple[Sequence[int], Sequence[int]], b: tuple[Sequence[int], Sequence[int]]):
    """Per-document count arrays of two paired runs and their corpus rates; ValueError if they cannot pair."""
    sa_, sb_ = _as_counts(*a), _as_counts(*b)
    if sa_.shape != sb_.shape:
        raise ValueError("paired runs need the same documents")
    ra, rb = rate(*sa_.sum(0)), rate(*sb_.sum(0))
    if ra is None or rb is None:
        raise ValueError("a run has nothing checked: no rate to compare")
    return sa_, sb_, ra, rb


def paired_bootstrap(a: tuple[Sequence[int], Sequence[int]], b: tuple[Sequence[int], Sequence[int]],
                     n_samples: int = 1000, seed: int | None = 13) -> PairedBootstrap:
    """Paired bootstrap of rate(B) - rate(A); A and B are (consistent, checked) per document, same order."""
    sa_, sb_, ra, rb = _paired(a, b)
    scores_a, scores_b = [], []
    for idx in resample_indices(len(sa_), n_samples, seed):
        scores_a.append(_ratio(sa_[idx, 0].sum(1), sa_[idx, 1].sum(1)))
        scores_b.append(_ratio(sb_[idx, 0].sum(1), sb_[idx, 1].sum(1)))
    xa, xb = np.concatenate(scores_a), np.concatenate(scores_b)
    keep = np.isfinite(xa) & np.isfinite(xb)
    xa, xb = xa[keep], xb[keep]
    diffs = xb - xa
    delta = rb - ra
    shifted = np.abs(diffs) - np.abs(diffs).mean()
    p = (int(np.sum(shifted > abs(delta))) + 1) / (len(diffs) + 1)
    ib = order_interval(xb)
    half = 0.5 * (ib.high - ib.low) if ib else math.nan
    return PairedBootstrap(delta, order_interval(diffs), p, float(xb.mean()), half, len(diffs), seed)


@dataclass(frozen=True)
class RandomizationTest:
    observed: float  # |rate(B) - rate(A)|
    p_value: float
    at_least: int  # trials whose difference was at least the observed one
    trials: int
    seed: int | None


def approximate_randomization(a: tuple[Sequence[int], Sequence[int]], b: tuple[Sequence[int], Sequence[int]],
                              n_trials: int = 10000, seed: int | None = 13) -> RandomizationTest:
    """Two-sided paired approximate randomization test of rate(A) = rate(B), swapping whole documents."""
    sa_, sb_, ra, rb = _paired(a, b)
    observed = abs(rb - ra)
    rng = np.random.default_rng(seed)
    n = len(sa_)
    per_chunk = max(1, _CHUNK_CELLS // max(n, 1))
    at_least = done = 0
    while done < n_trials:
        k = min(per_chunk, n_trials - done)
        # The draws of sacrebleu's approximate randomization: a boolean "keep" mask per trial and document.
        keep = rng.integers(2, size=(k, n), dtype=bool)
        swap = ~keep
        shuf_a = keep @ sa_ + swap @ sb_
        shuf_b = swap @ sa_ + keep @ sb_
        stat = np.abs(_ratio(shuf_a[:, 0], shuf_a[:, 1]) - _ratio(shuf_b[:, 0], shuf_b[:, 1]))
        # Equal rationals reached through different sums may differ in the last bit: count them as ties.
        at_least += int(np.sum(stat >= observed - 1e-12))
        done += k
    return RandomizationTest(observed, (at_least + 1) / (n_trials + 1), at_least, n_trials, seed)


@dataclass(frozen=True)
class GapEstimate:
    """Rate on entities with feminine evidence, on those with masculine evidence, and fem minus masc."""

    fem_consistent: int
    fem_checked: int
    masc_consistent: int
    masc_checked: int
    interval: Interval | None  # bootstrap over documents

    @property
    def fem_rate(self) -> float | None:
        return rate(self.fem_consistent, self.fem_checked)

    @property
    def masc_rate(self) -> float | None:
        return rate(self.masc_consistent, self.masc_checked)

    @property
    def gap(self) -> float | None:
        f, m = self.fem_rate, self.masc_rate
        return None if f is None or m is None else f - m


def gap_bootstrap(per_doc: np.ndarray, n_samples: int = 1000, seed: int | None = 13) -> GapEstimate:
    """per_doc: one row per document of (fem consistent, fem checked, masc consistent, masc checked)."""
    per_doc = np.asarray(per_doc, dtype=np.float64).reshape(-1, 4)
    tot = per_doc.sum(0)
    interval = None
    if len(per_doc) and tot[1] > 0 and tot[3] > 0:
        gaps = []
        for idx in resample_indices(len(per_doc), n_samples, seed):
            s = per_doc[idx].sum(1)
            gaps.append(_ratio(s[:, 0], s[:, 1]) - _ratio(s[:, 2], s[:, 3]))
        interval = order_interval(np.concatenate(gaps))
    return GapEstimate(int(tot[0]), int(tot[1]), int(tot[2]), int(tot[3]), interval)


def paired_gap_change(a_doc: np.ndarray, b_doc: np.ndarray, n_samples: int = 1000,
                      seed: int | None = 13) -> Interval | None:
    """Bootstrap interval of gap(B) - gap(A) over the same resampled documents."""
    a_doc = np.asarray(a_doc, dtype=np.float64).reshape(-1, 4)
    b_doc = np.asarray(b_doc, dtype=np.float64).reshape(-1, 4)
    if a_doc.shape != b_doc.shape or not len(a_doc):
        return None
    ta, tb = a_doc.sum(0), b_doc.sum(0)
    if min(ta[1], ta[3], tb[1], tb[3]) <= 0:
        return None
    out = []
    for idx in resample_indices(len(a_doc), n_samples, seed):
        sa_, sb_ = a_doc[idx].sum(1), b_doc[idx].sum(1)
        ga = _ratio(sa_[:, 0], sa_[:, 1]) - _ratio(sa_[:, 2], sa_[:, 3])
        gb = _ratio(sb_[:, 0], sb_[:, 1]) - _ratio(sb_[:, 2], sb_[:, 3])
        out.append(gb - ga)
    return order_interval(np.concatenate(out))
