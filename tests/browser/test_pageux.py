"""Level-1 browser tests of the page tools (issue 14: items 6, 7, 8, 13, 14, 15, callback errors and
contrast markers), in the stand-in page; round trips applied to the real Python widget."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw
from axeswidget import export
from tests.browser.messaging import show_messaging
from tests.browser.pngfile import png_pixels, png_size

pytestmark = pytest.mark.browser


@pytest.fixture
def fleet():
    return aw.demo.pump_fleet(3000, seed=11)


def record_text(s):
    """Record every text the canvases draw from now on (window.__texts), and redraw."""
    s.page.evaluate(
        """() => { window.__texts = []; const p = CanvasRenderingContext2D.prototype, f = p.fillText;
             p.fillText = function (t, ...r) {
               window.__texts.push(String(t)); return f.call(this, t, ...r); };
             return document.querySelector('.axw-root').__axw.redraw(); }"""
    )
    s.settle()
    return s.page.evaluate("() => window.__texts.slice()")


def live(s) -> str:
    s.settle()  # the live region is updated with the next drawing
    return s.page.locator(".axw-live").inner_text()


def canvas_y(s, y):
    return s.canvas_box()["y"] + y


# -- item 6: drags past an axis end, no missing box without missing values -----------------------------


def test_drag_starting_below_the_axis_end_makes_a_range(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "sand_ppm", "efficiency_pct"])
    assert w.column("head_m").missing.sum() == 0 and w.column("sand_ppm").missing.sum() > 0
    s = show(w)
    lay = s.layout()
    # a drag from 12 px below the bottom of head_m (where a missing-values box would be) up to 30 m
    x = s.x_of("head_m")
    s.page.mouse.move(x, canvas_y(s, lay["bottom"] + 12))
    s.page.mouse.down()
    s.page.mouse.move(x, s.y_of("head_m", 30), steps=8)
    s.page.mouse.up()
    s.settle()
    # a drag from inside the missing-values box of sand_ppm (it has missing values) up the axis
    x2 = s.x_of("sand_ppm")
    s.page.mouse.move(x2, canvas_y(s, lay["laneY"]))
    s.page.mouse.down()
    s.page.mouse.move(x2, s.y_of("sand_ppm", 600), steps=8)
    s.page.mouse.up()
    s.settle()
    # a drag from the header of efficiency_pct down into the axis: a range from the top, not a flip
    x3 = s.x_of("efficiency_pct")
    s.page.mouse.move(x3, canvas_y(s, 20))
    s.page.mouse.down()
    s.page.mouse.move(x3, s.y_of("efficiency_pct", 70), steps=8)
    s.page.mouse.up()
    s.settle()
    s.round_trip()
    assert w.flipped == []
    (lo, hi), *_ = w.ranges["head_m"]
    assert lo == pytest.approx(fleet["head_m"].min(), abs=1e-9) and 28 < hi < 32
    sand = w.ranges["sand_ppm"]
    assert None not in sand and len(sand) == 1  # a range, not the missing-values lane
    assert sand[0][0] == pytest.approx(fleet["sand_ppm"].min()) and 560 < sand[0][1] < 640
    eff = w.ranges["efficiency_pct"][0]
    assert eff[1] == pytest.approx(fleet["efficiency_pct"].max()) and 68 < eff[0] < 72
    # reference: pandas.Series.between on each axis, ANDed
    ref = (
        fleet["head_m"].between(*w.ranges["head_m"][0])
        & fleet["sand_ppm"].between(*sand[0])
        & fleet["efficiency_pct"].between(*eff)
    )
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert not s.errors


def test_no_missing_values_box_where_there_are_none(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "sand_ppm"])
    s = show(w)
    lay = s.layout()
    y = canvas_y(s, lay["laneY"] - lay.get("laneHalf", 7))  # the box's top edge, where it is drawn
    x_head, x_sand = s.x_of("head_m"), s.x_of("sand_ppm")
    edge = [s.pixel(x_head + dx, y)[3] for dx in range(-7, 8)]
    assert max(edge) == 0  # nothing drawn below head_m
    assert max(s.pixel(x_sand + dx, y)[3] for dx in range(-7, 8)) > 0  # sand_ppm has its box
    # a click there picks no missing rows and leaves the axis's range alone
    s.drag("head_m", 40, 20)
    s.round_trip()
    before = w.ranges
    s.page.mouse.click(x_head, canvas_y(s, lay["laneY"]))
    s.round_trip()
    assert w.ranges == before and None not in w.ranges["head_m"]


# -- item 7: an empty range on a whole-number axis ------------------------------------------------------


def test_empty_range_on_a_zero_one_axis_says_no_values(show):
    frame = pd.DataFrame({"x": np.linspace(0, 1, 200), "flag": np.arange(200) % 2})
    w = aw.AxesWidget(frame)
    assert w.column("flag").kind == "integer"
    s = show(w)
    s.drag("flag", 0.3, 0.7)
    texts = record_text(s)
    assert "no values" in texts
    assert texts.count("0") <= 1 + texts.count("1")  # no "0 … 0" pair of range ends (the tick "0" stays)
    s.round_trip()
    assert w.count == 0 and int(w.mask.sum()) == 0  # reference: no whole number lies in 0.3..0.7
    assert "(no values)" in live(s)


# -- item 8: PNG with the legend and a title ------------------------------------------------------------


def test_png_has_the_colour_legend_and_a_title(browser, static_server, monkeypatch, tmp_path):
    fleet = aw.demo.pump_fleet(1500, seed=2)
    w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "head_m"], color_by="site")
    s = show_messaging(browser, static_server, w, monkeypatch)
    s.deliver()
    css_w, css_h = s.page.evaluate(
        "() => { const r = document.querySelector('canvas.axw-overlay').getBoundingClientRect();"
        " return [r.width, r.height]; }"
    )
    req = export.save_png(w, tmp_path / "titled.png", scale=1, title="Pumps by site")
    s.wait_outbox()
    s.deliver()
    data = req.path.read_bytes()
    width, height = png_size(data)
    assert width == round(css_w) and height > round(css_h) + 30  # a strip above the chart
    px = png_pixels(data)
    strip = px[: height - round(css_h)]
    # the first site's swatch: Okabe-Ito orange #E69F00 (js/colour.ts); reference: Okabe & Ito 2002
    orange = (np.abs(strip[..., 0] - 0xE6 / 255) < 0.05) & (np.abs(strip[..., 1] - 0x9F / 255) < 0.05)
    assert orange.sum() >= 50
    title_rows = strip[:24, :200, :3].mean(axis=2)
    assert (title_rows < 0.4).sum() > 40  # dark title text on the light background
    # without a title nor a legend the picture stays the chart's size
    w.color_by = ""
    s.pull_from_kernel(["color_by"])
    req = export.save_png(w, tmp_path / "plain.png", scale=1)
    s.wait_outbox()
    s.deliver()
    assert png_size(req.path.read_bytes()) == (round(css_w), round(css_h))


# -- item 13: axis numbers, clear all, undo / redo, invert ---------------------------------------------


def test_axis_box_shows_selected_and_all_numbers(show, fleet):
    w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "head_m", "sand_ppm"])
    w.ranges = {"flow_m3h": [[60, 140]]}
    s = show(w)
    s.page.mouse.move(s.x_of("head_m"), s.y_of("head_m", 25))
    s.settle()
    text = s.page.locator(".axw-tip").inner_text()
    mask = fleet["flow_m3h"].between(60, 140)  # reference: pandas.Series.between
    assert text.startswith("head_m (number)")
    rows = next(line for line in text.splitlines() if line.startswith("rows"))
    assert rows.split()[1:] == [f"{int(mask.sum()):,}", f"{len(fleet):,}"]
    med = next(line for line in text.splitlines() if line.startswith("median"))
    sel_med, all_med = (float(v) for v in med.split()[2:4])
    span = fleet["head_m"].max() - fleet["head_m"].min()
    # reference: pandas.Series.median; the page reads 2-byte codes (one step = span / 65535)
    assert abs(sel_med - fleet["head_m"][mask].median()) <= span / 65535 + 1e-3
    assert abs(all_med - fleet["head_m"].median()) <= span / 65535 + 1e-3
    assert "2-byte codes" in text
    # a category axis: the most common label, exact
    lay = s.layout()
    s.page.mouse.move(s.x_of("site"), canvas_y(s, (lay["top"] + lay["bottom"]) / 2))
    s.settle()
    text = s.page.locator(".axw-tip").inner_text()
    common = next(line for line in text.splitlines() if line.startswith("most common"))
    top_sel = fleet["site"][mask].value_counts()  # reference: pandas.Series.value_counts
    assert f"{top_sel.index[0]} ({top_sel.iloc[0]:,})" in common
    # missing values are counted on an axis that has them
    s.page.mouse.move(s.x_of("sand_ppm"), s.y_of("sand_ppm", 500))
    s.settle()
    miss = next(
        line for line in s.page.locator(".axw-tip").inner_text().splitlines() if line.startswith("missing")
    )
    assert miss.split()[1:] == [
        f"{int(fleet['sand_ppm'][mask].isna().sum()):,}",
        f"{int(fleet['sand_ppm'].isna().sum()):,}",
    ]


def test_clear_all_undo_redo_and_invert_reach_the_kernel(show, fleet):
    w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "head_m", "sand_ppm"])
    s = show(w)
    button = lambda name: s.page.get_by_role("button", name=name, exact=True)  # noqa: E731
    assert button("undo").is_disabled() and button("clear all").is_disabled()
    s.drag("head_m", 40, 20)
    s.round_trip()
    first = w.ranges
    s.drag("sand_ppm", 900, 300)
    s.round_trip()
    both = w.ranges
    assert set(both) == {"head_m", "sand_ppm"}
    button("undo").click()
    s.round_trip()
    assert w.ranges == first
    button("redo").click()
    s.round_trip()
    assert w.ranges == both
    # invert acts on the axis edited last (sand_ppm): every row its range left out, missing ones too
    button("invert").click()
    s.round_trip()
    lo, hi = both["sand_ppm"][0]
    sand = fleet["sand_ppm"]
    # reference: pandas — not between, or missing (isna)
    inverted = ~sand.between(lo, hi) | sand.isna()
    ref = fleet["head_m"].between(*both["head_m"][0]) & inverted
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    assert None in w.ranges["sand_ppm"]
    button("invert").click()
    s.round_trip()
    np.testing.assert_array_equal(
        w.mask, (fleet["head_m"].between(*both["head_m"][0]) & sand.between(lo, hi)).to_numpy()
    )
    button("clear all").click()
    s.round_trip()
    assert w.ranges == {} and w.count == len(fleet)
    button("undo").click()
    s.round_trip()
    assert set(w.ranges) == {"head_m", "sand_ppm"}
    # a selection set from Python is a step too
    w.ranges = {"flow_m3h": [[50, 60]]}
    s.pull_from_kernel()
    button("undo").click()
    s.round_trip()
    assert set(w.ranges) == {"head_m", "sand_ppm"}
    assert not s.errors


# -- item 14: colour by kept groups ---------------------------------------------------------------------


def test_colour_by_kept_groups_matches_labels(show, fleet):
    w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "efficiency_pct", "fault"])
    w.ranges = {"site": ["Red Gully", "Stonebridge"], "fault": [True]}
    w.keep("faulty")
    w.ranges = {"efficiency_pct": [[40, 55]]}
    w.keep("low efficiency")
    w.clear()
    w.color_by = "@saved"
    s = show(w)
    legend = s.page.locator(".axw-legend").inner_text()
    assert "kept groups" in legend and "faulty" in legend and "low efficiency" in legend
    counts = json.loads(s.root().get_attribute("data-colour-groups"))
    # reference: AxesWidget.labels() (first kept group wins), counted with pandas
    ref = w.labels().value_counts(dropna=False)
    assert counts == [int(ref["faulty"]), int(ref["low efficiency"]), int(ref[np.nan])]
    # keeping another group recolours at once
    w.ranges = {"flow_m3h": [[0, 80]]}
    w.keep("small flow")
    s.pull_from_kernel(["saved", "ranges", "count", "mask_bits", "answered_seq"])
    counts = json.loads(s.root().get_attribute("data-colour-groups"))
    assert len(counts) == 4 and sum(counts) == len(fleet)
    assert counts[2] == int(w.labels().value_counts()["small flow"])


# -- item 15: keyboard only -----------------------------------------------------------------------------


def _tab_into_chart(s):
    for _ in range(12):
        s.page.keyboard.press("Tab")
        if s.page.evaluate("() => document.activeElement.classList.contains('axw-overlay')"):
            return
    raise AssertionError("Tab never reached the chart")


def test_keyboard_only_selection(show, fleet):
    w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "head_m", "efficiency_pct"])
    s = show(w)
    _tab_into_chart(s)
    key = s.page.keyboard.press
    assert "Axis 1 of 4: site" in live(s)
    # the band cursor starts on the top band; Enter picks it
    key("Enter")
    s.round_trip()
    top_band = w.ranges["site"]
    assert len(top_band) == 1
    key("ArrowRight")
    key("ArrowRight")
    assert "Axis 3 of 4: head_m" in live(s)
    key("Enter")  # a range in the middle fifth
    for _ in range(3):
        key("ArrowUp")
    key("Shift+ArrowUp")
    s.round_trip()
    lo, hi = w.ranges["head_m"][0]
    h_lo, h_hi = fleet["head_m"].min(), fleet["head_m"].max()
    span = h_hi - h_lo
    # middle fifth moved up 3 x 1/50 and widened by 1/50 at each end (up to the wire's resolution)
    assert lo == pytest.approx(h_lo + span * (0.4 + 0.06 - 0.02), abs=span * 0.01)
    assert hi == pytest.approx(h_lo + span * (0.6 + 0.06 + 0.02), abs=span * 0.01)
    ref = fleet["site"].isin(top_band) & fleet["head_m"].between(lo, hi)  # reference: pandas
    np.testing.assert_array_equal(w.mask, ref.to_numpy())
    summary = live(s)
    assert f"{int(ref.sum()):,} of 3,000 rows selected" in summary and "head_m " in summary
    # F flips, Shift+Arrow moves the axis, Delete clears it, Ctrl+Z brings the range back
    key("f")
    key("Shift+ArrowLeft")
    s.push_to_kernel()
    assert w.flipped == ["head_m"] and w.order == ["site", "head_m", "flow_m3h", "efficiency_pct"]
    key("Delete")
    s.round_trip()
    assert "head_m" not in w.ranges
    key("Control+z")
    s.round_trip()
    assert w.ranges["head_m"] == [[lo, hi]]
    key("i")  # invert on the focused axis
    s.round_trip()
    assert w.ranges["head_m"][0][0] is None and w.ranges["head_m"][-1][1] is None
    key("Shift+Delete")
    s.round_trip()
    assert w.ranges == {} and "3,000 of 3,000 rows selected; no ranges" in live(s)
    # Tab leaves the chart at the last axis
    key("End")
    key("Tab")
    assert not s.page.evaluate("() => document.activeElement.classList.contains('axw-overlay')")
    assert not s.errors


# -- callback errors and contrast markers ----------------------------------------------------------------


def test_callback_error_line_shows_and_dismisses(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    s = show(w)
    line = s.page.locator(".axw-callback-error")
    assert not line.is_visible()
    s.page.evaluate(
        "() => window.__apply({state: {callback_error: 'ZeroDivisionError: division by zero'},"
        " buffer_paths: [], buffers: []})"
    )
    assert line.is_visible() and "ZeroDivisionError" in line.inner_text()
    assert line.get_attribute("role") == "alert"
    line.get_by_role("button").click()
    assert not line.is_visible()
    s.drag("head_m", 40, 20)  # the widget keeps working
    s.round_trip()
    assert "head_m" in w.ranges and not s.errors


def test_contrast_markers_on_the_most_different_axes(show, fleet):
    axes = ["site", "flow_m3h", "head_m", "efficiency_pct", "vibration_mm_s", "install_year"]
    w = aw.AxesWidget(fleet, axes=axes)
    s = show(w)
    lay = s.layout()

    def marked(name):
        x = s.x_of(name)
        return max(s.pixel(x + dx, canvas_y(s, 39))[3] for dx in (-6, 0, 6)) > 0

    assert not any(marked(a) for a in axes)
    s.drag("efficiency_pct", 60, 40)
    s.round_trip()
    s.pull_from_kernel(["contrast_axes"])
    assert len(w.contrast_axes) == 3 and "efficiency_pct" not in w.contrast_axes
    for a in axes:
        assert marked(a) == (a in w.contrast_axes), a
    s.page.mouse.move(s.x_of(w.contrast_axes[0]), canvas_y(s, (lay["top"] + lay["bottom"]) / 2))
    s.settle()
    assert "rank 1" in s.page.locator(".axw-tip").inner_text()
