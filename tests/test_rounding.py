"""Range ends dragged on the page are rounded to the shortest decimal that picks the same rows."""

from __future__ import annotations

import math
from decimal import ROUND_CEILING, Decimal

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

import axeswidget as aw
from axeswidget.encode import CODE_MAX


def _digits(x: float) -> int:
    """Significant digits of the shortest decimal that reads back as x (Python's repr)."""
    if x == 0:
        return 0
    return len(Decimal(repr(x)).normalize().as_tuple().digits)


def _smallest_with_digits(low: float, m: int) -> Decimal:
    """The smallest decimal >= low with at most m significant digits (m >= 1)."""
    d = Decimal(low)
    if d == 0:
        return d
    e = math.floor(math.log10(abs(low)))
    q = Decimal(1).scaleb(e - m + 1)
    return (d / q).to_integral_value(rounding=ROUND_CEILING) * q


def _allowed(
    values: np.ndarray, lo: float, hi: float, end: float, side: str
) -> tuple[float, float, bool, bool]:
    """Where an end may move without changing the rows, computed from the sorted data (independent of
    the widget's code): between the nearest data values on either side, within half a code step."""
    data = np.sort(values[~np.isnan(values)])
    half = (hi - lo) / CODE_MAX / 2
    if side == "hi":
        inside, outside = data[data <= end], data[data > end]
        low, high = (inside[-1] if inside.size else -math.inf), (outside[0] if outside.size else math.inf)
        low_open, high_open = False, True
    else:
        outside, inside = data[data < end], data[data >= end]
        low, high = (outside[-1] if outside.size else -math.inf), (inside[0] if inside.size else math.inf)
        low_open, high_open = True, False
    if end - half > low:
        low, low_open = end - half, False
    if end + half < high:
        high, high_open = end + half, False
    return low, high, low_open, high_open


def _inside(x, low, high, low_open, high_open) -> bool:
    return (x > low if low_open else x >= low) and (x < high if high_open else x <= high)


def _no_shorter(x: float, low, high, low_open, high_open) -> bool:
    """No decimal with fewer significant digits than x lies where x may lie."""
    if x == 0:
        return True
    if _inside(0.0, low, high, low_open, high_open):
        return False
    for m in range(1, _digits(x)):
        c = _smallest_with_digits(low, m)
        if c == Decimal(low) and low_open:  # the bound itself is excluded: the next one up
            e = math.floor(math.log10(abs(low)))
            c += Decimal(1).scaleb(e - m + 1)
        cf = float(c)
        if _inside(cf, low, high, low_open, high_open):
            return False
    return True


def _page_edit(w, ranges, seq):
    w.set_state({"ranges": ranges, "edit_seq": seq, "dragging": False})


def test_float_noise_from_the_page_is_rounded_and_the_rows_stay():
    fleet = aw.demo.pump_fleet(5000, seed=2)
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct"])
    lo, hi = 31.839999999999997, 64.0399409853179
    _page_edit(w, {"flow_m3h": [[lo, hi]]}, 1)
    ((rlo, rhi),) = w.ranges["flow_m3h"]
    # reference: pandas.Series.between with the unrounded ends
    want = fleet["flow_m3h"].between(lo, hi).to_numpy()
    np.testing.assert_array_equal(w.mask, want)
    assert _digits(rlo) < _digits(lo) and _digits(rhi) < _digits(hi)
    query = w.to_query()
    assert "99999" not in query and "00000" not in query
    assert len(fleet.query(query)) == int(want.sum())  # reference: DataFrame.query
    col = fleet["flow_m3h"]
    half = (col.max() - col.min()) / CODE_MAX / 2
    assert abs(rlo - lo) <= half and abs(rhi - hi) <= half  # within what the page can show


def test_ranges_set_from_python_are_kept_verbatim():
    fleet = aw.demo.pump_fleet(2000, seed=2)
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    w.ranges = {"flow_m3h": [[31.839999999999997, 64.0399409853179]]}
    assert w.ranges == {"flow_m3h": [[31.839999999999997, 64.0399409853179]]}
    # an unchanged range sent back by the page keeps its ends too
    _page_edit(w, {"flow_m3h": [[31.839999999999997, 64.0399409853179]], "head_m": [[10.123456789, 30.0]]}, 1)
    assert w.ranges["flow_m3h"] == [[31.839999999999997, 64.0399409853179]]
    assert _digits(w.ranges["head_m"][0][0]) < 10


def test_an_end_next_to_a_data_value_keeps_that_row_out():
    # data 1.0 and 1.0000001 lie within one code step: the end may not cross either of them
    values = np.array([0.0, 1.0, 1.0000001, 2.0] * 10)
    w = aw.AxesWidget(pd.DataFrame({"x": values, "y": np.arange(40.0) % 7}))
    end = 1.00000005
    _page_edit(w, {"x": [[-0.5, end]]}, 1)
    ((lo, hi),) = w.ranges["x"]
    assert 1.0 <= hi < 1.0000001
    np.testing.assert_array_equal(w.mask, pd.Series(values).between(-0.5, end).to_numpy())  # reference


def test_integer_columns_get_whole_ends():
    counts = pd.DataFrame({"n": np.arange(0, 2000, 3, dtype=np.int64), "y": np.linspace(0, 1, 667)})
    w = aw.AxesWidget(counts, axes=["n", "y"])
    _page_edit(w, {"n": [[300.0399409853179, 611.7]]}, 1)
    ((lo, hi),) = w.ranges["n"]
    np.testing.assert_array_equal(w.mask, counts["n"].between(300.0399409853179, 611.7).to_numpy())
    assert _digits(lo) <= 5 and _digits(hi) <= 5


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    data=st.lists(
        st.one_of(
            st.floats(-1e6, 1e6, allow_nan=False, allow_infinity=False, width=64),
            st.integers(-50, 50).map(lambda i: i / 8),
            st.just(float("nan")),
        ),
        min_size=3,
        max_size=60,
    ),
    a=st.floats(0, 1),
    b=st.floats(0, 1),
    scale=st.sampled_from([1.0, 1e-9, 1e9]),
)
def test_rounding_never_changes_the_rows_and_leaves_no_needless_digits(data, a, b, scale):
    values = np.array(data, dtype=float) * scale
    finite = values[np.isfinite(values)]
    assume(finite.size >= 2 and finite.min() < finite.max())
    lo_d, hi_d = float(finite.min()), float(finite.max())
    span = hi_d - lo_d
    # ends anywhere over the axis, with float noise as the page's pixel -> value conversion makes it
    end_lo, end_hi = sorted([lo_d + a * span * (1 + 1e-13), lo_d + b * span * (1 - 1e-13)])
    frame = pd.DataFrame({"x": values, "other": np.arange(len(values), dtype=float) % 3})
    w = aw.AxesWidget(frame, axes=["x", "other"])
    _page_edit(w, {"x": [[end_lo, end_hi]]}, 1)
    # reference: pandas.Series.between with the page's own ends
    before = frame["x"].between(end_lo, end_hi).to_numpy()
    np.testing.assert_array_equal(w.mask, before)
    ((rlo, rhi),) = w.ranges["x"]
    np.testing.assert_array_equal(frame["x"].between(rlo, rhi).to_numpy(), before)
    spots = [_allowed(values, lo_d, hi_d, end, side) for end, side in ((end_lo, "lo"), (end_hi, "hi"))]
    for got, end, where in ((rlo, end_lo, spots[0]), (rhi, end_hi, spots[1])):
        assert _inside(got, *where), (got, end, where)
        assert _digits(got) <= _digits(end)
    if rlo == rhi and not before.any() and (end_lo, end_hi) != (rlo, rhi):
        # a range between two data values whose ends would cross: one point where both may lie
        (l0, h0, lo0, ho0), (l1, h1, lo1, ho1) = spots
        low, low_open = max((l0, lo0), (l1, lo1))
        high, high_open = min((h0, not ho0), (h1, not ho1))
        assert _no_shorter(rlo, low, high, low_open, not high_open), (rlo, spots)
    else:
        assert _no_shorter(rlo, *spots[0]), (rlo, end_lo, spots[0])
        assert _no_shorter(rhi, *spots[1]), (rhi, end_hi, spots[1])


@pytest.mark.parametrize("log", [False, True])
def test_log_axes_round_within_the_page_resolution(log):
    rng = np.random.default_rng(4)
    frame = pd.DataFrame({"v": rng.lognormal(3, 1.5, 3000), "w": rng.normal(size=3000)})
    w = aw.AxesWidget(frame, log_axes=["v"] if log else [])
    end = 17.123456789123
    _page_edit(w, {"v": [[None, end]]}, 1)
    ((lo, hi),) = w.ranges["v"]
    assert lo is None
    np.testing.assert_array_equal(w.mask, frame["v"].between(-np.inf, end).to_numpy())  # reference
    v = frame["v"]
    if log:
        half = (math.log(v.max()) - math.log(v.min())) / CODE_MAX / 2
        assert abs(math.log(hi) - math.log(end)) <= half * (1 + 1e-9)
    else:
        assert abs(hi - end) <= (v.max() - v.min()) / CODE_MAX / 2
    assert _digits(hi) < _digits(end)
