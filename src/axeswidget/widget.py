"""The widget class: its traits (the only channel between kernel and front end) and public methods.

The class is thin: validators live in ``checks.py``, the state lock and ``on_change`` callbacks in
``callbacks.py``, the answer to a selection in ``answer.py``, opening and swapping data in
``switch.py``, kept selections in ``groups.py``, the scale tier's background publishing in
``scaletier.py``. DEVELOPERS.md documents every synced trait in its "trait contract" table.
"""

from __future__ import annotations

import warnings
from pathlib import Path

import anywidget
import numpy as np
import pandas as pd
import traitlets as t

from . import answer, checks, contrast, export, groups, measures, ordering, scaletier, switch
from .callbacks import Callbacks, StateGuard
from .encode import Column
from .query import to_query
from .selection import SelectionError
from .sources import SourceError

_STATIC = Path(__file__).parent / "static"


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

    # -- data (kernel -> page) ----------------------------------------------------------------------
    #: dict, kernel -> page: row counts and one spec (codes buffer) per axis; see ``tabletrait.table_trait``
    table = t.Dict().tag(sync=True)
    #: dict, kernel -> page, default {}: binned pair counts of all rows (scale tier only)
    pair_counts = t.Dict().tag(sync=True)
    #: dict, kernel -> page, default {}: Spearman's rho of every pair of axes
    rank_matrix = t.Dict().tag(sync=True)
    #: int, both, default 1,000,000: more rows than this send the page a sample (scale tier)
    sample_above = t.Int(1_000_000).tag(sync=True)
    #: int, both, default 100,000: rows in the scale tier's sample
    sample_size = t.Int(100_000).tag(sync=True)

    # -- view (both ways; carried over by a data swap and ``resume=``) ------------------------------
    #: list of str, both: axis names in drawing order (every axis once)
    order = t.List(t.Unicode()).tag(sync=True, echo_update=False)
    #: list of str, both, default []: axes drawn upside down
    flipped = t.List(t.Unicode()).tag(sync=True, echo_update=False)
    #: list of str, both, default []: axes hidden from the page (``order`` still names them)
    hidden = t.List(t.Unicode()).tag(sync=True)
    #: int, both, default -1: row position pinned on the page, -1 for none
    pinned = t.Int(-1).tag(sync=True)

    # -- selection ----------------------------------------------------------------------------------
    #: dict, both, default {}: ``{axis: [item, ...]}``, validated by ``selection.normalise``
    ranges = t.Dict().tag(sync=True, echo_update=False)
    #: dict, both, default {}: named selections (``keep``/``recall``), same form as ``ranges``
    saved = t.Dict().tag(sync=True)
    #: int, kernel -> page, default 0: exact number of selected rows
    count = t.Int(0).tag(sync=True)
    #: list of str, kernel -> page, default []: up to 3 axes where the selected rows differ most
    contrast_axes = t.List(t.Unicode()).tag(sync=True)

    # -- view options (both ways; keyword arguments; the order of ``wire.json`` "options") ----------
    #: str, both, default "": axis that colours the lines ("" none, "@saved" the kept selections)
    color_by = t.Unicode("").tag(sync=True, option=True)
    #: float 0..1, both, default 0.0: line opacity (0 = chosen from the row count)
    opacity = t.Float(0.0).tag(sync=True, option=True)
    #: "auto" | "lines" | "density", both, default "auto"
    view_mode = t.Enum(["auto", "lines", "density"], "auto").tag(sync=True, option=True)
    #: bool, both, default False: curves between axes instead of straight segments
    curves = t.Bool(False).tag(sync=True, option=True)
    #: str, both, default "": category axis whose groups are bundled between axes
    bundle_by = t.Unicode("").tag(sync=True, option=True)
    #: float 0..1, both, default 0.5: how strongly bundled lines are drawn together
    bundle_strength = t.Float(0.5).tag(sync=True, option=True)
    #: bool, both, default True: marginal histograms on the axes
    histograms = t.Bool(True).tag(sync=True, option=True)
    #: "vertical" | "horizontal", both, default "vertical": direction of the axes
    orientation = t.Enum(["vertical", "horizontal"], "vertical").tag(sync=True, option=True)
    #: list of str, both, default []: number axes on a log scale (the kernel re-encodes their codes)
    log_axes = t.List(t.Unicode()).tag(sync=True, option=True)
    #: int, both, default 380: chart height in CSS pixels (120..4000)
    height = t.Int(380).tag(sync=True, option=True)

    # -- plumbing (the sync protocol; not for users to set) -----------------------------------------
    #: bytes, kernel -> page, default b"": exact mask of the page's rows, ``packbits(bitorder="little")``
    mask_bits = t.Bytes(b"").tag(sync=True, plumbing=True)
    #: int, page -> kernel, default 0: bumped by the page with every ranges edit it sends
    edit_seq = t.Int(0).tag(sync=True, echo_update=False, plumbing=True)
    #: bool, page -> kernel, default False: the edit is an intermediate one (callbacks throttled)
    dragging = t.Bool(False).tag(sync=True, echo_update=False, plumbing=True)
    #: int, kernel -> page, default 0: the ``edit_seq`` that ``count``/``mask_bits`` answer
    answered_seq = t.Int(0).tag(sync=True, plumbing=True)
    #: list of str, page -> kernel, default []: ids of live views (for ``save_png``)
    views = t.List(t.Unicode()).tag(sync=True, plumbing=True)
    #: str, kernel -> page, default "": the last error of an ``on_change`` callback run for a page edit
    callback_error = t.Unicode("").tag(sync=True, plumbing=True)

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
        # page messages may arrive on another thread while a cell runs (see callbacks.py)
        self._guard = StateGuard()
        self._state_lock = self._guard.lock
        self._page_edit = False  # a selection edit from the page is being applied
        super().__init__(height=height, sample_above=sample_above, sample_size=sample_size)
        self._pair_jobs = scaletier.LatestRunner("axeswidget pair counts")
        self._rank_jobs = scaletier.LatestRunner("axeswidget rank matrix")
        self._axes_arg = axes
        self._callbacks = Callbacks()
        source = switch.open_data(data, axes, names)
        view, notes = {**switch.view_of(self), "order": list(source.columns)}, []
        if resume is not None:
            if not isinstance(resume, AxesWidget):
                raise TypeError(f"resume= takes an AxesWidget, got {type(resume).__name__}")
            view, notes = switch.resumed(self, source, resume)
        switch.commit(self, source, view)
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
        with self._guard.section(), self._state_lock:
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

    def wait(self, timeout: float | None = None) -> bool:
        """Block until no callback is running and every page edit received has been answered.

        Returns True when settled, False when ``timeout`` seconds passed first. Comm messages can be
        handled while a cell runs (kernel subshells), so a cell that depends on what ``on_change``
        callbacks computed for the page's latest selection can call ``w.wait()`` first.
        """
        return self._guard.wait(lambda: self.answered_seq >= self.edit_seq, timeout)

    @property
    def _columns(self) -> dict[str, Column]:
        """The source's axes (a view; the source owns them)."""
        return self._source.columns if getattr(self, "_source", None) is not None else None

    def _wait_pair_counts(self, timeout: float = 60.0) -> bool:
        """Block until the background pair counts and rank matrix are published (tests, benchmarks)."""
        return scaletier.wait_published(self, timeout)

    # -- validators (wired to checks.py) and observers --------------------------------------------
    @t.validate(*checks.CHECKED)
    def _check(self, proposal):
        return checks.check(self, proposal["trait"].name, proposal["value"])

    @t.observe("log_axes")
    def _on_log(self, change):
        switch.recode_log(self, change["new"])

    @t.observe("order")
    def _on_order(self, change):
        scaletier.publish_pair_counts(self)

    @t.observe("sample_above", "sample_size")
    def _on_tier(self, change):
        if getattr(self, "_source", None) is not None and change["old"] != change["new"]:
            # the page's rows change: a pinned position would mean another row
            switch.commit(self, self._source, {**switch.view_of(self), "pinned": -1})

    @t.observe("ranges", "edit_seq", "dragging")
    def _on_ranges(self, change):
        # ranges, edit_seq and dragging may arrive in one message from the page; notifications fire
        # after all of them are set
        answer.apply(self, self.ranges)

    # -- the selection and the data ------------------------------------------------------------------
    @property
    def mask(self) -> np.ndarray:
        """Boolean array, one entry per row: True where the row is picked on every axis with a selection.

        Only for tables held in this process; an engine table raises NotInMemoryError (use ``count``,
        ``selected``, ``to_filter()`` or ``to_sql()``).
        """
        self._need_rows("w.mask")
        return self._mask

    def _need_rows(self, what: str) -> None:
        switch.need_rows(self._source, what)

    @property
    def selected(self):
        """The selected rows: in the input's own type (pandas: original index kept); for an engine
        table, the engine's lazy filtered table (a DuckDB relation, a Spark DataFrame; nothing is read)."""
        if getattr(self._source, "shares_connection", False) and not self._guard.depth:
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

    def to_query(self) -> str:
        """A pandas ``DataFrame.query`` expression that reproduces the selection exactly.

        ``frame.query(w.to_query())`` gives the same rows as ``w.selected`` for a pandas frame.
        """
        self._need_rows("to_query()")
        try:
            return to_query(self.ranges, self._columns, list(self._source.frame.columns))
        except SelectionError as err:
            raise ValueError(str(err)) from None

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
        switch.swap(self, new)

    @property
    def pinned_index(self):
        """Index label of the row pinned on the page (click a line), or None.

        In the scale tier the page holds sample rows; the label is that of the sample row. Engine
        tables have no index: the pinned sample row's position among the sample rows is given.
        """
        return None if self.pinned < 0 else switch.row_label(self._source, self._sample, self.pinned)

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
        self._callbacks.add(callback, every)
        return callback

    def off_change(self, callback) -> None:
        """Stop calling a callback registered with :meth:`on_change`."""
        self._callbacks.remove(callback)

    def keep(self, name: str) -> None:
        """Keep the current selection under a name (replacing one of the same name)."""
        self.saved = {**self.saved, name: self.ranges}

    def recall(self, name: str) -> None:
        """Put a kept selection back on the axes."""
        self.ranges = groups.kept(self, name)

    def forget(self, name: str) -> None:
        """Delete a kept selection."""
        groups.kept(self, name)
        self.saved = {k: v for k, v in self.saved.items() if k != name}

    def group_mask(self, name: str) -> np.ndarray:
        """The exact mask of a kept selection (without putting it on the axes)."""
        return groups.group_mask(self, name)

    def labels(self, *, others: str | None = None) -> pd.Series:
        """Each row's group among the kept selections, as a categorical Series on the data's index.

        A row in several groups gets the *first* kept group that contains it (in the order they were
        kept); a row in none gets ``others`` (missing by default). Categories are the group names in
        order (plus ``others`` when given).
        """
        return groups.labels(self, others)

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

    # -- axes ------------------------------------------------------------------------------------------
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


#: what a cell sets that waits for a page message in progress (and vice versa): the data and every
#: synced trait (traitlets keeps its hold/validation state per widget, not per thread)
_LOCKED = frozenset(AxesWidget.class_trait_names(sync=True)) | {"data"}
#: view options (traits tagged ``option=True``, in class definition order): keyword arguments of the
#: constructor, carried over by a data swap and ``resume=``; equal to ``wire.OPTIONS`` (tested)
_OPTIONS = tuple(name for name in vars(AxesWidget) if name in AxesWidget.class_traits(option=True))
AxesWidget._OPTIONS = _OPTIONS
