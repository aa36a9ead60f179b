"""Engine sources that speak SQL: every summary, count, pair count and sample is one query pushed down.

:class:`SqlSource` holds what DuckDB and Spark share; a subclass gives a :class:`Dialect` (quoting and
the few functions that differ), runs a query (``_rows``/``_frame``), maps the engine's
column types to axis kinds (``_kind_of``), and filters its lazy table (``selected``).

The SQL reproduces the in-memory rules exactly:

* wire code of a number: ``rint((clip(v, lo, hi) * 0.5 - lo * 0.5) * (65534 / (hi * 0.5 - lo * 0.5)))``
  in float64 (:func:`axeswidget.encode.quantise`), ``65535`` when NULL or NaN; datetimes and durations
  as nanoseconds since the epoch (tz-aware ones in UTC);
* category band: the label's place in the axis order, capped at the shared band;
* kinds: integers with at most ``INTEGER_DISCRETE_LIMIT`` distinct values are ``integer`` axes; labels
  ordered most frequent first, ties by label; enum types keep their order (like pandas Categorical);
* pair-count bins: :func:`axeswidget.sources.base.axis_bins`, computed for all neighbouring pairs in
  one ``GROUP BY GROUPING SETS`` query;
* sample: the ``k`` rows with the smallest 64-bit hash of ``(seed, axis values...)`` -- the same rows
  for the same seed, however the engine splits its work.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Sequence

import numpy as np
import pandas as pd

from ..inputs import ColumnError
from ..roles import CATEGORY_LIMIT, INTEGER_DISCRETE_LIMIT
from ..selection import Ranges
from ..wire import CATEGORY_BAND_LIMIT, CODE_MAX, CODE_MISSING
from .base import DataSource, EngineColumn, EngineError, Sample, axis_bands, check_ranges
from .expressions import selection_expression


class Dialect:
    """SQL spelling of one engine (the defaults are DuckDB's)."""

    name = "duckdb"

    def quote(self, name: str) -> str:
        return '"' + name.replace('"', '""') + '"'

    def rint(self, x: str) -> str:
        """Round half to even (numpy.rint) for ``x >= 0``; twice as fast in DuckDB as round_even.

        ``x + 0.5`` is exact for the scaled codes (below 2^16), so a tie is ``floor(x + 0.5) - x = 0.5``.
        """
        up = f"floor({x} + 0.5)"
        return f"({up} - CASE WHEN {up} - {x} = 0.5 AND {up} % 2 = 1 THEN 1 ELSE 0 END)"

    def idiv(self, a: str, b: int) -> str:
        return f"(({a}) // {b})"

    def epoch_ns(self, x: str, sql_type: str) -> str:
        if sql_type == "date":
            return f"epoch_ns(CAST({x} AS TIMESTAMP))"
        return f"epoch_ns({x})"

    def hash(self, parts: Sequence[str]) -> str:
        return f"hash({', '.join(parts)})"

    @staticmethod
    def double(value: float) -> str:
        """An exact float64 literal (a string cast, parsed with correct rounding by the engine)."""
        return f"CAST('{float(value)!r}' AS DOUBLE)"

    @staticmethod
    def string(value: str) -> str:
        return "'" + str(value).replace("'", "''") + "'"


def order_labels(labels: list, counts: list[int], keep_order: bool) -> tuple[list, list[int]]:
    """Axis order of labels, as ``encode._category_column`` orders them.

    ``keep_order`` (enum/categorical types): the declared order, or, beyond ``CATEGORY_BAND_LIMIT``
    labels, the most frequent ones in declared order followed by the rest. Otherwise most frequent
    first, ties by label text.
    """
    if keep_order:
        if len(labels) <= CATEGORY_BAND_LIMIT:
            return labels, counts
        top = set(np.argsort(-np.asarray(counts), kind="stable")[:CATEGORY_BAND_LIMIT].tolist())
        order = [i for i in range(len(labels)) if i in top] + [i for i in range(len(labels)) if i not in top]
    else:
        order = sorted(range(len(labels)), key=lambda i: (-counts[i], str(labels[i])))
    return [labels[i] for i in order], [counts[i] for i in order]


class SqlSource(DataSource):
    """A table in a SQL engine. Subclasses set ``dialect`` and the query runners."""

    dialect = Dialect()
    #: how the SQL names the table
    _table = "t"

    # -- engine hooks ------------------------------------------------------------------------------------
    def _rows(self, sql: str) -> list[tuple]:
        """Run a query over the table (named ``self._table`` in the SQL) and return its rows."""
        raise NotImplementedError

    def _frame(self, sql: str) -> pd.DataFrame:
        """Run a query over the table and return a pandas frame."""
        raise NotImplementedError

    def _schema(self) -> list[tuple[str, str, object]]:
        """``(column name, type text, engine type)`` per column of the table."""
        raise NotImplementedError

    def _kind_of(self, type_text: str, engine_type) -> tuple[str, str] | None:
        """``(kind, sql_type)`` for a column type, or None when no axis can draw it.

        kind: ``float``/``int``/``number`` (numbers), ``category``, ``enum``, ``boolean``, ``datetime``
        (``sql_type`` "timestamp", "timestamptz" or "date"), ``timedelta``.
        """
        raise NotImplementedError

    def _timezone(self) -> str | None:
        return None

    def _run(self, what: str, fn, sql: str):
        try:
            return fn(sql)
        except Exception as err:  # engine errors come in many classes; wrap them all
            raise EngineError(f"axeswidget: {self.engine} failed while {what} ({self.where}): {err}") from err

    # -- opening -----------------------------------------------------------------------------------------
    def _open(self, axes=None) -> None:
        """Read the schema and compute every axis summary; sets ``columns`` and ``n`` only on success."""
        schema = self._schema()
        names = [name for name, _, _ in schema]
        skipped: list[str] = []
        if axes is None:
            wanted = []
            for name, text, etype in schema:
                kind = self._kind_of(text, etype)
                if kind is None:
                    skipped.append(f"{name!r} (type {text}, which cannot be drawn on an axis)")
                else:
                    wanted.append((name, kind))
        else:
            axes = [axes] if isinstance(axes, str) else list(axes)
            types = {name: (text, etype) for name, text, etype in schema}
            wanted = []
            for name in axes:
                if name not in types:
                    known = ", ".join(map(repr, names))
                    raise ColumnError(f"unknown column {name!r}; the table has: {known}")
                if any(name == w for w, _ in wanted):
                    raise ColumnError(f"axes= names column {name!r} twice")
                kind = self._kind_of(*types[name])
                if kind is None:
                    raise ColumnError(
                        f"column {name!r} has type {types[name][0]}, which cannot be drawn on an axis"
                    )
                wanted.append((name, kind))
        columns, n = self._summarise(wanted, skipped, named=axes is not None)
        if not columns:
            raise ColumnError(
                "the table has no column that can be drawn"
                + (f": {'; '.join(skipped)}" if skipped else " (it has no columns)")
            )
        if skipped:
            warnings.warn(f"axeswidget: skipped columns: {'; '.join(skipped)}", stacklevel=4)
        self.columns, self.n = columns, n

    def _summarise(self, wanted, skipped: list[str], named: bool) -> tuple[dict, int]:
        """Domains, missing and infinite counts (one scan), then discrete values and label counts.

        Label columns over the label limit are dropped into ``skipped`` (or raise when ``named``).
        """
        d = self.dialect
        inf = d.double(math.inf)
        exprs = ["count(*)"]
        cols: dict[str, EngineColumn] = {}
        for name, (kind, sql_type) in wanted:
            ident = d.quote(name)
            is_float = kind == "float"
            missing = f"{ident} IS NULL" + (f" OR isnan({ident})" if is_float else "")
            exprs.append(f"sum(CASE WHEN {missing} THEN 1 ELSE 0 END)")
            axis_kind = {"float": "number", "int": "number", "number": "number", "enum": "category"}.get(
                kind, kind
            )
            col = EngineColumn(name=name, kind=axis_kind, source=name, missing=None, is_float=is_float)
            col.ident = ident
            col.sql_type = sql_type
            col.int_type = kind == "int"
            col.enum = kind == "enum"
            if axis_kind == "datetime":
                col.tz = self._timezone() if sql_type == "timestamptz" else None
                col.expr = d.epoch_ns(ident, sql_type)
            elif axis_kind == "timedelta":
                col.expr = d.epoch_ns(ident, sql_type)
            else:
                col.expr = f"CAST({ident} AS DOUBLE)"
            if axis_kind in ("number", "datetime", "timedelta"):
                finite = f"{ident} IS NOT NULL"
                if is_float:
                    finite += f" AND NOT isnan({ident}) AND {ident} <> {inf} AND {ident} <> -{inf}"
                v = f"CASE WHEN {finite} THEN {col.expr} END"
                exprs += [f"min({v})", f"max({v})"]
                if is_float:
                    exprs += [
                        f"sum(CASE WHEN {ident} = -{inf} THEN 1 ELSE 0 END)",
                        f"sum(CASE WHEN {ident} = {inf} THEN 1 ELSE 0 END)",
                    ]
            cols[name] = col
        sql = f"SELECT {', '.join(exprs)} FROM {self._table}"
        row = self._run("summarising the columns", self._rows, sql)[0]
        n = int(row[0])
        i = 1
        for col in cols.values():
            col.missing_count = int(row[i] or 0)
            i += 1
            if col.kind in ("number", "datetime", "timedelta"):
                lo, hi = row[i], row[i + 1]
                i += 2
                col.lo, col.hi = (0.0, 1.0) if lo is None else (float(lo), float(hi))
                if col.is_float:
                    col.neg_inf, col.pos_inf = int(row[i] or 0), int(row[i + 1] or 0)
                    i += 2
        for name, col in list(cols.items()):
            if col.int_type and col.missing_count < n:
                self._discrete(col)
            elif col.kind in ("category", "boolean"):
                try:
                    self._labels(col)
                except ColumnError as err:
                    if named:
                        raise
                    skipped.append(f"{name!r} ({str(err).split(' ', 2)[-1]})")
                    del cols[name]
        return cols, n

    def _discrete(self, col: EngineColumn) -> None:
        sql = (
            f"SELECT DISTINCT {col.ident} FROM {self._table} WHERE {col.ident} IS NOT NULL "
            f"LIMIT {INTEGER_DISCRETE_LIMIT + 1}"
        )
        values = self._run(f"counting the distinct values of column {col.name!r}", self._rows, sql)
        if len(values) <= INTEGER_DISCRETE_LIMIT:
            col.kind, col.discrete = "integer", sorted(int(v[0]) for v in values)

    def _labels(self, col: EngineColumn) -> None:
        sql = (
            f"SELECT {col.ident}, count(*) FROM {self._table} WHERE {col.ident} IS NOT NULL "
            f"GROUP BY {col.ident} LIMIT {CATEGORY_LIMIT + 1}"
        )
        rows = self._run(f"counting the labels of column {col.name!r}", self._rows, sql)
        if len(rows) > CATEGORY_LIMIT:
            raise ColumnError(
                f"column {col.name!r} has more than {CATEGORY_LIMIT} distinct labels; at most "
                f"{CATEGORY_LIMIT} are drawn"
            )
        found = {r[0]: int(r[1]) for r in rows}
        if col.kind == "boolean":
            raw = [v for v in (False, True) if v in found]
            col.labels, col.raw_labels, col.counts = [str(v) for v in raw], raw, [found[v] for v in raw]
            return
        if col.enum:
            raw = list(self._enum_values(col))
            counts = [found.get(v, 0) for v in raw]
        else:
            raw, counts = list(found), list(found.values())
        raw, counts = order_labels(raw, counts, col.enum)
        col.raw_labels, col.labels, col.counts = raw, [str(v) for v in raw], counts

    def _enum_values(self, col: EngineColumn) -> list:
        raise NotImplementedError

    # -- SQL pieces ------------------------------------------------------------------------------------------
    def code_sql(self, axis: str) -> str:
        """SQL for the wire code (0..65535) of one axis."""
        d, col = self.dialect, self.columns[axis]
        if col.kind in ("category", "boolean"):
            shown = min(len(col.labels), CATEGORY_BAND_LIMIT)
            cases = " ".join(
                f"WHEN {col.ident} = {self._literal(col, raw)} THEN {i}"
                for i, raw in enumerate(col.raw_labels[:shown])
            )
            return f"(CASE WHEN {col.ident} IS NULL THEN {CODE_MISSING} {cases} ELSE {shown} END)"
        missing = f"{col.ident} IS NULL" + (f" OR isnan({col.ident})" if col.is_float else "")
        lo, hi, v = col.lo, col.hi, col.expr
        if col.log:
            v, lo, hi = f"ln({v})", math.log(lo), math.log(hi)
        half_span = hi * 0.5 - lo * 0.5
        if half_span > 0:
            clipped = f"least(greatest({v}, {d.double(lo)}), {d.double(hi)})"
            scale = d.double(CODE_MAX / half_span)
            scaled = f"({clipped} * {d.double(0.5)} - {d.double(lo * 0.5)}) * {scale}"
            code = f"CAST({d.rint(scaled)} AS INTEGER)"
        else:
            code = "0"
        return f"(CASE WHEN {missing} THEN {CODE_MISSING} ELSE {code} END)"

    def bin_sql(self, axis: str, bins: int, code: str | None = None) -> str:
        """SQL for the pair-count bin (0..bins) of one axis (rule: :func:`base.axis_bins`).

        ``code`` names a column already holding the axis's wire code (default: computed here).
        """
        col = self.columns[axis]
        code = self.code_sql(axis) if code is None else code
        if col.kind in ("category", "boolean"):
            bands = axis_bands(col)
            b = code if bands <= bins else self.dialect.idiv(f"{code} * {bins}", bands)
        else:
            b = self.dialect.idiv(f"{code} * {bins}", CODE_MISSING)
        return f"(CASE WHEN {code} = {CODE_MISSING} THEN {bins} ELSE {b} END)"

    def _literal(self, col: EngineColumn, value) -> str:
        if isinstance(value, bool | np.bool_):
            return "TRUE" if value else "FALSE"
        return self.dialect.string(value)

    def _number_literal(self, col: EngineColumn, value) -> str:
        if col.kind == "datetime":
            return str(pd.Timestamp(value).value)
        if col.kind == "timedelta":
            return str(int(round(value * 1e9)))
        return self.dialect.double(value)

    def axis_sql(self, col: EngineColumn, items: list) -> str:
        parts = []
        if col.kind in ("category", "boolean"):
            picked = [col.raw_labels[col.labels.index(i)] for i in items if i is not None]
            if picked:
                parts.append(f"{col.ident} IN ({', '.join(self._literal(col, v) for v in picked)})")
        else:
            for lo, hi in (i for i in items if i is not None):
                sides = [f"{col.ident} IS NOT NULL"] + ([f"NOT isnan({col.ident})"] if col.is_float else [])
                if lo is not None:
                    sides.append(f"{col.expr} >= {self._number_literal(col, lo)}")
                if hi is not None:
                    sides.append(f"{col.expr} <= {self._number_literal(col, hi)}")
                parts.append(" AND ".join(sides))
        if None in items:
            parts.append(f"{col.ident} IS NULL" + (f" OR isnan({col.ident})" if col.is_float else ""))
        return " OR ".join(f"({p})" for p in parts)

    def filter_sql(self, ranges: Ranges) -> str:
        """The selection as a WHERE condition in this engine's SQL (``TRUE`` when nothing is selected)."""
        ranges = check_ranges(ranges, self.columns)
        parts = [self.axis_sql(self.columns[a], items) for a, items in ranges.items() if items]
        if not parts:
            return "TRUE"
        return " AND ".join(f"({p})" for p in parts)

    def filter_expression(self, ranges: Ranges):
        floats = {a for a, c in self.columns.items() if c.is_float}
        return selection_expression(check_ranges(ranges, self.columns), self.columns, floats)

    # -- protocol ------------------------------------------------------------------------------------------
    def prepare(self, ranges: Ranges) -> None:
        """Count the selection now (an engine error is raised here); :meth:`count` then reuses it."""
        where = self.filter_sql(ranges)
        self._counted = (where, self._count_where(where))

    def count(self, ranges: Ranges) -> int:
        where = self.filter_sql(ranges)
        counted = getattr(self, "_counted", None)
        if counted is not None and counted[0] == where:
            return counted[1]
        return self._count_where(where)

    def _count_where(self, where: str) -> int:
        if where == "TRUE":
            return self.n
        sql = f"SELECT count(*) FROM {self._table} WHERE {where}"
        rows = self._run("counting the selected rows", self._rows, sql)
        return int(rows[0][0])

    def codes(self, axes: Sequence[str] | None = None) -> dict[str, np.ndarray]:
        axes = self._axes(axes)
        codes = ", ".join(f"{self.code_sql(a)} AS c{i}" for i, a in enumerate(axes))
        sql = f"SELECT {codes} FROM {self._table}"
        frame = self._run("computing wire codes", self._frame, sql)
        return {a: frame[f"c{i}"].to_numpy().astype(np.uint16) for i, a in enumerate(axes)}

    def sample(self, k: int, seed: int = 0) -> Sample:
        k = max(0, min(int(k), self.n))
        axes = list(self.columns)
        idents = [self.columns[a].ident for a in axes]
        codes = [f"{self.code_sql(a)} AS {self.dialect.quote(f'__code{i}')}" for i, a in enumerate(axes)]
        order = self.dialect.hash([str(int(seed))] + idents)
        sql = (
            f"SELECT {', '.join(idents + codes)} FROM {self._table} "
            f"ORDER BY {order}, {', '.join(idents)} LIMIT {k}"
        )
        frame = self._run(f"drawing a sample of {k} rows", self._frame, sql)
        out = {a: frame[f"__code{i}"].to_numpy().astype(np.uint16) for i, a in enumerate(axes)}
        for a, c in out.items():
            self.columns[a].codes = c
        rows = frame[[c.source for c in self.columns.values()]].reset_index(drop=True)
        return Sample(codes=out, rows=rows)

    def pair_counts(self, order, bins: int = 128, ranges: Ranges | None = None) -> list[np.ndarray]:
        order, bins = self._order(order, bins)
        if len(order) < 2:
            return []
        where = self.filter_sql(ranges or {})
        codes = ", ".join(f"{self.code_sql(a)} AS c{i}" for i, a in enumerate(order))
        binned = ", ".join(f"{self.bin_sql(a, bins, f'c{i}')} AS b{i}" for i, a in enumerate(order))
        sets = ", ".join(f"(b{i}, b{i + 1})" for i in range(len(order) - 1))
        cols = ", ".join(f"b{i}" for i in range(len(order)))
        sql = (
            f"SELECT {cols}, count(*) AS n FROM (SELECT {binned} FROM "
            f"(SELECT {codes} FROM {self._table} WHERE {where}) AS coded) AS binned "
            f"GROUP BY GROUPING SETS ({sets})"
        )
        frame = self._run("counting rows per pair of bins", self._frame, sql)
        side = bins + 1
        out = [np.zeros((side, side), dtype=np.int64) for _ in range(len(order) - 1)]
        present = frame[[f"b{i}" for i in range(len(order))]].notna().to_numpy()
        counts = frame["n"].to_numpy(dtype=np.int64)
        for p in range(len(order) - 1):
            rows = present[:, p] & present[:, p + 1] & (present.sum(axis=1) == 2)
            left = frame[f"b{p}"].to_numpy()[rows].astype(np.int64)
            right = frame[f"b{p + 1}"].to_numpy()[rows].astype(np.int64)
            np.add.at(out[p], (left, right), counts[rows])
        return out
