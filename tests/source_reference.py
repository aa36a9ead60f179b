"""Shared test data and pandas/numpy reference computations for the data-source tests.

Every number a source gives is recomputed here from a pandas frame of the same rows, with pandas and
numpy only (``Series.between``/``isin``/``value_counts``, ``numpy.histogram2d``), never with the
project's own encoder, evaluator or density code.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

CODE_MAX, CODE_MISSING, BANDS = 65534, 65535, 60  # the wire rule stated in encode.py's module docstring


def pump_table(n: int = 3000, seed: int = 7) -> pd.DataFrame:
    """Seeded irrigation-pump readings: floats with NaN/±inf, few and many integers, labels, flags, times."""
    rng = np.random.default_rng(seed)
    flow = rng.normal(1.0, 0.8, n)
    flow[rng.random(n) < 0.06] = np.nan
    flow[5], flow[9] = np.inf, -np.inf
    site = rng.choice(["north", "south", "east", "west", "ridge"], n, p=[0.4, 0.25, 0.15, 0.15, 0.05])
    site = pd.Series(site, dtype=object)
    site[rng.random(n) < 0.04] = None
    return pd.DataFrame(
        {
            "flow": flow,
            "stage": rng.integers(0, 7, n),
            "pressure": rng.integers(-5000, 90000, n),
            "site": site,
            "running": rng.random(n) < 0.35,
            "when": pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 90 * 86400, n), unit="s"),
        }
    )


SELECTION = {
    "flow": [[-0.5, 1.5], None],
    "site": ["north", "east"],
    "stage": [[2, 4]],
    "when": [["2024-02-01T00:00:00", None]],
}


def reference_mask(df: pd.DataFrame) -> np.ndarray:
    """SELECTION evaluated with pandas."""
    # reference: pandas Series.between (inclusive both ends) / Series.isin / Series.isna
    flow = df["flow"].between(-0.5, 1.5) | df["flow"].isna()
    site = df["site"].isin(["north", "east"])
    stage = df["stage"].between(2, 4)
    when = df["when"] >= pd.Timestamp("2024-02-01")
    return (flow & site & stage & when).to_numpy()


def label_order(series: pd.Series) -> list[str]:
    """Labels most frequent first, ties by label text (the documented axis order)."""
    counts = series.dropna().astype(str).value_counts()  # reference: pandas value_counts
    return sorted(counts.index, key=lambda lab: (-counts[lab], lab))


def reference_codes(df: pd.DataFrame, column: str) -> np.ndarray:
    """Wire codes of one column recomputed from the rule in encode.py's docstring, with numpy."""
    s = df[column]
    if s.dtype == bool or s.dtype == object:
        if s.dtype == bool:
            order = [lab for lab in ("False", "True") if lab in set(s.astype(str))]
        else:
            order = label_order(s)
        band = {lab: min(i, BANDS) for i, lab in enumerate(order)}
        return np.array([CODE_MISSING if pd.isna(v) else band[str(v)] for v in s], dtype=np.uint16)
    if pd.api.types.is_datetime64_any_dtype(s):
        values = s.astype("datetime64[ns]").to_numpy().view(np.int64).astype(np.float64)
        values[s.isna().to_numpy()] = np.nan
    else:
        values = s.to_numpy(dtype=np.float64)
    finite = values[np.isfinite(values)]
    lo, hi = finite.min(), finite.max()
    codes = np.full(len(values), CODE_MISSING, dtype=np.uint16)
    present = ~np.isnan(values)
    half = hi * 0.5 - lo * 0.5
    codes[present] = np.rint((np.clip(values[present], lo, hi) * 0.5 - lo * 0.5) * (CODE_MAX / half))
    return codes


def reference_bins(df: pd.DataFrame, column: str, bins: int) -> np.ndarray:
    """Pair-count bin per row: codes split evenly over ``bins``; bands as they are; missing last."""
    codes = reference_codes(df, column).astype(np.float64)
    if df[column].dtype == bool or df[column].dtype == object:
        return np.where(codes == CODE_MISSING, bins, codes)
    edges = np.concatenate([np.arange(bins + 1) * (CODE_MAX + 1) / bins, [CODE_MISSING + 1]])
    return np.digitize(codes, edges) - 1  # reference: numpy.digitize, bin k = [e_k, e_k+1)


def reference_pairs(df: pd.DataFrame, order: list[str], bins: int, mask=None) -> list[np.ndarray]:
    """One count matrix per neighbouring pair, from numpy.histogram2d over the bin indices."""
    binned = [reference_bins(df, c, bins) for c in order]
    if mask is not None:
        binned = [b[mask] for b in binned]
    edges = np.arange(bins + 2) - 0.5
    out = []
    for left, right in zip(binned[:-1], binned[1:], strict=True):
        counts, _, _ = np.histogram2d(left, right, bins=[edges, edges])  # reference: numpy.histogram2d
        out.append(counts.astype(np.int64))
    return out


def sorted_rows(codes: dict[str, np.ndarray], order: list[str]) -> np.ndarray:
    """The code matrix with rows in lexical order (to compare row sets whatever the engine's row order)."""
    matrix = np.column_stack([np.asarray(codes[c], dtype=np.int64) for c in order])
    return matrix[np.lexsort(matrix.T[::-1])]


ORDER = ["flow", "stage", "pressure", "site", "running", "when"]


def check_against_pandas(source, df: pd.DataFrame, bins: int = 32) -> int:
    """Assert every summary and count of ``source`` equals the pandas/numpy reference on ``df``.

    Returns the reference count of SELECTION (so callers can check their engine's filtered table).
    """
    from axeswidget.selection import normalise

    cols = source.columns
    assert source.n == len(df)
    assert [cols[c].kind for c in ORDER] == ["number", "integer", "number", "category", "boolean", "datetime"]
    assert cols["stage"].discrete == sorted(df["stage"].unique().tolist())  # reference: pandas unique
    for name in ("flow", "pressure"):
        finite = df[name][np.isfinite(df[name])]
        assert (cols[name].lo, cols[name].hi) == (finite.min(), finite.max())  # reference: pandas min/max
    when_ns = df["when"].astype("datetime64[ns]")
    assert cols["when"].lo == float(when_ns.min().value) and cols["when"].hi == float(when_ns.max().value)
    for name in ORDER:
        assert cols[name].n_missing == int(df[name].isna().sum()), name  # reference: pandas isna
    assert cols["flow"].infinite() == (int(np.isneginf(df["flow"]).sum()), int(np.isposinf(df["flow"]).sum()))
    counts = df["site"].value_counts()  # reference: pandas value_counts
    assert cols["site"].labels == label_order(df["site"])
    assert cols["site"].counts == [int(counts[lab]) for lab in cols["site"].labels]
    flags = df["running"].value_counts()
    assert cols["running"].labels == ["False", "True"]
    assert cols["running"].counts == [int(flags[False]), int(flags[True])]

    ranges = normalise(SELECTION, cols)
    expected = reference_mask(df)
    assert source.count(ranges) == int(expected.sum())
    assert source.count({}) == len(df)
    # an open upper end takes +inf in; NaN is never in a range
    assert source.count(normalise({"flow": [[0.5, None]]}, cols)) == int((df["flow"] >= 0.5).sum())
    assert source.count(normalise({"site": [None]}, cols)) == int(df["site"].isna().sum())

    for got, want in zip(source.pair_counts(ORDER, bins), reference_pairs(df, ORDER, bins), strict=True):
        np.testing.assert_array_equal(got, want)
    selected_pairs = source.pair_counts(ORDER, bins, ranges)
    for got, want in zip(selected_pairs, reference_pairs(df, ORDER, bins, expected), strict=True):
        np.testing.assert_array_equal(got, want)
    assert all(p.sum() == expected.sum() for p in selected_pairs)

    want_codes = {c: reference_codes(df, c) for c in ORDER}
    np.testing.assert_array_equal(sorted_rows(source.codes(), ORDER), sorted_rows(want_codes, ORDER))
    return int(expected.sum())
