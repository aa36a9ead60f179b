"""Column roles: which columns are drawn when the axes are not named, and how numbers read.

Integers with few distinct values (and whole-number floats such as 0.0/1.0/2.0 class codes) are discrete
axes; identifier-like columns (integers running nearly through their span or named like an id, text
where nearly every value differs) and free text are left out (:class:`NotGuessed`) unless named in
``axes=``; object columns mixing value types or holding nested values cannot be axes.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from .inputs import ColumnError

#: integer columns with at most this many distinct values are drawn as discrete axes
INTEGER_DISCRETE_LIMIT = 40
#: whole-number float columns with at most this many distinct values are drawn as discrete axes
FLOAT_DISCRETE_LIMIT = 20
#: identifier-like: more than this share of the present values distinct, in more than ID_MIN_ROWS rows
ID_DISTINCT_SHARE = 0.95
ID_MIN_ROWS = 50
#: column names that read as identifiers ("id", "user_id", "PassengerId", "row index", "key", ...)
ID_NAME = re.compile(
    r"(?:^|[^A-Za-z0-9])(?i:id|ids|uuid|guid|key|index|idx|no)$"  # "id", "user_id", "row index", "Nr. no"
    r"|[a-z0-9](?:Id|ID|Key|Index|UUID|No)$"  # camelCase: "PassengerId", "orderNo"
)
#: object columns with at most this many distinct labels are categories; more are skipped
CATEGORY_LIMIT = 100_000


class NotGuessed(ColumnError):
    """A column left out when the axes are not named (identifiers, free text); naming it draws it."""


def mixed_or_nested(series: pd.Series) -> str | None:
    """Why an object column cannot be an axis, or None if it holds labels only."""
    sample = series.dropna()
    types = set(map(type, sample))
    if not types:
        return None
    if any(issubclass(t, list | dict | tuple | set | np.ndarray) for t in types):
        return "holds nested values (lists, dicts or arrays)"
    if types <= {str} or types <= {bool, np.bool_}:
        return None
    return "mixes value types (" + ", ".join(sorted(t.__name__ for t in types)) + ")"


def refuse_free_text(name: str, present: np.ndarray, distinct: int) -> None:
    """NotGuessed for text that reads as identifiers or free text (checked only for unnamed axes)."""
    n = present.size
    if n <= ID_MIN_ROWS or distinct == 0:
        return
    if distinct > ID_DISTINCT_SHARE * n:
        raise NotGuessed(
            f"column {name!r} looks like identifiers or free text ({distinct} of {n} values distinct); "
            "name it in axes= to draw it"
        )
    if distinct > 0.5 * n:
        lengths = np.fromiter((len(str(v)) for v in present), dtype=np.int64, count=n)
        if np.median(lengths) >= FREE_TEXT_LENGTH:
            raise NotGuessed(
                f"column {name!r} looks like free text ({distinct} of {n} values distinct, median length "
                f"{int(np.median(lengths))} characters); name it in axes= to draw it"
            )


#: text columns with more than half their values distinct and a median length of at least this many
#: characters are free text (skipped unless named)
FREE_TEXT_LENGTH = 30


def refuse_identifier(name: str, present: np.ndarray) -> None:
    """NotGuessed for integers that read as identifiers: nearly all distinct, and either nearly filling
    their span (row numbers, serial ids) or named like an id."""
    n = present.size
    if n <= ID_MIN_ROWS:
        return
    uniq = np.unique(present)
    if uniq.size <= ID_DISTINCT_SHARE * n:
        return
    span = int(uniq[-1]) - int(uniq[0]) + 1
    if span <= 2 * uniq.size or ID_NAME.search(name):
        raise NotGuessed(
            f"column {name!r} looks like an identifier ({uniq.size} of {n} values distinct"
            + (f", {uniq[0]}..{uniq[-1]}" if span <= 2 * uniq.size else "")
            + "); name it in axes= to draw it"
        )


def whole_floats(values: np.ndarray, missing: np.ndarray) -> list[int] | None:
    """The distinct values of a float column holding few whole numbers (class codes), else None."""
    head = values[:4096]
    head = head[~np.isnan(head)]
    if head.size and not (np.isfinite(head).all() and (head == np.round(head)).all()):
        return None  # a fraction (or an infinity) among the first values: no need to read the rest
    present = values[~missing]
    if not present.size or not np.isfinite(present).all() or np.abs(present).max() > 2**53:
        return None
    if not (present == np.round(present)).all():
        return None
    uniq = np.unique(present)
    if uniq.size > FLOAT_DISCRETE_LIMIT:
        return None
    return [int(v) for v in uniq]
