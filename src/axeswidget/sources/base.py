"""The data-source boundary: what the widget asks of a table, whoever holds its rows.

A :class:`DataSource` answers, for the axes it was opened with:

* ``n`` -- the exact row count; ``columns`` -- one :class:`axeswidget.encode.Column` per axis (name,
  kind, ``lo``/``hi`` domain, labels with counts, missing count, tz, discrete values), so that
  :func:`axeswidget.selection.normalise` works on them unchanged;
* :meth:`DataSource.codes` -- wire codes (uint16, the rule of :func:`axeswidget.encode.quantise` and of
  category bands) for every row; :meth:`DataSource.sample` -- the codes and values of a seeded sample;
* :meth:`DataSource.count` -- the exact count of a normalised selection; :meth:`DataSource.mask` -- its
  boolean mask, only where the rows are in memory (``in_memory``);
* :meth:`DataSource.pair_counts` -- binned pair counts of neighbouring axes, for all rows or for the
  selected rows (bins as in :mod:`axeswidget.density`, see :func:`axis_bins`);
* :meth:`DataSource.selected` -- the selected rows (in memory: the input's own type; engine: the
  engine's lazy filtered table, nothing collected);
* :meth:`DataSource.filter_expression` / :meth:`DataSource.filter_sql` -- the selection as the
  engine's own filter (a narwhals expression; SQL text for SQL engines).

Every selection argument is a *normalised* selection (``normalise(ranges, source.columns)``).

Binning of pair counts (shared by every source): a number/integer/datetime/timedelta axis bins its
wire code ``c`` as ``c * bins // 65535`` (:func:`axeswidget.density.bin_codes`); a category/boolean axis
bins its band ``b`` (``0..shown``, the last one the shared band of rarer labels) as ``b`` itself when
the axis has at most ``bins`` bands, else as ``b * bins // bands``; a missing value goes to bin
``bins``. A matrix is ``(bins + 1) x (bins + 1)`` int64, rows = left axis.
"""

from __future__ import annotations

import abc
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..density import MAX_PAIR_BINS, _check_bins, bin_codes
from ..encode import Column
from ..selection import Ranges
from ..wire import CATEGORY_BAND_LIMIT, CODE_MISSING

__all__ = [
    "DataSource",
    "EngineColumn",
    "EngineError",
    "NotInMemoryError",
    "Sample",
    "SourceError",
    "axis_bands",
    "axis_bins",
]


class SourceError(ValueError):
    """A table that cannot be opened as a source; the message names the path or column."""


class EngineError(RuntimeError):
    """A query failed inside the engine; the message says what was asked and of which column/file."""


class NotInMemoryError(RuntimeError):
    """A request that needs every row in memory (a mask) made of an engine-held table."""


@dataclass
class EngineColumn(Column):
    """An axis whose rows live in an engine: counts are stored, not computed from per-row arrays.

    ``missing``, ``values``, ``label_codes`` stay None; ``codes`` holds the codes of the last sample
    (set by :meth:`DataSource.sample`) so that ``spec()`` can ship them.
    """

    missing_count: int = 0
    neg_inf: int = 0
    pos_inf: int = 0
    is_float: bool = False  # NaN can occur (NaN counts as missing)
    ident: str = ""  # the column's quoted identifier in the engine's SQL
    expr: str = ""  # SQL of its value in axis units (float64; int64 ns for datetimes/durations)
    sql_type: str = ""  # "timestamp", "timestamptz", "date", ... (engine-neutral type word)
    int_type: bool = False  # an integer type (may become a discrete ``integer`` axis)
    enum: bool = False  # an enum type: labels keep the declared order

    @property
    def n_missing(self) -> int:
        return int(self.missing_count)

    def infinite(self) -> tuple[int, int]:
        return int(self.neg_inf), int(self.pos_inf)

    def encode(self) -> None:  # codes come from the engine, not from in-memory values
        return None

    def spec(self) -> dict:
        """As :meth:`Column.spec`, with the sample's codes (none before the first sample)."""
        if self.codes is None:
            self.codes = np.zeros(0, dtype=np.uint16)
        return super().spec()


@dataclass
class Sample:
    """A seeded sample of rows: their wire codes per axis and their values (a pandas frame)."""

    codes: dict[str, np.ndarray]
    rows: pd.DataFrame
    positions: np.ndarray | None = field(default=None)  # row positions (in-memory sources only)

    def __len__(self) -> int:
        return len(self.rows)


def axis_bands(col: Column) -> int:
    """Number of bands of a category/boolean axis: shown labels plus one shared band if any rest."""
    shown = min(len(col.labels), CATEGORY_BAND_LIMIT)
    return shown + (1 if len(col.labels) > shown else 0)


def axis_bins(col: Column, codes: np.ndarray, bins: int) -> np.ndarray:
    """Bin index per row (uint16, ``0..bins``) of an axis's wire codes, by the rule in the module doc."""
    bins = _check_bins(bins, MAX_PAIR_BINS)
    if col.kind not in ("category", "boolean"):
        return bin_codes(codes, bins)
    codes = np.asarray(codes, dtype=np.uint16)
    bands = axis_bands(col)
    missing = codes == CODE_MISSING
    b = codes.astype(np.int64)
    if bands > bins:
        b = b * bins // bands
    b[missing] = bins
    return b.astype(np.uint16)


class DataSource(abc.ABC):
    """One table shown on the axes. Subclasses: MemorySource, DuckDBSource, SparkSource."""

    #: True when every row is in this process (a mask can be given)
    in_memory: bool = False
    #: the engine's name ("memory", "duckdb", "spark")
    engine: str = ""

    n: int
    columns: dict[str, Column]
    native: object  # the table the user gave (a DataFrame, a relation, ...)

    def __repr__(self) -> str:
        return f"<{type(self).__name__} {self.n} rows, axes {list(self.columns)}>"

    # -- data ------------------------------------------------------------------------------------------
    @abc.abstractmethod
    def codes(self, axes: Sequence[str] | None = None) -> dict[str, np.ndarray]:
        """Wire codes (uint16) of every row per axis, in the table's row order.

        Engine sources fetch ``2 * n`` bytes per axis for this, in the order the engine scans (Parquet
        files in name order); above the scale threshold ask for :meth:`sample` instead.
        """

    @abc.abstractmethod
    def sample(self, k: int, seed: int = 0) -> Sample:
        """Codes and values of ``min(k, n)`` rows chosen by ``seed`` (the same rows for the same seed)."""

    def background(self) -> DataSource:
        """The source to query from a background thread (itself unless the engine needs another handle)."""
        return self

    # -- selection -------------------------------------------------------------------------------------
    def prepare(self, ranges: Ranges) -> None:
        """Evaluate a selection ahead (so that a failure is raised before anything changes).

        The next :meth:`count`/:meth:`mask` of the same selection reuses the work.
        """
        return None  # noqa: B027 (optional hook: sources without work to do ahead keep it)

    @abc.abstractmethod
    def count(self, ranges: Ranges) -> int:
        """Exact number of rows in a normalised selection."""

    def mask(self, ranges: Ranges) -> np.ndarray:
        """Boolean mask of a normalised selection (in-memory sources only)."""
        raise NotInMemoryError(
            f"the table lives in {self.engine}, so there is no per-row mask in this process; use "
            "count for the number of rows, selected for the rows (a lazy table), or filter_expression"
        )

    @abc.abstractmethod
    def pair_counts(
        self, order: Sequence[str], bins: int = 128, ranges: Ranges | None = None
    ) -> list[np.ndarray]:
        """One count matrix per neighbouring pair of ``order``; with ``ranges``, the selected rows only."""

    @abc.abstractmethod
    def selected(self, ranges: Ranges):
        """The selected rows: the input's own type in memory; the engine's lazy filtered table."""

    @abc.abstractmethod
    def filter_expression(self, ranges: Ranges):
        """The selection as a narwhals expression (``nw.from_native(table).filter(expr)``)."""

    def filter_sql(self, ranges: Ranges) -> str:
        """The selection as a SQL WHERE condition in the engine's dialect (SQL engines only)."""
        raise SourceError(
            f"a {self.engine} table has no SQL dialect; use filter_expression (narwhals) or to_query (pandas)"
        )

    # -- helpers ---------------------------------------------------------------------------------------
    def _axes(self, axes: Sequence[str] | None) -> list[str]:
        axes = list(self.columns) if axes is None else list(axes)
        unknown = [a for a in axes if a not in self.columns]
        if unknown:
            raise SourceError(f"unknown axis {unknown[0]!r}; the axes are: {', '.join(self.columns)}")
        return axes

    def _order(self, order: Sequence[str], bins: int) -> tuple[list[str], int]:
        bins = _check_bins(bins, MAX_PAIR_BINS)
        order = self._axes(order)
        if len(set(order)) != len(order):
            raise ValueError(f"order names an axis more than once: {order}")
        return order, bins


def check_ranges(ranges: Ranges | None, columns: Mapping[str, Column]) -> Ranges:
    """An empty selection for None; otherwise the ranges as given (they must be normalised already)."""
    if not ranges:
        return {}
    unknown = [a for a in ranges if a not in columns]
    if unknown:
        raise SourceError(f"unknown axis {unknown[0]!r} in the selection; the axes are: {', '.join(columns)}")
    return ranges
