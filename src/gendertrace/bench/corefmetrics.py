"""Coreference scores over chains of mention ids: MUC, B-cubed, CEAF-e and their CoNLL mean.

A *partition* here is a collection of chains; each chain is a collection of hashable mention ids. The key is
the gold partition, the response the system's. The definitions follow the papers that introduced each metric,
extended to predicted mentions the way the reference implementation of Pradhan et al. (2014), "Scoring
Coreference Partitions of Predicted Mentions: A Reference Implementation", extends them:

- MUC (Vilain et al. 1995): recall = sum over key chains k of (|k| - |p(k)|) / sum of (|k| - 1), where p(k) is
  the partition of k induced by the response, and a mention of k that the response does not contain (a
  *twinless* mention) forms a part on its own. Precision swaps key and response. Singleton chains add 0 to
  both sums.
- B-cubed (Bagga and Baldwin 1998): recall = sum over key chains k and response chains r of |k & r|^2 / |k|,
  divided by the number of key mentions; precision swaps the roles. Twinless mentions add nothing to the
  numerator and count in the denominator of their own side. Singletons count like any other chain.
- CEAF-e (Luo 2005): the one-to-one alignment of key and response chains that maximises the summed similarity
  phi4(k, r) = 2 |k & r| / (|k| + |r|); recall = that sum / number of key chains, precision = that sum /
  number of response chains. The alignment uses `scipy.optimize.linear_sum_assignment` when scipy is
  importable and the Hungarian method implemented below otherwise (same optimum, to rounding).

Undefined ratios (a zero denominator: an empty side, or MUC over singletons only) are 0, as in the reference
implementation, which prints 0 rather than failing (from memory); F1 is 0 when recall and precision are both
0. So an empty key scored against an empty response is 0 on every metric, not 1.

Chains are read as sets: a mention repeated inside one chain counts once, and empty chains are ignored. A
mention that occurs in two chains of the same side is not a partition, and raises ValueError.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable, Iterable
from dataclasses import dataclass

from gendertrace.matching import max_weight_matching  # noqa: F401 (also this module's API)

try:  # scipy is optional: the pure-Python assignment below gives the same optimum
    from scipy.optimize import linear_sum_assignment as _linear_sum_assignment
except ImportError:  # pragma: no cover - depends on the environment
    _linear_sum_assignment = None

Chains = Iterable[Iterable[Hashable]]

__all__ = ["Score", "b_cubed", "ceaf_e", "conll_mean", "max_weight_matching", "muc"]


@dataclass(frozen=True)
class Score:
    """Recall, precision and their harmonic mean, each in 0..1."""

    recall: float
    precision: float
    f1: float


def _ratio(numerator: float, denominator: float) -> float:
    return numerator / denominator if denominator else 0.0


def _score(recall: float, precision: float) -> Score:
    f1 = 2 * recall * precision / (recall + precision) if recall + precision else 0.0
    return Score(recall, precision, f1)


def _partition(chains: Chains, side: str) -> list[frozenset]:
    """The non-empty chains as frozensets; ValueError when a mention is in two chains of the side."""
    out: list[frozenset] = []
    seen: dict[Hashable, int] = {}
    for chain in chains:
        members = frozenset(chain)
        if not members:
            continue
        for mention in members:
            if mention in seen:
                raise ValueError(
                    f"mention {mention!r} is in two {side} chains (#{seen[mention]} and #{len(out)}): "
                    "a partition puts each mention in one chain"
                )
            seen[mention] = len(out)
        out.append(members)
    return out


def _muc_side(chains: list[frozenset], other: list[frozenset]) -> tuple[int, int]:
    """MUC numerator and denominator for `chains` partitioned by `other` (recall when chains is the key)."""
    where = {m: k for k, chain in enumerate(other) for m in chain}
    numerator = denominator = 0
    for chain in chains:
        parts = {where[m] for m in chain if m in where}
        # each mention missing from the other side is a part of its own (Pradhan et al. 2014, section 2)
        parts_count = len(parts) + sum(1 for m in chain if m not in where)
        numerator += len(chain) - parts_count
        denominator += len(chain) - 1
    return numerator, denominator


def muc(key: Chains, response: Chains) -> Score:
    """The link-based MUC score of `response` against `key` (Vilain et al. 1995)."""
    k, r = _partition(key, "key"), _partition(response, "response")
    return _score(_ratio(*_muc_side(k, r)), _ratio(*_muc_side(r, k)))


def _b_cubed_side(chains: list[frozenset], other: list[frozenset]) -> float:
    total = sum(len(c) for c in chains)
    if not total:
        return 0.0
    summed = 0.0
    for chain in chains:
        for o in other:
            common = len(chain & o)
            if common:
                summed += common * common / len(chain)
    return summed / total


def b_cubed(key: Chains, response: Chains) -> Score:
    """The mention-based B-cubed score of `response` against `key` (Bagga and Baldwin 1998)."""
    k, r = _partition(key, "key"), _partition(response, "response")
    return _score(_b_cubed_side(k, r), _b_cubed_side(r, k))


def _phi4(a: frozenset, b: frozenset) -> float:
    return 2 * len(a & b) / (len(a) + len(b))




def _best_total(weights: list[list[float]]) -> float:
    if not weights or not weights[0]:
        return 0.0
    if _linear_sum_assignment is not None:
        rows, cols = _linear_sum_assignment(weights, maximize=True)
        return float(sum(weights[i][j] for i, j in zip(rows, cols, strict=True)))
    return sum(weights[i][j] for i, j in max_weight_matching(weights))


def _ceaf(key: Chains, response: Chains, similarity: Callable[[frozenset, frozenset], float]) -> Score:
    k, r = _partition(key, "key"), _partition(response, "response")
    total = _best_total([[similarity(a, b) for b in r] for a in k])
    # with phi4 a chain's similarity to itself is 1, so the denominators are the chain counts
    recall = _ratio(total, sum(similarity(a, a) for a in k))
    return _score(recall, _ratio(total, sum(similarity(b, b) for b in r)))


def ceaf_e(key: Chains, response: Chains) -> Score:
    """The entity-based CEAF score (phi4 similarity) of `response` against `key` (Luo 2005)."""
    return _ceaf(key, response, _phi4)


def conll_mean(key: Chains, response: Chains) -> float:
    """The unweighted mean of the MUC, B-cubed and CEAF-e F1 scores (the CoNLL 2011/2012 average)."""
    k, r = _partition(key, "key"), _partition(response, "response")
    return (muc(k, r).f1 + b_cubed(k, r).f1 + ceaf_e(k, r).f1) / 3
