"""Browser: every drawing mode paints real content; hover and pin; exact brushing at 10^6 rows."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw

pytestmark = pytest.mark.browser

SHOTS = Path(os.environ.get("AXW_SHOTS", tempfile.gettempdir())) / "axw-modes"
AXES = ["site", "speed_rpm", "flow_m3h", "head_m", "efficiency_pct", "vibration_mm_s", "install_year"]

DRAWN = "() => Number(document.querySelector('.axw-root').dataset.drawn || 0) >= 1"

CANVAS_STATS = """() => {
  const c = document.querySelector('canvas.axw-lines');
  const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
  let painted = 0; const colours = new Set();
  for (let k = 0; k < d.length; k += 4)
    if (d[k + 3]) { painted++; colours.add((d[k] << 16) | (d[k+1] << 8) | d[k+2]); }
  return {painted: painted / (c.width * c.height), colours: colours.size, w: c.width, h: c.height};
}"""


@pytest.fixture(scope="module")
def fleet():
    return aw.demo.pump_fleet(6000, seed=8)


@pytest.mark.parametrize(
    "name, options",
    [
        ("lines", {}),
        ("density", {"view_mode": "density", "color_by": "site"}),
        ("curves", {"curves": True, "color_by": "efficiency_pct"}),
        ("bundling", {"bundle_by": "site", "bundle_strength": 0.7, "color_by": "site"}),
        ("horizontal", {"orientation": "horizontal"}),
    ],
)
def test_each_mode_paints_real_content(show, fleet, name, options):
    w = aw.AxesWidget(fleet, axes=AXES, ranges={"efficiency_pct": [[40, 70]]}, **options)
    s = show(w, width=1000, height=520)
    s.page.wait_for_function(DRAWN, timeout=60_000)
    stats = s.page.evaluate(CANVAS_STATS)
    SHOTS.mkdir(parents=True, exist_ok=True)
    s.page.screenshot(path=str(SHOTS / f"{name}.png"))
    assert stats["painted"] > 0.05, stats  # lines cover a real part of the canvas
    assert stats["colours"] > 50, stats  # anti-aliased, shaded lines: many distinct colours
    assert s.root().get_attribute("data-mode") == ("density" if name == "density" else "lines")
    assert s.layout()["horizontal"] is (name == "horizontal")
    assert not s.errors


def test_dark_theme_uses_light_text_and_a_light_line_colour(show, fleet, static_server):
    # a host page whose CSS variables say "dark" before the widget is made
    from tests.browser import harness

    html = (
        (harness.HERE / "standin.html")
        .read_text()
        .replace(
            '<div id="host"></div>',
            '<div id="host" style="--jp-layout-color0:#1e1e1e;--jp-ui-font-color1:#e6e6e6;'
            '--jp-ui-font-color2:#aaaaaa;background:#1e1e1e"></div>',
        )
    )
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "power_kw"])
    s = show(w)
    (static_server.dir / "dark.html").write_text(html)
    s.page.goto(static_server.url + "dark.html")
    s.page.wait_for_function("() => window.__ready === true")
    s.page.wait_for_function(DRAWN)
    # the most common line colour is Okabe–Ito sky blue (#56B4E9), the dark-theme line colour
    rgb = s.page.evaluate(
        """() => { const c = document.querySelector('canvas.axw-lines');
        const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data; const n = new Map();
        for (let k = 0; k < d.length; k += 4) if (d[k + 3] > 200) {
          const key = d[k] + ',' + d[k+1] + ',' + d[k+2];
          n.set(key, (n.get(key) || 0) + 1); }
        return [...n.entries()].sort((a, b) => b[1] - a[1])[0][0].split(',').map(Number); }"""
    )
    assert abs(rgb[0] - 0x56) <= 3 and abs(rgb[1] - 0xB4) <= 3 and abs(rgb[2] - 0xE9) <= 3
    SHOTS.mkdir(parents=True, exist_ok=True)
    s.page.screenshot(path=str(SHOTS / "dark-theme.png"))


def test_hover_shows_values_and_click_pins_the_row(show):
    df = pd.DataFrame({"a": [0.0, 10.0], "b": [0.0, 10.0], "label": ["low", "high"]})
    w = aw.AxesWidget(df, axes=["a", "b", "label"])
    s = show(w)
    box = s.canvas_box()
    x = (s.x_of("a") + s.x_of("b")) / 2
    y = (s.y_of("a", 10.0) + s.y_of("b", 10.0)) / 2  # on the line of row 1, midway between the axes
    s.page.mouse.move(x, y)
    s.settle()
    assert s.layout()["hover"] == 1
    tip = s.page.locator(".axw-tip").inner_text()
    assert "label: high" in tip and "row 1" in tip
    assert "a: 10\n" in tip and "b: 10\n" in tip  # the row's values (reference: df.loc[1])
    s.page.mouse.click(x, y)
    s.settle()
    s.push_to_kernel()
    assert w.pinned == 1 and w.pinned_index == df.index[1]
    del box


def test_density_brushing_at_a_million_rows_is_exact(show):
    rng = np.random.default_rng(0)
    n = 1_000_000
    df = pd.DataFrame({"a": rng.normal(size=n), "b": rng.gamma(2.0, size=n), "c": rng.integers(0, 30, n)})
    df.loc[rng.random(n) < 0.01, "b"] = np.nan
    w = aw.AxesWidget(df)
    s = show(w)
    s.page.wait_for_function(DRAWN, timeout=120_000)
    assert s.root().get_attribute("data-mode") == "density"  # auto above 200,000 rows
    s.drag("b", 1.0, 3.0)
    s.round_trip()
    lo, hi = w.ranges["b"][0]
    # reference: pandas.Series.between on the exact values
    np.testing.assert_array_equal(w.mask, df["b"].between(lo, hi).to_numpy())
    assert int(s.root().get_attribute("data-count")) == int(df["b"].between(lo, hi).sum())


def test_horizontal_orientation_brushes_along_the_page(show, fleet):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct"], orientation="horizontal")
    s = show(w)
    s.page.wait_for_function(DRAWN)
    lay = s.layout()
    assert lay["horizontal"] is True
    ax = next(a for a in lay["axes"] if a["name"] == "head_m")
    box = s.canvas_box()

    def page_x(v):  # values grow to the right; the logical y runs along the page's x
        f = (v - ax["lo"]) / (ax["hi"] - ax["lo"])
        return box["x"] + lay["top"] + f * (lay["bottom"] - lay["top"])

    y = box["y"] + ax["x"]  # the axis's logical x is the page's y
    s.page.mouse.move(page_x(20), y)
    s.page.mouse.down()
    s.page.mouse.move(page_x(45), y, steps=8)
    s.page.mouse.up()
    s.round_trip()
    lo, hi = w.ranges["head_m"][0]
    assert 18 < lo < 22 and 43 < hi < 47
    np.testing.assert_array_equal(w.mask, fleet["head_m"].between(lo, hi).to_numpy())  # reference: between
    assert int(s.root().get_attribute("data-count")) == w.count


def test_large_tables_are_drawn_by_workers_and_without_workers_on_the_page(show):
    rng = np.random.default_rng(2)
    df = pd.DataFrame(rng.normal(size=(60_000, 8)), columns=list("abcdefgh"))
    w = aw.AxesWidget(df, view_mode="lines", ranges={"a": [[-1, 1]]})
    s = show(w)
    s.page.wait_for_function(DRAWN, timeout=60_000)
    assert s.root().get_attribute("data-drawn-by") == "workers"
    with_workers = s.page.evaluate(CANVAS_STATS)
    # the same chart where the page cannot start workers: drawn on the page, the same picture
    s2 = show(w)
    s2.page.add_init_script("window.Worker = undefined;")
    s2.page.reload()
    s2.page.wait_for_function("() => window.__ready === true")
    s2.page.wait_for_function(DRAWN, timeout=60_000)
    assert s2.root().get_attribute("data-drawn-by") == "page"
    on_page = s2.page.evaluate(CANVAS_STATS)
    assert abs(on_page["painted"] - with_workers["painted"]) < 0.002  # the same pixels are covered
    assert not s.errors and not s2.errors


def test_hover_follows_curved_lines(show):
    # two rows that cross: on straight lines the midpoint is shared, on curves they are apart near the axes
    df = pd.DataFrame({"a": [0.0, 10.0], "b": [10.0, 0.0], "label": ["up", "down"]})
    w = aw.AxesWidget(df, axes=["a", "b", "label"], curves=True)
    s = show(w)
    xa, xb = s.x_of("a"), s.x_of("b")
    x = xa + 0.2 * (xb - xa)  # a fifth of the way: a curve is still near its start height
    ya0 = s.y_of("a", 0.0)
    ya10 = s.y_of("a", 10.0)
    s.page.mouse.move(x, ya0 + 0.08 * (ya10 - ya0))  # near row 0's level at a
    s.settle()
    assert s.layout()["hover"] == 0
    s.page.mouse.move(x, ya10 + 0.08 * (ya0 - ya10))  # near row 1's level at a
    s.settle()
    assert s.layout()["hover"] == 1
