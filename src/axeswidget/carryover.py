"""Carry a view (order, ranges, flips, kept selections, options) over to new columns.

One rule for every kind of axis, used both by a data swap (``w.data = ...``) and by ``resume=``:

* an axis that is gone takes its range, flip, log scale and option uses with it;
* a range on an axis whose kind changed (numbers vs dates vs durations vs labels), or on a date axis
  that gained or lost its time zone, is dropped (its ends would mean something else);
* a range that selects nothing and lies outside the new data is dropped; an end that reaches beyond
  the new data where the data shrank (the old data went further) is clipped to the new data's edge,
  only when that picks exactly the same rows;
* a hidden axis that is gone leaves ``hidden`` (every axis hidden: all are shown again);
* a label that no longer exists is dropped; a kept selection that loses any part is dropped whole;
* a log scale on an axis that is no longer positive numbers, ``color_by``/``bundle_by`` on an axis
  that no longer fits, and a pinned row beyond the new table are reset.

Every drop or change is returned as a short note; the caller names them all in one warning.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .encode import Column
from .evaluate import axis_mask
from .selection import SelectionError, _end_key, normalise_items

_LABELS = ("category", "boolean")


def _family(kind: str) -> str:
    return "number" if kind in ("number", "integer") else kind


def _rows_in(col: Column, items: list):
    """The rows a column's items pick: a mask for in-memory columns."""
    return axis_mask(col, items)


def _engine_ends(col: Column, n_rows: int):
    """(lo, hi) of an engine column from its stored domain, or None when it has no finite value."""
    neg, pos = col.infinite()
    if col.n_missing + neg + pos >= n_rows:
        return None
    if col.kind == "integer":
        return int(col.lo), int(col.hi)
    if col.kind == "number":
        return float(col.lo), float(col.hi)
    lo, hi = int(col.lo), int(col.hi)
    if col.kind == "timedelta":
        return lo / 1e9, hi / 1e9
    return _timestamp_text(lo, col), _timestamp_text(hi, col)


def _timestamp_text(ns: int, col: Column) -> str:
    ts = pd.Timestamp(ns, unit="ns")
    return (ts.tz_localize("UTC").tz_convert(col.tz) if col.tz else ts).isoformat()


def _domain_ends(col: Column, n_rows: int = 0):
    """(lo, hi) of the finite present values as canonical range ends, or None when there are none."""
    if col.values is None:  # the rows live in an engine: its summary holds the domain
        return _engine_ends(col, n_rows)
    if col.kind in ("number", "integer"):
        if col.exact is not None:
            present = col.exact[~col.missing]
            return (int(present.min()), int(present.max())) if present.size else None
        finite = col.values[np.isfinite(col.values)]
        return (float(finite.min()), float(finite.max())) if finite.size else None
    present = col.values[~col.missing]
    if not present.size:
        return None
    lo, hi = int(present.min()), int(present.max())
    if col.kind == "timedelta":
        return lo / 1e9, hi / 1e9
    return _timestamp_text(lo, col), _timestamp_text(hi, col)


def carry_items(axis: str, items: list, old: Column | None, new: Column | None, rows_in=None, n_rows=0):
    """Items of one axis that still fit the new column: (kept items, drops, changes).

    ``rows_in(col, items)`` gives the rows a range picks -- a mask in memory, or an exact count from an
    engine (a clipped range lies inside the original one, so equal counts mean the same rows).
    """
    rows_in = rows_in or _rows_in
    if new is None:
        return [], [f"range on {axis!r} (the axis is gone)"], []
    if old is not None and _family(old.kind) != _family(new.kind):
        return [], [f"range on {axis!r} (the axis changed from {old.kind} to {new.kind})"], []
    if old is not None and new.kind == "datetime" and (old.tz is None) != (new.tz is None):
        return [], [f"range on {axis!r} (the time zone changed from {old.tz} to {new.tz})"], []
    drops, changes, kept = [], [], []
    if old is not None and old.kind != new.kind:
        changes.append(f"range on {axis!r} kept on an axis that is now {new.kind}")
    domain = None if new.kind in _LABELS else _domain_ends(new, n_rows)
    old_domain = None if old is None or new.kind in _LABELS else _domain_ends(old, n_rows)
    for item in items:
        if item is None:
            kept.append(None)
            continue
        if new.kind in _LABELS:
            if item in new.labels:
                kept.append(item)
            else:
                drops.append(f"label {item!r} on {axis!r} (gone from the new data)")
            continue
        try:
            (span,) = normalise_items([item], new)
        except (SelectionError, ValueError) as err:
            drops.append(f"range {item!r} on {axis!r} ({err})")
            continue
        rows = rows_in(new, [span])
        lo, hi = span
        outside = domain is None or (
            (hi is not None and _end_key(hi, new) < _end_key(domain[0], new))
            or (lo is not None and _end_key(lo, new) > _end_key(domain[1], new))
        )
        if not np.any(rows) and outside:
            drops.append(f"range {list(item)!r} on {axis!r} (misses the new data)")
            continue
        clipped = list(span)
        if domain is not None:  # an end is pulled in where the data under it shrank
            key = lambda v: _end_key(v, new)  # noqa: E731
            if (
                lo is not None
                and key(lo) < key(domain[0])
                and (old_domain is None or key(old_domain[0]) < key(domain[0]))
            ):
                clipped[0] = domain[0]
            if (
                hi is not None
                and key(hi) > key(domain[1])
                and (old_domain is None or key(old_domain[1]) > key(domain[1]))
            ):
                clipped[1] = domain[1]
        if clipped != span:
            try:
                (clipped,) = normalise_items([clipped], new)
                same = np.array_equal(rows_in(new, [clipped]), rows)
            except (SelectionError, ValueError):
                same = False
            if same:
                changes.append(f"range on {axis!r} clipped to the new data: {clipped!r}")
                span = clipped
        kept.append(span)
    return (normalise_items(kept, new) if kept else []), drops, changes


def carry_over(view: dict, old_columns: dict, new_columns: dict, n_rows: int, rows_in=None, total=None):
    """The view on new columns: (new view, notes naming every drop or change).

    ``n_rows``: rows the page holds (for the pinned row); ``total``: rows of the table (default
    ``n_rows``); ``rows_in``: see :func:`carry_items` (engine sources count instead of masking).
    """
    total = n_rows if total is None else total
    notes: list[str] = []
    out = dict(view)
    gone = [a for a in view["order"] if a not in new_columns]
    if gone:  # their ranges, flips and log scales go with them
        notes.append("axes gone (with their ranges): " + ", ".join(map(repr, gone)))
    order = [a for a in view["order"] if a in new_columns]
    out["order"] = order + [a for a in new_columns if a not in order]
    out["flipped"] = [a for a in view["flipped"] if a in new_columns]
    hidden = view.get("hidden", [])
    out["hidden"] = [a for a in hidden if a in new_columns]
    if len(out["hidden"]) < len(hidden):
        notes.append("hidden axes gone: " + ", ".join(repr(a) for a in hidden if a not in new_columns))
    if out["hidden"] and len(out["hidden"]) == len(new_columns):
        notes.append("every axis left was hidden: all are shown again")
        out["hidden"] = []

    ranges = {}
    for axis, items in view["ranges"].items():
        kept, drops, changes = carry_items(
            axis, items, old_columns.get(axis), new_columns.get(axis), rows_in, total
        )
        notes += (drops if axis not in gone else []) + changes
        if kept:
            ranges[axis] = kept
    out["ranges"] = ranges

    saved = {}
    for name, sel in view["saved"].items():
        kept_sel, why = {}, []
        for axis, items in sel.items():
            kept, drops, changes = carry_items(
                axis, items, old_columns.get(axis), new_columns.get(axis), rows_in, total
            )
            why += drops
            notes += [f"saved selection {name!r}: {c}" for c in changes]
            if kept:
                kept_sel[axis] = kept
        if why:
            notes.append(f"saved selection {name!r} ({'; '.join(why)})")
        else:
            saved[name] = kept_sel
    out["saved"] = saved

    log = []
    for axis in view["log_axes"]:
        col = new_columns.get(axis)
        if col is not None and col.kind in ("number", "integer") and col.lo > 0:
            log.append(axis)
        elif axis not in gone:
            notes.append(f"log scale on {axis!r} (no longer an axis of positive numbers)")
    out["log_axes"] = log
    for option in ("color_by", "bundle_by"):
        axis = view.get(option, "")
        col = new_columns.get(axis)
        fits = col is not None and (option == "color_by" or col.kind in _LABELS)
        if axis and not fits:
            notes.append(
                f"{option} {axis!r} (no such {'category ' if option == 'bundle_by' else ''}axis now)"
            )
            out[option] = ""
    if view.get("pinned", -1) >= n_rows:
        notes.append(f"pinned row {view['pinned']} (the new table has {n_rows} rows)")
        out["pinned"] = -1
    return out, notes
