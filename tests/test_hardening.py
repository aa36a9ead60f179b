"""Hostile names, out-of-range values, refused assignments and stale state (issue 12).

Every check compares with pandas (``Series.between``, ``isin``, ``isna``, ``DataFrame.query``) or
asserts that a refused step names the column/axis and leaves the widget exactly as it was.
"""

from __future__ import annotations

import datetime as dt
import json
import re
import warnings

import numpy as np
import pandas as pd
import polars as pl
import pyarrow as pa
import pytest
import traitlets
from hypothesis import given, settings
from hypothesis import strategies as st

import axeswidget as aw
from axeswidget.selection import SelectionError, normalise
from tests.widget_state import widget_state

state_of = widget_state


# -- names that are keys of every JS object --------------------------------------------------------
JS_KEYS = ["constructor", "__proto__", "toString", "valueOf", "hasOwnProperty"]


def test_js_object_key_names_work_for_every_kind():
    rng = np.random.default_rng(3)
    n = 50
    df = pd.DataFrame(
        {
            "constructor": rng.choice(["a", "b", "c"], n),
            "__proto__": rng.normal(size=n),
            "toString": rng.integers(0, 5, n),
            "valueOf": pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 90, n), unit="D"),
            "hasOwnProperty": rng.random(n) < 0.5,
        }
    )
    w = aw.AxesWidget(df)
    assert w.axes == JS_KEYS
    w.ranges = {
        "constructor": ["a", "c"],
        "__proto__": [[-0.5, 1.0]],
        "toString": [[1, 3]],
        "valueOf": [["2024-01-15", "2024-03-01"]],
        "hasOwnProperty": ["True"],
    }
    # reference: pandas isin / Series.between on the original columns
    ref = (
        df["constructor"].isin(["a", "c"])
        & df["__proto__"].between(-0.5, 1.0)
        & df["toString"].between(1, 3)
        & df["valueOf"].between(pd.Timestamp("2024-01-15"), pd.Timestamp("2024-03-01"))
        & df["hasOwnProperty"]
    )
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert w.count == int(ref.sum())
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)  # reference: DataFrame.query
    # the whole state can be sent as JSON text (buffers aside)
    state = w.get_state()
    json.dumps({k: v for k, v in state.items() if k not in ("table", "mask_bits")})
    w.order = list(reversed(JS_KEYS))
    w.flipped = ["__proto__"]
    w.keep("constructor")
    assert w.labels().cat.categories.tolist() == ["constructor"]


# -- dates and durations beyond the nanosecond span --------------------------------------------------
FAR = [dt.datetime(2020, 1, 1), dt.datetime(9999, 12, 31)]


@pytest.mark.parametrize(
    "make",
    [
        lambda: pd.DataFrame({"valid_to": np.array(FAR, dtype="datetime64[s]"), "x": [1.0, 2.0]}),
        lambda: pd.DataFrame({"valid_to": np.array(FAR, dtype="datetime64[ms]"), "x": [1.0, 2.0]}),
        lambda: pd.DataFrame({"valid_to": np.array(FAR, dtype="datetime64[us]"), "x": [1.0, 2.0]}),
        lambda: pl.DataFrame({"valid_to": [d.date() for d in FAR], "x": [1.0, 2.0]}),
        lambda: pl.DataFrame({"valid_to": FAR, "x": [1.0, 2.0]}),
        lambda: pa.table({"valid_to": pa.array(FAR, pa.timestamp("us")), "x": [1.0, 2.0]}),
        lambda: pa.table({"valid_to": pa.array([d.date() for d in FAR], pa.date32()), "x": [1.0, 2.0]}),
        lambda: pd.DataFrame(
            {"valid_to": pd.array(FAR, dtype=pd.ArrowDtype(pa.timestamp("ms"))), "x": [1.0, 2.0]}
        ),
        lambda: pd.DataFrame(
            {"valid_to": np.array([1, 400 * 365 * 86400], dtype="timedelta64[s]"), "x": [1.0, 2.0]}
        ),
    ],
)
def test_values_beyond_the_nanosecond_span_are_refused_not_wrapped(make):
    with pytest.warns(UserWarning, match=r"skipped columns: 'valid_to' \(has (dates|durations) outside"):
        w = aw.AxesWidget(make())
    assert w.axes == ["x"]
    with pytest.raises(aw.ColumnError, match=r"column 'valid_to' has (dates|durations) outside"):
        aw.AxesWidget(make(), axes=["valid_to", "x"])


def test_dates_in_other_units_inside_the_span_stay_exact():
    days = np.array(["1700-01-01", "1999-12-31T23:59:59", "2000-01-01", "2262-01-01"], dtype="datetime64[s]")
    df = pd.DataFrame({"d": days})
    w = aw.AxesWidget(df, ranges={"d": [["1999-12-31T23:59:59", "2000-01-01"]]})
    ref = df["d"].between(pd.Timestamp("1999-12-31T23:59:59"), pd.Timestamp("2000-01-01"))  # reference
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert w.mask.tolist() == [False, True, True, False]


@pytest.mark.parametrize(
    "axis, end, message",
    [
        ("when", "9999-12-31", r"'9999-12-31' is outside the dates an axis can hold"),
        ("when", "1000-01-01", r"is outside the dates an axis can hold"),
        ("took", 1e300, r"outside the durations an axis can hold"),
        ("took", 10**400, r"too large for a float64"),
        ("x", 10**400, r"too large for a float64"),
        ("k", -(10**400), r"too large for a float64"),
        ("berlin", "2024-03-31 02:30", r"'2024-03-31 02:30' is not one clear moment in Europe/Berlin"),
        ("berlin", "2024-10-27 02:30", r"'2024-10-27 02:30' is not one clear moment in Europe/Berlin"),
        ("amsterdam", "1900-01-02", r"cannot be written as ISO 8601 text that reads back"),
    ],
)
def test_refused_ends_name_the_axis_and_change_nothing(axis, end, message):
    df = pd.DataFrame(
        {
            "when": pd.date_range("2024-01-01", periods=4, freq="D"),
            "took": pd.to_timedelta([1, 2, 3, 4], unit="s"),
            "x": [0.5, 1.5, 2.5, 3.5],
            "k": [1, 2, 3, 4],
            "berlin": pd.date_range("2024-03-31", periods=4, freq="h", tz="Europe/Berlin"),
            "amsterdam": pd.date_range("1900-01-01", periods=4, freq="D", tz="Europe/Amsterdam"),
        }
    )
    w = aw.AxesWidget(df, ranges={"x": [[1, 3]]})
    before = state_of(w)
    with pytest.raises(traitlets.TraitError, match=rf"range on '{axis}': .*{message}|{message}"):
        w.ranges = {"x": [[1, 3]], axis: [[end, None]] if axis != "k" else [[end, 2]]}
    assert state_of(w) == before
    with pytest.raises(SelectionError, match=f"'{axis}'"):
        normalise({axis: [[end, None]]}, {a: w.column(a) for a in w.axes})


@pytest.mark.parametrize("end", [np.timedelta64(1, "s"), np.datetime64("2024-01-01"), 1j, b"1", pd.NA])
def test_odd_ends_on_number_axes_are_clear_errors(end):
    w = aw.AxesWidget(pd.DataFrame({"x": [1.0, 2.0], "k": [1, 2]}), ranges={"x": [[1.5, None]]})
    before = state_of(w)
    for axis in ("x", "k"):
        with pytest.raises(traitlets.TraitError, match=rf"range on '{axis}': .* expected a number"):
            w.ranges = {axis: [[end, None]]}
        assert state_of(w) == before


# -- integers above 2**53 ------------------------------------------------------------------------------
BIG = 2**53


@settings(max_examples=60, deadline=None)
@given(
    st.sampled_from([np.int64, np.uint64, "Int64", "UInt64"]),
    st.lists(st.integers(0, 6), min_size=1, max_size=12),
    st.sampled_from([BIG, 2**63 - 8, 2**64 - 8]),
    st.integers(0, 6),
    st.integers(0, 6),
)
def test_large_integers_are_compared_exactly(dtype, offsets, base, a, b):
    if base >= 2**63 and dtype in (np.int64, "Int64"):
        base = 2**63 - 8
    values = [base + o for o in offsets]
    series = pd.Series(values, dtype=dtype)
    lo, hi = sorted((base + a, base + b))
    w = aw.AxesWidget(pd.DataFrame({"id": series}), ranges={"id": [[lo, hi]]})
    ref = series.between(lo, hi)  # reference: pandas Series.between on the original integers
    np.testing.assert_array_equal(w.mask, ref.to_numpy(dtype=bool))
    w.ranges = {"id": [[float(lo), None]]}  # a float end compares as the float it is
    ref = series.astype(object).map(lambda v: v >= float(lo))  # reference: Python's exact int/float order
    np.testing.assert_array_equal(w.mask, ref.to_numpy(dtype=bool))


def test_the_issue_example_of_two_to_the_53_plus_one():
    s = pd.Series([BIG, BIG + 1, BIG + 2], dtype="int64")
    w = aw.AxesWidget(pd.DataFrame({"n": s}), ranges={"n": [[BIG + 1, BIG + 1]]})
    assert w.mask.tolist() == s.between(BIG + 1, BIG + 1).tolist() == [False, True, False]  # reference
    assert w.ranges == {"n": [[BIG + 1, BIG + 1]]}  # kept as exact integers


# -- refused assignments, {"rest": True}, order -----------------------------------------------------------
def test_rest_on_an_axis_without_a_shared_band_is_refused():
    w = aw.AxesWidget(pd.DataFrame({"c": ["a", "b", "a"]}), ranges={"c": ["a"]})
    before = state_of(w)
    with pytest.raises(
        traitlets.TraitError, match=r"selection on 'c': \{'rest': True\} picks the labels beyond"
    ):
        w.ranges = {"c": [{"rest": True}]}
    assert state_of(w) == before


def test_order_must_name_every_axis():
    w = aw.AxesWidget(pd.DataFrame({"a": [1.0], "b": [2.0], "c": ["x"]}))
    before = state_of(w)
    with pytest.raises(traitlets.TraitError, match=r"order must name every axis once; it lacks: 'b', 'c'"):
        w.order = ["a"]
    assert state_of(w) == before
    w.order = ["c", "a", "b"]
    assert w.order == ["c", "a", "b"]


# -- own snapshots ---------------------------------------------------------------------------------------
def test_every_input_type_is_a_snapshot_and_data_is_a_copy():
    arr = np.array([[1.0, 10.0], [3.0, 30.0]])
    w = aw.AxesWidget(arr, ranges={"0": [[2, 5]]})
    arr[0, 0] = 3.0
    np.testing.assert_array_equal(w.selected, [[3.0, 30.0]])

    d = {"x": np.array([1.0, 3.0]), "y": [5, 6]}
    w = aw.AxesWidget(d, ranges={"x": [[2, 5]]})
    d["x"][0] = 3.0
    assert w.selected["x"].tolist() == [3.0] and w.mask.tolist() == [False, True]

    p = pl.DataFrame({"x": [1.0, 3.0]})
    w = aw.AxesWidget(p, ranges={"x": [[2, 5]]})
    p[0, "x"] = 3.0  # polars' in-place assignment
    assert w.selected["x"].to_list() == [3.0]

    t = pa.table({"x": [1.0, 3.0]})
    w = aw.AxesWidget(t, ranges={"x": [[2, 5]]})
    assert w.selected.column("x").to_pylist() == [3.0]

    w = aw.AxesWidget(pd.DataFrame({"x": [1.0, 3.0]}), ranges={"x": [[2, 5]]})
    shown = w.data
    shown.loc[0, "x"] = 4.0  # editing what w.data returned
    assert w.data["x"].tolist() == [1.0, 3.0] and w.selected["x"].tolist() == [3.0]
    np.testing.assert_array_equal(w.mask, [False, True])


# -- kinds: text that reads True/False, empty text, complex --------------------------------------------
def test_true_false_text_stays_text_and_empty_text_is_not_boolean():
    df = pd.DataFrame(
        {
            "answer": pd.Series(["True", "False", "True", None], dtype=object),
            "empty": pd.Series([None, None, None, None], dtype=object),
            "flag": [True, False, True, False],
            "x": [1.0, 2.0, 3.0, 4.0],
        }
    )
    w = aw.AxesWidget(df)
    assert w.column("answer").kind == "category" and w.column("flag").kind == "boolean"
    assert w.column("empty").kind == "category" and w.column("empty").labels == []
    w.ranges = {"answer": ["True"], "empty": [None]}
    ref = df["answer"].isin(["True"]) & df["empty"].isna()  # reference: isin / isna
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)  # reference: DataFrame.query
    empty = aw.AxesWidget(pd.DataFrame({"s": pd.Series([], dtype=object), "x": pd.Series([], dtype=float)}))
    assert empty.column("s").kind == "category"


def test_complex_columns_are_refused():
    df = pd.DataFrame({"z": [1 + 2j, 3j], "x": [1.0, 2.0]})
    with pytest.warns(UserWarning, match=r"'z' \(holds complex numbers"):
        w = aw.AxesWidget(df)
    assert w.axes == ["x"]
    with pytest.raises(aw.ColumnError, match="column 'z' holds complex numbers"):
        aw.AxesWidget(df, axes=["z"])


# -- clear errors for names and options ------------------------------------------------------------------
def test_hostile_names_and_height_are_clear_errors():
    with pytest.raises(aw.ColumnError, match=r"column 'a\\x00b': the name holds a NUL character"):
        aw.AxesWidget(pl.DataFrame({"a\x00b": [1.0], "c": [2.0]}))
    with pytest.raises(aw.ColumnError, match="the name holds a lone surrogate"):
        aw.AxesWidget({"a\ud800": np.array([1.0])})
    odd = pd.DataFrame([[1.0, 2.0]], columns=pd.Index(["a\ud800", "b"], dtype=object))
    with pytest.warns(UserWarning, match="lone surrogate"):
        w = aw.AxesWidget(odd)
    assert w.axes == ["b"]
    with pytest.raises(aw.ColumnError, match="lone surrogate"):
        aw.AxesWidget(pd.DataFrame({"c": pd.Series(["ok", "x\udc00"], dtype=object)}), axes=["c"])
    with pytest.raises(aw.ColumnError, match="an empty column name appears 2 times"):
        aw.AxesWidget(pd.DataFrame([[1.0, 2.0]], columns=["", ""]))
    with pytest.raises(aw.ColumnError, match="an empty column name appears 2 times"):
        aw.AxesWidget(pd.DataFrame([[1.0, 2.0]], columns=["", ""]), axes=[""])
    for bad in (0, 119, 4001, 10**6):
        with pytest.raises(traitlets.TraitError, match=f"height must be 120..4000 pixels, got {bad}"):
            aw.AxesWidget(pd.DataFrame({"a": [1.0]}), height=bad)
    w = aw.AxesWidget(pd.DataFrame({"a": [1.0]}), height=120)
    with pytest.raises(traitlets.TraitError, match="height must be"):
        w.height = 10**6
    assert w.height == 120


# -- to_query ----------------------------------------------------------------------------------------------
def test_query_of_categories_of_dates_and_numbers():
    days = [pd.Timestamp("2020-01-01"), pd.Timestamp("2021-06-01 12:00"), None]
    df = pd.DataFrame(
        {
            "day": pd.Categorical(days),
            "size": pd.Categorical([1.5, 2.5, 1.5]),
            "n": pd.Categorical([1, 2, 3]),
        }
    )
    w = aw.AxesWidget(df, ranges={"day": ["2021-06-01 12:00:00", None], "size": ["1.5"], "n": ["1", "3"]})
    ref = df["day"].isna() | df["day"].isin([pd.Timestamp("2021-06-01 12:00")])  # reference: isin / isna
    ref &= df["size"].isin([1.5]) & df["n"].isin([1, 3])
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)  # reference: DataFrame.query


def test_empty_selection_query_keeps_rows_when_a_column_is_named_index():
    df = pd.DataFrame({"index": [1.0, np.nan, 3.0], "x": [np.nan, 2.0, 3.0]})
    w = aw.AxesWidget(df)
    pd.testing.assert_frame_equal(df.query(w.to_query()), df)  # reference: DataFrame.query keeps all


@pytest.mark.parametrize(
    "name", ["line\nbreak", "tab\there", "bell\x07", "e\u0301", "zero\u200bwidth", "   "]
)
def test_query_refuses_names_it_cannot_express(name):
    df = pd.DataFrame({name: [1.0, 2.0], "y": [1.0, 2.0]})
    w = aw.AxesWidget(df, ranges={name: [[1.5, None]]})
    with pytest.raises(ValueError, match=re.escape(f"column {name!r}")):
        w.to_query()


# -- CSP ------------------------------------------------------------------------------------------------
def test_exported_page_forbids_base_and_form_targets():
    import html

    page = aw.AxesWidget(pd.DataFrame({"a": [1.0, 2.0]})).to_html()
    csp = html.unescape(re.search(r'http-equiv="Content-Security-Policy" content="([^"]*)"', page).group(1))
    directives = {d.split()[0]: d.split()[1:] for d in csp.split(";") if d.strip()}
    # reference: CSP Level 3 — base-uri and form-action do not fall back to default-src
    assert directives["base-uri"] == ["'none'"] and directives["form-action"] == ["'none'"]


def test_warnings_are_not_raised_for_plain_tables():
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        aw.AxesWidget(pd.DataFrame({"a": [1.0, 2.0], "b": ["x", "y"]}))
