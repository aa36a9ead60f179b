"""A selection written as a pandas ``DataFrame.query`` expression — exactly right, or refused clearly."""

from __future__ import annotations

import datetime as _dt
import math
import unicodedata
from collections.abc import Mapping

import numpy as np
import pandas as pd

from .encode import Column
from .selection import Ranges, SelectionError


def _quote(col: Column, others=()) -> str:
    """The column's label quoted for DataFrame.query, or SelectionError when query cannot name it.

    ``others`` are all column labels of the table: the name is tried on a one-row table with those
    labels, so a name pandas would read as another column (or not at all) is refused.
    """
    label = col.source
    if not isinstance(label, str):
        raise SelectionError(
            f"column {col.name!r}: its label {label!r} is not a string, so DataFrame.query cannot refer to it"
        )
    if label in ("inf", "Inf"):
        raise SelectionError(
            f"column {label!r}: DataFrame.query reads this name as infinity; rename the column"
        )
    if "`" in label:
        raise SelectionError(f"column {label!r}: a name with a backtick cannot be quoted in DataFrame.query")
    odd = [ch for ch in label if unicodedata.category(ch)[0] in "CMZ" and ch != " "]
    if odd or not label.strip():
        what = f"the character {odd[0]!r}" if odd else "nothing but spaces"
        raise SelectionError(
            f"column {label!r}: the name holds {what}, which DataFrame.query cannot name; rename the column"
        )
    labels = list(others) if others else [label]
    if labels.count(label) != 1:
        raise SelectionError(f"column {label!r}: the name appears more than once, so query cannot name it")
    probe = pd.DataFrame([list(range(len(labels)))], columns=pd.Index(labels, dtype=object))
    try:
        found = len(probe.query(f"`{label}` == {labels.index(label)}")) == 1
    except Exception:
        found = False
    if not found:
        raise SelectionError(
            f"column {label!r}: DataFrame.query cannot tell this name from the others; rename the column"
        )
    return f"`{label}`"


def _literal(value, col: Column) -> str:
    if col.kind == "datetime":
        return repr(pd.Timestamp(value).isoformat())
    if col.kind == "timedelta":
        return repr(str(pd.Timedelta(int(round(value * 1e9)), unit="ns")))
    if isinstance(value, int):
        return repr(value)
    return repr(float(value))


def _label_literal(value, col: Column):
    """A Python literal for one category value as DataFrame.query compares it, or SelectionError."""
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, str | bool | int):
        return value
    if isinstance(value, float) and math.isfinite(value):
        return value
    if isinstance(value, pd.Timestamp | _dt.datetime):
        return str(pd.Timestamp(value))  # query compares a categorical of dates with their text
    raise SelectionError(
        f"column {col.name!r}: its category {value!r} ({type(value).__name__}) cannot be written in a "
        "DataFrame.query expression"
    )


def axis_query(col: Column, items: list, others=()) -> str:
    """A DataFrame.query expression for one axis's items (OR of its parts)."""
    name = _quote(col, others)
    parts = []
    if col.kind in ("category", "boolean"):
        picked = [col.raw_labels[col.labels.index(i)] for i in items if i is not None]
        if picked:
            values = [_label_literal(v, col) for v in picked]
            parts.append(f"{name} in {values!r}")
    else:
        for lo, hi in (i for i in items if i is not None):
            sides = ([f"{name} >= {_literal(lo, col)}"] if lo is not None else []) + (
                [f"{name} <= {_literal(hi, col)}"] if hi is not None else []
            )
            parts.append(" and ".join(sides) if sides else f"{name}.notna()")
    if None in items:
        parts.append(f"{name}.isna()")
    if len(parts) == 1:
        return parts[0]
    return " or ".join(f"({p})" for p in parts)


def to_query(ranges: Ranges, columns: Mapping[str, Column], others=()) -> str:
    """A pandas ``DataFrame.query`` expression that picks exactly the rows of a selection.

    Axes combine with ``and``, items on one axis with ``or``. An empty selection gives an expression
    true for every row (``isna() | notna()`` of the first axis query can name). ``others`` are all
    column labels of the table, so that names pandas would confuse are refused.
    Raises :class:`SelectionError` naming the column when query cannot express the selection.
    """
    parts = [axis_query(columns[axis], items, others) for axis, items in ranges.items() if items]
    if not parts:
        errors = []
        for col in columns.values():
            try:
                name = _quote(col, others)
            except SelectionError as err:
                errors.append(str(err))
                continue
            return f"{name}.isna() | {name}.notna()"
        raise SelectionError("no axis can be named in DataFrame.query: " + "; ".join(errors))
    if len(parts) == 1:
        return parts[0]
    return " and ".join(f"({p})" for p in parts)
