"""What sets the selection apart (axeswidget.contrast), checked against scipy.stats and pandas."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy import stats

import axeswidget as aw
from axeswidget import contrast
from axeswidget.encode import encode_frame

MISSING = "(missing)"


def reference_numbers(values: pd.Series, mask: np.ndarray) -> dict:
    """KS statistic and p-value, SMD and missing shares of one number column, from scipy and pandas."""
    one, two = values[mask].dropna(), values[~mask].dropna()
    if pd.api.types.is_datetime64_any_dtype(values) or pd.api.types.is_timedelta64_dtype(values):
        one, two = one.array.as_unit("ns").asi8, two.array.as_unit("ns").asi8  # dates as int64 nanoseconds
    else:
        one, two = one.to_numpy(), two.to_numpy()
    out = {
        "missing_selected": values[mask].isna().mean(),  # reference: pandas isna().mean()
        "missing_rest": values[~mask].isna().mean(),
        "n_selected": len(one),
        "n_rest": len(two),
    }
    if len(one) == 0 or len(two) == 0:
        return out
    ks = stats.ks_2samp(one, two)  # reference: scipy.stats.ks_2samp
    en = len(one) * len(two) / (len(one) + len(two))
    out["statistic"] = ks.statistic
    out["p_value"] = stats.kstwobign.sf(math.sqrt(en) * ks.statistic)  # reference: scipy.stats.kstwobign
    a, b = pd.Series(one, dtype=float), pd.Series(two, dtype=float)
    a, b = a[np.isfinite(a)], b[np.isfinite(b)]
    # standardised mean difference with the pooled spread sqrt((s1^2 + s2^2) / 2) (recalled from memory:
    # the usual form for comparing two groups); reference: pandas mean and var (ddof=1)
    spread = math.sqrt((a.var() + b.var()) / 2) if len(a) > 1 and len(b) > 1 else float("nan")
    out["smd"] = (a.mean() - b.mean()) / spread if spread > 0 else float("nan")
    return out


def reference_labels(values: pd.Series, mask: np.ndarray) -> dict:
    """Total-variation distance and chi-square test of one label column, missing values as a label."""
    labels = values.astype(object).where(values.notna(), MISSING).astype(str)
    table = pd.crosstab(pd.Series(mask, name="selected"), labels)  # reference: pandas.crosstab
    test = stats.chi2_contingency(table.to_numpy(), correction=False)  # reference: scipy chi2_contingency
    shares = table.div(table.sum(axis=1), axis=0)
    # reference: definition of the total-variation distance, half the L1 distance of the two distributions
    tv = 0.5 * (shares.loc[True] - shares.loc[False]).abs().sum()
    return {
        "statistic": tv,
        "chi2": test.statistic,
        "p_value": test.pvalue,
        "n_selected": int(mask.sum()),
        "n_rest": int((~mask).sum()),
        "missing_selected": values[mask].isna().mean(),  # reference: pandas isna().mean()
        "missing_rest": values[~mask].isna().mean(),
    }


def check_against_references(df: pd.DataFrame, mask: np.ndarray) -> pd.DataFrame:
    columns = encode_frame(df)
    got = contrast.compare(columns, mask).set_index("axis")
    for name, col in columns.items():
        row = got.loc[name]
        if col.kind in ("category", "boolean"):
            ref = reference_labels(df[name], mask)
            assert row["measure"] == "total_variation" and np.isnan(row["smd"])
        else:
            ref = reference_numbers(df[name], mask)
            assert row["measure"] == "ks" and np.isnan(row["chi2"])
            if "statistic" not in ref:
                assert np.isnan(row["statistic"]) and np.isnan(row["p_value"])
        for key, value in ref.items():
            if isinstance(value, float) and np.isnan(value):
                assert np.isnan(row[key]), (name, key)
            else:
                assert row[key] == pytest.approx(value, rel=1e-9, abs=1e-12), (name, key)
    stat = got["statistic"].to_numpy()
    finite = stat[~np.isnan(stat)]
    assert (np.diff(finite) <= 0).all() and not np.isnan(stat[: len(finite)]).any()  # most different first
    return got


# -- open data: Fisher's iris (1936) as shipped with scikit-learn ------------------------------------


def test_iris_setosa_by_petal_length():
    datasets = pytest.importorskip("sklearn.datasets")
    bunch = datasets.load_iris(as_frame=True)
    iris = bunch.frame.drop(columns="target")
    iris["species"] = pd.Categorical(bunch.target_names[bunch.target])
    w = aw.AxesWidget(iris)
    w.ranges = {"petal length (cm)": [[None, 2.5]]}  # setosa petals are shorter than 2 cm, the others longer
    assert w.count == 50 and set(iris["species"][w.mask]) == {"setosa"}
    table = w.contrast()
    order = list(table["axis"])
    for petal in ("petal length (cm)", "petal width (cm)"):
        assert order.index(petal) < order.index("sepal width (cm)")
    got = table.set_index("axis")
    # setosa's petals do not overlap the other species' (published fact of the data set, recalled from
    # memory: petal length 1.0-1.9 cm vs 3.0-6.9 cm): a KS distance of 1
    assert got.loc["petal width (cm)", "statistic"] == 1.0
    assert got.loc["species", "statistic"] == 1.0  # every selected row is setosa, no other row is
    assert got.loc["petal length (cm)", "brushed"] and not got.loc["sepal width (cm)", "brushed"]
    # setosa's sepals are wider than the others' (the sign of the SMD), its petals narrower
    assert got.loc["sepal width (cm)", "smd"] > 0 > got.loc["petal width (cm)", "smd"]
    check_against_references(iris, w.mask)


# -- random frames against scipy -----------------------------------------------------------------------


@st.composite
def frames(draw):
    n = draw(st.integers(2, 60))
    mask = np.array(draw(st.lists(st.booleans(), min_size=n, max_size=n)))
    picked = draw(st.integers(0, n - 1))
    mask[picked] = True  # at least one row selected and one left out
    mask[(picked + draw(st.integers(1, n - 1))) % n] = False
    number = st.one_of(st.sampled_from([0.0, 1.5, -2.0, np.nan, np.inf]), st.floats(-1e6, 1e6))
    df = pd.DataFrame(
        {
            "x": draw(st.lists(number, min_size=n, max_size=n)),
            "k": draw(st.lists(st.integers(0, 4), min_size=n, max_size=n)),
            "label": draw(st.lists(st.sampled_from(["a", "b", "c", None]), min_size=n, max_size=n)),
            "flag": draw(st.lists(st.booleans(), min_size=n, max_size=n)),
            "when": pd.to_datetime(
                draw(st.lists(st.integers(0, 4 * 10**9), min_size=n, max_size=n)), unit="s", utc=True
            ),
        }
    )
    return df, mask


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(frames())
def test_random_frames_match_scipy(case):
    df, mask = case
    check_against_references(df, mask)


def test_larger_frame_with_missing_values():
    rng = np.random.default_rng(4)
    n = 20_000
    mask = rng.random(n) < 0.2
    x = rng.normal(size=n) + 0.08 * mask  # a small shift: a p-value far from 0, where it can be compared
    x[rng.random(n) < 0.05 + 0.1 * mask] = np.nan
    df = pd.DataFrame(
        {
            "x": x,
            "site": pd.Categorical(rng.choice(["north", "south", "east"], n)).add_categories("unused"),
            "when": pd.Timestamp("2024-01-01") + pd.to_timedelta(rng.integers(0, 10**6, n), unit="s"),
            "lag": pd.to_timedelta(rng.integers(0, 500, n), unit="min"),
        }
    )
    df.loc[rng.random(n) < 0.1, "site"] = None
    got = check_against_references(df, mask).loc["x"]
    assert got["missing_selected"] > got["missing_rest"]
    one, two = x[mask & ~np.isnan(x)], x[~mask & ~np.isnan(x)]
    asymp = stats.ks_2samp(one, two, method="asymp").pvalue  # reference: scipy.stats.ks_2samp, asymptotic
    # scipy's asymptotic mode uses the finite-n distribution at round(n1 n2 / (n1 + n2)), ours the limit
    assert 0.01 < asymp < 0.99 and got["p_value"] == pytest.approx(asymp, abs=0.01)


# -- the two distribution tails against scipy -----------------------------------------------------------


@pytest.mark.parametrize("z", [0.0, 0.05, 0.3, 0.7, 0.99, 1.0, 1.36, 2.0, 4.0, 9.0])
def test_kolmogorov_tail(z):
    ref = stats.kstwobign.sf(z)  # reference: scipy.stats.kstwobign
    assert contrast.kolmogorov_sf(z) == pytest.approx(ref, rel=1e-10, abs=1e-15)


@pytest.mark.parametrize("dof", [1, 2, 3, 7, 30, 99, 1000])
@pytest.mark.parametrize("quantile", [1e-6, 0.01, 0.3, 0.5, 0.9, 0.999])
def test_chi2_tail(dof, quantile):
    x = stats.chi2.isf(quantile, dof)
    assert contrast.chi2_sf(x, dof) == pytest.approx(quantile, rel=1e-8)  # reference: scipy.stats.chi2
    assert contrast.chi2_sf(0.0, dof) == 1.0 and contrast.chi2_sf(5.0, 0) == 1.0


# -- results that are not a ranking ---------------------------------------------------------------------


def test_nothing_or_everything_selected_is_refused():
    w = aw.AxesWidget(pd.DataFrame({"a": [1.0, 2.0, 3.0], "b": ["x", "y", "x"]}))
    with pytest.raises(ValueError, match="3 of 3 rows are selected"):
        w.contrast()
    w.ranges = {"a": [[10.0, 20.0]]}
    assert w.count == 0
    with pytest.raises(ValueError, match="0 of 3 rows are selected"):
        w.contrast()
    with pytest.raises(ValueError, match="1-D bool array"):
        contrast.compare(w._columns, np.array([1, 0, 1]))


def test_axis_without_values_in_a_group_sorts_last():
    df = pd.DataFrame({"a": [1.0, 2.0, 3.0, 4.0], "gone": [np.nan, np.nan, 5.0, 6.0]})
    w = aw.AxesWidget(df)
    w.ranges = {"a": [[None, 2.0]]}
    got = w.contrast()
    assert list(got["axis"]) == ["a", "gone"]
    last = got.iloc[-1]
    assert np.isnan(last["statistic"]) and last["n_selected"] == 0 and last["missing_selected"] == 1.0
    assert got.attrs == {"selected": 2, "rows": 4}
