"""Level-1 browser tests for wide tables: 31 and 65 axes at 850 px (open tables shipped with scikit-learn),
sideways scrolling, no overlapping text, hover and pin at many positions, the axis picker (the `hidden`
trait), the values box, and category axes with many labels."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import axeswidget as aw

pytestmark = pytest.mark.browser

WIDTH = 850  # the default notebook width the issue measured at
MIN_GAP = 64  # js/wide.ts MIN_AXIS_GAP


@pytest.fixture(scope="module")
def cancer():
    datasets = pytest.importorskip("sklearn.datasets")
    # the Wisconsin breast cancer table shipped with scikit-learn: 30 features + target = 31 columns
    return datasets.load_breast_cancer(as_frame=True).frame


@pytest.fixture(scope="module")
def digits():
    datasets = pytest.importorskip("sklearn.datasets")
    # the 8x8 digits shipped with scikit-learn: 64 pixel columns + target = 65 columns
    return datasets.load_digits(as_frame=True).frame


def narrow(s, width: int = WIDTH):
    """Make the stand-in host as wide as a notebook output at `width` px (the page has 12 px padding)."""
    s.page.set_viewport_size({"width": width, "height": 700})
    s.page.evaluate("w => { document.getElementById('host').style.width = w + 'px'; }", width - 24)
    s.settle()
    s.settle()


def text_boxes(s) -> list[dict]:
    return s.page.evaluate("() => document.querySelector('.axw-root').__axw.textBoxes()")


def overlapping(boxes: list[dict], slack: float = 0.5) -> list[tuple[str, str]]:
    out = []
    for i, a in enumerate(boxes):
        for b in boxes[i + 1 :]:
            dx = min(a["x1"], b["x1"]) - max(a["x0"], b["x0"])
            dy = min(a["y1"], b["y1"]) - max(a["y0"], b["y0"])
            if dx > slack and dy > slack:
                out.append((a["text"], b["text"]))
    return out


def scroll_to(s, x: float):
    """Scroll the chart so that logical x is near the left of the visible part."""
    s.page.evaluate("x => { document.querySelector('.axw-scroll').scrollLeft = x; }", max(0, x - 120))
    s.settle()


def line_y(s, lay: dict, axis: dict, value: float) -> float:
    """Logical y of a value on a numeric axis (a constant axis draws its rows at the middle)."""
    if axis["hi"] == axis["lo"]:
        return (lay["top"] + lay["bottom"]) / 2
    f = (value - axis["lo"]) / (axis["hi"] - axis["lo"])
    return lay["bottom"] - f * (lay["bottom"] - lay["top"])


@pytest.mark.parametrize("which", ["cancer", "digits"])
def test_wide_table_scrolls_and_no_text_overlaps(show, request, which):
    df = request.getfixturevalue(which)
    w = aw.AxesWidget(df)
    s = show(w, width=WIDTH)
    narrow(s)
    lay = s.layout()
    xs = [a["x"] for a in lay["axes"]]
    assert len(xs) == df.shape[1]
    assert min(np.diff(xs)) >= MIN_GAP - 0.01
    # the chart is wider than the page and scrolls sideways inside its own box
    assert s.root().get_attribute("data-scrolls") == "true"
    sw, cw = s.page.evaluate(
        "() => { const e = document.querySelector('.axw-scroll'); return [e.scrollWidth, e.clientWidth]; }"
    )
    assert cw <= WIDTH and sw >= xs[-1] + 40
    # the page itself does not grow wider than the viewport
    assert s.page.evaluate("() => document.documentElement.scrollWidth") <= WIDTH
    boxes = text_boxes(s)
    assert overlapping(boxes) == []
    # every axis has its name (at least its start) in the header band
    headers = [b for b in boxes if b["y1"] <= lay["top"] - 4 and b["font"].startswith("600")]
    for x in xs:
        assert any(b["x0"] - 1 <= x <= b["x1"] + 1 for b in headers), f"no header at x={x}"
    # tick labels stay clear of the neighbour's histogram (bars from x+2 to x+20 right of each axis)
    ticks = [b for b in boxes if lay["top"] - 6 <= (b["y0"] + b["y1"]) / 2 <= lay["bottom"] + 6]
    for x in xs:
        for b in ticks:
            if b["x1"] > x + 2.5 and b["x0"] < x + 20 and b["x0"] < x:  # a label reaching into the bars
                pytest.fail(f"text {b['text']!r} at {b['x0']:.0f}..{b['x1']:.0f} overlaps bars at {x:.0f}")
    assert not s.errors


def test_hover_and_pin_find_rows_across_65_axes(show, digits):
    df = digits.set_axis([f"d{i}" for i in range(len(digits))])  # index labels differ from positions
    w = aw.AxesWidget(df, curves=False)
    s = show(w, width=WIDTH)
    narrow(s)
    lay = s.layout()
    axes = lay["axes"]
    rng = np.random.default_rng(5)
    tried = found = 0
    for g in range(0, len(axes) - 1, 4):  # 16 gaps along the whole width
        a, b = axes[g], axes[g + 1]
        scroll_to(s, a["x"])
        box = s.canvas_box()
        xm = (a["x"] + b["x"]) / 2
        for row in rng.choice(len(df), 3, replace=False):
            ya = line_y(s, lay, a, df[a["name"]].iloc[row])
            yb = line_y(s, lay, b, df[b["name"]].iloc[row])
            y = (ya + yb) / 2  # straight lines: the row's line passes here
            s.page.mouse.move(box["x"] + xm, box["y"] + y)
            s.settle()
            tried += 1
            h = s.layout()["hover"]
            if h < 0:
                continue
            found += 1
            # the row found passes within the hover distance (6 px, js/hover.ts) plus quantisation
            yh = (line_y(s, lay, a, df[a["name"]].iloc[h]) + line_y(s, lay, b, df[b["name"]].iloc[h])) / 2
            assert abs(yh - y) <= 7, (g, row, h)
    assert tried == 48 and found == tried
    # pin the last hovered row with a click: the kernel learns its position, the dock shows its label
    s.page.mouse.down()
    s.page.mouse.up()
    s.settle()
    s.push_to_kernel()
    assert w.pinned == h and w.pinned_index == df.index[h]
    dock = s.page.locator(".axw-dock")
    assert dock.is_visible()
    assert dock.locator(".axw-vb-title").inner_text().startswith(f"index {df.index[h]} · row {h} · pinned")
    # the docked box sits below the chart, never over the axes (and outside the canvases a PNG is made of)
    assert dock.bounding_box()["y"] >= s.canvas_box()["y"] + s.canvas_box()["height"] - 0.5
    assert dock.locator(".axw-vb-entry").count() == len(axes)
    assert not s.errors


def test_values_box_of_31_columns_stays_in_view_with_the_index_label(show, cancer):
    df = cancer.sample(frac=1.0, random_state=3)  # shuffled: index labels are not positions
    w = aw.AxesWidget(df)
    s = show(w, width=WIDTH)
    narrow(s)
    lay = s.layout()
    a, b = lay["axes"][28], lay["axes"][29]  # near the right end: the box must not run off the chart
    scroll_to(s, a["x"])
    box = s.canvas_box()
    xm = (a["x"] + b["x"]) / 2
    for row in range(40):
        y = (line_y(s, lay, a, df[a["name"]].iloc[row]) + line_y(s, lay, b, df[b["name"]].iloc[row])) / 2
        s.page.mouse.move(box["x"] + xm, box["y"] + y)
        s.settle()
        if s.layout()["hover"] >= 0:
            break
    h = s.layout()["hover"]
    assert h >= 0
    tip = s.page.locator(".axw-tip")
    assert tip.locator(".axw-vb-title").inner_text() == f"index {df.index[h]} · row {h}"
    entries = tip.locator(".axw-vb-entry")
    assert entries.count() == 31
    # "name: value" per line; the last column is the target (reference: the row itself, df.iloc[h])
    assert entries.nth(30).inner_text() == f"target: {df['target'].iloc[h]}"
    # every entry, the last (target) included, is inside the box, and the box inside the visible chart
    tb = tip.bounding_box()
    view = s.page.locator(".axw-scroll").bounding_box()
    assert tb["x"] >= view["x"] - 0.5 and tb["x"] + tb["width"] <= view["x"] + view["width"] + 0.5
    assert tb["y"] + tb["height"] <= box["y"] + box["height"] + 0.5
    last = entries.nth(30).bounding_box()
    assert last["x"] + last["width"] <= tb["x"] + tb["width"] + 0.5
    assert last["y"] + last["height"] <= tb["y"] + tb["height"] + 0.5
    assert not s.errors


def test_picker_hides_and_shows_axes_and_keeps_order_whole(show, cancer):
    w = aw.AxesWidget(cancer)
    s = show(w, width=WIDTH)
    narrow(s)
    s.page.locator(".axw-pick-button").click()
    assert s.page.locator(".axw-pick").is_visible()
    assert s.page.locator(".axw-pick-button").inner_text() == "axes 31 / 31"
    s.page.locator('.axw-pick input[data-axis="mean area"]').uncheck()
    s.settle()
    s.push_to_kernel()
    assert w.hidden == ["mean area"]
    assert "mean area" not in [a["name"] for a in s.layout()["axes"]]
    assert len(s.layout()["axes"]) == 30
    assert s.page.locator(".axw-pick-button").inner_text() == "axes 30 / 31"
    # a range in Python locks that axis's box (hiding it would filter invisibly)
    w.ranges = {"mean radius": [[10, 15]]}
    s.pull_from_kernel()
    assert s.page.locator('.axw-pick input[data-axis="mean radius"]').is_disabled()
    with pytest.raises(Exception, match="has a range"):
        w.hidden = ["mean area", "mean radius"]
    # moving a header keeps `order` a full permutation: the hidden axis keeps its place
    s.page.keyboard.press("Escape")
    s.settle()
    lay = s.layout()
    box = s.canvas_box()
    first, third = lay["axes"][0], lay["axes"][2]
    s.page.mouse.move(box["x"] + first["x"], box["y"] + 14)
    s.page.mouse.down()
    s.page.mouse.move(box["x"] + third["x"] + 4, box["y"] + 14, steps=6)
    s.page.mouse.up()
    s.settle()
    s.push_to_kernel()
    assert sorted(w.order) == sorted(cancer.columns)
    assert w.order.index("mean area") == list(cancer.columns).index("mean area")
    assert w.order[:3] == ["mean texture", "mean perimeter", "mean radius"]
    # show it again from the page
    s.page.locator(".axw-pick-button").click()
    s.page.locator('.axw-pick input[data-axis="mean area"]').check()
    s.settle()
    s.push_to_kernel()
    assert w.hidden == []
    assert len(s.layout()["axes"]) == 31
    assert not s.errors


def test_category_axis_with_many_labels_shows_what_fits_and_the_picked_ones(show):
    rng = np.random.default_rng(2)
    labels = [f"station {i:02d}" for i in range(45)]
    weights = np.linspace(3, 0.2, 45)
    df = pd.DataFrame(
        {
            "station": pd.Categorical(rng.choice(labels, 4000, p=weights / weights.sum()), categories=labels),
            "level": rng.normal(size=4000),
        }
    )
    w = aw.AxesWidget(df, axes=["level", "station"])
    s = show(w, width=WIDTH)
    narrow(s)
    lay = s.layout()
    bands = lay["categoryBands"][1]
    assert len(bands) == 45
    drawn = {b["text"] for b in text_boxes(s)}
    shown = [b["label"] for b in bands if b["label"] in drawn]
    assert 10 <= len(shown) < 45  # thinned, not all and not none
    assert overlapping(text_boxes(s)) == []
    # pick a band whose label is not drawn: it gets its label
    hidden = next(b for b in bands if b["label"] not in drawn)
    box = s.canvas_box()
    s.page.mouse.click(s.x_of("station"), box["y"] + (hidden["y0"] + hidden["y1"]) / 2)
    s.settle()
    s.round_trip()
    assert w.ranges == {"station": [hidden["label"]]}
    # reference: pandas Series.isin
    assert int(s.root().get_attribute("data-count")) == int(df["station"].isin([hidden["label"]]).sum())
    assert hidden["label"] in {b["text"] for b in text_boxes(s)}
    assert not s.errors


def test_values_box_of_150_columns_drops_what_does_not_fit_and_says_so(show):
    rng = np.random.default_rng(8)
    df = pd.DataFrame({f"measurement_{i:03d}": rng.normal(size=300) for i in range(150)})
    w = aw.AxesWidget(df)
    s = show(w, width=WIDTH)
    narrow(s)
    lay = s.layout()
    a, b = lay["axes"][0], lay["axes"][1]
    box = s.canvas_box()
    for row in range(40):
        y = (line_y(s, lay, a, df[a["name"]].iloc[row]) + line_y(s, lay, b, df[b["name"]].iloc[row])) / 2
        s.page.mouse.move(box["x"] + (a["x"] + b["x"]) / 2, box["y"] + y)
        s.settle()
        if s.layout()["hover"] >= 0:
            break
    assert s.layout()["hover"] >= 0
    tip = s.page.locator(".axw-tip")
    shown = tip.locator(".axw-vb-entry").count()
    assert 20 <= shown < 150
    assert f"+{150 - shown} more" in tip.locator(".axw-vb-title").inner_text()
    # nothing shown is cut off: every column left lies inside the box, the box inside the visible chart
    tb = tip.bounding_box()
    view = s.page.locator(".axw-scroll").bounding_box()
    assert tb["x"] + tb["width"] <= view["x"] + view["width"] + 0.5
    for col in tip.locator(".axw-vb-col").all():
        cb = col.bounding_box()
        assert cb["x"] + cb["width"] <= tb["x"] + tb["width"] + 0.5
    assert not s.errors


def test_header_hover_names_the_axis_in_full(show, cancer):
    w = aw.AxesWidget(cancer)
    s = show(w, width=WIDTH)
    narrow(s)
    name = "mean fractal dimension"  # too long for a 64 px header: shortened on the chart
    drawn = {b["text"] for b in text_boxes(s)}
    assert name not in drawn and not any(name.split()[1] + " " + name.split()[2] == t for t in drawn)
    scroll_to(s, s.axis(name)["x"])
    box = s.canvas_box()
    s.page.mouse.move(box["x"] + s.axis(name)["x"], box["y"] + 12)
    s.settle()
    title = s.page.locator("canvas.axw-overlay").get_attribute("title")
    assert title.startswith(f"{name} (number)")
    s.page.mouse.move(box["x"] + s.axis(name)["x"] + 30, box["y"] + 200)  # away from the header
    s.settle()
    assert s.page.locator("canvas.axw-overlay").get_attribute("title") == ""
    assert not s.errors
