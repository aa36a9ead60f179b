"""The widget on engine tables: a Parquet folder and a relation through DuckDB, a DataFrame in Spark.

Counts, pair counts and filtered tables are checked against pandas/numpy on the same rows
(tests/source_reference.py); the SQL the widget gives is run by hand in the engine.
"""

from __future__ import annotations

import os

import duckdb
import narwhals as nw
import numpy as np
import pandas as pd
import pytest
import traitlets as t

import axeswidget as aw
from axeswidget.sources import NotInMemoryError, SourceError
from tests.source_reference import ORDER, SELECTION, pump_table, reference_mask, reference_pairs
from tests.test_spark_source import spark  # noqa: F401 (the one local[2] session of the test run)

BINS = 128  # wire.json density.bins


@pytest.fixture(scope="module")
def table():
    return pump_table(n=3000, seed=3)


@pytest.fixture
def folder(tmp_path, table):
    """The table split over three Parquet files."""
    path = tmp_path / "pumps"
    path.mkdir()
    for i, chunk in enumerate(np.array_split(np.arange(len(table)), 3)):
        table.iloc[chunk].to_parquet(path / f"part-{i}.parquet", index=False)
    return path


def unpack(bits: bytes, n: int) -> np.ndarray:
    return np.unpackbits(np.frombuffer(bits, dtype=np.uint8), bitorder="little")[:n].astype(bool)


def check_pair_counts(w, table, mask=None):
    assert w._wait_pair_counts()
    value = w.pair_counts
    side = value["bins"] + 1
    assert value["bins"] == BINS and value["order"] == list(w.order)
    every = reference_pairs(table, value["order"], BINS)  # reference: numpy.histogram2d on the full table
    chosen = every if mask is None else reference_pairs(table, value["order"], BINS, mask)
    for pair, want_all, want_sel in zip(value["pairs"], every, chosen, strict=True):
        got_all = np.frombuffer(pair["all"], dtype="<u4").reshape(side, side)
        got_sel = np.frombuffer(pair["selected"], dtype="<u4").reshape(side, side)
        np.testing.assert_array_equal(got_all, want_all)
        np.testing.assert_array_equal(got_sel, want_sel)


def test_a_parquet_folder_through_the_widget(folder, table):
    w = aw.AxesWidget(str(folder / "*.parquet"), sample_size=500)
    assert w.axes == ORDER
    assert (w.table["n"], w.table["total"], w.table["sampled"]) == (500, len(table), True)
    assert w.count == len(table)
    check_pair_counts(w, table)
    w.ranges = SELECTION
    expected = reference_mask(table)  # reference: pandas Series.between / isin
    assert w.count == int(expected.sum())
    picked = w.selected
    assert isinstance(picked, duckdb.DuckDBPyRelation)  # lazy: the engine's filtered table
    assert picked.aggregate("count(*)").fetchall()[0][0] == int(expected.sum())
    # the SQL text, run by hand in DuckDB on the same files, gives the same count
    by_hand = duckdb.sql(f"SELECT count(*) FROM read_parquet('{folder}/*.parquet') WHERE {w.to_sql()}")
    assert by_hand.fetchall()[0][0] == int(expected.sum())
    # the narwhals expression too
    assert len(nw.from_native(picked.df()).filter(w.to_filter())) == int(expected.sum())
    check_pair_counts(w, table, expected)
    with pytest.raises(NotInMemoryError, match=r"rows live in duckdb.*w\.count.*w\.selected"):
        _ = w.mask
    with pytest.raises(NotInMemoryError, match="to_query"):
        w.to_query()
    assert repr(w) == f"AxesWidget(6 axes, {int(expected.sum())} of {len(table)} rows selected, in duckdb)"


def test_page_edits_on_an_engine_widget(folder, table):
    w = aw.AxesWidget(folder, sample_size=400)  # a folder: every Parquet file below it
    w.set_state({"ranges": {"flow": [[0.0, 1.0]], "site": ["north"]}, "edit_seq": 3, "dragging": False})
    want = table["flow"].between(0.0, 1.0) & table["site"].isin(["north"])  # reference: pandas
    assert w.count == int(want.sum()) and w.answered_seq == 3
    # the page mask covers the sample rows: the same selection evaluated with pandas on those rows
    rows = w._sample.rows
    assert len(rows) == 400 and len(w.mask_bits) == 50
    on_sample = rows["flow"].between(0.0, 1.0) & rows["site"].isin(["north"])  # reference: pandas
    np.testing.assert_array_equal(unpack(w.mask_bits, 400), on_sample.to_numpy())
    # every sample row is a row of the table (pressure and time identify one in this data)
    keys = set(zip(table["pressure"], table["when"], strict=True))
    assert all((p, pd.Timestamp(t)) in keys for p, t in zip(rows["pressure"], rows["when"], strict=True))
    check_pair_counts(w, table, want.to_numpy())
    assert w.pair_counts["seq"] == 3


def test_a_duckdb_relation_and_resume(folder, table):
    memory = aw.AxesWidget(table, ranges=SELECTION)
    memory.order = list(reversed(ORDER))
    con = duckdb.connect()
    relation = con.read_parquet(sorted(str(p) for p in folder.glob("*.parquet")))
    w = aw.AxesWidget(relation, resume=memory, sample_size=300)
    assert w.ranges == memory.ranges and w.order == memory.order
    assert w.count == memory.count == int(reference_mask(table).sum())  # reference: pandas
    assert isinstance(w.selected, duckdb.DuckDBPyRelation)
    assert len(w.selected.df()) == w.count
    w.ranges = {"pressure": [[0, 50_000]]}
    assert w.count == int(table["pressure"].between(0, 50_000).sum())  # reference: pandas between
    check_pair_counts(w, table, table["pressure"].between(0, 50_000).to_numpy())
    # back to memory: the view comes along, and the mask is there again
    w.data = table
    assert not w.table["sampled"] and w.ranges == {"pressure": [[0, 50_000]]}
    np.testing.assert_array_equal(w.mask, table["pressure"].between(0, 50_000).to_numpy())
    with pytest.raises(ValueError, match="to_filter"):
        w.to_sql()


def test_a_path_with_no_files_names_it_and_keeps_the_view(tmp_path, table):
    missing = str(tmp_path / "nowhere" / "*.parquet")
    with pytest.raises(SourceError, match="no files found at .*nowhere"):
        aw.AxesWidget(missing)
    w = aw.AxesWidget(table, ranges={"flow": [[0.0, 1.0]]})
    before = (w.ranges, w.order, w.count, w.mask_bits, w.table)
    with pytest.raises(SourceError, match="nowhere"):
        w.data = missing
    assert (w.ranges, w.order, w.count, w.mask_bits, w.table) == before


def test_an_engine_column_no_axis_can_draw_is_named(table):
    con = duckdb.connect()
    relation = con.sql("SELECT 1.5 AS level, [1, 2] AS readings UNION ALL SELECT 2.5, [3]")
    with pytest.raises(aw.ColumnError, match="column 'readings' has type INTEGER\\[\\]"):
        aw.AxesWidget(relation, axes=["level", "readings"])
    w = aw.AxesWidget(table, ranges={"flow": [[0.0, 1.0]]})
    before = (w.ranges, w.order, w.count, w.mask_bits)
    with pytest.raises(aw.ColumnError, match="no column that can be drawn.*'readings'"):
        w.data = con.sql("SELECT [1, 2] AS readings")
    assert (w.ranges, w.order, w.count, w.mask_bits) == before


def test_an_engine_error_mid_query_names_the_file_and_keeps_the_view(folder, table):
    w = aw.AxesWidget(str(folder / "*.parquet"), ranges={"flow": [[0.0, 1.0]]}, sample_size=200)
    assert w._wait_pair_counts()
    before = (w.ranges, w.count, w.mask_bits, w.answered_seq)
    broken = folder / "part-1.parquet"
    broken.write_bytes(b"not parquet any more")  # the files change under the open widget
    with pytest.raises(t.TraitError, match="duckdb failed while counting the selected rows.*part-1"):
        w.ranges = {"flow": [[0.5, 1.0]]}
    assert (w.ranges, w.count, w.mask_bits, w.answered_seq) == before
    with pytest.raises(t.TraitError, match="part-1"):  # the same from the page
        w.set_state({"ranges": {"stage": [[1, 2]]}, "edit_seq": 9, "dragging": False})
    assert (w.ranges, w.count, w.mask_bits) == before[:3]
    os.remove(broken)


def test_text_that_is_not_a_path_is_refused_clearly():
    with pytest.raises(TypeError, match="cannot read a table from str 'pumps'.*Parquet/CSV"):
        aw.AxesWidget("pumps")


# -- Spark -------------------------------------------------------------------------------------------


@pytest.mark.spark
@pytest.mark.filterwarnings("ignore:PySpark does not yet fully support pandas")
@pytest.mark.filterwarnings("ignore:The copy keyword is deprecated")
def test_a_spark_dataframe_through_the_widget(spark, tmp_path, table):  # noqa: F811
    path = tmp_path / "pumps.parquet"
    table.to_parquet(path, index=False)
    frame = spark.read.parquet(str(path))
    w = aw.AxesWidget(frame, sample_size=300)
    assert (w.table["n"], w.table["total"], w.table["sampled"]) == (300, len(table), True)
    w.ranges = SELECTION
    expected = reference_mask(table)  # reference: pandas Series.between / isin
    assert w.count == int(expected.sum())
    picked = w.selected
    assert type(picked).__module__.startswith("pyspark") and picked.count() == int(expected.sum())
    frame.createOrReplaceTempView("pumps_for_the_widget")
    by_hand = spark.sql(f"SELECT count(*) FROM pumps_for_the_widget WHERE {w.to_sql()}").first()[0]
    assert by_hand == int(expected.sum())
    with pytest.raises(NotInMemoryError, match="spark"):
        _ = w.mask
    check_pair_counts(w, table, expected)
    w.set_state({"ranges": {"stage": [[1, 3]]}, "edit_seq": 2, "dragging": False})
    assert w.count == int(table["stage"].between(1, 3).sum()) and w.answered_seq == 2  # reference: pandas


def test_a_log_axis_on_an_engine_table_resamples_its_codes():
    con = duckdb.connect()
    relation = con.sql("SELECT (i % 97) + 1.0 AS level, i * 0.5 AS other FROM range(5000) t(i)")
    w = aw.AxesWidget(relation, sample_size=200)
    w.log_axes = ["level"]
    spec = w.table["columns"][0]
    assert spec["name"] == "level" and spec["log"]
    values = w._sample.rows["level"].to_numpy(dtype=float)
    # reference: the documented wire rule in log space, with numpy (lo = 1, hi = 97 for this data)
    lo, hi = np.log(1.0), np.log(97.0)
    want = np.rint((np.log(values) * 0.5 - lo * 0.5) * (65534 / (hi * 0.5 - lo * 0.5))).astype(np.uint16)
    np.testing.assert_array_equal(np.frombuffer(spec["codes"], dtype=np.uint16), want)
    w.ranges = {"level": [[10, 20]]}
    assert w.count == int(sum(10 <= (i % 97) + 1 <= 20 for i in range(5000)))  # reference: plain Python
