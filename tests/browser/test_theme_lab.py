"""Level-2: the widget follows JupyterLab's theme live (light -> dark -> light), readable in both."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import JupyterServer, LabNotebook

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]

SETUP = """
import axeswidget as aw
fleet = aw.demo.pump_fleet(1500, seed=4)
w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct"], height=320)
w
"""

# The colour of the axis-name text (the most opaque overlay pixel in the header of the first axis) and
# the page's background colour behind the widget.
READ = """() => {
  const root = document.querySelector('.axw-root');
  const lay = JSON.parse(root.dataset.layout);
  const c = root.querySelector('canvas.axw-overlay');
  const s = c.width / c.getBoundingClientRect().width;
  const x = lay.axes[0].x;
  const d = c.getContext('2d').getImageData(Math.round((x - 25) * s), Math.round(4 * s),
                                             Math.round(50 * s), Math.round(22 * s)).data;
  let best = [0, 0, 0, 0];
  for (let i = 0; i < d.length; i += 4) if (d[i + 3] > best[3]) best = [d[i], d[i + 1], d[i + 2], d[i + 3]];
  const axisLine = Array.from(c.getContext('2d').getImageData(Math.round(x * s),
                      Math.round((lay.top + lay.bottom) / 2 * s), 1, 1).data);
  let el = root, bg = 'rgba(0, 0, 0, 0)';
  while (el && /rgba\\(0, 0, 0, 0\\)|transparent/.test(bg)) {
    bg = getComputedStyle(el).backgroundColor; el = el.parentElement;
  }
  return {text: best, axisLine, bg, theme: document.body.dataset.jpThemeName};
}"""


def _rgb(css: str) -> tuple[float, float, float]:
    nums = css[css.index("(") + 1 : css.index(")")].replace(",", " ").split()
    return tuple(float(v) / 255 for v in nums[:3])


def _luminance(rgb) -> float:
    # reference: WCAG 2.1 relative luminance (sRGB linearisation)
    def lin(c):
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (lin(c) for c in rgb)
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def _contrast(a, b) -> float:
    # reference: WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05); 4.5 is the minimum for small text
    la, lb = sorted((_luminance(a), _luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


def _switch(page, theme: str) -> None:
    # the command's promise is not returned: it can wait on a dialog forever (TESTING.md)
    page.evaluate(
        "(t) => { window.jupyterapp.commands.execute('apputils:change-theme', {theme: t}); }", theme
    )
    page.wait_for_function("(t) => document.body.dataset.jpThemeName === t", arg=theme, timeout=30_000)


def _settled(page, theme_light: bool) -> dict:
    """The colours once the widget has redrawn for the theme (text light on dark, dark on light)."""
    cond = "l < 0.35" if theme_light else "l > 0.6"
    page.wait_for_function(
        f"() => {{ const r = ({READ})(); const [a, b, c] = r.text;"
        f" const l = (a + b + c) / 765; return {cond}; }}",
        timeout=20_000,
    )
    return page.evaluate(READ)


def test_widget_follows_the_jupyterlab_theme_live(browser):
    lab = JupyterServer()
    page = browser.new_page(viewport={"width": 1100, "height": 800})
    try:
        name = lab.write_notebook("theme.ipynb", [SETUP])
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=30_000)
        light = _settled(page, theme_light=True)
        assert light["theme"] == "JupyterLab Light"
        assert _contrast([v / 255 for v in light["text"][:3]], _rgb(light["bg"])) >= 4.5, json.dumps(light)

        _switch(page, "JupyterLab Dark")
        dark = _settled(page, theme_light=False)  # redrawn without reloading or rerunning the cell
        assert _luminance(_rgb(dark["bg"])) < 0.1, json.dumps(dark)
        assert _contrast([v / 255 for v in dark["text"][:3]], _rgb(dark["bg"])) >= 4.5, json.dumps(dark)
        # the axis line changed with the text: light on dark
        assert sum(dark["axisLine"][:3]) > sum(light["axisLine"][:3]) + 200, (light, dark)
        page.wait_for_function("() => !document.querySelector('#jupyterlab-splash')", timeout=20_000)
        page.screenshot(path=str(_shots() / "axw-theme-dark.png"))

        _switch(page, "JupyterLab Light")
        back = _settled(page, theme_light=True)
        assert _contrast([v / 255 for v in back["text"][:3]], _rgb(back["bg"])) >= 4.5
    finally:
        page.close()
        lab.close()


def _shots():
    import os
    import tempfile
    from pathlib import Path

    folder = Path(os.environ.get("AXW_SHOTS", tempfile.gettempdir()))
    folder.mkdir(parents=True, exist_ok=True)
    return folder
