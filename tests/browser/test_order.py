"""Browser: move an axis by its header, flip it by a click, read the association between neighbours."""

from __future__ import annotations

import pytest
from scipy import stats

import axeswidget as aw

pytestmark = pytest.mark.browser


def test_header_drag_reorders_click_flips_and_readout_follows(show):
    fleet = aw.demo.pump_fleet(4000, seed=4)
    axes = ["flow_m3h", "head_m", "efficiency_pct", "vibration_mm_s"]
    w = aw.AxesWidget(fleet, axes=axes)
    s = show(w)
    lay = s.layout()
    box = s.canvas_box()
    # readouts equal Spearman's rho on the exact values, to the quantisation
    for r in lay["readouts"]:
        rho = stats.spearmanr(
            fleet[r["left"]], fleet[r["right"]]
        ).statistic  # reference: scipy.stats.spearmanr
        assert r["value"] == pytest.approx(rho, abs=2e-3)
    before = {(r["left"], r["right"]): r["value"] for r in lay["readouts"]}

    # drag the header of vibration_mm_s onto the slot of head_m
    y = box["y"] + 14
    s.page.mouse.move(s.x_of("vibration_mm_s"), y)
    s.page.mouse.down()
    s.page.mouse.move(s.x_of("head_m"), y, steps=12)
    s.page.mouse.up()
    s.settle()
    s.push_to_kernel()
    assert w.order == ["flow_m3h", "vibration_mm_s", "head_m", "efficiency_pct"]

    # click the header of head_m: it flips, in the kernel too
    s.page.mouse.click(s.x_of("head_m"), y)
    s.settle()
    s.push_to_kernel()
    assert w.flipped == ["head_m"]
    lay = s.layout()
    assert lay["flipped"] == ["head_m"]
    after = {(r["left"], r["right"]): r["value"] for r in lay["readouts"]}
    rho = stats.spearmanr(
        fleet["head_m"], fleet["efficiency_pct"]
    ).statistic  # reference: scipy.stats.spearmanr
    assert after[("head_m", "efficiency_pct")] == pytest.approx(-rho, abs=2e-3)
    assert before[("head_m", "efficiency_pct")] == pytest.approx(rho, abs=2e-3)  # the flip turned the sign
    # a flipped axis still brushes in data units: drag from high to low values
    s.drag("head_m", 50, 30)
    s.round_trip()
    lo, hi = w.ranges["head_m"][0]
    assert 28 < lo < 32 and 48 < hi < 52
    assert not s.errors


def test_order_and_flips_from_python_reach_the_page(show):
    fleet = aw.demo.pump_fleet(1000, seed=4)
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "power_kw"])
    s = show(w)
    w.order = ["power_kw", "flow_m3h", "head_m"]
    w.flipped = ["flow_m3h"]
    s.pull_from_kernel(("order", "flipped"))
    lay = s.layout()
    assert [a["name"] for a in lay["axes"]] == ["power_kw", "flow_m3h", "head_m"]
    assert lay["flipped"] == ["flow_m3h"]
    assert [(r["left"], r["right"]) for r in lay["readouts"]] == [
        ("power_kw", "flow_m3h"),
        ("flow_m3h", "head_m"),
    ]
