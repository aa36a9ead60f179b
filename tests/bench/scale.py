"""Scale-tier figures for `make bench` (issue 11): big tables in memory, a Parquet folder through DuckDB,
Spark in local mode. Every figure is a ratio against a baseline measured in the same run, on the same data.

* memory (10^7 x 20 by default) -- the scale tier (``sample_above`` default: a 100k-row sample plus the
  kernel's pair counts) vs today's full path (``sample_above`` above the row count: every row's codes go
  to the page), both shown in headless Chromium: time to the first complete picture, bytes to the page
  per view, the longest page task during the first picture and a drag, the longest frame while dragging;
  release -> exact count (kernel side, a page-like ``set_state`` edit until ``count`` is published) vs a
  bare numpy range test + ``count_nonzero`` on the same column.
* duckdb (a seeded Parquet folder, 10 columns; 10^7 rows, 10^8 with ``--big``) -- open, brush, release ->
  exact count vs a bare DuckDB ``SELECT count(*) ... WHERE`` on the same folder with the same predicate.
* spark (``local[2]``) -- the source's pair counts and count vs the same queries written by hand in Spark
  SQL; skipped with a message when pyspark or Java is missing.

Browser driver: a plain Chrome DevTools Protocol client (tests/bench/cdp.py, no Playwright). The page is
tests/bench/page.html served by a local http.server on 127.0.0.1; it fetches the widget's state and each
buffer as files (there is no websocket), so a 400 MB table crosses no driver.
"""

from __future__ import annotations

import glob
import json
import os
import shutil
import time
from pathlib import Path

import numpy as np

import axeswidget as aw
from tests.conftest import CHROME_ARGS, CHROMIUM

HERE = Path(__file__).parent
STATIC = Path(aw.__file__).parent / "static"
DRIVER = "plain CDP client (tests/bench/cdp.py, websocket-client), no Playwright"
PICTURE_TIMEOUT_S = 600.0


def best_of(fn, repeat: int = 3) -> tuple[float, object]:
    """Smallest wall time of `repeat` calls (seconds) and the last result."""
    best, out = None, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t0
        best = dt if best is None else min(best, dt)
    return best, out


def taking_turns(fa, fb, repeat: int) -> tuple[float, float, object, object]:
    """Best wall times of two calls run alternately (a change in the machine's load hits both) and their
    last results."""
    ta, tb, ra, rb = [], [], None, None
    for _ in range(repeat):
        t0 = time.perf_counter()
        ra = fa()
        ta.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        rb = fb()
        tb.append(time.perf_counter() - t0)
    return min(ta), min(tb), ra, rb


def _ratio(a, b):
    return None if a is None or b is None or b <= 0 else a / b


# ---------------------------------------------------------------------------------------------------------
# In memory: scale tier vs today's full path
# ---------------------------------------------------------------------------------------------------------


def wire_bytes(state: dict) -> dict:
    """Bytes of the buffers a view sends: the table's codes, the pair counts, the mask."""
    table = sum(memoryview(c["codes"]).nbytes for c in state["table"]["columns"])
    pairs = state.get("pair_counts") or {}
    pair = sum(len(p["all"]) + len(p["selected"]) for p in pairs.get("pairs", []))
    mask = len(state.get("mask_bits") or b"")
    return {"table": table, "pair_counts": pair, "mask": mask, "total": table + pair + mask}


def write_state(folder: Path, widget) -> dict:
    """The bench page, the built module and the widget's state with its buffers as files."""
    from ipywidgets.widgets.widget import _remove_buffers

    from tests.bench import browser

    folder.mkdir(parents=True, exist_ok=True)
    shutil.copy(STATIC / "widget.js", folder / "widget.js")
    shutil.copy(HERE / "page.html", folder / "index.html")
    shutil.copy(browser.BASELINES, folder / "baselines.js")
    state = widget.get_state()
    sizes = wire_bytes(state)
    clean, paths, buffers = _remove_buffers(state)
    files = []
    for k, buf in enumerate(buffers):
        name = f"buf{k}.bin"
        (folder / name).write_bytes(bytes(buf))
        files.append(name)
    (folder / "state.json").write_text(
        json.dumps({"state": clean, "buffer_paths": paths, "buffer_files": files})
    )
    return sizes


def _wait(session, expr: str, timeout_s: float, poll_s: float = 0.05):
    end = time.perf_counter() + timeout_s
    while time.perf_counter() < end:
        try:
            v = session.evaluate(expr)
        except Exception:
            v = None
        if v:
            return v
        time.sleep(poll_s)
    raise TimeoutError(f"page: {expr} not true within {timeout_s:.0f} s")


DRAWN = "() => Number(document.querySelector('.axw-root')?.dataset.drawn ?? 0) >= 1 && window.__t.drawn"
AXIS = """(a) => { const c = document.querySelector('canvas.axw-overlay').getBoundingClientRect();
  const lay = JSON.parse(document.querySelector('.axw-root').dataset.layout);
  const ax = lay.axes.find((x) => x.name === a.name);
  const y = (v) => c.top + lay.bottom - ((v - ax.lo) / (ax.hi - ax.lo)) * (lay.bottom - lay.top);
  return { x: c.left + ax.x, y0: y(a.v0), y1: y(a.v1) }; }"""


def drag(session, axis: str, v0: float, v1: float, steps: int = 12) -> dict:
    """Drag a range with CDP mouse events; frames and long tasks recorded during the drag."""
    at = session.evaluate(AXIS, {"name": axis, "v0": v0, "v1": v1})
    session.evaluate("() => window.__bench.twoFrames()")
    n0 = session.evaluate("() => window.__longtasks.length")
    session.evaluate("() => window.__bench.frames()")
    session.mouse("mouseMoved", at["x"], at["y0"])
    session.mouse("mousePressed", at["x"], at["y0"])
    for k in range(1, steps + 1):
        y = at["y0"] + (at["y1"] - at["y0"]) * k / steps
        session.mouse("mouseMoved", at["x"], y, pressed=True)
    session.mouse("mouseReleased", at["x"], at["y1"])
    session.evaluate("() => window.__bench.twoFrames()")
    frames = session.evaluate("() => window.__frames.stop()")
    tasks = session.evaluate("(n) => window.__longtasks.slice(n).map((t) => t[1])", n0)
    frames["longtask_max_ms"] = max(tasks, default=0.0)
    frames["page_count"] = session.evaluate("() => Number(document.querySelector('.axw-root').dataset.count)")
    frames["sent"] = len(session.evaluate("() => window.__sent.splice(0)"))
    return frames


def show(chrome, server, widget, name: str, t_kernel: float) -> dict:
    """Write the widget's state, open the page, wait for the first full draw, drag once."""
    t0 = time.perf_counter()
    sizes = write_state(server.dir / name, widget)
    t_write = time.perf_counter() - t0
    session = chrome.page()
    try:
        session.send("Page.enable")
        t1 = time.perf_counter()
        session.send("Page.navigate", {"url": server.url + name + "/index.html"})
        drawn_ms = float(_wait(session, DRAWN, PICTURE_TIMEOUT_S))
        t_page = time.perf_counter() - t1
        tasks = session.evaluate("() => window.__longtasks")
        first_tasks = [d for s, d in (tasks or []) if s <= drawn_ms]
        mode = session.evaluate("() => document.querySelector('.axw-root').dataset.mode")
        status = session.evaluate("() => document.querySelector('.axw-root').dataset.count")
        _wait(session, "() => window.__ready === true", 60)
        session.evaluate("() => window.__bench.twoFrames()")
        session.evaluate("() => window.__bench.frames()")
        time.sleep(1.0)
        idle = session.evaluate("() => window.__frames.stop()")
        d = drag(session, "c00", -1.0, 1.5)
    finally:
        session.close()
        chrome_reset(chrome)
    return {
        "bytes": sizes,
        "kernel_s": t_kernel,
        "write_state_s": t_write,
        "page_drawn_ms": drawn_ms,
        "page_wall_s": t_page,
        "first_picture_s": t_kernel + t_write + drawn_ms / 1e3,
        "first_picture_longtask_max_ms": max(first_tasks, default=0.0),
        "first_picture_longtasks": len(first_tasks),
        "longtask_observer": tasks is not None,
        "mode": mode,
        "page_count_after_load": status,
        "idle_frame_max_ms": idle["max"],
        "drag": d,
    }


def chrome_reset(chrome) -> None:
    """Leave a blank page so the next view starts from an empty renderer."""
    try:
        s = chrome.page()
        s.send("Page.navigate", {"url": "about:blank"})
        time.sleep(0.5)
        s.close()
    except Exception:
        pass


def published(widget) -> dict:
    """Record when the widget sends ``answered_seq`` to the page (the answer leaves ``hold_sync``)."""
    box: dict = {}
    send = widget.send_state

    def spy(key=None):
        keys = [key] if isinstance(key, str) else list(key or widget.keys)
        if "answered_seq" in keys and "t" not in box:
            box["t"] = time.perf_counter()
        return send(key)

    widget.send_state = spy
    return box


def release_to_count(widget, column: np.ndarray, name: str, repeat: int = 5) -> dict:
    """A page-like final edit (``set_state`` with ranges, edit_seq, dragging False) until the answer
    (``count``, ``answered_seq``) is sent to the page, vs a bare numpy range test + count_nonzero on the
    same column (same range). ``returned_s``: until ``set_state`` returned."""
    times, returned, bare, ok = [], [], [], True
    box = published(widget)
    for k in range(repeat):
        lo, hi = -0.5 - 0.125 * k, 1.0 + 0.0625 * k
        seq = int(widget.edit_seq) + 1
        box.clear()
        t0 = time.perf_counter()
        widget.set_state({"ranges": {name: [[lo, hi]]}, "edit_seq": seq, "dragging": False})
        returned.append(time.perf_counter() - t0)
        times.append(box.get("t", time.perf_counter()) - t0)
        t0 = time.perf_counter()
        ref = int(np.count_nonzero((column >= lo) & (column <= hi)))  # reference: bare numpy
        bare.append(time.perf_counter() - t0)
        ok = ok and int(widget.count) == ref and int(widget.answered_seq) >= seq
    widget.set_state({"ranges": {}, "edit_seq": int(widget.edit_seq) + 1, "dragging": False})
    return {
        "widget_s": min(times),
        "returned_s": min(returned),
        "numpy_s": min(bare),
        "ratio": min(times) / min(bare),
        "same_count": ok,
    }


def bench_memory(rows: int, cols: int, full: bool = True, browser_on: bool = True) -> dict:
    from tests.bench import browser

    df = browser.frame(rows, cols)
    out: dict = {"rows": rows, "cols": cols, "driver": DRIVER}
    tier_above = aw.AxesWidget.sample_above.default_value if rows > 10**6 else rows // 10
    chrome = server = None
    if browser_on:
        why = browser.unavailable()
        try:
            import websocket  # noqa: F401
        except ImportError:
            why = why or "the websocket-client package is missing (pip install -e '.[test]')"
        if why:
            out["browser_skipped"] = why
            print("  " + why)
            browser_on = False
        else:
            from tests.bench.cdp import Chromium
            from tests.browser.harness import StaticServer

            server = StaticServer()
            chrome = Chromium(CHROMIUM, CHROME_ARGS, width=940, height=560)
    try:
        for label, above in (("scale", tier_above), ("full", 2 * rows)):
            if label == "full" and not full:
                continue
            t0 = time.perf_counter()
            w = aw.AxesWidget(df, sample_above=above)
            t_built = time.perf_counter() - t0
            # a complete picture has the readouts (rank_matrix, both paths) and, in the scale tier, the
            # kernel's pair counts; both are computed in the background above 200,000 rows
            w._wait_pair_counts(PICTURE_TIMEOUT_S)
            t_kernel = time.perf_counter() - t0
            r: dict = {
                "sample_above": above,
                "sampled": bool(w.table.get("sampled")),
                "kernel_s": t_kernel,
                "constructor_s": t_built,
                "background_s": t_kernel - t_built,
            }
            r["bytes"] = wire_bytes(w.get_state(["table", "pair_counts", "mask_bits"]))
            if browser_on:
                try:
                    r.update(show(chrome, server, w, f"{label}-{rows}-{cols}", t_kernel))
                except Exception as err:
                    r["browser_error"] = f"{type(err).__name__}: {err}"
                    print(f"  {label}: browser failed: {r['browser_error'][:300]}")
            r["release"] = release_to_count(w, df["c01"].to_numpy(), "c01")
            w._wait_pair_counts(PICTURE_TIMEOUT_S)
            # what one final edit sends back: the mask of the page's rows and (scale tier) pair counts
            r["bytes_per_edit"] = wire_bytes(
                {"table": {"columns": []}, **w.get_state(["pair_counts", "mask_bits"])}
            )
            out[label] = r
            w.close()
            del w
            if server is not None:
                shutil.rmtree(server.dir / f"{label}-{rows}-{cols}", ignore_errors=True)
    finally:
        if chrome is not None:
            chrome.close()
        if server is not None:
            server.close()
    s, f = out.get("scale", {}), out.get("full", {})
    out["first_picture_ratio"] = _ratio(s.get("first_picture_s"), f.get("first_picture_s"))
    out["bytes_ratio"] = _ratio(s.get("bytes", {}).get("total"), f.get("bytes", {}).get("total"))
    return out


def print_memory(r: dict) -> None:
    rows, cols = r["rows"], r["cols"]
    print(f"\nscale tier in memory, {rows:,} x {cols}: scale tier vs today's full path (every row's codes")
    print("  to the page) measured in this run on the same table; browser driver: " + r["driver"])
    print(f"  {'figure':<46} {'scale tier':>14} {'full path':>14} {'ratio':>7}")

    def line(name, a, b, fmt="{:.2f}", unit=""):
        sa = "-" if a is None else fmt.format(a) + unit
        sb = "-" if b is None else fmt.format(b) + unit
        print(f"  {name:<46} {sa:>14} {sb:>14} {_x(_ratio(a, b)):>7}")

    s, f = r.get("scale", {}), r.get("full", {})
    line("first complete picture, s (kernel+files+page)", s.get("first_picture_s"), f.get("first_picture_s"))
    line("  kernel: widget built (+ pair counts), s", s.get("kernel_s"), f.get("kernel_s"))
    line("    of which the constructor, s", s.get("constructor_s"), f.get("constructor_s"))
    line("    of which background pair counts + ranks, s", s.get("background_s"), f.get("background_s"))
    line("  state files written, s", s.get("write_state_s"), f.get("write_state_s"))
    line(
        "  page: navigation -> first full draw, ms", s.get("page_drawn_ms"), f.get("page_drawn_ms"), "{:.0f}"
    )
    sb, fb = s.get("bytes", {}), f.get("bytes", {})
    line("bytes to the page per view, MB", _mb(sb.get("total")), _mb(fb.get("total")), "{:.2f}")
    line("  of which pair_counts, MB", _mb(sb.get("pair_counts")), _mb(fb.get("pair_counts")), "{:.2f}")
    se, fe = s.get("bytes_per_edit", {}), f.get("bytes_per_edit", {})
    line(
        "bytes per final edit (mask + pair counts), MB", _mb(se.get("total")), _mb(fe.get("total")), "{:.3f}"
    )
    line(
        "longest page task, first picture, ms",
        s.get("first_picture_longtask_max_ms"),
        f.get("first_picture_longtask_max_ms"),
        "{:.0f}",
    )
    sd, fd = s.get("drag", {}), f.get("drag", {})
    line(
        "longest page task while dragging, ms", sd.get("longtask_max_ms"), fd.get("longtask_max_ms"), "{:.0f}"
    )
    line("longest frame while dragging, ms", sd.get("max"), fd.get("max"), "{:.0f}")
    line("longest frame, idle page, ms", s.get("idle_frame_max_ms"), f.get("idle_frame_max_ms"), "{:.0f}")
    print("  release -> exact count (kernel: set_state edit until count is sent) vs bare numpy range test")
    for label, x in (("scale tier", s), ("full path", f)):
        rel = x.get("release")
        if rel:
            print(
                f"    {label:<10} {1e3 * rel['widget_s']:>8.1f} ms vs numpy {1e3 * rel['numpy_s']:>7.1f} ms"
                f" {rel['ratio']:>6.2f}x  same count: {rel['same_count']};"
                f" set_state returned after {1e3 * rel['returned_s']:.1f} ms"
            )
    for label, x in (("scale", s), ("full", f)):
        if x.get("browser_error"):
            print(f"  {label}: browser failed: {x['browser_error'][:200]}")


def _mb(v):
    return None if v is None else v / 1e6


def _x(v) -> str:
    return "-" if v is None else f"{v:.2f}x"


# ---------------------------------------------------------------------------------------------------------
# A Parquet folder through DuckDB
# ---------------------------------------------------------------------------------------------------------

PARQUET_COLS = 10


def write_parquet(folder: Path, rows: int, seed: int = 0) -> Path:
    """A seeded folder of Parquet files: 10 float columns (half follow a shared factor, 1% nulls)."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    stamp = folder / f"done-{rows}-{seed}"
    if stamp.exists():
        return folder
    shutil.rmtree(folder, ignore_errors=True)
    folder.mkdir(parents=True)
    per_file = min(10**6, max(1, rows // 10))
    rng = np.random.default_rng(seed)
    k = 0
    for start in range(0, rows, per_file):
        n = min(per_file, rows - start)
        data = rng.normal(size=(n, PARQUET_COLS))
        data[:, 1::2] += data[:, :1]
        nulls = rng.random((n, PARQUET_COLS)) < 0.01
        arrays = [pa.array(data[:, j], mask=nulls[:, j]) for j in range(PARQUET_COLS)]
        pq.write_table(
            pa.table(arrays, names=[f"c{j:02d}" for j in range(PARQUET_COLS)]),
            folder / f"part-{k:04d}.parquet",
        )
        k += 1
    stamp.write_text("ok")
    return folder


BRUSH = {"c00": [[-0.5, 1.0]], "c03": [[0.2, None]]}
BRUSH_SQL = "c00 >= -0.5 AND c00 <= 1.0 AND c03 >= 0.2"


def bench_duckdb(folder: Path, rows: int, repeat: int = 3) -> dict:
    import duckdb

    pattern = str(folder / "*.parquet")
    t0 = time.perf_counter()
    w = aw.AxesWidget(pattern)
    t_open = time.perf_counter() - t0
    w._wait_pair_counts(PICTURE_TIMEOUT_S)
    t_open_pairs = time.perf_counter() - t0
    con = duckdb.connect()
    sql = f"SELECT count(*) FROM read_parquet('{pattern}') WHERE {BRUSH_SQL}"
    times, bare = [], []
    got = ref = None
    for k in range(repeat):
        brush = {"c00": [[-0.5 - 0.0625 * k, 1.0]], "c03": [[0.2, None]]}
        seq = int(w.edit_seq) + 1
        t1 = time.perf_counter()
        w.set_state({"ranges": brush, "edit_seq": seq, "dragging": False})
        times.append(time.perf_counter() - t1)
        got = int(w.count) if k == 0 else got
        bsql = sql.replace("c00 >= -0.5", f"c00 >= {-0.5 - 0.0625 * k!r}")
        t1 = time.perf_counter()
        n = con.execute(bsql).fetchone()[0]  # reference: a bare DuckDB count(*) ... WHERE
        bare.append(time.perf_counter() - t1)
        ref = n if k == 0 else ref
    t1 = time.perf_counter()
    w._wait_pair_counts(PICTURE_TIMEOUT_S)
    t_pairs_after = time.perf_counter() - t1
    w.set_state({"ranges": BRUSH, "edit_seq": int(w.edit_seq) + 1, "dragging": False})
    con.close()
    w.close()
    return {
        "rows": rows,
        "cols": PARQUET_COLS,
        "files": len(glob.glob(pattern)),
        "folder_bytes": sum(os.path.getsize(p) for p in glob.glob(pattern)),
        "open_s": t_open,
        "open_with_pair_counts_s": t_open_pairs,
        "release_count_s": min(times),
        "bare_count_s": min(bare),
        "ratio": min(times) / min(bare),
        "selected_pair_counts_after_release_s": t_pairs_after,
        "same_count": got == ref,
        "count": got,
    }


# ---------------------------------------------------------------------------------------------------------
# Spark local[2]
# ---------------------------------------------------------------------------------------------------------


def spark_unavailable() -> str | None:
    try:
        import pyspark  # noqa: F401
    except ImportError:
        return "Spark figures skipped: pyspark is not installed (pip install -e '.[test]')"
    if not shutil.which("java") and not os.environ.get("JAVA_HOME"):
        return "Spark figures skipped: Spark needs Java 17 (apt-get install openjdk-17-jre-headless)"
    return None


def hand_pair_sql(view: str, cols: list[str], bounds: dict, where: str, bins: int = 128) -> str:
    """Pair counts of neighbouring columns written by hand: each value scaled to 0..65534 and rounded
    (as the wire codes), cut into `bins` bins, nulls/NaN in bin `bins`, one GROUPING SETS query."""
    binned = []
    for i, c in enumerate(cols):
        lo, hi = bounds[c]
        code = f"rint((least(greatest({c}, {lo!r}), {hi!r}) - {lo!r}) / {hi - lo!r} * 65534)"
        binned.append(
            f"CASE WHEN {c} IS NULL OR isnan({c}) THEN {bins}"
            f" ELSE CAST((CAST({code} AS BIGINT) * {bins}) div 65535 AS INT) END AS b{i}"
        )
    sets = ", ".join(f"(b{i}, b{i + 1})" for i in range(len(cols) - 1))
    names = ", ".join(f"b{i}" for i in range(len(cols)))
    return (
        f"SELECT {names}, count(*) AS n FROM (SELECT {', '.join(binned)} FROM {view} WHERE {where}) "
        f"GROUP BY GROUPING SETS ({sets})"
    )


def bench_spark(folder: Path, rows: int, repeat: int = 3) -> dict:
    import warnings

    from pyspark.sql import SparkSession

    from axeswidget.sources import SparkSource

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FutureWarning)
        spark = (
            SparkSession.builder.master("local[2]")
            .appName("axeswidget-bench")
            .config("spark.ui.enabled", "false")
            .config("spark.ui.showConsoleProgress", "false")
            .config("spark.sql.shuffle.partitions", "2")
            .config("spark.sql.session.timeZone", "UTC")
            .getOrCreate()
        )
    spark.sparkContext.setLogLevel("ERROR")
    warnings.filterwarnings("ignore", message="PySpark does not yet fully support pandas")
    try:
        files = sorted(glob.glob(str(folder / "*.parquet")))
        import pyarrow.parquet as pq

        per_file = pq.ParquetFile(files[0]).metadata.num_rows
        df = spark.read.parquet(*files[: max(1, rows // per_file)])
        n = df.count()
        t0 = time.perf_counter()
        src = SparkSource(df)
        t_open = time.perf_counter() - t0
        order = list(src.columns)
        bounds = {c: (float(src.columns[c].lo), float(src.columns[c].hi)) for c in order}
        df.createOrReplaceTempView("bench_hand")
        where_hand = BRUSH_SQL
        box: dict = {}

        def ours_pairs():
            box["all"] = src.pair_counts(order, 128)
            box["sel"] = src.pair_counts(order, 128, BRUSH)

        def hand_pairs():
            box["hall"] = spark.sql(hand_pair_sql("bench_hand", order, bounds, "TRUE")).toPandas()
            box["hsel"] = spark.sql(hand_pair_sql("bench_hand", order, bounds, where_hand)).toPandas()

        def ours_count():
            src._counted = None  # no reuse of a prepared count
            return src.count(BRUSH)

        def hand_count():
            return spark.sql(f"SELECT count(*) FROM bench_hand WHERE {where_hand}").collect()[0][0]

        # warm both (first query compiles and reads the footers)
        ours_count(), hand_count()
        t_pairs, t_hand_pairs, _, _ = taking_turns(ours_pairs, hand_pairs, repeat)
        t_count, t_hand_count, got, ref = taking_turns(ours_count, hand_count, 2 * repeat + 1)
        # the hand query's cells, as matrices, against the source's (reference: hand-written Spark SQL)
        diff = 0
        for key, hand in (("all", box["hall"]), ("sel", box["hsel"])):
            for p in range(len(order) - 1):
                m = np.zeros((129, 129), dtype=np.int64)
                part = hand[hand[f"b{p}"].notna() & hand[f"b{p + 1}"].notna()]
                part = part[part[[f"b{i}" for i in range(len(order))]].notna().sum(axis=1) == 2]
                np.add.at(
                    m, (part[f"b{p}"].astype(int), part[f"b{p + 1}"].astype(int)), part["n"].astype(np.int64)
                )
                diff = max(diff, int(np.abs(m - box[key][p]).sum()))
        return {
            "rows": int(n),
            "cols": len(order),
            "open_s": t_open,
            "pair_counts_s": t_pairs,
            "hand_pair_counts_s": t_hand_pairs,
            "pair_ratio": t_pairs / t_hand_pairs,
            "count_s": t_count,
            "hand_count_s": t_hand_count,
            "count_ratio": t_count / t_hand_count,
            "same_count": int(got) == int(ref),
            "pair_cells_max_abs_diff": diff,
        }
    finally:
        spark.stop()


# ---------------------------------------------------------------------------------------------------------
# Entry point (called from tests/bench/run.py)
# ---------------------------------------------------------------------------------------------------------


def _guard(fn):
    try:
        return fn()
    except Exception as err:  # a broken figure is reported, the others still run
        msg = f"{type(err).__name__}: {err}"
        print(f"  failed: {msg[:400]}")
        return {"error": msg}


PARTS = ("memory", "duckdb", "spark")


def targets(out: dict) -> list[dict]:
    """The issue's targets beside the figures measured (None where not measured)."""
    m, d, sp = out.get("memory") or {}, out.get("duckdb") or {}, out.get("spark") or {}
    s = m.get("scale") or {}
    rel, drag = s.get("release") or {}, s.get("drag") or {}
    rows = [
        ("first complete picture, s (in memory)", s.get("first_picture_s"), 3.0),
        ("first picture, scale tier / full path", m.get("first_picture_ratio"), 0.25),
        ("bytes to the page per view, MB", _mb((s.get("bytes") or {}).get("total")), 8.0),
        ("longest page task, first picture, ms", s.get("first_picture_longtask_max_ms"), 50.0),
        ("longest page task while dragging, ms", drag.get("longtask_max_ms"), 50.0),
        ("longest frame while dragging, ms", drag.get("max"), 33.0),
        ("release -> exact count (in memory), s", rel.get("widget_s"), 0.3),
        ("DuckDB release -> count / bare count(*) WHERE", d.get("ratio"), 2.0),
        ("Spark pair counts / hand-written Spark SQL", sp.get("pair_ratio"), 1.5),
        ("Spark count / hand-written Spark SQL", sp.get("count_ratio"), 1.5),
    ]
    out_rows = []
    print("\nscale tier, issue 11 targets:")
    for name, value, target in rows:
        met = None if value is None else value <= target
        got = (
            "not measured"
            if value is None
            else f"{value:.3g} (target <= {target:g}: {'met' if met else 'MISSED'})"
        )
        print(f"  {name:<48} {got}")
        out_rows.append({"figure": name, "value": value, "target": target, "met": met})
    return out_rows


def run(
    quick: bool = False,
    big: bool = False,
    browser_on: bool = True,
    data_dir: Path | None = None,
    parts=PARTS,
) -> dict:
    """Measure and print the scale-tier figures (the `parts` asked for); return them for bench.json."""
    out: dict = {"driver": DRIVER}
    rows = 10**6 if quick else 10**7
    if "memory" in parts:
        print(f"\n=== scale tier ({'quick: ' if quick else ''}{rows:,} rows in memory) ===")
        out["memory"] = _guard(lambda: bench_memory(rows, 20, full=True, browser_on=browser_on))
        if "error" not in out["memory"]:
            print_memory(out["memory"])
    if "duckdb" not in parts and "spark" not in parts:
        return out

    data_dir = data_dir or Path(os.environ.get("AXW_BENCH_DATA", "/tmp/axw-bench-data"))
    prows = 10**8 if big else (10**6 if quick else 10**7)
    folder = data_dir / f"parquet-{prows}"
    print(f"\nParquet folder {folder} ({prows:,} rows x {PARQUET_COLS}; --big for 10^8)")
    t0 = time.perf_counter()
    _guard(lambda: write_parquet(folder, prows))
    print(f"  folder ready in {time.perf_counter() - t0:.1f} s")
    d = {"error": "not asked for"}
    if "duckdb" in parts:
        d = out["duckdb"] = _guard(lambda: bench_duckdb(folder, prows))
    if "error" not in d:
        print("DuckDB:")
        print(
            f"  open {d['open_s']:.2f} s (with all pair counts {d['open_with_pair_counts_s']:.2f} s);"
            f" brush released -> exact count {1e3 * d['release_count_s']:.0f} ms vs bare DuckDB"
            f" count(*) WHERE {1e3 * d['bare_count_s']:.0f} ms: {d['ratio']:.2f}x (target <= 2x);"
            f" same count: {d['same_count']};"
            f" selected pair counts {d['selected_pair_counts_after_release_s']:.2f} s"
        )

    if "spark" not in parts:
        return out
    why = spark_unavailable()
    srows = 2 * 10**5 if quick else 10**6
    if why:
        print("\n" + why)
        out["spark"] = {"skipped": why}
    else:
        print(f"\nSpark local[2]: {srows:,} rows x {PARQUET_COLS} read from the Parquet folder")
        out["spark"] = _guard(lambda: bench_spark(folder, srows))
        s = out["spark"]
        if "error" not in s:
            print(
                f"  pair counts (all + selected) {s['pair_counts_s']:.2f} s vs hand-written Spark SQL"
                f" {s['hand_pair_counts_s']:.2f} s: {s['pair_ratio']:.2f}x;"
                f" count {1e3 * s['count_s']:.0f} ms vs"
                f" {1e3 * s['hand_count_s']:.0f} ms: {s['count_ratio']:.2f}x (target <= 1.5x);"
                f" same count: {s['same_count']};"
                f" cells differing (sum |diff|): {s['pair_cells_max_abs_diff']}"
            )
    return out
