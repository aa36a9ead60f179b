"""Put a data source behind a widget: open the input, carry a view over, commit it all or nothing.

A new widget, ``resume=`` and a data swap (``w.data = new``) all open the new source first
(:func:`open_data`), carry the view over with :func:`axeswidget.carryover.carry_over` and then
:func:`commit` source, table and view in one step; on any error nothing changes. A change of
``log_axes`` re-encodes the codes in place (:func:`recode_log`).
"""

from __future__ import annotations

import os
import warnings

import narwhals as nw

from . import answer, scaletier
from .carryover import carry_over
from .encode import quantise
from .inputs import ColumnError, display_name, to_frame
from .sources import DataSource, NotInMemoryError, open_source
from .tabletrait import table_trait, with_index

#: the traits a data swap or ``resume=`` carries over besides the view options
VIEW = ("order", "ranges", "flipped", "saved", "pinned", "hidden")

_FILE_SUFFIXES = (".parquet", ".pq", ".csv", ".tsv", ".txt", ".gz")


def view_of(widget) -> dict:
    """The state a data swap or ``resume=`` carries over (copies of the trait values)."""
    view = {key: getattr(widget, key) for key in VIEW + widget._OPTIONS}
    view["ranges"] = {k: list(v) for k, v in view["ranges"].items()}
    view["saved"] = {k: {a: list(i) for a, i in v.items()} for k, v in view["saved"].items()}
    return {k: list(v) if isinstance(v, list) else v for k, v in view.items()}


def sampled(widget, source: DataSource) -> bool:
    """True when the page gets a sample (scale tier): engine sources, or more rows than sample_above."""
    return not source.in_memory or source.n > widget.sample_above


def plan(widget, source: DataSource):
    """(rows the page will hold, rows_in for carry_over) for a source not yet shown."""
    page_rows = min(source.n, widget.sample_size) if sampled(widget, source) else source.n
    if source.in_memory:
        return page_rows, None
    return page_rows, lambda col, items: source.count({col.name: items})


def draw_sample(widget, source: DataSource):
    """The seeded sample of the scale tier, or None when the page gets every row."""
    if not sampled(widget, source):
        return None
    return source.sample(widget.sample_size, seed=0)


def table_value(source: DataSource, sample) -> dict:
    """The ``table`` trait: every row, or the sample's codes; index labels of the page's rows."""
    if sample is None:
        value = table_trait(source.columns, source.n)
        return with_index(value, source.frame.index) if source.in_memory else value
    value = table_trait(source.columns, len(sample), codes=sample.codes, total=source.n)
    if sample.positions is not None:
        return with_index(value, source.frame.index[sample.positions])
    return value


def need_rows(source: DataSource, what: str) -> None:
    """NotInMemoryError for ``what`` (a property or method) when the rows live in an engine."""
    if not source.in_memory:
        engine = source.engine
        raise NotInMemoryError(
            f"{what} needs every row in this process, but the rows live in {engine} "
            f"({source.n} rows); use w.count for the exact number selected, w.selected for "
            f"the selected rows as a lazy {engine} table, or w.to_filter() / w.to_sql() for the filter"
        )


def row_label(source: DataSource, sample, row: int):
    """Index label of a row on the page (a sample row in the scale tier; engine tables: its position)."""
    if sample is None:
        return source.frame.index[row]
    if sample.positions is not None:
        return source.frame.index[sample.positions[row]]
    return row


def resumed(widget, source: DataSource, resume) -> tuple[dict, list[str]]:
    """The view of ``resume`` (another widget) carried over to a new source; notes on what did not fit."""
    page_rows, rows_in = plan(widget, source)
    return carry_over(view_of(resume), resume._columns, source.columns, page_rows, rows_in, source.n)


def commit(widget, source: DataSource, view: dict) -> None:
    """Show a new source with a view made for it, all at once; on any error nothing changes."""
    w = widget
    keys = VIEW + w._OPTIONS
    with w._state_lock:
        attrs = ("_source", "_sample", "_mask", "_applied", "_pair_cache")
        before_attrs = {a: getattr(w, a, None) for a in attrs}
        before = view_of(w) if before_attrs["_source"] is not None else None
        before_wire = (w.table, w.mask_bits, w.count, w.pair_counts, w.rank_matrix)
        try:
            for col in source.columns.values():
                want = col.name in view["log_axes"]
                if col.log != want:
                    col.log = want
                    col.encode()
            sample = draw_sample(w, source)
            value = table_value(source, sample)
            later = source.in_memory and source.n > scaletier.RANK_ROWS  # sampled: in the background
            ranks = {} if later else scaletier.rank_matrix(source, sample)
            w._source, w._sample = source, sample
            w._mask, w._applied, w._pair_cache = None, None, {}
            w._pair_jobs.cancel()
            w._rank_jobs.cancel()
            with w.hold_trait_notifications():
                w.table = value
                w.rank_matrix = ranks
                w.pair_counts = {}
                for key in keys:
                    setattr(w, key, view[key])
            answer.apply(w, w.ranges, pairs=False)
        except BaseException:
            for a, v in before_attrs.items():
                setattr(w, a, v)
            if before is not None:
                with w.hold_trait_notifications():
                    for key in keys:
                        setattr(w, key, before[key])
                    (w.table, w.mask_bits, w.count, w.pair_counts, w.rank_matrix) = before_wire
            raise
        if later:
            scaletier.measure_ranks(w)
        scaletier.publish_pair_counts(w)


def swap(widget, new) -> None:
    """Show a new table; the view is carried over where it fits (see ``carryover``), all or nothing.

    Called from the ``data`` setter through ``AxesWidget.__setattr__``: the warning names the caller's line.
    """
    w = widget
    axes = w._axes_arg
    notes = []
    w._pair_jobs.cancel()  # the old table's counts are not wanted; let a running query end
    w._pair_jobs.wait(60)
    if axes is not None:  # axes named at construction that the new table lacks are dropped too
        labels = column_labels(new)
        present = {display_name(c) for c in labels} | set(labels)
        gone = [display_name(a) for a in axes if a not in present]
        axes = [a for a in axes if a in present]
        if not axes:
            raise ColumnError(f"the new table has none of the axes {', '.join(map(repr, w._axes_arg))}")
        if gone:
            notes.append(
                "axes named at construction missing from the new table: " + ", ".join(map(repr, gone))
            )
    source = open_data(new, axes)
    page_rows, rows_in = plan(w, source)
    if rows_in is None:
        view, more = carry_over(view_of(w), w._columns, source.columns, page_rows)
    else:
        view, more = carry_over(view_of(w), w._columns, source.columns, page_rows, rows_in, source.n)
    commit(w, source, view)
    notes += more
    if notes:
        warnings.warn("axeswidget: the new data changes the view: " + "; ".join(notes), stacklevel=4)


def recode_log(widget, log_axes) -> None:
    """New codes for the axes whose log scale changed; a new sample of the same rows; the table again."""
    w = widget
    with w._state_lock:
        source = w._source
        for col in source.columns.values():
            want = col.name in log_axes
            if col.log != want:
                col.log = want
                if source.in_memory:
                    col.codes = quantise(col.axis_units(), col.lo, col.hi, col.log, col.missing)
        if w._sample is not None:  # new codes: a new sample of the same rows, pair counts again
            if source.in_memory:
                at = w._sample.positions
                w._sample.codes = {a: c.codes[at] for a, c in source.columns.items()}
            else:
                w._sample = source.sample(len(w._sample), seed=0)
            w._pair_cache = {}
        w.table = table_value(source, w._sample)
    scaletier.publish_pair_counts(w)


def _is_paths(data) -> bool:
    return isinstance(data, str | os.PathLike) or (
        isinstance(data, list | tuple) and bool(data) and all(isinstance(p, str | os.PathLike) for p in data)
    )


def _check_path_text(data) -> None:
    """A text that names no file and does not look like a path is a mistake, not a missing file."""
    if not isinstance(data, str):
        return
    looks_like_path = (
        os.path.exists(data)
        or any(ch in data for ch in "*?[")
        or os.sep in data
        or "/" in data
        or data.lower().endswith(_FILE_SUFFIXES)
    )
    if not looks_like_path:
        raise TypeError(
            f"axeswidget: cannot read a table from str {data!r}; give a DataFrame or table, or a path, "
            "folder or glob of Parquet/CSV files (e.g. 'data/*.parquet')"
        )


def open_data(data, axes, names=None) -> DataSource:
    """The data source of a table, a path of files or an engine table (see ``sources.open_source``)."""
    if _is_paths(data):
        _check_path_text(data)
    return open_source(data, axes, names)


def column_labels(data) -> list:
    """The column labels of a table without reading its rows (files: their schema)."""
    if isinstance(data, DataSource):
        return [c.source for c in data.columns.values()]
    if _is_paths(data):
        _check_path_text(data)
        from .sources.duckdb_source import read_files

        return list(read_files(data)[0].columns)
    try:
        return list(nw.from_native(data).columns)
    except TypeError:
        return list(to_frame(data).columns)
