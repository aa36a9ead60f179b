"""Level-1 browser tests: axis names (and labels) that are keys of every JavaScript object.

A page that keeps data-keyed records in plain objects reads `sel["constructor"]` as Object's
constructor and treats `"__proto__"` as the prototype: drawing and brushing break, and a range set from
Python on `__proto__` is neither drawn nor kept (issue 12, item 1).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw

pytestmark = pytest.mark.browser

NAMES = ["constructor", "toString", "valueOf", "hasOwnProperty", "__proto__"]
LABELS = ["__proto__", "constructor", "toString", "plain"]


def _numbers(n=600):
    rng = np.random.default_rng(5)
    return pd.DataFrame({name: rng.uniform(0, 100, n) for name in NAMES})


def _categories(n=600):
    rng = np.random.default_rng(6)
    return pd.DataFrame({name: rng.choice(LABELS, n) for name in NAMES})


def test_number_axes_named_like_object_keys_are_brushed_and_set_from_python(show):
    frame = _numbers()
    w = aw.AxesWidget(frame)
    s = show(w)
    assert [a["name"] for a in s.layout()["axes"]] == NAMES
    # brushed on the page
    s.drag("constructor", 70, 30)
    s.drag("__proto__", 60, 20)
    s.round_trip()
    assert set(w.ranges) == {"constructor", "__proto__"}
    (c_lo, c_hi), (p_lo, p_hi) = w.ranges["constructor"][0], w.ranges["__proto__"][0]
    assert 27 < c_lo < 33 and 67 < c_hi < 73 and 17 < p_lo < 23 and 57 < p_hi < 63
    # reference: pandas.Series.between, both ends inclusive
    ref = frame["constructor"].between(c_lo, c_hi) & frame["__proto__"].between(p_lo, p_hi)
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    # set from Python: drawn on every axis, `__proto__` included
    w.ranges = {name: [[10.0 + 10 * i, 50.0 + 5 * i]] for i, name in enumerate(NAMES)}
    s.pull_from_kernel()
    drawn = {b["name"] for b in s.layout()["bands"]}
    assert drawn == set(NAMES)
    # a page edit on one axis keeps what Python set on the others
    s.drag("valueOf", 90, 80)
    s.round_trip()
    assert set(w.ranges) == set(NAMES)
    assert w.ranges["__proto__"] == [[50.0, 70.0]] and w.ranges["hasOwnProperty"] == [[40.0, 65.0]]
    kept, (lo, hi) = w.ranges["valueOf"]  # a second range beside the one Python set
    assert kept == [30.0, 60.0] and 77 < lo < 83 and 87 < hi < 93
    ref = np.ones(len(frame), dtype=bool)
    for name in NAMES:
        ref &= np.logical_or.reduce([frame[name].between(a, b).to_numpy() for a, b in w.ranges[name]])
    np.testing.assert_array_equal(w.mask, ref)
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    assert not s.errors


def _click_band(s, axis: str, label: str):
    lay = s.layout()
    i = [a["name"] for a in lay["axes"]].index(axis)
    band = next(b for b in lay["categoryBands"][i] if b["label"] == label)
    s.page.mouse.click(s.x_of(axis), s.canvas_box()["y"] + (band["y0"] + band["y1"]) / 2)
    s.settle()


def test_category_axes_named_like_object_keys_are_drawn_brushed_and_set_from_python(show):
    frame = _categories()
    w = aw.AxesWidget(frame)
    s = show(w)
    lay = s.layout()
    assert [a["name"] for a in lay["axes"]] == NAMES
    # every axis draws its bands with their labels (none lost to a throwing frame)
    for bands in lay["categoryBands"]:
        assert sorted(b["label"] for b in bands) == sorted(LABELS)
    # brushed on the page: a band on `constructor`, two on `__proto__`
    _click_band(s, "constructor", "toString")
    _click_band(s, "__proto__", "__proto__")
    _click_band(s, "__proto__", "constructor")
    s.round_trip()
    assert set(w.ranges) == {"constructor", "__proto__"} and w.ranges["constructor"] == ["toString"]
    assert sorted(w.ranges["__proto__"]) == ["__proto__", "constructor"]
    # reference: pandas.Series.isin
    ref = frame["constructor"].isin(["toString"]) & frame["__proto__"].isin(["__proto__", "constructor"])
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    # set from Python on every axis: drawn as picked
    w.ranges = {name: [LABELS[i % len(LABELS)]] for i, name in enumerate(NAMES)}
    s.pull_from_kernel()
    picked = s.layout()["picked"]
    assert set(picked) == set(NAMES)
    for name in NAMES:
        assert len(picked[name]["bands"]) == 1
    # a page edit on one axis keeps what Python set on the others
    _click_band(s, "valueOf", "plain")
    s.round_trip()
    assert set(w.ranges) == set(NAMES)
    assert w.ranges["__proto__"] == [LABELS[4 % len(LABELS)]] and w.ranges["constructor"] == [LABELS[0]]
    assert sorted(w.ranges["valueOf"]) == sorted([LABELS[2], "plain"])
    ref = np.ones(len(frame), dtype=bool)
    for name in NAMES:
        ref &= frame[name].isin(w.ranges[name]).to_numpy()
    np.testing.assert_array_equal(w.mask, ref)
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    assert not s.errors
