"""Level-2: keyboard operation of the chart inside JupyterLab, whose command mode has one-key shortcuts
(M makes a Markdown cell, arrows move between cells, Enter edits): keys in the chart stay the chart's."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import JupyterServer, LabNotebook

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]

SETUP = """
import axeswidget as aw
fleet = aw.demo.pump_fleet(2000, seed=5)
w = aw.AxesWidget(fleet, axes=["site", "flow_m3h", "head_m", "sand_ppm"], height=320)
w
"""

CHECK = """
import json
lo, hi = w.ranges["head_m"][0]
# reference: pandas.Series.between / isna
ref = fleet["head_m"].between(lo, hi) & fleet["sand_ppm"].isna()
print(json.dumps({"ranges": w.ranges, "flipped": w.flipped, "equal": bool((w.mask == ref.to_numpy()).all()),
                  "count": w.count}))
"""


def test_keys_in_the_chart_do_not_reach_jupyterlab_shortcuts(browser):
    lab = JupyterServer()
    page = browser.new_page(viewport={"width": 1200, "height": 900})
    try:
        name = lab.write_notebook("keys.ipynb", [SETUP, CHECK])
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=30_000)
        page.keyboard.press("Escape")  # command mode: JupyterLab's one-key shortcuts are live
        page.locator("canvas.axw-overlay").focus()
        for key in ["ArrowRight", "ArrowRight", "Enter", "ArrowDown", "f", "ArrowRight", "m"]:
            page.keyboard.press(key)
        page.wait_for_timeout(500)
        # the first cell is still a code cell with its output, and the keys acted on the chart
        assert page.locator(".jp-Notebook .jp-Cell").nth(0).get_attribute("class").count("jp-CodeCell") == 1
        assert page.locator(".axw-root").count() == 1
        live = page.locator(".axw-live").inner_text()
        assert "head_m" in live and "sand_ppm missing" in live, live
        nb.run(1)
        out = json.loads(nb.output_text(1).strip().splitlines()[-1])
        assert out["equal"] and out["flipped"] == ["head_m"], out
        assert set(out["ranges"]) == {"head_m", "sand_ppm"} and out["ranges"]["sand_ppm"] == [None]
    finally:
        page.close()
        lab.close()
