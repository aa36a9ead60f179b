"""Tests for axeswidget.measures (association between columns) against references from outside it.

Every check compares with an outside reference, named in a comment next to it: a brute-force count
written out from the definition, numpy, scipy, scikit-learn, pandas, or a published fact.
"""

from __future__ import annotations

import itertools
import warnings

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats
from sklearn.metrics import mutual_info_score, normalized_mutual_info_score

from axeswidget import measures

# ---------------------------------------------------------------------------------------------------------
# Brute-force references written out from the definitions
# ---------------------------------------------------------------------------------------------------------


def _complete(x, y):
    """Rows where both values are present (pairwise deletion, as the definition says)."""
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    keep = ~(np.isnan(x) | np.isnan(y))
    return x[keep], y[keep]


def brute_discordant(x, y):
    """O(n^2) count of pairs i<j with (x_i - x_j)(y_i - y_j) < 0, by a plain double loop."""
    x, y = _complete(x, y)
    n = len(x)
    return sum(1 for i in range(n) for j in range(i + 1, n) if (x[i] - x[j]) * (y[i] - y[j]) < 0)


def brute_discordant_np(x, y):
    """Same O(n^2) definition, broadcast with numpy for a few thousand rows."""
    x, y = _complete(x, y)
    sign = np.sign(x[:, None] - x[None, :]) * np.sign(y[:, None] - y[None, :])
    return int(np.count_nonzero(np.triu(sign < 0, 1)))


def brute_nontied(x, y):
    """O(n^2) count of pairs that differ on x and on y."""
    x, y = _complete(x, y)
    n = len(x)
    return sum(1 for i in range(n) for j in range(i + 1, n) if x[i] != x[j] and y[i] != y[j])


def mixed_frame(n=400, seed=0, nan_share=0.1):
    """Numeric table with ties, a negative pair, a positive pair and scattered NaNs."""
    rng = np.random.default_rng(seed)
    base = rng.normal(size=n)
    df = pd.DataFrame(
        {
            "a": base,
            "b": np.round(base * 2 + rng.normal(size=n)),  # heavy ties, positive with a
            "c": -base + rng.normal(scale=0.5, size=n),  # negative with a
            "d": rng.integers(0, 6, n).astype(float),  # ties only
            "e": rng.normal(size=n),
        }
    )
    for col in ("a", "c", "d"):
        df.loc[rng.random(n) < nan_share, col] = np.nan
    return df


# ---------------------------------------------------------------------------------------------------------
# Crossings, non-tied pairs, flips
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(4))
@pytest.mark.parametrize("n", [3, 17, 150])
def test_crossings_equal_brute_force_with_ties_and_nans(seed, n):
    rng = np.random.default_rng(seed)
    x = rng.integers(0, 6, n).astype(float)
    y = rng.integers(0, 6, n).astype(float)
    x[rng.random(n) < 0.15] = np.nan
    y[rng.random(n) < 0.15] = np.nan
    assert measures.crossings(x, y) == brute_discordant(x, y)  # reference: O(n^2) discordant-pair loop


@pytest.mark.parametrize("n", [0, 1, 2])
def test_crossings_tiny_inputs(n):
    for x, y in [(np.arange(n, dtype=float), np.arange(n, dtype=float)[::-1]), (np.zeros(n), np.arange(n))]:
        got = measures.crossings(x, y)
        assert got == brute_discordant(x, y)  # reference: O(n^2) discordant-pair loop
        assert isinstance(got, int)


@pytest.mark.parametrize("n", [1000, 3001])
@pytest.mark.parametrize("distinct", [3, 50, 100_000])
def test_crossings_many_merge_levels(n, distinct):
    # non-power-of-two lengths and wide or narrow value ranges exercise every merge level and padding
    rng = np.random.default_rng(n + distinct)
    x = rng.integers(0, distinct, n).astype(float)
    y = (x + rng.integers(-distinct, distinct + 1, n)).astype(float)
    assert measures.crossings(x, y) == brute_discordant_np(x, y)  # reference: O(n^2) definition


@settings(max_examples=150, deadline=None)
@given(
    st.lists(
        st.tuples(st.one_of(st.integers(0, 5), st.none()), st.one_of(st.integers(0, 5), st.none())),
        max_size=40,
    )
)
def test_crossings_property_brute_force(rows):
    x = np.array([np.nan if a is None else a for a, _ in rows], dtype=float)
    y = np.array([np.nan if b is None else b for _, b in rows], dtype=float)
    assert measures.crossings(x, y) == brute_discordant(x, y)  # reference: O(n^2) discordant-pair loop
    assert measures.nontied_pairs(x, y) == brute_nontied(x, y)  # reference: O(n^2) non-tied-pair loop


@pytest.mark.parametrize("seed", range(3))
def test_flip_identity(seed):
    rng = np.random.default_rng(seed)
    n = 200
    x = rng.integers(0, 5, n).astype(float)
    y = np.round(x + rng.normal(size=n))
    y[rng.random(n) < 0.1] = np.nan
    flipped = brute_discordant(x, -y)  # reference: O(n^2) discordant-pair loop on the flipped axis
    nontied = brute_nontied(x, y)  # reference: O(n^2) non-tied-pair loop
    assert measures.nontied_pairs(x, y) == nontied
    assert measures.crossings_after_flip(x, y) == flipped
    assert measures.nontied_pairs(x, y) - measures.crossings(x, y) == flipped
    assert measures.crossings(x, -y) == flipped


def test_crossings_input_length_mismatch():
    with pytest.raises(ValueError, match="same length"):
        measures.crossings([1, 2, 3], [1, 2])


# ---------------------------------------------------------------------------------------------------------
# Kendall, Pearson, Spearman
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(4))
def test_kendall_tau_b_matches_scipy(seed):
    rng = np.random.default_rng(seed)
    n = 500
    x = rng.integers(0, 8, n).astype(float)
    y = x + rng.integers(-4, 5, n)
    x[rng.random(n) < 0.1] = np.nan
    xs, ys = _complete(x, y)
    expected = stats.kendalltau(xs, ys, variant="b").statistic  # reference: scipy.stats.kendalltau
    assert measures.kendall_tau_b(x, y) == pytest.approx(expected, abs=1e-12)


def test_kendall_tau_b_continuous_and_constant_match_scipy():
    rng = np.random.default_rng(7)
    x = rng.normal(size=2000)
    y = x + rng.normal(size=2000)
    expected = stats.kendalltau(x, y, variant="b").statistic  # reference: scipy.stats.kendalltau
    assert measures.kendall_tau_b(x, y) == pytest.approx(expected, abs=1e-12)
    constant = np.ones(50)
    ref = stats.kendalltau(constant, np.arange(50.0)).statistic  # reference: scipy gives NaN
    assert np.isnan(ref) and np.isnan(measures.kendall_tau_b(constant, np.arange(50.0)))


def _pairwise_reference(df, func):
    """Matrix of func(x, y) over the rows where both columns are present."""
    names = list(df.columns)
    out = pd.DataFrame(np.eye(len(names)), index=names, columns=names)
    for a, b in itertools.combinations(names, 2):
        x, y = _complete(df[a].to_numpy(float), df[b].to_numpy(float))
        out.loc[a, b] = out.loc[b, a] = func(x, y)
    return out


@pytest.mark.parametrize("nan_share", [0.0, 0.1])
def test_pearson_matches_numpy_corrcoef(nan_share):
    df = mixed_frame(nan_share=nan_share)
    got = measures.association(df, "pearson")
    ref = _pairwise_reference(df, lambda x, y: np.corrcoef(x, y)[0, 1])  # reference: numpy.corrcoef
    np.testing.assert_allclose(got.to_numpy(), ref.to_numpy(), atol=1e-12)
    assert list(got.index) == list(got.columns) == list(df.columns)


@pytest.mark.parametrize("nan_share", [0.0, 0.1])
def test_spearman_matches_scipy(nan_share):
    df = mixed_frame(nan_share=nan_share)
    got = measures.association(df, "spearman")
    ref = _pairwise_reference(df, lambda x, y: stats.spearmanr(x, y).statistic)  # reference: scipy.spearmanr
    np.testing.assert_allclose(got.to_numpy(), ref.to_numpy(), atol=1e-12)
    if nan_share == 0.0:
        whole = stats.spearmanr(df.to_numpy()).statistic  # reference: scipy.stats.spearmanr, matrix form
        np.testing.assert_allclose(got.to_numpy(), whole, atol=1e-12)


def test_kendall_and_crossings_matrices():
    df = mixed_frame(n=250)
    tau = measures.association(df, "kendall")
    ref = _pairwise_reference(df, lambda x, y: stats.kendalltau(x, y).statistic)  # reference: scipy
    np.testing.assert_allclose(tau.to_numpy(), ref.to_numpy(), atol=1e-12)
    cross = measures.association(df, "crossings")
    brute = _pairwise_reference(df, brute_discordant_np).to_numpy(copy=True)  # reference: O(n^2) count
    np.fill_diagonal(brute, 0)
    assert cross.dtypes.map(pd.api.types.is_integer_dtype).all()
    np.testing.assert_array_equal(cross.to_numpy(), brute.astype(np.int64))


def test_constant_column_gives_nan_like_scipy():
    # 0.1 is not exact in binary, so the column mean is not exactly 0.1: the check must not rely on it
    df = pd.DataFrame({"a": np.arange(20.0), "k": np.full(20, 0.1)})
    df.loc[3, "a"] = np.nan  # one incomplete column, so both the block and the pairwise path are used
    df["m"] = np.full(20, 0.1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        x, y = _complete(df["a"], df["k"])
        ref_p = stats.pearsonr(x, y).statistic  # reference: scipy gives NaN for constant input
        ref_s = stats.spearmanr(x, y).statistic  # reference: scipy gives NaN for constant input
    assert np.isnan(ref_p) and np.isnan(ref_s)
    for metric in ("pearson", "spearman"):
        got = measures.association(df, metric)
        assert np.isnan(got.loc["a", "k"]) and np.isnan(got.loc["k", "m"])


# ---------------------------------------------------------------------------------------------------------
# Mutual information
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(3))
def test_mutual_info_discrete_matches_sklearn(seed):
    rng = np.random.default_rng(seed)
    x = rng.integers(0, 7, 800)
    y = (x * 3 + rng.integers(0, 4, 800)) % 11
    raw = mutual_info_score(x, y)  # reference: sklearn.metrics.mutual_info_score (nats)
    assert measures.mutual_info(x, y, normalized=False) == pytest.approx(raw, abs=1e-12)
    nmi = normalized_mutual_info_score(x, y, average_method="geometric")  # reference: sklearn NMI
    assert measures.mutual_info(x, y) == pytest.approx(nmi, abs=1e-12)


def test_mutual_info_continuous_uses_quantile_bins():
    rng = np.random.default_rng(3)
    a = rng.normal(size=3000)
    b = a**2 + rng.normal(scale=0.3, size=3000)
    labels_a = pd.qcut(a, measures.DEFAULT_BINS, labels=False)  # reference: pandas.qcut equal-frequency bins
    labels_b = pd.qcut(b, measures.DEFAULT_BINS, labels=False)
    nmi = normalized_mutual_info_score(labels_a, labels_b, average_method="geometric")  # reference: sklearn
    assert measures.mutual_info(a, b) == pytest.approx(nmi, abs=1e-12)
    matrix = measures.association({"a": a, "b": b}, "mutual_info")
    assert matrix.loc["a", "b"] == pytest.approx(nmi, abs=1e-12)
    assert matrix.loc["a", "a"] == 1.0


def test_mutual_info_matrix_with_missing_and_labels():
    rng = np.random.default_rng(5)
    n = 600
    group = rng.choice(["x", "y", "z"], n)
    value = np.where(group == "x", 0.0, 3.0) + rng.normal(size=n)
    value[rng.random(n) < 0.1] = np.nan
    df = pd.DataFrame({"group": group, "value": value})
    got = measures.association(df, "mutual_info").loc["group", "value"]
    keep = ~np.isnan(value)
    labels_v = pd.qcut(value[~np.isnan(value)], measures.DEFAULT_BINS, labels=False)  # reference: pandas.qcut
    full_labels = np.full(n, -1)
    full_labels[~np.isnan(value)] = labels_v
    ref = normalized_mutual_info_score(group[keep], full_labels[keep], average_method="geometric")  # sklearn
    assert got == pytest.approx(ref, abs=1e-12)


# ---------------------------------------------------------------------------------------------------------
# Column kinds, mapping input, sampling
# ---------------------------------------------------------------------------------------------------------


def test_column_kinds_use_codes_and_nanoseconds():
    rng = np.random.default_rng(11)
    n = 300
    stamps = pd.Timestamp("2021-03-01") + pd.to_timedelta(rng.integers(0, 10**7, n), unit="s")
    df = pd.DataFrame(
        {
            "when": stamps,
            "size": pd.Categorical(rng.choice(["S", "M", "L"], n), categories=["S", "M", "L"], ordered=True),
            "word": rng.choice(["pear", "apple", "fig"], n),
            "flag": rng.random(n) < 0.4,
            "num": rng.normal(size=n),
        }
    )
    df.loc[::17, "when"] = pd.NaT
    got = measures.association(df, "spearman")
    ints = df["when"].to_numpy("datetime64[ns]").astype("int64").astype(float)  # reference: numpy ns view
    ints[df["when"].isna().to_numpy()] = np.nan
    coded = pd.DataFrame(
        {
            "when": ints,
            "size": df["size"].cat.codes.astype(float),  # reference: pandas category codes
            "word": pd.Series(pd.factorize(df["word"], sort=True)[0], dtype=float),  # sorted labels
            "flag": df["flag"].astype(float),
            "num": df["num"],
        }
    )
    ref = _pairwise_reference(coded, lambda x, y: stats.spearmanr(x, y).statistic)  # reference: scipy
    np.testing.assert_allclose(got.to_numpy(), ref.to_numpy(), atol=1e-12)
    as_mapping = measures.association({c: df[c].to_numpy() for c in ("num", "flag")}, "pearson")
    ref2 = np.corrcoef(coded["num"], coded["flag"])[0, 1]  # reference: numpy.corrcoef
    assert as_mapping.loc["num", "flag"] == pytest.approx(ref2, abs=1e-12)


def test_columns_argument_selects_and_orders():
    df = mixed_frame(nan_share=0.0)
    got = measures.association(df, "pearson", columns=["e", "a"])
    assert list(got.columns) == ["e", "a"]
    ref = np.corrcoef(df["e"], df["a"])[0, 1]  # reference: numpy.corrcoef
    assert got.loc["e", "a"] == pytest.approx(ref, abs=1e-12)


def test_sampling_attrs_and_reproducibility():
    rng = np.random.default_rng(2)
    n = 5000
    df = pd.DataFrame(rng.normal(size=(n, 4)), columns=list("wxyz"))
    df["x"] += df["w"]
    exact = measures.association(df, "pearson")
    assert exact.attrs == {"metric": "pearson", "exact": True, "rows_used": n, "seed": None}
    first = measures.association(df, "pearson", max_rows=1000, seed=4)
    again = measures.association(df, "pearson", max_rows=1000, seed=4)
    other = measures.association(df, "pearson", max_rows=1000, seed=5)
    assert first.attrs == {"metric": "pearson", "exact": False, "rows_used": 1000, "seed": 4}
    pd.testing.assert_frame_equal(first, again)
    assert not np.allclose(first.to_numpy(), other.to_numpy())
    rows = np.sort(np.random.default_rng(4).choice(n, size=1000, replace=False))  # documented sample
    ref = np.corrcoef(df.iloc[rows].to_numpy().T)  # reference: numpy.corrcoef on those rows
    np.testing.assert_allclose(first.to_numpy(), ref, atol=1e-12)


# ---------------------------------------------------------------------------------------------------------
# Errors
# ---------------------------------------------------------------------------------------------------------


def test_association_errors_name_the_problem():
    df = mixed_frame(n=30)
    with pytest.raises(ValueError, match="unknown metric 'tau'"):
        measures.association(df, "tau")
    with pytest.raises(ValueError, match="'nope'"):
        measures.association(df, columns=["a", "nope"])


def test_many_categories_keep_their_category_order():
    # more categories than the widget draws bands for: the widget reorders its bands by frequency, the
    # measures still follow the categories' own order
    rng = np.random.default_rng(12)
    n = 3000
    cats = [f"c{i:03d}" for i in range(90)]
    codes = np.minimum(rng.geometric(0.05, n) - 1, 89)
    size = pd.Categorical.from_codes(codes, categories=cats, ordered=True)
    value = codes + rng.normal(scale=5.0, size=n)
    got = measures.association({"size": size, "value": value}, "spearman").loc["size", "value"]
    ref = stats.spearmanr(codes, value).statistic  # reference: scipy.stats.spearmanr on category codes
    assert got == pytest.approx(ref, abs=1e-12)
