"""DuckDB source: files (Parquet, CSV, globs) and relations, every number checked against pandas/numpy.

Fixtures are written to tmp_path from seeded data (tests/source_reference.py) and from Fisher's iris
(1936) as shipped with scikit-learn.
"""

from __future__ import annotations

import shutil
import warnings

import duckdb
import narwhals as nw
import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_iris

from axeswidget.encode import ColumnError
from axeswidget.selection import normalise
from axeswidget.sources import DuckDBSource, EngineError, NotInMemoryError, SourceError, open_source
from axeswidget.sources.memory import MemorySource
from tests.source_reference import (
    ORDER,
    SELECTION,
    check_against_pandas,
    pump_table,
    reference_mask,
    sorted_rows,
)


@pytest.fixture(scope="module")
def table():
    return pump_table()


@pytest.fixture
def parts(tmp_path, table):
    """The table split over three Parquet files in one folder."""
    folder = tmp_path / "parts"
    folder.mkdir()
    for i, chunk in enumerate(np.array_split(np.arange(len(table)), 3)):
        table.iloc[chunk].to_parquet(folder / f"part-{i}.parquet", index=False)
    return folder


def test_parquet_glob_matches_pandas(parts, table):
    source = open_source(str(parts / "*.parquet"))
    assert isinstance(source, DuckDBSource) and not source.in_memory
    expected = check_against_pandas(source, table)
    ranges = normalise(SELECTION, source.columns)
    picked = source.selected(ranges)
    assert isinstance(picked, duckdb.DuckDBPyRelation)  # lazy: a relation, nothing fetched yet
    got = picked.df().sort_values(["pressure", "when", "flow"]).reset_index(drop=True)
    # reference: pandas boolean indexing with Series.between / isin
    want = table[reference_mask(table)].sort_values(["pressure", "when", "flow"]).reset_index(drop=True)
    assert len(got) == expected
    pd.testing.assert_frame_equal(got[ORDER], want[ORDER], check_dtype=False)
    # the narwhals expression and the SQL text pick the same rows
    by_expression = nw.from_native(source.native).filter(source.filter_expression(ranges)).to_native()
    assert by_expression.aggregate("count(*)").fetchall()[0][0] == expected
    where = source.filter_sql(ranges)
    by_hand = duckdb.sql(f"SELECT count(*) FROM read_parquet('{parts}/*.parquet') WHERE {where}")
    assert by_hand.fetchall()[0][0] == expected
    with pytest.raises(NotInMemoryError, match="duckdb"):
        source.mask(ranges)


def test_folder_and_relation_give_the_same_as_memory(parts, table):
    by_folder = DuckDBSource.open_files(parts)
    relation = duckdb.connect().read_parquet(str(parts / "*.parquet"))
    by_relation = open_source(relation)
    in_memory = open_source(table)
    ranges = normalise(SELECTION, in_memory.columns)
    for source in (by_folder, by_relation):
        assert normalise(SELECTION, source.columns) == ranges
        assert source.count(ranges) == in_memory.count(ranges)
        want_pairs = in_memory.pair_counts(ORDER, 100, ranges)
        for got, want in zip(source.pair_counts(ORDER, 100, ranges), want_pairs, strict=True):
            np.testing.assert_array_equal(got, want)
        for name, col in in_memory.columns.items():
            assert (source.columns[name].lo, source.columns[name].hi) == (col.lo, col.hi)


def test_sample_is_seeded_and_real_rows(parts, table):
    source = DuckDBSource.open_files(str(parts / "*.parquet"))
    first, again, other = source.sample(100, seed=4), source.sample(100, seed=4), source.sample(100, seed=5)
    assert len(first) == 100
    pd.testing.assert_frame_equal(first.rows, again.rows)
    assert not first.rows.equals(other.rows)
    # every sampled row is a row of the table, with the codes the table's row has
    memory = open_source(table)
    keyed = table.reset_index().set_index(["pressure", "when"])
    for i in range(0, 100, 9):
        row = first.rows.iloc[i]
        position = keyed.loc[(row["pressure"], row["when"]), "index"]
        position = int(np.atleast_1d(position)[0])
        for axis in ORDER:
            assert first.codes[axis][i] == memory.columns[axis].codes[position]
    assert len(source.sample(10**7)) == len(table)


def test_iris_csv(tmp_path):
    # dataset: Fisher's iris (1936) as shipped with scikit-learn; 50 flowers per species (UCI iris.names)
    iris = load_iris(as_frame=True).frame
    iris["species"] = iris["target"].map(dict(enumerate(load_iris().target_names)))
    iris = iris.drop(columns="target")
    path = tmp_path / "iris.csv"
    iris.to_csv(path, index=False)
    source = open_source(str(tmp_path / "*.csv"))
    assert source.n == 150
    assert source.columns["species"].counts == [50, 50, 50]
    assert source.columns["species"].labels == ["setosa", "versicolor", "virginica"]
    for name in iris.columns[:4]:
        # reference: pandas min/max; also the UCI summary, e.g. sepal length 4.3..7.9
        assert (source.columns[name].lo, source.columns[name].hi) == (iris[name].min(), iris[name].max())
    assert (source.columns["sepal length (cm)"].lo, source.columns["sepal length (cm)"].hi) == (4.3, 7.9)
    picked = {"petal length (cm)": [[1.0, 2.0]], "species": ["setosa", "virginica"]}
    ranges = normalise(picked, source.columns)
    # reference: pandas Series.between / isin
    want = iris["petal length (cm)"].between(1.0, 2.0) & iris["species"].isin(["setosa", "virginica"])
    assert source.count(ranges) == int(want.sum()) == 50
    assert len(source.selected(ranges).df()) == 50


def test_engine_types_match_pandas():
    con = duckdb.connect()
    con.execute("CREATE TYPE mood AS ENUM ('calm', 'busy', 'idle')")
    relation = con.sql(
        """
        SELECT i, (['calm', 'busy', 'idle'])[i % 3 + 1]::mood AS m,
               DATE '2024-03-01' + (i % 17)::INTEGER AS d,
               TIMESTAMPTZ '2024-03-01 00:00:00+00' + INTERVAL (i * 37) MINUTE AS ts,
               INTERVAL (i * 90) SECOND AS gap, (i * 0.25)::DECIMAL(10, 2) AS money,
               CASE WHEN i % 5 = 0 THEN NULL ELSE i % 2 = 0 END AS flag
        FROM range(1, 400) t(i)
        """
    )
    source = DuckDBSource(relation)
    frame = relation.df()
    kinds = {name: col.kind for name, col in source.columns.items()}
    assert kinds == {
        "i": "number", "m": "category", "d": "datetime", "ts": "datetime", "gap": "timedelta",
        "money": "number", "flag": "boolean",
    }  # fmt: skip
    assert source.columns["m"].labels == ["calm", "busy", "idle"]  # the enum's own order
    assert source.columns["m"].counts == [int((frame["m"] == lab).sum()) for lab in ("calm", "busy", "idle")]
    assert source.columns["ts"].tz is not None and source.columns["d"].tz is None
    assert source.columns["flag"].n_missing == int(frame["flag"].isna().sum())  # reference: pandas isna
    gap = frame["gap"].astype("timedelta64[ns]")
    lo, hi = source.columns["gap"].lo, source.columns["gap"].hi
    assert (lo, hi) == (float(gap.min().value), float(gap.max().value))  # reference: pandas min/max
    day = pd.Series(pd.to_datetime(frame["d"])).astype("datetime64[ns]")
    assert source.columns["d"].lo == float(day.min().value)
    ranges = normalise(
        {"gap": [[600, 3600]], "ts": [["2024-03-01T06:00:00+00:00", "2024-03-05T00:00:00+00:00"]]},
        source.columns,
    )
    # reference: pandas Series.between on timedelta and tz-aware datetime columns
    want = gap.between(pd.Timedelta(seconds=600), pd.Timedelta(seconds=3600)) & frame["ts"].between(
        pd.Timestamp("2024-03-01T06:00:00+00:00"), pd.Timestamp("2024-03-05T00:00:00+00:00")
    )
    assert source.count(ranges) == int(want.sum()) > 0
    # the in-memory source over the same rows draws the same codes
    # "i" (1..399, all distinct) reads as an identifier: named in axes= so that memory draws it too
    names = ["i", "m", "ts", "gap", "d", "money", "flag"]
    memory = MemorySource(frame.assign(gap=gap, d=day, money=frame["money"].astype(float)), axes=names)
    codes = source.codes()
    for name in names:
        np.testing.assert_array_equal(codes[name], memory.columns[name].codes, err_msg=name)


def test_undrawable_column_is_skipped_or_named():
    relation = duckdb.sql("SELECT i * 1.5 AS x, [i, i + 1] AS tags FROM range(5) t(i)")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        source = DuckDBSource(relation)
    assert list(source.columns) == ["x"]
    assert len(caught) == 1 and "'tags'" in str(caught[0].message) and "BIGINT[]" in str(caught[0].message)
    with pytest.raises(ColumnError, match="column 'tags' has type BIGINT\\[\\]"):
        DuckDBSource(relation, axes=["x", "tags"])
    with pytest.raises(ColumnError, match="unknown column 'nope'"):
        DuckDBSource(relation, axes=["nope"])


def test_bad_files_are_named(tmp_path, parts):
    with pytest.raises(SourceError, match="no files found at .*empty"):
        DuckDBSource.open_files(tmp_path / "empty")
    junk = tmp_path / "junk.parquet"
    junk.write_bytes(b"not a parquet file")
    with pytest.raises(EngineError, match="junk.parquet"):
        DuckDBSource.open_files(junk)


def test_engine_error_mid_query_keeps_state(tmp_path, parts, table):
    single = tmp_path / "one.parquet"
    shutil.copy(parts / "part-0.parquet", single)
    source = DuckDBSource.open_files(single)
    ranges = normalise(SELECTION, source.columns)
    before = (source.n, {k: (c.lo, c.hi, c.counts, c.n_missing) for k, c in source.columns.items()})
    count = source.count(ranges)
    single.write_bytes(b"the file was replaced while the view was open")
    with pytest.raises(EngineError, match="duckdb failed while counting the selected rows .*one.parquet"):
        source.count(ranges)
    with pytest.raises(EngineError, match="one.parquet"):
        source.pair_counts(ORDER, 16, ranges)
    after = (source.n, {k: (c.lo, c.hi, c.counts, c.n_missing) for k, c in source.columns.items()})
    assert after == before
    shutil.copy(parts / "part-0.parquet", single)
    assert source.count(ranges) == count


def test_log_axis_codes_and_spec_match_memory():
    relation = duckdb.sql("SELECT 1 + i * 0.37 AS level, i % 4 AS gate FROM range(500) t(i)")
    source = DuckDBSource(relation)
    memory = MemorySource(relation.df())
    for col in (source.columns["level"], memory.columns["level"]):
        col.log = True
    memory.columns["level"].encode()
    np.testing.assert_array_equal(source.codes(["level"])["level"], memory.columns["level"].codes)
    # reference: numpy log then the linear rule over [log lo, log hi]
    v, lo, hi = np.log(1 + np.arange(500) * 0.37), np.log(1.0), np.log(1 + 499 * 0.37)
    want = np.rint((v * 0.5 - lo * 0.5) * (65534 / (hi * 0.5 - lo * 0.5))).astype(np.uint16)
    np.testing.assert_array_equal(source.codes(["level"])["level"], want)
    spec = source.columns["gate"].spec()  # before any sample: no codes yet, the rest is there
    assert spec["values"] == [0, 1, 2, 3] and spec["kind"] == "integer" and len(spec["codes"]) == 0
    sample = source.sample(20, seed=0)
    spec = source.columns["gate"].spec()
    assert len(spec["codes"]) == 2 * 20 and spec["missing"] == 0
    np.testing.assert_array_equal(np.frombuffer(spec["codes"], dtype=np.uint16), sample.codes["gate"])


def test_too_many_labels_skip_the_column_or_name_it(monkeypatch):
    from axeswidget.sources import sql

    monkeypatch.setattr(sql, "CATEGORY_LIMIT", 10)  # keep the table small
    relation = duckdb.sql("SELECT i * 1.0 AS x, 'tag' || (i % 12) AS tag, [i] AS l FROM range(50) t(i)")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        source = DuckDBSource(relation)
    assert list(source.columns) == ["x"]
    assert len(caught) == 1  # one warning names both columns and why
    assert "'tag' (has more than 10 distinct labels" in str(caught[0].message)
    assert "'l' (type BIGINT[]" in str(caught[0].message)
    with pytest.raises(ColumnError, match="column 'tag' has more than 10 distinct labels"):
        DuckDBSource(relation, axes=["tag"])


def test_many_labels_share_one_band_as_in_memory():
    con = duckdb.connect()
    labels = ", ".join(f"'v{i:02d}'" for i in range(70))
    con.execute(f"CREATE TYPE valve AS ENUM ({labels})")
    # label v{k} appears (k * 7 % 13) + 1 times: counts tie and vary, so the 60 kept bands are a real choice
    relation = con.sql(
        "SELECT ('v' || lpad(k::VARCHAR, 2, '0'))::valve AS e, 'w' || lpad(k::VARCHAR, 2, '0') AS s "
        "FROM range(70) a(k), range(13) b(j) WHERE j <= (k * 7) % 13"
    )
    source = DuckDBSource(relation)
    memory = MemorySource(relation.df())
    frame = relation.df()
    for name in ("e", "s"):
        assert source.columns[name].labels == memory.columns[name].labels, name
        assert source.columns[name].counts == memory.columns[name].counts, name
        np.testing.assert_array_equal(
            sorted_rows(source.codes([name]), [name]), sorted_rows({name: memory.columns[name].codes}, [name])
        )
    # reference: pandas value_counts; the shared band holds the 10 rarest labels' rows
    counts = frame["s"].value_counts()
    rest = sum(sorted(counts.tolist())[:10])
    assert sum(source.columns["s"].counts[60:]) == rest
    spec = source.columns["s"].spec()
    assert spec["rest"] == {"labels": 10, "rows": rest}
