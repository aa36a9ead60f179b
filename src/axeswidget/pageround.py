"""Range ends dragged on the page, rounded to the shortest decimal that selects exactly the same rows.

A pointer position maps to a float with noise in its last digits (``3.1839999999999997``); the kernel
replaces each new end by the shortest decimal between the neighbouring data values and within half a
wire-code step, so ``w.ranges`` and ``to_query()`` read well and the selected rows do not change.
"""

from __future__ import annotations

import decimal
import math
from collections.abc import Mapping

import numpy as np

from .encode import Column
from .evaluate import axis_mask
from .selection import Ranges, _end_key
from .wire import CODE_MAX


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
    """Where a range end may lie and still pick the same rows: (lower, upper, lower open, upper open).

    The end may move up to the nearest data values on either side, but never beyond the page's
    window (half a wire-code step), so only the values inside that window are looked at: one pass of
    two comparisons over the column, then a search among the few values found.
    """
    w_lo, w_hi = _page_window(col, value)
    v = col.values
    with np.errstate(invalid="ignore"):
        near = v >= w_lo
        near &= v <= w_hi
    close = v[near]
    if side == "hi":
        below, above = close[close <= value], close[close > value]  # taken in: closed; left out: open
        lower_open, upper_open = False, True
    else:
        below, above = close[close < value], close[close >= value]  # left out: open; taken in: closed
        lower_open, upper_open = True, False
    if below.size:
        lower = float(below.max())
    else:
        lower, lower_open = w_lo, False
    if above.size:
        upper = float(above.min())
    else:
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
