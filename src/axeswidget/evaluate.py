"""Exact evaluation of a selection over in-memory columns: a boolean mask, recomputed incrementally.

Each axis with items gives one part (rows picked by any of its items, compared on the exact values
in the column's own type); the mask is the AND of the parts. Only axes whose items changed are
recomputed, and while one axis is dragged the AND of the others is kept.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
import pandas as pd

from .encode import Column
from .selection import Ranges, SelectionError


def _exact_end(value, col: Column):
    if value is None:
        return None
    if col.kind == "datetime":
        return pd.Timestamp(value).as_unit("ns").value  # int64 ns since the epoch (UTC for tz-aware columns)
    if col.kind == "timedelta":
        return int(round(value * 1e9))
    return value


def _integer_hit(col: Column, lo, hi) -> np.ndarray:
    """Rows of an integer column within [lo, hi], compared in the column's own integer type."""
    info = np.iinfo(col.exact.dtype)
    exact = col.exact
    hit = None
    if lo is not None:
        lo = math.ceil(lo)  # exact for floats and ints alike
        if lo > info.max:
            return np.zeros(len(exact), dtype=bool)
        if lo > info.min:
            hit = exact >= exact.dtype.type(lo)
    if hi is not None:
        hi = math.floor(hi)
        if hi < info.min:
            return np.zeros(len(exact), dtype=bool)
        if hi < info.max:
            upper = exact <= exact.dtype.type(hi)
            hit = upper if hit is None else np.logical_and(hit, upper, out=hit)
    present = ~col.missing
    return present if hit is None else np.logical_and(hit, present, out=hit)


def _range_hit(col: Column, lo, hi) -> np.ndarray:
    """Rows within one range [lo, hi] (None = open end) on a number, date or duration axis."""
    if col.exact is not None:
        return _integer_hit(col, lo, hi)
    v = col.values
    if lo is None and hi is None:
        return ~col.missing
    if lo is None:
        hit = v <= hi
    else:
        hit = v >= lo
        if hi is not None:
            np.logical_and(hit, v <= hi, out=hit)
    if col.kind in ("datetime", "timedelta") and lo is None:
        np.logical_and(hit, ~col.missing, out=hit)  # NaT is stored as the smallest int64
    return hit


def axis_mask(col: Column, items: list) -> np.ndarray:
    """Rows picked by any of the items on one axis, computed on the exact values."""
    n = len(col.missing)
    if col.kind in ("category", "boolean"):
        lut = np.zeros(len(col.labels) + 1, dtype=bool)
        index = {lab: i for i, lab in enumerate(col.labels)}
        for item in items:
            lut[0 if item is None else index[item] + 1] = True
        return lut[col.label_codes + 1]
    if len(items) == 1 and items[0] is not None:  # the common case: one range, no extra pass
        return _range_hit(col, _exact_end(items[0][0], col), _exact_end(items[0][1], col))
    mask = np.zeros(n, dtype=bool)
    for item in items:
        if item is None:
            mask |= col.missing
        else:
            mask |= _range_hit(col, _exact_end(item[0], col), _exact_end(item[1], col))
    return mask


class MaskEvaluator:
    """Exact, incremental evaluation of a selection over in-memory columns."""

    def __init__(self, columns: Mapping[str, Column], n: int):
        self.columns = columns
        self.n = n
        self.ranges: Ranges = {}
        self._parts: dict[str, np.ndarray] = {}
        self.mask = np.ones(n, dtype=bool)
        self.mask.flags.writeable = False
        #: False until the first update: the mask above is a placeholder
        self.evaluated = False

    def prepare(self, ranges: Ranges) -> None:
        """Evaluate a selection without applying it (so a failure leaves everything as it was).

        The next :meth:`update` with the same selection reuses the result.
        """
        parts = {}
        for axis, items in ranges.items():
            if self.ranges.get(axis) == items and axis in self._parts:
                parts[axis] = self._parts[axis]
            else:
                try:
                    parts[axis] = axis_mask(self.columns[axis], items)
                except (ArithmeticError, TypeError, ValueError) as err:
                    raise SelectionError(
                        f"selection on {axis!r} cannot be evaluated: {type(err).__name__}: {err}"
                    ) from None
        self._pending = ({k: list(v) for k, v in ranges.items()}, parts)

    def update(self, ranges: Ranges) -> np.ndarray:
        """Apply a normalised selection; only axes whose items changed are recomputed."""
        pending = getattr(self, "_pending", None)
        self._pending = None
        if pending is not None and pending[0] == ranges:
            self._parts = dict(pending[1])
        else:
            for axis in list(self._parts):
                if axis not in ranges:
                    del self._parts[axis]
            for axis, items in ranges.items():
                if self.ranges.get(axis) != items or axis not in self._parts:
                    self._parts[axis] = axis_mask(self.columns[axis], items)
        changed = [a for a in ranges if self.ranges.get(a) != ranges[a]]
        self.ranges = {k: list(v) for k, v in ranges.items()}
        mask = self._combine(changed)
        mask.flags.writeable = False
        self.mask = mask
        self.evaluated = True
        return mask

    def _combine(self, changed: list[str]) -> np.ndarray:
        """AND of the per-axis parts. While one axis is dragged, the AND of the others is kept, so
        each update costs one AND instead of one per brushed axis."""
        parts = self._parts
        if not parts:
            self._rest = None
            return np.ones(self.n, dtype=bool)
        if len(parts) == 1:
            self._rest = None
            return next(iter(parts.values())).copy()
        rest = getattr(self, "_rest", None)
        if len(changed) == 1:
            axis = changed[0]
            others = tuple(sorted(a for a in parts if a != axis))
            if rest is None or rest[0] != axis or rest[1] != others:
                it = iter(parts[a] for a in others)
                acc = next(it).copy()
                for part in it:
                    acc &= part
                rest = self._rest = (axis, others, acc)
            return np.logical_and(rest[2], parts[axis])
        self._rest = None
        it = iter(parts.values())
        mask = np.logical_and(next(it), next(it))
        for part in it:
            mask &= part
        return mask


def pack(mask: np.ndarray) -> bytes:
    """Bit-pack a mask for the front end: bit i of byte i // 8 (little bit order) is row i."""
    return np.packbits(mask, bitorder="little").tobytes()
