"""The widget class: traits and public methods. Heavy lifting lives in encode.py and selection.py.

Trait contract (the only channel between kernel and front end; see DEVELOPERS.md for the full table):

=============  ==============  ===========================================================================
trait          direction       meaning
=============  ==============  ===========================================================================
``table``      kernel → page   ``{"n": rows, "columns": [{name, kind, lo, hi, missing, codes}]}``; ``codes``
                               is a binary buffer of uint16 (2 bytes per cell, 65535 = missing)
``order``      both            axis names, left to right
``ranges``     both            ``{axis: [[lo, hi], ...]}`` in data units, inclusive; OR within an axis,
                               AND across axes
``count``      kernel → page   number of selected rows, computed exactly in the kernel
``mask_bits``  kernel → page   the exact mask, bit-packed (row i = bit i % 8 of byte i // 8)
``edit_seq``   page → kernel   the page's counter, bumped with every ranges edit it sends
``answered_seq`` kernel → page the ``edit_seq`` the current ``mask_bits``/``count`` answer; the page
                               shows its own preview until the answer to its latest edit arrives
``height``     kernel → page   height of the chart in CSS pixels
=============  ==============  ===========================================================================
"""

from __future__ import annotations

from pathlib import Path

import anywidget
import numpy as np
import pandas as pd
import traitlets as t

from .encode import encode_frame, table_trait, to_frame
from .selection import MaskEvaluator, SelectionError, normalise, pack

_STATIC = Path(__file__).parent / "static"


class AxesWidget(anywidget.AnyWidget):
    """Parallel coordinates for a table: one vertical axis per column, one line per row.

    Drag along an axis to select a range; the exact selection is available as :attr:`mask` (a numpy
    bool array) and :attr:`selected` (the rows of the original frame, original index kept).

    Parameters
    ----------
    frame:
        a pandas DataFrame.
    axes:
        column names to show, in order. ``None`` shows every numeric column.
    ranges:
        an initial selection, ``{axis: [[lo, hi], ...]}``.
    height:
        chart height in CSS pixels.
    """

    _esm = _STATIC / "widget.js"

    table = t.Dict().tag(sync=True)
    order = t.List(t.Unicode()).tag(sync=True, echo_update=False)
    ranges = t.Dict().tag(sync=True, echo_update=False)
    count = t.Int(0).tag(sync=True)
    mask_bits = t.Bytes(b"").tag(sync=True)
    edit_seq = t.Int(0).tag(sync=True, echo_update=False)
    answered_seq = t.Int(0).tag(sync=True)
    height = t.Int(380).tag(sync=True)

    def __init__(self, frame, axes=None, *, ranges=None, height: int = 380, **kwargs):
        super().__init__(height=height, **kwargs)
        self._frame = to_frame(frame)
        self._columns = encode_frame(self._frame, axes)
        self._evaluator = MaskEvaluator(self._columns, len(self._frame))
        self.table = table_trait(self._columns, len(self._frame))
        self.order = list(self._columns)
        self._apply({})
        if ranges:
            self.ranges = ranges

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
            raise t.TraitError(
                "order names an axis twice: " + ", ".join(sorted({a for a in order if order.count(a) > 1}))
            )
        return order

    @t.observe("ranges", "edit_seq")
    def _on_ranges(self, change):
        # both may arrive in one message from the page; notifications fire after both are set
        self._apply(self.ranges)

    def _apply(self, ranges):
        with self.hold_sync():
            if ranges != self._evaluator.ranges or not self.mask_bits:
                mask = self._evaluator.update(ranges)
                self.mask_bits = pack(mask)
                self.count = int(mask.sum())
            self.answered_seq = self.edit_seq

    # -- public API --------------------------------------------------------------------------------
    @property
    def mask(self) -> np.ndarray:
        """Boolean array, one entry per row: True where the row is inside every axis's ranges."""
        return self._evaluator.mask

    @property
    def selected(self) -> pd.DataFrame:
        """The selected rows of the original table, original index kept."""
        return self._frame[self.mask]

    @property
    def data(self) -> pd.DataFrame:
        """The table the widget shows."""
        return self._frame

    @property
    def axes(self) -> list[str]:
        """Names of the axes the widget draws (in the table's order; see ``order`` for the drawn order)."""
        return list(self._columns)

    def clear(self, axis: str | None = None) -> None:
        """Remove the ranges on one axis, or on all axes when ``axis`` is None."""
        if axis is None:
            self.ranges = {}
            return
        if axis not in self._columns:
            raise KeyError(f"unknown axis {axis!r}; the axes are: {', '.join(map(repr, self._columns))}")
        self.ranges = {k: v for k, v in self.ranges.items() if k != axis}

    def __repr__(self) -> str:
        return f"AxesWidget({len(self._columns)} axes, {self.count} of {len(self._frame)} rows selected)"
