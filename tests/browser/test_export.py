"""Browser tests of sharing: the standalone page opened from disk offline, and PNGs made by the page."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw
from axeswidget import export
from tests.browser.harness import Shown
from tests.browser.messaging import show_messaging
from tests.browser.pngfile import distinct_colours, png_pixels, png_size

pytestmark = pytest.mark.browser

NASTY_NAME = "</script><script>alert(1)</script>"
NASTY_LABELS = ["</script><SCRIPT>alert(2)</script>", "<img src=x onerror=alert(3)>", "a&b \u2028 <!-- x"]


@pytest.fixture
def fleet():
    f = aw.demo.pump_fleet(3000, seed=5)
    f[NASTY_NAME] = f["vibration_mm_s"] * 2
    f["batch"] = pd.Categorical(np.array(NASTY_LABELS)[np.arange(len(f)) % 3])
    return f


def _open_offline(browser, path, viewport=(1100, 640)):
    """Open a file in a context where every request but file:// is recorded and aborted."""
    context = browser.new_context(viewport={"width": viewport[0], "height": viewport[1]})
    requests, dialogs, errors = [], [], []
    context.route("**/*", lambda r: r.continue_() if r.request.url.startswith("file://") else r.abort())
    context.set_offline(True)
    page = context.new_page()
    page.on("request", lambda r: requests.append(r.url))
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(path.as_uri())
    page.wait_for_function(
        "() => document.documentElement.dataset.axwReady === 'true'"
        " || !document.getElementById('axw-error').hidden",
        timeout=20_000,
    )
    return context, page, requests, dialogs, errors


def test_standalone_page_works_offline_and_counts_like_pandas(browser, fleet, tmp_path):
    axes = ["batch", "flow_m3h", "head_m", "efficiency_pct", NASTY_NAME]
    w = aw.AxesWidget(fleet, axes=axes, ranges={"head_m": [[10, 60]]})
    path = export.to_html(w, tmp_path / "pumps.html", title="Pumps " + NASTY_NAME)
    context, page, requests, dialogs, errors = _open_offline(browser, path)
    try:
        assert page.locator("#axw-error").is_hidden(), page.locator("#axw-error").inner_text()
        # nothing but the file itself was asked for: code and data are inside
        assert [u for u in requests if not u.startswith("file://")] == []
        assert {u for u in requests if u.startswith("file://")} <= {path.as_uri()}
        # nothing broke out of its element: the page's three scripts only, no injected element
        assert page.evaluate("() => document.querySelectorAll('script').length") == 3
        assert page.evaluate("() => document.querySelectorAll('img, iframe').length") == 0
        assert page.locator("#axw-title").inner_text() == "Pumps " + NASTY_NAME
        meta = page.locator("#axw-meta").inner_text()
        assert "exported from axeswidget" in meta and "3,000 rows" in meta

        s = Shown(page, w)
        s.settle()
        lay = s.layout()
        assert [a["name"] for a in lay["axes"]] == axes
        # the state came along: the range set in Python is drawn and counted from the exported mask
        assert [b["name"] for b in lay["bands"]] == ["head_m"]
        start = int(s.root().get_attribute("data-count"))
        assert start == int(fleet["head_m"].between(10, 60).sum())  # reference: pandas.Series.between

        s.drag("efficiency_pct", 72, 55)
        assert s.root().get_attribute("data-state") == "synced"  # no kernel: the page's count is final
        page_count = int(s.root().get_attribute("data-count"))
        assert page_count < start

        # the range the page drew, read back from its band pixels (linear axis: invert y_of)
        band = next(b for b in s.layout()["bands"] if b["name"] == "efficiency_pct")
        ax = s.axis("efficiency_pct")

        def value(y):
            return ax["lo"] + (lay["bottom"] - y) / (lay["bottom"] - lay["top"]) * (ax["hi"] - ax["lo"])

        lo, hi = value(band["yBottom"]), value(band["yTop"])
        assert 53 < lo < 57 and 70 < hi < 74
        eff, head = fleet["efficiency_pct"], fleet["head_m"]
        # reference: pandas.Series.between, inclusive on both ends
        ref = int((eff.between(lo, hi) & head.between(10, 60)).sum())
        # the page previews from uint16 codes: rows within a few quantisation steps of an end may differ
        step = (eff.max() - eff.min()) / 65534
        near = int(((eff - lo).abs().le(3 * step) | (eff - hi).abs().le(3 * step)).sum())
        assert abs(page_count - ref) <= near, (page_count, ref, near)
        assert f"{page_count:,} of 3,000 rows selected" in page.locator(".axw-status").inner_text()

        shot = tmp_path / "page.png"
        page.screenshot(path=str(shot), full_page=True)
        pixels = png_pixels(shot.read_bytes())
        assert distinct_colours(pixels) > 20
        assert (pixels[..., :3].mean(axis=2) < 0.9).mean() > 0.02  # a real share of the page is drawn on
        assert not dialogs and not errors
        assert [u for u in requests if not u.startswith("file://")] == []
    finally:
        context.close()


def test_standalone_page_shows_an_error_instead_of_a_blank_page(browser, fleet, tmp_path, monkeypatch):
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m"])
    monkeypatch.setattr(export, "_bundle_code", lambda: "throw new Error('bundle broken on purpose');")
    path = export.to_html(w, tmp_path / "broken.html")
    context, page, _, dialogs, _ = _open_offline(browser, path)
    try:
        text = page.locator("#axw-error").inner_text()
        assert "could not draw the chart" in text and "bundle broken on purpose" in text
        assert not dialogs
    finally:
        context.close()


def _canvas_css_size(page) -> tuple[float, float]:
    return tuple(
        page.evaluate(
            "() => { const r = document.querySelector('canvas.axw-overlay').getBoundingClientRect();"
            " return [r.width, r.height]; }"
        )
    )


def test_png_from_the_page_at_scale_1_and_2(browser, static_server, monkeypatch, tmp_path):
    fleet = aw.demo.pump_fleet(2000, seed=2)
    w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct"], ranges={"head_m": [[15, 40]]})
    assert w.views == []
    s = show_messaging(browser, static_server, w, monkeypatch)
    s.deliver()  # the page registered its view
    assert len(w.views) == 1
    css_w, css_h = _canvas_css_size(s.page)
    assert css_w > 300 and css_h > 200

    for scale in (1, 2):
        req = export.save_png(w, tmp_path / f"chart@{scale}.png", scale=scale)
        assert not req.done and "waiting" in repr(req)  # nothing is written before the page answers
        assert not req.path.exists()
        s.wait_outbox()
        s.deliver()
        assert req.wait(0) == req.path and req.done and req.error is None
        data = req.path.read_bytes()
        assert png_size(data) == (round(css_w * scale), round(css_h * scale)) == (req.width, req.height)
        assert len(data) < 8 * 1024 * 1024
        px = png_pixels(data)
        assert px.shape[:2] == (round(css_h * scale), round(css_w * scale))
        assert distinct_colours(px) > 20
        lum = px[..., :3].mean(axis=2)
        assert (lum < 0.9).mean() > 0.02
        # the lines layer is in: many pixels of the selected-line blue (#0072B2, js/draw.ts readTheme)
        assert ((px[..., 2] - px[..., 0]) > 0.25).mean() > 0.02
        # the status line is drawn into the bottom-left corner, where nothing else is painted
        rows = slice(round((css_h - 10) * scale), round((css_h - 1) * scale))
        corner = lum[rows, 4 * scale : 50 * scale]
        assert (corner < 0.6).any()
    assert not s.errors

    # the view goes away: the kernel is told, and a new request fails at once with a clear message
    s.page.evaluate("() => window.__cleanup()")
    s.deliver()
    assert w.views == []
    with pytest.raises(export.ExportError, match="no view of this widget is showing"):
        export.save_png(w, tmp_path / "none.png")


def test_png_refused_by_the_page_reports_why(browser, static_server, monkeypatch, tmp_path):
    w = aw.AxesWidget(aw.demo.pump_fleet(300, seed=2), axes=["flow_m3h", "head_m"])
    s = show_messaging(browser, static_server, w, monkeypatch)
    s.deliver()
    # hide the chart: the page cannot draw a zero-size view and answers with the reason
    s.page.evaluate("() => { document.querySelector('.axw-root').style.display = 'none'; }")
    req = export.save_png(w, tmp_path / "hidden.png")
    s.wait_outbox()
    s.deliver()
    assert not req.done and "not laid out" in req.error
    with pytest.raises(export.ExportError, match="not laid out"):
        req.wait(0)
    assert not req.path.exists()
    assert "failed: the page could not make the PNG" in repr(req)
