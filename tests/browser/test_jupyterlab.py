"""Level-2: the widget in a real JupyterLab, dragged with the mouse, checked in the kernel."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import JupyterServer, LabNotebook

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]


@pytest.fixture(scope="module")
def lab(browser):
    server = JupyterServer()
    yield server
    server.close()


SETUP = """
import numpy as np, axeswidget as aw
fleet = aw.demo.pump_fleet(4000, seed=3)
w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct", "vibration_mm_s"], height=360)
w
"""

CHECK = """
import json
lo, hi = w.ranges["efficiency_pct"][0]
# reference: pandas.Series.between, inclusive on both ends
ref = fleet["efficiency_pct"].between(lo, hi).to_numpy()
print(json.dumps({"ranges": w.ranges, "equal": bool((w.mask == ref).all()),
                  "sum": int(w.mask.sum()), "count": w.count}))
"""

SET_FROM_PYTHON = """
w.ranges = {"head_m": [[20.0, 30.0]]}
print(int(w.mask.sum()))
"""


def _layout(page):
    root = page.locator(".axw-root").first
    return root, json.loads(root.get_attribute("data-layout"))


def test_drag_in_jupyterlab_gives_exact_kernel_mask(browser, lab):
    name = lab.write_notebook("spine.ipynb", [SETUP, CHECK, SET_FROM_PYTHON])
    page = browser.new_page(viewport={"width": 1280, "height": 900})
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    try:
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=30_000)
        root, lay = _layout(page)
        assert root.get_attribute("data-total") == "4000"
        ax = next(a for a in lay["axes"] if a["name"] == "efficiency_pct")
        box = page.locator("canvas.axw-overlay").first.bounding_box()

        def y(v):
            f = (v - ax["lo"]) / (ax["hi"] - ax["lo"])
            return box["y"] + lay["bottom"] - f * (lay["bottom"] - lay["top"])

        x = box["x"] + ax["x"]
        page.mouse.move(x, y(72))
        page.mouse.down()
        page.mouse.move(x, y(55), steps=10)
        page.mouse.up()
        # the page adopts the kernel's answer
        page.wait_for_function(
            "() => document.querySelector('.axw-root').dataset.state === 'synced'", timeout=20_000
        )
        page_count = int(root.get_attribute("data-count"))

        nb.run(1)
        out = json.loads(nb.output_text(1).strip().splitlines()[-1])
        lo, hi = out["ranges"]["efficiency_pct"][0]
        assert 53 < lo < 57 and 70 < hi < 74
        assert out["equal"] is True
        assert out["sum"] == out["count"] == page_count
        assert f"{page_count:,} of 4,000 rows selected" in page.locator(".axw-status").first.inner_text()

        # the reverse direction: a range set in Python appears on the page
        nb.run(2)
        expected = int(nb.output_text(2).strip().splitlines()[-1])
        page.wait_for_function(
            "(n) => document.querySelector('.axw-root').dataset.count === String(n)",
            arg=expected,
            timeout=20_000,
        )
        _, lay = _layout(page)
        assert [b["name"] for b in lay["bands"]] == ["head_m"]
        band = lay["bands"][0]
        # pixel check: the band's fill is painted on the overlay canvas
        rgba = page.evaluate(
            """([x, y]) => { const c = document.querySelector('canvas.axw-overlay');
                const s = c.width / c.getBoundingClientRect().width;
                const d = c.getContext('2d').getImageData(Math.round(x * s), Math.round(y * s), 1, 1);
                return Array.from(d.data); }""",
            [band["x"] - 3, band["yTop"] + 0.3 * (band["yBottom"] - band["yTop"])],
        )
        assert rgba[3] > 0
        assert not dialogs
    finally:
        page.close()
