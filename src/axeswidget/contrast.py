"""What sets the selection apart: per axis, how much the selected rows differ from the other rows.

:func:`compare` takes the widget's classified columns and a row mask and returns one row per axis,
most different first:

* number, integer, datetime and timedelta axes: the two-sample Kolmogorov--Smirnov statistic ``D``
  (the largest gap between the two empirical distribution functions, in [0, 1]) with its asymptotic
  p-value, and the standardised mean difference. Missing values are left out of both groups; the
  share of missing values in each group is reported beside.
* category and boolean axes: the total-variation distance between the two label distributions
  (half the summed absolute difference of the label shares, in [0, 1]), with Pearson's chi-square
  statistic of the 2 x labels table and its p-value. A missing value counts as a label of its own.

Both distances lie in [0, 1] and are 1 when the two groups share no value, so one ranking covers
all axes. KS is computed by sorting each group and binary search (``O(n log n)``, as
``scipy.stats.ks_2samp`` does). Only numpy and pandas are needed.
"""

from __future__ import annotations

import math
from collections.abc import Collection, Mapping

import numpy as np
import pandas as pd

from .encode import Column

__all__ = ["COLUMNS", "compare"]

#: the columns of the frame :func:`compare` returns, in order
COLUMNS = (
    "axis",
    "kind",
    "measure",
    "statistic",
    "p_value",
    "smd",
    "chi2",
    "brushed",
    "n_selected",
    "n_rest",
    "missing_selected",
    "missing_rest",
)
_NUMBER_KINDS = ("number", "integer", "datetime", "timedelta")
_LABEL_KINDS = ("category", "boolean")


def compare(columns: Mapping[str, Column], mask: np.ndarray, brushed: Collection[str] = ()) -> pd.DataFrame:
    """One row per axis, sorted by ``statistic`` (most different first; ties keep the axis order).

    ``mask`` is a bool array with one entry per row (True = selected); ``brushed`` names the axes that
    hold ranges (reported in the ``brushed`` column, since a brushed axis differs by construction).
    Columns of the result (see :data:`COLUMNS`):

    * ``measure``: ``"ks"`` or ``"total_variation"``; ``statistic``: its value (NaN when a group has
      no value on that axis, sorted last); ``p_value``: asymptotic Kolmogorov distribution for KS,
      chi-square distribution with ``labels - 1`` degrees of freedom for labels (no continuity
      correction; labels seen in neither group are left out).
    * ``smd``: ``(mean_selected - mean_rest) / sqrt((var_selected + var_rest) / 2)`` over the finite
      values (sample variances; NaN for label axes, for fewer than two values in a group, or for a
      zero spread); dates and durations in nanoseconds, so the ratio has no unit.
    * ``chi2``: Pearson's chi-square statistic (NaN for number axes).
    * ``n_selected`` / ``n_rest``: rows each group contributes (number axes: rows with a value);
      ``missing_selected`` / ``missing_rest``: share of each group's rows that are missing.

    Raises ``ValueError`` when no row or every row is selected: there is nothing to compare then.
    """
    mask = np.asarray(mask)
    if mask.dtype != np.bool_ or mask.ndim != 1:
        raise ValueError(f"mask must be a 1-D bool array, got dtype {mask.dtype} and shape {mask.shape}")
    n, picked = mask.shape[0], int(mask.sum())
    if picked == 0 or picked == n:
        raise ValueError(
            f"contrast needs selected rows and rows left out; {picked} of {n} rows are selected "
            "(set a range on an axis first, or widen it)"
        )
    rows = []
    for name, col in columns.items():
        if len(col.missing) != n:
            raise ValueError(f"axis {name!r} has {len(col.missing)} rows but the mask has {n}")
        missing = col.missing
        row = {
            "axis": name,
            "kind": col.kind,
            "brushed": name in brushed,
            "missing_selected": int((missing & mask).sum()) / picked,
            "missing_rest": int((missing & ~mask).sum()) / (n - picked),
        }
        if col.kind in _NUMBER_KINDS:
            row.update(_numbers(col, mask))
        elif col.kind in _LABEL_KINDS:
            row.update(_labels(col, mask))
        else:
            raise ValueError(f"axis {name!r} has kind {col.kind!r}, which contrast does not know")
        rows.append(row)
    frame = pd.DataFrame(rows, columns=list(COLUMNS))
    frame = frame.sort_values("statistic", ascending=False, kind="stable", na_position="last")
    frame = frame.reset_index(drop=True)
    frame.attrs = {"selected": picked, "rows": n}
    return frame


# -- number axes -------------------------------------------------------------------------------------


def _numbers(col: Column, mask: np.ndarray) -> dict:
    """KS statistic and p-value, standardised mean difference, group sizes (missing values left out)."""
    present = ~col.missing
    one = np.sort(col.values[present & mask])
    two = np.sort(col.values[present & ~mask])
    n1, n2 = one.shape[0], two.shape[0]
    out = {"measure": "ks", "chi2": np.nan, "n_selected": n1, "n_rest": n2}
    if n1 == 0 or n2 == 0:
        return {**out, "statistic": np.nan, "p_value": np.nan, "smd": np.nan}
    # both distribution functions at every value of either group (they only step there)
    at = np.concatenate([one, two])
    gap = np.searchsorted(one, at, side="right") / n1 - np.searchsorted(two, at, side="right") / n2
    d = float(np.abs(gap).max())
    out.update(statistic=d, p_value=kolmogorov_sf(math.sqrt(n1 * n2 / (n1 + n2)) * d))
    one, two = one.astype(np.float64), two.astype(np.float64)
    out["smd"] = _smd(one[np.isfinite(one)], two[np.isfinite(two)])
    return out


def _smd(a: np.ndarray, b: np.ndarray) -> float:
    """Standardised mean difference with the pooled spread ``sqrt((var_a + var_b) / 2)``."""
    if a.shape[0] < 2 or b.shape[0] < 2:
        return float("nan")
    spread = math.sqrt((float(a.var(ddof=1)) + float(b.var(ddof=1))) / 2.0)
    if not spread > 0:
        return float("nan")
    return (float(a.mean()) - float(b.mean())) / spread


def kolmogorov_sf(z: float) -> float:
    """``P(K > z)`` for the limiting Kolmogorov distribution (large-sample two-sided KS p-value).

    ``2 * sum_k (-1)^(k-1) exp(-2 k^2 z^2)`` for ``z >= 1``; below, one minus the equivalent theta
    series of the distribution function, ``sqrt(2 pi) / z * sum_k exp(-(2k-1)^2 pi^2 / (8 z^2))``,
    which converges fast there.
    """
    if not z > 0:
        return 1.0
    if z < 1.0:
        odd = 2.0 * np.arange(1, 12) - 1.0
        cdf = math.sqrt(2.0 * math.pi) / z * float(np.exp(-(odd**2) * math.pi**2 / (8.0 * z * z)).sum())
        return min(max(1.0 - cdf, 0.0), 1.0)
    k = np.arange(1, 101, dtype=np.float64)
    signs = np.where(k % 2 == 1, 1.0, -1.0)
    return min(max(2.0 * float((signs * np.exp(-2.0 * k * k * z * z)).sum()), 0.0), 1.0)


# -- label axes --------------------------------------------------------------------------------------


def _labels(col: Column, mask: np.ndarray) -> dict:
    """Total-variation distance, chi-square statistic and p-value; missing values are a label."""
    k = len(col.labels)
    codes = np.where(col.label_codes < 0, k, col.label_codes)
    selected = np.bincount(codes[mask], minlength=k + 1).astype(np.float64)
    rest = np.bincount(codes[~mask], minlength=k + 1).astype(np.float64)
    n1, n2 = selected.sum(), rest.sum()
    tv = 0.5 * float(np.abs(selected / n1 - rest / n2).sum())
    seen = (selected + rest) > 0
    table = np.vstack([selected[seen], rest[seen]])
    expected = table.sum(axis=1, keepdims=True) * table.sum(axis=0, keepdims=True) / (n1 + n2)
    chi2 = float(((table - expected) ** 2 / expected).sum())
    dof = int(seen.sum()) - 1
    return {
        "measure": "total_variation",
        "statistic": tv,
        "p_value": chi2_sf(chi2, dof),
        "smd": np.nan,
        "chi2": chi2,
        "n_selected": int(n1),
        "n_rest": int(n2),
    }


def chi2_sf(x: float, dof: int) -> float:
    """``P(X > x)`` for a chi-square variable with ``dof`` degrees of freedom (1.0 when ``dof`` is 0).

    The regularised upper incomplete gamma function ``Q(dof/2, x/2)``: its power series below
    ``a + 1``, a continued fraction (modified Lentz) above -- the classic pair of expansions.
    """
    if dof <= 0 or not x > 0:
        return 1.0
    a, h = dof / 2.0, x / 2.0
    scale = math.exp(-h + a * math.log(h) - math.lgamma(a))
    tiny = 1e-300
    if h < a + 1.0:
        term = total = 1.0 / a
        ap = a
        for _ in range(100_000):
            ap += 1.0
            term *= h / ap
            total += term
            if abs(term) < abs(total) * 1e-15:
                break
        return min(max(1.0 - total * scale, 0.0), 1.0)
    b = h + 1.0 - a
    c, d = 1.0 / tiny, 1.0 / b
    frac = d
    for i in range(1, 100_000):
        an = -i * (i - a)
        b += 2.0
        d = an * d + b
        d = tiny if abs(d) < tiny else d
        c = b + an / c
        c = tiny if abs(c) < tiny else c
        d = 1.0 / d
        delta = d * c
        frac *= delta
        if abs(delta - 1.0) < 1e-15:
            break
    return min(max(scale * frac, 0.0), 1.0)
