"""Browser figures for `make bench`: the built widget in headless Chromium, with a stand-in model.

The page (``tests/bench/page.html``) holds the real built ``src/axeswidget/static/widget.js`` and a
stand-in anywidget model (as in ``tests/browser/harness.py``); the column buffers arrive as binary
files, as Jupyter delivers them. Every figure is a ratio against a baseline measured in the same run
and the same page:

* draw -- a full redraw of the lines layer vs a bare canvas loop stroking the same number of segments
  with the canvas path API (random y, same canvas size);
* load, drag and density at the large size -- page open until the first full draw, the longest frame
  while a range is dragged with the mouse (vs the longest frame of the idle page), and the density
  view's full draw (vs the same bare canvas loop);
* round trip -- a dragged range until the kernel-side mask is updated vs an echo of a trivial trait
  through the same path (page -> ``set_state`` -> ``get_state`` -> page).

The page hooks used (they belong to the widget): ``.axw-root`` ``dataset.drawn`` (full draws of the lines
layer so far), ``dataset.drawMs`` (wall time of the last one), ``root.__axw.redraw()`` (a Promise of
the milliseconds a full redraw took), ``data-layout`` and ``data-state``, and the ``view_mode`` trait.
A figure whose hook is missing is reported as "hook missing" instead of failing.

These are CPU figures: headless Chromium with ``--disable-gpu`` renders canvases in software.
"""

from __future__ import annotations

import json
import os
import shutil
import time
from pathlib import Path

import numpy as np
import pandas as pd
from ipywidgets.widgets.widget import _remove_buffers

import axeswidget as aw
from tests.conftest import CHROME_ARGS, CHROMIUM

HERE = Path(__file__).parent
STATIC = Path(aw.__file__).parent / "static"
NOTE = "CPU figures: headless Chromium, --disable-gpu, canvases rendered in software"
#: how long the first full draw of the large table may take before the bench falls back to a smaller one
LARGE_LOAD_TIMEOUT_S = 120.0


def unavailable() -> str | None:
    """Why the browser figures cannot run here, or None."""
    if not os.path.exists(CHROMIUM):
        return f"browser figures skipped: no Chromium at {CHROMIUM} (apt-get install chromium)"
    if not (STATIC / "widget.js").exists():
        return "browser figures skipped: src/axeswidget/static/widget.js is not built (npm run build)"
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        return "browser figures skipped: the playwright package is not installed"
    return None


def frame(rows: int, cols: int, seed: int = 0) -> pd.DataFrame:
    """A complete (no missing values) random table; half the columns follow a shared factor."""
    rng = np.random.default_rng(seed)
    data = rng.normal(size=(rows, cols))
    data[:, 1::2] += data[:, :1]
    return pd.DataFrame(data, columns=[f"c{i:02d}" for i in range(cols)])


# ---------------------------------------------------------------------------------------------------------
# Page plumbing
# ---------------------------------------------------------------------------------------------------------


def write_page(folder: Path, widget) -> None:
    """The page, the built module, the widget's state and its buffers as binary files, in ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    shutil.copy(STATIC / "widget.js", folder / "widget.js")
    shutil.copy(HERE / "page.html", folder / "index.html")
    clean, paths, buffers = _remove_buffers(widget.get_state())
    files = []
    for k, buf in enumerate(buffers):
        name = f"buf{k}.bin"
        (folder / name).write_bytes(bytes(buf))
        files.append(name)
    meta = {"state": clean, "buffer_paths": paths, "buffer_files": files}
    (folder / "state.json").write_text(json.dumps(meta))


class Page:
    """One widget shown in the bench page; wraps the harness's helpers for the mouse."""

    def __init__(self, browser, server, widget, name: str, width: int = 940, height: int = 560):
        from tests.browser.harness import Shown

        write_page(server.dir / name, widget)
        self.widget = widget
        self.page = browser.new_page(viewport={"width": width, "height": height})
        self.errors: list[str] = []
        self.page.on("pageerror", lambda e: self.errors.append(str(e)))
        self.page.goto(server.url + name + "/index.html")
        self.page.wait_for_function("() => window.__ready === true", timeout=600_000)
        self.shown = Shown(self.page, widget)

    def js(self, expr: str, arg=None):
        return self.page.evaluate(expr, arg)

    def has_api(self) -> bool:
        return bool(self.js("() => !!(document.querySelector('.axw-root') || {}).__axw"))

    def has_drawn_hook(self) -> bool:
        return self.js("() => document.querySelector('.axw-root')?.dataset.drawn !== undefined")

    def wait_first_draw(self, timeout_s: float) -> bool:
        """Wait until ``dataset.drawn >= 1``; False when the hook is missing or time ran out."""
        if not self.has_api():
            # without the redraw API, give a data-drawn hook alone a few seconds to appear
            timeout_s = min(timeout_s, 5.0)
        try:
            self.page.wait_for_function(
                "() => Number(document.querySelector('.axw-root')?.dataset.drawn ?? 0) >= 1",
                timeout=timeout_s * 1000,
                polling=50,
            )
            return True
        except Exception:
            return False

    def quiet(self) -> None:
        """Let pending drawing finish: a full redraw through the hook (two frames without it)."""
        if self.has_api():
            self.js("() => document.querySelector('.axw-root').__axw.redraw()")
        else:
            self.shown.settle()

    def times(self) -> dict:
        return self.js("() => window.__t")

    def redraw_ms(self, repeat: int = 3) -> float | None:
        """Best of ``repeat`` full redraws through ``__axw.redraw()``; None when the hook is missing."""
        if not self.has_api():
            return None
        best = None
        for _ in range(repeat):
            ms = float(self.js("() => document.querySelector('.axw-root').__axw.redraw()"))
            best = ms if best is None else min(best, ms)
        return best

    def draw_ms_hook(self) -> float | None:
        v = self.js("() => document.querySelector('.axw-root')?.dataset.drawMs")
        return None if v is None else float(v)

    def geometry(self) -> dict:
        """Lines canvas size in device pixels, device pixel ratio, axis x positions and plot band."""
        return self.js(
            """() => { const c = document.querySelector('canvas.axw-lines');
                 const lay = JSON.parse(document.querySelector('.axw-root').dataset.layout);
                 return { width: c.width, height: c.height, dpr: c.width / c.clientWidth,
                          xs: lay.axes.map(a => a.x), top: lay.top, bottom: lay.bottom }; }"""
        )

    def bare_ms(self, rows: int, repeat: int = 3) -> float:
        """Best of ``repeat`` bare canvas loops over the same segments as the widget draws."""
        g = self.geometry()
        arg = {
            "rows": rows,
            "xs": g["xs"],
            "width": g["width"],
            "height": g["height"],
            "dpr": g["dpr"],
            "top": g["top"],
            "bottom": g["bottom"],
        }
        return min(float(self.js("(a) => window.__bench.bareLines(a)", arg)) for _ in range(repeat))

    def close(self):
        self.page.close()


def _ratio(a, b):
    return None if a is None or b is None or b <= 0 else a / b


# ---------------------------------------------------------------------------------------------------------
# Figures
# ---------------------------------------------------------------------------------------------------------


def bench_draw(browser, server, rows: int, cols: int) -> dict:
    """Full redraw of the lines layer vs the bare canvas loop, same page, same canvas size."""
    w = aw.AxesWidget(frame(rows, cols))
    if w.has_trait("view_mode"):
        w.view_mode = "lines"  # the figure is about the lines layer, whatever "auto" would pick
    p = Page(browser, server, w, f"draw-{rows}-{cols}")
    try:
        out = {"rows": rows, "cols": cols, "target": 0.3}
        p.wait_first_draw(120.0)
        widget_ms = p.redraw_ms()
        out["bare_ms"] = p.bare_ms(rows)
        out["widget_ms"] = widget_ms
        out["ratio"] = _ratio(widget_ms, out["bare_ms"])
        out["draw_ms_hook"] = p.draw_ms_hook()
        if widget_ms is None:
            out["missing"] = ["root.__axw.redraw()"]
        out["page_errors"] = p.errors
        return out
    finally:
        p.close()


def _open_large(browser, server, rows: int, cols: int) -> tuple[Page | None, dict]:
    """Open the large table and wait for its first full draw."""
    w = aw.AxesWidget(frame(rows, cols))
    info = {"rows": rows, "cols": cols}
    t0 = time.perf_counter()
    p = Page(browser, server, w, f"large-{rows}-{cols}")
    drew = p.wait_first_draw(LARGE_LOAD_TIMEOUT_S)
    info["wall_s"] = time.perf_counter() - t0
    info["times_ms"] = p.times()
    info["drew"] = drew
    info["hook"] = p.has_drawn_hook()
    info["mode"] = p.js("() => document.querySelector('.axw-root')?.dataset.mode ?? null")
    return p, info


def _drag(p: Page, axis: str, v0: float, v1: float, steps: int = 12) -> dict:
    """Drag a range with the mouse while the page records its frame times."""
    sh = p.shown
    x = sh.x_of(axis)
    y0, y1 = sh.y_of(axis, v0), sh.y_of(axis, v1)
    p.js("() => window.__bench.frames()")
    p.js("() => window.__bench.twoFrames()")
    t0 = time.perf_counter()
    p.page.mouse.move(x, y0)
    p.page.mouse.down()
    p.page.mouse.move(x, y1, steps=steps)
    p.page.mouse.up()
    p.js("() => window.__bench.twoFrames()")
    stats = p.js("() => window.__frames.stop()")
    stats["drag_s"] = time.perf_counter() - t0
    # the drag must have made a selection, or the figure means nothing
    stats["page_count"] = p.js("() => Number(document.querySelector('.axw-root').dataset.count)")
    stats["bands"] = len(sh.layout().get("bands", []))
    return stats


def _idle(p: Page, seconds: float) -> dict:
    p.js("() => window.__bench.frames()")
    time.sleep(seconds)
    return p.js("() => window.__frames.stop()")


def bench_large(browser, server, sizes: list[tuple[int, int]]) -> dict:
    """Load, dragging and density at the first size of ``sizes`` that draws in time (then the next)."""
    out: dict = {"tried": []}
    p = None
    for rows, cols in sizes:
        p, info = _open_large(browser, server, rows, cols)
        out["tried"].append(info)
        if info["drew"] or not info["hook"] and not p.has_api():
            break
        p.close()
        p = None
    if p is None:
        out["error"] = "no size drew within the time limit"
        return out
    try:
        info = out["tried"][-1]
        out.update(rows=info["rows"], cols=info["cols"])
        t = info["times_ms"]
        out["load_ms"] = t.get("drawn") if info["drew"] else None
        out["data_ms"] = t.get("data")
        out["render_ms"] = t.get("rendered")
        missing = []
        if out["load_ms"] is None:
            missing.append(".axw-root dataset.drawn")
        out["bare_ms"] = p.bare_ms(out["rows"], repeat=1 if out["rows"] > 2 * 10**5 else 3)
        # the widget's own part of the load: from render() to the first full draw
        if out["load_ms"] is not None:
            out["load_ratio"] = _ratio(out["load_ms"] - t["renderStart"], out["bare_ms"])
        idle = _idle(p, 1.5)
        drags = []
        for axis, v0, v1 in (("c00", -1.0, 1.5), ("c02", 2.0, -0.5), ("c04", -2.0, 0.5)):
            drags.append(_drag(p, axis, v0, v1))
            p.shown.round_trip()  # the kernel answers between drags, as it would in Jupyter (not timed)
        longest = sorted(d["max"] for d in drags if d["max"] is not None)
        out["idle_frames"], out["drag_frames"] = idle, drags
        out["mode"] = info.get("mode")
        # the median over three drags of each drag's longest frame (a maximum is noisy on a shared machine)
        out["drag_longest_ms"] = longest[len(longest) // 2] if longest else None
        out["drag_worst_ms"] = longest[-1] if longest else None
        out["drag_ratio"] = _ratio(out["drag_longest_ms"], idle["max"])
        if any(d["bands"] == 0 or d["page_count"] >= out["rows"] for d in drags):
            out["drag_warning"] = "a drag made no selection; the drag figure does not apply"
        w = p.widget
        if w.has_trait("view_mode"):
            w.view_mode = "lines"
            p.shown.pull_from_kernel(["view_mode"])
            out["lines_ms"] = p.redraw_ms(repeat=1)
            w.view_mode = "density"
            p.shown.pull_from_kernel(["view_mode"])
            out["density_ms"] = p.redraw_ms(repeat=3)
            out["density_ratio"] = _ratio(out["density_ms"], out["bare_ms"])
            if out["density_ms"] is None:
                missing.append("root.__axw.redraw()")
        else:
            out["density_ms"] = None
            missing.append("view_mode trait")
        out["missing"] = missing
        out["page_errors"] = p.errors
        return out
    finally:
        p.close()


def _wait_synced(p: Page, count: int, timeout_s: float = 30.0) -> None:
    p.page.wait_for_function(
        "(n) => { const d = document.querySelector('.axw-root').dataset;"
        " return d.state === 'synced' && Number(d.count) === n; }",
        arg=count,
        timeout=timeout_s * 1000,
        polling="raf",
    )


def _push_until(p: Page, done, timeout_s: float = 30.0) -> None:
    """Apply what the page sends to the Python widget until ``done(messages)`` says the edit is over."""
    end = time.perf_counter() + timeout_s
    seen: list[dict] = []
    while time.perf_counter() < end:
        msgs = p.shown.sent()
        for m in msgs:
            p.widget.set_state(m)
        seen.extend(msgs)
        if done(seen):
            return
        time.sleep(0.002)
    raise TimeoutError("the page sent nothing that finished the edit")


def bench_round_trip(browser, server, rows: int, cols: int, repeat: int = 5) -> dict:
    """A range released with the mouse until the kernel's mask is updated (and until the page shows the
    kernel's answer) vs an echo of a trivial trait through the same path: page ``save_changes`` ->
    ``w.set_state`` -> ``w.get_state`` -> page. Each timing starts on a quiet page (after a full redraw).
    """
    from tests.browser.harness import wire_message

    w = aw.AxesWidget(frame(rows, cols))
    p = Page(browser, server, w, f"trip-{rows}-{cols}")
    sh = p.shown
    answer = ("ranges", "order", "count", "mask_bits", "answered_seq")
    try:
        p.wait_first_draw(60.0)
        # the echo uses `saved` (named selections), which the page does not react to
        p.js("""() => { window.__echoes = 0;
                 window.__model.on('change:saved', () => { window.__echoes += 1; }); }""")
        kernel_s, page_s, echo_s = [], [], []
        for k in range(repeat):
            x = sh.x_of("c01")
            lo, hi = -1.5 + 0.1 * k, 0.5 + 0.1 * k
            p.page.mouse.move(x, sh.y_of("c01", lo))
            p.page.mouse.down()
            p.page.mouse.move(x, sh.y_of("c01", hi), steps=6)
            sh.push_to_kernel()  # the throttled edits sent while dragging (not timed)
            p.quiet()
            t0 = time.perf_counter()
            p.page.mouse.up()
            _push_until(p, lambda seen: any(m.get("dragging") is False for m in seen))
            t_kernel = time.perf_counter()
            p.js("(m) => window.__apply(m)", wire_message(w.get_state(list(answer))))
            _wait_synced(p, int(w.count))
            t_page = time.perf_counter()
            kernel_s.append(t_kernel - t0)
            page_s.append(t_page - t0)
            if not w.ranges.get("c01"):
                raise RuntimeError(f"the dragged range did not reach the kernel: ranges = {w.ranges}")
            p.quiet()
            before = p.js("() => window.__echoes")
            t0 = time.perf_counter()
            p.js("() => { const m = window.__model; m.set('saved', m.get('saved')); m.save_changes(); }")
            _push_until(p, lambda seen: any("saved" in m for m in seen))
            p.js("(m) => window.__apply(m)", wire_message(w.get_state(["saved"])))
            echo_s.append(time.perf_counter() - t0)
            if p.js("() => window.__echoes") < before + 2:
                raise RuntimeError("the echo did not come back to the page")
        kr, pr, e = min(kernel_s), min(page_s), min(echo_s)
        return {
            "rows": rows,
            "cols": cols,
            "range_to_kernel_ms": 1e3 * kr,
            "range_to_page_ms": 1e3 * pr,
            "echo_ms": 1e3 * e,
            "ratio": kr / e,
            "ratio_page": pr / e,
            "kernel_count": int(w.count),
            "page_errors": p.errors,
        }
    finally:
        p.close()


# ---------------------------------------------------------------------------------------------------------
# Entry point (called from tests/bench/run.py)
# ---------------------------------------------------------------------------------------------------------


def _fmt(v, spec: str = ".0f", unit: str = " ms", missing: str = "hook missing") -> str:
    return missing if v is None else format(v, spec) + unit


def run(quick: bool = False) -> dict:
    """Measure and print the browser figures; return them for bench.json."""
    why = unavailable()
    if why:
        print(why)
        return {"skipped": why}
    from playwright.sync_api import sync_playwright

    from tests.browser.harness import StaticServer

    print(f"\nbrowser figures ({NOTE})")
    results: dict = {"note": NOTE}
    server = StaticServer()
    try:
        with sync_playwright() as pw:
            browser = pw.chromium.launch(executable_path=CHROMIUM, args=CHROME_ARGS)
            try:
                _run_all(browser, server, quick, results)
            finally:
                browser.close()
    finally:
        server.close()
    return results


def _guard(results: dict, key: str, fn):
    try:
        results[key] = fn()
    except Exception as err:  # a broken figure is reported, the others still run
        results[key] = {"error": f"{type(err).__name__}: {err}"}
        print(f"  {key}: failed: {type(err).__name__}: {str(err).splitlines()[0] if str(err) else ''}")
    return results[key]


def _run_all(browser, server, quick: bool, results: dict) -> None:
    d = _guard(results, "draw", lambda: bench_draw(browser, server, 10**5, 10))
    if "error" not in d:
        print("draw: full redraw of the lines layer vs a bare canvas loop stroking the same segments in the")
        print(
            "      same page (one beginPath, moveTo/lineTo per row, stroke every 2000 rows; target <= 0.3x)"
        )
        print(f"{'rows':>9} {'cols':>4} {'widget':>14} {'bare loop':>10} {'ratio':>14}")
        print(
            f"{d['rows']:>9} {d['cols']:>4} {_fmt(d['widget_ms']):>14} {_fmt(d['bare_ms']):>10} "
            f"{_fmt(d['ratio'], '.2f', 'x'):>14}"
        )
        if d.get("missing"):
            print("  hook missing: " + ", ".join(d["missing"]))

    sizes = [(10**5, 20)] if quick else [(10**6, 20), (2 * 10**5, 20)]
    g = _guard(results, "large", lambda: bench_large(browser, server, sizes))
    if "error" not in g:
        for info in g["tried"][:-1]:
            print(
                f"large: {info['rows']:,} x {info['cols']} did not finish its first draw within "
                f"{LARGE_LOAD_TIMEOUT_S:.0f} s on this machine; fell back to {g['rows']:,} x {g['cols']}"
            )
        idle, drags = g["idle_frames"], g["drag_frames"]
        print(f"large table: {g['rows']:,} rows x {g['cols']} axes, view_mode auto drew: {g.get('mode')}")
        print(f"  baseline: bare canvas loop over the same segments  {_fmt(g['bare_ms'])}")
        print(
            f"  load, page open -> first full draw                {_fmt(g['load_ms'])}"
            f"  (data in page {_fmt(g['data_ms'])}, render() returned {_fmt(g['render_ms'])})"
        )
        print(f"  load, render() -> first full draw vs bare loop    {_fmt(g.get('load_ratio'), '.2f', 'x')}")
        idle_ms, drag_ms = _fmt(idle["max"], missing="no frames"), _fmt(g["drag_longest_ms"], missing="-")
        frames = sum(d["frames"] for d in drags)
        print(
            f"  drag, longest frame (median of 3 drags)           {drag_ms}"
            f"  vs idle page {idle_ms}: {_fmt(g['drag_ratio'], '.1f', 'x', '-')}"
            f"  (worst {_fmt(g['drag_worst_ms'], missing='-')}; {frames} frames;"
            f" longest long task {max(d['longtaskMax'] for d in drags):.0f} ms)"
        )
        print(
            f"  density view, full draw                           {_fmt(g.get('density_ms'))}"
            f"  vs bare loop {_fmt(g.get('density_ratio'), '.3f', 'x')}"
            f"  (lines view {_fmt(g.get('lines_ms'))})"
        )
        if g.get("drag_warning"):
            print("  " + g["drag_warning"])
        if g["missing"]:
            print("  hook missing: " + ", ".join(g["missing"]))
    t = _guard(results, "round_trip", lambda: bench_round_trip(browser, server, 10**5, 10))
    if "error" not in t:
        print(
            f"round trip ({t['rows']:,} x {t['cols']}), vs an echo of a trivial trait {_fmt(t['echo_ms'])}:"
        )
        print(f"  range released -> kernel mask updated    {_fmt(t['range_to_kernel_ms'])} {t['ratio']:.1f}x")
        print(
            f"  range released -> kernel answer in page  {_fmt(t['range_to_page_ms'])} {t['ratio_page']:.1f}x"
        )
    errs = {
        k: v.get("page_errors") for k, v in results.items() if isinstance(v, dict) and v.get("page_errors")
    }
    if errs:
        print(f"  page errors: {errs}")
