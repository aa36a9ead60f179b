"""Level-1 browser tests: the built widget in a stand-in page, round trips applied to the real widget."""

from __future__ import annotations

import numpy as np
import pytest

import axeswidget as aw

pytestmark = pytest.mark.browser


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(3000, seed=11)


def test_drag_creates_range_and_kernel_mask_matches_pandas(show, fleet):
    w = aw.AxesWidget(fleet, axes=aw.demo.NUMERIC_AXES)
    s = show(w)
    assert s.root().get_attribute("data-count") == str(len(fleet))
    s.drag("efficiency_pct", 70, 50)
    assert s.root().get_attribute("data-state") == "preview"
    s.round_trip()
    spans = w.ranges["efficiency_pct"]
    assert len(spans) == 1
    lo, hi = spans[0]
    assert 48 < lo < 52 and 68 < hi < 72  # where the mouse went, within a few pixels
    # reference: pandas.Series.between (inclusive on both ends)
    expected = fleet["efficiency_pct"].between(lo, hi).to_numpy()
    np.testing.assert_array_equal(w.mask, expected)
    assert s.root().get_attribute("data-state") == "synced"
    assert int(s.root().get_attribute("data-count")) == int(w.mask.sum())
    assert "of 3,000 rows selected" in s.page.locator(".axw-status").inner_text()
    assert not s.errors


def test_range_set_in_python_is_drawn(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "power_kw"])
    s = show(w)
    x = s.x_of("head_m")
    y_mid = s.y_of("head_m", 30)
    before = s.pixel(x + 5, y_mid)
    w.ranges = {"head_m": [[25, 35]]}
    s.pull_from_kernel()
    bands = s.layout()["bands"]
    assert [b["name"] for b in bands] == ["head_m"]
    after = s.pixel(x + 5, y_mid)
    assert before[3] == 0 and after[3] > 0  # the band's translucent fill is painted beside the axis
    assert int(s.root().get_attribute("data-count")) == int(fleet["head_m"].between(25, 35).sum())
