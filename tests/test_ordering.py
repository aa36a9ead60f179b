"""Tests for axeswidget.ordering (axis order and flips) against references from outside it.

Every check compares with an outside reference, named in a comment next to it: a brute-force search
over all permutations or flip sets, scipy, or a published fact.
"""

from __future__ import annotations

import itertools
from functools import cache

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from sklearn.datasets import load_iris

from axeswidget import measures, ordering

# ---------------------------------------------------------------------------------------------------------
# Brute-force references written out from the definitions
# ---------------------------------------------------------------------------------------------------------


@cache
def _all_paths(n, first=None):
    """Every permutation of range(n) (optionally starting at ``first``) as an array."""
    perms = itertools.permutations(range(n))
    if first is not None:
        perms = (p for p in perms if p[0] == first)
    return np.array(list(perms), dtype=np.int64)


def brute_best_score(m, maximize, absolute, first=None):
    """Best neighbour sum over all permutations (itertools.permutations), NaN counted as 0."""
    w = np.nan_to_num(np.asarray(m, dtype=float))
    if absolute:
        w = np.abs(w)
    paths = _all_paths(len(w), first)
    scores = w[paths[:, :-1], paths[:, 1:]].sum(axis=1)
    return scores.max() if maximize else scores.min()


def manual_path_score(m, order, absolute=True):
    """Neighbour sum along ``order`` written out with a Python loop over the DataFrame."""
    total = 0.0
    for a, b in zip(order[:-1], order[1:], strict=True):
        v = float(m.loc[a, b])
        total += abs(v) if absolute else v
    return total


def random_symmetric(n, seed):
    """Random symmetric matrix with mixed signs as a DataFrame with string names."""
    rng = np.random.default_rng(seed)
    m = rng.uniform(-1.0, 1.0, (n, n))
    m = (m + m.T) / 2.0
    np.fill_diagonal(m, 1.0)
    names = [f"a{i}" for i in range(n)]
    return pd.DataFrame(m, index=names, columns=names)


# ---------------------------------------------------------------------------------------------------------
# Axis order
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("n", range(3, 9))
@pytest.mark.parametrize("maximize", [True, False])
@pytest.mark.parametrize("absolute", [True, False])
def test_best_order_equals_brute_force(n, maximize, absolute):
    m = random_symmetric(n, seed=100 * n + 2 * maximize + absolute)
    order = ordering.best_order(m, maximize=maximize, absolute=absolute)
    assert sorted(order) == sorted(m.columns)
    score = manual_path_score(m, order, absolute)
    best = brute_best_score(m.to_numpy(), maximize, absolute)  # reference: itertools.permutations
    assert score == pytest.approx(best, abs=1e-9)
    assert ordering.path_score(m, order, absolute) == pytest.approx(score, abs=1e-12)


@pytest.mark.parametrize("n", [4, 7, 8])
@pytest.mark.parametrize("maximize", [True, False])
def test_best_order_with_first_pinned(n, maximize):
    m = random_symmetric(n, seed=n)
    pin = 2
    order = ordering.best_order(m, maximize=maximize, first=f"a{pin}")
    assert order[0] == f"a{pin}"
    best = brute_best_score(m.to_numpy(), maximize, True, first=pin)  # reference: itertools.permutations
    assert manual_path_score(m, order) == pytest.approx(best, abs=1e-9)
    heuristic = ordering.best_order(m, maximize=maximize, first=f"a{pin}", method="heuristic")
    assert heuristic[0] == f"a{pin}" and sorted(heuristic) == sorted(m.columns)


@pytest.mark.parametrize("seed", range(3))
def test_heuristic_at_nine_axes_vs_brute_force(seed):
    m = random_symmetric(9, seed=seed + 50)
    order = ordering.best_order(m, method="heuristic")
    best = brute_best_score(m.to_numpy(), True, True)  # reference: all 9! itertools.permutations
    # measured: nearest neighbour + 2-opt reached >= 0.99 of the optimum on these seeds
    assert manual_path_score(m, order) >= 0.98 * best


@pytest.mark.parametrize("seed", range(5))
def test_heuristic_at_twelve_axes_close_to_exact(seed):
    m = random_symmetric(12, seed=seed)
    exact = ordering.best_order(m)  # Held-Karp, itself checked against itertools.permutations above
    heuristic = ordering.best_order(m, method="heuristic")
    assert sorted(heuristic) == sorted(m.columns)
    # measured on seeds 0..39 of this generator: worst ratio 0.993, mean 0.9998; margin asserted: 0.98
    assert manual_path_score(m, heuristic) >= 0.98 * manual_path_score(m, exact)


def test_single_axis_and_nan_entries():
    one = pd.DataFrame([[1.0]], index=["only"], columns=["only"])
    assert ordering.best_order(one) == ["only"]
    m = random_symmetric(5, seed=9)
    m.loc["a1", "a3"] = m.loc["a3", "a1"] = np.nan
    order = ordering.best_order(m)
    best = brute_best_score(m.to_numpy(), True, True)  # reference: itertools.permutations, NaN as 0
    assert ordering.path_score(m, order) == pytest.approx(best, abs=1e-9)


def test_path_score_matches_manual_sum():
    m = random_symmetric(6, seed=21)
    order = ["a3", "a0", "a5", "a1"]
    for absolute in (True, False):
        expected = manual_path_score(m, order, absolute)  # reference: loop over DataFrame entries
        assert ordering.path_score(m, order, absolute) == pytest.approx(expected, abs=1e-12)


# ---------------------------------------------------------------------------------------------------------
# Flips
# ---------------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(3))
def test_suggest_flips_make_neighbours_positive_with_fewest_flips(seed):
    rng = np.random.default_rng(seed)
    n, k = 300, 7
    latent = rng.normal(size=n)
    signs = rng.choice([-1.0, 1.0], k)
    df = pd.DataFrame(
        {f"v{i}": signs[i] * latent + rng.normal(scale=0.8, size=n) for i in range(k)},
    )
    rho = measures.association(df, "spearman")
    order = ordering.best_order(rho)
    flips = ordering.suggest_flips(rho, order)
    flipped = df.copy()
    flipped[flips] = -flipped[flips]
    after = pd.DataFrame(stats.spearmanr(flipped).statistic, index=df.columns, columns=df.columns)  # scipy
    neighbours = [after.loc[a, b] for a, b in zip(order[:-1], order[1:], strict=True)]
    assert all(v > 0 for v in neighbours)
    # reference: brute force over all 2^k flip sets that make every neighbouring association positive
    fewest = min(
        sum(choice)
        for choice in itertools.product([0, 1], repeat=k)
        if all(
            rho.loc[a, b] * (-1) ** (choice[order.index(a)] + choice[order.index(b)]) > 0
            for a, b in zip(order[:-1], order[1:], strict=True)
        )
    )
    assert len(flips) == fewest


# ---------------------------------------------------------------------------------------------------------
# Open data: Fisher's iris (1936), as shipped with scikit-learn
# ---------------------------------------------------------------------------------------------------------


def test_iris_correlations_and_order():
    iris = load_iris(as_frame=True).frame.drop(columns="target")
    pearson = measures.association(iris, "pearson")
    np.testing.assert_allclose(pearson.to_numpy(), np.corrcoef(iris.to_numpy().T), atol=1e-12)  # numpy
    petal_l, petal_w, sepal_w = "petal length (cm)", "petal width (cm)", "sepal width (cm)"
    assert pearson.loc[petal_l, petal_w] > 0.95
    assert pearson.loc[sepal_w, petal_l] < 0
    # published values, recalled from memory (not looked up): r ~ 0.96 for petal length/petal width,
    # r ~ -0.43 for sepal width/petal length
    assert pearson.loc[petal_l, petal_w] == pytest.approx(0.96, abs=0.02)
    assert pearson.loc[sepal_w, petal_l] == pytest.approx(-0.43, abs=0.03)
    order = ordering.best_order(measures.association(iris, "spearman"), maximize=True, absolute=True)
    assert abs(order.index(petal_l) - order.index(petal_w)) == 1


# ---------------------------------------------------------------------------------------------------------
# Errors
# ---------------------------------------------------------------------------------------------------------


def test_errors_name_the_problem():
    m = random_symmetric(4, seed=1)
    with pytest.raises(ValueError, match="first='zz'"):
        ordering.best_order(m, first="zz")
    with pytest.raises(ValueError, match="square"):
        ordering.best_order(m.iloc[:3])
    asym = m.copy()
    asym.loc["a0", "a2"] = 5.0
    with pytest.raises(ValueError, match="not symmetric: \\('a0', 'a2'\\)"):
        ordering.best_order(asym)
    with pytest.raises(ValueError, match="no axes"):
        ordering.best_order(pd.DataFrame())
    with pytest.raises(ValueError, match="'a9'"):
        ordering.path_score(m, ["a0", "a9"])
    with pytest.raises(ValueError, match="'a1' appears more than once"):
        ordering.suggest_flips(m, ["a1", "a0", "a1"])
    with pytest.raises(ValueError, match="method"):
        ordering.best_order(m, method="fast")
