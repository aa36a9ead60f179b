"""The widget class: traits and public methods. Heavy lifting lives in encode.py and selection.py.

The traits are the only channel between kernel and front end; DEVELOPERS.md documents each of them
(name, direction, type, meaning) in its "trait contract" table.
"""

from __future__ import annotations

import logging
import os
import threading
import time
import warnings
from pathlib import Path

import anywidget
import narwhals as nw
import numpy as np
import pandas as pd
import traitlets as t

from . import contrast, export, measures, ordering, scaletier, wire
from .carryover import carry_over
from .encode import Column, ColumnError, display_name, quantise, table_trait, to_frame, with_index
from .evaluate import pack
from .pageround import round_page_ranges
from .query import to_query
from .selection import SelectionError, normalise
from .sources import DataSource, EngineError, NotInMemoryError, SourceError, open_source

_STATIC = Path(__file__).parent / "static"
_log = logging.getLogger("axeswidget")


class AxesWidget(anywidget.AnyWidget):
    """Parallel coordinates for a table: one vertical axis per column, one line per row.

    Drag along an axis to select a range; the exact selection is available as :attr:`mask` (a numpy
    bool array) and :attr:`selected` (the selected rows, in the input's own type, original index kept).

    Parameters
    ----------
    data:
        a pandas or polars DataFrame (or polars LazyFrame), a pyarrow Table/RecordBatch, an object with
        the Arrow PyCapsule stream interface, a dict of 1-D arrays, a 2-D numpy array (with ``names``);
        or a table held by an engine: a path, folder or glob of Parquet/CSV files (opened with DuckDB,
        out of core), a DuckDB relation, a PySpark DataFrame. Engine tables keep their rows: ``count``
        and ``selected`` (a lazy table) come from the engine, ``mask`` is not available.
    axes:
        column names to show, in order. ``None`` shows every column that can be drawn; the others are
        skipped with one warning.
    ranges:
        an initial selection (see :mod:`axeswidget.selection` for its form).
    height:
        chart height in CSS pixels.
    names:
        column names for a 2-D numpy array.
    sample_above, sample_size:
        the scale tier: a table with more than ``sample_above`` rows (and every engine table) sends the
        page a seeded sample of ``sample_size`` rows plus binned pair counts of all rows, not every row.
    """

    _esm = _STATIC / "widget.js"
    _css = _STATIC / "widget.css"

    table = t.Dict().tag(sync=True)
    order = t.List(t.Unicode()).tag(sync=True, echo_update=False)
    ranges = t.Dict().tag(sync=True, echo_update=False)
    log_axes = t.List(t.Unicode()).tag(sync=True)
    flipped = t.List(t.Unicode()).tag(sync=True, echo_update=False)
    count = t.Int(0).tag(sync=True)
    mask_bits = t.Bytes(b"").tag(sync=True)
    edit_seq = t.Int(0).tag(sync=True, echo_update=False)
    dragging = t.Bool(False).tag(sync=True, echo_update=False)
    saved = t.Dict().tag(sync=True)
    answered_seq = t.Int(0).tag(sync=True)
    height = t.Int(380).tag(sync=True)
    views = t.List(t.Unicode()).tag(sync=True)
    color_by = t.Unicode("").tag(sync=True)
    opacity = t.Float(0.0).tag(sync=True)
    view_mode = t.Enum(["auto", "lines", "density"], "auto").tag(sync=True)
    curves = t.Bool(False).tag(sync=True)
    bundle_by = t.Unicode("").tag(sync=True)
    bundle_strength = t.Float(0.5).tag(sync=True)
    histograms = t.Bool(True).tag(sync=True)
    pinned = t.Int(-1).tag(sync=True)
    hidden = t.List(t.Unicode()).tag(sync=True)
    orientation = t.Enum(["vertical", "horizontal"], "vertical").tag(sync=True)
    callback_error = t.Unicode("").tag(sync=True)
    #: kernel -> page: up to 3 axes where the selected rows differ most from the rest (``contrast()``)
    contrast_axes = t.List(t.Unicode()).tag(sync=True)
    sample_above = t.Int(1_000_000).tag(sync=True)
    sample_size = t.Int(100_000).tag(sync=True)
    pair_counts = t.Dict().tag(sync=True)
    rank_matrix = t.Dict().tag(sync=True)

    def __init__(
        self,
        data,
        axes=None,
        *,
        ranges=None,
        height: int = 380,
        names=None,
        resume=None,
        sample_above: int = 1_000_000,
        sample_size: int = 100_000,
        **options,
    ):
        # page messages may arrive on another thread (a kernel subshell) while a cell runs: selection
        # updates, callbacks and the background publishers hold this lock; `_settled` tells `wait()`
        # when nothing is in flight
        self._state_lock = threading.RLock()
        self._settled = threading.Condition(threading.Lock())
        self._busy = 0
        self._inside = threading.local()  # depth of page messages / callbacks on this thread
        self._page_edit = False  # a selection edit from the page is being applied
        super().__init__(height=height, sample_above=sample_above, sample_size=sample_size)
        self._pair_jobs = scaletier.LatestRunner("axeswidget pair counts")
        self._rank_jobs = scaletier.LatestRunner("axeswidget rank matrix")
        self._axes_arg = axes
        self._callbacks: list[list] = []  # [callback, min_interval_while_dragging, last_call_time]
        self._was_dragging = False
        source = _open(data, axes, names)
        view = {**self._view(), "order": list(source.columns)}
        notes = []
        if resume is not None:
            if not isinstance(resume, AxesWidget):
                raise TypeError(f"resume= takes an AxesWidget, got {type(resume).__name__}")
            page_rows, rows_in = self._plan(source)
            view, notes = carry_over(
                resume._view(), resume._columns, source.columns, page_rows, rows_in, source.n
            )
        self._switch(source, view)
        if notes:
            warnings.warn(
                "axeswidget: could not take over all of the view: " + "; ".join(notes), stacklevel=2
            )
        for key, value in options.items():
            if key not in _OPTIONS:
                raise TypeError(
                    f"AxesWidget got an unknown option {key!r}; options are: {', '.join(_OPTIONS)}"
                )
            setattr(self, key, value)
        if ranges:
            self.ranges = ranges

    def set_state(self, sync_data):
        """Apply a message from the page, serialised with Python-side selection changes.

        For a final edit the on_change callbacks run before the answer (count, mask_bits,
        answered_seq) is sent, so a page showing the exact count means its callbacks have finished.
        """
        with self._busy_section():
            with self._state_lock:
                before = self._page_edit
                self._page_edit = bool({"ranges", "edit_seq", "dragging"} & set(sync_data))
                try:
                    super().set_state(sync_data)
                finally:
                    self._page_edit = before

    def __setattr__(self, name, value):
        if name in _LOCKED and "_state_lock" in self.__dict__:
            with self._state_lock:
                super().__setattr__(name, value)
        else:
            super().__setattr__(name, value)

    def _busy_section(self):
        return _Busy(self)

    def wait(self, timeout: float | None = None) -> bool:
        """Block until no callback is running and every page edit received has been answered.

        Returns True when settled, False when ``timeout`` seconds passed first. Comm messages can be
        handled while a cell runs (kernel subshells), so a cell that depends on what ``on_change``
        callbacks computed for the page's latest selection can call ``w.wait()`` first.
        """
        if getattr(self._inside, "depth", 0):
            raise RuntimeError(
                "wait() called from an on_change callback or a page message would wait for itself"
            )
        with self._settled:
            return self._settled.wait_for(
                lambda: self._busy == 0 and self.answered_seq >= self.edit_seq, timeout
            )

    def _view(self) -> dict:
        """The state a data swap or ``resume=`` carries over (copies of the trait values)."""
        view = {key: getattr(self, key) for key in _VIEW + _OPTIONS}
        view["ranges"] = {k: list(v) for k, v in view["ranges"].items()}
        view["saved"] = {k: {a: list(i) for a, i in v.items()} for k, v in view["saved"].items()}
        return {k: list(v) if isinstance(v, list) else v for k, v in view.items()}

    # -- the source behind the view -----------------------------------------------------------------
    @property
    def _columns(self) -> dict[str, Column]:
        """The source's axes (a view; the source owns them)."""
        return self._source.columns if getattr(self, "_source", None) is not None else None

    def _sampled(self, source: DataSource | None = None) -> bool:
        """True when the page gets a sample (scale tier): engine sources, or more rows than sample_above."""
        source = source if source is not None else self._source
        return not source.in_memory or source.n > self.sample_above

    def _plan(self, source: DataSource):
        """(rows the page will hold, rows_in for carry_over) for a source not yet shown."""
        page_rows = min(source.n, self.sample_size) if self._sampled(source) else source.n
        if source.in_memory:
            return page_rows, None
        return page_rows, lambda col, items: source.count({col.name: items})

    def _draw_sample(self, source: DataSource):
        """The seeded sample of the scale tier, or None when the page gets every row."""
        if not self._sampled(source):
            return None
        return source.sample(self.sample_size, seed=0)

    def _table_value(self, source: DataSource, sample) -> dict:
        """The ``table`` trait: every row, or the sample's codes; index labels of the page's rows."""
        if sample is None:
            value = table_trait(source.columns, source.n)
            return with_index(value, source.frame.index) if source.in_memory else value
        value = table_trait(source.columns, len(sample), codes=sample.codes, total=source.n)
        if sample.positions is not None:
            return with_index(value, source.frame.index[sample.positions])
        return value

    def _switch(self, source: DataSource, view: dict) -> None:
        """Show a new source with a view made for it, all at once; on any error nothing changes."""
        with self._state_lock:
            attrs = ("_source", "_sample", "_mask", "_applied", "_pair_cache")
            before_attrs = {a: getattr(self, a, None) for a in attrs}
            before = self._view() if before_attrs["_source"] is not None else None
            before_wire = (self.table, self.mask_bits, self.count, self.pair_counts, self.rank_matrix)
            try:
                for col in source.columns.values():
                    want = col.name in view["log_axes"]
                    if col.log != want:
                        col.log = want
                        col.encode()
                sample = self._draw_sample(source)
                value = self._table_value(source, sample)
                later = source.in_memory and source.n > scaletier.RANK_ROWS  # sampled: in the background
                ranks = {} if later else scaletier.rank_matrix(source, sample)
                self._source, self._sample = source, sample
                self._mask, self._applied, self._pair_cache = None, None, {}
                self._pair_jobs.cancel()
                self._rank_jobs.cancel()
                with self.hold_trait_notifications():
                    self.table = value
                    self.rank_matrix = ranks
                    self.pair_counts = {}
                    for key in _VIEW + _OPTIONS:
                        setattr(self, key, view[key])
                self._apply(self.ranges, pairs=False)
            except BaseException:
                for a, v in before_attrs.items():
                    setattr(self, a, v)
                if before is not None:
                    with self.hold_trait_notifications():
                        for key in _VIEW + _OPTIONS:
                            setattr(self, key, before[key])
                        (self.table, self.mask_bits, self.count, self.pair_counts, self.rank_matrix) = (
                            before_wire
                        )
                raise
            if later:
                self._measure_ranks()
            self._count_pairs()

    def _measure_ranks(self) -> None:
        """Compute ``rank_matrix`` in the background (a 200,000-row sample of a big table takes a while)."""
        source, sample = self._source, self._sample

        def job(is_latest):
            value = scaletier.rank_matrix(source, sample)
            if not self._publish_lock(is_latest):
                return
            try:
                if self._source is source:
                    self.rank_matrix = value
            finally:
                self._state_lock.release()

        self._rank_jobs.submit(job)

    def _count_pairs(self) -> None:
        """Recount the pair counts of the current order in the background (scale tier only).

        ``all`` matrices are reused per pair until the data or its codes change; ``selected`` ones
        until the selection changes. The result is published after count/answered_seq, and only if no
        newer request came in meanwhile.
        """
        with self._state_lock:
            if self._sample is None:
                return
            source, order, ranges = self._source, list(self.order), dict(self._applied or {})
            mask, seq, cache = self._mask, self.answered_seq, self._pair_cache
            bins = wire.DENSITY_BINS

            def job(is_latest):
                counts = scaletier.count_pairs(source, order, bins, ranges, mask, cache, is_latest)
                if counts is None or not self._publish_lock(is_latest):
                    return
                try:
                    if self._source is source:
                        self.pair_counts = scaletier.pair_counts_value(order, bins, seq, counts)
                finally:
                    self._state_lock.release()

            self._pair_jobs.submit(job)

    def _publish_lock(self, is_latest) -> bool:
        """Take the state lock for a background result, unless a newer request makes it stale first
        (a data swap holds the lock while it waits for the running job: never wait for it blindly)."""
        while not self._state_lock.acquire(timeout=0.05):
            if not is_latest():
                return False
        if is_latest():
            return True
        self._state_lock.release()
        return False

    def _wait_pair_counts(self, timeout: float = 60.0) -> bool:
        """Block until the background pair counts and rank matrix are published (tests, benchmarks)."""
        done = self._pair_jobs.wait(timeout) and self._rank_jobs.wait(timeout)
        for runner in (self._pair_jobs, self._rank_jobs):
            if runner.error is not None:
                raise runner.error
        return done

    # -- traits ------------------------------------------------------------------------------------
    @t.validate("ranges")
    def _check_ranges(self, proposal):
        hidden = [a for a in proposal["value"] if a in self.hidden]
        if hidden:
            raise t.TraitError(
                f"axis {hidden[0]!r} is hidden: show it (remove it from hidden) before selecting on it"
            )
        try:
            clean = normalise(proposal["value"], self._columns)
            if self._page_edit:  # ends dragged on the page: shortest decimals that pick the same rows
                try:
                    clean = round_page_ranges(clean, self._applied or {}, self._columns)
                except (ArithmeticError, TypeError, ValueError) as err:  # never refuse an edit over looks
                    _log.debug("axeswidget: range ends kept as sent (%s)", err)
            with self._state_lock:
                self._source.prepare(clean)  # evaluated before the trait changes: a failure changes nothing
        except (SelectionError, EngineError) as err:
            raise t.TraitError(str(err)) from None
        return clean

    @t.validate("order")
    def _check_order(self, proposal):
        order = list(proposal["value"])
        unknown = [a for a in order if a not in self._columns]
        if unknown:
            known = ", ".join(map(repr, self._columns))
            raise t.TraitError(f"unknown axis {unknown[0]!r} in order; the axes are: {known}")
        if len(set(order)) != len(order):
            twice = sorted({a for a in order if order.count(a) > 1})
            raise t.TraitError("order names an axis twice: " + ", ".join(twice))
        missing = [a for a in self._columns if a not in order]
        if missing:
            raise t.TraitError("order must name every axis once; it lacks: " + ", ".join(map(repr, missing)))
        return order

    @t.validate("height")
    def _check_height(self, proposal):
        value = int(proposal["value"])
        if not HEIGHT_MIN <= value <= HEIGHT_MAX:
            raise t.TraitError(f"height must be {HEIGHT_MIN}..{HEIGHT_MAX} pixels, got {value}")
        return value

    @t.validate("color_by", "bundle_by")
    def _check_axis_option(self, proposal):
        """An axis name (or "" for none); bundle_by needs a category axis."""
        name, option = proposal["value"], proposal["trait"].name
        if not name or (option == "color_by" and name == SAVED_GROUPS and name not in self._columns):
            return name
        col = self._columns.get(name)
        if col is None:
            known = ", ".join(self._columns)
            raise t.TraitError(f"unknown axis {name!r} for {option}; the axes are: {known}")
        if option == "bundle_by" and col.kind not in ("category", "boolean"):
            raise t.TraitError(f"bundle_by needs a category axis; {name!r} is a {col.kind} axis")
        return name

    @t.validate("opacity", "bundle_strength")
    def _check_unit(self, proposal):
        value = float(proposal["value"])
        if not 0.0 <= value <= 1.0:
            raise t.TraitError(f"{proposal['trait'].name} must be between 0 and 1, got {value}")
        return value

    @t.validate("pinned")
    def _check_pinned(self, proposal):
        row = int(proposal["value"])
        rows = self.table.get("n", 0)
        if not -1 <= row < rows:
            raise t.TraitError(f"pinned must be a row position in 0..{rows - 1} or -1, got {row}")
        return row

    @property
    def pinned_index(self):
        """Index label of the row pinned on the page (click a line), or None.

        In the scale tier the page holds sample rows; the label is that of the sample row. Engine
        tables have no index: the pinned sample row's position among the sample rows is given.
        """
        if self.pinned < 0:
            return None
        if self._sample is None:
            return self._source.frame.index[self.pinned]
        if self._sample.positions is not None:
            return self._source.frame.index[self._sample.positions[self.pinned]]
        return self.pinned

    def _axis_list(self, names, option: str, check=None) -> list[str]:
        """Axis names without repeats; unknown names (or ones ``check`` refuses) raise a TraitError."""
        out = []
        for axis in names:
            col = self._columns.get(axis)
            if col is None:
                raise t.TraitError(
                    f"unknown axis {axis!r} in {option}; the axes are: {', '.join(self._columns)}"
                )
            if check:
                check(axis, col)
            if axis not in out:
                out.append(axis)
        return out

    @t.validate("hidden")
    def _check_hidden(self, proposal):
        """Axes hidden from the page: never one with a range (it would filter rows invisibly), never all."""
        names = self._axis_list(proposal["value"], "hidden")
        ranged = [a for a in names if a in self.ranges]
        if ranged:
            raise t.TraitError(
                f"cannot hide axis {ranged[0]!r}: it has a range, which would filter rows invisibly; "
                "clear its range first"
            )
        if names and len(names) == len(self._columns):
            raise t.TraitError("cannot hide every axis; at least one axis stays shown")
        return names

    @t.validate("flipped")
    def _check_flipped(self, proposal):
        return self._axis_list(proposal["value"], "flipped")

    @t.validate("log_axes")
    def _check_log(self, proposal):
        def positive_numbers(axis, col):
            if col.kind not in ("number", "integer"):
                raise t.TraitError(f"axis {axis!r} is a {col.kind} axis; a log scale needs numbers")
            if not col.lo > 0:
                raise t.TraitError(
                    f"axis {axis!r} has values <= 0 (smallest {col.lo:g}); a log scale needs positive data"
                )

        return self._axis_list(proposal["value"], "log_axes", positive_numbers)

    @t.observe("log_axes")
    def _on_log(self, change):
        with self._state_lock:
            source = self._source
            for col in source.columns.values():
                want = col.name in change["new"]
                if col.log != want:
                    col.log = want
                    if source.in_memory:
                        col.codes = quantise(col.axis_units(), col.lo, col.hi, col.log, col.missing)
            if self._sample is not None:  # new codes: a new sample of the same rows, pair counts again
                if source.in_memory:
                    at = self._sample.positions
                    self._sample.codes = {a: c.codes[at] for a, c in source.columns.items()}
                else:
                    self._sample = source.sample(len(self._sample), seed=0)
                self._pair_cache = {}
            self.table = self._table_value(source, self._sample)
        self._count_pairs()

    @t.observe("order")
    def _on_order(self, change):
        self._count_pairs()

    @t.observe("sample_above", "sample_size")
    def _on_tier(self, change):
        if getattr(self, "_source", None) is not None and change["old"] != change["new"]:
            view = {
                **self._view(),
                "pinned": -1,
            }  # the page's rows change: a pinned position means another row
            self._switch(self._source, view)

    @t.validate("sample_above", "sample_size")
    def _check_tier(self, proposal):
        value, name = int(proposal["value"]), proposal["trait"].name
        if value < (1 if name == "sample_size" else 0):
            raise t.TraitError(f"{name} must be a positive number of rows, got {value}")
        return value

    @t.observe("ranges", "edit_seq", "dragging")
    def _on_ranges(self, change):
        # ranges, edit_seq and dragging may arrive in one message from the page; notifications fire
        # after all of them are set
        self._apply(self.ranges)

    def _apply(self, ranges, pairs: bool = True):
        """Answer a selection: exact count and page mask first, pair counts after (final edits only)."""
        with self._state_lock:
            source = self._source
            changed = self._applied is None or ranges != self._applied
            page = self._page_edit
            # the contrast markers follow final selections (kept as they were while dragging)
            mark = not self.dragging and (changed or self._was_dragging)
            with self.hold_sync():
                if changed:
                    if source.in_memory:
                        mask = source.mask(ranges)
                        count = int(np.count_nonzero(mask))
                        on_page = mask if self._sample is None else mask[self._sample.positions]
                    else:
                        mask = None
                        count = source.count(ranges)
                        on_page = scaletier.sample_mask(source, self._sample, ranges)
                    self._mask, self._applied = mask, {k: list(v) for k, v in ranges.items()}
                    self.mask_bits = pack(on_page)
                    self.count = count
                self.answered_seq = self.edit_seq
                final = not self.dragging
                if page and final:
                    # a final edit from the page: callbacks first, then the answer goes out (on leaving
                    # hold_sync), so the page's exact count means the callbacks are done
                    self._notify(changed, page=True)
            if not (page and final):
                self._notify(changed, page=page)
            # computed after the answer and the callbacks, so it never delays the exact count
            if mark:
                self._mark_contrast()
        if pairs and final:  # after the answer: the exact count never waits for pair counts
            self._count_pairs()

    def _mark_contrast(self) -> None:
        """Name the 3 unbrushed axes that set a final selection apart most (``contrast``) for the page.

        An empty list without a proper selection (no row or every row selected) and above
        ``CONTRAST_MAX_ROWS`` rows, where it would slow every edit down.
        """
        mask = self._mask
        n, picked = self._source.n, self.count
        if mask is None or not 0 < picked < n or n > CONTRAST_MAX_ROWS:
            self.contrast_axes = []
            return
        try:
            # huge values (1e300) overflow the spread of the mean difference: not the user's concern here
            with np.errstate(all="ignore"), warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)
                table = contrast.compare(self._columns, mask, brushed=self.ranges)
        except ValueError:
            self.contrast_axes = []
            return
        # the brushed axes differ by construction: mark the others
        top = table[table["statistic"].notna() & ~table["brushed"]]["axis"].head(3)
        self.contrast_axes = [str(a) for a in top]

    @t.validate("saved")
    def _check_saved(self, proposal):
        out = {}
        for name, ranges in proposal["value"].items():
            if not isinstance(name, str) or not name:
                raise t.TraitError(f"a saved selection needs a non-empty text name, got {name!r}")
            try:
                out[name] = normalise(ranges, self._columns)
            except SelectionError as err:
                raise t.TraitError(f"saved selection {name!r}: {err}") from None
        return out

    # -- public API --------------------------------------------------------------------------------
    @property
    def mask(self) -> np.ndarray:
        """Boolean array, one entry per row: True where the row is picked on every axis with a selection.

        Only for tables held in this process; an engine table raises NotInMemoryError (use ``count``,
        ``selected``, ``to_filter()`` or ``to_sql()``).
        """
        self._need_rows("w.mask")
        return self._mask

    def _need_rows(self, what: str) -> None:
        if not self._source.in_memory:
            engine = self._source.engine
            raise NotInMemoryError(
                f"{what} needs every row in this process, but the rows live in {engine} "
                f"({self._source.n} rows); use w.count for the exact number selected, w.selected for "
                f"the selected rows as a lazy {engine} table, or w.to_filter() / w.to_sql() for the filter"
            )

    @property
    def selected(self):
        """The selected rows: in the input's own type (pandas: original index kept); for an engine
        table, the engine's lazy filtered table (a DuckDB relation, a Spark DataFrame; nothing is read)."""
        if getattr(self._source, "shares_connection", False) and not getattr(self._inside, "depth", 0):
            self._pair_jobs.wait(120)  # the user's next query on this relation must not find it busy
        with self._state_lock:  # the in-memory evaluator is shared with edits arriving from the page
            return self._source.selected(self.ranges)

    def to_filter(self):
        """The selection as a narwhals expression: ``nw.from_native(table).filter(w.to_filter())``.

        Works on any table narwhals reads (pandas, polars, pyarrow, DuckDB, Spark); no selection gives
        ``nw.lit(True)``.
        """
        return self._source.filter_expression(self.ranges)

    def to_sql(self) -> str:
        """The selection as a SQL WHERE condition in the engine's dialect (DuckDB and Spark tables).

        ``SELECT count(*) FROM t WHERE <w.to_sql()>`` gives ``w.count``; ``TRUE`` when nothing is
        selected. In-memory tables have no SQL dialect: use :meth:`to_filter` or :meth:`to_query`.
        """
        try:
            return self._source.filter_sql(self.ranges)
        except SourceError:
            raise ValueError(
                "to_sql() is for tables held by a SQL engine (DuckDB, Spark); this table is in memory: "
                "use w.to_filter() (narwhals) or w.to_query() (pandas)"
            ) from None

    @property
    def data(self) -> pd.DataFrame:
        """A copy of the table the widget shows, as a pandas DataFrame (editing it changes nothing here).

        Engine tables are not copied into memory: NotInMemoryError (the engine's table is
        ``w.selected`` after ``w.clear()``).
        """
        self._need_rows("w.data")
        return self._source.frame.copy(deep=True)

    @data.setter
    def data(self, new) -> None:
        """Show a new table; the view is carried over where it fits (see ``carryover``), all or nothing."""
        axes = self._axes_arg
        notes = []
        self._pair_jobs.cancel()  # the old table's counts are not wanted; let a running query end
        self._pair_jobs.wait(60)
        if axes is not None:  # axes named at construction that the new table lacks are dropped too
            labels = _column_labels(new)
            present = {display_name(c) for c in labels} | set(labels)
            gone = [display_name(a) for a in axes if a not in present]
            axes = [a for a in axes if a in present]
            if not axes:
                raise ColumnError(
                    f"the new table has none of the axes {', '.join(map(repr, self._axes_arg))}"
                )
            if gone:
                notes.append(
                    "axes named at construction missing from the new table: " + ", ".join(map(repr, gone))
                )
        source = _open(new, axes)
        page_rows, rows_in = self._plan(source)
        if rows_in is None:
            view, more = carry_over(self._view(), self._columns, source.columns, page_rows)
        else:
            view, more = carry_over(self._view(), self._columns, source.columns, page_rows, rows_in, source.n)
        self._switch(source, view)
        notes += more
        if notes:
            warnings.warn("axeswidget: the new data changes the view: " + "; ".join(notes), stacklevel=2)

    # -- axis order ----------------------------------------------------------------------------------
    def association(self, metric: str = "spearman", *, max_rows: int | None = 200_000, seed: int = 0):
        """Association between every pair of axes, as a DataFrame (see ``measures.association``).

        ``metric``: "pearson", "spearman", "kendall", "crossings" (count of crossing line pairs) or
        "mutual_info" (normalised, binned; also for category axes). Above ``max_rows`` rows a seeded
        sample is used; ``result.attrs`` says whether the result is exact. The measures read the axes as
        the widget classified them (category axes by their label codes, in axis order).
        """
        if self._source.in_memory:
            return measures.association(self._columns, metric, max_rows=max_rows, seed=seed)
        table = scaletier.sample_frame(self._source, self._sample)  # engine tables: their sample rows
        return measures.association(table, metric, max_rows=max_rows, seed=seed)

    def reorder(self, metric: str = "spearman", *, maximize: bool = True, first: str | None = None, **kw):
        """Choose the axis order from an association metric, apply it and return it.

        ``maximize=True`` puts strongly associated columns side by side (good for reading
        correlations); ``maximize=False`` puts dissimilar columns side by side, which a user study
        found helpful for spotting clusters. ``first`` pins the first axis. For "crossings" the
        order minimises crossings when ``maximize`` is True.
        """
        matrix = self.association(metric, **kw)
        if metric == "crossings":
            matrix = -matrix  # fewest crossings = largest negated count
        if first is not None and first not in self._columns:
            raise ValueError(f"unknown axis {first!r} for first=; the axes are: {', '.join(self._columns)}")
        best = ordering.best_order(matrix, maximize=maximize, absolute=metric != "crossings", first=first)
        order = [str(a) for a in best]
        self.order = order
        return order

    def untangle(self, metric: str = "spearman", **kw) -> list[str]:
        """Flip axes so that every pair of neighbours is positively associated (fewer crossing lines).

        Applies the flips to the page and returns the flipped axes.
        """
        matrix = self.association(metric, **kw)
        flips = [str(a) for a in ordering.suggest_flips(matrix, self.order)]
        self.flipped = flips
        return flips

    # -- selections as objects ---------------------------------------------------------------------
    def on_change(self, callback, *, every: float = 0.3):
        """Call ``callback(widget)`` whenever the selection changes.

        While a range is being dragged on the page the callback runs at most once per ``every``
        seconds; when the mouse is released it always runs once more with the final selection.
        Changes made from Python call it at once. Returns the callback (usable as a decorator).
        """
        self._callbacks.append([callback, float(every), 0.0])
        return callback

    def off_change(self, callback) -> None:
        """Stop calling a callback registered with :meth:`on_change`."""
        self._callbacks = [c for c in self._callbacks if c[0] is not callback]

    def _notify(self, changed: bool, page: bool = False) -> None:
        """Run the due callbacks. From the page an error is caught, shown in ``callback_error`` and
        logged; from Python code it propagates to the caller."""
        final = not self.dragging
        released = final and self._was_dragging
        self._was_dragging = self.dragging
        if not (changed or released):
            return
        now = time.monotonic()
        due = []
        for entry in list(self._callbacks):
            if not final and now - entry[2] < entry[1]:
                continue  # throttled while dragging; the release always calls
            entry[2] = now
            due.append(entry[0])
        if not due:
            return
        errors = []
        with self._busy_section():
            self._page_edit = False  # what a callback sets is a change from Python
            try:
                for callback in due:
                    if not page:
                        callback(self)
                        continue
                    try:
                        callback(self)
                    except Exception as err:
                        text = _callback_error_text(callback, err)
                        errors.append(text)
                        _log.error("axeswidget: %s (the selection stands)", text, exc_info=err)
            finally:
                self._page_edit = page
        more = f" (and {len(errors) - 1} more)" if len(errors) > 1 else ""
        self.callback_error = errors[0] + more if errors else ""

    def to_query(self) -> str:
        """A pandas ``DataFrame.query`` expression that reproduces the selection exactly.

        ``frame.query(w.to_query())`` gives the same rows as ``w.selected`` for a pandas frame.
        """
        self._need_rows("to_query()")
        try:
            return to_query(self.ranges, self._columns, list(self._source.frame.columns))
        except SelectionError as err:
            raise ValueError(str(err)) from None

    def keep(self, name: str) -> None:
        """Keep the current selection under a name (replacing one of the same name)."""
        self.saved = {**self.saved, name: self.ranges}

    def recall(self, name: str) -> None:
        """Put a kept selection back on the axes."""
        if name not in self.saved:
            raise KeyError(
                f"no saved selection {name!r}; saved: {', '.join(map(repr, self.saved)) or 'none'}"
            )
        self.ranges = self.saved[name]

    def forget(self, name: str) -> None:
        """Delete a kept selection."""
        if name not in self.saved:
            raise KeyError(
                f"no saved selection {name!r}; saved: {', '.join(map(repr, self.saved)) or 'none'}"
            )
        self.saved = {k: v for k, v in self.saved.items() if k != name}

    def group_mask(self, name: str) -> np.ndarray:
        """The exact mask of a kept selection (without putting it on the axes)."""
        if name not in self.saved:
            raise KeyError(
                f"no saved selection {name!r}; saved: {', '.join(map(repr, self.saved)) or 'none'}"
            )
        self._need_rows("group_mask()")
        return self._source.mask_of(self.saved[name])

    def labels(self, *, others: str | None = None) -> pd.Series:
        """Each row's group among the kept selections, as a categorical Series on the data's index.

        A row in several groups gets the *first* kept group that contains it (in the order they were
        kept); a row in none gets ``others`` (missing by default). Categories are the group names in
        order (plus ``others`` when given).
        """
        self._need_rows("labels()")
        names = list(self.saved)
        codes = np.full(self._source.n, -1, dtype=np.int64)
        for i, name in reversed(list(enumerate(names))):
            codes[self.group_mask(name)] = i
        cats = names + ([others] if others is not None and others not in names else [])
        if others is not None:
            codes[codes < 0] = cats.index(others)
        return pd.Series(
            pd.Categorical.from_codes(codes, categories=cats), index=self._source.frame.index, name="group"
        )

    # -- sharing -------------------------------------------------------------------------------------
    def save_png(self, path, scale: float = 1, title: str | None = None) -> export.PngRequest:
        """Ask the page for a PNG of the chart at ``scale`` x its size on screen.

        The picture includes the colour legend (when lines are coloured) and ``title`` above the chart.

        The page draws the picture and sends it back; in Jupyter the file is written once the cell
        that asked has finished (a kernel reads messages from the page between cells). The returned
        request object tells whether it is done (``.done``, ``.error``). Raises a clear error when no
        view of the widget is showing.
        """
        return export.save_png(self, path, scale, title=title)

    def to_html(self, path=None, *, title: str = "axeswidget chart"):
        """One self-contained HTML page of the chart (code, data, current view) that works offline.

        Brushing, reordering and flipping work there without a kernel; the page's own count stands in
        for the kernel's. Returns the HTML text, or the path written when ``path`` is given.
        """
        from . import __version__  # the package's version, read once in __init__.py

        return export.to_html(self, path, title=title, version=__version__)

    @property
    def axes(self) -> list[str]:
        """Names of the axes the widget draws (in the table's order; see ``order`` for the drawn order)."""
        return list(self._columns)

    def column(self, axis: str) -> Column:
        """The encoded column behind an axis (kind, domain, labels, exact values)."""
        if axis not in self._columns:
            raise KeyError(f"unknown axis {axis!r}; the axes are: {', '.join(map(repr, self._columns))}")
        return self._columns[axis]

    def clear(self, axis: str | None = None) -> None:
        """Remove the selection on one axis, or on all axes when ``axis`` is None."""
        if axis is None:
            self.ranges = {}
            return
        self.column(axis)
        self.ranges = {k: v for k, v in self.ranges.items() if k != axis}

    def contrast(self) -> pd.DataFrame:
        """How much the selected rows differ from the other rows on each axis, most different first.

        KS statistic for number and date axes, total-variation distance for label axes (details in
        ``axeswidget.contrast.compare``). Raises ValueError when no row or every row is selected.
        """
        return contrast.compare(self._columns, self.mask, brushed=self.ranges)

    def __repr__(self) -> str:
        where = "" if self._source.in_memory else f", in {self._source.engine}"
        return f"AxesWidget({len(self._columns)} axes, {self.count} of {self._source.n} rows selected{where})"


class _Busy:
    """Counts a page message or callback round in flight (for ``wait``), per widget and thread."""

    def __init__(self, widget):
        self.widget = widget

    def __enter__(self):
        w = self.widget
        w._inside.depth = getattr(w._inside, "depth", 0) + 1
        with w._settled:
            w._busy += 1

    def __exit__(self, *exc):
        w = self.widget
        w._inside.depth -= 1
        with w._settled:
            w._busy -= 1
            w._settled.notify_all()


def _callback_error_text(callback, err: BaseException) -> str:
    """A short one-line description of a callback's error, for the page."""
    name = getattr(callback, "__qualname__", None) or getattr(callback, "__name__", None) or repr(callback)
    message = " ".join(str(err).split())
    if len(message) > 200:
        message = message[:199] + "…"
    return f"callback {name} raised {type(err).__name__}" + (f": {message}" if message else "")


#: what a cell sets that waits for a page message in progress (and vice versa): the data and every
#: synced trait (traitlets keeps its hold/validation state per widget, not per thread)
_LOCKED = frozenset(AxesWidget.class_trait_names(sync=True)) | {"data"}
#: view options that can be given as keyword arguments and are carried over by ``resume=``
_OPTIONS = wire.OPTIONS
#: the traits a data swap or ``resume=`` carries over besides the options
_VIEW = ("order", "ranges", "flipped", "saved", "pinned", "hidden")
HEIGHT_MIN, HEIGHT_MAX = 120, 4000
#: ``color_by`` value that colours rows by the kept selections (``saved``; first group wins, as ``labels()``)
SAVED_GROUPS = "@saved"
#: above this many rows the page's contrast markers are not computed (``contrast()`` still works): measured
#: here, ``contrast.compare`` over 13 axes takes ~0.4 s at 10^5 rows and ~5 s at 10^6, after every edit
CONTRAST_MAX_ROWS = 200_000


_FILE_SUFFIXES = (".parquet", ".pq", ".csv", ".tsv", ".txt", ".gz")


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


def _open(data, axes, names=None) -> DataSource:
    """The data source of a table, a path of files or an engine table (see ``sources.open_source``)."""
    if _is_paths(data):
        _check_path_text(data)
    return open_source(data, axes, names)


def _column_labels(data) -> list:
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
