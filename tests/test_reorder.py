"""The widget's order API: association matrix, reorder, untangle (flips)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import traitlets
from scipy import stats

import axeswidget as aw


@pytest.fixture
def iris():
    datasets = pytest.importorskip("sklearn.datasets")
    # dataset: Fisher's iris (1936) as shipped with scikit-learn
    return datasets.load_iris(as_frame=True).frame.drop(columns="target")


def test_association_matches_scipy(iris):
    w = aw.AxesWidget(iris)
    m = w.association("spearman")
    ref, _ = stats.spearmanr(iris.to_numpy())  # reference: scipy.stats.spearmanr
    np.testing.assert_allclose(m.to_numpy(), ref, atol=1e-12)
    assert m.attrs["exact"] is True


def test_reorder_puts_petal_length_and_width_side_by_side(iris):
    w = aw.AxesWidget(iris)
    order = w.reorder("spearman")
    assert w.order == order and sorted(order) == sorted(iris.columns)
    i, j = order.index("petal length (cm)"), order.index("petal width (cm)")
    assert abs(i - j) == 1
    # published (recalled from memory): r(petal length, petal width) ≈ 0.96 in Fisher's iris data
    r = np.corrcoef(iris["petal length (cm)"], iris["petal width (cm)"])[0, 1]  # reference: numpy.corrcoef
    assert r > 0.95
    pinned = w.reorder("spearman", first="sepal width (cm)")
    assert pinned[0] == "sepal width (cm)"
    with pytest.raises(ValueError, match="unknown axis 'nope'"):
        w.reorder(first="nope")


def test_crossings_order_and_minimising(iris):
    w = aw.AxesWidget(iris)
    fewest = w.reorder("crossings")
    cross = w.association("crossings")
    total = sum(cross.loc[a, b] for a, b in zip(fewest, fewest[1:], strict=False))
    # reference: brute force over all orders of the 4 axes
    import itertools

    best = min(
        sum(cross.loc[a, b] for a, b in zip(p, p[1:], strict=False))
        for p in itertools.permutations(iris.columns)
    )
    assert total == best
    most_different = w.reorder("spearman", maximize=False)
    assert sorted(most_different) == sorted(iris.columns)


def test_untangle_makes_every_neighbour_positive(iris):
    w = aw.AxesWidget(iris)
    w.order = ["sepal width (cm)", "petal length (cm)", "sepal length (cm)", "petal width (cm)"]
    flips = w.untangle()
    assert w.flipped == flips and flips
    for a, b in zip(w.order, w.order[1:], strict=False):
        rho = stats.spearmanr(iris[a], iris[b]).statistic  # reference: scipy.stats.spearmanr
        sign = -1 if (a in flips) != (b in flips) else 1
        assert sign * rho > 0


def test_flipped_is_validated():
    w = aw.AxesWidget(pd.DataFrame({"a": [1.0, 2.0], "b": [2.0, 1.0]}))
    with pytest.raises(traitlets.TraitError, match="unknown axis 'c' in flipped"):
        w.flipped = ["c"]
    w.flipped = ["a", "a"]
    assert w.flipped == ["a"]


def test_association_for_category_axes_uses_mutual_information():
    fleet = aw.demo.pump_fleet(2000, seed=3)
    w = aw.AxesWidget(fleet, axes=["site", "sand_ppm", "water_temp_c"])
    mi = w.association("mutual_info")
    from sklearn.metrics import normalized_mutual_info_score

    # reference: sklearn normalized_mutual_info_score (geometric) on the same 16 equal-frequency bins
    sand = fleet["sand_ppm"]
    ok = sand.notna()
    bins = pd.qcut(sand[ok], 16, labels=False, duplicates="drop")
    ref = normalized_mutual_info_score(fleet["site"][ok].cat.codes, bins, average_method="geometric")
    assert mi.loc["site", "sand_ppm"] == pytest.approx(ref, abs=1e-9)
    assert mi.loc["site", "sand_ppm"] > mi.loc["site", "water_temp_c"] * 0.5


def test_axis_domains_of_iris_match_the_published_summary(iris):
    w = aw.AxesWidget(iris)
    # UCI iris.names summary statistics: min/max per measurement (cm)
    published = {
        "sepal length (cm)": (4.3, 7.9),
        "sepal width (cm)": (2.0, 4.4),
        "petal length (cm)": (1.0, 6.9),
        "petal width (cm)": (0.1, 2.5),
    }
    for name, (lo, hi) in published.items():
        col = w.column(name)
        assert (col.lo, col.hi) == pytest.approx((lo, hi))
    # UCI iris.names means 5.84, 3.05, 3.76, 1.20: the mean of the selected rows with no range
    # set is the mean of all rows (the published means are those of the whole data set)
    means = w.selected.mean().round(2).tolist()
    assert means == pytest.approx([5.84, 3.05, 3.76, 1.20], abs=0.011)


def test_association_reads_the_widgets_own_columns():
    # a label column whose most frequent label is not the first in sorted order: the widget's axis puts
    # the most frequent label first, and the measures use that axis order (the columns it classified)
    rng = np.random.default_rng(8)
    n = 500
    word = rng.choice(["pear", "apple", "fig"], n, p=[0.6, 0.3, 0.1])
    value = np.where(word == "pear", 0.0, np.where(word == "apple", 1.0, 2.0)) + rng.normal(size=n)
    df = pd.DataFrame({"word": word, "value": value})
    w = aw.AxesWidget(df)
    labels = w.column("word").labels
    assert labels == ["pear", "apple", "fig"]
    axis_codes = pd.Series(word).map({lab: i for i, lab in enumerate(labels)})
    ref = stats.spearmanr(axis_codes, value).statistic  # reference: scipy.stats.spearmanr on axis codes
    got = w.association("spearman")
    assert got.loc["word", "value"] == pytest.approx(ref, abs=1e-12)
    sorted_codes = pd.factorize(pd.Series(word), sort=True)[0]
    other = stats.spearmanr(sorted_codes, value).statistic  # reference: scipy, sorted label order
    assert abs(other - ref) > 0.1  # the two label orders give different answers; the widget's is used
