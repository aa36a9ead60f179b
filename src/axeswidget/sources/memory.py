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

from ..encode import encode_frame, to_frame
from ..evaluate import MaskEvaluator
from ..selection import Ranges
from .base import DataSource, Sample, axis_bins, check_ranges, count_pairs
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


def eager_frame(data, names=None) -> pd.DataFrame:
    """A pandas frame from any eager table (narwhals reads the types ``encode.to_frame`` does not)."""
    try:
        return to_frame(data, names)
    except TypeError:
        pass
    try:
        table = nw.from_native(data, eager_only=True)
    except TypeError:
        return to_frame(data, names)  # raises the usual clear error
    return table.to_pandas()


class MemorySource(DataSource):
    """Rows in this process: pandas frame + encoded columns + incremental mask evaluator."""

    in_memory = True
    engine = "memory"

    def __init__(self, data, axes=None, names=None, *, frame: pd.DataFrame | None = None, lazy=None):
        self.native = data if lazy is None else lazy
        self.frame = eager_frame(data, names) if frame is None else frame
        self.columns = encode_frame(self.frame, axes)
        self.n = len(self.frame)
        self.evaluator = MaskEvaluator(self.columns, self.n)

    def codes(self, axes: Sequence[str] | None = None) -> dict[str, np.ndarray]:
        return {a: self.columns[a].codes for a in self._axes(axes)}

    def sample(self, k: int, seed: int = 0) -> Sample:
        k = max(0, min(int(k), self.n))
        positions = np.sort(np.random.default_rng(seed).choice(self.n, size=k, replace=False))
        codes = {a: c.codes[positions] for a, c in self.columns.items()}
        where = [self.frame.columns.get_loc(c.source) for c in self.columns.values()]
        rows = self.frame.iloc[positions, where]
        return Sample(codes=codes, rows=rows, positions=positions)

    def mask(self, ranges: Ranges) -> np.ndarray:
        return self.evaluator.update(check_ranges(ranges, self.columns))

    def count(self, ranges: Ranges) -> int:
        return int(np.count_nonzero(self.mask(ranges)))

    def pair_counts(self, order, bins: int = 128, ranges: Ranges | None = None) -> list[np.ndarray]:
        order, bins = self._order(order, bins)
        mask = None if not ranges else self.mask(ranges)
        binned = []
        for axis in order:
            b = axis_bins(self.columns[axis], self.columns[axis].codes, bins)
            binned.append(b if mask is None else b[mask])
        return count_pairs(binned, bins)

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
