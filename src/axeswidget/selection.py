"""The selection: a plain description of what is picked on each axis, and its exact evaluation.

A selection is ``{axis name: [item, ...]}``. An item is

* ``[lo, hi]`` — a range on a number, integer, datetime or timedelta axis, both ends inclusive.
  On an ``integer`` (discrete) axis a single value ``v`` stands for ``[v, v]``: ``{"target": 1}``,
  ``{"target": [1]}`` and ``{"target": [0, [2, 3]]}`` are accepted (two bare numbers stay the range
  shorthand ``[lo, hi]``).
  ``None`` as an end leaves that side open (and takes in ``±inf`` values pinned at that end).
  Datetime ends are ISO 8601 strings (timezone offset included for tz-aware axes); timedelta ends
  are seconds;
* a label (str) — a category on a category or boolean axis (``"True"``/``"False"`` for booleans);
  ``{"rest": True}`` stands for every label beyond the axis's bands (the page's shared band) and is
  replaced by those labels;
* ``None`` — the axis's missing-values lane.

Items on one axis combine with OR, axes combine with AND. An axis without items does not filter.

Evaluation is kept apart from the description: :mod:`axeswidget.evaluate` turns a selection into a
boolean mask over the in-memory columns; :mod:`axeswidget.query` writes it as a pandas query;
:mod:`axeswidget.pageround` tidies range ends dragged on the page.
"""

from __future__ import annotations

import datetime as _dt
import math
from collections.abc import Mapping
from numbers import Real

import numpy as np
import pandas as pd

from .encode import Column
from .wire import CATEGORY_BAND_LIMIT

Ranges = dict[str, list]


class SelectionError(ValueError):
    """A selection that cannot be applied; the message names the axis and the problem."""


def _is_pair(item) -> bool:
    return isinstance(item, list | tuple | np.ndarray) and not isinstance(item, str)


def _number(value, axis: str, exact_int: bool = False) -> float | int | None:
    """A number end as float64 (or as the exact integer, for integer columns given an integer)."""
    if value is None:
        return None
    if (
        isinstance(value, bool | np.timedelta64 | np.datetime64)  # numpy counts durations as integers
        or not isinstance(value, Real | np.number)
    ):
        raise SelectionError(f"range on {axis!r}: {value!r} is a {type(value).__name__}, expected a number")
    try:
        out = float(value)
    except OverflowError:
        raise SelectionError(
            f"range on {axis!r}: the end {_short(value)} is too large for a float64 (beyond ±1.8e308)"
        ) from None
    if math.isnan(out):
        raise SelectionError(f"range on {axis!r}: an end is NaN; give a number, or None for an open end")
    if exact_int and isinstance(value, int | np.integer) and not math.isinf(out):
        return int(value)  # compared exactly with the column's integers (float64 stops at 2**53)
    return out


def _is_value(item) -> bool:
    """A single number (not a bool, not a pair): one value on a discrete axis."""
    return isinstance(item, Real | np.number) and not isinstance(item, bool | np.bool_ | np.timedelta64)


def _short(value) -> str:
    text = repr(value)
    return text if len(text) <= 40 else f"{text[:12]}…{text[-4:]} ({len(text)} characters)"


def _timestamp(value, col: Column) -> str | None:
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, str | _dt.date | np.datetime64 | pd.Timestamp):
        raise SelectionError(
            f"range on {col.name!r}: {value!r} is a {type(value).__name__}, expected a date/time "
            "(pandas Timestamp, datetime or ISO 8601 string)"
        )
    try:
        ts = pd.Timestamp(value)
    except (ValueError, TypeError, OverflowError) as err:
        raise SelectionError(f"range on {col.name!r}: cannot read {value!r} as a date/time ({err})") from None
    if pd.isna(ts):
        raise SelectionError(
            f"range on {col.name!r}: an end is NaT; give a date/time, or None for an open end"
        )
    if col.tz is None and ts.tzinfo is not None:
        raise SelectionError(
            f"range on {col.name!r}: {value!r} has a time zone but the column has none; drop the offset"
        )
    if col.tz is not None:
        try:
            ts = ts.tz_localize(col.tz) if ts.tzinfo is None else ts.tz_convert(col.tz)
        except Exception as err:  # a wall time skipped or repeated by a clock change (DST), ...
            raise SelectionError(
                f"range on {col.name!r}: {value!r} is not one clear moment in {col.tz} "
                f"({type(err).__name__}: {err}); give it with a UTC offset"
            ) from None
    try:
        ns = ts.as_unit("ns").value
    except (ValueError, OverflowError):
        raise SelectionError(
            f"range on {col.name!r}: {value!r} is outside the dates an axis can hold ({_NS_SPAN})"
        ) from None
    text = ts.as_unit("ns").isoformat()
    try:  # the canonical text must read back as the same moment (historic offsets with seconds may not)
        same = pd.Timestamp(text).as_unit("ns").value == ns
    except (ValueError, TypeError, OverflowError):
        same = False
    if not same:
        raise SelectionError(
            f"range on {col.name!r}: {value!r} cannot be written as ISO 8601 text that reads back as the "
            f"same moment in {col.tz}; give a time in a span with a whole-minute UTC offset"
        )
    return text


_NS_SPAN = "1677-09-21 .. 2262-04-11"
_MAX_SECONDS = (2**63 - 1) / 1e9  # the longest duration an axis holds (int64 nanoseconds, ±292 years)


def _seconds(value, axis: str) -> float | None:
    if isinstance(value, pd.Timedelta | _dt.timedelta | np.timedelta64 | str):
        try:
            td = pd.Timedelta(value)
        except (ValueError, OverflowError) as err:
            raise SelectionError(f"range on {axis!r}: cannot read {value!r} as a duration ({err})") from None
        if pd.isna(td):
            raise SelectionError(
                f"range on {axis!r}: an end is NaT; give a duration, or None for an open end"
            )
        return td.value / 1e9
    out = _number(value, axis)
    if out is not None and math.isfinite(out) and abs(out) >= _MAX_SECONDS:
        raise SelectionError(
            f"range on {axis!r}: {value!r} s is outside the durations an axis can hold (±292 years)"
        )
    return out


def _end(value, col: Column, side: str):
    """Canonical form of one range end for the column's kind (None = open)."""
    if col.kind == "datetime":
        return _timestamp(value, col)
    if col.kind == "timedelta":
        out = _seconds(value, col.name)
    else:
        out = _number(value, col.name, exact_int=col.exact is not None)
    if out is not None and math.isinf(out):
        if (out < 0) == (side == "lo"):
            return None  # -inf as lo / +inf as hi: an open end
        raise SelectionError(f"range on {col.name!r}: {side} is {out}; use None for an open end")
    return out


def _end_key(value, col: Column) -> float:
    """A sortable number for a canonical end (open ends sort outside)."""
    if value is None:
        return -math.inf
    if col.kind == "datetime":
        return pd.Timestamp(value).as_unit("ns").value
    return value  # int or float: Python compares the two exactly


def normalise_items(items, col: Column) -> list:
    """Validate the items of one axis; return them sorted (ranges by low end, then labels, then None)."""
    axis = col.name
    if items is None:
        return []
    discrete = col.kind == "integer"
    if discrete and _is_value(items):
        items = [items]  # {"target": 1}: one value on a discrete axis
    if isinstance(items, str) or not isinstance(items, list | tuple | np.ndarray):
        raise SelectionError(f"selection on {axis!r}: expected a list of items, got {items!r}")
    items = list(items)
    categorical = col.kind in ("category", "boolean")
    if not categorical and len(items) == 2 and not any(_is_pair(i) for i in items):
        if any(i is not None for i in items):  # [lo, hi] shorthand for one range
            items = [items]
    if discrete:  # single values on a discrete axis: the range [v, v]
        items = [[i, i] if _is_value(i) else i for i in items]
    spans, picked, lane = [], set(), False
    for item in items:
        if item is None:
            lane = True
        elif categorical and isinstance(item, Mapping):
            # {"rest": True}: every label beyond the axis's bands (what the page's shared band holds)
            if dict(item) != {"rest": True}:
                raise SelectionError(
                    f"selection on {axis!r}: the only dict item is {{'rest': True}}, got {item!r}"
                )
            if len(col.labels) <= CATEGORY_BAND_LIMIT:
                raise SelectionError(
                    f"selection on {axis!r}: {{'rest': True}} picks the labels beyond the axis's "
                    f"{CATEGORY_BAND_LIMIT} bands, but its {len(col.labels)} labels all have a band"
                )
            picked.update(col.labels[CATEGORY_BAND_LIMIT:])
        elif categorical:
            if _is_pair(item):
                raise SelectionError(
                    f"selection on {axis!r}: a category axis takes labels, not the range {item!r}"
                )
            label = str(item)
            if label not in col.labels:
                shown = ", ".join(map(repr, col.labels[:8])) + (" …" if len(col.labels) > 8 else "")
                raise SelectionError(f"selection on {axis!r}: unknown label {label!r}; labels are {shown}")
            picked.add(label)
        else:
            if not _is_pair(item) or len(item) != 2:
                hint = " (single values are taken on integer axes only)" if _is_value(item) else ""
                raise SelectionError(f"range on {axis!r}: expected a pair [lo, hi], got {item!r}{hint}")
            lo, hi = _end(item[0], col, "lo"), _end(item[1], col, "hi")
            if lo is not None and hi is not None and _end_key(lo, col) > _end_key(hi, col):
                raise SelectionError(f"range on {axis!r}: lo {lo!r} is greater than hi {hi!r}")
            spans.append([lo, hi])
    spans.sort(key=lambda s: _end_key(s[0], col))
    out: list = spans
    if categorical:
        out = [lab for lab in col.labels if lab in picked]
    if lane:
        out.append(None)
    return out


def normalise(ranges, columns: Mapping[str, Column]) -> Ranges:
    """Validate a user-given selection and return it in canonical form.

    Raises :class:`SelectionError` naming the axis and the problem. Empty lists drop the axis.
    """
    if ranges is None:
        return {}
    if not isinstance(ranges, Mapping):
        raise SelectionError(
            f"ranges must be a dict of axis name -> list of items, got {type(ranges).__name__}"
        )
    out: Ranges = {}
    for axis, items in ranges.items():
        if axis not in columns:
            raise SelectionError(
                f"unknown axis {axis!r} in ranges; the axes are: {', '.join(map(repr, columns))}"
            )
        clean = normalise_items(items, columns[axis])
        if clean:
            out[axis] = clean
    return out
