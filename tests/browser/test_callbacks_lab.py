"""Level-2: on_change callbacks in a real JupyterLab, where comm messages are handled on a kernel subshell
at the same time as cells. When the page shows the exact count, the callbacks for that selection are
done; a failing callback is reported and the widget keeps working."""

from __future__ import annotations

import json

import pytest

from tests.browser.jupyter import LabNotebook, drag_axis

pytestmark = [pytest.mark.browser, pytest.mark.jupyter]


SETUP = """
import json, time
import axeswidget as aw
fleet = aw.demo.pump_fleet(4000, seed=3)
w = aw.AxesWidget(fleet, axes=["flow_m3h", "head_m", "efficiency_pct", "vibration_mm_s"], height=360)
seen = []

def refit(wid):
    ranges = wid.ranges
    time.sleep(1.5)  # a slow model fit
    seen.append({"ranges": ranges, "count": int(wid.mask.sum())})

w.on_change(refit, every=5.0)
w
"""

# run as soon as the page shows the exact count: no wait() here, the page's state is the promise
READ = """
print(json.dumps({"seen": seen[-1] if seen else None, "calls": len(seen), "ranges": w.ranges,
                  "count": w.count, "sum": int(w.mask.sum()), "error": w.callback_error}))
"""

BREAK = """
def broken(wid):
    raise ValueError("the model would not converge")

w.off_change(refit)
w.on_change(broken)
"""

READ_AFTER_ERROR = """
# reference: pandas.Series.between, inclusive on both ends, AND over the two axes
ref = fleet["efficiency_pct"].between(*w.ranges["efficiency_pct"][0]) & fleet["head_m"].between(
    *w.ranges["head_m"][0]
)
print(json.dumps({"error": w.callback_error, "count": w.count, "ref": int(ref.sum()),
                  "settled": w.wait(timeout=30), "answered": w.answered_seq == w.edit_seq}))
"""


def _last_json(nb, i):
    return json.loads(nb.output_text(i).strip().splitlines()[-1])


def _drag_until_synced(page, axis, v0, v1, slow: bool):
    root = page.locator(".axw-root").first
    root.scroll_into_view_if_needed()  # running later cells may have scrolled the notebook
    page.wait_for_timeout(300)
    drag_axis(page, 0, axis, v0, v1)
    if slow:  # the slow callback keeps the page on its preview for a while
        page.wait_for_function(
            "() => document.querySelector('.axw-root').dataset.state === 'preview'", timeout=10_000
        )
    # then the kernel's answer arrives, for a selection with a range on this axis
    page.wait_for_function(
        """(axis) => { const r = document.querySelector('.axw-root');
            return r.dataset.state === 'synced'
                && JSON.parse(r.dataset.layout).bands.some(b => b.name === axis); }""",
        arg=axis,
        timeout=60_000,
    )
    return int(root.get_attribute("data-count"))


def test_the_next_cell_sees_the_callback_result_for_the_final_selection(browser, lab):
    name = lab.write_notebook("callbacks.ipynb", [SETUP, READ, BREAK, READ_AFTER_ERROR])
    page = browser.new_page(viewport={"width": 1280, "height": 1000})
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
    try:
        nb = LabNotebook(page, lab, name)
        nb.run(0)
        page.wait_for_selector(".axw-root canvas.axw-overlay", timeout=30_000)
        page_count = _drag_until_synced(page, "efficiency_pct", 72, 55, slow=True)

        nb.run(1)
        out = _last_json(nb, 1)
        # the callback has finished for the final selection (not an in-between one)
        assert out["seen"] is not None, out
        assert out["seen"]["ranges"] == out["ranges"]
        assert out["seen"]["count"] == out["count"] == out["sum"] == page_count
        lo, hi = out["ranges"]["efficiency_pct"][0]
        assert 53 < lo < 57 and 70 < hi < 74
        # ends dragged on the page carry no float noise
        assert len(repr(lo)) <= 8 and len(repr(hi)) <= 8, (lo, hi)
        assert out["error"] == ""

        # a callback that raises during a drag: reported on the widget, the selection still answered
        nb.run(2)
        count = _drag_until_synced(page, "head_m", 35, 15, slow=False)
        nb.run(3)
        out = _last_json(nb, 3)
        assert out["error"].startswith("callback broken raised ValueError: the model would not converge")
        assert out["count"] == out["ref"] == count
        assert out["settled"] is True and out["answered"] is True
        assert not dialogs
    finally:
        page.close()
