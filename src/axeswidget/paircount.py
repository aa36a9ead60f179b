"""Array arithmetic behind the association measures: pair counts, inversions, ranks, correlation, entropy.

Everything here works on complete (no missing) non-negative integer codes or float arrays; turning a
column into such arrays, and the public measures, live in :mod:`axeswidget.measures`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Blocks of this many values are inversion-counted by brute force before the merge levels.
_SMALL_BLOCK = 8


def _inversions(a: np.ndarray) -> int:
    """Number of pairs ``i < j`` with ``a[i] > a[j]`` (strict) for non-negative integers.

    Vectorised bottom-up merge sort. The array is padded to a power of two with a value larger than
    all others (padding at the end adds no strict inversion). Blocks of :data:`_SMALL_BLOCK` values
    are counted by brute force and sorted. Then each level merges every pair of neighbouring sorted
    blocks at once: values become keys ``2 * value + side`` (side 1 for the right block, so a left
    value sorts before an equal right value), each pair is sorted as one row, and a right value at
    merged position ``p`` with rank ``r`` among the right values has ``p - r`` left values not
    greater than it, i.e. ``width - (p - r)`` greater ones. ``O(n log n)`` work in ``O(log n)`` numpy
    steps.
    """
    a = np.asarray(a)
    n = a.shape[0]
    if n < 2:
        return 0
    size = max(1 << (n - 1).bit_length(), _SMALL_BLOCK)
    big = int(a.max()) + 1
    dtype = np.int32 if 2 * big + 1 < np.iinfo(np.int32).max else np.int64
    arr = np.full(size, big, dtype=dtype)
    arr[:n] = a
    blocks = arr.reshape(-1, _SMALL_BLOCK)
    upper_i, upper_j = np.triu_indices(_SMALL_BLOCK, 1)
    total = int(np.count_nonzero(blocks[:, upper_i] > blocks[:, upper_j]))
    blocks.sort(axis=1)
    width = _SMALL_BLOCK
    while width < size:
        pairs = size // (2 * width)
        keys = arr.reshape(pairs, 2 * width) << 1
        keys += np.repeat(np.array([0, 1], dtype=dtype), width)
        keys.sort(axis=1, kind="stable")
        flat = keys.reshape(-1)
        right = (flat & 1).astype(np.int64)
        sum_pos = int(np.dot(right, np.tile(np.arange(2 * width, dtype=np.int64), pairs)))
        # per pair: sum over right values of width - (p - r) = width^2 + width(width-1)/2 - sum(p)
        total += pairs * (width * width + width * (width - 1) // 2) - sum_pos
        flat >>= 1
        arr = flat
        width *= 2
    return total


def _tied_pairs(counts: np.ndarray) -> int:
    """Pairs within equal-value groups, given the group sizes."""
    counts = np.asarray(counts, dtype=np.int64)
    return int((counts * (counts - 1) // 2).sum())


@dataclass(frozen=True)
class _PairCounts:
    """Pair counts between two code arrays over ``n`` complete rows.

    ``total`` = all pairs, ``tied_x`` / ``tied_y`` = pairs tied on x / on y, ``tied_xy`` = pairs tied
    on both, ``discordant`` = pairs ordered oppositely by x and y (the crossings).
    """

    n: int
    total: int
    tied_x: int
    tied_y: int
    tied_xy: int
    discordant: int

    @property
    def nontied(self) -> int:
        """Pairs tied neither on x nor on y (concordant + discordant)."""
        return self.total - self.tied_x - self.tied_y + self.tied_xy

    @property
    def concordant(self) -> int:
        """Pairs ordered the same way by x and y."""
        return self.nontied - self.discordant


def _pair_counts(cx: np.ndarray, cy: np.ndarray, x_order: np.ndarray | None = None) -> _PairCounts:
    """Pair counts of two complete non-negative code arrays.

    Rows are sorted by x then y (``x_order``, a permutation already sorting ``cx``, lets the sort run
    on nearly sorted data). After that a pair is discordant exactly when it is a strict inversion of
    y: pairs tied on x stand in ascending y, so are never inverted, and pairs tied on y are not
    strict inversions. So the crossings are the inversions, with nothing to subtract.
    """
    n = int(cx.shape[0])
    if n < 2:
        return _PairCounts(n, 0, 0, 0, 0, 0)
    span_y = int(cy.max()) + 1
    key = cx * span_y + cy
    if x_order is None:
        key.sort()
    else:
        key = key[x_order]
        key.sort(kind="stable")
    boundaries = np.flatnonzero(key[1:] != key[:-1]) + 1
    runs = np.diff(np.concatenate(([0], boundaries, [n])))
    return _PairCounts(
        n=n,
        total=n * (n - 1) // 2,
        tied_x=_tied_pairs(np.bincount(cx)),
        tied_y=_tied_pairs(np.bincount(cy)),
        tied_xy=_tied_pairs(runs),
        discordant=_inversions(key % span_y),
    )


def _tau_b(counts: _PairCounts) -> float:
    """Kendall tau-b from pair counts (NaN when either variable is constant)."""
    denom = (counts.total - counts.tied_x) * (counts.total - counts.tied_y)
    if counts.n < 2 or denom <= 0:
        return float("nan")
    return float(np.clip((counts.concordant - counts.discordant) / np.sqrt(float(denom)), -1.0, 1.0))


def _entropy(counts: np.ndarray) -> float:
    """Shannon entropy (nats) of a count vector."""
    counts = counts[counts > 0]
    p = counts / counts.sum()
    return float(-(p * np.log(p)).sum())


def _mi_from_labels(lx: np.ndarray, ly: np.ndarray, normalized: bool) -> float:
    """Mutual information (nats) of two complete non-negative label arrays via their contingency table.

    Normalised: divided by ``sqrt(H(X) H(Y))``, and 0 when either entropy is 0. NaN without rows.
    """
    if lx.shape[0] == 0:
        return float("nan")
    kx, ky = int(lx.max()) + 1, int(ly.max()) + 1
    table = np.bincount(lx * ky + ly, minlength=kx * ky).reshape(kx, ky).astype(np.float64)
    rows, cols = table.sum(axis=1), table.sum(axis=0)
    nz = table > 0
    pxy = table[nz] / lx.shape[0]
    expected = np.outer(rows, cols)[nz] / float(lx.shape[0]) ** 2
    mi = max(float((pxy * np.log(pxy / expected)).sum()), 0.0)
    if not normalized:
        return mi
    hx, hy = _entropy(rows), _entropy(cols)
    if hx <= 0.0 or hy <= 0.0:
        return 0.0
    return float(min(mi / np.sqrt(hx * hy), 1.0))


def _average_ranks(codes: np.ndarray, n_codes: int) -> np.ndarray:
    """Average ranks (1-based, ties share their mean rank) of complete non-negative codes, in O(n)."""
    counts = np.bincount(codes, minlength=n_codes)
    mean_rank = np.cumsum(counts) - (counts - 1) / 2.0
    return mean_rank[codes]


def _pearson(a: np.ndarray, b: np.ndarray) -> float:
    """Pearson correlation of two complete float arrays (NaN if either is constant or too short)."""
    if a.shape[0] < 2 or a.min() == a.max() or b.min() == b.max():
        return float("nan")
    da, db = a - a.mean(), b - b.mean()
    denom = np.sqrt((da * da).sum() * (db * db).sum())
    if not denom > 0:
        return float("nan")
    return float(np.clip((da * db).sum() / denom, -1.0, 1.0))


def _corr_matrix(table: np.ndarray) -> np.ndarray:
    """Pearson matrix of the columns of a complete 2-D float array (NaN rows/columns for constants)."""
    centred = table - table.mean(axis=0)
    norms = np.sqrt((centred * centred).sum(axis=0))
    constant = (table.min(axis=0) == table.max(axis=0)) | ~(norms > 0)
    unit = centred / np.where(constant, 1.0, norms)
    out = np.clip(unit.T @ unit, -1.0, 1.0)
    out[:, constant] = np.nan
    out[constant, :] = np.nan
    return out
