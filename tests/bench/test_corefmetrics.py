"""MUC, B-cubed and CEAF-e on the published worked examples, edge cases, and against the scorch package."""

from __future__ import annotations

import itertools
import random
import statistics
import subprocess
import sys

import pytest

from gendertrace.bench import corefmetrics
from gendertrace.bench.corefmetrics import (
    Score,
    b_cubed,
    ceaf_e,
    conll_mean,
    max_weight_matching,
    muc,
)


def close(score: Score, recall: float, precision: float, f1: float | None = None, tol: float = 1e-9) -> bool:
    if f1 is None:
        f1 = 2 * recall * precision / (recall + precision) if recall + precision else 0.0
    return (score.recall, score.precision, score.f1) == pytest.approx((recall, precision, f1), abs=tol)


# ------------------------------------------------------------------------------------------------------------
# Vilain et al. 1995, "A Model-Theoretic Coreference Scoring Scheme": one key chain A-B-C-D answered by two
# chains A-B and C-D loses one link of recall and none of precision; the reverse case loses precision only.
# The figures R = 2/3, P = 1 are from memory; they also follow by hand from the paper's formula.


def test_muc_vilain_1995_response_splits_a_key_chain():
    assert close(muc([{"A", "B", "C", "D"}], [{"A", "B"}, {"C", "D"}]), 2 / 3, 1.0)


def test_muc_vilain_1995_response_joins_two_key_chains():
    assert close(muc([{"A", "B"}, {"C", "D"}], [{"A", "B", "C", "D"}]), 1.0, 2 / 3)


# ------------------------------------------------------------------------------------------------------------
# Bagga and Baldwin 1998, "Algorithms for Scoring Coreference Chains": key chains {1..5}, {6, 7}, {8..12}.
# Response 1 merges {6, 7} into {8..12}, response 2 merges {1..5} into {8..12}. MUC cannot tell them apart
# (precision 90% both), B-cubed can: precision 16/21 (76%) and 7/12 (58%), recall 100%.
# The percentages are from memory; the fractions are computed by hand from the paper's definition.

BB_KEY = [set(range(1, 6)), {6, 7}, set(range(8, 13))]
BB_RESPONSE_1 = [set(range(1, 6)), set(range(6, 13))]
BB_RESPONSE_2 = [set(range(1, 6)) | set(range(8, 13)), {6, 7}]


def test_muc_bagga_baldwin_1998_scores_both_merges_alike():
    assert close(muc(BB_KEY, BB_RESPONSE_1), 1.0, 0.9)
    assert close(muc(BB_KEY, BB_RESPONSE_2), 1.0, 0.9)


def test_b_cubed_bagga_baldwin_1998_penalises_the_larger_merge_more():
    assert close(b_cubed(BB_KEY, BB_RESPONSE_1), 1.0, 16 / 21)
    assert close(b_cubed(BB_KEY, BB_RESPONSE_2), 1.0, 7 / 12)


# ------------------------------------------------------------------------------------------------------------
# Luo 2005, "On Coreference Resolution Performance Metrics", Figure 1 and Table 1: the same key as above and
# four responses: (a) and (b) as Bagga and Baldwin's, (c) everything in one chain, (d) every mention alone.
# Table 1 F values (from memory, each also checked by hand): CEAF phi4 .733, .667, .294, .178;
# B-cubed .865, .737, .545, .400; MUC .947, .947, .900 and none for (d).

LUO_RESPONSES = {
    "a": BB_RESPONSE_1,
    "b": BB_RESPONSE_2,
    "c": [set(range(1, 13))],
    "d": [{m} for m in range(1, 13)],
}


@pytest.mark.parametrize(
    "system, ceaf_f, b3_f, muc_f",
    [
        ("a", 0.733, 0.865, 0.947),
        ("b", 0.667, 0.737, 0.947),
        ("c", 0.294, 0.545, 0.900),
        ("d", 0.178, 0.400, 0.0),
    ],
)
def test_luo_2005_table_1(system, ceaf_f, b3_f, muc_f):
    response = LUO_RESPONSES[system]
    assert ceaf_e(BB_KEY, response).f1 == pytest.approx(ceaf_f, abs=5e-4)
    assert b_cubed(BB_KEY, response).f1 == pytest.approx(b3_f, abs=5e-4)
    assert muc(BB_KEY, response).f1 == pytest.approx(muc_f, abs=5e-4)


def test_ceaf_e_luo_2005_response_a_exact_fractions():
    # best alignment {1..5}->{1..5} (phi4 = 1) and {8..12}->{6..12} (phi4 = 10/12), recall over 3 key chains
    total = 1 + 10 / 12
    assert close(ceaf_e(BB_KEY, BB_RESPONSE_1), total / 3, total / 2)


# ------------------------------------------------------------------------------------------------------------
# Pradhan et al. 2014, "Scoring Coreference Partitions of Predicted Mentions: A Reference Implementation",
# worked example (Figure 1): key {a b c} {d e f g}, response {a b} {c d} {f g h i}; e is missing from the
# response and h, i are not in the key (twinless mentions). Published figures (from memory): MUC R = P = 0.40;
# B-cubed R = 1/7 (4/3 + 1/3 + 1/4 + 4/4) = 0.42, P = 1/8 (4/2 + 1/2 + 1/2 + 4/4) = 0.50;
# CEAF-e R = (4/5 + 1/2) / 2 = 0.65, P = (4/5 + 1/2) / 3 = 0.43.

PRADHAN_KEY = [{"a", "b", "c"}, {"d", "e", "f", "g"}]
PRADHAN_RESPONSE = [{"a", "b"}, {"c", "d"}, {"f", "g", "h", "i"}]


def test_muc_pradhan_2014_worked_example():
    assert close(muc(PRADHAN_KEY, PRADHAN_RESPONSE), 0.4, 0.4)


def test_b_cubed_pradhan_2014_worked_example():
    assert close(b_cubed(PRADHAN_KEY, PRADHAN_RESPONSE), 35 / 84, 0.5)


def test_ceaf_e_pradhan_2014_worked_example():
    assert close(ceaf_e(PRADHAN_KEY, PRADHAN_RESPONSE), 0.65, 1.3 / 3)


def test_conll_mean_is_the_unweighted_mean_of_the_three_f1():
    expected = (0.4 + 2 * (35 / 84) * 0.5 / (35 / 84 + 0.5) + 2 * 0.65 * (1.3 / 3) / (0.65 + 1.3 / 3)) / 3
    assert conll_mean(PRADHAN_KEY, PRADHAN_RESPONSE) == pytest.approx(expected)


# ------------------------------------------------------------------------------------------------------------
# Edge cases: conventions of the reference implementation (from memory), checked against scorch below as well.


def test_identical_partitions_score_one_everywhere():
    key = [{1, 2, 3}, {4, 5}, {6}]
    for metric in (muc, b_cubed, ceaf_e):
        assert close(metric(key, key), 1.0, 1.0, 1.0)
    assert conll_mean(key, key) == pytest.approx(1.0)


def test_twinless_mentions_count_against_their_own_side():
    # a is found, b is missing from the response, c is not in the key
    assert close(muc([{"a", "b"}], [{"a", "c"}]), 0.0, 0.0)
    assert close(b_cubed([{"a", "b"}], [{"a", "c"}]), 0.25, 0.25)
    assert close(ceaf_e([{"a", "b"}], [{"a", "c"}]), 0.5, 0.5)


def test_muc_over_singletons_only_is_zero_while_b_cubed_and_ceaf_are_one():
    # MUC counts links, and singletons have none: the reference implementation gives 0, not 1 (from memory)
    singletons = [{1}, {2}, {3}]
    assert close(muc(singletons, singletons), 0.0, 0.0, 0.0)
    assert close(b_cubed(singletons, singletons), 1.0, 1.0)
    assert close(ceaf_e(singletons, singletons), 1.0, 1.0)


def test_singleton_chains_count_in_b_cubed_and_ceaf_e():
    key, response = [{1, 2}, {3}], [{1, 2}]
    assert close(b_cubed(key, response), 2 / 3, 1.0)
    assert close(ceaf_e(key, response), 0.5, 1.0)
    assert close(muc(key, response), 1.0, 1.0)  # a singleton has no link to miss


@pytest.mark.parametrize("key, response", [([], []), ([{1, 2}], []), ([], [{1, 2}]), ([set()], [set()])])
def test_empty_sides_score_zero_without_error(key, response):
    for metric in (muc, b_cubed, ceaf_e):
        assert metric(key, response) == Score(0.0, 0.0, 0.0)
    assert conll_mean(key, response) == 0.0


def test_a_mention_in_two_chains_of_one_side_is_rejected():
    with pytest.raises(ValueError, match="mention 2 is in two response chains"):
        b_cubed([{1, 2}], [{1, 2}, {2, 3}])


def test_chains_may_be_any_iterables_and_repeats_count_once():
    assert b_cubed([[1, 2, 2]], ((1,), (2,))) == b_cubed([{1, 2}], [{1}, {2}])


def test_score_is_frozen():
    with pytest.raises(AttributeError):
        muc([{1, 2}], [{1, 2}]).f1 = 0.5  # type: ignore[misc]


# ------------------------------------------------------------------------------------------------------------
# The assignment behind CEAF-e: the pure-Python Hungarian method against exhaustive search and scipy.


def brute_force_best(weights: list[list[float]]) -> float:
    rows, cols = len(weights), len(weights[0])
    if rows <= cols:
        return max(
            sum(weights[i][p[i]] for i in range(rows)) for p in itertools.permutations(range(cols), rows)
        )
    return max(sum(weights[p[j]][j] for j in range(cols)) for p in itertools.permutations(range(rows), cols))


def test_hungarian_matches_exhaustive_search_on_random_rectangular_matrices():
    rng = random.Random(20240611)
    for _ in range(200):
        rows, cols = rng.randint(1, 5), rng.randint(1, 5)
        weights = [[rng.choice([0.0, 0.25, 0.5, rng.random()]) for _ in range(cols)] for _ in range(rows)]
        pairs = max_weight_matching(weights)
        assert len(pairs) == min(rows, cols)
        assert len({i for i, _ in pairs}) == len({j for _, j in pairs}) == len(pairs)
        assert sum(weights[i][j] for i, j in pairs) == pytest.approx(brute_force_best(weights))


def test_hungarian_on_an_empty_matrix_matches_nothing():
    assert max_weight_matching([]) == []
    assert max_weight_matching([[]]) == []


def test_ceaf_e_gives_the_same_score_without_scipy(monkeypatch):
    rng = random.Random(7)
    cases = [random_partitions(rng) for _ in range(50)]
    with_scipy = [ceaf_e(k, r) for k, r in cases]
    monkeypatch.setattr(corefmetrics, "_linear_sum_assignment", None)
    without = [ceaf_e(k, r) for k, r in cases]
    for a, b in zip(with_scipy, without, strict=True):
        assert b == pytest.approx(a, abs=1e-12)


# ------------------------------------------------------------------------------------------------------------
# Cross-check with the scorch package (a reference scorer from the package index, scorch.scores.muc, b_cubed,
# ceaf_e, each returning (R, P, F)) on random partitions with twinless mentions and singletons, fixed seed.


def random_partitions(rng: random.Random) -> tuple[list[set[int]], list[set[int]]]:
    universe = list(range(rng.randint(1, 14)))

    def partition() -> list[set[int]]:
        members = [m for m in universe if rng.random() < 0.85] or [universe[0]]
        rng.shuffle(members)
        chains: list[set[int]] = []
        for m in members:
            if chains and rng.random() < 0.6:
                rng.choice(chains).add(m)
            else:
                chains.append({m})
        return chains

    return partition(), partition()


@pytest.mark.filterwarnings("ignore:divide by zero:RuntimeWarning")
def test_all_three_metrics_agree_with_scorch_on_random_partitions():
    scores = pytest.importorskip("scorch.scores")
    rng = random.Random(1995)
    for _ in range(300):
        key, response = random_partitions(rng)
        for ours, theirs in ((muc, scores.muc), (b_cubed, scores.b_cubed), (ceaf_e, scores.ceaf_e)):
            got = ours(key, response)
            try:
                expected = theirs([set(c) for c in key], [set(c) for c in response])
            except statistics.StatisticsError:
                # scorch's CEAF fails on the harmonic mean of -0.0 when no chains overlap; the score is 0
                assert ours is ceaf_e and not set().union(*key) & set().union(*response)
                expected = (0.0, 0.0, 0.0)
            assert (got.recall, got.precision, got.f1) == pytest.approx(tuple(expected), abs=1e-9), (
                ours.__name__,
                key,
                response,
            )


def test_the_module_imports_and_scores_without_scipy():
    # a None entry in sys.modules makes "import scipy..." raise ImportError, as on a machine without scipy
    code = (
        "import sys; sys.modules['scipy'] = None; sys.modules['scipy.optimize'] = None\n"
        "from gendertrace.bench import corefmetrics as m\n"
        "assert m._linear_sum_assignment is None\n"
        "s = m.ceaf_e([{1, 2, 3}, {4, 5}], [{1, 2}, {3, 4, 5}])\n"
        "print(round(s.recall, 6), round(s.precision, 6))\n"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    # best alignment {1,2,3}->{1,2} (phi4 = 4/5) and {4,5}->{3,4,5} (phi4 = 4/5): 1.6 over 2 chains each side
    assert done.stdout.split() == ["0.8", "0.8"]
