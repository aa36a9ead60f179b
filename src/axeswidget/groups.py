"""Selections as objects: kept selections (``saved``) by name, their masks, each row's group label."""

from __future__ import annotations

import numpy as np
import pandas as pd


def kept(widget, name: str) -> dict:
    """The kept selection of that name; a KeyError listing the kept names otherwise."""
    if name not in widget.saved:
        raise KeyError(f"no saved selection {name!r}; saved: {', '.join(map(repr, widget.saved)) or 'none'}")
    return widget.saved[name]


def group_mask(widget, name: str) -> np.ndarray:
    """The exact mask of a kept selection (without putting it on the axes)."""
    ranges = kept(widget, name)
    widget._need_rows("group_mask()")
    return widget._source.mask_of(ranges)


def labels(widget, others: str | None = None) -> pd.Series:
    """Each row's first kept group (in the order kept), as a categorical Series on the data's index."""
    widget._need_rows("labels()")
    names = list(widget.saved)
    codes = np.full(widget._source.n, -1, dtype=np.int64)
    for i, name in reversed(list(enumerate(names))):
        codes[group_mask(widget, name)] = i
    cats = names + ([others] if others is not None and others not in names else [])
    if others is not None:
        codes[codes < 0] = cats.index(others)
    return pd.Series(
        pd.Categorical.from_codes(codes, categories=cats), index=widget._source.frame.index, name="group"
    )
