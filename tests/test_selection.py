"""The exact mask and the ranges contract, against pandas as the reference."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import traitlets
from hypothesis import given, settings
from hypothesis import strategies as st

import axeswidget as aw
from axeswidget.encode import encode_frame
from axeswidget.evaluate import MaskEvaluator
from axeswidget.selection import normalise


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(5000, seed=1)


def test_mask_matches_pandas_between_across_axes(fleet):
    w = aw.AxesWidget(fleet, axes=aw.demo.NUMERIC_AXES)
    w.ranges = {"flow_m3h": [[30, 90]], "vibration_mm_s": [[2.5, 6]]}
    # reference: pandas.Series.between (inclusive), AND across columns
    ref = fleet["flow_m3h"].between(30, 90) & fleet["vibration_mm_s"].between(2.5, 6)
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert w.count == int(ref.sum())
    pd.testing.assert_frame_equal(w.selected, fleet[ref])
    assert w.selected.index.equals(fleet.index[ref.to_numpy()])  # original index kept


def test_several_ranges_on_one_axis_combine_with_or(fleet):
    w = aw.AxesWidget(fleet, axes=["head_m", "power_kw"])
    w.ranges = {"head_m": [[10, 20], [40, 50]]}
    # reference: pandas.Series.between, OR within an axis
    ref = fleet["head_m"].between(10, 20) | fleet["head_m"].between(40, 50)
    np.testing.assert_array_equal(w.mask, ref.to_numpy())


def test_missing_values_are_never_inside_a_range(fleet):
    w = aw.AxesWidget(fleet, axes=["sand_ppm"])
    w.ranges = {"sand_ppm": [[-np.inf, np.inf]]}
    # reference: pandas.Series.notna — between() is False for NaN
    np.testing.assert_array_equal(w.mask, fleet["sand_ppm"].notna().to_numpy())


def test_ends_are_inclusive_on_exact_float64_values():
    df = pd.DataFrame({"x": [0.1, 0.2, 0.30000000000000004, 0.3]})
    w = aw.AxesWidget(df)
    w.ranges = {"x": [[0.2, 0.3]]}
    # reference: pandas.Series.between on the exact float64 values
    np.testing.assert_array_equal(w.mask, df["x"].between(0.2, 0.3).to_numpy())
    assert w.mask.tolist() == [False, True, False, True]


def test_incremental_update_recomputes_only_the_changed_axis(fleet, monkeypatch):
    from axeswidget import evaluate

    w = aw.AxesWidget(fleet, axes=aw.demo.NUMERIC_AXES)
    w.ranges = {"flow_m3h": [[30, 90]], "head_m": [[10, 40]]}
    calls = []
    real = evaluate.axis_mask
    monkeypatch.setattr(evaluate, "axis_mask", lambda v, s: calls.append(s) or real(v, s))
    w.ranges = {"flow_m3h": [[30, 90]], "head_m": [[12, 40]]}
    assert calls == [[[12.0, 40.0]]]
    ref = fleet["flow_m3h"].between(30, 90) & fleet["head_m"].between(12, 40)  # reference: pandas between
    np.testing.assert_array_equal(w.mask, ref.to_numpy())


def test_observe_and_clear(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    seen = []
    w.observe(lambda ch: seen.append(ch["new"]), names="ranges")
    w.ranges = {"flow_m3h": [20, 60]}  # one pair is accepted as shorthand
    assert seen[-1] == {"flow_m3h": [[20.0, 60.0]]}
    w.clear("flow_m3h")
    assert w.ranges == {} and w.count == len(fleet) and w.mask.all()


@pytest.mark.parametrize(
    "bad, message",
    [
        ({"nope": [[1, 2]]}, "unknown axis 'nope'"),
        ({"flow_m3h": [[5, 1]]}, "range on 'flow_m3h': lo 5.0 is greater than hi 1.0"),
        ({"flow_m3h": [[float("nan"), 1]]}, "range on 'flow_m3h': an end is NaN"),
        ({"flow_m3h": [["a", 1]]}, "range on 'flow_m3h': 'a' is a str"),
        ({"flow_m3h": [[1, 2, 3]]}, "expected a pair"),
        ("flow_m3h", "expected a dict"),
    ],
)
def test_bad_ranges_from_python_are_clear_errors_and_keep_the_selection(fleet, bad, message):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    w.ranges = {"head_m": [[10, 20]]}
    before = w.mask.copy()
    with pytest.raises(traitlets.TraitError, match=message.replace("(", r"\(").replace("[", r"\[")):
        w.ranges = bad
    assert w.ranges == {"head_m": [[10.0, 20.0]]}  # nothing the user made is lost
    np.testing.assert_array_equal(w.mask, before)


def test_page_edit_round_trip_answers_with_the_page_sequence_number(fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h"])
    w.set_state({"ranges": {"flow_m3h": [[20, 60]]}, "edit_seq": 7})
    assert w.answered_seq == 7
    bits = np.unpackbits(np.frombuffer(w.mask_bits, np.uint8), bitorder="little")[: len(fleet)]
    np.testing.assert_array_equal(bits.astype(bool), fleet["flow_m3h"].between(20, 60).to_numpy())
    w.set_state({"ranges": {"flow_m3h": [[20, 60]]}, "edit_seq": 8})  # same ranges, new edit: answered
    assert w.answered_seq == 8


@settings(max_examples=200, deadline=None)
@given(
    values=st.lists(st.one_of(st.floats(-1e6, 1e6), st.just(float("nan"))), min_size=1, max_size=60),
    spans=st.lists(st.tuples(st.floats(-1e6, 1e6), st.floats(-1e6, 1e6)), min_size=1, max_size=3),
)
def test_mask_equals_pandas_between_property(values, spans):
    df = pd.DataFrame({"x": values})
    w = aw.AxesWidget(df)
    spans = [sorted(s) for s in spans]
    w.ranges = {"x": spans}
    # reference: pandas.Series.between, OR over the spans
    ref = np.zeros(len(df), dtype=bool)
    for lo, hi in spans:
        ref |= df["x"].between(lo, hi).to_numpy()
    np.testing.assert_array_equal(w.mask, ref)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 3), st.floats(-2, 2), st.floats(0, 2)), min_size=1, max_size=12))
def test_incremental_mask_equals_fresh_evaluation(steps):
    """Dragging one axis reuses the AND of the others; after every step the mask equals a fresh
    evaluation and the pandas reference."""
    rng = np.random.default_rng(3)
    df = pd.DataFrame(rng.normal(size=(500, 4)), columns=list("abcd"))
    df.iloc[::17, 1] = np.nan
    cols = encode_frame(df)
    ev = MaskEvaluator(cols, len(df))
    ranges = {}
    for axis, lo, width in steps:
        name = "abcd"[axis]
        ranges = {**ranges, name: [[lo, lo + width]]}
        got = ev.update(normalise(ranges, cols))
        ref = np.ones(len(df), dtype=bool)
        for k, [[a, b]] in ranges.items():
            ref &= df[k].between(a, b).to_numpy()  # reference: pandas.Series.between
        np.testing.assert_array_equal(got, ref)
        np.testing.assert_array_equal(got, MaskEvaluator(cols, len(df)).update(normalise(ranges, cols)))
