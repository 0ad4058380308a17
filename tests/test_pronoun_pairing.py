"""The one-to-one pronoun pairing of the anchored alignment is an assignment problem: checked against SciPy's
solver (scipy.optimize.linear_sum_assignment, a general-purpose reference) on random instances."""

from __future__ import annotations

import random

from scipy.optimize import linear_sum_assignment

from gendertrace.link.align import POSITION_WEIGHT, _best_pairing


def _total(cands, pairs) -> float:
    offset = POSITION_WEIGHT + 4.0
    weight = {(i, j): offset - neg for neg, _, i, j in cands}
    return sum(weight[p] for p in pairs)


def test_the_pairing_has_the_best_total_a_reference_solver_finds():
    rng = random.Random(7)
    for _ in range(300):
        n_src, n_tgt = rng.randint(1, 5), rng.randint(1, 6)
        cands = [(-rng.uniform(-3.0, 2.5), 0.0, i, j) for i in range(n_src) for j in range(n_tgt)
                 if rng.random() < 0.7]
        pairs = _best_pairing(cands)
        assert len({i for i, _ in pairs}) == len(pairs) == len({j for _, j in pairs})
        if not cands:
            assert pairs == set()
            continue
        offset = POSITION_WEIGHT + 4.0
        matrix = [[0.0] * n_tgt for _ in range(n_src)]
        for neg, _, i, j in cands:
            matrix[i][j] = offset - neg
        rows, cols = linear_sum_assignment(matrix, maximize=True)
        reference = sum(matrix[r][c] for r, c in zip(rows, cols, strict=True))
        assert abs(_total(cands, pairs) - reference) < 1e-9


def test_the_pairing_gives_he_the_pronoun_in_its_place_when_it_pays_overall():
    # "it ... he" against "il ... -elle": he-il scores best alone, but it-il plus he-elle is the better whole.
    cands = [(-0.25, 0.0, 9, 9), (-(2.5 - POSITION_WEIGHT * 0.33), 0.33, 15, 9), (-(1.0 - POSITION_WEIGHT * 0.05),
             0.05, 15, 16)]
    assert _best_pairing(cands) == {(9, 9), (15, 16)}
