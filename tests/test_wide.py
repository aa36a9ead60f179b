"""The `hidden` trait (axes hidden from the page) and the rows' index labels sent to the page."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
import traitlets as t

import axeswidget as aw
from axeswidget import tabletrait


@pytest.fixture
def frame():
    rng = np.random.default_rng(4)
    return pd.DataFrame(
        {
            "a": rng.normal(size=50),
            "b": rng.integers(0, 9, 50),
            "c": rng.choice(["x", "y", "z"], 50),
        },
        index=pd.Index([f"r{i}" for i in range(50)], name="run"),
    )


def test_hidden_axes_are_checked_and_never_filter_invisibly(frame):
    w = aw.AxesWidget(frame)
    w.hidden = ["b", "b"]
    assert w.hidden == ["b"]
    assert w.order == ["a", "b", "c"]  # order stays a full permutation
    with pytest.raises(t.TraitError, match="unknown axis 'nope' in hidden"):
        w.hidden = ["nope"]
    with pytest.raises(t.TraitError, match="cannot hide every axis"):
        w.hidden = ["a", "b", "c"]
    assert w.hidden == ["b"]  # a refused value changes nothing
    # no range on a hidden axis, either way round
    with pytest.raises(t.TraitError, match="axis 'b' is hidden"):
        w.ranges = {"b": [[1, 3]]}
    assert w.ranges == {} and w.count == len(frame)
    w.hidden = []
    w.ranges = {"b": [[1, 3]]}
    with pytest.raises(t.TraitError, match="cannot hide axis 'b': it has a range"):
        w.hidden = ["b"]
    assert w.hidden == [] and w.ranges == {"b": [[1, 3]]}
    # reference: pandas Series.between — the range still filters, visibly
    np.testing.assert_array_equal(w.mask, frame["b"].between(1, 3).to_numpy())
    assert w.get_state(["hidden"]) == {"hidden": []}


def test_hidden_is_carried_over_and_vanished_names_are_named(frame):
    w = aw.AxesWidget(frame)
    w.hidden = ["b", "c"]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        w.data = frame[["a", "b"]]
    assert w.hidden == ["b"]
    messages = [str(m.message) for m in caught]
    assert len(messages) == 1 and "hidden axes gone: 'c'" in messages[0]
    # resume= takes hidden over too; a table where only hidden axes are left shows them all
    w2 = aw.AxesWidget(frame, resume=w)
    assert w2.hidden == ["b"]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        w3 = aw.AxesWidget(frame[["b"]], resume=w)
    assert w3.hidden == []
    assert any("all are shown again" in str(m.message) for m in caught)


def test_the_page_gets_the_rows_index_labels(frame, monkeypatch):
    w = aw.AxesWidget(frame.assign(p=np.arange(1.0, 51.0)).iloc[::-1])
    spec = w.table["index"]
    # reference: pandas Index, as text — the label the page shows is the one df.loc takes
    assert spec == {"labels": [str(v) for v in frame.index[::-1]]}
    pos = 7
    assert frame.loc[spec["labels"][pos]].equals(frame.iloc[::-1].iloc[pos])
    w.log_axes = ["p"]  # re-encoding the table keeps its index part
    assert w.table["index"] == spec
    plain = aw.AxesWidget(frame.reset_index(drop=True).iloc[10:])
    # a RangeIndex travels as start and step: label = start + step * position
    assert plain.table["index"] == {"start": 10, "step": 1}
    monkeypatch.setattr(tabletrait, "INDEX_LABELS_MAX", 20)
    big = aw.AxesWidget(frame)
    assert "index" not in big.table  # too many labels to send: the page shows positions
