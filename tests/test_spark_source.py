"""Spark source: a PySpark DataFrame in local[2] mode, every number checked against pandas/numpy.

One Spark session serves the whole test run (start-up takes seconds); select these tests with
``-m spark``. They skip with a clear message when pyspark or Java is missing, except under CI=true.
"""

from __future__ import annotations

import os
import shutil
import warnings

import narwhals as nw
import numpy as np
import pandas as pd
import pytest

from axeswidget.encode import ColumnError
from axeswidget.selection import normalise
from axeswidget.sources import EngineError, NotInMemoryError, open_source
from tests.source_reference import SELECTION, check_against_pandas, pump_table, reference_mask

pytestmark = [
    pytest.mark.spark,
    pytest.mark.filterwarnings("ignore:PySpark does not yet fully support pandas"),
    pytest.mark.filterwarnings("ignore:The copy keyword is deprecated"),
]


@pytest.fixture(scope="session")
def spark():
    missing = None
    try:
        import pyspark  # noqa: F401
    except ImportError:
        missing = "pyspark is not installed (pip install -e '.[test]')"
    if missing is None and not shutil.which("java") and not os.environ.get("JAVA_HOME"):
        missing = "Spark needs Java 17 (apt-get install openjdk-17-jre-headless)"
    if missing:
        if os.environ.get("CI") == "true":
            pytest.fail(missing + " — required under CI=true")
        pytest.skip(missing)
    from pyspark.sql import SparkSession

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FutureWarning)  # pyspark's note about pandas versions
        session = (
            SparkSession.builder.master("local[2]")
            .appName("axeswidget-tests")
            .config("spark.ui.enabled", "false")
            .config("spark.ui.showConsoleProgress", "false")
            .config("spark.sql.shuffle.partitions", "2")
            .config("spark.sql.session.timeZone", "UTC")
            # the test tables are tiny: compiling whole-stage code and re-planning cost more than they save
            .config("spark.sql.codegen.wholeStage", "false")
            .config("spark.sql.adaptive.enabled", "false")
            .getOrCreate()
        )
    session.sparkContext.setLogLevel("ERROR")
    yield session
    session.stop()


@pytest.fixture(scope="module")
def table():
    return pump_table()


@pytest.fixture(scope="module")
def parquet(tmp_path_factory, table):
    path = tmp_path_factory.mktemp("spark") / "pumps.parquet"
    table.to_parquet(path, index=False)
    return path


@pytest.fixture(scope="module")
def opened(spark, parquet):
    """The pump table read by Spark and opened once for the tests that only ask questions of it."""
    frame = spark.read.parquet(str(parquet))
    return frame, open_source(frame)


def test_spark_matches_pandas(spark, opened, table):
    frame, source = opened
    assert source.engine == "spark" and not source.in_memory
    expected = check_against_pandas(source, table)
    ranges = normalise(SELECTION, source.columns)
    picked = source.selected(ranges)
    assert type(picked).__name__ == "DataFrame" and type(picked).__module__.startswith("pyspark")
    got = picked.toPandas().sort_values(["pressure", "when", "flow"]).reset_index(drop=True)
    # reference: pandas boolean indexing with Series.between / isin
    want = table[reference_mask(table)].sort_values(["pressure", "when", "flow"]).reset_index(drop=True)
    assert len(got) == expected
    np.testing.assert_array_equal(got["pressure"].to_numpy(), want["pressure"].to_numpy())
    assert got["site"].tolist() == want["site"].tolist()
    # the narwhals expression and the SQL text pick the same rows in Spark
    assert nw.from_native(frame).filter(source.filter_expression(ranges)).to_native().count() == expected
    frame.createOrReplaceTempView("pumps_by_hand")
    assert (
        spark.sql(f"SELECT count(*) FROM pumps_by_hand WHERE {source.filter_sql(ranges)}").first()[0]
        == expected
    )
    with pytest.raises(NotInMemoryError, match="spark"):
        source.mask(ranges)


def test_spark_sample_is_seeded(opened, table):
    source = opened[1]
    first, again, other = source.sample(50, seed=1), source.sample(50, seed=1), source.sample(50, seed=2)
    assert len(first) == 50
    pd.testing.assert_frame_equal(first.rows, again.rows)
    assert not first.rows.equals(other.rows)
    # every sampled row is a row of the table (pressure and time identify one in this data)
    keys = set(zip(table["pressure"], table["when"], strict=True))
    assert all(
        (p, pd.Timestamp(w)) in keys for p, w in zip(first.rows["pressure"], first.rows["when"], strict=True)
    )


def test_spark_types_and_bad_columns(spark):
    data = pd.DataFrame(
        {
            "at": pd.date_range("2024-05-01", periods=48, freq="h", tz="UTC"),
            "level": np.linspace(0.0, 4.7, 48),
        }
    )
    frame = spark.createDataFrame(data).selectExpr("at", "level", "array(level, level) AS pair")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        source = open_source(frame)
    skipped = [w for w in caught if "skipped columns" in str(w.message)]
    assert len(skipped) == 1 and "'pair'" in str(skipped[0].message)
    assert list(source.columns) == ["at", "level"]
    assert source.columns["at"].kind == "datetime" and source.columns["at"].tz == "UTC"
    # reference: pandas min of the tz-aware column, in ns since the epoch
    assert source.columns["at"].lo == float(data["at"].min().value)
    ranges = normalise({"at": [["2024-05-01T12:00:00+00:00", "2024-05-02T00:00:00+00:00"]]}, source.columns)
    want = data["at"].between(pd.Timestamp("2024-05-01T12:00:00Z"), pd.Timestamp("2024-05-02T00:00:00Z"))
    assert source.count(ranges) == int(want.sum()) == 13
    with pytest.raises(ColumnError, match="column 'pair' has type array<double>"):
        from axeswidget.sources import SparkSource

        SparkSource(frame, axes=["level", "pair"])


def test_spark_wall_clock_times_do_not_move_with_the_session_zone(spark, parquet, table):
    spark.conf.set("spark.sql.session.timeZone", "America/New_York")
    try:
        source = open_source(spark.read.parquet(str(parquet)))
    finally:
        spark.conf.set("spark.sql.session.timeZone", "UTC")
    when = table["when"].astype("datetime64[ns]")
    # reference: pandas min/max of the naive column, in ns since the epoch
    assert (source.columns["when"].lo, source.columns["when"].hi) == (
        float(when.min().value),
        float(when.max().value),
    )
    assert source.columns["when"].tz is None


def test_spark_engine_error_is_wrapped(spark, tmp_path, table):
    path = tmp_path / "gone.parquet"
    table.iloc[:100].to_parquet(path, index=False)
    source = open_source(spark.read.parquet(str(path)))
    before = {k: (c.lo, c.hi, c.counts) for k, c in source.columns.items()}
    path.write_bytes(b"replaced while the view was open")
    with pytest.raises(EngineError, match="spark failed while counting the selected rows .*gone.parquet"):
        source.count(normalise({"stage": [[1, 3]]}, source.columns))
    assert {k: (c.lo, c.hi, c.counts) for k, c in source.columns.items()} == before
