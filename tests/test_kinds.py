"""Every column kind, every input type, and the bad-input list: masks against pandas references."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pyarrow as pa
import pytest
import traitlets
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import axeswidget as aw
from axeswidget.encode import CATEGORY_BAND_LIMIT, CODE_MAX, CODE_MISSING


def unpack(w):
    return np.unpackbits(np.frombuffer(w.mask_bits, np.uint8), bitorder="little")[: len(w.data)].astype(bool)


@pytest.fixture
def mixed():
    rng = np.random.default_rng(5)
    n = 400
    when = pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 400 * 24, n), unit="h")
    df = pd.DataFrame(
        {
            "x": rng.normal(size=n),
            "k": rng.integers(0, 6, n),
            "site": pd.Categorical(rng.choice(["b", "a", "c"], n), categories=["c", "b", "a"]),
            "word": rng.choice(["alpha", "beta", "gamma", "beta", "beta"], n),
            "flag": rng.random(n) < 0.3,
            "when": when,
            "when_tz": when.tz_localize("UTC").tz_convert("Europe/Berlin"),
            "took": pd.to_timedelta(rng.integers(0, 7200, n), unit="s"),
        }
    )
    for col in ["x", "word", "when", "took"]:
        df.loc[rng.random(n) < 0.1, col] = None
    return df


def test_kinds_are_recognised(mixed):
    w = aw.AxesWidget(mixed)
    kinds = {c: w.column(c).kind for c in w.axes}
    assert kinds == {
        "x": "number",
        "k": "integer",
        "site": "category",
        "word": "category",
        "flag": "boolean",
        "when": "datetime",
        "when_tz": "datetime",
        "took": "timedelta",
    }
    assert w.column("site").labels == ["c", "b", "a"]  # pandas Categorical order respected
    counts = mixed["word"].value_counts()  # reference: pandas value_counts, most frequent first
    assert w.column("word").labels == list(counts.index)
    assert w.column("word").counts == list(counts.to_numpy())
    assert w.column("flag").labels == ["False", "True"]
    assert w.column("when_tz").tz == "Europe/Berlin"


def test_mask_per_kind_matches_pandas(mixed):
    w = aw.AxesWidget(mixed)
    cases = [
        ({"x": [[-0.5, 0.7]]}, mixed["x"].between(-0.5, 0.7)),  # reference: Series.between
        ({"k": [[2, 3]]}, mixed["k"].between(2, 3)),  # reference: Series.between
        ({"site": ["a", "c"]}, mixed["site"].isin(["a", "c"])),  # reference: Series.isin
        ({"word": ["beta", None]}, mixed["word"].isin(["beta"]) | mixed["word"].isna()),  # isin | isna
        ({"flag": [True]}, mixed["flag"] == True),  # noqa: E712 - reference: elementwise ==
        (
            {"when": [["2024-03-01", "2024-06-30T12:00:00"]]},
            mixed["when"].between(pd.Timestamp("2024-03-01"), pd.Timestamp("2024-06-30 12:00")),
        ),
        (
            {"when_tz": [[pd.Timestamp("2024-03-01", tz="UTC"), None]]},
            mixed["when_tz"] >= pd.Timestamp("2024-03-01", tz="UTC"),
        ),
        (
            {"took": [[pd.Timedelta("10min"), 3600]]},
            mixed["took"].between(pd.Timedelta("10min"), pd.Timedelta("1h")),
        ),
        ({"x": [None]}, mixed["x"].isna()),  # reference: Series.isna (the missing lane)
        ({"when": [None, ["2024-12-01", None]]}, mixed["when"].isna() | (mixed["when"] >= "2024-12-01")),
    ]
    for ranges, ref in cases:
        w.ranges = ranges
        np.testing.assert_array_equal(w.mask, ref.fillna(False).to_numpy(dtype=bool), err_msg=str(ranges))
        np.testing.assert_array_equal(unpack(w), w.mask)


def test_datetime_ranges_are_iso_text_in_the_column_zone(mixed):
    w = aw.AxesWidget(mixed, axes=["when", "when_tz"])
    w.ranges = {
        "when_tz": [["2024-03-01T00:00:00+00:00", None]],
        "when": [[pd.Timestamp("2024-02-01"), None]],
    }
    assert w.ranges["when_tz"] == [["2024-03-01T01:00:00+01:00", None]]
    assert w.ranges["when"] == [["2024-02-01T00:00:00", None]]
    with pytest.raises(traitlets.TraitError, match="'when': .* has a time zone but the column has none"):
        w.ranges = {"when": [["2024-02-01T00:00:00+01:00", None]]}


def test_infinities_are_pinned_to_the_ends_and_taken_by_open_ends():
    df = pd.DataFrame({"v": [1.0, 2.0, np.inf, -np.inf, np.nan, 3.0]})
    w = aw.AxesWidget(df)
    col = w.column("v")
    assert (col.lo, col.hi) == (1.0, 3.0)
    assert list(col.codes) == [0, CODE_MAX // 2, CODE_MAX, 0, CODE_MISSING, CODE_MAX]
    assert w.table["columns"][0]["inf"] == [1, 1]
    w.ranges = {"v": [[2.0, None]]}  # an open end takes +inf in (reference: pandas >= 2.0)
    np.testing.assert_array_equal(w.mask, (df["v"] >= 2.0).to_numpy())
    w.ranges = {"v": [[2.0, 3.0]]}  # a closed end does not (reference: Series.between)
    np.testing.assert_array_equal(w.mask, df["v"].between(2.0, 3.0).to_numpy())
    w.ranges = {"v": [[-np.inf, 1.5]]}  # -inf as lo is read as an open end
    assert w.ranges == {"v": [[None, 1.5]]}
    np.testing.assert_array_equal(w.mask, (df["v"] <= 1.5).to_numpy())


@pytest.mark.parametrize(
    "series, kind",
    [
        (pd.array([1, None, 3, 3], dtype="Int64"), "integer"),
        (pd.array([1.5, None, 3.0, 2.0], dtype="Float64"), "number"),
        (pd.array([True, None, False, True], dtype="boolean"), "boolean"),
        (pd.array(["a", None, "b", "a"], dtype="string"), "category"),
        (pd.array([1, None, 3, 3], dtype=pd.ArrowDtype(pa.int64())), "integer"),
        (pd.array(["a", None, "b", "a"], dtype=pd.ArrowDtype(pa.string())), "category"),
        (pd.array([True, None, False, True], dtype=pd.ArrowDtype(pa.bool_())), "boolean"),
        (
            pd.array(pd.to_datetime(["2024-01-01", None, "2024-02-01", "2024-03-01"])).astype(
                pd.ArrowDtype(pa.timestamp("ns"))
            ),
            "datetime",
        ),
    ],
)
def test_nullable_and_arrow_backed_dtypes(series, kind):
    df = pd.DataFrame({"c": series})
    w = aw.AxesWidget(df)
    col = w.column("c")
    assert col.kind == kind
    assert col.n_missing == int(df["c"].isna().sum())  # reference: Series.isna
    w.ranges = {"c": [None]}
    np.testing.assert_array_equal(w.mask, df["c"].isna().to_numpy())


def test_many_categories_share_one_band_but_select_exactly():
    labels = [f"id{i:03d}" for i in range(150)]
    rng = np.random.default_rng(0)
    df = pd.DataFrame(
        {"id": rng.choice(labels, 3000, p=np.linspace(2, 1, 150) / np.linspace(2, 1, 150).sum())}
    )
    w = aw.AxesWidget(df)
    spec = w.table["columns"][0]
    assert len(spec["labels"]) == CATEGORY_BAND_LIMIT
    assert spec["rest"]["labels"] == 150 - CATEGORY_BAND_LIMIT
    rare = w.column("id").labels[-1]
    w.ranges = {"id": [rare]}
    np.testing.assert_array_equal(w.mask, (df["id"] == rare).to_numpy())  # reference: elementwise ==


# -- inputs ----------------------------------------------------------------------------------------
def frame():
    return pd.DataFrame({"a": [1.0, 2.0, 3.0, 4.0], "b": ["x", "y", "x", None]})


def test_polars_in_polars_out():
    pl = pytest.importorskip("polars")
    src = pl.DataFrame({"a": [1.0, 2.0, 3.0, 4.0], "b": ["x", "y", "x", None]})
    w = aw.AxesWidget(src, ranges={"a": [[2, 3]]})
    out = w.selected
    assert isinstance(out, pl.DataFrame)
    assert out["a"].to_list() == [2.0, 3.0]  # reference: polars filter on the same condition
    assert out.equals(src.filter((pl.col("a") >= 2) & (pl.col("a") <= 3)))


def test_pyarrow_table_record_batch_and_capsule():
    table = pa.table({"a": [1.0, 2.0, 3.0, 4.0], "b": ["x", "y", "x", None]})
    for src in (table, table.to_batches()[0]):
        w = aw.AxesWidget(src, ranges={"b": ["x"]})
        out = w.selected
        assert type(out) is type(src)
        assert out.column("a").to_pylist() == [1.0, 3.0]

    class Stream:  # any object with the Arrow PyCapsule stream interface
        def __arrow_c_stream__(self, requested_schema=None):
            return table.__arrow_c_stream__(requested_schema)

    w = aw.AxesWidget(Stream(), ranges={"a": [[2, 4]]})
    assert w.selected["a"].tolist() == [2.0, 3.0, 4.0]


def test_dict_and_numpy_inputs():
    w = aw.AxesWidget({"a": np.arange(5.0), "b": np.array(list("xyzxy"))}, ranges={"b": ["x"]})
    assert isinstance(w.selected, dict) and w.selected["a"].tolist() == [0.0, 3.0]
    arr = np.arange(12.0).reshape(4, 3)
    w = aw.AxesWidget(arr, names=["p", "q", "r"], ranges={"q": [[4, 7]]})
    np.testing.assert_array_equal(w.selected, arr[(arr[:, 1] >= 4) & (arr[:, 1] <= 7)])
    with pytest.raises(ValueError, match="2 names for 3 columns"):
        aw.AxesWidget(arr, names=["p", "q"])
    with pytest.raises(TypeError, match="cannot read a table from str"):
        aw.AxesWidget("not a table")


# -- bad input ---------------------------------------------------------------------------------------
def test_empty_frame_shows_axes_and_zero_rows():
    w = aw.AxesWidget(pd.DataFrame({"a": pd.Series([], dtype=float), "b": pd.Series([], dtype=str)}))
    assert w.count == 0 and w.mask.shape == (0,) and w.axes == ["a", "b"]
    w.ranges = {"a": [[0, 1]]}
    assert w.selected.empty


def test_frame_without_columns_is_a_clear_error():
    with pytest.raises(aw.ColumnError, match="it has no columns"):
        aw.AxesWidget(pd.DataFrame())


def test_one_row_all_missing_and_constant_columns():
    w = aw.AxesWidget(pd.DataFrame({"one": [5.0], "gone": [np.nan], "const": [2.0]}))
    assert w.column("one").lo == w.column("one").hi == 5.0
    assert w.column("gone").n_missing == 1 and list(w.column("gone").codes) == [CODE_MISSING]
    w.ranges = {"const": [[2.0, 2.0]]}  # reference: Series.between(2, 2) is True
    assert w.mask.tolist() == [True]
    w.ranges = {"gone": [None]}
    assert w.mask.tolist() == [True]


def test_duplicate_names_are_skipped_or_named_in_the_error():
    df = pd.DataFrame([[1.0, 2.0, 3.0]], columns=["a", "a", "b"])
    with pytest.warns(UserWarning, match="'a' \\(the name appears more than once\\)"):
        w = aw.AxesWidget(df)
    assert w.axes == ["b"]
    with pytest.raises(aw.ColumnError, match="column name 'a' appears more than once"):
        aw.AxesWidget(df, axes=["a"])


def test_non_string_and_multiindex_names():
    w = aw.AxesWidget(pd.DataFrame({0: [1.0, 2.0], 7: [3.0, 4.0]}))
    assert w.axes == ["0", "7"]
    w = aw.AxesWidget(pd.DataFrame({0: [1.0, 2.0]}), axes=[0])
    assert w.axes == ["0"]
    cols = pd.MultiIndex.from_tuples([("pump", "flow"), ("pump", "head")])
    w = aw.AxesWidget(pd.DataFrame([[1.0, 2.0], [3.0, 4.0]], columns=cols), ranges={"pump / head": [[3, 5]]})
    assert w.axes == ["pump / flow", "pump / head"] and w.mask.tolist() == [False, True]


def test_values_of_1e300():
    df = pd.DataFrame({"v": [-1e300, 0.0, 1e300, 5e299]})
    w = aw.AxesWidget(df, ranges={"v": [[1e299, 1e300]]})
    np.testing.assert_array_equal(w.mask, df["v"].between(1e299, 1e300).to_numpy())  # reference: between
    assert w.column("v").codes.tolist() == [0, CODE_MAX // 2, CODE_MAX, round(0.75 * CODE_MAX)]


def test_the_widget_keeps_its_own_snapshot_when_the_frame_is_mutated():
    df = pd.DataFrame({"a": [1.0, 2.0, 3.0]})
    w = aw.AxesWidget(df, ranges={"a": [[2, 3]]})
    df.loc[0, "a"] = 2.5  # the user edits the frame afterwards
    assert w.mask.tolist() == [False, True, True]
    assert w.selected["a"].tolist() == [2.0, 3.0]  # rows come from the snapshot


@pytest.mark.parametrize(
    "ranges, message",
    [
        ({"ghost": [[1, 2]]}, "unknown axis 'ghost'"),
        ({"x": [[2, 1]]}, "range on 'x': lo 2.0 is greater than hi 1.0"),
        ({"x": [[np.nan, 1]]}, "range on 'x': an end is NaN"),
        ({"x": [["1", 2]]}, "range on 'x': '1' is a str, expected a number"),
        ({"when": [[5, 6]]}, "range on 'when': 5 is a int, expected a date/time"),
        ({"when": [["yesterday-ish", None]]}, "cannot read 'yesterday-ish' as a date/time"),
        ({"site": [[1, 2]]}, "category axis takes labels"),
        ({"site": ["zzz"]}, "unknown label 'zzz'"),
        ({"took": [["soon", None]]}, "cannot read 'soon' as a duration"),
    ],
)
def test_bad_ranges_are_clear_errors_and_nothing_is_lost(mixed, ranges, message):
    w = aw.AxesWidget(mixed, ranges={"k": [[1, 2]]})
    before = w.mask.copy()
    with pytest.raises(traitlets.TraitError, match=message.replace("(", r"\(").replace("[", r"\[")):
        w.ranges = ranges
    assert w.ranges == {"k": [[1.0, 2.0]]}
    np.testing.assert_array_equal(w.mask, before)


def test_log_scale_only_for_positive_numbers(mixed):
    df = pd.DataFrame({"pos": [1.0, 10.0, 1000.0], "neg": [-1.0, 0.0, 1.0], "c": ["a", "b", "c"]})
    w = aw.AxesWidget(df)
    w.log_axes = ["pos"]
    assert w.table["columns"][0]["log"] is True
    assert w.column("pos").codes.tolist() == [
        0,
        round(CODE_MAX / 3),
        CODE_MAX,
    ]  # log10: 0, 1/3, 1 of the span
    with pytest.raises(traitlets.TraitError, match="axis 'neg' has values <= 0"):
        w.log_axes = ["neg"]
    with pytest.raises(traitlets.TraitError, match="axis 'c' is a category axis"):
        w.log_axes = ["c"]


def test_swapping_data_keeps_ranges_clipped_and_warns_about_the_rest():
    old = pd.DataFrame({"a": [1.0, 5.0, 9.0], "b": ["x", "y", "z"], "c": [1.0, 2.0, 3.0]})
    w = aw.AxesWidget(old, ranges={"a": [[2, 20]], "b": ["z"], "c": [[1, 2]]})
    w.order = ["c", "b", "a"]
    new = pd.DataFrame({"a": [0.0, 4.0, 8.0, 6.0], "b": ["x", "x", "y", "y"]})
    with pytest.warns(UserWarning) as caught:
        w.data = new
    (message,) = [str(c.message) for c in caught]  # one warning names every drop and change
    assert "axes gone (with their ranges): 'c'" in message
    assert "label 'z' on 'b' (gone from the new data)" in message
    assert "range on 'a' clipped to the new data: [2.0, 8.0]" in message
    assert w.ranges == {"a": [[2.0, 8.0]]}  # clipped to the new domain [0, 8]
    assert w.order == ["b", "a"]
    np.testing.assert_array_equal(w.mask, new["a"].between(2, 8).to_numpy())  # reference: between
    assert w.table["n"] == 4


# -- property test -------------------------------------------------------------------------------------
LABELS = ["p", "q", "r"]


@st.composite
def frames_and_selections(draw):
    n = draw(st.integers(1, 40))
    num = draw(st.lists(st.one_of(st.floats(-100, 100), st.none()), min_size=n, max_size=n))
    cat = draw(st.lists(st.one_of(st.sampled_from(LABELS), st.none()), min_size=n, max_size=n))
    days = draw(st.lists(st.one_of(st.integers(0, 60), st.none()), min_size=n, max_size=n))
    df = pd.DataFrame(
        {
            "num": pd.array(num, dtype="Float64"),
            "cat": pd.Series(cat, dtype=object),
            "day": pd.Series(
                [None if d is None else pd.Timestamp("2024-01-01") + pd.Timedelta(days=d) for d in days],
                dtype="datetime64[ns]",
            ),
        }
    )
    spans = draw(st.lists(st.tuples(st.floats(-120, 120), st.floats(-120, 120)).map(sorted), max_size=2))
    num_lane = draw(st.booleans())
    picked = draw(st.lists(st.sampled_from(LABELS + [None]), max_size=3, unique=True))
    d0, d1 = sorted(draw(st.tuples(st.integers(-5, 65), st.integers(-5, 65))))
    return df, spans, num_lane, picked, (d0, d1)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(frames_and_selections())
def test_mixed_frames_mask_equals_pandas_reference(case):
    df, spans, num_lane, picked, (d0, d1) = case
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        w = aw.AxesWidget(df)
    present = set(w.column("cat").labels) if "cat" in w.axes else set()
    picked = [p for p in picked if p is None or p in present]
    start, end = (
        pd.Timestamp("2024-01-01") + pd.Timedelta(days=d0),
        pd.Timestamp("2024-01-01") + pd.Timedelta(days=d1),
    )
    ranges = {"num": [list(s) for s in spans] + ([None] if num_lane else []), "day": [[start, end]]}
    if "cat" in w.axes:
        ranges["cat"] = picked
    w.ranges = ranges
    # references: Series.between / isin / isna, OR within an axis, AND across axes
    ref = pd.Series(True, index=df.index)
    if spans or num_lane:
        m = df["num"].isna() if num_lane else pd.Series(False, index=df.index)
        for lo, hi in spans:
            m = m | df["num"].between(lo, hi).fillna(False).astype(bool)
        ref &= m
    ref &= df["day"].between(start, end).fillna(False)
    if "cat" in w.axes and picked:
        labels = [p for p in picked if p is not None]
        ref &= df["cat"].isin(labels) | (df["cat"].isna() if None in picked else False)
    np.testing.assert_array_equal(w.mask, ref.to_numpy(dtype=bool))


# -- open data ---------------------------------------------------------------------------------------------
def test_palmerpenguins_categories_and_missing_counts():
    penguins = pytest.importorskip("palmerpenguins").load_penguins()
    # dataset: palmerpenguins (Horst, Hill & Gorman 2020), Palmer Station LTER data shipped with the package
    w = aw.AxesWidget(penguins)
    for name in ["species", "island", "sex"]:
        col = w.column(name)
        counts = penguins[name].value_counts()  # reference: pandas value_counts
        assert dict(zip(col.labels, col.counts, strict=True)) == counts.to_dict()
        assert col.n_missing == int(penguins[name].isna().sum())  # reference: Series.isna
    # published facts of the dataset (recalled from memory): 344 penguins, 11 with sex missing
    assert len(penguins) == 344 and w.column("sex").n_missing == 11
    w.ranges = {"species": ["Gentoo"], "sex": [None]}
    ref = (penguins["species"] == "Gentoo") & penguins["sex"].isna()  # reference: == and isna
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    w.ranges = {"bill_length_mm": [[40, 50], None]}
    ref = penguins["bill_length_mm"].between(40, 50) | penguins["bill_length_mm"].isna()  # between | isna
    np.testing.assert_array_equal(w.mask, ref.to_numpy())


def test_many_pandas_categories_keep_the_most_frequent_as_bands_in_their_order():
    rng = np.random.default_rng(3)
    cats = [f"c{i:03d}" for i in range(100)]
    weights = rng.random(100) ** 4
    values = rng.choice(cats, 20_000, p=weights / weights.sum())
    s = pd.Series(pd.Categorical(values, categories=cats))
    w = aw.AxesWidget(pd.DataFrame({"c": s}))
    spec = w.table["columns"][0]
    counts = s.value_counts()  # reference: pandas value_counts
    top = set(counts.sort_values(ascending=False, kind="stable").index[:CATEGORY_BAND_LIMIT])
    assert set(spec["labels"]) == top
    assert spec["labels"] == [c for c in cats if c in top]  # the categories' own order
    assert spec["counts"] == [int(counts[c]) for c in spec["labels"]]
    rare = next(c for c in cats if c not in top and counts[c] > 0)
    w.ranges = {"c": [rare, spec["labels"][0]]}
    np.testing.assert_array_equal(w.mask, s.isin([rare, spec["labels"][0]]).to_numpy())  # reference: isin


def test_swapping_data_drops_named_axes_that_are_gone():
    old = pd.DataFrame({"a": [1.0, 2.0], "b": [3.0, 4.0], "c": [5.0, 6.0]})
    w = aw.AxesWidget(old, axes=["a", "c"], ranges={"c": [[5, 5.5]]})
    with pytest.warns(UserWarning, match="'c'"):
        w.data = pd.DataFrame({"a": [1.0, 2.0, 3.0], "b": [0.0, 0.0, 0.0]})
    assert w.axes == ["a"] and w.ranges == {} and w.count == 3
    with pytest.raises(aw.ColumnError, match="none of the axes"):
        w.data = pd.DataFrame({"z": [1.0]})
    assert w.axes == ["a"] and w.count == 3  # nothing lost when the swap is refused


def test_the_shared_band_of_rare_labels_can_be_picked_whole():
    labels = [f"id{i:03d}" for i in range(90)]
    rng = np.random.default_rng(9)
    df = pd.DataFrame({"id": rng.choice(labels, 5000), "x": rng.normal(size=5000)})
    w = aw.AxesWidget(df)
    rest = w.column("id").labels[CATEGORY_BAND_LIMIT:]
    w.ranges = {"id": [{"rest": True}]}
    assert w.ranges == {"id": [lab for lab in w.column("id").labels if lab in set(rest)]}
    np.testing.assert_array_equal(w.mask, df["id"].isin(rest).to_numpy())  # reference: Series.isin
    with pytest.raises(traitlets.TraitError, match="the only dict item is"):
        w.ranges = {"id": [{"others": 1}]}
