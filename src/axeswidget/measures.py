"""Association measures between the columns of a table, as seen between two neighbouring axes.

Between two neighbouring axes of a parallel-coordinates chart, many crossing lines mean a negative
association and near-parallel lines a positive one. This module measures that for pairs of columns;
:mod:`axeswidget.ordering` turns the measurements into an axis order and axis flips.

Pieces:

* :func:`crossings`, :func:`nontied_pairs`, :func:`crossings_after_flip`, :func:`kendall_tau_b` --
  pair counts between two axes, computed in ``O(n log n)`` with a vectorised merge-sort inversion count.
* :func:`mutual_info` -- binned (equal-frequency) mutual information of two columns.
* :func:`association` -- the symmetric matrix of one measure over all columns of a table.

Columns are read the way the widget reads them: the widget passes its classified
:class:`~axeswidget.encode.Column` objects (kind, exact values, label codes); a raw 1-D input or
table is classified by :func:`axeswidget.encode.encode_column` first. Only numpy and pandas are
needed; scipy is not used.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cached_property
from itertools import combinations
from typing import Any

import numpy as np
import pandas as pd

from .encode import Column, encode_column
from .paircount import (
    _average_ranks,
    _corr_matrix,
    _mi_from_labels,
    _pair_counts,
    _PairCounts,
    _pearson,
    _tau_b,
)

__all__ = [
    "METRICS",
    "DEFAULT_BINS",
    "crossings",
    "nontied_pairs",
    "crossings_after_flip",
    "kendall_tau_b",
    "mutual_info",
    "association",
]

#: Measures understood by :func:`association`.
METRICS = ("pearson", "spearman", "kendall", "crossings", "mutual_info")
#: Number of equal-frequency bins used by the mutual-information measure.
DEFAULT_BINS = 16


# ---------------------------------------------------------------------------------------------------------
# Columns as the measures see them
# ---------------------------------------------------------------------------------------------------------


@dataclass(eq=False)
class _Values:
    """A column reduced to what the measures need; derived arrays are computed on first use.

    ``values`` holds numbers (float64 axis units, or int64 nanoseconds for dates and durations) or,
    for label columns (``categorical``), integer label codes ``0..n_labels-1`` in label order;
    ``valid`` marks the non-missing rows.
    """

    values: np.ndarray
    valid: np.ndarray
    categorical: bool
    n_labels: int = 0

    def take(self, rows: np.ndarray) -> _Values:
        """The same column restricted to the row positions ``rows``."""
        return _Values(self.values[rows], self.valid[rows], self.categorical, self.n_labels)

    @cached_property
    def complete(self) -> bool:
        """True when no value is missing."""
        return bool(self.valid.all())

    @cached_property
    def num(self) -> np.ndarray:
        """Float values with NaN where missing (used by Pearson)."""
        num = self.values.astype(np.float64)
        num[~self.valid] = np.nan
        return num

    @cached_property
    def _coded(self) -> tuple[np.ndarray, int]:
        """Order-preserving integer codes (-1 where missing) and their count."""
        if self.categorical:
            return np.where(self.valid, self.values, -1).astype(np.int64), self.n_labels
        codes = np.full(self.values.shape[0], -1, dtype=np.int64)
        if not self.valid.any():
            return codes, 0
        uniq, inverse = np.unique(self.values[self.valid], return_inverse=True)
        codes[self.valid] = inverse.reshape(-1)
        return codes, int(uniq.shape[0])

    @property
    def codes(self) -> np.ndarray:
        """Order-preserving integer codes, -1 where missing (used by the rank measures)."""
        return self._coded[0]

    @property
    def n_codes(self) -> int:
        """Number of distinct codes (upper bound for labels)."""
        return self._coded[1]

    @cached_property
    def order(self) -> np.ndarray:
        """Row permutation sorting the codes (stable)."""
        return np.argsort(self.codes, kind="stable")


def _from_column(col: Column, label_order: np.ndarray | None = None) -> _Values:
    """The measures' view of a classified column: label codes for category and boolean axes (in the
    axis order, or mapped through ``label_order``), exact values for the others (NaN / missing
    rows marked invalid)."""
    if col.kind in ("category", "boolean"):
        codes = col.label_codes.astype(np.int64)
        if label_order is not None:
            codes = np.where(codes >= 0, label_order[np.maximum(codes, 0)], -1)
        return _Values(codes, codes >= 0, True, len(col.labels))
    return _Values(col.values, ~col.missing, False)


def _as_series(values: Any, name: str = "") -> pd.Series:
    """Wrap a 1-D array-like in a Series, refusing anything that is not one-dimensional."""
    if isinstance(values, pd.Series):
        return values.reset_index(drop=True)
    if isinstance(values, pd.Index):
        return pd.Series(values, name=name)
    arr = values if hasattr(values, "dtype") and hasattr(values, "ndim") else np.asarray(values)
    if getattr(arr, "ndim", 1) != 1:
        raise ValueError(f"column {name!r} must be one-dimensional, got shape {np.shape(arr)}")
    return pd.Series(arr, name=name)


def _values_of(values: Any, name: str = "") -> _Values:
    """A raw 1-D input (or a classified Column) as the measures see it.

    Raw inputs are classified by :func:`~axeswidget.encode.encode_column`, as the widget classifies a
    table's columns: numbers as float64, booleans as False < True, datetimes and timedeltas as int64
    nanoseconds, labels as codes. Label order: a pandas Categorical keeps its category order, other
    labels are ordered by their sorted text (the widget's own axes put the most frequent first).
    """
    if isinstance(values, Column):
        return _from_column(values)
    s = _as_series(values, name)
    if pd.api.types.is_complex_dtype(s.dtype):
        raise ValueError(f"column {name!r} holds complex numbers, which have no order")
    if s.dtype == np.dtype(object) and pd.api.types.infer_dtype(s, skipna=True) in ("integer", "floating"):
        s = pd.to_numeric(s)  # numbers held as Python objects (e.g. with None) are numbers
    col = encode_column(name, s, name)
    if col.kind != "category":
        return _from_column(col)
    if isinstance(s.dtype, pd.CategoricalDtype):
        order = np.asarray(s.cat.categories.get_indexer(col.raw_labels), dtype=np.int64)
    else:
        order = np.empty(len(col.labels), dtype=np.int64)
        order[np.argsort(np.asarray(col.labels, dtype=object), kind="stable")] = np.arange(len(col.labels))
    return _from_column(col, order)


def _prepare_pair(x: Any, y: Any) -> tuple[_Values, _Values]:
    """Prepare two columns of equal length."""
    cx, cy = _values_of(x, "x"), _values_of(y, "y")
    if cx.values.shape[0] != cy.values.shape[0]:
        nx, ny = cx.values.shape[0], cy.values.shape[0]
        raise ValueError(f"x and y must have the same length, got {nx} and {ny}")
    return cx, cy


# ---------------------------------------------------------------------------------------------------------
# Inversion counting and pair counts
# ---------------------------------------------------------------------------------------------------------


def _column_pair_counts(a: _Values, b: _Values, reuse_order: bool = False) -> _PairCounts:
    """Pair counts of two prepared columns over the rows where both are present.

    With ``reuse_order`` the cached sort order of ``a`` is used (worth it when ``a`` meets many
    columns, as in :func:`association`); otherwise one plain sort of the combined key is cheaper.
    """
    if a.complete and b.complete:
        return _pair_counts(a.codes, b.codes, a.order if reuse_order else None)
    both = a.valid & b.valid
    if not reuse_order:
        return _pair_counts(a.codes[both], b.codes[both])
    position = np.cumsum(both) - 1
    x_order = position[a.order[both[a.order]]]
    return _pair_counts(a.codes[both], b.codes[both], x_order)


def crossings(x: Any, y: Any) -> int:
    """Number of line pairs that cross between two neighbouring axes showing ``x`` and ``y``.

    This is the number of discordant pairs ``i < j`` with ``(x_i - x_j) * (y_i - y_j) < 0``; pairs
    tied on x or on y do not cross. Rows where either value is missing (NaN/NaT/None) are dropped.
    Runs in ``O(n log n)`` (vectorised merge-sort inversion count). Strings, categories, booleans
    and datetimes are compared through their order codes (see :func:`association`).
    """
    return _column_pair_counts(*_prepare_pair(x, y)).discordant


def nontied_pairs(x: Any, y: Any) -> int:
    """Number of pairs tied neither on ``x`` nor on ``y`` (rows with a missing value dropped).

    Every such pair either crosses or runs parallel, so ``crossings(x, y) + crossings(x, -y)`` equals
    this count.
    """
    return _column_pair_counts(*_prepare_pair(x, y)).nontied


def crossings_after_flip(x: Any, y: Any) -> int:
    """Crossings between ``x`` and ``y`` once one of the two axes is flipped (drawn upside down).

    Flipping turns every crossing non-tied pair into a parallel one and back, so the result is
    ``nontied_pairs(x, y) - crossings(x, y)``, which equals ``crossings(x, -y)``.
    """
    counts = _column_pair_counts(*_prepare_pair(x, y))
    return counts.nontied - counts.discordant


def kendall_tau_b(x: Any, y: Any) -> float:
    """Kendall's tau-b of ``x`` and ``y``, rows with a missing value dropped.

    ``tau_b = (C - D) / sqrt((P - T_x) * (P - T_y))`` with C/D the concordant/discordant pairs, P all
    pairs and T_x/T_y the pairs tied on x/on y. NaN when fewer than two rows remain or a variable is
    constant.
    """
    return _tau_b(_column_pair_counts(*_prepare_pair(x, y)))


# ---------------------------------------------------------------------------------------------------------
# Mutual information
# ---------------------------------------------------------------------------------------------------------


def _mi_labels(col: _Values, bins: int) -> np.ndarray:
    """Discrete labels ``0..bins-1`` for mutual information (-1 where missing).

    Columns with at most ``bins`` distinct values keep their own codes. Numeric columns with more
    are cut at their ``k / bins`` quantiles (equal-frequency bins, intervals closed on the right,
    equal values always in one bin, so fewer bins when ties are heavy). Label columns with more
    categories keep the ``bins - 1`` most frequent ones and pool the rest into one bin.
    """
    codes = col.codes
    if col.n_codes <= bins:
        return codes
    present = codes[col.valid]
    if col.categorical:
        freq = np.bincount(present, minlength=col.n_codes)
        keep = np.argsort(-freq, kind="stable")[: bins - 1]
        mapping = np.full(col.n_codes, bins - 1, dtype=np.int64)
        mapping[keep] = np.arange(bins - 1)
        return np.where(col.valid, mapping[np.maximum(codes, 0)], -1)
    edges = np.unique(np.quantile(present, np.linspace(0.0, 1.0, bins + 1)[1:-1]))
    return np.where(col.valid, np.searchsorted(edges, codes, side="left"), -1)


def mutual_info(x: Any, y: Any, *, bins: int = DEFAULT_BINS, normalized: bool = True) -> float:
    """Binned mutual information of ``x`` and ``y``, rows with a missing value dropped.

    Each variable is first reduced to at most ``bins`` labels (default 16): columns with at most that
    many distinct values keep them; numeric columns with more are cut into equal-frequency
    (quantile) bins computed on all their non-missing values; label columns with more keep the
    ``bins - 1`` most frequent labels and pool the rest. MI is taken from the contingency table, in
    nats. With ``normalized=True`` it is divided by ``sqrt(H(X) * H(Y))`` (geometric mean of the two
    entropies, so the result lies in [0, 1]); it is 0 when either variable is constant.
    """
    bins = _check_bins(bins)
    cx, cy = _prepare_pair(x, y)
    lx, ly = _mi_labels(cx, bins), _mi_labels(cy, bins)
    both = (lx >= 0) & (ly >= 0)
    return _mi_from_labels(lx[both], ly[both], normalized)


def _check_bins(bins: int) -> int:
    """Validate a bin count."""
    if isinstance(bins, bool) or not isinstance(bins, (int, np.integer)) or bins < 2:
        raise ValueError(f"bins must be an integer >= 2, got {bins!r}")
    return int(bins)


# ---------------------------------------------------------------------------------------------------------
# Association matrix
# ---------------------------------------------------------------------------------------------------------


def _pick(names: list[Any], columns: Sequence[Any] | None) -> list[Any]:
    """The names ``columns`` asks for, in its order (all ``names`` when None); refuses unknown or repeats."""
    if columns is None:
        return names
    columns = list(columns)
    for name in columns:
        if name not in names:
            raise ValueError(f"column {name!r} is not in the data; available: {names}")
    if len(set(columns)) != len(columns):
        raise ValueError(f"columns contains duplicates: {columns}")
    return columns


def _normalise_table(data: Any, columns: Sequence[Any] | None) -> pd.DataFrame:
    """Accept a DataFrame or a mapping name -> 1-D array and select ``columns``."""
    if isinstance(data, pd.DataFrame):
        frame = data
    elif isinstance(data, Mapping):
        series = {name: _as_series(values, str(name)) for name, values in data.items()}
        lengths = {name: len(s) for name, s in series.items()}
        if len(set(lengths.values())) > 1:
            raise ValueError(f"all columns must have the same length, got {lengths}")
        frame = pd.DataFrame(series)
    else:
        raise ValueError(f"data must be a DataFrame or a mapping of name -> 1-D array, got {type(data)}")
    if frame.columns.has_duplicates:
        dup = frame.columns[frame.columns.duplicated()][0]
        raise ValueError(f"column {dup!r} appears more than once")
    return frame if columns is None else frame[_pick(list(frame.columns), columns)]


def _sample_positions(n: int, max_rows: int | None, seed: int | None) -> np.ndarray | None:
    """Sorted positions of a uniform sample of ``max_rows`` rows, or None when every row is used."""
    if max_rows is None or n <= max_rows:
        return None
    return np.sort(np.random.default_rng(seed).choice(n, size=max_rows, replace=False))


def _table(
    data: Any, columns: Sequence[Any] | None, max_rows: int | None, seed: int | None
) -> tuple[list[Any], list[_Values], int, bool]:
    """Names, prepared (and possibly sampled) columns, the number of rows used, and whether all were.

    Classified columns (a mapping name -> :class:`~axeswidget.encode.Column`, as the widget holds them)
    are used as they are; a raw table is sampled first and then classified column by column.
    """
    if isinstance(data, Mapping) and data and all(isinstance(c, Column) for c in data.values()):
        names = _pick(list(data), columns)
        lengths = {name: len(data[name].missing) for name in names}
        if len(set(lengths.values())) > 1:
            raise ValueError(f"all columns must have the same length, got {lengths}")
        n = next(iter(lengths.values()), 0)
        rows = _sample_positions(n, max_rows, seed)
        cols = [_from_column(data[name]) for name in names]
        if rows is None:
            return names, cols, n, True
        return names, [c.take(rows) for c in cols], len(rows), False
    frame = _normalise_table(data, columns)
    rows = _sample_positions(len(frame), max_rows, seed)
    if rows is not None:
        frame = frame.iloc[rows]
    names = list(frame.columns)
    return names, [_values_of(frame[name], str(name)) for name in names], len(frame), rows is None


def _pair_value(metric: str, a: _Values, b: _Values, labels: dict[int, np.ndarray]) -> float:
    """One off-diagonal entry of the association matrix (rows with a missing value dropped)."""
    if metric in ("kendall", "crossings"):
        counts = _column_pair_counts(a, b, reuse_order=True)
        return float(counts.discordant) if metric == "crossings" else _tau_b(counts)
    if metric == "mutual_info":
        la, lb = labels[id(a)], labels[id(b)]
        both = (la >= 0) & (lb >= 0)
        return _mi_from_labels(la[both], lb[both], normalized=True)
    both = a.valid & b.valid
    if metric == "pearson":
        return _pearson(a.num[both], b.num[both])
    return _pearson(_average_ranks(a.codes[both], a.n_codes), _average_ranks(b.codes[both], b.n_codes))


def _complete_block(metric: str, cols: list[_Values]) -> tuple[np.ndarray, np.ndarray | None]:
    """Pearson/Spearman matrix among the columns without missing values, in one matrix product.

    Returns the positions of those columns and their matrix (``None`` for other metrics).
    """
    full = np.array([i for i, c in enumerate(cols) if c.complete], dtype=np.int64)
    if metric not in ("pearson", "spearman") or full.shape[0] < 2:
        return full, None
    if metric == "pearson":
        table = np.column_stack([cols[i].num for i in full])
    else:
        table = np.column_stack([_average_ranks(cols[i].codes, cols[i].n_codes) for i in full])
    if table.shape[0] < 2:
        return full, None
    return full, _corr_matrix(table)


def _matrix(metric: str, cols: list[_Values], bins: int) -> np.ndarray:
    """Fill the association matrix: one block for complete columns (correlations), the rest pair by pair."""
    k = len(cols)
    out = np.zeros((k, k), dtype=np.float64)
    full, block = _complete_block(metric, cols)
    done = np.zeros((k, k), dtype=bool)
    if block is not None:
        out[np.ix_(full, full)] = block
        done[np.ix_(full, full)] = True
    labels = {id(c): _mi_labels(c, bins) for c in cols} if metric == "mutual_info" else {}
    for i, j in combinations(range(k), 2):
        if not done[i, j]:
            out[i, j] = out[j, i] = _pair_value(metric, cols[i], cols[j], labels)
    np.fill_diagonal(out, 0.0 if metric == "crossings" else 1.0)
    return out


def association(
    data: Any,
    metric: str = "spearman",
    *,
    columns: Sequence[Any] | None = None,
    max_rows: int | None = 200_000,
    seed: int | None = 0,
    bins: int = DEFAULT_BINS,
) -> pd.DataFrame:
    """Symmetric matrix of one association measure between all columns.

    ``data`` is a DataFrame, a mapping name -> 1-D array, or a mapping name ->
    :class:`~axeswidget.encode.Column` (the widget's classified axes, used as they are: category and
    boolean axes by their label codes in axis order); ``columns`` picks and orders columns. Raw
    columns are classified as the widget does (:func:`axeswidget.encode.encode_column`): numbers as
    float64; booleans as 0/1; datetimes and timedeltas as int64 nanoseconds; categories by their
    category codes, other labels by the codes of their sorted distinct values. Rank measures (and
    Pearson) on label columns are only meaningful for *ordered* categories; mutual information does
    not depend on the label order. Missing values are dropped
    pairwise: each entry uses the rows where both columns are present.

    ``metric``:

    * ``"pearson"`` -- linear correlation, diagonal 1.
    * ``"spearman"`` -- Pearson correlation of average ranks, diagonal 1.
    * ``"kendall"`` -- Kendall tau-b, diagonal 1.
    * ``"crossings"`` -- raw number of crossing line pairs between the two axes (int64), diagonal 0.
    * ``"mutual_info"`` -- binned mutual information normalised by ``sqrt(H(X) H(Y))`` into [0, 1],
      diagonal 1; ``bins`` (default 16) equal-frequency bins per numeric column, see
      :func:`mutual_info`.

    Correlation entries are NaN where undefined (a constant column, fewer than two shared rows).

    Tables longer than ``max_rows`` (``None`` = never sample) are measured on a uniform sample of
    ``max_rows`` rows: the positions ``np.random.default_rng(seed).choice(len(data), max_rows,
    replace=False)``, sorted. ``result.attrs`` holds ``{"metric", "exact", "rows_used", "seed"}``,
    where ``seed`` is ``None`` when every row was used.
    """
    if metric not in METRICS:
        raise ValueError(f"unknown metric {metric!r}; choose one of {', '.join(METRICS)}")
    if max_rows is not None and (isinstance(max_rows, bool) or not isinstance(max_rows, (int, np.integer))):
        raise ValueError(f"max_rows must be a positive integer or None, got {max_rows!r}")
    if max_rows is not None and max_rows < 2:
        raise ValueError(f"max_rows must be at least 2, got {max_rows}")
    bins = _check_bins(bins)
    names, cols, rows_used, exact = _table(data, columns, max_rows, seed)
    if not names:
        raise ValueError("data has no columns to compare")
    result = pd.DataFrame(_matrix(metric, cols, bins), index=pd.Index(names), columns=pd.Index(names))
    if metric == "crossings":
        result = result.astype(np.int64)
    result.attrs = {
        "metric": metric,
        "exact": exact,
        "rows_used": rows_used,
        "seed": None if exact else seed,
    }
    return result
