"""Binned pair counts between neighbouring axes: the data behind a density view of a large table.

When a table has too many rows for one line each to read, the space between two neighbouring axes can
be drawn from counts instead: split each axis into ``bins`` equal bins, count the rows going from bin
``i`` on the left axis to bin ``j`` on the right one, and draw each (i, j) band with a strength that
grows with its count. This is the frequency/density-based parallel coordinates method of Artero,
de Oliveira & Levkowitz ("Uncovering clusters in crowded parallel coordinates visualizations", IEEE
InfoVis 2004). Selected and unselected rows are counted as two layers (``mask`` and ``~mask``), so a
selection can be drawn over the rest.

Everything here works on the widget's wire codes (see :mod:`axeswidget.encode`): one ``uint16`` per
row, ``0..CODE_MAX`` (65534) linear over the axis domain and ``CODE_MISSING`` (65535) for a missing
value. Missing values get a bin of their own, the last one, so a count matrix is
``(bins + 1) x (bins + 1)``. Category and boolean axes carry a band index (``0..60``) instead of a
linear code; bin those by their band count, not with :func:`bin_codes`.

Functions (numpy only):

* :func:`bin_codes` -- bin index per row;
* :func:`pair_counts` -- the count matrix of two axes, for all rows or the rows of a mask;
* :func:`neighbour_counts` -- one count matrix per neighbouring pair of an axis order.

Tables held elsewhere
---------------------
The data-source boundary (:class:`axeswidget.sources.base.DataSource`) is the one interface for what
the front end needs from any table; in-memory sources count with this module, engine sources compute
the same matrices with one ``GROUP BY`` on the binned expressions.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from functools import lru_cache
from typing import Any

import numpy as np

from .wire import CODE_MAX, CODE_MISSING, DENSITY_BINS

__all__ = ["MAX_BINS", "MAX_PAIR_BINS", "bin_codes", "pair_counts", "neighbour_counts"]

#: Most bins an axis can be split into: one bin per code.
MAX_BINS = CODE_MAX + 1
#: Most bins per axis for a count matrix: ``(2049 x 2049)`` int64 values are 34 MB.
MAX_PAIR_BINS = 2048


# ---------------------------------------------------------------------------------------------------------
# Checks
# ---------------------------------------------------------------------------------------------------------


def _check_bins(bins: Any, limit: int = MAX_BINS) -> int:
    """A bin count as an int in ``1..limit``; otherwise ValueError naming the problem."""
    if isinstance(bins, bool) or not isinstance(bins, int | np.integer):
        raise ValueError(f"bins must be an integer, got {bins!r}")
    bins = int(bins)
    if bins < 1:
        raise ValueError(f"bins must be at least 1, got {bins}")
    if bins > limit:
        if limit == MAX_BINS:
            raise ValueError(f"bins must be at most {MAX_BINS} (one bin per code), got {bins}")
        raise ValueError(
            f"bins={bins} is too many for a count matrix: at most {MAX_PAIR_BINS} bins per axis "
            f"(a {bins + 1} x {bins + 1} int64 matrix would take {8 * (bins + 1) ** 2 / 1e9:.1f} GB)"
        )
    return bins


def _check_codes(codes: Any, what: str = "codes") -> np.ndarray:
    """A 1-D array of wire codes (uint16, or integers within ``0..65535``)."""
    arr = np.asarray(codes)
    if arr.ndim != 1:
        raise ValueError(f"{what} must be one-dimensional, got shape {arr.shape}")
    if arr.dtype == np.uint16:
        return arr
    if arr.dtype.kind not in "iu":
        raise ValueError(f"{what} must hold integer wire codes (uint16), got dtype {arr.dtype}")
    if arr.size and (int(arr.min()) < 0 or int(arr.max()) > CODE_MISSING):
        lo, hi = int(arr.min()), int(arr.max())
        raise ValueError(f"{what} must lie within 0..{CODE_MISSING}, got values from {lo} to {hi}")
    return arr.astype(np.uint16)


def _check_mask(mask: Any, n: int) -> np.ndarray | None:
    """None, or a 1-D bool array of length ``n``."""
    if mask is None:
        return None
    arr = np.asarray(mask)
    if arr.dtype != np.bool_:
        raise ValueError(f"mask must be a boolean array, got dtype {arr.dtype}")
    if arr.shape != (n,):
        raise ValueError(f"mask has shape {arr.shape}, but the codes have {n} rows")
    return arr


# ---------------------------------------------------------------------------------------------------------
# Binning
# ---------------------------------------------------------------------------------------------------------


@lru_cache(maxsize=16)
def _lookup(bins: int) -> np.ndarray:
    """Bin of every possible code (read-only, uint16): ``code * bins // 65535``; ``bins`` for missing.

    Bin ``k`` holds the codes ``c`` with ``k * 65535 <= c * bins < (k + 1) * 65535``, i.e. the edges
    ``k * 65535 / bins`` split ``[0, 65535)`` evenly; the top code 65534 falls in bin ``bins - 1``.
    A table lookup is faster than the arithmetic on every row, and uint16 keeps the arrays small.
    """
    table = np.empty(CODE_MISSING + 1, dtype=np.uint16)
    table[:CODE_MISSING] = np.arange(CODE_MISSING, dtype=np.int64) * bins // CODE_MISSING
    table[CODE_MISSING] = bins
    table.flags.writeable = False
    return table


def bin_codes(codes: np.ndarray, bins: int) -> np.ndarray:
    """Bin index per row: ``0..bins-1`` for codes ``0..65534`` (split evenly), ``bins`` for missing.

    ``bins`` runs from 1 to 65535; with 65535 every code is its own bin (the result equals the codes).
    Returns a uint16 array the length of ``codes``.
    """
    bins = _check_bins(bins)
    return _lookup(bins)[_check_codes(codes)]


# ---------------------------------------------------------------------------------------------------------
# Pair counts
# ---------------------------------------------------------------------------------------------------------


def _count(left: np.ndarray, right: np.ndarray, bins: int) -> np.ndarray:
    """Count matrix of two uint16 arrays of bin indices (``0..bins``), via one bincount on a combined index.

    The combined index ``left * (bins + 1) + right`` stays in uint16 while it fits (up to 255 bins).
    """
    side = bins + 1
    dtype = np.uint16 if side * side <= CODE_MISSING + 1 else np.uint32
    index = left.astype(dtype) * dtype(side)
    index += right
    return np.bincount(index, minlength=side * side).reshape(side, side).astype(np.int64, copy=False)


#: rows per block in :func:`count_bin_pairs` (the block's index arrays stay in the CPU cache)
BLOCK_ROWS = 1 << 16


def count_bin_pairs(left: np.ndarray, right: np.ndarray, bins: int, mask=None) -> np.ndarray:
    """Count matrix of two arrays of bin indices (``0..bins``), all rows or only the rows of ``mask``.

    Works block by block: the combined index of one block of rows at a time (never an n-length index
    array), and with a mask no compacted copies -- an unselected row's index is moved past the
    ``(bins + 1)^2`` cells and dropped. Same result as :func:`_count` on ``left[mask], right[mask]``.
    """
    side = bins + 1
    cells = side * side
    n = left.shape[0]
    keep = None if mask is None else np.asarray(mask, dtype=bool).view(np.uint8)
    out = np.zeros(2 * cells if keep is not None else cells, dtype=np.int64)
    block = min(BLOCK_ROWS, max(n, 1))
    index = np.empty(block, dtype=np.intp)
    shift = np.empty(block, dtype=np.intp) if keep is not None else None
    for start in range(0, n, block):
        stop = min(n, start + block)
        v = index[: stop - start]
        np.multiply(left[start:stop], side, out=v, dtype=np.intp, casting="unsafe")
        v += right[start:stop]
        if keep is not None:
            w = shift[: stop - start]
            np.multiply(keep[start:stop], -cells, out=w, dtype=np.intp, casting="unsafe")
            w += cells
            v += w  # selected rows keep their cell, the others land in the second half
        out += np.bincount(v, minlength=out.shape[0])
    return out[:cells].reshape(side, side)


def pair_counts(codes_a: np.ndarray, codes_b: np.ndarray, bins: int = DENSITY_BINS, mask=None) -> np.ndarray:
    """Rows per (bin on axis a, bin on axis b): a ``(bins + 1, bins + 1)`` int64 matrix.

    Entry ``[i, j]`` counts the rows whose code on ``a`` falls in bin ``i`` and whose code on ``b``
    falls in bin ``j`` (bins as in :func:`bin_codes`); the last row and column count missing values.
    With ``mask`` (a bool array, one per row) only the rows where it is True are counted, so the
    selected and unselected layers are ``pair_counts(a, b, bins, mask)`` and ``pair_counts(a, b, bins,
    ~mask)``. ``bins`` runs from 1 to :data:`MAX_PAIR_BINS`.
    """
    bins = _check_bins(bins, MAX_PAIR_BINS)
    a = _check_codes(codes_a, "codes_a")
    b = _check_codes(codes_b, "codes_b")
    if a.shape != b.shape:
        raise ValueError(f"codes_a and codes_b must have the same length, got {a.shape[0]} and {b.shape[0]}")
    m = _check_mask(mask, a.shape[0])
    if m is not None:
        a, b = a[m], b[m]
    table = _lookup(bins)
    return _count(table[a], table[b], bins)


def neighbour_counts(
    columns: Sequence[np.ndarray] | Mapping[Any, np.ndarray],
    order: Sequence[Any] | None = None,
    bins: int = DENSITY_BINS,
    mask=None,
) -> list[np.ndarray]:
    """One :func:`pair_counts` matrix per neighbouring pair of axes in ``order``, left to right.

    ``columns`` is a sequence of code arrays (``order`` then holds positions) or a mapping from axis
    name to code array (``order`` holds names); ``order=None`` takes the columns as given. With fewer
    than two axes the list is empty. Each axis is binned once, however many pairs it belongs to. Call
    it with ``mask`` and with ``~mask`` for the selected and unselected layers.
    """
    bins = _check_bins(bins, MAX_PAIR_BINS)
    keys = list(columns.keys()) if isinstance(columns, Mapping) else list(range(len(columns)))
    order = keys if order is None else list(order)
    seen: set = set()
    for key in order:
        if isinstance(columns, Mapping):
            known = key in columns
        else:
            known = isinstance(key, int | np.integer) and not isinstance(key, bool) and 0 <= key < len(keys)
        if not known:
            what = "an axis name" if isinstance(columns, Mapping) else f"a position within 0..{len(keys) - 1}"
            raise ValueError(f"order entry {key!r} is not {what}")
        if key in seen:
            raise ValueError(f"order names axis {key!r} more than once")
        seen.add(key)
    codes = {key: _check_codes(columns[key], f"column {key!r}") for key in order}
    lengths = {key: c.shape[0] for key, c in codes.items()}
    if len(set(lengths.values())) > 1:
        raise ValueError(f"all columns must have the same length, got {lengths}")
    n = next(iter(lengths.values()), 0)
    m = _check_mask(mask, n)
    table = _lookup(bins)
    binned = {key: table[c if m is None else c[m]] for key, c in codes.items()}
    pairs = zip(order[:-1], order[1:], strict=True)
    return [_count(binned[left], binned[right], bins) for left, right in pairs]
