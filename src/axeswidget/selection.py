"""The selection: a plain description of ranges per axis, and its exact evaluation as a mask.

A selection is ``{axis name: [[lo, hi], ...]}`` in data units. Ranges on one axis combine with OR,
axes combine with AND; both ends are inclusive. An axis without ranges does not filter.

Evaluation is kept apart from the description: :class:`MaskEvaluator` turns a selection into a boolean
mask over in-memory float64 columns and recomputes only the axes whose ranges changed.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from numbers import Real

import numpy as np

from .encode import Column

Ranges = dict[str, list[list[float]]]


class SelectionError(ValueError):
    """A selection that cannot be applied; the message names the axis and the problem."""


def _number(value, axis: str) -> float:
    if isinstance(value, bool) or not isinstance(value, Real | np.number):
        raise SelectionError(f"range on {axis!r}: {value!r} is a {type(value).__name__}, expected a number")
    out = float(value)
    if math.isnan(out):
        raise SelectionError(f"range on {axis!r}: an end is NaN; give numbers (±inf is allowed)")
    return out


def normalise(ranges, columns: Mapping[str, Column]) -> Ranges:
    """Validate a user-given selection and return it in canonical form.

    Accepts ``{axis: [lo, hi]}`` as a shorthand for one range. Empty lists drop the axis. Ranges on an
    axis are sorted by their low end. Raises :class:`SelectionError` naming the axis and the problem.
    """
    if ranges is None:
        return {}
    if not isinstance(ranges, Mapping):
        raise SelectionError(
            f"ranges must be a dict of axis name -> [[lo, hi], ...], got {type(ranges).__name__}"
        )
    out: Ranges = {}
    for axis, spans in ranges.items():
        if axis not in columns:
            known = ", ".join(map(repr, columns))
            raise SelectionError(f"unknown axis {axis!r} in ranges; the axes are: {known}")
        if spans is None:
            continue
        if not isinstance(spans, list | tuple | np.ndarray):
            raise SelectionError(f"range on {axis!r}: expected [lo, hi] or a list of them, got {spans!r}")
        spans = list(spans)
        if len(spans) == 2 and not any(isinstance(s, list | tuple | np.ndarray) for s in spans):
            spans = [spans]
        clean = []
        for span in spans:
            if not isinstance(span, list | tuple | np.ndarray) or len(span) != 2:
                raise SelectionError(f"range on {axis!r}: expected a pair [lo, hi], got {span!r}")
            lo, hi = _number(span[0], axis), _number(span[1], axis)
            if lo > hi:
                raise SelectionError(f"range on {axis!r}: lo {lo!r} is greater than hi {hi!r}")
            clean.append([lo, hi])
        if clean:
            out[axis] = sorted(clean)
    return out


def axis_mask(values: np.ndarray, spans: list[list[float]]) -> np.ndarray:
    """Rows whose value lies in any of the inclusive spans (NaN never does)."""
    mask = np.zeros(values.shape, dtype=bool)
    for lo, hi in spans:
        mask |= (values >= lo) & (values <= hi)
    return mask


class MaskEvaluator:
    """Exact, incremental evaluation of a selection over in-memory columns."""

    def __init__(self, columns: Mapping[str, Column], n: int):
        self.columns = columns
        self.n = n
        self.ranges: Ranges = {}
        self._parts: dict[str, np.ndarray] = {}
        self.mask = np.ones(n, dtype=bool)

    def update(self, ranges: Ranges) -> np.ndarray:
        """Apply a normalised selection; only axes whose spans changed are recomputed."""
        for axis in list(self._parts):
            if axis not in ranges:
                del self._parts[axis]
        for axis, spans in ranges.items():
            if self.ranges.get(axis) != spans or axis not in self._parts:
                self._parts[axis] = axis_mask(self.columns[axis].values, spans)
        self.ranges = {k: [list(s) for s in v] for k, v in ranges.items()}
        mask = np.ones(self.n, dtype=bool)
        for part in self._parts.values():
            mask &= part
        mask.flags.writeable = False
        self.mask = mask
        return mask


def pack(mask: np.ndarray) -> bytes:
    """Bit-pack a mask for the front end: bit i of byte i // 8 (little bit order) is row i."""
    return np.packbits(mask, bitorder="little").tobytes()
