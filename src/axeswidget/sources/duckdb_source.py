"""DuckDB as the in-process, out-of-core engine: Parquet/CSV files (a path, a folder or a glob) or a
DuckDB relation, shown without loading the rows into Python.

``DuckDBSource.open_files("data/*.parquet")`` (also a folder -- every Parquet file below it -- or a list
of paths; ``.csv``/``.tsv``/``.txt`` files are read as CSV) and ``DuckDBSource(relation)`` give a
:class:`~axeswidget.sources.base.DataSource` whose summaries, exact counts, pair counts, sample and
codes are SQL run by DuckDB (see :mod:`axeswidget.sources.sql`). ``selected`` returns the relation
filtered by the selection (lazy: nothing runs until it is read); ``filter_sql`` gives the WHERE text.

Kinds from the schema: integer/float/decimal types -> numbers (integers with few values -> discrete
``integer`` axes), VARCHAR -> category, ENUM -> category in its declared order, BOOLEAN -> boolean,
TIMESTAMP/DATE -> datetime (TIMESTAMPTZ in the connection's TimeZone), INTERVAL -> timedelta. Lists,
structs, maps, blobs, UUIDs, times and other types are skipped with one warning, or raise
:class:`~axeswidget.encode.ColumnError` naming the column when it is named in ``axes``.
"""

from __future__ import annotations

import copy
import glob
import os
import re
import threading
import uuid

import pandas as pd

from .base import EngineError, SourceError
from .sql import Dialect, SqlSource

_FLOATS = {"FLOAT", "DOUBLE", "REAL"}
_INTS = {
    "TINYINT", "SMALLINT", "INTEGER", "BIGINT", "UTINYINT", "USMALLINT", "UINTEGER", "UBIGINT",
}  # fmt: skip
_CSV = (".csv", ".tsv", ".txt", ".csv.gz", ".tsv.gz")


def find_files(path) -> list[str]:
    """The files a path, folder, glob or list of these names; SourceError naming the path when none."""
    if isinstance(path, list | tuple):
        out = []
        for p in path:
            out += find_files(p)
        return out
    path = os.fspath(path)
    if os.path.isdir(path):
        found = sorted(glob.glob(os.path.join(path, "**", "*.parquet"), recursive=True))
        found += sorted(glob.glob(os.path.join(path, "**", "*.csv"), recursive=True))
    elif glob.has_magic(path):
        found = sorted(p for p in glob.glob(path, recursive=True) if os.path.isfile(p))
    else:
        found = [path] if os.path.isfile(path) else []
    if not found:
        raise SourceError(f"axeswidget: no files found at {path!r}")
    return found


_RELATION_LOCK = threading.RLock()


def _quiet(connection):
    """A connection of the widget's own: no progress bar printed into the notebook by its queries."""
    connection.execute("SET enable_progress_bar = false")
    return connection


def read_files(path, connection=None):
    """``(relation, connection, description)`` of Parquet or CSV files; nothing is read but the schema."""
    import duckdb

    files = find_files(path)
    con = connection if connection is not None else _quiet(duckdb.connect())
    csv = [f for f in files if f.lower().endswith(_CSV)]
    where = f"files {path!r}" if len(files) > 1 else f"file {files[0]!r}"
    try:
        if csv and len(csv) == len(files):
            relation = con.read_csv(files)
        elif csv:
            raise SourceError(f"axeswidget: {path!r} mixes CSV and Parquet files; open one kind at once")
        else:
            relation = con.read_parquet(files)
    except duckdb.Error as err:
        raise EngineError(f"axeswidget: DuckDB cannot read {where}: {err}") from err
    return relation, con, where


class DuckDBSource(SqlSource):
    """A DuckDB relation (or files opened with :meth:`open_files`) as a data source."""

    engine = "duckdb"
    dialect = Dialect()

    def __init__(self, relation, axes=None, *, connection=None, where: str | None = None):
        import duckdb

        if not isinstance(relation, duckdb.DuckDBPyRelation):
            got = type(relation).__name__
            raise TypeError(f"axeswidget: DuckDBSource needs a DuckDB relation, got {got}")
        self.native = relation
        self.connection = connection
        self.where = where or "a DuckDB relation"
        self.files = None  # the path given to open_files (the background worker reopens it)
        # a DuckDB connection runs one query at a time; the connection of a relation is not known, so
        # every relation source takes turns on one lock (files get their own connection and lock)
        self._lock = _RELATION_LOCK if connection is None else threading.RLock()
        self._worker = None
        self._table = f"axeswidget_{uuid.uuid4().hex[:12]}"  # the relation's name inside the queries
        self._open(axes)

    @classmethod
    def open_files(cls, path, axes=None, *, connection=None) -> DuckDBSource:
        """Open Parquet or CSV files (a path, folder, glob or list) with DuckDB, out of core."""
        relation, con, where = read_files(path, connection)
        source = cls(relation, axes, connection=con, where=where)
        source.files = path
        return source

    @property
    def shares_connection(self) -> bool:
        """True when background queries run on the user's own connection (a relation the user made)."""
        return self.files is None or self.connection is None

    def background(self) -> DuckDBSource:
        """The source for queries from another thread.

        Files opened here are read again on a cursor of the connection (its own connection to the
        same database), so background queries never wait for, or block, the ones of the notebook. A
        relation the user made is tied to its connection: background queries take turns with the
        widget's own (one lock); the user's own queries on that connection while one runs get
        DuckDB's "connection is busy" error.
        """
        if self.files is None or self.connection is None:
            return self
        if self._worker is None:
            worker = copy.copy(self)
            cursor = _quiet(self.connection.cursor())
            worker.native = read_files(self.files, cursor)[0]
            worker.connection, worker._lock, worker._worker = cursor, threading.RLock(), None
            self._worker = worker
        return self._worker

    # -- engine hooks ------------------------------------------------------------------------------------
    def _rows(self, sql: str) -> list[tuple]:
        with self._lock:
            return self.native.query(self._table, sql).fetchall()

    def _frame(self, sql: str) -> pd.DataFrame:
        with self._lock:
            return self.native.query(self._table, sql).df()

    def _schema(self):
        with self._lock:
            return [(n, str(t), t) for n, t in zip(self.native.columns, self.native.types, strict=True)]

    def _timezone(self) -> str | None:
        rows = self._run("reading the time zone", self._rows, "SELECT current_setting('TimeZone')")
        return str(rows[0][0])

    def _kind_of(self, text: str, etype):
        text = text.upper()
        if text in _FLOATS:
            return "float", "double"
        if text in _INTS:
            return "int", "integer"
        if text in ("HUGEINT", "UHUGEINT") or text.startswith("DECIMAL"):
            return "number", "decimal"
        if text == "VARCHAR":
            return "category", "varchar"
        if text.startswith("ENUM("):
            return "enum", "enum"
        if text == "BOOLEAN":
            return "boolean", "boolean"
        if text == "DATE":
            return "datetime", "date"
        if text in ("TIMESTAMP WITH TIME ZONE", "TIMESTAMPTZ"):
            return "datetime", "timestamptz"
        if re.fullmatch(r"TIMESTAMP(_S|_MS|_NS)?", text):
            return "datetime", "timestamp"
        if text == "INTERVAL":
            return "timedelta", "interval"
        return None

    def _enum_values(self, col) -> list:
        sql = f"SELECT enum_range(NULL::{dict(self._schema_types())[col.name]})"
        return list(self._run(f"reading the labels of enum column {col.name!r}", self._rows, sql)[0][0])

    def _schema_types(self):
        with self._lock:
            return [(n, str(t)) for n, t in zip(self.native.columns, self.native.types, strict=True)]

    # -- rows ------------------------------------------------------------------------------------------
    def selected(self, ranges):
        """The relation filtered by the selection (lazy: a DuckDB relation, nothing fetched)."""
        where = self.filter_sql(ranges)
        if where == "TRUE":
            return self.native
        with self._lock:
            return self.native.filter(where)
