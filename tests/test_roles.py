"""Column roles on open tables: class codes are discrete, identifiers and free text are skipped unless
named, measurements stay continuous; single values select on discrete axes."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from sklearn.datasets import load_breast_cancer, load_iris, load_wine

import axeswidget as aw


def _build(frame, **kw):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        w = aw.AxesWidget(frame, **kw)
    return w, [str(c.message) for c in caught]


@pytest.mark.parametrize(
    "loader, classes",
    [
        (load_breast_cancer, [0, 1]),  # reference: scikit-learn's breast cancer data (Wisconsin, 2 classes)
        (load_wine, [0, 1, 2]),  # reference: scikit-learn's wine data (3 cultivars)
        (load_iris, [0, 1, 2]),  # reference: scikit-learn's iris data (Fisher 1936, 3 species)
    ],
)
def test_sklearn_targets_are_discrete_and_measurements_continuous(loader, classes):
    frame = loader(as_frame=True).frame
    w, caught = _build(frame)
    assert not caught  # nothing in these tables looks like an identifier
    kinds = {a: w.column(a).kind for a in w.axes}
    assert kinds.pop("target") == "integer"
    assert w.column("target").discrete == classes
    assert set(kinds.values()) == {"number"}  # every measurement stays continuous


def test_sklearn_target_with_float_codes_and_an_id_column():
    iris = load_iris(as_frame=True).frame  # reference: scikit-learn's iris data, 150 rows
    iris["species_code"] = iris["target"].astype(float) + 1.0  # 1.0/2.0/3.0 as floats
    iris.loc[[5, 70], "species_code"] = np.nan
    iris.insert(0, "sample_id", np.arange(1000, 1150))
    w, caught = _build(iris)
    assert "sample_id" not in w.axes
    assert len(caught) == 1 and "'sample_id'" in caught[0] and "identifier" in caught[0]
    code = w.column("species_code")
    assert code.kind == "integer" and code.discrete == [1, 2, 3] and code.n_missing == 2
    # named, the identifier is drawn as before
    named, caught = _build(iris, axes=["sample_id", "petal length (cm)"])
    assert named.axes == ["sample_id", "petal length (cm)"] and not caught
    assert named.column("sample_id").kind == "number"


def test_penguins_roles():
    palmerpenguins = pytest.importorskip("palmerpenguins")
    penguins = palmerpenguins.load_penguins()  # reference: palmerpenguins (Horst, Hill & Gorman 2020)
    w, caught = _build(penguins)
    assert not caught
    kinds = {a: w.column(a).kind for a in w.axes}
    assert kinds == {
        "species": "category",
        "island": "category",
        "bill_length_mm": "number",
        "bill_depth_mm": "number",
        "flipper_length_mm": "number",  # whole millimetres, but 55 distinct values: a measurement
        "body_mass_g": "number",
        "sex": "category",
        "year": "integer",
    }
    assert w.column("year").discrete == [2007, 2008, 2009]


def test_penguins_raw_free_text_and_ids():
    palmerpenguins = pytest.importorskip("palmerpenguins")
    raw = palmerpenguins.load_penguins_raw()  # reference: palmerpenguins raw table (17 columns)
    raw["note"] = [f"bird {i} seen near the colony at dusk, banded" for i in range(len(raw))]
    w, caught = _build(raw)
    assert len(caught) == 1  # one warning for every skipped column
    assert "'note'" in caught[0] and "'note'" not in w.axes
    # repeated comments and "Individual ID" (190 of 344 distinct) are labels, not identifiers
    assert w.column("Individual ID").kind == "category" and w.column("Comments").kind == "category"
    assert w.column("Sample Number").kind == "number"
    # the isotope ratios are nearly all distinct floats: measurements, never identifiers
    assert w.column("Delta 15 N (o/oo)").kind == "number"


def test_identifier_rules():
    n = 400
    rng = np.random.default_rng(3)
    frame = pd.DataFrame(
        {
            "row": rng.permutation(n),  # every value once over its span: a row number
            "customer_id": rng.choice(10**9, n, replace=False),  # sparse but named as an id
            "price_cents": rng.choice(10**7, n, replace=False),  # sparse, all distinct: a measurement
            "token": [f"t{v:08x}" for v in rng.choice(2**31, n, replace=False)],  # text ids
            "grade": rng.integers(1, 4, n),  # 1/2/3 codes
            "x": rng.normal(size=n),
        }
    )
    w, caught = _build(frame)
    assert w.axes == ["price_cents", "grade", "x"]
    assert len(caught) == 1
    for name in ("'row'", "'customer_id'", "'token'"):
        assert name in caught[0]
    assert w.column("grade").kind == "integer" and w.column("grade").discrete == [1, 2, 3]
    # few rows: nothing is called an identifier
    small, caught = _build(frame.head(30))
    assert "row" in small.axes and "token" in small.axes and not caught


def test_whole_float_rules():
    n = 300
    rng = np.random.default_rng(5)
    frame = pd.DataFrame(
        {
            "label": rng.integers(0, 3, n).astype(float),
            "many_whole": rng.integers(0, 200, n).astype(float),  # whole, but many values
            "halves": rng.integers(0, 3, n) / 2,  # few values, not whole
        }
    )
    frame.loc[::17, "label"] = np.nan
    w, _ = _build(frame)
    assert w.column("label").kind == "integer" and w.column("label").discrete == [0, 1, 2]
    assert w.column("many_whole").kind == "number" and w.column("halves").kind == "number"
    # a range on the discrete float axis is exact: reference pandas.Series.between
    w.ranges = {"label": [[1, 2]]}
    np.testing.assert_array_equal(w.mask, frame["label"].between(1, 2).to_numpy())


def test_single_values_on_discrete_axes():
    wine = load_wine(as_frame=True).frame  # reference: scikit-learn's wine data
    w, _ = _build(wine)
    target = wine["target"]
    for given in (1, [1], np.int64(1)):
        w.ranges = {"target": given}
        assert w.ranges == {"target": [[1, 1]]}
        np.testing.assert_array_equal(w.mask, target.eq(1).to_numpy())  # reference: pandas.Series.eq
    w.ranges = {"target": [0, [2, 2]]}
    np.testing.assert_array_equal(w.mask, target.isin([0, 2]).to_numpy())  # reference: pandas.Series.isin
    assert len(wine.query(w.to_query())) == int(target.isin([0, 2]).sum())  # reference: DataFrame.query
    # two bare numbers stay the [lo, hi] shorthand
    w.ranges = {"target": [0, 2]}
    assert w.ranges == {"target": [[0, 2]]} and w.count == len(wine)
    # on a continuous axis a single value is refused with the reason
    with pytest.raises(Exception, match="single values are taken on integer axes only"):
        w.ranges = {"alcohol": [13.0]}
    assert w.ranges == {"target": [[0, 2]]}  # nothing changed
