"""The widget's trait validators: each takes the widget and the proposed value, returns the clean value
or raises a ``TraitError`` that names the axis or option and the problem. ``widget.py`` wires them."""

from __future__ import annotations

import logging

import traitlets as t

from .pageround import round_page_ranges
from .selection import SelectionError, normalise
from .sources import EngineError

_log = logging.getLogger("axeswidget")

HEIGHT_MIN, HEIGHT_MAX = 120, 4000
#: ``color_by`` value that colours rows by the kept selections (``saved``; first group wins, as ``labels()``)
SAVED_GROUPS = "@saved"


def check(w, name: str, value):
    """The clean value of trait ``name`` (one of ``CHECKED``) or a TraitError."""
    if name == "height":
        return height(value)
    if name in ("opacity", "bundle_strength"):
        return unit(name, value)
    if name in ("sample_above", "sample_size"):
        return tier(name, value)
    if name in ("color_by", "bundle_by"):
        return axis_option(w, value, name)
    if name == "flipped":
        return axis_list(w, value, name)
    return _BY_NAME[name](w, value)


def ranges(w, value) -> dict:
    """The selection in normal form, evaluated ahead by the source (a failure changes nothing)."""
    hidden = [a for a in value if a in w.hidden]
    if hidden:
        raise t.TraitError(
            f"axis {hidden[0]!r} is hidden: show it (remove it from hidden) before selecting on it"
        )
    try:
        clean = normalise(value, w._columns)
        if w._page_edit:  # ends dragged on the page: shortest decimals that pick the same rows
            try:
                clean = round_page_ranges(clean, w._applied or {}, w._columns)
            except (ArithmeticError, TypeError, ValueError) as err:  # never refuse an edit over looks
                _log.debug("axeswidget: range ends kept as sent (%s)", err)
        with w._state_lock:
            w._source.prepare(clean)  # evaluated before the trait changes: a failure changes nothing
    except (SelectionError, EngineError) as err:
        raise t.TraitError(str(err)) from None
    return clean


def order(w, value) -> list[str]:
    """Every axis once."""
    order = list(value)
    unknown = [a for a in order if a not in w._columns]
    if unknown:
        known = ", ".join(map(repr, w._columns))
        raise t.TraitError(f"unknown axis {unknown[0]!r} in order; the axes are: {known}")
    if len(set(order)) != len(order):
        twice = sorted({a for a in order if order.count(a) > 1})
        raise t.TraitError("order names an axis twice: " + ", ".join(twice))
    missing = [a for a in w._columns if a not in order]
    if missing:
        raise t.TraitError("order must name every axis once; it lacks: " + ", ".join(map(repr, missing)))
    return order


def height(value) -> int:
    value = int(value)
    if not HEIGHT_MIN <= value <= HEIGHT_MAX:
        raise t.TraitError(f"height must be {HEIGHT_MIN}..{HEIGHT_MAX} pixels, got {value}")
    return value


def axis_option(w, name: str, option: str) -> str:
    """An axis name (or "" for none); bundle_by needs a category axis."""
    if not name or (option == "color_by" and name == SAVED_GROUPS and name not in w._columns):
        return name
    col = w._columns.get(name)
    if col is None:
        known = ", ".join(w._columns)
        raise t.TraitError(f"unknown axis {name!r} for {option}; the axes are: {known}")
    if option == "bundle_by" and col.kind not in ("category", "boolean"):
        raise t.TraitError(f"bundle_by needs a category axis; {name!r} is a {col.kind} axis")
    return name


def unit(name: str, value) -> float:
    value = float(value)
    if not 0.0 <= value <= 1.0:
        raise t.TraitError(f"{name} must be between 0 and 1, got {value}")
    return value


def pinned(w, value) -> int:
    row = int(value)
    rows = w.table.get("n", 0)
    if not -1 <= row < rows:
        raise t.TraitError(f"pinned must be a row position in 0..{rows - 1} or -1, got {row}")
    return row


def axis_list(w, names, option: str, check=None) -> list[str]:
    """Axis names without repeats; unknown names (or ones ``check`` refuses) raise a TraitError."""
    out = []
    for axis in names:
        col = w._columns.get(axis)
        if col is None:
            raise t.TraitError(f"unknown axis {axis!r} in {option}; the axes are: {', '.join(w._columns)}")
        if check:
            check(axis, col)
        if axis not in out:
            out.append(axis)
    return out


def hidden(w, value) -> list[str]:
    """Axes hidden from the page: never one with a range (it would filter rows invisibly), never all."""
    names = axis_list(w, value, "hidden")
    ranged = [a for a in names if a in w.ranges]
    if ranged:
        raise t.TraitError(
            f"cannot hide axis {ranged[0]!r}: it has a range, which would filter rows invisibly; "
            "clear its range first"
        )
    if names and len(names) == len(w._columns):
        raise t.TraitError("cannot hide every axis; at least one axis stays shown")
    return names


def log_axes(w, value) -> list[str]:
    """Number axes with positive data only."""

    def positive_numbers(axis, col):
        if col.kind not in ("number", "integer"):
            raise t.TraitError(f"axis {axis!r} is a {col.kind} axis; a log scale needs numbers")
        if not col.lo > 0:
            raise t.TraitError(
                f"axis {axis!r} has values <= 0 (smallest {col.lo:g}); a log scale needs positive data"
            )

    return axis_list(w, value, "log_axes", positive_numbers)


def tier(name: str, value) -> int:
    """``sample_above`` (0 or more) and ``sample_size`` (1 or more) rows."""
    value = int(value)
    if value < (1 if name == "sample_size" else 0):
        raise t.TraitError(f"{name} must be a positive number of rows, got {value}")
    return value


def saved(w, value) -> dict:
    """Named selections, each in normal form."""
    out = {}
    for name, kept in value.items():
        if not isinstance(name, str) or not name:
            raise t.TraitError(f"a saved selection needs a non-empty text name, got {name!r}")
        try:
            out[name] = normalise(kept, w._columns)
        except SelectionError as err:
            raise t.TraitError(f"saved selection {name!r}: {err}") from None
    return out


_BY_NAME = {
    "ranges": ranges,
    "order": order,
    "pinned": pinned,
    "hidden": hidden,
    "log_axes": log_axes,
    "saved": saved,
}
#: the traits validated here
CHECKED = (
    *_BY_NAME,
    "height",
    "opacity",
    "bundle_strength",
    "sample_above",
    "sample_size",
    "color_by",
    "bundle_by",
    "flipped",
)
