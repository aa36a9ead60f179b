"""Level-1 browser tests: the built widget in a stand-in page, round trips applied to the real widget."""

from __future__ import annotations

import numpy as np
import pandas as pd
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
    y_mid = s.y_of("head_m", 32)
    before = s.pixel(x - 3, y_mid)
    w.ranges = {"head_m": [[25, 35]]}
    s.pull_from_kernel()
    bands = s.layout()["bands"]
    assert [b["name"] for b in bands] == ["head_m"]
    after = s.pixel(x - 3, y_mid)
    assert before[3] == 0 and after[3] > 0  # the band's translucent fill is painted beside the axis
    assert int(s.root().get_attribute("data-count")) == int(fleet["head_m"].between(25, 35).sum())


def test_category_and_datetime_axes_brushed_with_the_mouse(show, fleet):
    w = aw.AxesWidget(fleet, axes=["site", "efficiency_pct", "last_service", "fault"])
    s = show(w)
    lay = s.layout()
    i = [a["name"] for a in lay["axes"]].index("site")
    band = next(b for b in lay["categoryBands"][i] if b["label"] == "Red Gully")
    box = s.canvas_box()
    s.page.mouse.click(s.x_of("site"), box["y"] + (band["y0"] + band["y1"]) / 2)
    s.settle()
    # a datetime range dragged with the mouse (axis units are nanoseconds)
    t0 = pd.Timestamp("2025-03-01").value
    t1 = pd.Timestamp("2026-02-01").value
    s.drag("last_service", t1, t0)
    s.round_trip()
    assert w.ranges["site"] == ["Red Gully"]
    lo, hi = (pd.Timestamp(v) for v in w.ranges["last_service"][0])
    assert (
        abs((lo - pd.Timestamp("2025-03-01")).days) < 20 and abs((hi - pd.Timestamp("2026-02-01")).days) < 20
    )
    # references: Series.isin and Series.between
    ref = fleet["site"].isin(["Red Gully"]) & fleet["last_service"].between(lo, hi)
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    # the missing-values lane and a boolean band are clicked like categories; an axis without missing
    # values has no box to click (issue 14, item 6): a click there picks nothing
    lay = s.layout()
    s.page.mouse.click(s.x_of("fault"), box["y"] + lay["laneY"])
    s.round_trip()
    assert "fault" not in w.ranges and w.count == int(ref.sum())
    # a lane picked from Python is drawn there, and a click on it unpicks it
    w.ranges = {**w.ranges, "fault": [None]}
    s.pull_from_kernel()
    assert w.ranges["fault"] == [None]
    assert w.count == 0  # the fault flag has no missing values (reference: fleet["fault"].isna().sum() == 0)
    assert fleet["fault"].isna().sum() == 0
    assert s.root().get_attribute("data-count") == "0"
    s.page.mouse.click(s.x_of("fault"), box["y"] + lay["laneY"])
    s.round_trip()
    assert "fault" not in w.ranges and w.count == int(ref.sum())
    assert not s.errors


def test_names_and_labels_are_text_never_html(show):
    evil_col = "<img src=x onerror=alert(1)>"
    evil_label = "<script>alert(2)</script>"
    df = pd.DataFrame({evil_col: [1.0, 2.0, 3.0], "kind": [evil_label, "ok", evil_label]})
    w = aw.AxesWidget(df)
    s = show(w)
    s.page.wait_for_timeout(300)
    assert s.page.locator("img").count() == 0
    assert s.page.evaluate("() => document.querySelectorAll('script').length") == 1  # the host page's own
    assert not [e for e in s.errors if "dialog" in e]
    assert evil_col in s.root().get_attribute("data-layout")  # drawn as text on the canvas


def test_two_ranges_on_one_axis_and_one_on_another_then_delete_one(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "power_kw"])
    s = show(w)
    s.drag("head_m", 15, 25)
    s.drag("head_m", 45, 60)
    s.drag("power_kw", 5, 20)
    s.round_trip()
    spans = w.ranges["head_m"]
    assert len(spans) == 2 and len(w.ranges["power_kw"]) == 1
    (a0, a1), (b0, b1) = spans
    p0, p1 = w.ranges["power_kw"][0]
    # reference: pandas Series.between, OR within an axis, AND across axes
    ref = (fleet["head_m"].between(a0, a1) | fleet["head_m"].between(b0, b1)) & fleet["power_kw"].between(
        p0, p1
    )
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert int(s.root().get_attribute("data-count")) == int(ref.sum())
    # double-click the upper range on head_m: it goes, the other stays
    s.page.mouse.dblclick(s.x_of("head_m"), s.y_of("head_m", (b0 + b1) / 2))
    s.round_trip()
    assert w.ranges["head_m"] == [[a0, a1]]
    ref = fleet["head_m"].between(a0, a1) & fleet["power_kw"].between(p0, p1)  # reference: Series.between
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    # a selection set from Python appears on the page
    w.ranges = {"flow_m3h": [[50, 80], [120, 150]]}
    s.pull_from_kernel()
    bands = [b for b in s.layout()["bands"] if b["name"] == "flow_m3h"]
    assert len(bands) == 2 and not [b for b in s.layout()["bands"] if b["name"] == "head_m"]
    assert int(s.root().get_attribute("data-count")) == w.count
    assert not s.errors


def test_clicking_the_shared_band_of_rare_labels_selects_them_exactly(show):
    from axeswidget.encode import CATEGORY_BAND_LIMIT

    labels = [f"id{i:03d}" for i in range(90)]
    rng = np.random.default_rng(9)
    df = pd.DataFrame({"id": rng.choice(labels, 5000), "x": rng.normal(size=5000)})
    w = aw.AxesWidget(df)
    s = show(w)
    lay = s.layout()
    i = [a["name"] for a in lay["axes"]].index("id")
    band = lay["categoryBands"][i][-1]
    assert band["label"].endswith("other labels")
    s.page.mouse.click(s.x_of("id"), s.canvas_box()["y"] + (band["y0"] + band["y1"]) / 2)
    s.round_trip()
    rest = w.column("id").labels[CATEGORY_BAND_LIMIT:]
    np.testing.assert_array_equal(w.mask, df["id"].isin(rest).to_numpy())  # reference: Series.isin
    assert int(s.root().get_attribute("data-count")) == w.count
    assert s.layout()["picked"]["id"]["bands"] == [CATEGORY_BAND_LIMIT]  # still drawn as picked


def test_integer_axis_ranges_snap_to_whole_values_and_are_drawn_as_sent(show, fleet):
    w = aw.AxesWidget(fleet, axes=["install_year", "efficiency_pct"])
    s = show(w)
    s.drag("install_year", 2010.4, 2015.6)
    s.round_trip()
    ((lo, hi),) = w.ranges["install_year"]
    assert (lo, hi) == (2011.0, 2015.0)  # rounded inward: the whole years inside the dragged band
    band = next(b for b in s.layout()["bands"] if b["name"] == "install_year")
    assert abs(band["yBottom"] - (s.y_of("install_year", 2011) - s.canvas_box()["y"])) < 0.5
    assert abs(band["yTop"] - (s.y_of("install_year", 2015) - s.canvas_box()["y"])) < 0.5
    np.testing.assert_array_equal(w.mask, fleet["install_year"].between(2011, 2015).to_numpy())  # reference
    assert int(s.root().get_attribute("data-count")) == w.count
