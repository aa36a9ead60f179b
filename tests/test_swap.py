"""Data swaps and resume=: one carry-over rule, all or nothing, every drop named in one warning (issue 12)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw
from axeswidget import switch as switch_module
from tests.widget_state import widget_state

state_of = widget_state


def only_warning(caught) -> str:
    (message,) = [str(c.message) for c in caught]
    return message


@pytest.fixture
def old():
    return pd.DataFrame(
        {
            "when": pd.date_range("2024-01-01", periods=4, freq="D", tz="UTC"),
            "size": [1.0, 2.0, 3.0, 4.0],
            "site": ["a", "b", "c", "a"],
            "k": [1, 2, 3, 4],
            "took": pd.to_timedelta([10, 20, 30, 40], unit="s"),
        }
    )


def test_one_rule_for_every_kind_and_every_drop_named_once(old):
    w = aw.AxesWidget(old, log_axes=["size"], color_by="site", bundle_by="site")
    w.ranges = {
        "when": [["2024-01-02T00:00:00+00:00", "2024-01-03T00:00:00+00:00"]],
        "size": [[2.0, 3.5]],
        "site": ["b", "c"],
        "k": [[2, 3]],
        "took": [[15.0, 35.0]],
    }
    w.keep("mid")
    w.flipped = ["size", "site"]
    w.pinned = 3
    new = pd.DataFrame(
        {
            "when": pd.date_range("2024-01-01", periods=3, freq="D"),  # now naive
            "size": [-1.0, 2.5, 9.0],  # no longer positive: log scale goes
            "site": ["a", "b", "a"],  # label "c" is gone
            "k": [1.5, 2.25, 2.5],  # integers became continuous
            "took": pd.to_timedelta([100, 200, 300], unit="s"),  # the range misses the new data
        }
    )
    with pytest.warns(UserWarning) as caught:
        w.data = new
    message = only_warning(caught)
    assert message.startswith("axeswidget: the new data changes the view: ")
    for part in [
        "range on 'when' (the time zone changed from UTC to None)",
        "label 'c' on 'site' (gone from the new data)",
        "range on 'k' kept on an axis that is now number",
        "range on 'k' clipped to the new data: [2.0, 2.5]",
        "range [15.0, 35.0] on 'took' (misses the new data)",
        "log scale on 'size' (no longer an axis of positive numbers)",
        "pinned row 3 (the new table has 3 rows)",
        "saved selection 'mid' (",
    ]:
        assert part in message, part
    assert w.ranges == {"size": [[2.0, 3.5]], "site": ["b"], "k": [[2.0, 2.5]]}  # k clipped: the data shrank
    assert w.log_axes == [] and w.pinned == -1 and w.pinned_index is None
    assert w.saved == {} and w.flipped == ["size", "site"]
    assert w.color_by == "site" and w.bundle_by == "site"
    ref = (
        new["size"].between(2.0, 3.5) & new["site"].isin(["b"]) & new["k"].between(2, 3)
    )  # reference: pandas
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert w.count == int(ref.sum())
    w.labels()  # kept selections all fit the new data


def test_a_date_range_that_misses_the_new_data_is_dropped_like_a_number_range():
    old = pd.DataFrame({"d": pd.date_range("2024-01-01", periods=3), "x": [1.0, 2.0, 3.0]})
    w = aw.AxesWidget(old, ranges={"d": [["2024-01-02", "2024-01-03"]], "x": [[2.0, 3.0]]})
    new = pd.DataFrame({"d": pd.date_range("2030-01-01", periods=3), "x": [10.0, 11.0, 12.0]})
    with pytest.warns(UserWarning) as caught:
        w.data = new
    message = only_warning(caught)
    assert "on 'd' (misses the new data)" in message and "on 'x' (misses the new data)" in message
    assert w.ranges == {} and w.count == 3


def test_partly_outside_ranges_are_clipped_and_named_for_dates_too():
    old = pd.DataFrame({"d": pd.date_range("2024-01-01", periods=10)})
    w = aw.AxesWidget(old, ranges={"d": [["2024-01-05", None], [None, "2024-01-02"]]})
    new = pd.DataFrame({"d": pd.date_range("2024-01-04", periods=3)})
    with pytest.warns(
        UserWarning, match=r"range \[None, '2024-01-02T00:00:00'\] on 'd' \(misses the new data\)"
    ):
        w.data = new
    assert w.ranges == {"d": [["2024-01-05T00:00:00", None]]}  # an open end is never clipped
    ref = new["d"] >= pd.Timestamp("2024-01-05")  # reference: pandas comparison
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    w.ranges = {"d": [["2024-01-03", "2024-01-05"]]}  # the data now starts on 01-04
    later = pd.DataFrame({"d": pd.date_range("2024-01-05", periods=5)})  # and then on 01-05: it shrank
    with pytest.warns(
        UserWarning,
        match=r"range on 'd' clipped to the new data: \['2024-01-05T00:00:00', '2024-01-05T00:00:00'\]",
    ):
        w.data = later
    ref = later["d"].between("2024-01-03", "2024-01-05")  # reference: Series.between
    np.testing.assert_array_equal(w.mask, ref.to_numpy())


def test_a_failing_swap_changes_nothing(old, monkeypatch):
    w = aw.AxesWidget(old, color_by="site", ranges={"size": [[2, 3]], "site": ["a", "b"]})
    w.keep("g")
    w.order = list(reversed(w.order))
    w.pinned = 2
    before = state_of(w)
    with pytest.raises(aw.ColumnError, match="no column that can be drawn"):
        w.data = pd.DataFrame({"z": [1j, 2j]})
    assert state_of(w) == before
    with pytest.raises(TypeError, match="cannot read a table from str"):
        w.data = "not a table"
    assert state_of(w) == before

    # a failure while the new table is being committed: everything is put back
    def broken(columns, n):
        raise RuntimeError("disk on fire")

    monkeypatch.setattr(switch_module, "table_trait", broken)
    with pytest.raises(RuntimeError, match="disk on fire"):
        w.data = old.iloc[:2]
    monkeypatch.undo()
    assert state_of(w) == before
    ref = old["size"].between(2, 3) & old["site"].isin(["a", "b"])  # reference: pandas between / isin
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert w.count == int(ref.sum()) == int(w.mask.sum())


def test_a_failing_trait_in_the_commit_rolls_back(old, monkeypatch):
    w = aw.AxesWidget(old, ranges={"size": [[2, 3]]})
    before = state_of(w)
    real = switch_module.carry_over

    def bad_view(*args):
        view, notes = real(*args)
        return {**view, "opacity": 7.0}, notes  # refused by the opacity validator inside the commit

    monkeypatch.setattr(switch_module, "carry_over", bad_view)
    with pytest.raises(Exception, match="opacity must be between 0 and 1"):
        w.data = old.iloc[:3]
    assert state_of(w) == before


def test_swap_and_resume_share_one_rule(old):
    new = old.drop(columns=["site"]).iloc[1:]
    a = aw.AxesWidget(old, ranges={"size": [[0.0, 3.0]], "site": ["a"], "when": [["2024-01-01", None]]})
    with pytest.warns(UserWarning) as caught_resume:
        b = aw.AxesWidget(new, resume=a)
    with pytest.warns(UserWarning) as caught_swap:
        a.data = new
    tail = lambda caught: only_warning(caught).split(": ", 2)[-1]  # noqa: E731
    assert tail(caught_resume) == tail(caught_swap)
    assert a.ranges == b.ranges and a.order == b.order
    np.testing.assert_array_equal(a.mask, b.mask)
    assert "range on 'size' clipped to the new data: [2.0, 3.0]" in tail(caught_swap)


def test_resume_is_all_or_nothing_and_leaves_the_old_widget_alone(old):
    a = aw.AxesWidget(old, ranges={"size": [[2, 3]]})
    before = state_of(a)
    with pytest.raises(aw.ColumnError):
        aw.AxesWidget(pd.DataFrame({"z": [1j]}), resume=a)
    with pytest.warns(UserWarning, match=r"could not take over all of the view: range on 'size' clipped"):
        b = aw.AxesWidget(old.iloc[:2], resume=a)
    assert state_of(a) == before
    assert b.count == int(old.iloc[:2]["size"].between(2, 3).sum())  # reference: Series.between
