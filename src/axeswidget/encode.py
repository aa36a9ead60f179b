"""Turn a user's table into columns the widget can draw and select on.

Two things come out of every column:

* the *exact* values the kernel keeps for the mask (float64, NaN where missing), and
* the *wire* form the front end draws from: one ``uint16`` code per cell, quantised linearly over the
  column's finite domain ``[lo, hi]`` (codes ``0..CODE_MAX``), with ``CODE_MISSING`` reserved for a
  missing value. That is 2 bytes per cell, sent as a binary buffer.

The front end only previews from the codes; the authoritative mask is always computed here from the
exact values (see ``selection.py``).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

CODE_MAX = 65534
CODE_MISSING = 65535
#: integer columns with at most this many distinct values are drawn as discrete axes
INTEGER_DISCRETE_LIMIT = 40


class ColumnError(ValueError):
    """A column cannot be used as an axis; the message names the column and the problem."""


@dataclass
class Column:
    """One axis: its name, kind, exact values and domain."""

    name: str
    kind: str  # "number" | "integer"
    values: np.ndarray  # float64, NaN where missing; the exact values behind the mask
    lo: float
    hi: float
    missing: int
    source: object = None  # the column label in the user's table
    values_list: list | None = None  # distinct values of a discrete axis (ticks sit on them)
    codes: np.ndarray = field(default=None, repr=False)  # uint16 wire codes

    def spec(self) -> dict:
        """What the front end needs to know about this axis (JSON plus one binary buffer)."""
        return {
            "name": self.name,
            "kind": self.kind,
            "lo": self.lo,
            "hi": self.hi,
            "missing": self.missing,
            **({"values": self.values_list} if self.values_list is not None else {}),
            "codes": memoryview(self.codes).cast("B"),
        }


def to_frame(data) -> pd.DataFrame:
    """Accept the supported table types and return a pandas DataFrame (no copy where possible)."""
    if isinstance(data, pd.DataFrame):
        return data
    raise TypeError(f"axeswidget: expected a pandas DataFrame, got {type(data).__name__}")


def display_name(label) -> str:
    """The text shown on an axis header for a column label."""
    return label if isinstance(label, str) else str(label)


def numeric_values(series: pd.Series) -> np.ndarray | None:
    """float64 values with NaN for missing, or None when the column is not numeric."""
    dtype = series.dtype
    if pd.api.types.is_bool_dtype(dtype):
        return None
    if not pd.api.types.is_numeric_dtype(dtype):
        return None
    return series.to_numpy(dtype="float64", na_value=np.nan)


def quantise(values: np.ndarray, lo: float, hi: float) -> np.ndarray:
    """uint16 codes: linear over [lo, hi] onto 0..CODE_MAX, CODE_MISSING for NaN; ±inf pin to the ends.

    Halves are scaled separately so that a domain such as [-1e308, 1e308] does not overflow.
    """
    codes = np.full(values.shape, CODE_MISSING, dtype=np.uint16)
    present = ~np.isnan(values)
    half_span = hi * 0.5 - lo * 0.5
    if half_span > 0:
        scaled = (np.clip(values[present], lo, hi) * 0.5 - lo * 0.5) * (CODE_MAX / half_span)
        codes[present] = np.rint(scaled).astype(np.uint16)
    else:
        codes[present] = 0
    return codes


def encode_column(label, series: pd.Series, name: str | None = None) -> Column:
    """Describe and encode one numeric column; raise ColumnError if it cannot be an axis."""
    name = display_name(label) if name is None else name
    values = numeric_values(series)
    if values is None:
        raise ColumnError(
            f"column {name!r} has dtype {series.dtype}, which cannot be drawn as a numeric axis"
        )
    finite = values[np.isfinite(values)]
    missing = int(np.isnan(values).sum())
    if finite.size:
        lo, hi = float(finite.min()), float(finite.max())
    else:
        lo, hi = 0.0, 1.0
    kind, distinct = "number", None
    if pd.api.types.is_integer_dtype(series.dtype) and finite.size:
        uniq = np.unique(finite)
        if uniq.size <= INTEGER_DISCRETE_LIMIT:
            kind, distinct = "integer", [int(v) for v in uniq]
    col = Column(name=name, kind=kind, values=values, lo=lo, hi=hi, missing=missing, source=label)
    col.values_list = distinct
    col.codes = quantise(values, lo, hi)
    return col


def encode_frame(frame: pd.DataFrame, axes=None) -> dict[str, Column]:
    """Encode the chosen columns of a frame, in order; a dict from display name to Column.

    ``axes=None`` takes every numeric column (others are skipped with one warning); naming a column
    that does not exist or cannot be drawn raises a clear error.
    """
    labels = list(frame.columns)
    names = [display_name(c) for c in labels]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if axes is None:
        chosen, skipped = [], []
        for label, name in zip(labels, names, strict=True):
            if numeric_values(frame[label]) is None:
                skipped.append(name)
            elif name in dupes:
                raise ColumnError(f"column name {name!r} appears more than once; rename the duplicates")
            else:
                chosen.append((label, name))
        if not chosen:
            raise ColumnError(
                "the table has no numeric column to draw"
                + (f" (columns: {', '.join(map(repr, names))})" if names else " (it has no columns)")
            )
        if skipped:
            warnings.warn(
                f"axeswidget: skipped columns that are not numeric: {', '.join(map(repr, skipped))}",
                stacklevel=3,
            )
    else:
        if isinstance(axes, str):
            axes = [axes]
        chosen = []
        for wanted in axes:
            hits = [(lab, n) for lab, n in zip(labels, names, strict=True) if lab == wanted or n == wanted]
            if not hits:
                raise ColumnError(f"unknown column {wanted!r}; the table has: {', '.join(map(repr, names))}")
            if len({n for _, n in hits}) > 1 or len(hits) > 1:
                raise ColumnError(f"column name {display_name(wanted)!r} appears more than once")
            chosen.append(hits[0])
        seen = [n for _, n in chosen]
        if len(set(seen)) != len(seen):
            raise ColumnError(
                "axes= names a column twice: " + ", ".join(sorted({n for n in seen if seen.count(n) > 1}))
            )
    return {name: encode_column(label, frame[label], name) for label, name in chosen}


def table_trait(columns: dict[str, Column], n: int) -> dict:
    """The value of the widget's ``table`` trait: row count plus one spec (with its buffer) per axis."""
    return {"n": int(n), "columns": [c.spec() for c in columns.values()]}
