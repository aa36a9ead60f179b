"""Read a user's table: the supported input types to a pandas DataFrame, and the names a column may have.

Every error here names the column (or the input type) and the problem.
"""

from __future__ import annotations

import narwhals as nw
import numpy as np
import pandas as pd


class ColumnError(ValueError):
    """A column cannot be used as an axis; the message names the column and the problem."""


def to_frame(data, names=None) -> pd.DataFrame:
    """Accept the supported table types and return a pandas DataFrame (no copy where possible).

    pandas DataFrame; any eager table narwhals reads (polars DataFrame, pyarrow Table, ...); any object
    offering the Arrow PyCapsule stream interface (``__arrow_c_stream__``, e.g. a pyarrow RecordBatch);
    a dict of 1-D arrays; a 2-D numpy array (column names from ``names``, otherwise ``"0", "1", ...``).
    """
    if isinstance(data, pd.DataFrame):
        return data.copy(deep=False)  # copy-on-write: later edits of the user's frame do not leak in
    if isinstance(data, np.ndarray):
        if data.ndim != 2:
            raise TypeError(f"axeswidget: a numpy array must be 2-D (rows x columns), got {data.ndim}-D")
        cols = [str(i) for i in range(data.shape[1])] if names is None else list(names)
        check_names([c for c in cols if isinstance(c, str)])
        if len(cols) != data.shape[1]:
            raise ValueError(f"axeswidget: {len(cols)} names for {data.shape[1]} columns")
        return pd.DataFrame(data.copy(), columns=cols)  # a copy: later edits of the array do not leak in
    if isinstance(data, dict):
        check_names([k for k in data if isinstance(k, str)])
        try:
            return pd.DataFrame(
                {
                    k: np.array(v, copy=True) if not isinstance(v, pd.Series) else v.copy()
                    for k, v in data.items()
                }
            )
        except ValueError as err:
            raise ValueError(f"axeswidget: the dict's arrays cannot form a table: {err}") from None
    try:  # any eager table narwhals reads (polars, pyarrow, modin, cudf, ...)
        table = nw.from_native(data, eager_only=True)
    except TypeError:
        table = None
    if table is not None:
        check_names([str(c) for c in table.columns])
        library = table.implementation.name.lower()
        if table.implementation is nw.Implementation.PYARROW:  # dates as datetime64, not objects
            native = table.to_native()
            return _foreign(lambda: native.to_pandas(date_as_object=False), library)
        return _foreign(table.to_pandas, library)
    if hasattr(data, "__arrow_c_stream__"):
        import pyarrow as pa

        return _foreign(
            lambda: pa.RecordBatchReader.from_stream(data).read_all().to_pandas(date_as_object=False), "Arrow"
        )
    raise TypeError(
        f"axeswidget: cannot read a table from {type(data).__name__}; give a pandas or polars DataFrame, "
        "a pyarrow Table, a dict of 1-D arrays or a 2-D numpy array"
    )


def check_names(names) -> None:
    """Refuse names that polars/Arrow cannot take or the page cannot receive (NUL, lone surrogates)."""
    for name in names:
        problem = name_problem(name)
        if problem:
            raise ColumnError(f"column {name!r}: {problem}; rename the column")


def name_problem(name: str) -> str | None:
    """Why a column name (or label) cannot be used, or None."""
    if "\x00" in name:
        return "the name holds a NUL character"
    if not is_utf8(name):
        return "the name holds a lone surrogate, which cannot be sent to the page as UTF-8"
    return None


def is_utf8(text: str) -> bool:
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


def _foreign(convert, library: str) -> pd.DataFrame:
    """Run a conversion by another library; its panics (BaseException in polars) become clear errors."""
    try:
        return convert()
    except (KeyboardInterrupt, SystemExit):
        raise
    except BaseException as err:  # polars' PanicException derives from BaseException
        raise ValueError(
            f"axeswidget: {library} could not convert the table: {type(err).__name__}: {err}"
        ) from None


def display_name(label) -> str:
    """The text shown on an axis header for a column label (tuples of a MultiIndex joined by ' / ')."""
    if isinstance(label, str):
        return label
    if isinstance(label, tuple):
        return " / ".join(display_name(p) for p in label)
    return str(label)
