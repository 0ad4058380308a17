"""Maximum-weight one-to-one matching of rows to columns (an assignment problem), shared by the pronoun pairing
of the aligner and the CEAF scores of the coreference benchmark."""

from __future__ import annotations

from collections.abc import Sequence


def max_weight_matching(weights: Sequence[Sequence[float]]) -> list[tuple[int, int]]:
    """A one-to-one matching of rows to columns with the largest total weight (Hungarian method, pure Python).

    Works on rectangular matrices: min(rows, columns) pairs are returned, as (row, column), sorted by row.
    The shortest-augmenting-path form with potentials, O(n^2 m) for n <= m (common practice, no source).
    """
    n_rows = len(weights)
    n_cols = len(weights[0]) if n_rows else 0
    if not n_rows or not n_cols:
        return []
    transposed = n_rows > n_cols
    if transposed:
        cost = [[-weights[i][j] for i in range(n_rows)] for j in range(n_cols)]
        n, m = n_cols, n_rows
    else:
        cost = [[-w for w in row] for row in weights]
        n, m = n_rows, n_cols
    inf = float("inf")
    # 1-based potentials u (rows) and v (columns); match[j] is the row matched to column j, 0 for none
    u = [0.0] * (n + 1)
    v = [0.0] * (m + 1)
    match = [0] * (m + 1)
    way = [0] * (m + 1)
    for i in range(1, n + 1):
        match[0] = i
        j0 = 0
        min_to = [inf] * (m + 1)
        used = [False] * (m + 1)
        while True:
            used[j0] = True
            i0, delta, j1 = match[j0], inf, 0
            row = cost[i0 - 1]
            for j in range(1, m + 1):
                if not used[j]:
                    reduced = row[j - 1] - u[i0] - v[j]
                    if reduced < min_to[j]:
                        min_to[j], way[j] = reduced, j0
                    if min_to[j] < delta:
                        delta, j1 = min_to[j], j
            for j in range(m + 1):
                if used[j]:
                    u[match[j]] += delta
                    v[j] -= delta
                else:
                    min_to[j] -= delta
            j0 = j1
            if match[j0] == 0:
                break
        while j0:
            j1 = way[j0]
            match[j0] = match[j1]
            j0 = j1
    pairs = [(match[j] - 1, j - 1) for j in range(1, m + 1) if match[j]]
    if transposed:
        pairs = [(col, row) for row, col in pairs]
    return sorted(pairs)
