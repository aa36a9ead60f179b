"""Turn a user's table into axes the widget can draw and select on.

Two things come out of every column:

* the *exact* values the kernel keeps for the mask (float64 for numbers, plus the integers themselves
  in their own type for integer columns, so that values above 2**53 compare exactly; int64 nanoseconds
  for dates and durations, which therefore must lie within 1677-09-21 .. 2262-04-11 / ±292 years;
  integer category codes for labels), and
* the *wire* form the front end draws from: one ``uint16`` code per cell, sent as a binary buffer.
  Numbers, dates and durations are quantised linearly (or logarithmically, on request) over the
  column's finite domain onto ``0..CODE_MAX``; category axes send the index of the row's band;
  ``CODE_MISSING`` marks a missing value. That is 2 bytes per cell.

Column kinds: ``number`` (continuous), ``integer`` (few distinct integers, also whole-number floats
such as 0.0/1.0/2.0 class codes), ``category`` (labels;
pandas Categorical order kept, otherwise most frequent first), ``boolean``, ``datetime`` (tz-aware
included) and ``timedelta``. Missing values (NaN, None, pd.NA, NaT) sit in a lane of their own.
``±inf`` are drawn pinned to the ends of their axis (the axis shows how many) and are selected by a
range whose end is open (``None``) on that side.

Roles (which columns are drawn when the axes are not named) are decided in ``roles.py``; reading the
input types in ``inputs.py``; the ``table`` trait built from the columns in ``tabletrait.py``.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .inputs import ColumnError, display_name, is_utf8, name_problem
from .roles import (
    CATEGORY_LIMIT,
    INTEGER_DISCRETE_LIMIT,
    mixed_or_nested,
    refuse_free_text,
    refuse_identifier,
    whole_floats,
)

# the wire codes and the category band limit (rarer labels share one band) come from the contract
from .wire import CATEGORY_BAND_LIMIT, CODE_MAX, CODE_MISSING


@dataclass
class Column:
    """One axis: name, kind, exact values, and what the front end needs to draw it."""

    name: str
    kind: str
    source: object  # the column label in the user's table
    missing: np.ndarray  # bool per row
    values: np.ndarray | None = None  # number/integer: float64; datetime/timedelta: int64 ns
    exact: np.ndarray | None = None  # integer columns: the integers (int64 or uint64, 0 where missing)
    lo: float = 0.0  # finite domain in axis units (float64; ns for datetime/timedelta)
    hi: float = 1.0
    log: bool = False
    tz: str | None = None
    discrete: list | None = None  # distinct values of an integer axis (ticks sit on them)
    labels: list[str] | None = None  # category labels, axis order (first = bottom)
    raw_labels: list | None = None  # the original category values behind the labels
    label_codes: np.ndarray | None = None  # int32 index into labels per row, -1 missing
    counts: list[int] | None = None
    codes: np.ndarray = field(default=None, repr=False)
    inf_counts: tuple[int, int] | None = field(default=None, repr=False, compare=False)  # cache

    @property
    def n_missing(self) -> int:
        return int(np.count_nonzero(self.missing))

    def infinite(self) -> tuple[int, int]:
        """(-inf count, +inf count) of a number axis (counted once; the values do not change)."""
        if self.kind not in ("number", "integer"):
            return 0, 0
        if self.inf_counts is None:
            v = self.values
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN
                lo, hi = np.nanmin(v, initial=0.0), np.nanmax(v, initial=0.0)
            if np.isfinite(lo) and np.isfinite(hi):  # no inf
                self.inf_counts = (0, 0)
            else:
                self.inf_counts = (
                    int(np.count_nonzero(np.isneginf(v))),
                    int(np.count_nonzero(np.isposinf(v))),
                )
        return self.inf_counts

    def encode(self) -> None:
        """(Re)compute the wire codes from the exact values."""
        if self.kind in ("category", "boolean"):
            codes = np.full(len(self.missing), CODE_MISSING, dtype=np.uint16)
            shown = min(len(self.labels), CATEGORY_BAND_LIMIT)
            lc = self.label_codes
            present = lc >= 0
            codes[present] = np.minimum(lc[present], shown).astype(np.uint16)
            self.codes = codes
            return
        self.codes = quantise(self.axis_units(), self.lo, self.hi, self.log, self.missing)

    def axis_units(self) -> np.ndarray:
        """Values as float64 in axis units (NaN where missing)."""
        if self.kind in ("datetime", "timedelta"):
            out = self.values.astype(np.float64)
            out[self.missing] = np.nan
            return out
        return self.values

    def spec(self) -> dict:
        """What the front end needs to know about this axis (JSON plus one binary buffer)."""
        out = {"name": self.name, "kind": self.kind, "missing": self.n_missing}
        if self.kind in ("category", "boolean"):
            shown = min(len(self.labels), CATEGORY_BAND_LIMIT)
            out["labels"] = self.labels[:shown]
            out["counts"] = self.counts[:shown]
            if len(self.labels) > shown:
                out["rest"] = {"labels": len(self.labels) - shown, "rows": int(sum(self.counts[shown:]))}
        else:
            out.update(lo=self.lo, hi=self.hi, log=self.log)
            if self.kind == "datetime":
                out["tz"] = self.tz
            neg, pos = self.infinite()
            if neg or pos:
                out["inf"] = [neg, pos]
            if self.discrete is not None:
                out["values"] = self.discrete
        out["codes"] = memoryview(self.codes).cast("B")
        return out


# -- encoding ---------------------------------------------------------------------------------------
def quantise(values: np.ndarray, lo: float, hi: float, log: bool = False, missing=None) -> np.ndarray:
    """uint16 codes over [lo, hi] onto 0..CODE_MAX, CODE_MISSING for NaN/missing; ±inf pin to the ends.

    Halves are scaled separately so that a domain such as [-1e308, 1e308] does not overflow.
    """
    codes = np.empty(values.shape, dtype=np.uint16)
    if log:
        lo_axis, hi_axis = math.log(lo), math.log(hi)
    else:
        lo_axis, hi_axis = lo, hi
    half_span = hi_axis * 0.5 - lo_axis * 0.5
    halves = half_span > 0 and math.isfinite(CODE_MAX / half_span)
    # a span of subnormal numbers: halving would lose them, and the span cannot overflow
    subnormal = half_span > 0 and not halves
    scale, offset = (CODE_MAX / half_span, lo_axis * 0.5) if halves else (0.0, 0.0)
    # block by block (the temporaries stay in the CPU cache); per value the same float64 steps as
    # rint((clip(v, lo, hi) * 0.5 - lo * 0.5) * (CODE_MAX / half_span)), or for a subnormal span
    # rint((v - lo) / (hi - lo) * CODE_MAX)
    block = 1 << 16
    for start in range(0, values.shape[0], block):
        stop = min(values.shape[0], start + block)
        x = values[start:stop]
        absent = np.isnan(x)
        if missing is not None:
            absent |= missing[start:stop]
        v = np.clip(x, lo, hi)
        if log:
            with np.errstate(invalid="ignore"):  # NaN rows stay NaN and are marked missing below
                np.log(v, out=v)
        if halves:
            v *= 0.5
            v -= offset
            v *= scale
            np.rint(v, out=v)
        elif subnormal:
            v -= lo_axis
            v /= hi_axis - lo_axis
            v *= CODE_MAX
            np.rint(v, out=v)
        else:
            v[:] = 0.0
        v[absent] = 0.0
        out = codes[start:stop]
        out[:] = v.astype(np.uint16)
        out[absent] = CODE_MISSING
    return codes


def _domain(values: np.ndarray) -> tuple[float, float]:
    if values.size:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN: handled below
            lo, hi = np.nanmin(values), np.nanmax(values)
        if np.isfinite(lo) and np.isfinite(hi):  # no inf: the extremes of the present values
            return float(lo), float(hi)
    finite = values[np.isfinite(values)]
    if not finite.size:
        return 0.0, 1.0
    return float(finite.min()), float(finite.max())


def _category_column(name, label, series: pd.Series, named: bool = True) -> Column:
    missing = series.isna().to_numpy(dtype=bool)
    if isinstance(series.dtype, pd.CategoricalDtype):
        cats = list(series.cat.categories)
        codes = series.cat.codes.to_numpy().astype(np.int32)
        counts = np.bincount(codes[codes >= 0], minlength=len(cats))
        if len(cats) > CATEGORY_BAND_LIMIT:
            # too many for bands: the most frequent keep a band each (in the categories' order),
            # the others follow and share the last band
            top = set(np.argsort(-counts, kind="stable")[:CATEGORY_BAND_LIMIT].tolist())
            order = [i for i in range(len(cats)) if i in top] + [i for i in range(len(cats)) if i not in top]
            rank = np.empty(len(cats), dtype=np.int32)
            rank[order] = np.arange(len(cats), dtype=np.int32)
            codes = np.where(codes >= 0, rank[np.maximum(codes, 0)], -1).astype(np.int32)
            cats = [cats[i] for i in order]
            counts = counts[order]
        labels = [str(c) for c in cats]
        raw = cats
        kind = "category"
    else:
        values = series.to_numpy(dtype=object)
        present = ~missing
        uniq, inverse, counts = np.unique(
            values[present].astype(str), return_inverse=True, return_counts=True
        )
        if not named:
            refuse_free_text(name, values[present], uniq.size)
        if uniq.size > CATEGORY_LIMIT:
            raise ColumnError(
                f"column {name!r} has {uniq.size} distinct labels; at most {CATEGORY_LIMIT} are drawn"
            )
        # a boolean axis only for bool values: text that reads "True"/"False" stays text (labels), and an
        # empty or all-missing text column is a category axis without labels
        kinds = set(map(type, values[present]))
        is_bool = pd.api.types.is_bool_dtype(series.dtype) or (bool(kinds) and kinds <= {bool, np.bool_})
        if is_bool:
            order = [i for lab in ("False", "True") for i in np.flatnonzero(uniq == lab)]
        else:  # most frequent first; ties by label
            order = sorted(range(uniq.size), key=lambda i: (-counts[i], uniq[i]))
        rank = np.empty(uniq.size, dtype=np.int32)
        rank[order] = np.arange(len(order), dtype=np.int32)
        codes = np.full(len(series), -1, dtype=np.int32)
        codes[present] = rank[inverse]
        labels = [str(uniq[i]) for i in order]
        counts = counts[order]
        kind = "boolean" if is_bool else "category"
        raw = [lab == "True" for lab in labels] if is_bool else labels
    unsendable = [lab for lab in labels if not is_utf8(lab)]
    if unsendable:
        raise ColumnError(
            f"column {name!r}: the label {unsendable[0]!r} holds a lone surrogate (not sendable)"
        )
    if len(set(labels)) != len(labels):
        dupes = sorted({lab for lab in labels if labels.count(lab) > 1})
        raise ColumnError(f"column {name!r}: different labels read the same as text: {dupes[:5]}")
    col = Column(name=name, kind=kind, source=label, missing=missing, labels=labels, raw_labels=list(raw))
    col.label_codes = codes
    col.counts = [int(c) for c in counts]
    return col


_NS_SPAN = "1677-09-21 .. 2262-04-11"


def _as_ns(raw: np.ndarray, missing: np.ndarray, name: str, what: str) -> np.ndarray:
    """int64 nanoseconds from datetime64/timedelta64 values in any unit; values that do not fit are refused.

    Converting a non-nanosecond column blindly would wrap such values around silently.
    """
    unit, _ = np.datetime_data(raw.dtype)
    ints = raw.view(np.int64)
    factor = 1 if unit == "ns" else int(np.timedelta64(1, unit).astype("timedelta64[ns]").view(np.int64))
    if factor == 1:
        return ints.copy()
    present = ints[~missing]
    limit = (2**63 - 1) // factor
    outside = present[(present > limit) | (present < -limit)]
    if outside.size:
        example = raw[~missing][(present > limit) | (present < -limit)][0]
        span = _NS_SPAN if what == "dates" else "±292 years"
        raise ColumnError(
            f"column {name!r} has {what} outside {span} (e.g. {example}), which the widget cannot hold "
            "exactly in nanoseconds; clip or convert the column"
        )
    return np.where(missing, np.iinfo(np.int64).min, ints * factor)


def encode_column(label, series: pd.Series, name: str | None = None, named: bool = True) -> Column:
    """Describe and encode one column; raise ColumnError naming it if it cannot be an axis.

    ``named=False`` (the axes were not named) also refuses identifier-like and free-text columns
    (:class:`NotGuessed`).
    """
    name = display_name(label) if name is None else name
    problem = name_problem(name)
    if problem:
        raise ColumnError(f"column {name!r}: {problem}; rename the column")
    dtype = series.dtype
    if isinstance(dtype, pd.ArrowDtype):
        import pyarrow as pa

        at = dtype.pyarrow_dtype
        if pa.types.is_timestamp(at) or pa.types.is_date(at):
            # keep the column's own unit here: a cast to ns would wrap dates beyond 2262 around
            unit = (
                getattr(at, "unit", "s")
                if pa.types.is_timestamp(at)
                else ("s" if at == pa.date32() else "ms")
            )
            series = series.astype(f"datetime64[{unit}{', ' + at.tz if getattr(at, 'tz', None) else ''}]")
        elif pa.types.is_duration(at):
            series = series.astype(f"timedelta64[{at.unit}]")
        elif pa.types.is_dictionary(at):
            series = series.astype(str).where(series.notna()).astype("category")
        elif pa.types.is_boolean(at):
            series = series.astype("boolean")
        elif pa.types.is_string(at) or pa.types.is_large_string(at):
            series = series.astype(object).where(series.notna(), None)
        dtype = series.dtype
    if isinstance(dtype, pd.CategoricalDtype) or pd.api.types.is_bool_dtype(dtype):
        col = _category_column(name, label, series)
    elif pd.api.types.is_datetime64_any_dtype(dtype):
        tz = str(dtype.tz) if getattr(dtype, "tz", None) is not None else None
        naive = series.dt.tz_convert(None) if tz else series  # UTC wall time, in the column's own unit
        missing = series.isna().to_numpy(dtype=bool)
        values = _as_ns(naive.to_numpy(), missing, name, "dates")
        col = Column(name=name, kind="datetime", source=label, missing=missing, values=values, tz=tz)
        col.lo, col.hi = _domain(np.where(missing, np.nan, values.astype(np.float64)))
    elif pd.api.types.is_timedelta64_dtype(dtype):
        missing = series.isna().to_numpy(dtype=bool)
        values = _as_ns(series.to_numpy(), missing, name, "durations")
        col = Column(name=name, kind="timedelta", source=label, missing=missing, values=values)
        col.lo, col.hi = _domain(np.where(missing, np.nan, values.astype(np.float64)))
    elif pd.api.types.is_complex_dtype(dtype):
        raise ColumnError(f"column {name!r} holds complex numbers, which cannot be drawn on one axis")
    elif pd.api.types.is_numeric_dtype(dtype):
        values = series.to_numpy(dtype="float64", na_value=np.nan)
        missing = np.isnan(values)
        col = Column(name=name, kind="number", source=label, missing=missing, values=values)
        col.lo, col.hi = _domain(values)
        if pd.api.types.is_integer_dtype(dtype):
            # the integers themselves, so that ranges compare exactly above 2**53
            kind = np.dtype(getattr(dtype, "numpy_dtype", dtype)).kind
            exact = series.to_numpy(dtype=np.uint64 if kind == "u" else np.int64, na_value=0)
            col.exact = exact
            if not missing.all():
                uniq = np.unique(exact[~missing])
                if uniq.size <= INTEGER_DISCRETE_LIMIT:
                    col.kind, col.discrete = "integer", [int(v) for v in uniq]
                elif not named:
                    refuse_identifier(name, exact[~missing])
        elif pd.api.types.is_float_dtype(dtype):
            whole = whole_floats(values, missing)
            if whole is not None:  # 0.0/1.0/2.0 codes (NaN allowed): a discrete axis, ticks on the values
                col.kind, col.discrete = "integer", whole
    elif pd.api.types.is_object_dtype(dtype) or pd.api.types.is_string_dtype(dtype):
        why = mixed_or_nested(series) if pd.api.types.is_object_dtype(dtype) else None
        if why:
            raise ColumnError(f"column {name!r} {why}, which cannot be drawn on an axis")
        col = _category_column(name, label, series, named)
    else:
        raise ColumnError(f"column {name!r} has dtype {dtype}, which cannot be drawn on an axis")
    col.encode()
    return col


def encode_frame(frame: pd.DataFrame, axes=None) -> dict[str, Column]:
    """Encode the chosen columns of a frame, in order; a dict from display name to Column.

    ``axes=None`` takes every column that can be drawn (others are skipped with one warning that
    lists them); naming a column that does not exist or cannot be drawn raises a clear error.
    """
    labels = list(frame.columns)
    names = [display_name(c) for c in labels]
    dupes = {n for n in names if names.count(n) > 1}
    if axes is None:
        out, skipped = {}, []
        for i, name in enumerate(names):
            label = labels[i]
            if name in dupes:
                if name not in names[:i]:  # named once
                    skipped.append(f"{name!r} ({_twice(name, names)})")
                continue
            try:
                out[name] = encode_column(label, frame.iloc[:, i], name, named=False)
            except ColumnError as err:
                skipped.append(f"{name!r} ({str(err).split(' ', 2)[-1]})")
        if not out:
            raise ColumnError(
                "the table has no column that can be drawn"
                + (f": {'; '.join(skipped)}" if skipped else " (it has no columns)")
            )
        if skipped:
            warnings.warn(f"axeswidget: skipped columns: {'; '.join(skipped)}", stacklevel=4)
        return out
    if isinstance(axes, str | tuple):
        axes = [axes]
    out = {}
    for wanted in axes:
        hits = [
            i for i, (lab, n) in enumerate(zip(labels, names, strict=True)) if lab == wanted or n == wanted
        ]
        if not hits:
            raise ColumnError(f"unknown column {wanted!r}; the table has: {', '.join(map(repr, names))}")
        if len(hits) > 1:
            shown = display_name(wanted)
            raise ColumnError(
                _twice(shown, names)
                if not shown
                else f"column name {shown!r} appears more than once; rename the duplicates"
            )
        name = names[hits[0]]
        if name in out:
            raise ColumnError(f"axes= names column {name!r} twice")
        out[name] = encode_column(labels[hits[0]], frame.iloc[:, hits[0]], name)
    return out


def _twice(name: str, names: list[str]) -> str:
    times = names.count(name)
    if not name:
        return f"an empty column name appears {times} times; give the columns names"
    return "the name appears more than once"
