"""A normalised selection as a narwhals expression, for any table narwhals can read.

``nw.from_native(table).filter(selection_expression(ranges, columns))`` keeps the rows of the
selection, on pandas, polars (eager or lazy), pyarrow, DuckDB relations and PySpark DataFrames alike.
The rules are those of :func:`axeswidget.evaluate.axis_mask`: items on one axis OR-ed, axes AND-ed,
range ends inclusive, ``None`` ends open (taking ``±inf`` in), ``None`` items the missing lane; NaN
counts as missing on float columns.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Mapping

import narwhals as nw
import pandas as pd

from ..encode import Column
from ..selection import Ranges


def _end_value(value, col: Column):
    if value is None:
        return None
    if col.kind == "datetime":
        ts = pd.Timestamp(value)
        return ts.to_pydatetime(warn=False)
    if col.kind == "timedelta":
        return _dt.timedelta(microseconds=round(value * 1e6))
    return value


def axis_expression(col: Column, items: list, is_float: bool) -> nw.Expr:
    """The expression for one axis's items (OR of its parts)."""
    x = nw.col(col.source)
    parts = []
    if col.kind in ("category", "boolean"):
        picked = [col.raw_labels[col.labels.index(i)] for i in items if i is not None]
        if picked:
            parts.append(x.is_in([v.item() if hasattr(v, "item") else v for v in picked]))
    else:
        for lo, hi in (i for i in items if i is not None):
            lo, hi = _end_value(lo, col), _end_value(hi, col)
            hit = ~x.is_null()
            if is_float:
                hit = hit & ~x.is_nan()
            if lo is not None:
                hit = hit & (x >= lo)
            if hi is not None:
                hit = hit & (x <= hi)
            parts.append(hit)
    if None in items:
        parts.append(x.is_null() | x.is_nan() if is_float else x.is_null())
    out = parts[0]
    for p in parts[1:]:
        out = out | p
    return out


def selection_expression(ranges: Ranges, columns: Mapping[str, Column], float_axes=()) -> nw.Expr:
    """The narwhals expression picking exactly the rows of a normalised selection.

    ``float_axes`` names the axes held as floats (where NaN is a missing value). An empty selection
    gives ``nw.lit(True)``.
    """
    parts = [
        axis_expression(columns[axis], items, axis in float_axes) for axis, items in ranges.items() if items
    ]
    if not parts:
        return nw.lit(True)
    out = parts[0]
    for p in parts[1:]:
        out = out & p
    return out
