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

Evaluation is kept apart from the description: :class:`MaskEvaluator` turns a selection into a boolean
mask over the in-memory columns and recomputes only the axes whose items changed.
"""

from __future__ import annotations

import datetime as _dt
import decimal
import math
import unicodedata
from collections.abc import Mapping
from numbers import Real

import numpy as np
import pandas as pd

from .encode import CATEGORY_BAND_LIMIT, CODE_MAX, Column

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


# -- ends dragged on the page --------------------------------------------------------------------------
def round_page_ranges(ranges: Ranges, previous: Ranges, columns: Mapping[str, Column]) -> Ranges:
    """Ranges from the page with each new float end on a number axis replaced by the shortest decimal
    that selects exactly the same rows (see :func:`round_end`); ranges already in ``previous`` stay.

    The selected rows never change: an axis whose rounded ranges would pick other rows keeps its ends.
    """
    out: Ranges = {}
    for axis, items in ranges.items():
        col = columns[axis]
        if col.kind not in ("number", "integer") or col.values is None:  # no exact values here: as given
            out[axis] = items
            continue
        old = previous.get(axis, [])
        new = []
        for item in items:
            if item is None or item in old:
                new.append(item)
                continue
            lo, hi = item
            rlo = round_end(col, lo, "lo") if isinstance(lo, float) else lo
            rhi = round_end(col, hi, "hi") if isinstance(hi, float) else hi
            if rlo is not None and rhi is not None and rlo > rhi:
                new.append(_round_empty(col, lo, hi))  # a range between two data values: one point
            else:
                new.append([rlo, rhi])
        if new != items:
            spans = sorted((i for i in new if i is not None), key=lambda s: _end_key(s[0], col))
            new = spans + [None] * (None in new)
            if not np.array_equal(axis_mask(col, new), axis_mask(col, items)):
                new = items
        out[axis] = new
    return out


def round_end(col: Column, value: float, side: str):
    """The shortest decimal that can replace a range end on a number axis without changing the rows.

    The end may move anywhere between the nearest data values on either side of it (for ``"hi"``:
    from the largest value it takes in, inclusive, to the smallest it leaves out, exclusive; mirrored
    for ``"lo"``) and no further than half a wire-code step (what the page can resolve). Among the
    decimals with the fewest significant digits there, the one nearest ``value`` is taken. Whole
    results on integer columns come back as ``int``.
    """
    if not math.isfinite(value):
        return value
    out = shortest_decimal(*_end_interval(col, value, side), value)
    if col.exact is not None and out.is_integer() and abs(out) < 2**53:
        return int(out)
    return out


def _round_empty(col: Column, lo, hi) -> list:
    """A range holding no row whose rounded ends would cross: both ends at the shortest decimal where
    either end may lie, or the ends as drawn when there is none."""
    if not (isinstance(lo, float) and isinstance(hi, float) and math.isfinite(lo) and math.isfinite(hi)):
        return [lo, hi]
    a, b = _end_interval(col, lo, "lo"), _end_interval(col, hi, "hi")
    lower, lower_open = max((a[0], a[2]), (b[0], b[2]), key=lambda p: (p[0], p[1]))
    upper, upper_open = min((a[1], a[3]), (b[1], b[3]), key=lambda p: (p[0], not p[1]))
    probe = hi if lower <= hi <= upper else lo if lower <= lo <= upper else None
    if probe is None or (lower_open and probe <= lower) or (upper_open and probe >= upper):
        return [lo, hi]
    x = shortest_decimal(lower, upper, lower_open, upper_open, probe)
    return [x, x]


def _end_interval(col: Column, value: float, side: str) -> tuple[float, float, bool, bool]:
    """Where a range end may lie and still pick the same rows: (lower, upper, lower open, upper open)."""
    v = col.values
    with np.errstate(invalid="ignore"):
        if side == "hi":
            lower = float(np.max(v, where=v <= value, initial=-math.inf))  # taken in: closed
            upper = float(np.min(v, where=v > value, initial=math.inf))  # left out: open
            lower_open, upper_open = False, True
        else:
            lower = float(np.max(v, where=v < value, initial=-math.inf))
            upper = float(np.min(v, where=v >= value, initial=math.inf))
            lower_open, upper_open = True, False
    w_lo, w_hi = _page_window(col, value)
    if w_lo > lower:
        lower, lower_open = w_lo, False
    if w_hi < upper:
        upper, upper_open = w_hi, False
    return lower, upper, lower_open, upper_open


def _page_window(col: Column, value: float) -> tuple[float, float]:
    """The values within half a wire-code step of ``value`` (what the page cannot tell apart)."""
    if col.log and col.lo > 0 and value > 0:
        half = (math.log(col.hi) - math.log(col.lo)) / CODE_MAX / 2
        return value * math.exp(-half), value * math.exp(half)
    half = (col.hi / 2 - col.lo / 2) / CODE_MAX  # half of (hi - lo) / CODE_MAX, without overflow
    if not math.isfinite(half):
        return value, value
    return value - half, value + half


def shortest_decimal(lower: float, upper: float, lower_open: bool, upper_open: bool, near: float) -> float:
    """The float of the decimal with the fewest significant digits inside the interval, nearest ``near``.

    ``near`` must lie inside; it is the answer when nothing shorter does.
    """

    def inside(x: float) -> bool:
        return (x > lower if lower_open else x >= lower) and (x < upper if upper_open else x <= upper)

    if inside(0.0):
        return 0.0
    if not (math.isfinite(lower) and math.isfinite(upper)):
        return near
    top = math.floor(math.log10(max(abs(lower), abs(upper)))) + 1
    with decimal.localcontext() as ctx:
        ctx.prec = 80
        lo_d, hi_d, near_d = decimal.Decimal(lower), decimal.Decimal(upper), decimal.Decimal(near)
        for e in range(top, top - 25, -1):
            step = decimal.Decimal(1).scaleb(e)
            # one more on each side: a decimal just outside can be the float at a closed bound
            k_lo = (lo_d / step).to_integral_value(rounding=decimal.ROUND_CEILING) - 1
            k_hi = (hi_d / step).to_integral_value(rounding=decimal.ROUND_FLOOR) + 1
            if k_hi - k_lo > 12:  # a coarser level would have held one of these; never reached
                continue
            ks = [k_lo + i for i in range(int(k_hi - k_lo) + 1)]
            for k in sorted(ks, key=lambda k: abs(k - near_d / step)):
                x = float(k.scaleb(e))
                if inside(x):
                    return x
    return near


def _exact_end(value, col: Column):
    if value is None:
        return None
    if col.kind == "datetime":
        return pd.Timestamp(value).as_unit("ns").value  # int64 ns since the epoch (UTC for tz-aware columns)
    if col.kind == "timedelta":
        return int(round(value * 1e9))
    return value


def _integer_hit(col: Column, lo, hi) -> np.ndarray:
    """Rows of an integer column within [lo, hi], compared in the column's own integer type."""
    info = np.iinfo(col.exact.dtype)
    exact = col.exact
    hit = None
    if lo is not None:
        lo = math.ceil(lo)  # exact for floats and ints alike
        if lo > info.max:
            return np.zeros(len(exact), dtype=bool)
        if lo > info.min:
            hit = exact >= exact.dtype.type(lo)
    if hi is not None:
        hi = math.floor(hi)
        if hi < info.min:
            return np.zeros(len(exact), dtype=bool)
        if hi < info.max:
            upper = exact <= exact.dtype.type(hi)
            hit = upper if hit is None else np.logical_and(hit, upper, out=hit)
    present = ~col.missing
    return present if hit is None else np.logical_and(hit, present, out=hit)


def _range_hit(col: Column, lo, hi) -> np.ndarray:
    """Rows within one range [lo, hi] (None = open end) on a number, date or duration axis."""
    if col.exact is not None:
        return _integer_hit(col, lo, hi)
    v = col.values
    if lo is None and hi is None:
        return ~col.missing
    if lo is None:
        hit = v <= hi
    else:
        hit = v >= lo
        if hi is not None:
            np.logical_and(hit, v <= hi, out=hit)
    if col.kind in ("datetime", "timedelta") and lo is None:
        np.logical_and(hit, ~col.missing, out=hit)  # NaT is stored as the smallest int64
    return hit


def axis_mask(col: Column, items: list) -> np.ndarray:
    """Rows picked by any of the items on one axis, computed on the exact values."""
    n = len(col.missing)
    if col.kind in ("category", "boolean"):
        lut = np.zeros(len(col.labels) + 1, dtype=bool)
        index = {lab: i for i, lab in enumerate(col.labels)}
        for item in items:
            lut[0 if item is None else index[item] + 1] = True
        return lut[col.label_codes + 1]
    if len(items) == 1 and items[0] is not None:  # the common case: one range, no extra pass
        return _range_hit(col, _exact_end(items[0][0], col), _exact_end(items[0][1], col))
    mask = np.zeros(n, dtype=bool)
    for item in items:
        if item is None:
            mask |= col.missing
        else:
            mask |= _range_hit(col, _exact_end(item[0], col), _exact_end(item[1], col))
    return mask


class MaskEvaluator:
    """Exact, incremental evaluation of a selection over in-memory columns."""

    def __init__(self, columns: Mapping[str, Column], n: int):
        self.columns = columns
        self.n = n
        self.ranges: Ranges = {}
        self._parts: dict[str, np.ndarray] = {}
        self.mask = np.ones(n, dtype=bool)
        self.mask.flags.writeable = False
        #: False until the first update: the mask above is a placeholder
        self.evaluated = False

    def prepare(self, ranges: Ranges) -> None:
        """Evaluate a selection without applying it (so a failure leaves everything as it was).

        The next :meth:`update` with the same selection reuses the result.
        """
        parts = {}
        for axis, items in ranges.items():
            if self.ranges.get(axis) == items and axis in self._parts:
                parts[axis] = self._parts[axis]
            else:
                try:
                    parts[axis] = axis_mask(self.columns[axis], items)
                except (ArithmeticError, TypeError, ValueError) as err:
                    raise SelectionError(
                        f"selection on {axis!r} cannot be evaluated: {type(err).__name__}: {err}"
                    ) from None
        self._pending = ({k: list(v) for k, v in ranges.items()}, parts)

    def update(self, ranges: Ranges) -> np.ndarray:
        """Apply a normalised selection; only axes whose items changed are recomputed."""
        pending = getattr(self, "_pending", None)
        self._pending = None
        if pending is not None and pending[0] == ranges:
            self._parts = dict(pending[1])
        else:
            for axis in list(self._parts):
                if axis not in ranges:
                    del self._parts[axis]
            for axis, items in ranges.items():
                if self.ranges.get(axis) != items or axis not in self._parts:
                    self._parts[axis] = axis_mask(self.columns[axis], items)
        changed = [a for a in ranges if self.ranges.get(a) != ranges[a]]
        self.ranges = {k: list(v) for k, v in ranges.items()}
        mask = self._combine(changed)
        mask.flags.writeable = False
        self.mask = mask
        self.evaluated = True
        return mask

    def _combine(self, changed: list[str]) -> np.ndarray:
        """AND of the per-axis parts. While one axis is dragged, the AND of the others is kept, so
        each update costs one AND instead of one per brushed axis."""
        parts = self._parts
        if not parts:
            self._rest = None
            return np.ones(self.n, dtype=bool)
        if len(parts) == 1:
            self._rest = None
            return next(iter(parts.values())).copy()
        rest = getattr(self, "_rest", None)
        if len(changed) == 1:
            axis = changed[0]
            others = tuple(sorted(a for a in parts if a != axis))
            if rest is None or rest[0] != axis or rest[1] != others:
                it = iter(parts[a] for a in others)
                acc = next(it).copy()
                for part in it:
                    acc &= part
                rest = self._rest = (axis, others, acc)
            return np.logical_and(rest[2], parts[axis])
        self._rest = None
        it = iter(parts.values())
        mask = np.logical_and(next(it), next(it))
        for part in it:
            mask &= part
        return mask


def pack(mask: np.ndarray) -> bytes:
    """Bit-pack a mask for the front end: bit i of byte i // 8 (little bit order) is row i."""
    return np.packbits(mask, bitorder="little").tobytes()


# -- selection as code --------------------------------------------------------------------------------
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
