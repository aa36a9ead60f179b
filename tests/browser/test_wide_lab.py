"""Level-2: a 31-column open table (scikit-learn's breast cancer data) in a real JupyterLab at 850 px:
the chart scrolls sideways inside the output, no text overlaps, hover and pin show the row's index
label, the values box stays in view, and the axis picker updates the kernel's `hidden`."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import LabNotebook
from tests.browser.test_wide import MIN_GAP, line_y, overlapping

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]

SETUP = """
import axeswidget as aw
from sklearn.datasets import load_breast_cancer
df = load_breast_cancer(as_frame=True).frame.sample(frac=1.0, random_state=3)
w = aw.AxesWidget(df)
w
"""

CHECK = """
import json
same = bool(df.loc[w.pinned_index].equals(df.iloc[w.pinned]))
print(json.dumps({"hidden": w.hidden, "pinned": w.pinned, "label": int(w.pinned_index),
                  "order": len(w.order), "loc_equal": same}))
"""


def test_31_axes_in_jupyterlab_at_850_px(browser, lab):
    datasets = pytest.importorskip("sklearn.datasets")
    df = datasets.load_breast_cancer(as_frame=True).frame.sample(frac=1.0, random_state=3)
    name = lab.write_notebook("wide31.ipynb", [SETUP, CHECK])
    page = browser.new_page(viewport={"width": 850, "height": 900})
    errors: list[str] = []
    page.on("pageerror", lambda e: errors.append(str(e)))
    try:
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=30_000)
        page.wait_for_function("() => document.querySelector('.axw-root').dataset.drawn", timeout=30_000)
        root = page.locator(".axw-root").first
        lay = json.loads(root.get_attribute("data-layout"))
        xs = [a["x"] for a in lay["axes"]]
        assert len(xs) == 31 and min(b - a for a, b in zip(xs, xs[1:], strict=False)) >= MIN_GAP - 0.01
        # the chart scrolls inside the widget; the widget is no wider than its output area
        dims = page.evaluate(
            """() => { const s = document.querySelector('.axw-scroll');
                 const out = s.closest('.jp-OutputArea-output'), r = document.querySelector('.axw-root');
                 return {sw: s.scrollWidth, cw: s.clientWidth, root: r.getBoundingClientRect().width,
                         out: out.getBoundingClientRect().width}; }"""
        )
        assert dims["sw"] > dims["cw"] + 500 and dims["root"] <= dims["out"] + 0.5
        assert root.get_attribute("data-scrolls") == "true"
        boxes = page.evaluate("() => document.querySelector('.axw-root').__axw.textBoxes()")
        assert len(boxes) > 31 * 3 and overlapping(boxes) == []

        # hover near the right end: the values box shows the index label and all 31 values, in view
        a, b = lay["axes"][29], lay["axes"][30]
        page.evaluate("x => { document.querySelector('.axw-scroll').scrollLeft = x; }", a["x"] - 300)
        page.wait_for_timeout(100)
        box = page.locator("canvas.axw-overlay").first.bounding_box()
        hovered = -1
        for row in range(40):
            ya = line_y(None, lay, a, df[a["name"]].iloc[row])
            y = (ya + line_y(None, lay, b, df[b["name"]].iloc[row])) / 2
            page.mouse.move(box["x"] + (a["x"] + b["x"]) / 2, box["y"] + y)
            page.wait_for_timeout(60)
            hovered = json.loads(root.get_attribute("data-layout"))["hover"]
            if hovered >= 0:
                break
        assert hovered >= 0
        tip = page.locator(".axw-tip").first
        assert tip.locator(".axw-vb-title").inner_text() == f"index {df.index[hovered]} · row {hovered}"
        assert tip.locator(".axw-vb-entry").count() == 31
        tb, view = tip.bounding_box(), page.locator(".axw-scroll").first.bounding_box()
        assert view["x"] - 0.5 <= tb["x"] and tb["x"] + tb["width"] <= view["x"] + view["width"] + 0.5
        last = tip.locator(".axw-vb-entry").nth(30).bounding_box()
        assert last["y"] + last["height"] <= tb["y"] + tb["height"] + 0.5

        # pin it: the box docks below the chart
        page.mouse.down()
        page.mouse.up()
        dock = page.locator(".axw-dock").first
        dock.wait_for(state="visible", timeout=10_000)
        assert dock.bounding_box()["y"] >= box["y"] + box["height"] - 0.5

        # hide an axis from the picker
        page.locator(".axw-pick-button").first.click()
        page.locator('.axw-pick input[data-axis="mean area"]').first.uncheck()
        page.wait_for_function(
            "() => JSON.parse(document.querySelector('.axw-root').dataset.layout).axes.length === 30",
            timeout=10_000,
        )
        page.keyboard.press("Escape")

        nb.run(1)
        out = json.loads(nb.output_text(1).strip().splitlines()[-1])
        assert out["hidden"] == ["mean area"] and out["order"] == 31
        assert out["pinned"] == hovered and out["label"] == int(df.index[hovered]) and out["loc_equal"]
        assert not errors
    finally:
        page.close()
