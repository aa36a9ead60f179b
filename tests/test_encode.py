"""Encoding of columns for the wire: codes, domains, missing values, column choice and errors."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw
from axeswidget.encode import CODE_MAX, CODE_MISSING, ColumnError, encode_frame, quantise


def test_codes_are_linear_over_the_domain_and_round_trip_within_half_a_step():
    rng = np.random.default_rng(0)
    v = rng.normal(50, 20, 10_000)
    codes = quantise(v, v.min(), v.max())
    assert codes.dtype == np.uint16
    assert codes.min() == 0 and codes.max() == CODE_MAX
    back = v.min() + codes / CODE_MAX * (v.max() - v.min())
    step = (v.max() - v.min()) / CODE_MAX
    assert np.max(np.abs(back - v)) <= step / 2 + 1e-12
    # order is kept (reference: numpy.argsort of the exact values, stable ties)
    assert np.all(np.diff(codes[np.argsort(v, kind="stable")].astype(int)) >= 0)


def test_missing_values_get_the_reserved_code_and_are_counted():
    df = pd.DataFrame({"a": [1.0, np.nan, 3.0, None]})
    col = encode_frame(df)["a"]
    assert list(col.codes) == [0, CODE_MISSING, CODE_MAX, CODE_MISSING]
    assert col.n_missing == int(df["a"].isna().sum())  # reference: pandas.Series.isna


def test_constant_column_and_huge_values_do_not_overflow():
    df = pd.DataFrame({"c": [5.0] * 4, "h": [-1e308, 0.0, 1e308, 1e300]})
    cols = encode_frame(df)
    assert list(cols["c"].codes) == [0, 0, 0, 0]
    h = cols["h"].codes
    assert h[0] == 0 and h[2] == CODE_MAX and h[1] == round(CODE_MAX / 2)


def test_wire_is_two_bytes_per_cell():
    df = aw.demo.pump_fleet(1000)
    w = aw.AxesWidget(df, axes=aw.demo.NUMERIC_AXES)
    buffers = [c["codes"] for c in w.table["columns"]]
    assert all(memoryview(b).nbytes == 2 * len(df) for b in buffers)


def test_columns_that_cannot_be_drawn_are_skipped_with_one_warning_listing_them():
    df = pd.DataFrame(
        {"x": [1.0, 2.0], "mixed": [1, "a"], "nested": [[1], [2]], "label": ["a", "b"], "flag": [True, False]}
    )
    with pytest.warns(
        UserWarning, match=r"'mixed' \(mixes value types.*'nested' \(holds nested values"
    ) as rec:
        cols = encode_frame(df)
    assert len(rec) == 1
    assert list(cols) == ["x", "label", "flag"]


def test_frame_without_drawable_column_is_a_clear_error():
    with pytest.raises(ColumnError, match="no column that can be drawn.*'m' \\(mixes value types"):
        aw.AxesWidget(pd.DataFrame({"m": [1, "a"]}))


def test_unknown_axis_name_is_a_clear_error():
    df = pd.DataFrame({"x": [1.0], "y": [2.0]})
    with pytest.raises(ColumnError, match=r"unknown column 'z'.*'x', 'y'"):
        aw.AxesWidget(df, axes=["x", "z"])


def test_naming_a_column_that_cannot_be_drawn_is_a_clear_error():
    df = pd.DataFrame({"x": [1.0], "stuff": [{"a": 1}]})
    with pytest.raises(ColumnError, match="column 'stuff' holds nested values"):
        aw.AxesWidget(df, axes=["x", "stuff"])


def test_axes_pick_and_order():
    df = pd.DataFrame({"a": [1.0], "b": [2.0], "c": [3.0]})
    w = aw.AxesWidget(df, axes=["c", "a"])
    assert w.order == ["c", "a"] and w.axes == ["c", "a"]


def test_integer_columns_with_few_values_are_discrete_with_their_values_as_ticks():
    df = pd.DataFrame({"d": np.array([180, 200, 224, 250, 200], dtype=np.int64), "big": np.arange(5) * 1000})
    cols = encode_frame(df)
    assert cols["d"].kind == "integer" and cols["d"].discrete == [180, 200, 224, 250]


def test_a_span_of_subnormal_numbers_is_quantised_in_order():
    # found by the selection property test: the halves formula turned 0 * inf into NaN codes
    values = np.array([0.0, 5e-324, 1e-323, np.nan])
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no "invalid value" RuntimeWarning
        codes = quantise(values, 0.0, 1e-323)
    assert codes.tolist() == [0, CODE_MAX // 2, CODE_MAX, CODE_MISSING]  # 5e-324 is half of 1e-323
