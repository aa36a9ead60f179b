"""Browser figures for `make bench`: the built widget in headless Chromium, with a stand-in model.

Driver: Playwright's sync API driving Chromium at tests.conftest.CHROMIUM (sizes up to 10^6 rows; the
column buffers reach the page as binary files it fetches, so no large message crosses the driver).

The page (``tests/bench/page.html``) holds the real built ``src/axeswidget/static/widget.js`` (its
default export, initialize/render) and a stand-in anywidget model (as in ``tests/browser/harness.py``),
and a bench-only bundle of baselines built here from ``js/bench/baselines.ts`` (it imports only
``js/raster.ts`` and ``js/linespass.ts``). Every figure is a ratio against a baseline measured in the
same run and the same page, on the same codes, geometry and pixel buffer size:

* lines -- a full redraw of the lines layer (Web Workers draw it above ~4*10^5 cells) vs the bare
  one-core accumulation loop over the same segments; printed with the per-core ratio
  (widget time x workers / bare time) and, as a diagnostic, the widget's row pass and rasteriser on
  one core without the worker pipeline;
* density -- the page's density pass (full redraw in the density view) vs a bare bincount-like loop
  over the same codes (bin lookup, one increment per row and pair), and vs the bare density view (that
  loop, then the counted cells drawn with the bare accumulation step);
* load -- render() until the first full draw, vs the same-work baseline of the view it drew (density:
  the bare density view; lines: the bare accumulation loop), never the density view vs the lines loop;
* drag (largest size) -- the longest frame while a range is dragged with the mouse vs the idle page;
* round trip -- a dragged range until the kernel-side mask is updated vs an echo of a trivial trait
  through the same path (page -> ``set_state`` -> ``get_state`` -> page).

The page hooks used (they belong to the widget): ``.axw-root`` ``dataset.drawn`` (full draws of the lines
layer so far), ``dataset.drawnBy``, ``dataset.mode``, ``root.__axw.redraw()`` (a Promise of the
milliseconds a full redraw took), ``data-layout`` and ``data-state``, and the ``view_mode`` trait. The
page counts the Web Workers the widget starts. A figure whose hook is missing is reported as such.

These are CPU figures: headless Chromium with ``--disable-gpu`` renders canvases in software.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import time
from pathlib import Path

import numpy as np
import pandas as pd
from ipywidgets.widgets.widget import _remove_buffers

import axeswidget as aw
from tests.conftest import CHROME_ARGS, CHROMIUM

HERE = Path(__file__).parent
ROOT = HERE.parents[1]
STATIC = Path(aw.__file__).parent / "static"
BASELINES = ROOT / "build" / "bench" / "baselines.js"
NOTE = "CPU figures: headless Chromium, --disable-gpu, canvases rendered in software"
DRIVER = f"Playwright sync API, Chromium at {CHROMIUM}"
#: how long the first full draw may take before the size is reported as not drawn
FIRST_DRAW_TIMEOUT_S = 120.0


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
    return build_baselines()


def build_baselines() -> str | None:
    """Bundle js/bench/baselines.ts into build/bench/baselines.js (bench only); why not, or None."""
    esbuild = ROOT / "node_modules" / ".bin" / "esbuild"
    if not esbuild.exists():
        return "browser figures skipped: node_modules/.bin/esbuild is missing (npm install)"
    cmd = [
        str(esbuild),
        str(ROOT / "js" / "bench" / "baselines.ts"),
        "--bundle",
        "--format=esm",
        "--target=es2022",
        f"--outfile={BASELINES}",
        "--log-level=error",
    ]
    done = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
    if done.returncode != 0:
        return f"browser figures skipped: the baselines bundle did not build: {done.stderr.strip()[:400]}"
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
    shutil.copy(BASELINES, folder / "baselines.js")
    # the codes in drawing order, column after column, for the baselines (not part of the widget's load)
    order = list(widget.order) or list(widget.axes)
    with open(folder / "codes.bin", "wb") as f:
        for axis in order:
            f.write(np.ascontiguousarray(widget.column(axis).codes, dtype=np.uint16).tobytes())
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

    def geometry(self) -> dict:
        """Lines canvas size in device pixels, device pixel ratio, axis x positions, plot band, lane."""
        return self.js(
            """() => { const c = document.querySelector('canvas.axw-lines');
                 const lay = JSON.parse(document.querySelector('.axw-root').dataset.layout);
                 return { width: c.width, height: c.height, dpr: c.width / c.clientWidth,
                          xs: lay.axes.map(a => a.x), top: lay.top, bottom: lay.bottom,
                          laneY: lay.laneY, flipped: lay.flipped }; }"""
        )

    def load_codes(self, rows: int, cols: int) -> None:
        """Fetch codes.bin into the page for the baselines (outside every timing)."""
        self.js(
            "async (a) => { window.__codes ="
            " await window.__baselines.loadCodes('codes.bin', a.rows, a.cols); }",
            {"rows": rows, "cols": cols},
        )

    def baseline(self, name: str, repeat: int, geometry: dict | None = None) -> dict:
        """Best of ``repeat`` runs of one baseline of baselines.js (by its total milliseconds)."""
        best = None
        for _ in range(repeat):
            r = self.js(f"(g) => window.__baselines.{name}(window.__codes, g ?? undefined)", geometry)
            if best is None or r["totalMs"] < best["totalMs"]:
                best = r
        return best

    def workers(self) -> int:
        """Web Workers the widget started so far (the page wraps the Worker constructor)."""
        return int(self.js("() => window.__workers"))

    def drawn_by(self) -> str | None:
        return self.js("() => document.querySelector('.axw-root')?.dataset.drawnBy ?? null")

    def set_view(self, mode: str) -> None:
        """Set view_mode in the kernel and send it to the page, as Jupyter would."""
        self.widget.view_mode = mode
        self.shown.pull_from_kernel(["view_mode"])

    def close(self):
        self.page.close()


def _best(old: dict | None, new: dict) -> dict:
    """The faster of two baseline runs (by total milliseconds)."""
    return new if old is None or new["totalMs"] < old["totalMs"] else old


def _least(values: list) -> float | None:
    """Smallest of some timings; None when a hook was missing."""
    values = [v for v in values if v is not None]
    return min(values) if values else None


def _ratio(a, b):
    return None if a is None or b is None or b <= 0 else a / b


# ---------------------------------------------------------------------------------------------------------
# Figures
# ---------------------------------------------------------------------------------------------------------


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


def bench_drags(p: Page, rows: int) -> dict:
    """Longest frame while dragging a range (median of three drags) vs the longest frame of the idle page."""
    idle = _idle(p, 1.5)
    drags = []
    for axis, v0, v1 in (("c00", -1.0, 1.5), ("c02", 2.0, -0.5), ("c04", -2.0, 0.5)):
        drags.append(_drag(p, axis, v0, v1))
        p.shown.round_trip()  # the kernel answers between drags, as it would in Jupyter (not timed)
    # undo the selection so the figures after this one draw every row
    p.widget.ranges = {}
    p.shown.pull_from_kernel()
    longest = sorted(d["max"] for d in drags if d["max"] is not None)
    out = {"idle_frames": idle, "drag_frames": drags}
    # the median over three drags of each drag's longest frame (a maximum is noisy on a shared machine)
    out["drag_longest_ms"] = longest[len(longest) // 2] if longest else None
    out["drag_worst_ms"] = longest[-1] if longest else None
    out["drag_ratio"] = _ratio(out["drag_longest_ms"], idle["max"])
    if any(d["bands"] == 0 or d["page_count"] >= rows for d in drags):
        out["drag_warning"] = "a drag made no selection; the drag figure does not apply"
    return out


def bench_size(browser, server, rows: int, cols: int, drag: bool = False) -> dict:
    """Load, lines, density (and dragging) at one size, each against its same-work baseline."""
    w = aw.AxesWidget(frame(rows, cols))
    if not w.has_trait("view_mode"):
        raise RuntimeError("the widget has no view_mode trait; the lines and density figures need it")
    big = rows * cols > 2 * 10**6
    # best of several runs: the least disturbed one on a shared machine
    repeat = 2 if big else (3 if rows * cols > 10**6 else 5)
    t0 = time.perf_counter()
    p = Page(browser, server, w, f"size-{rows}-{cols}")
    out: dict = {"rows": rows, "cols": cols, "missing": []}
    try:
        out["drew"] = p.wait_first_draw(FIRST_DRAW_TIMEOUT_S)
        out["open_wall_s"] = time.perf_counter() - t0
        t = p.times()
        out["times_ms"] = t
        out["auto_mode"] = p.js("() => document.querySelector('.axw-root')?.dataset.mode ?? null")
        out["load_drawn_by"] = p.drawn_by()
        # the widget's own part of the load: from render() to the first full draw
        out["load_ms"] = t["drawn"] - t["renderStart"] if out["drew"] and "drawn" in t else None
        if out["load_ms"] is None:
            out["missing"].append(".axw-root dataset.drawn")
        if drag:
            out["drag"] = bench_drags(p, rows)
        g = p.geometry()
        if g["flipped"]:
            raise RuntimeError(f"the baselines assume unflipped axes, the page flipped {g['flipped']}")
        p.load_codes(rows, cols)
        # each widget figure and its baselines take turns, so a change in the machine's load hits both
        p.set_view("lines")
        bare = raster = None
        lines_ms = []
        for k in range(repeat):
            bare = _best(bare, p.baseline("bareLines", 1, g))
            if k == 0 or not big:
                raster = _best(raster, p.baseline("rasteriserOneCore", 1, g))
            lines_ms.append(p.redraw_ms(1))
        out["lines_ms"] = _least(lines_ms)
        out["lines_drawn_by"] = p.drawn_by()
        out["workers"] = p.workers() if out["lines_drawn_by"] == "workers" else 1
        p.set_view("density")
        bincount = bare_density = None
        density_ms = []
        count_ms = []  # the counting part of each density redraw (the page's data-count-ms hook)
        for _ in range(repeat):
            bincount = _best(bincount, p.baseline("bareBincount", 1))
            bare_density = _best(bare_density, p.baseline("bareDensity", 1, g))
            density_ms.append(p.redraw_ms(1))
            count_ms.append(p.js("() => Number(document.querySelector('.axw-root').dataset.countMs) || null"))
        out["density_ms"] = _least(density_ms)
        out["density_count_ms"] = _least(count_ms)
        if bincount["counted"] != rows * (cols - 1):
            raise RuntimeError(f"the bincount baseline counted {bincount['counted']} pairs")
        out["bare_lines_ms"] = bare["totalMs"]
        out["bare_lines_accumulate_ms"] = bare["accumulateMs"]
        out["bare_lines_steps"] = bare["steps"]
        out["rasteriser_one_core_ms"] = raster["totalMs"]
        out["bare_bincount_ms"] = bincount["totalMs"]
        out["bare_density_ms"] = bare_density["totalMs"]
        out["bare_density_cells"] = bare_density["cells"]
        if out["lines_ms"] is None:
            out["missing"].append("root.__axw.redraw()")
        out["lines_ratio"] = _ratio(out["lines_ms"], out["bare_lines_ms"])
        out["lines_per_core"] = _ratio(
            None if out["lines_ms"] is None else out["lines_ms"] * out["workers"], out["bare_lines_ms"]
        )
        out["rasteriser_ratio"] = _ratio(out["rasteriser_one_core_ms"], out["bare_lines_ms"])
        out["density_ratio"] = _ratio(out["density_ms"], out["bare_bincount_ms"])
        out["density_count_ratio"] = _ratio(out["density_count_ms"], out["bare_bincount_ms"])
        out["density_view_ratio"] = _ratio(out["density_ms"], out["bare_density_ms"])
        # load is compared with the same-work baseline of the view it drew (density: bare bincount + the
        # counted cells drawn; lines: the bare accumulation loop), never the density view with the lines loop
        density_view = out["auto_mode"] == "density"
        load_base = out["bare_density_ms"] if density_view else out["bare_lines_ms"]
        out["load_baseline"] = "bare density view" if density_view else "bare lines loop"
        out["load_ratio"] = _ratio(out["load_ms"], load_base)
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

    print(f"\nbrowser figures ({NOTE}; driver: {DRIVER})")
    results: dict = {"note": NOTE, "driver": DRIVER}
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


def _x(v, spec: str = ".2f") -> str:
    return "-" if v is None else format(v, spec) + "x"


def _ms(v, spec: str = ".1f") -> str:
    return "-" if v is None else format(v, spec)


def _run_all(browser, server, quick: bool, results: dict) -> None:
    sizes = [(rows, cols) for rows in (10**4, 10**5, 10**6) for cols in (10, 20)]
    if quick:
        sizes = [s for s in sizes if s[0] < 10**6]
    largest = sizes[-1]
    results["sizes"] = []
    for rows, cols in sizes:
        box: dict = {}
        drag = (rows, cols) == largest
        key = f"{rows} x {cols}"
        r = _guard(box, key, lambda r=rows, c=cols, d=drag: bench_size(browser, server, r, c, drag=d))
        r.setdefault("rows", rows)
        r.setdefault("cols", cols)
        results["sizes"].append(r)
    ok = [r for r in results["sizes"] if "error" not in r]

    print("lines: full redraw of the lines layer vs a bare accumulation loop over the same segments (same")
    print("       rows, axes, geometry and pixel buffer; one core; + one tone-map and putImageData).")
    print("       per core = widget ms x workers / bare ms (target <= 1.0x); 'raster 1 core': the widget's")
    print("       row pass + rasteriser (linespass + raster.ts) in one call on the page, no workers")
    print(
        f"{'rows':>9} {'cols':>4} {'widget ms':>10} {'drawn by':>12} {'bare ms':>9} {'ratio':>7}"
        f" {'per core':>9} {'raster 1 core ms':>17} {'/ bare':>7}"
    )
    for r in ok:
        by = f"{r['workers']} workers" if r["lines_drawn_by"] == "workers" else (r["lines_drawn_by"] or "-")
        print(
            f"{r['rows']:>9} {r['cols']:>4} {_ms(r['lines_ms']):>10} {by:>12} {_ms(r['bare_lines_ms']):>9}"
            f" {_x(r['lines_ratio']):>7} {_x(r['lines_per_core']):>9} {_ms(r['rasteriser_one_core_ms']):>17}"
            f" {_x(r['rasteriser_ratio']):>7}"
        )
    print("\ndensity: the page's density pass (full redraw in the density view: count the binned pairs,")
    print("         then draw each non-empty cell once) vs a bare bincount-like loop over the same codes")
    print("         (bin lookup, one increment per row and pair; target <= 1.0x), and vs the bare density")
    print("         view (that loop + the same cells drawn with the bare accumulation step + tone map);")
    print("         all on the page's thread; 'count ms': the counting part of the widget's pass alone")
    print("         (every row counted from zero, pair by pair) vs the same bare loop")
    print(
        f"{'rows':>9} {'cols':>4} {'widget ms':>10} {'bincount ms':>12} {'ratio':>7}"
        f" {'bare view ms':>13} {'ratio':>7} {'cells':>7} {'count ms':>9} {'ratio':>7}"
    )
    for r in ok:
        print(
            f"{r['rows']:>9} {r['cols']:>4} {_ms(r['density_ms']):>10} {_ms(r['bare_bincount_ms']):>12}"
            f" {_x(r['density_ratio']):>7} {_ms(r['bare_density_ms']):>13} {_x(r['density_view_ratio']):>7}"
            f" {r['bare_density_cells']:>7} {_ms(r.get('density_count_ms')):>9}"
            f" {_x(r.get('density_count_ratio')):>7}"
        )
    print("\nload: render() -> first full draw in view_mode auto, vs the same-work baseline of the view")
    print(f"{'rows':>9} {'cols':>4} {'view':>8} {'load ms':>9} {'baseline':>18} {'ratio':>7}")
    for r in ok:
        print(
            f"{r['rows']:>9} {r['cols']:>4} {r['auto_mode'] or '-':>8} {_ms(r['load_ms']):>9}"
            f" {r['load_baseline']:>18} {_x(r['load_ratio']):>7}"
        )
    for r in ok:
        if r.get("missing"):
            print(f"  {r['rows']} x {r['cols']}: hook missing: " + ", ".join(r["missing"]))
        d = r.get("drag")
        if d:
            idle, drags = d["idle_frames"], d["drag_frames"]
            frames = sum(x["frames"] for x in drags)
            longest, idle_ms = _fmt(d["drag_longest_ms"], missing="-"), _fmt(idle["max"], missing="no frames")
            print(
                f"\ndrag ({r['rows']:,} x {r['cols']}, view {r['auto_mode']}): longest frame, median of 3"
                f" drags {longest} vs idle page {idle_ms}:"
                f" {_fmt(d['drag_ratio'], '.1f', 'x', '-')} (worst {_fmt(d['drag_worst_ms'], missing='-')};"
                f" {frames} frames; longest long task {max(x['longtaskMax'] for x in drags):.0f} ms)"
            )
            if d.get("drag_warning"):
                print("  " + d["drag_warning"])

    t = _guard(results, "round_trip", lambda: bench_round_trip(browser, server, 10**5, 10))
    if "error" not in t:
        print(
            f"round trip ({t['rows']:,} x {t['cols']}), vs an echo of a trivial trait {_fmt(t['echo_ms'])}:"
        )
        print(f"  range released -> kernel mask updated    {_fmt(t['range_to_kernel_ms'])} {t['ratio']:.1f}x")
        print(
            f"  range released -> kernel answer in page  {_fmt(t['range_to_page_ms'])} {t['ratio_page']:.1f}x"
        )
    errs = {f"{r['rows']}x{r['cols']}": r.get("page_errors") for r in ok if r.get("page_errors")}
    if isinstance(t, dict) and t.get("page_errors"):
        errs["round_trip"] = t["page_errors"]
    if errs:
        print(f"  page errors: {errs}")
