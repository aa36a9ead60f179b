"""The data-source boundary and its in-memory source (axeswidget.sources).

The in-memory source must give exactly what today's code gives (encode.encode_frame,
selection.MaskEvaluator, density.neighbour_counts) and what pandas/numpy give on the same rows.
"""

from __future__ import annotations

import narwhals as nw
import numpy as np
import pandas as pd
import polars as pl
import pyarrow as pa
import pytest

from axeswidget import density
from axeswidget.encode import encode_frame
from axeswidget.evaluate import MaskEvaluator
from axeswidget.selection import normalise
from axeswidget.sources import MemorySource, NotInMemoryError, SourceError, axis_bins, open_source
from tests.source_reference import ORDER, SELECTION, check_against_pandas, pump_table, reference_mask


@pytest.fixture(scope="module")
def table():
    return pump_table()


def test_memory_source_matches_pandas(table):
    source = open_source(table)
    assert isinstance(source, MemorySource) and source.in_memory
    check_against_pandas(source, table)


def test_memory_source_is_todays_code(table):
    source = open_source(table)
    today = encode_frame(table.copy(deep=False))
    assert list(source.columns) == list(today)
    for name, col in today.items():
        np.testing.assert_array_equal(source.columns[name].codes, col.codes)
        assert source.columns[name].spec().keys() == col.spec().keys()
    ranges = normalise(SELECTION, today)
    mask = MaskEvaluator(today, len(table)).update(ranges)
    np.testing.assert_array_equal(source.mask(ranges), mask)
    np.testing.assert_array_equal(mask, reference_mask(table))
    numeric = ["flow", "stage", "pressure", "when"]  # density.py bins codes of linear axes
    got = source.pair_counts(numeric, 64, ranges)
    want = density.neighbour_counts({a: today[a].codes for a in numeric}, numeric, 64, mask)
    for g, w in zip(got, want, strict=True):
        np.testing.assert_array_equal(g, w)


def test_category_bins_are_bands_or_split_evenly():
    frame = pd.DataFrame({"label": [f"L{i:03d}" for i in range(80)] + [None]})
    col = encode_frame(frame, ["label"])["label"]  # 80 distinct labels read as identifiers: named
    assert axis_bins(col, col.codes, 128).tolist() == list(range(61)) + [60] * 19 + [128]
    # 61 bands in 8 bins: band b -> b * 8 // 61 (checked by hand for b = 0, 7, 8, 60)
    small = axis_bins(col, col.codes, 8)
    assert small[[0, 7, 8, 60, 80]].tolist() == [0, 0, 1, 7, 8]


@pytest.mark.parametrize("kind", ["pandas", "polars", "pyarrow", "polars-lazy"])
def test_every_input_type_gives_the_same_rows(table, kind):
    native = {
        "pandas": lambda: table,
        "polars": lambda: pl.from_pandas(table),
        "pyarrow": lambda: pa.Table.from_pandas(table, preserve_index=False),
        "polars-lazy": lambda: pl.from_pandas(table).lazy(),
    }[kind]()
    source = open_source(native)
    assert source.in_memory
    expected = reference_mask(table)
    ranges = normalise(SELECTION, source.columns)
    assert source.count(ranges) == expected.sum()
    picked = source.selected(ranges)
    if kind == "polars-lazy":
        assert isinstance(picked, pl.LazyFrame)  # stays lazy
        picked = picked.collect()
    assert type(picked).__module__.split(".")[0] == type(native).__module__.split(".")[0]
    got = nw.from_native(picked, eager_only=True).to_pandas()
    want = table[expected].reset_index(drop=True)
    assert len(got) == len(want)
    np.testing.assert_array_equal(got["pressure"].to_numpy(), want["pressure"].to_numpy())
    # the narwhals expression picks the same rows on the input's own type
    filtered = nw.from_native(native).filter(source.filter_expression(ranges))
    if isinstance(filtered, nw.LazyFrame):
        filtered = filtered.collect()
    assert len(filtered) == expected.sum()


def test_pandas_selected_keeps_the_index(table):
    indexed = table.set_axis(pd.RangeIndex(1000, 1000 + len(table)))
    source = open_source(indexed)
    ranges = normalise(SELECTION, source.columns)
    picked = source.selected(ranges)
    # reference: pandas boolean indexing
    pd.testing.assert_frame_equal(picked, indexed[reference_mask(table)])


def test_dict_and_numpy_inputs():
    data = {"a": np.arange(10.0), "b": np.arange(10) % 3}
    source = open_source(data)
    ranges = normalise({"a": [[2, 6]]}, source.columns)
    assert source.selected(ranges)["b"].tolist() == [2, 0, 1, 2, 0]
    grid = np.arange(20.0).reshape(10, 2)
    source = open_source(grid, names=["x", "y"])
    picked = source.selected(normalise({"y": [[5, 9]]}, source.columns))
    assert picked.tolist() == [[4.0, 5.0], [6.0, 7.0], [8.0, 9.0]]


def test_sample_is_seeded(table):
    source = open_source(table)
    first, again, other = source.sample(200, seed=1), source.sample(200, seed=1), source.sample(200, seed=2)
    assert len(first) == 200 and np.array_equal(first.positions, again.positions)
    assert not np.array_equal(first.positions, other.positions)
    for axis in ORDER:
        np.testing.assert_array_equal(first.codes[axis], source.columns[axis].codes[first.positions])
    pd.testing.assert_frame_equal(first.rows, table.iloc[first.positions][ORDER])
    assert len(source.sample(10**6)) == len(table)


def test_memory_source_has_no_sql_and_engine_questions_are_clear(table):
    source = open_source(table)
    with pytest.raises(SourceError, match="filter_expression"):
        source.filter_sql({})
    with pytest.raises(SourceError, match="unknown axis 'nope'"):
        source.pair_counts(["flow", "nope"])
    with pytest.raises(ValueError, match="more than once"):
        source.pair_counts(["flow", "flow"])
    assert issubclass(NotInMemoryError, RuntimeError)


def test_unsupported_lazy_types_and_missing_paths_are_named(tmp_path):
    with pytest.raises(TypeError, match="cannot read a table from object"):
        open_source(object())
    missing = tmp_path / "nowhere" / "*.parquet"
    with pytest.raises(SourceError, match="no files found at .*nowhere"):
        open_source(str(missing))


def test_arrow_record_batch_and_narwhals_wrappers_keep_their_type(table):
    batch = pa.RecordBatch.from_pandas(table, preserve_index=False)
    source = open_source(batch)
    picked = source.selected(normalise(SELECTION, source.columns))
    assert isinstance(picked, pa.RecordBatch) and picked.num_rows == reference_mask(table).sum()
    wrapped = nw.from_native(pl.from_pandas(table))
    source = open_source(wrapped)
    assert isinstance(source.selected(normalise(SELECTION, source.columns)), pl.DataFrame)
