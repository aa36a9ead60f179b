"""Selections as objects: query round trip, named groups, label column, change callbacks."""

from __future__ import annotations

import string

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import axeswidget as aw


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(3000, seed=2)


def test_query_reproduces_a_mixed_selection(fleet):
    w = aw.AxesWidget(fleet)
    w.ranges = {
        "site": ["Red Gully", "Alder Creek"],
        "sand_ppm": [[None, 50.5], [300, 900.25], None],
        "last_service": [["2025-05-01T06:30:00", None]],
        "fault": [False],
        "impeller_mm": [[200, 224]],
    }
    expr = w.to_query()
    # reference: pandas DataFrame.query evaluates the expression independently of the widget
    pd.testing.assert_frame_equal(fleet.query(expr), w.selected)


def test_query_of_an_empty_selection_keeps_every_row(fleet):
    w = aw.AxesWidget(fleet)
    assert len(fleet.query(w.to_query())) == len(fleet)  # reference: DataFrame.query


def test_query_quotes_awkward_names_and_refuses_what_query_cannot_name():
    df = pd.DataFrame({"flow rate (m³/h)": [1.0, 2.0, 3.0], 'it\'s "x"': ["a", "b", "a"], 5: [1.0, 2.0, 3.0]})
    w = aw.AxesWidget(df, ranges={"flow rate (m³/h)": [[1.5, None]], 'it\'s "x"': ["a"]})
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)  # reference: DataFrame.query
    w.ranges = {"5": [[1, 2]]}
    with pytest.raises(ValueError, match="label 5 is not a string"):
        w.to_query()
    inf = aw.AxesWidget(pd.DataFrame({"Inf": [1.0, 2.0]}), ranges={"Inf": [[1, 1.5]]})
    with pytest.raises(ValueError, match="reads this name as infinity"):
        inf.to_query()


def test_tz_aware_and_duration_axes_in_query():
    rng = np.random.default_rng(1)
    t = pd.Timestamp("2024-01-01", tz="America/Chicago") + pd.to_timedelta(
        rng.integers(0, 1000, 200), unit="h"
    )
    df = pd.DataFrame({"t": t, "d": pd.to_timedelta(rng.integers(0, 10**9, 200), unit="ns")})
    w = aw.AxesWidget(df, ranges={"t": [["2024-01-10T00:00:00-06:00", "2024-01-30"]], "d": [[0.1, 0.5]]})
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)  # reference: DataFrame.query


NAMES = st.text(alphabet=string.ascii_letters + " _-()/.%'\"<>&", min_size=1, max_size=12).filter(
    lambda s: s.strip() == s and not s.isdigit() and s not in ("inf", "Inf")  # query reads these as infinity
)


@st.composite
def frame_and_selection(draw):
    n = draw(st.integers(1, 30))
    names = draw(st.lists(NAMES, min_size=3, max_size=3, unique=True))
    num = draw(st.lists(st.one_of(st.floats(-1e3, 1e3), st.none()), min_size=n, max_size=n))
    cats = draw(st.lists(st.one_of(st.sampled_from(["a", "b b", "c'c"]), st.none()), min_size=n, max_size=n))
    days = draw(st.lists(st.one_of(st.integers(0, 100), st.none()), min_size=n, max_size=n))
    df = pd.DataFrame(
        {
            names[0]: np.array([np.nan if v is None else v for v in num], dtype=float),
            names[1]: pd.Series(cats, dtype=object),
            names[2]: pd.Series(
                [None if d is None else pd.Timestamp("2024-01-01") + pd.Timedelta(hours=d) for d in days],
                dtype="datetime64[ns]",
            ),
        }
    )
    spans = draw(
        st.lists(st.tuples(st.one_of(st.none(), st.floats(-1e3, 1e3)), st.floats(-1e3, 1e3)), max_size=2)
    )
    spans = [[a, b] if a is None or a <= b else [b, a] for a, b in spans]
    lane = draw(st.booleans())
    picks = draw(st.lists(st.sampled_from(["a", "b b", "c'c", None]), unique=True, max_size=3))
    hours = sorted(draw(st.tuples(st.integers(0, 100), st.integers(0, 100))))
    return df, names, spans, lane, picks, hours


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(frame_and_selection())
def test_query_round_trip_property(case):
    df, names, spans, lane, picks, (h0, h1) = case
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        w = aw.AxesWidget(df)
    ranges = {names[0]: spans + ([None] if lane else [])}
    if names[1] in w.axes:
        ranges[names[1]] = [p for p in picks if p is None or p in w.column(names[1]).labels]
    t0 = pd.Timestamp("2024-01-01") + pd.Timedelta(hours=h0)
    ranges[names[2]] = [[t0.isoformat(), (pd.Timestamp("2024-01-01") + pd.Timedelta(hours=h1)).isoformat()]]
    w.ranges = ranges
    # reference: pandas DataFrame.query on the expression the widget wrote
    pd.testing.assert_frame_equal(df.query(w.to_query()), w.selected)


def test_named_groups_and_label_column(fleet):
    w = aw.AxesWidget(fleet)
    w.ranges = {"site": ["Red Gully"]}
    w.keep("sandy")
    w.ranges = {"install_year": [[2020, 2025]]}
    w.keep("young")
    assert list(w.saved) == ["sandy", "young"]
    w.recall("sandy")
    assert w.ranges == {"site": ["Red Gully"]}
    labels = w.labels()
    # reference: the same rule built with pandas — first kept group wins, others missing
    sandy = fleet["site"] == "Red Gully"
    young = fleet["install_year"].between(2020, 2025)
    ref = pd.Series(np.where(sandy, "sandy", np.where(young, "young", None)), index=fleet.index)
    ref = ref.astype(pd.CategoricalDtype(["sandy", "young"]))
    pd.testing.assert_series_equal(labels, ref, check_names=False)
    assert labels.index.equals(fleet.index)
    with_rest = w.labels(others="rest")
    assert list(with_rest.cat.categories) == ["sandy", "young", "rest"]
    assert (with_rest == "rest").sum() == int((~sandy & ~young).sum())
    w.forget("young")
    assert list(w.saved) == ["sandy"]
    with pytest.raises(KeyError, match="no saved selection 'young'"):
        w.recall("young")


def test_saved_selections_are_validated(fleet):
    w = aw.AxesWidget(fleet)
    import traitlets

    with pytest.raises(traitlets.TraitError, match="saved selection 'bad': unknown axis 'nope'"):
        w.saved = {"bad": {"nope": [[1, 2]]}}


def test_callbacks_are_throttled_while_dragging_and_always_get_the_release(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    seen = []
    w.on_change(lambda wid: seen.append((wid.count, wid.dragging)), every=60.0)
    # the page sends throttled updates while dragging ...
    for k, hi in enumerate([60, 61, 62, 63]):
        w.set_state({"ranges": {"flow_m3h": [[20, hi]]}, "edit_seq": k + 1, "dragging": True})
    assert len(seen) == 1  # the first one, then throttled
    # ... and the final one on release
    w.set_state({"ranges": {"flow_m3h": [[20, 64]]}, "edit_seq": 5, "dragging": False})
    assert seen[-1] == (int(fleet["flow_m3h"].between(20, 64).sum()), False)  # reference: Series.between
    assert len(seen) == 2
    # a release with the same ranges as the last throttled update still calls back
    w.set_state({"ranges": {"flow_m3h": [[20, 70]]}, "edit_seq": 6, "dragging": True})
    assert len(seen) == 2  # throttled
    w.set_state({"edit_seq": 7, "dragging": False})
    assert seen[-1] == (int(fleet["flow_m3h"].between(20, 70).sum()), False)  # reference: Series.between
    assert len(seen) == 3
    # changes from Python call at once
    w.ranges = {"head_m": [[10, 20]]}
    assert len(seen) == 4


def test_incremental_update_touches_one_axis(fleet, monkeypatch):
    from axeswidget import evaluate

    w = aw.AxesWidget(fleet)
    w.ranges = {
        n: [[-1e9, 1e9]] for n in ["flow_m3h", "head_m", "power_kw", "efficiency_pct", "vibration_mm_s"]
    }
    touched = []
    real = evaluate.axis_mask
    monkeypatch.setattr(
        evaluate, "axis_mask", lambda col, items: touched.append(col.name) or real(col, items)
    )
    r = dict(w.ranges)
    r["head_m"] = [[10.0, 30.0]]
    w.ranges = r
    assert touched == ["head_m"]
    np.testing.assert_array_equal(w.mask, fleet["head_m"].between(10, 30).to_numpy())  # reference: between


def test_resume_takes_over_the_previous_view_where_it_fits(fleet):
    old = aw.AxesWidget(fleet, color_by="site", view_mode="lines")
    old.ranges = {"site": ["Red Gully"], "flow_m3h": [[20, 80]]}
    old.keep("sandy")
    old.order = list(reversed(old.order))
    old.flipped = ["head_m"]
    again = aw.AxesWidget(fleet, resume=old)
    assert again.ranges == old.ranges and again.order == old.order and again.flipped == ["head_m"]
    assert again.color_by == "site" and again.view_mode == "lines" and list(again.saved) == ["sandy"]
    np.testing.assert_array_equal(again.mask, old.mask)
    # new data without some columns: what fits is kept, the rest is named in a warning
    smaller = fleet.drop(columns=["site"])
    with pytest.warns(UserWarning) as caught:
        third = aw.AxesWidget(smaller, resume=old)
    (message,) = [str(c.message) for c in caught]  # one warning names every drop
    assert message.startswith("axeswidget: could not take over all of the view: ")
    assert "axes gone (with their ranges): 'site'" in message
    assert "saved selection 'sandy' (range on 'site' (the axis is gone))" in message
    assert "color_by 'site' (no such axis now)" in message
    assert third.color_by == "" and third.saved == {}
    assert third.ranges == {"flow_m3h": [[20.0, 80.0]]}
    ref = smaller["flow_m3h"].between(20, 80)  # reference: Series.between
    np.testing.assert_array_equal(third.mask, ref.to_numpy())
    with pytest.raises(TypeError, match="resume= takes an AxesWidget"):
        aw.AxesWidget(fleet, resume="yesterday")
    with pytest.raises(TypeError, match="unknown option 'colour'"):
        aw.AxesWidget(fleet, colour="site")
