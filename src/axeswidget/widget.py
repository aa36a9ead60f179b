"""The widget class: traits and public methods. Heavy lifting lives in encode.py and selection.py.

The traits are the only channel between kernel and front end; DEVELOPERS.md documents each of them
(name, direction, type, meaning) in its "trait contract" table.
"""

from __future__ import annotations

import time
import warnings
from pathlib import Path

import anywidget
import numpy as np
import pandas as pd
import traitlets as t

from . import export
from .encode import Column, ColumnError, display_name, encode_frame, quantise, table_trait, to_frame
from .selection import MaskEvaluator, SelectionError, normalise, pack, to_query

_STATIC = Path(__file__).parent / "static"


def _take_rows(source, frame: pd.DataFrame, mask: np.ndarray):
    """The selected rows in the same type as the table the user gave."""
    mod = type(source).__module__.split(".")[0]
    if isinstance(source, pd.DataFrame) or source is None:
        return frame[mask]
    if mod == "polars":
        import polars as pl

        return source.filter(pl.Series(mask))
    if mod == "pyarrow" and hasattr(source, "filter"):
        import pyarrow as pa

        return source.filter(pa.array(mask))
    if isinstance(source, np.ndarray):
        return source[mask]
    if isinstance(source, dict):
        return {k: np.asarray(v)[mask] for k, v in source.items()}
    return frame[mask]  # Arrow stream objects: the stream is consumed, a pandas frame comes back


class AxesWidget(anywidget.AnyWidget):
    """Parallel coordinates for a table: one vertical axis per column, one line per row.

    Drag along an axis to select a range; the exact selection is available as :attr:`mask` (a numpy
    bool array) and :attr:`selected` (the selected rows, in the input's own type, original index kept).

    Parameters
    ----------
    data:
        a pandas or polars DataFrame, a pyarrow Table/RecordBatch, an object with the Arrow PyCapsule
        stream interface, a dict of 1-D arrays, or a 2-D numpy array (with ``names``).
    axes:
        column names to show, in order. ``None`` shows every column that can be drawn; the others are
        skipped with one warning.
    ranges:
        an initial selection (see :mod:`axeswidget.selection` for its form).
    height:
        chart height in CSS pixels.
    names:
        column names for a 2-D numpy array.
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
    orientation = t.Enum(["vertical", "horizontal"], "vertical").tag(sync=True)

    def __init__(
        self, data, axes=None, *, ranges=None, height: int = 380, names=None, resume=None, **options
    ):
        super().__init__(height=height)
        self._axes_arg = axes
        self._callbacks: list[list] = []  # [callback, min_interval_while_dragging, last_call_time]
        self._was_dragging = False
        self._load(data, axes, names)
        self.order = list(self._columns)
        self._apply({})
        if resume is not None:
            self._take_over(resume)
        for key, value in options.items():
            if key not in _OPTIONS:
                raise TypeError(
                    f"AxesWidget got an unknown option {key!r}; options are: {', '.join(_OPTIONS)}"
                )
            setattr(self, key, value)
        if ranges:
            self.ranges = ranges

    def _take_over(self, other) -> None:
        """Adopt the view of another widget (order, ranges, flips, options) where it fits this data."""
        if not isinstance(other, AxesWidget):
            raise TypeError(f"resume= takes an AxesWidget, got {type(other).__name__}")
        dropped = []
        for key in _OPTIONS:  # one by one, outside the hold below: a bad value raises at once
            try:
                setattr(self, key, getattr(other, key))
            except t.TraitError:
                dropped.append(key)
        with self.hold_trait_notifications():
            self.order = [a for a in other.order if a in self._columns] + [
                a for a in self._columns if a not in other.order
            ]
            self.flipped = [a for a in other.flipped if a in self._columns]
            kept = {}
            for axis, items in other.ranges.items():
                col = self._columns.get(axis)
                same_kind = col is not None and col.kind == other._columns[axis].kind
                clipped = _clip_items(items, col, clip=False) if same_kind else []
                if clipped:
                    kept[axis] = clipped
                else:
                    dropped.append(axis)
            self.ranges = kept
            saved = {}
            for name, sel in other.saved.items():
                try:
                    saved[name] = normalise(sel, self._columns)
                except SelectionError:
                    dropped.append(f"saved selection {name!r}")
            self.saved = saved
        if dropped:
            warnings.warn(f"axeswidget: could not take over: {', '.join(map(str, dropped))}", stacklevel=3)

    def _load(self, data, axes, names=None, frame=None) -> None:
        frame = to_frame(data, names) if frame is None else frame
        columns = encode_frame(frame, axes)
        self._source = None if isinstance(data, pd.DataFrame) else data
        self._frame = frame
        self._columns = columns
        self._evaluator = MaskEvaluator(self._columns, len(self._frame))
        self.table = table_trait(self._columns, len(self._frame))

    # -- traits ------------------------------------------------------------------------------------
    @t.validate("ranges")
    def _check_ranges(self, proposal):
        try:
            return normalise(proposal["value"], self._columns)
        except SelectionError as err:
            raise t.TraitError(str(err)) from None

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
        return order

    @t.validate("color_by", "bundle_by")
    def _check_axis_option(self, proposal):
        """An axis name (or "" for none); bundle_by needs a category axis."""
        name, option = proposal["value"], proposal["trait"].name
        if not name:
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
        if not -1 <= row < len(self._frame):
            raise t.TraitError(f"pinned must be a row position in 0..{len(self._frame) - 1} or -1, got {row}")
        return row

    @property
    def pinned_index(self):
        """Index label of the row pinned on the page (click a line), or None."""
        return None if self.pinned < 0 else self._frame.index[self.pinned]

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
        for col in self._columns.values():
            want = col.name in change["new"]
            if col.log != want:
                col.log = want
                col.codes = quantise(col.axis_units(), col.lo, col.hi, col.log, col.missing)
        self.table = table_trait(self._columns, len(self._frame))

    @t.observe("ranges", "edit_seq", "dragging")
    def _on_ranges(self, change):
        # ranges, edit_seq and dragging may arrive in one message from the page; notifications fire
        # after all of them are set
        self._apply(self.ranges)

    def _apply(self, ranges):
        changed = not self._evaluator.evaluated or ranges != self._evaluator.ranges
        with self.hold_sync():
            if changed:
                mask = self._evaluator.update(ranges)
                self.mask_bits = pack(mask)
                self.count = int(mask.sum())
            self.answered_seq = self.edit_seq
        self._notify(changed)

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
        """Boolean array, one entry per row: True where the row is picked on every axis with a selection."""
        return self._evaluator.mask

    @property
    def selected(self):
        """The selected rows, in the input's own type (pandas: original index kept)."""
        return _take_rows(self._source, self._frame, self.mask)

    @property
    def data(self) -> pd.DataFrame:
        """The table the widget shows, as a pandas DataFrame (the widget's own snapshot)."""
        return self._frame

    @data.setter
    def data(self, new) -> None:
        """Show a new table; ranges and order on columns that still exist are kept (ranges clipped)."""
        old_ranges, old_order, old_log = dict(self.ranges), list(self.order), list(self.log_axes)
        old_cols = self._columns
        axes = self._axes_arg
        dropped = []
        frame = to_frame(new)
        if axes is not None:  # axes named at construction that the new table lacks are dropped too
            present = {display_name(c) for c in frame.columns} | set(frame.columns)
            dropped = [display_name(a) for a in axes if a not in present]
            axes = [a for a in axes if a in present]
            if not axes:
                raise ColumnError(
                    f"the new table has none of the axes {', '.join(map(repr, self._axes_arg))}"
                )
        self._load(new, axes, frame=frame)
        kept = {}
        for axis, items in old_ranges.items():
            col = self._columns.get(axis)
            if col is None or col.kind != old_cols[axis].kind:
                dropped.append(axis)
                continue
            clipped = _clip_items(items, col)
            if clipped:
                kept[axis] = clipped
            else:
                dropped.append(axis)
        order = [a for a in old_order if a in self._columns]
        order += [a for a in self._columns if a not in order]
        with self.hold_trait_notifications():
            self.log_axes = [a for a in old_log if a in self._columns and self._columns[a].lo > 0]
            self.order = order
            self.ranges = kept
            self._apply(self.ranges)
        if dropped:
            warnings.warn(
                "axeswidget: dropped axes or selections that are gone, changed kind or fall outside the "
                f"new data: {', '.join(map(repr, dict.fromkeys(dropped)))}",
                stacklevel=2,
            )

    # -- axis order ----------------------------------------------------------------------------------
    def _analysis_frame(self) -> pd.DataFrame:
        """One column per axis for the association measures: numbers (dates as ns), labels as categories."""
        out = {}
        for name, col in self._columns.items():
            if col.kind in ("category", "boolean"):
                out[name] = pd.Categorical.from_codes(col.label_codes, categories=range(len(col.labels)))
            else:
                out[name] = col.axis_units()
        return pd.DataFrame(out)

    def association(self, metric: str = "spearman", *, max_rows: int | None = 200_000, seed: int = 0):
        """Association between every pair of axes, as a DataFrame (see ``ordering.association``).

        ``metric``: "pearson", "spearman", "kendall", "crossings" (count of crossing line pairs) or
        "mutual_info" (normalised, binned; also for category axes). Above ``max_rows`` rows a seeded
        sample is used; ``result.attrs`` says whether the result is exact.
        """
        from .ordering import association

        return association(self._analysis_frame(), metric, max_rows=max_rows, seed=seed)

    def reorder(self, metric: str = "spearman", *, maximize: bool = True, first: str | None = None, **kw):
        """Choose the axis order from an association metric, apply it and return it.

        ``maximize=True`` puts strongly associated columns side by side (good for reading
        correlations); ``maximize=False`` puts dissimilar columns side by side, which a user study
        found helpful for spotting clusters. ``first`` pins the first axis. For "crossings" the
        order minimises crossings when ``maximize`` is True.
        """
        from .ordering import best_order

        matrix = self.association(metric, **kw)
        if metric == "crossings":
            matrix = -matrix  # fewest crossings = largest negated count
        if first is not None and first not in self._columns:
            raise ValueError(f"unknown axis {first!r} for first=; the axes are: {', '.join(self._columns)}")
        order = [
            str(a) for a in best_order(matrix, maximize=maximize, absolute=metric != "crossings", first=first)
        ]
        self.order = order
        return order

    def untangle(self, metric: str = "spearman", **kw) -> list[str]:
        """Flip axes so that every pair of neighbours is positively associated (fewer crossing lines).

        Applies the flips to the page and returns the flipped axes.
        """
        from .ordering import suggest_flips

        matrix = self.association(metric, **kw)
        flips = [str(a) for a in suggest_flips(matrix, self.order)]
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

    def _notify(self, changed: bool) -> None:
        final = not self.dragging
        released = final and self._was_dragging
        self._was_dragging = self.dragging
        if not (changed or released):
            return
        now = time.monotonic()
        for entry in list(self._callbacks):
            callback, every, last = entry
            if not final and now - last < every:
                continue  # throttled while dragging; the release always calls
            entry[2] = now
            callback(self)

    def to_query(self) -> str:
        """A pandas ``DataFrame.query`` expression that reproduces the selection exactly.

        ``frame.query(w.to_query())`` gives the same rows as ``w.selected`` for a pandas frame.
        """
        try:
            return to_query(self.ranges, self._columns)
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
        return MaskEvaluator(self._columns, len(self._frame)).update(self.saved[name])

    def labels(self, *, others: str | None = None) -> pd.Series:
        """Each row's group among the kept selections, as a categorical Series on the data's index.

        A row in several groups gets the *first* kept group that contains it (in the order they were
        kept); a row in none gets ``others`` (missing by default). Categories are the group names in
        order (plus ``others`` when given).
        """
        names = list(self.saved)
        codes = np.full(len(self._frame), -1, dtype=np.int64)
        for i, name in reversed(list(enumerate(names))):
            codes[self.group_mask(name)] = i
        cats = names + ([others] if others is not None and others not in names else [])
        if others is not None:
            codes[codes < 0] = cats.index(others)
        return pd.Series(
            pd.Categorical.from_codes(codes, categories=cats), index=self._frame.index, name="group"
        )

    # -- sharing -------------------------------------------------------------------------------------
    def save_png(self, path, scale: float = 1) -> export.PngRequest:
        """Ask the page for a PNG of the chart at ``scale`` x its size on screen.

        The page draws the picture and sends it back; in Jupyter the file is written once the cell
        that asked has finished (a kernel reads messages from the page between cells). The returned
        request object tells whether it is done (``.done``, ``.error``). Raises a clear error when no
        view of the widget is showing.
        """
        return export.save_png(self, path, scale)

    def to_html(self, path=None, *, title: str = "axeswidget chart"):
        """One self-contained HTML page of the chart (code, data, current view) that works offline.

        Brushing, reordering and flipping work there without a kernel; the page's own count stands in
        for the kernel's. Returns the HTML text, or the path written when ``path`` is given.
        """
        return export.to_html(self, path, title=title)

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

    def __repr__(self) -> str:
        return f"AxesWidget({len(self._columns)} axes, {self.count} of {len(self._frame)} rows selected)"


#: view options that can be given as keyword arguments and are carried over by ``resume=``
_OPTIONS = (
    "color_by",
    "opacity",
    "view_mode",
    "curves",
    "bundle_by",
    "bundle_strength",
    "histograms",
    "orientation",
    "log_axes",
    "height",
)


def _clip_items(items: list, col: Column, clip: bool = True) -> list:
    """Items of an old selection that still make sense on a new column.

    Ranges that miss the new domain are dropped; with ``clip`` the others are clipped to it.
    """
    out = []
    for item in items:
        if item is None:
            out.append(None)
        elif isinstance(item, str):
            if item in (col.labels or []):
                out.append(item)
        elif col.kind in ("number", "integer", "timedelta"):
            scale = 1e9 if col.kind == "timedelta" else 1.0
            lo, hi = col.lo / scale, col.hi / scale
            a = item[0] if item[0] is None else max(item[0], lo)
            b = item[1] if item[1] is None else min(item[1], hi)
            if (
                (a is None or b is None or a <= b)
                and not (a is not None and a > hi)
                and not (b is not None and b < lo)
            ):
                out.append([a, b] if clip else list(item))
        else:
            out.append(item)
    return out
