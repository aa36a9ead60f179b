"""The widget's ``table`` trait: row counts, one spec (codes buffer) per axis, the rows' index labels."""

from __future__ import annotations

import numpy as np
import pandas as pd

from .encode import Column

#: up to this many rows the index labels of a non-range index travel as text (above: positions only)
INDEX_LABELS_MAX = 200_000


def index_spec(index) -> dict | None:
    """The rows' index labels for the page's values box: a range as start/step, else text labels."""
    if isinstance(index, pd.RangeIndex):
        return {"start": int(index.start), "step": int(index.step)}
    if len(index) > INDEX_LABELS_MAX:
        return None
    return {"labels": [str(v) for v in index]}


def table_trait(
    columns: dict[str, Column], n: int, codes: dict | None = None, total: int | None = None
) -> dict:
    """The value of the widget's ``table`` trait: row counts plus one spec (with its buffer) per axis.

    Without ``codes`` every row's codes are sent (``n`` rows, ``total == n``, ``sampled`` False). With
    ``codes`` (axis -> uint16 codes of ``n`` sample rows) and ``total`` (all rows), the buffers carry
    the sample while the specs still describe all ``total`` rows.
    """
    specs = []
    for col in columns.values():
        spec = col.spec()
        if codes is not None:
            spec["codes"] = memoryview(np.ascontiguousarray(codes[col.name], dtype=np.uint16)).cast("B")
        specs.append(spec)
    sampled = codes is not None
    return {
        "n": int(n),
        "total": int(n if total is None else total),
        "sampled": sampled,
        "columns": specs,
    }


def with_index(table: dict, index) -> dict:
    """The ``table`` trait with the rows' index labels added under ``index`` (optional for the page)."""
    spec = index_spec(index)
    return table if spec is None else {**table, "index": spec}
