"""Axis order and axis flips for parallel coordinates, from an association matrix.

Only neighbouring axes can be compared in a parallel-coordinates chart, so the order of the axes
decides what a reader can see. Given a symmetric matrix of associations between the columns (e.g.
from :func:`axeswidget.measures.association`), this module picks an axis order and a set of flips:

* :func:`best_order`, :func:`path_score` -- axis order as a travelling-salesman *path* problem
  (Ankerst, Berchtold & Keim 1998): exact Held--Karp dynamic programming for up to 12 axes,
  nearest neighbour from every start followed by 2-opt beyond.
* :func:`suggest_flips` -- which axes to flip so that neighbouring associations become positive.

Only numpy and pandas are needed.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

__all__ = ["EXACT_MAX_AXES", "best_order", "path_score", "suggest_flips"]

#: Largest number of axes that :func:`best_order` solves exactly (Held--Karp) by default.
EXACT_MAX_AXES = 12
#: Hard limit for a forced exact solve: the table has ``2**n * n`` entries.
_EXACT_HARD_LIMIT = 16


def _check_matrix(matrix: Any) -> tuple[list[Any], np.ndarray]:
    """Validate a square symmetric association matrix; return its names and float values.

    A DataFrame must have the same labels on rows and columns; a plain 2-D array gets the names
    ``"0", "1", ...``. Missing (NaN) entries are allowed; infinite ones are not.
    """
    if isinstance(matrix, pd.DataFrame):
        names = list(matrix.index)
        if matrix.shape[0] != matrix.shape[1]:
            raise ValueError(f"matrix must be square, got shape {matrix.shape}")
        if len(set(names)) != len(names):
            raise ValueError(f"matrix has a duplicated axis name in {names}")
        if set(matrix.columns) != set(names):
            extra = [c for c in matrix.columns if c not in set(names)]
            raise ValueError(f"matrix columns and index differ: column {extra[0]!r} is not a row name")
        matrix = matrix.loc[names, names]
        try:
            values = matrix.to_numpy(dtype=np.float64)
        except (TypeError, ValueError) as err:
            raise ValueError(f"matrix must hold numbers: {err}") from err
    else:
        values = np.asarray(matrix, dtype=np.float64)
        if values.ndim != 2 or values.shape[0] != values.shape[1]:
            raise ValueError(f"matrix must be square, got shape {values.shape}")
        names = [str(i) for i in range(values.shape[0])]
    if values.shape[0] < 1:
        raise ValueError("matrix has no axes (need at least 1)")
    _check_values(names, values)
    return names, values


def _check_values(names: list[Any], values: np.ndarray) -> None:
    """Refuse infinite entries and asymmetric matrices, naming the offending pair."""
    bad = np.argwhere(np.isinf(values))
    if bad.size:
        i, j = bad[0]
        raise ValueError(f"matrix entry ({names[i]!r}, {names[j]!r}) is infinite")
    close = np.isclose(values, values.T, rtol=1e-9, atol=1e-12, equal_nan=True)
    if not close.all():
        i, j = np.argwhere(~close)[0]
        raise ValueError(
            f"matrix is not symmetric: ({names[i]!r}, {names[j]!r}) = {values[i, j]!r} "
            f"but ({names[j]!r}, {names[i]!r}) = {values[j, i]!r}"
        )


def _weights(values: np.ndarray, maximize: bool, absolute: bool) -> np.ndarray:
    """Edge weights to maximise: NaN -> 0, |value| if ``absolute``, negated when minimising."""
    w = np.nan_to_num(values, nan=0.0)
    if absolute:
        w = np.abs(w)
    w = (w + w.T) / 2.0
    return w if maximize else -w


def _score(w: np.ndarray, order: Sequence[int]) -> float:
    """Sum of weights along a path of indices."""
    idx = np.asarray(order, dtype=np.int64)
    return float(w[idx[:-1], idx[1:]].sum()) if idx.shape[0] > 1 else 0.0


def _held_karp(w: np.ndarray, first: int | None) -> list[int]:
    """Maximum-weight Hamiltonian path by Held--Karp dynamic programming, vectorised per subset size.

    ``best[S, j]`` is the best path score over exactly the axes in bit set ``S`` ending at ``j``;
    all subsets of one size are extended by one axis at once. ``O(2^n n^2)`` time, ``O(2^n n)`` memory.
    """
    n = w.shape[0]
    if n == 1:
        return [0]
    masks = np.arange(1 << n, dtype=np.int64)
    member = ((masks[:, None] >> np.arange(n)) & 1).astype(bool)
    size = member.sum(axis=1)
    best = np.full((1 << n, n), -np.inf)
    parent = np.full((1 << n, n), -1, dtype=np.int64)
    for s in range(n) if first is None else [first]:
        best[1 << s, s] = 0.0
    for k in range(1, n):
        layer = masks[size == k]
        cand = best[layer][:, :, None] + w[None, :, :]
        arg = cand.argmax(axis=1)
        top = np.take_along_axis(cand, arg[:, None, :], axis=1)[:, 0, :]
        rows, nxt = np.nonzero(~member[layer] & np.isfinite(top))
        grown = layer[rows] | (np.int64(1) << nxt)
        best[grown, nxt] = top[rows, nxt]
        parent[grown, nxt] = arg[rows, nxt]
    mask, end = (1 << n) - 1, int(np.argmax(best[-1]))
    path = [end]
    while parent[mask, end] >= 0:
        mask, end = mask ^ (1 << end), int(parent[mask, end])
        path.append(end)
    return path[::-1]


def _nearest_neighbour(w: np.ndarray, start: int) -> list[int]:
    """Greedy path: repeatedly step to the unvisited axis with the largest weight (lowest index on ties)."""
    n = w.shape[0]
    free = np.ones(n, dtype=bool)
    free[start] = False
    path = [start]
    for _ in range(n - 1):
        row = np.where(free, w[path[-1]], -np.inf)
        nxt = int(np.argmax(row))
        free[nxt] = False
        path.append(nxt)
    return path


def _two_opt(w: np.ndarray, path: list[int], pinned: bool) -> list[int]:
    """Improve a path by segment reversals (best improvement first) until none helps.

    A dummy node with zero weight to everything is put at both ends, so reversing a prefix or a
    suffix is an ordinary 2-opt move. With ``pinned`` the first axis never moves.
    """
    n = len(path)
    if n < 3:
        return path
    wd = np.zeros((n + 1, n + 1))
    wd[:n, :n] = w
    tol = 1e-12 * max(1.0, float(np.abs(w).max()))
    i_idx, j_idx = np.triu_indices(n, 1)
    if pinned:
        keep = i_idx >= 1
        i_idx, j_idx = i_idx[keep], j_idx[keep]
    order = np.array(path, dtype=np.int64)
    while True:
        ext = np.concatenate(([n], order, [n]))
        a, b = ext[i_idx], ext[i_idx + 1]
        c, d = ext[j_idx + 1], ext[j_idx + 2]
        gain = wd[a, c] + wd[b, d] - wd[a, b] - wd[c, d]
        pick = int(np.argmax(gain))
        if gain[pick] <= tol:
            return order.tolist()
        i, j = i_idx[pick], j_idx[pick]
        order[i : j + 1] = order[i : j + 1][::-1]


def _heuristic(w: np.ndarray, first: int | None) -> list[int]:
    """Best of nearest-neighbour-then-2-opt started from every axis (only ``first`` when pinned).

    Deterministic: ties go to the earliest start. Each 2-opt pass costs ``O(n^2)``, so wide tables
    (hundreds of axes) take seconds.
    """
    tol = 1e-12 * max(1.0, float(np.abs(w).max()))
    best_path: list[int] = []
    best_score = -np.inf
    for start in range(w.shape[0]) if first is None else [first]:
        path = _two_opt(w, _nearest_neighbour(w, start), pinned=first is not None)
        score = _score(w, path)
        if not best_path or score > best_score + tol:
            best_path, best_score = path, score
    return best_path


def best_order(
    matrix: Any,
    *,
    maximize: bool = True,
    absolute: bool = True,
    first: Any = None,
    method: str = "auto",
) -> list[str]:
    """Axis order that maximises (or minimises) the association summed over neighbouring axes.

    This is dimension ordering posed as a travelling-salesman *path* problem (Ankerst, Berchtold &
    Keim 1998): axes are cities, the association between two axes is the edge weight, and the order
    is a Hamiltonian path. With ``absolute=True`` the size ``|value|`` counts, since flipping an axis
    turns a negative association into a positive one (see :func:`suggest_flips`).

    Maximise (default) to put strongly related axes side by side and show correlated structure.
    Minimise (``maximize=False``) to put dissimilar axes side by side: a 2020 EuroVis user study
    (Blumenschein et al.) found dissimilar neighbours helped readers find clusters.

    ``matrix`` is a square symmetric DataFrame (e.g. from :func:`axeswidget.measures.association`) or
    2-D array; NaN entries count as 0. ``first`` pins the first axis. ``method``: ``"auto"`` (exact up to
    :data:`EXACT_MAX_AXES` = 12 axes, heuristic beyond), ``"exact"`` (Held--Karp, at most 16 axes)
    or ``"heuristic"`` (nearest neighbour from every start, then 2-opt until no improvement;
    deterministic, not guaranteed optimal). Returns the labels of the matrix in the chosen order.
    """
    names, values = _check_matrix(matrix)
    start = _first_index(names, first)
    w = _weights(values, maximize, absolute)
    n = len(names)
    if method not in ("auto", "exact", "heuristic"):
        raise ValueError(f"unknown method {method!r}; use 'auto', 'exact' or 'heuristic'")
    if method == "exact" and n > _EXACT_HARD_LIMIT:
        raise ValueError(f"method='exact' supports at most {_EXACT_HARD_LIMIT} axes, got {n}")
    exact = method == "exact" or (method == "auto" and n <= EXACT_MAX_AXES)
    path = _held_karp(w, start) if exact else _heuristic(w, start)
    return [names[i] for i in path]


def _first_index(names: list[Any], first: Any) -> int | None:
    """Position of the pinned first axis (``None`` when not pinned)."""
    if first is None:
        return None
    if first not in names:
        raise ValueError(f"first={first!r} is not an axis of the matrix; axes are {names}")
    return names.index(first)


def _order_indices(names: list[Any], order: Sequence[Any]) -> list[int]:
    """Positions of ``order`` in ``names``, refusing unknown or repeated axes."""
    order = list(order)
    seen = set()
    out = []
    for name in order:
        if name not in names:
            raise ValueError(f"axis {name!r} in order is not in the matrix; axes are {names}")
        if name in seen:
            raise ValueError(f"axis {name!r} appears more than once in order")
        seen.add(name)
        out.append(names.index(name))
    return out


def path_score(matrix: Any, order: Sequence[Any], absolute: bool = True) -> float:
    """Sum of the association over neighbouring axes of ``order`` (``|value|`` when ``absolute``).

    NaN entries count as 0, as in :func:`best_order`.
    """
    names, values = _check_matrix(matrix)
    idx = _order_indices(names, order)
    return _score(_weights(values, True, absolute), idx)


def suggest_flips(matrix: Any, order: Sequence[Any]) -> list[str]:
    """Axes to flip so that every neighbouring association in ``order`` becomes non-negative.

    ``matrix`` holds a *signed* association (Pearson, Spearman, Kendall). Along a path this is always
    possible: walking the order, axis ``i+1`` is flipped exactly when axis ``i`` is flipped XOR their
    association is negative (zero or NaN counts as non-negative). Flipping every axis gives the same
    picture, so of the two solutions the one with fewer flips is returned (the one keeping the first
    axis unflipped on a tie). Returns axis names in ``order`` sequence.
    """
    names, values = _check_matrix(matrix)
    idx = _order_indices(names, order)
    flipped = [False]
    for a, b in zip(idx[:-1], idx[1:], strict=True):
        flipped.append(flipped[-1] ^ bool(values[a, b] < 0))
    if 2 * sum(flipped) > len(flipped):
        flipped = [not f for f in flipped]
    return [names[i] for i, f in zip(idx, flipped, strict=True) if f]
