"""Spark as the distributed engine: a PySpark DataFrame shown with every summary computed by Spark.

``SparkSource(df)`` registers the DataFrame as a temporary view of its session (a unique name) and
runs the queries of :mod:`axeswidget.sources.sql` in Spark SQL. Only the sample (``k`` rows), the
summaries (one row), label counts and pair counts (at most ``(bins + 1)^2`` rows per pair) come back to
Python; no row of the table is collected otherwise. ``selected`` is ``df.filter(<WHERE text>)``, a lazy
DataFrame.

Kinds from the schema: byte/short/int/long -> numbers (few values -> discrete ``integer`` axes),
float/double/decimal -> numbers, string -> category, boolean -> boolean, timestamp -> datetime in the
session time zone (``spark.sql.session.timeZone``), timestamp_ntz and date -> datetime without a time
zone. Intervals, arrays, maps, structs and binary are skipped with one warning, or raise
:class:`~axeswidget.encode.ColumnError` naming the column when it is named in ``axes``.
"""

from __future__ import annotations

import uuid

import pandas as pd

from .sql import Dialect, SqlSource


class SparkDialect(Dialect):
    name = "spark"

    def quote(self, name: str) -> str:
        return "`" + name.replace("`", "``") + "`"

    def rint(self, x: str) -> str:
        return f"rint({x})"

    def idiv(self, a: str, b: int) -> str:
        return f"(({a}) div {b})"

    def epoch_ns(self, x: str, sql_type: str) -> str:
        if sql_type == "timestamptz":  # an instant: microseconds since the epoch in UTC
            return f"(unix_micros({x}) * 1000)"
        # wall-clock time without a zone (timestamp_ntz, date): read as UTC, whatever the session zone
        epoch = "TIMESTAMP_NTZ '1970-01-01 00:00:00'"
        return f"(timestampdiff(MICROSECOND, {epoch}, CAST({x} AS TIMESTAMP_NTZ)) * 1000)"

    def hash(self, parts) -> str:
        return f"xxhash64({', '.join(parts)})"

    @staticmethod
    def string(value: str) -> str:
        return "'" + str(value).replace("\\", "\\\\").replace("'", "\\'") + "'"


_NUMBERS = {
    "tinyint": "int",
    "smallint": "int",
    "int": "int",
    "bigint": "int",
    "float": "float",
    "double": "float",
}


def _describe(frame) -> str:
    """Name the files behind a DataFrame (for error messages), or say it is a Spark DataFrame."""
    try:
        files = frame.inputFiles()
    except Exception:  # not every plan can list its files
        files = []
    if not files:
        return "a Spark DataFrame"
    if len(files) == 1:
        return f"Spark DataFrame of file {files[0]!r}"
    return f"Spark DataFrame of {len(files)} files, first {files[0]!r}"


class SparkSource(SqlSource):
    """A PySpark DataFrame as a data source."""

    engine = "spark"
    dialect = SparkDialect()

    def __init__(self, frame, axes=None, *, where: str | None = None):
        from pyspark.sql import DataFrame

        if not isinstance(frame, DataFrame):
            raise TypeError(f"axeswidget: SparkSource needs a PySpark DataFrame, got {type(frame).__name__}")
        self.native = frame
        self.session = frame.sparkSession
        self.where = where or _describe(frame)
        self._table = f"axeswidget_{uuid.uuid4().hex[:12]}"
        frame.createOrReplaceTempView(self._table)
        self._open(axes)

    # -- engine hooks ------------------------------------------------------------------------------------
    def _rows(self, sql: str) -> list[tuple]:
        return [tuple(r) for r in self.session.sql(sql).collect()]

    def _frame(self, sql: str) -> pd.DataFrame:
        result = self.session.sql(sql)
        rows = result.collect()
        return pd.DataFrame([tuple(r) for r in rows], columns=result.columns)

    def _schema(self):
        return [(f.name, f.dataType.simpleString(), f.dataType) for f in self.native.schema.fields]

    def _timezone(self) -> str | None:
        return self.session.conf.get("spark.sql.session.timeZone")

    def _kind_of(self, text: str, etype):
        if text in _NUMBERS:
            return _NUMBERS[text], "integer" if _NUMBERS[text] == "int" else "double"
        if text.startswith("decimal"):
            return "number", "decimal"
        if text == "string" or text.startswith(("varchar", "char")):
            return "category", "varchar"
        if text == "boolean":
            return "boolean", "boolean"
        if text == "timestamp":
            return "datetime", "timestamptz"
        if text == "timestamp_ntz":
            return "datetime", "timestamp"
        if text == "date":
            return "datetime", "date"
        return None

    # -- rows ------------------------------------------------------------------------------------------
    def selected(self, ranges):
        """The DataFrame filtered by the selection (lazy: a Spark DataFrame, nothing collected)."""
        where = self.filter_sql(ranges)
        return self.native if where == "TRUE" else self.native.filter(where)
