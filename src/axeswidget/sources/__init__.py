"""Data sources: one boundary between the widget and the rows, wherever they live.

:func:`open_source` is the one place that decides how a table is held:

* an eager in-memory table (pandas, polars DataFrame, pyarrow Table/RecordBatch, a dict of arrays, a
  2-D numpy array, an Arrow stream, or anything else narwhals reads eagerly) -> :class:`MemorySource`
  (today's in-memory code, identical results);
* a polars LazyFrame -> collected into a :class:`MemorySource` (polars runs in this process), whose
  ``selected`` filters the LazyFrame lazily;
* a DuckDB relation, a path/glob/folder of Parquet or CSV files -> :class:`DuckDBSource` (out of core);
* a PySpark DataFrame -> :class:`SparkSource` (every summary computed by Spark);
* an existing :class:`DataSource` -> itself.

Ibis tables and Dask DataFrames are not taken yet (they raise a clear TypeError): narwhals reads them
lazily, but each needs its own SQL/expression runner and neither package is among the test
dependencies.

The protocol (:class:`DataSource`, see :mod:`axeswidget.sources.base`): ``n``, ``columns``,
``in_memory``, ``engine``, ``native``; ``codes(axes=None)``, ``sample(k, seed=0)``, ``count(ranges)``,
``mask(ranges)``, ``pair_counts(order, bins=128, ranges=None)``, ``selected(ranges)``,
``filter_expression(ranges)``, ``filter_sql(ranges)``. Every ``ranges`` is normalised first with
``axeswidget.selection.normalise(ranges, source.columns)``.
"""

from __future__ import annotations

import os
from pathlib import Path

import narwhals as nw

from .base import DataSource, EngineColumn, EngineError, NotInMemoryError, Sample, SourceError, axis_bins
from .memory import MemorySource

__all__ = [
    "DataSource",
    "DuckDBSource",
    "EngineColumn",
    "EngineError",
    "MemorySource",
    "NotInMemoryError",
    "Sample",
    "SourceError",
    "SparkSource",
    "axis_bins",
    "open_source",
]


def __getattr__(name):  # the engine modules import their engines only when asked for
    if name == "DuckDBSource":
        from .duckdb_source import DuckDBSource

        return DuckDBSource
    if name == "SparkSource":
        from .spark_source import SparkSource

        return SparkSource
    raise AttributeError(name)


def open_source(data, axes=None, names=None) -> DataSource:
    """The data source for a table, a path of files, or an engine table (see the module docstring)."""
    if isinstance(data, DataSource):
        return data
    if isinstance(data, nw.DataFrame | nw.LazyFrame):
        data = data.to_native()  # a narwhals wrapper: the rows come back in the wrapped type
    if isinstance(data, str | os.PathLike) or (
        isinstance(data, list | tuple) and data and all(isinstance(p, str | os.PathLike) for p in data)
    ):
        from .duckdb_source import DuckDBSource

        return DuckDBSource.open_files(data if not isinstance(data, Path) else str(data), axes)
    module = type(data).__module__.split(".")[0]
    if module == "duckdb":
        from .duckdb_source import DuckDBSource

        return DuckDBSource(data, axes)
    if module == "pyspark":
        from .spark_source import SparkSource

        return SparkSource(data, axes)
    if module == "polars" and type(data).__name__ == "LazyFrame":
        return MemorySource(data.collect(), axes, names, lazy=data)
    if module in ("ibis", "dask", "sqlframe", "modin"):
        raise TypeError(
            f"axeswidget: {type(data).__name__} tables from {module} are not supported yet; collect "
            "the rows into pandas/polars/pyarrow, or write them to Parquet and open the files"
        )
    return MemorySource(data, axes, names)
