"""The in-memory source: today's code (encode.encode_frame, selection.MaskEvaluator, density) behind
the :class:`~axeswidget.sources.base.DataSource` boundary, with identical results.

The rows are held as a pandas frame (``frame``) plus the encoded columns; ``native`` is the table the
user gave, and :meth:`MemorySource.selected` answers in its type (pandas keeps its index; a polars
LazyFrame gets a lazy ``filter`` with the selection's narwhals expression, so it stays lazy).
"""

from __future__ import annotations

from collections.abc import Sequence

import narwhals as nw
import numpy as np
import pandas as pd

from ..density import count_bin_pairs
from ..encode import encode_frame
from ..evaluate import MaskEvaluator
from ..inputs import to_frame
from ..selection import Ranges
from .base import DataSource, Sample, axis_bins, check_ranges
from .expressions import selection_expression


def take_rows(native, frame: pd.DataFrame, mask: np.ndarray):
    """The rows of ``mask`` in the same type as the table the user gave."""
    if native is None or isinstance(native, pd.DataFrame):
        return frame[mask]
    if isinstance(native, np.ndarray):
        return native[mask]
    if isinstance(native, dict):
        return {k: np.asarray(v)[mask] for k, v in native.items()}
    if type(native).__module__.split(".")[0] == "pyarrow" and hasattr(native, "filter"):
        import pyarrow as pa

        return native.filter(pa.array(mask))  # Table and RecordBatch keep their type
    try:
        table = nw.from_native(native, eager_only=True)
    except TypeError:
        return frame[mask]  # Arrow stream objects: the stream is consumed, a pandas frame comes back
    return table.filter(nw.new_series("mask", mask, nw.Boolean, backend=table.implementation)).to_native()


def snapshot(data):
    """The source's own copy of the user's table object (for ``selected`` in the input's type).

    numpy arrays and dicts of arrays are copied, eager tables narwhals reads are cloned (polars copies
    on write), so later in-place edits of the user's object stay theirs; pandas frames are read
    copy-on-write by ``to_frame``.
    """
    if isinstance(data, np.ndarray):
        return data.copy()
    if isinstance(data, dict):
        return {k: np.array(v, copy=True) for k, v in data.items()}
    try:
        table = nw.from_native(data, eager_only=True)
    except TypeError:
        return data  # Arrow streams and record batches cannot be edited in place
    return table.clone().to_native()  # polars: a clone (copy on write); pyarrow: immutable anyway


class MemorySource(DataSource):
    """Rows in this process: pandas frame + encoded columns + incremental mask evaluator."""

    in_memory = True
    engine = "memory"

    def __init__(self, data, axes=None, names=None, *, frame: pd.DataFrame | None = None, lazy=None):
        self.frame = to_frame(data, names) if frame is None else frame
        self.columns = encode_frame(self.frame, axes)
        self.native = (None if isinstance(data, pd.DataFrame) else snapshot(data)) if lazy is None else lazy
        self.n = len(self.frame)
        self.evaluator = MaskEvaluator(self.columns, self.n)
        self._binned: dict[str, tuple] = {}  # axis -> (codes it was made from, bins, uint8/uint16 bins)

    def codes(self, axes: Sequence[str] | None = None) -> dict[str, np.ndarray]:
        return {a: self.columns[a].codes for a in self._axes(axes)}

    def sample(self, k: int, seed: int = 0) -> Sample:
        k = max(0, min(int(k), self.n))
        positions = np.sort(np.random.default_rng(seed).choice(self.n, size=k, replace=False))
        codes = {a: c.codes[positions] for a, c in self.columns.items()}
        where = [self.frame.columns.get_loc(c.source) for c in self.columns.values()]
        rows = self.frame.iloc[positions, where]
        return Sample(codes=codes, rows=rows, positions=positions)

    def prepare(self, ranges: Ranges) -> None:
        self.evaluator.prepare(check_ranges(ranges, self.columns))

    def mask(self, ranges: Ranges) -> np.ndarray:
        return self.evaluator.update(check_ranges(ranges, self.columns))

    def mask_of(self, ranges: Ranges) -> np.ndarray:
        """The mask of a selection evaluated afresh (the incremental state of :meth:`mask` is kept)."""
        return MaskEvaluator(self.columns, self.n).update(check_ranges(ranges, self.columns))

    def count(self, ranges: Ranges) -> int:
        return int(np.count_nonzero(self.mask(ranges)))

    def bins_of(self, axis: str, bins: int) -> np.ndarray:
        """Pair-count bin of every row of one axis (cached per axis until its codes change).

        uint8 while ``bins < 255`` (the density view's 128 bins): an eighth of the float64 values.
        """
        col = self.columns[axis]
        cached = self._binned.get(axis)
        if cached is not None and cached[0] is col.codes and cached[1] == bins:
            return cached[2]
        binned = axis_bins(col, col.codes, bins)
        if bins < 255:
            binned = binned.astype(np.uint8)
        self._binned[axis] = (col.codes, bins, binned)
        return binned

    def pair_counts(
        self, order, bins: int = 128, ranges: Ranges | None = None, *, mask: np.ndarray | None = None
    ) -> list[np.ndarray]:
        """As :meth:`DataSource.pair_counts`; ``mask`` (the selection already evaluated) skips the evaluation.

        One pair at a time, in blocks of rows (:func:`axeswidget.density.count_bin_pairs`): no n-length
        index array, no compacted copy of the selected rows.
        """
        order, bins = self._order(order, bins)
        if mask is None and ranges:
            mask = self.mask(ranges)
        binned = [self.bins_of(axis, bins) for axis in order]
        return [
            count_bin_pairs(left, right, bins, mask)
            for left, right in zip(binned[:-1], binned[1:], strict=True)
        ]

    def float_axes(self) -> set[str]:
        return {
            a
            for a, c in self.columns.items()
            if c.kind == "number" and pd.api.types.is_float_dtype(self.frame[c.source].dtype)
        }

    def filter_expression(self, ranges: Ranges):
        return selection_expression(check_ranges(ranges, self.columns), self.columns, self.float_axes())

    def selected(self, ranges: Ranges):
        native = self.native
        if isinstance(native, nw.LazyFrame | nw.DataFrame):
            native = native.to_native()
        try:
            table = nw.from_native(native)
        except TypeError:
            table = None
        if isinstance(table, nw.LazyFrame):
            return table.filter(self.filter_expression(ranges)).to_native()
        return take_rows(native, self.frame, self.mask(ranges))
