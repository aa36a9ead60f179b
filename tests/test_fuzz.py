"""Hypothesis suite over mixed frames and random sequences of steps (issue 12).

Frames mix every column kind with NaN/NA/±inf, ±1e308, -0.0, awkward unicode names, 0 and 1 rows, given
as pandas, pyarrow, polars, dict or numpy. Steps: build, assign ranges, swap data, resume, keep/recall,
set order, log scale, colour. After every step either the step raised a clear error (ValueError /
TraitError naming the column or axis) and the widget is exactly as before, or ``w.mask`` equals an
independent pandas reference computed here from the original frame and ``w.ranges``.
"""

from __future__ import annotations

import math
import os

import numpy as np
import pandas as pd
import polars as pl
import pyarrow as pa
import pytest
import traitlets
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

import axeswidget as aw
from tests.widget_state import widget_state

NAMES = ["x", "é tude", "constructor", "__proto__", "index", "名前", "a b", "toString", "n\u00e9e", "valueOf"]
KINDS = [
    "float",
    "int",
    "bigint",
    "nullable_int",
    "text",
    "truefalse",
    "bool",
    "date",
    "date_tz",
    "span",
    "empty",
]
FLOATS = st.one_of(
    st.floats(-100, 100),
    st.sampled_from([np.nan, np.inf, -np.inf, 1e308, -1e308, -0.0, 0.0]),
)


def column(kind: str, n: int, draw) -> pd.Series:
    if kind == "float":
        return pd.Series(draw(st.lists(FLOATS, min_size=n, max_size=n)), dtype="float64")
    if kind == "int":
        return pd.Series(draw(st.lists(st.integers(-5, 5), min_size=n, max_size=n)), dtype="int64")
    if kind == "bigint":
        base = draw(st.sampled_from([2**53, 2**62, -(2**62)]))
        return pd.Series(
            [base + v for v in draw(st.lists(st.integers(0, 4), min_size=n, max_size=n))], dtype="int64"
        )
    if kind == "nullable_int":
        vals = draw(st.lists(st.one_of(st.integers(-3, 3), st.none()), min_size=n, max_size=n))
        return pd.Series(pd.array(vals, dtype="Int64"))
    if kind == "text":
        vals = draw(
            st.lists(st.one_of(st.sampled_from(["p", "q", "é", "r s"]), st.none()), min_size=n, max_size=n)
        )
        return pd.Series(vals, dtype=object)
    if kind == "truefalse":
        vals = draw(st.lists(st.sampled_from(["True", "False", None]), min_size=n, max_size=n))
        return pd.Series(vals, dtype=object)
    if kind == "bool":
        return pd.Series(draw(st.lists(st.booleans(), min_size=n, max_size=n)), dtype=bool)
    if kind in ("date", "date_tz"):
        days = draw(st.lists(st.one_of(st.integers(0, 30), st.none()), min_size=n, max_size=n))
        s = pd.Series(
            [
                pd.Timestamp("2024-03-20") + pd.Timedelta(days=d, hours=3) if d is not None else pd.NaT
                for d in days
            ],
            dtype="datetime64[ns]",
        )
        return s.dt.tz_localize("UTC").dt.tz_convert("Europe/Berlin") if kind == "date_tz" else s
    if kind == "span":
        secs = draw(st.lists(st.one_of(st.integers(0, 100), st.none()), min_size=n, max_size=n))
        return pd.Series(pd.to_timedelta([s if s is not None else np.nan for s in secs], unit="s"))
    return pd.Series([None] * n, dtype=object)  # empty / all-missing text


@st.composite
def frames(draw, names=None):
    n = draw(st.sampled_from([0, 1, 2, 3, 5, 8]))
    names = names or draw(st.lists(st.sampled_from(NAMES), min_size=1, max_size=4, unique=True))
    return pd.DataFrame({name: column(draw(st.sampled_from(KINDS)), n, draw) for name in names})


def as_input(df: pd.DataFrame, how: str):
    """The same table in another input type (falling back to pandas where that type cannot hold it)."""
    plain = all(df[c].dtype.kind in "fiub" for c in df.columns)
    if how == "numpy" and plain and all(df[c].dtype.kind == "f" for c in df.columns):
        return df.to_numpy(), list(df.columns)
    if how == "dict" and plain:
        return {c: df[c].to_numpy() for c in df.columns}, None
    if how == "pyarrow":
        return pa.Table.from_pandas(df, preserve_index=False), None
    if how == "polars":
        return pl.from_pandas(df), None
    return df, None


def label_of(value) -> str:
    return "True" if value is True else "False" if value is False else str(value)


def reference(df: pd.DataFrame, ranges: dict) -> np.ndarray:
    """The selection computed with pandas alone (Series.between semantics, isin, isna)."""
    keep = pd.Series(True, index=df.index)
    for axis, items in ranges.items():
        s = df[axis]
        part = pd.Series(False, index=df.index)
        for item in items:
            if item is None:
                part |= s.isna()  # reference: Series.isna
            elif isinstance(item, str):
                # reference: isin on the labels as text
                part |= s.map(lambda v, item=item: not pd.isna(v) and label_of(v) == item).astype(bool)
            else:
                lo, hi = item
                if pd.api.types.is_datetime64_any_dtype(s.dtype):
                    lo, hi = (None if e is None else pd.Timestamp(e) for e in (lo, hi))
                elif pd.api.types.is_timedelta64_dtype(s.dtype):
                    lo, hi = (
                        None if e is None else pd.Timedelta(round(e * 1e9), unit="ns") for e in (lo, hi)
                    )
                hit = s.notna()
                if lo is not None:
                    hit &= (s >= lo).fillna(False)  # reference: Series.between, left end inclusive
                if hi is not None:
                    hit &= (s <= hi).fillna(False)  # right end inclusive
                part |= hit.astype(bool)
        keep &= part
    return keep.to_numpy(dtype=bool)


snapshot = widget_state


def draw_items(draw, w: aw.AxesWidget, axis: str):
    col = w.column(axis)
    if col.kind in ("category", "boolean"):
        pool = list(col.labels) + [None, "nope"]
        return draw(st.lists(st.sampled_from(pool), max_size=3))
    if col.kind == "datetime":
        ends = st.one_of(
            st.none(),
            st.integers(-3, 34).map(
                lambda d: (pd.Timestamp("2024-03-20") + pd.Timedelta(days=d, hours=3)).isoformat()
            ),
            st.sampled_from(["9999-12-31", "2024-03-31 02:30", "not a date"]),
        )
    elif col.kind == "timedelta":
        ends = st.one_of(st.none(), st.integers(-5, 110).map(float), st.sampled_from([1e300, math.nan]))
    elif col.exact is not None:
        lo, hi = (
            (int(col.exact[~col.missing].min()), int(col.exact[~col.missing].max()))
            if (~col.missing).any()
            else (0, 1)
        )
        ends = st.one_of(st.none(), st.integers(lo - 2, hi + 2), st.sampled_from([10**400, 2**70]))
    else:
        ends = st.one_of(st.none(), FLOATS, st.sampled_from([10**400, "1"]))
    pair = st.lists(ends, min_size=2, max_size=2)
    return draw(st.lists(st.one_of(pair, st.none()), max_size=2))


CLEAR = (ValueError, traitlets.TraitError)


def check_clear(err: BaseException, names) -> None:
    message = str(err)
    assert message and isinstance(err, CLEAR), repr(err)
    assert any(repr(n) in message or n in message for n in names), message


def check_mask(w: aw.AxesWidget, df: pd.DataFrame) -> None:
    assert w.count == int(w.mask.sum())
    np.testing.assert_array_equal(w.mask, reference(df, w.ranges))


@pytest.mark.filterwarnings("ignore::UserWarning")
@settings(
    max_examples=int(os.environ.get("FUZZ_EXAMPLES", 50)),
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
@given(st.data())
def test_random_steps_keep_state_or_match_pandas(data):
    draw = data.draw
    df = draw(frames())
    how = draw(st.sampled_from(["pandas", "pyarrow", "polars", "dict", "numpy"]))
    table, names = as_input(df, how)
    try:
        w = aw.AxesWidget(table, names=names)
    except CLEAR as err:  # no drawable column at all
        check_clear(err, list(df.columns) + ["no column"])
        return
    check_mask(w, df)
    for _ in range(draw(st.integers(1, 6))):
        step = draw(
            st.sampled_from(["ranges", "ranges", "swap", "resume", "keep", "recall", "order", "log", "pin"])
        )
        before = snapshot(w)
        involved = list(w.axes)
        try:
            if step == "ranges":
                axes = draw(st.lists(st.sampled_from(w.axes), max_size=3, unique=True))
                w.ranges = {a: draw_items(draw, w, a) for a in axes}
                involved = axes
            elif step in ("swap", "resume"):
                new = draw(
                    frames(
                        names=draw(
                            st.lists(
                                st.sampled_from(NAMES[:4] + list(w.axes)), min_size=1, max_size=4, unique=True
                            )
                        )
                    )
                )
                table, names = as_input(
                    new, draw(st.sampled_from(["pandas", "pyarrow", "polars", "dict", "numpy"]))
                )
                involved = list(new.columns) + involved + ["no column"]
                if step == "swap":
                    w.data = table
                else:
                    old_state = snapshot(w)
                    w2 = aw.AxesWidget(table, names=names, resume=w)
                    assert snapshot(w) == old_state  # resume= never changes the widget it reads
                    w = w2
                df = new
            elif step == "keep":
                w.keep(draw(st.sampled_from(["g1", "g2"])))
            elif step == "recall" and w.saved:
                w.recall(draw(st.sampled_from(sorted(w.saved))))
            elif step == "order":
                w.order = draw(st.permutations(w.axes).flatmap(lambda p: st.sampled_from([p, p[:-1]])))
            elif step == "log":
                w.log_axes = draw(st.lists(st.sampled_from(w.axes), max_size=2, unique=True))
            elif step == "pin":
                w.pinned = draw(st.integers(-1, len(df)))
            event(f"{step} ok")
        except CLEAR as err:
            event(f"{step} refused")
            check_clear(err, involved + ["pinned", "order"])
            assert snapshot(w) == before, f"{step} failed but changed the widget"
        check_mask(w, df)
        assert set(w.order) == set(w.axes) and len(w.order) == len(w.axes)
        for name in w.saved:  # kept selections stay valid for the data shown
            w.group_mask(name)
        w.labels()
        assert w.pinned_index is None or w.pinned < len(w.data)
        assert w.color_by in ("", *w.axes) and w.bundle_by in ("", *w.axes)


# -- to_query on awkward names -----------------------------------------------------------------------------
QUERY_NAMES = NAMES + [
    "if",
    "and",
    "a.b",
    "1st",
    "x-y",
    "line\nbreak",
    "tab\t",
    "e\u0301",
    "ﬁ",
    "fi",
    "a_b",
    "😀",
    "$",
    "#",
]


@pytest.mark.filterwarnings("ignore::UserWarning")
@settings(
    max_examples=int(os.environ.get("FUZZ_EXAMPLES", 80)),
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
@given(st.data())
def test_query_gives_the_selected_rows_or_names_the_column(data):
    draw = data.draw
    names = draw(st.lists(st.sampled_from(QUERY_NAMES), min_size=1, max_size=4, unique=True))
    df = draw(frames(names=names))
    try:
        w = aw.AxesWidget(df)
    except CLEAR:
        return
    axes = draw(st.lists(st.sampled_from(w.axes), max_size=3, unique=True))
    try:
        w.ranges = {a: draw_items(draw, w, a) for a in axes}
    except CLEAR:
        pass
    try:
        expr = w.to_query()
    except ValueError as err:
        event("query refused")
        assert any(repr(n) in str(err) for n in w.axes), str(err)
        return
    event("query checked")
    # reference: DataFrame.query on the original frame
    pd.testing.assert_frame_equal(df.query(expr), w.selected)
