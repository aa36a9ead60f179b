"""Level-2: the widget in a real JupyterLab, dragged with the mouse, checked in the kernel."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import LabNotebook, drag_axis

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]


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
        drag_axis(page, 0, "efficiency_pct", 72, 55)
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


TWO_VIEWS = """
import axeswidget as aw
fleet = aw.demo.pump_fleet(3000, seed=5)
w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct"], height=320)
w.ranges = {"head_m": [[20.0, 40.0]]}
w.order = ["efficiency_pct", "flow_m3h", "head_m"]
w
"""

SECOND_VIEW = "w  # a second live view of the same state"

READ_STATE = """
import json
print(json.dumps({"ranges": w.ranges, "order": w.order, "count": w.count}))
"""


def _state_of(page, i):
    root = page.locator(".axw-root").nth(i)
    lay = json.loads(root.get_attribute("data-layout"))
    return root, lay


def test_second_view_is_live_and_reload_keeps_the_view(browser, lab):
    name = lab.write_notebook("keep.ipynb", [TWO_VIEWS, SECOND_VIEW, READ_STATE])
    page = browser.new_page(viewport={"width": 1280, "height": 1400})
    try:
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        nb.run(1)
        page.wait_for_function("() => document.querySelectorAll('.axw-root').length === 2", timeout=30_000)
        # drag a second range in the second view; the first view follows
        drag_axis(page, 1, "flow_m3h", 120, 40, steps=8)
        page.wait_for_function(
            "() => [...document.querySelectorAll('.axw-root')].every(r => r.dataset.state === 'synced')"
            " && new Set([...document.querySelectorAll('.axw-root')].map(r => r.dataset.count)).size === 1",
            timeout=20_000,
        )
        nb.run(2)
        state = json.loads(nb.output_text(2).strip().splitlines()[-1])
        assert set(state["ranges"]) == {"head_m", "flow_m3h"}
        assert state["order"] == ["efficiency_pct", "flow_m3h", "head_m"]
        first, lay0 = _state_of(page, 0)
        assert int(first.get_attribute("data-count")) == state["count"]
        assert sorted(b["name"] for b in lay0["bands"]) == ["flow_m3h", "head_m"]

        # save, reload the page: the view comes back with the same ranges and order
        page.evaluate("() => { window.jupyterapp.commands.execute('docmanager:save'); }")
        page.wait_for_timeout(1500)
        page.reload()
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=60_000)
        page.wait_for_function(
            "(n) => { const r = document.querySelector('.axw-root');"
            " return r && r.dataset.count === String(n); }",
            arg=state["count"],
            timeout=30_000,
        )
        _, lay = _state_of(page, 0)
        assert [a["name"] for a in lay["axes"]] == state["order"]
        assert sorted(b["name"] for b in lay["bands"]) == ["flow_m3h", "head_m"]
    finally:
        page.close()


BIG = """
import numpy as np, pandas as pd, axeswidget as aw
rng = np.random.default_rng(1)
big = pd.DataFrame(rng.normal(size=(1_000_000, 20)), columns=[f"m{i:02d}" for i in range(20)])
wb = aw.AxesWidget(big, height=360)
wb
"""


def test_a_million_rows_by_twenty_columns_loads_in_jupyterlab(browser, lab):
    name = lab.write_notebook(
        "big.ipynb", [BIG, "print(wb.count, sum(memoryview(c['codes']).nbytes for c in wb.table['columns']))"]
    )
    page = browser.new_page(viewport={"width": 1280, "height": 900})
    try:
        nb = LabNotebook(page, lab, name)
        nb.run(0, timeout=120_000)
        page.wait_for_function(
            "() => { const r = document.querySelector('.axw-root');"
            " return r && Number(r.dataset.drawn || 0) >= 1; }",
            timeout=180_000,
        )
        root = page.locator(".axw-root").first
        assert root.get_attribute("data-total") == "1000000"
        assert root.get_attribute("data-mode") == "density"
        nb.run(1)
        count, nbytes = map(int, nb.output_text(1).split())
        assert count == 1_000_000 and nbytes == 2 * 20 * 1_000_000  # 2 bytes per cell on the wire
    finally:
        page.close()
