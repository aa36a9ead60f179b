"""Everything a refused step must leave alone, as one comparable value (shared by the hardening, swap
and fuzz tests)."""

from __future__ import annotations

import json

import axeswidget as aw


def widget_state(w: aw.AxesWidget) -> tuple:
    """View, selection, answer to the page and data of an in-memory widget."""
    data = w.data
    return (
        json.dumps(w.ranges, sort_keys=True, default=str),
        list(w.order),
        list(w.flipped),
        json.dumps(w.saved, sort_keys=True, default=str),
        list(w.log_axes),
        w.color_by,
        w.bundle_by,
        w.pinned,
        w.height,
        w.count,
        w.mask.tobytes(),
        w.mask_bits,
        json.dumps({k: v for k, v in w.table.items() if k != "columns"}, default=str),
        list(w.axes),
        len(data),
        # a table with repeated column names cannot be written as JSON; its shape stands in
        data.to_json(default_handler=str, date_format="iso")
        if len(data.columns) == len(set(data.columns))
        else data.shape,
    )
