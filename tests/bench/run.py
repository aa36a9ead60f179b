"""`make bench`: speed and size as ratios against baselines measured in the same run.

Never a pass/fail test: these machines are shared and noisy. Each figure is printed as a table and
written to bench-results/bench.json. Run: ``python -m tests.bench.run [--quick] [--no-browser] [--big]
[--scale-only]``.

Every baseline does the same work on the same data as the widget: the mask update vs same-work numpy
(one changed axis, the cached parts, packbits, count); density pair counts vs a bare numpy.bincount of
the same binned pairs; axis ordering vs scipy; wire bytes per cell; and, in headless Chromium, the
lines layer vs a bare one-core accumulation loop over the same segments (per core where workers draw),
the density pass vs a bare bincount-like loop over the same codes, loading, dragging and the round trip
(tests/bench/browser.py). The scale tier (tests/bench/scale.py): 10^7 x 20 in memory vs today's full path
in the same run, a Parquet folder through DuckDB vs a bare DuckDB count, Spark local[2] vs hand-written
Spark SQL.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import time
from pathlib import Path

import numpy as np
import pandas as pd

import axeswidget as aw
from axeswidget import density, measures, ordering

OUT = Path(__file__).resolve().parents[2] / "bench-results"


def best_of(fn, repeat: int = 5) -> float:
    """Smallest wall time of `repeat` calls, in seconds (the least disturbed run)."""
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def table(rows: int, cols: int, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    data = rng.normal(size=(rows, cols))
    data[rng.random((rows, cols)) < 0.01] = np.nan
    return pd.DataFrame(data, columns=[f"c{i:02d}" for i in range(cols)])


def bench_mask(rows: int, cols: int, brushed: int = 5) -> dict:
    """One range update on one of `brushed` axes: the widget vs same-work numpy.

    The widget recomputes only the changed axis (the AND of its other axes' parts is cached while one
    axis is dragged), ANDs the two, bit-packs the mask for the page and counts it. The baseline does
    exactly that in bare numpy: the one axis's range test, one AND with the other axes' parts ANDed
    beforehand, np.packbits, count.
    """
    df = table(rows, cols)
    w = aw.AxesWidget(df)
    names = list(df.columns[:brushed])
    base = {n: [[-0.5, 0.8]] for n in names}
    w.ranges = base
    arrays = [df[n].to_numpy() for n in names]
    rest = np.ones(rows, dtype=bool)
    for a in arrays[1:]:  # the AND of the other axes' parts, which the widget keeps while dragging
        rest &= (a >= -0.5) & (a <= 0.8)
    state = {"k": 0}
    box: dict = {}

    def next_hi() -> float:
        state["k"] += 1
        return 0.8 + 1e-6 * (state["k"] % 7 + 1)

    def widget_update():
        r = dict(base)
        r[names[0]] = [[-0.5, next_hi()]]
        w.ranges = r

    def same_work():
        hi = next_hi()
        a = arrays[0]
        m = a >= -0.5
        m &= a <= hi
        m &= rest
        box["bits"] = np.packbits(m, bitorder="little")
        box["count"] = int(np.count_nonzero(m))
        box["hi"] = hi

    t_w, t_b = best_of(widget_update), best_of(same_work)
    # the two must agree on the last range (reference: the bare numpy result above)
    w.ranges = {**base, names[0]: [[-0.5, box["hi"]]]}
    same = w.mask_bits == box["bits"].tobytes() and int(w.count) == box["count"]
    return {
        "rows": rows,
        "cols": cols,
        "brushed": brushed,
        "widget_s": t_w,
        "numpy_s": t_b,
        "ratio": t_w / t_b,
        "same_mask": bool(same),
    }


def bench_wire(rows: int, cols: int) -> dict:
    df = table(rows, cols)
    w = aw.AxesWidget(df)
    nbytes = sum(memoryview(c["codes"]).nbytes for c in w.table["columns"])
    return {"rows": rows, "cols": cols, "bytes": nbytes, "bytes_per_cell": nbytes / (rows * cols)}


def correlated_table(rows: int, cols: int, seed: int = 0) -> pd.DataFrame:
    """Complete random table with structure: groups of columns share a factor, some with a sign flip or a
    monotone bend, the rest independent (scipy's spearmanr propagates NaN, so no missing values here)."""
    rng = np.random.default_rng(seed)
    data = rng.normal(size=(rows, cols))
    factors = rng.normal(size=(rows, 3))
    for j in range(cols):
        if j % 4 == 3:
            continue  # independent
        f = factors[:, j % 3]
        v = (1.0 if j % 2 == 0 else -1.0) * f + (0.3 + 0.2 * (j % 5)) * data[:, j]
        data[:, j] = np.exp(v / 2) if j % 3 == 1 else v
    return pd.DataFrame(data, columns=[f"c{i:02d}" for i in range(cols)])


def bench_ordering(rows: int, cols: int) -> dict:
    """Spearman matrix + best_order (exact and sampled) vs scipy.stats.spearmanr on the whole table;
    Kendall tau-b and crossings of one pair vs scipy.stats.kendalltau."""
    from scipy import stats

    df = correlated_table(rows, cols)
    data = df.to_numpy()
    repeat = 2 if rows >= 10**6 else 3
    box: dict = {}

    def ours(key, **sample):
        def run():
            m = measures.association(df, "spearman", **sample)
            box[key] = (m, ordering.best_order(m))

        return run

    def scipy_matrix():
        box["scipy"] = stats.spearmanr(data).statistic

    t_exact = best_of(ours("exact", max_rows=None), repeat)
    t_sample = best_of(ours("sample"), repeat)  # association's default max_rows
    t_ref = best_of(scipy_matrix, repeat)
    x, y = data[:, 0], data[:, 1]
    t_tau = best_of(lambda: box.update(tau=measures.kendall_tau_b(x, y)), repeat)
    t_cross = best_of(lambda: box.update(cross=measures.crossings(x, y)), repeat)
    t_ref_tau = best_of(lambda: box.update(ref_tau=stats.kendalltau(x, y).statistic), repeat)
    exact_matrix = box["exact"][0].to_numpy()
    return {
        "rows": rows,
        "cols": cols,
        "spearman_exact_s": t_exact,
        "spearman_sample_s": t_sample,
        "sample_rows": int(box["sample"][0].attrs["rows_used"]),
        "scipy_spearmanr_s": t_ref,
        "ratio_exact": t_exact / t_ref,
        "ratio_sample": t_sample / t_ref,
        "max_abs_diff_exact_vs_scipy": float(np.nanmax(np.abs(exact_matrix - box["scipy"]))),
        "order_exact": box["exact"][1],
        "order_sample": box["sample"][1],
        "kendall_tau_b_s": t_tau,
        "crossings_s": t_cross,
        "scipy_kendalltau_s": t_ref_tau,
        "ratio_tau": t_tau / t_ref_tau,
        "ratio_crossings": t_cross / t_ref_tau,
        "abs_diff_tau_vs_scipy": abs(box["tau"] - box["ref_tau"]),
    }


def bench_density(rows: int, cols: int, bins: int = 128) -> dict:
    """Neighbour pair counts (selected and unselected layers) vs a bare numpy.bincount of the same pairs.

    Both sides start from the same wire codes and mask and do the same steps: take the layer's rows,
    bin each axis with the code -> bin lookup table, and count each neighbouring pair with one
    ``np.bincount`` over ``left * (bins + 1) + right``. The baseline skips the checks and the
    narrow-integer tricks of axeswidget.density. numpy.histogram2d on the same bin edges checks the
    counts (reference, not timed at 10^6).
    """
    rng = np.random.default_rng(0)
    codes = [rng.integers(0, 65536, rows).astype(np.uint16) for _ in range(cols)]
    mask = rng.random(rows) < 0.3
    side = bins + 1
    lut = np.arange(65536, dtype=np.int64) * bins // 65535  # bin of each code; 65535 (missing) -> bins
    lut[65535] = bins
    box: dict = {}

    def ours():
        box["ours"] = (
            density.neighbour_counts(codes, None, bins, mask),
            density.neighbour_counts(codes, None, bins, ~mask),
        )

    def bare_bincount():
        out = []
        for m in (mask, ~mask):
            binned = [lut[c[m]] for c in codes]
            out.append(
                [
                    np.bincount(binned[i] * side + binned[i + 1], minlength=side * side).reshape(side, side)
                    for i in range(cols - 1)
                ]
            )
        box["bare"] = out

    repeat = 3 if rows >= 10**6 else 5
    t_ours, t_bare = best_of(ours, repeat), best_of(bare_bincount, repeat)
    same = all(
        np.array_equal(a, b)
        for layer, ref in zip(box["ours"], box["bare"], strict=True)
        for a, b in zip(layer, ref, strict=True)
    )
    # reference: numpy.histogram2d on the bin edges k * 65535 / bins, plus one bin for the missing code
    edges = np.concatenate([np.arange(bins + 1) * 65535 / bins, [65536]])
    check = min(rows, 10**5)
    a, b, m = codes[0][:check], codes[1][:check], mask[:check]
    ref = np.histogram2d(a[m], b[m], bins=[edges, edges])[0]
    part = density.pair_counts(a, b, bins, m)
    return {
        "rows": rows,
        "cols": cols,
        "bins": bins,
        "ours_s": t_ours,
        "bincount_s": t_bare,
        "ratio": t_ours / t_bare,
        "same_counts": bool(same),
        "same_as_histogram2d": bool(np.array_equal(part, ref)),
    }


def summary(results: dict) -> list[dict]:
    """The targets of the fair ratios, with the worst figure measured at the largest size of each."""

    def worst(rows: list[dict], key: str) -> dict | None:
        rows = [r for r in rows if r.get(key) is not None and "error" not in r]
        if not rows:
            return None
        top = max(r["rows"] for r in rows)
        r = max((r for r in rows if r["rows"] == top), key=lambda r: r[key])
        return {"rows": r["rows"], "cols": r["cols"], "ratio": r[key]}

    sizes = results.get("browser", {}).get("sizes", [])
    lines = [r for r in sizes if r.get("lines_drawn_by") == "workers"] or sizes
    out = [
        {
            "figure": "mask, widget / same-work numpy",
            "target": 1.0,
            **(worst(results["mask"], "ratio") or {}),
        },
        {
            "figure": "density pair counts (Python), density.py / bare numpy.bincount",
            "target": 1.0,
            **(worst(results["density"], "ratio") or {}),
        },
        {
            "figure": "lines (browser), widget x workers / bare one-core accumulation loop",
            "target": 1.0,
            **(worst(lines, "lines_per_core") or {}),
        },
        {
            "figure": "density pass (browser), widget / bare bincount-like loop",
            "target": 1.0,
            **(worst(sizes, "density_ratio") or {}),
        },
        {
            "figure": "density counting (browser), widget's count pass / bare loop",
            "target": 1.5,
            **(worst(sizes, "density_count_ratio") or {}),
        },
    ]
    start, end = results["load_average_at_start"][0], results["load_average_at_end"][0]
    print(
        f"\nsummary (worst ratio at the largest size measured; target <= 1.0x). {results['cores']} cores;"
        f" 1-minute load average {start:.1f} at the start, {end:.1f} at the end (per-core figures assume"
        " the workers had a core each)"
    )
    for t in out:
        got = f"{t['ratio']:.2f}x at {t['rows']:,} x {t['cols']}" if "ratio" in t else "not measured"
        print(f"  {t['figure']:<72} {got}")
    return out


def main(argv=None) -> dict:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="only the 10^4 and 10^5 sizes (10 and 20 axes)")
    ap.add_argument("--no-browser", action="store_true", help="skip the headless Chromium figures")
    ap.add_argument("--big", action="store_true", help="the Parquet folder with 10^8 rows (minutes, GBs)")
    ap.add_argument("--no-scale", action="store_true", help="skip the scale-tier figures")
    ap.add_argument(
        "--scale-only",
        action="store_true",
        help="only the scale-tier figures; the other figures already in bench.json are kept",
    )
    ap.add_argument(
        "--scale-parts",
        default="memory,duckdb,spark",
        help="with --scale-only: which scale-tier figures to measure (comma-separated); others are kept",
    )
    args = ap.parse_args(argv)
    if args.scale_only:
        return scale_only(args)
    sizes = [(rows, cols) for rows in (10**4, 10**5, 10**6) for cols in (10, 20)]
    if args.quick:
        sizes = [s for s in sizes if s[0] < 10**6]
    results = {
        "machine": f"{platform.machine()} {platform.processor() or ''}".strip(),
        "cores": os.cpu_count(),
        "load_average_at_start": os.getloadavg(),
        "quick": args.quick,
        "mask": [],
        "wire": [],
    }
    print("mask: one range moved on 1 of 5 brushed axes; the widget recomputes that axis only. Baseline:")
    print("      same-work numpy = that axis's range test, AND the 4 cached parts, np.packbits, count")
    print("      (target <= 1.0x)")
    print(f"{'rows':>9} {'cols':>4} {'widget ms':>10} {'numpy ms':>9} {'ratio':>6} same mask")
    for rows, cols in sizes:
        r = bench_mask(rows, cols)
        results["mask"].append(r)
        print(
            f"{rows:>9} {cols:>4} {1e3 * r['widget_s']:>10.3f} {1e3 * r['numpy_s']:>9.3f} {r['ratio']:>6.2f}"
            f" {r['same_mask']}"
        )
    print("\nwire: bytes sent per cell for the column data (target <= 2)")
    for rows, cols in sizes:
        r = bench_wire(rows, cols)
        results["wire"].append(r)
        print(f"{rows:>9} {cols:>4} {r['bytes_per_cell']:>6.2f} B/cell ({r['bytes'] / 1e6:.1f} MB)")

    results["ordering"] = []
    print("\nordering: Spearman matrix + best_order vs scipy.stats.spearmanr(data) on the whole table;")
    print(
        "          Kendall tau-b and crossings of one pair vs scipy.stats.kendalltau (ratios: ours / scipy)"
    )
    print(
        f"{'rows':>9} {'cols':>4} {'exact':>7} {'sample':>7} {'scipy s':>8} {'tau':>6} {'cross':>6}"
        f" {'kendalltau s':>12}  max|rho - scipy|"
    )
    for rows, cols in sizes:
        r = bench_ordering(rows, cols)
        results["ordering"].append(r)
        print(
            f"{rows:>9} {cols:>4} {r['ratio_exact']:>6.2f}x {r['ratio_sample']:>6.2f}x"
            f" {r['scipy_spearmanr_s']:>8.3f} {r['ratio_tau']:>5.2f}x {r['ratio_crossings']:>5.2f}x"
            f" {r['scipy_kendalltau_s']:>12.3f}"
            f"  {r['max_abs_diff_exact_vs_scipy']:.1e}"
        )
    print("          (exact: max_rows=None; sample: association's default max_rows, all rows when fewer)")

    results["density"] = []
    print("\ndensity: neighbour pair counts, 128 bins, selected + unselected layers (density.py), vs a bare")
    print("         numpy.bincount of the same binned pairs (same codes, mask and lookup; target <= 1.0x)")
    print(f"{'rows':>9} {'cols':>4} {'ours ms':>9} {'bincount ms':>12} {'ratio':>6} same, = histogram2d")
    for rows, cols in sizes:
        r = bench_density(rows, cols)
        results["density"].append(r)
        print(
            f"{rows:>9} {cols:>4} {1e3 * r['ours_s']:>9.1f} {1e3 * r['bincount_s']:>12.1f}"
            f" {r['ratio']:>6.2f} {r['same_counts']}, {r['same_as_histogram2d']}"
        )

    if args.no_browser:
        results["browser"] = {"skipped": "--no-browser"}
    else:
        from tests.bench import browser

        results["browser"] = browser.run(quick=args.quick)
    if args.no_scale:
        results["scale"] = {"skipped": "--no-scale"}
    else:
        from tests.bench import scale

        results["scale"] = scale.run(quick=args.quick, big=args.big, browser_on=not args.no_browser)
        results["scale"]["targets"] = scale.targets(results["scale"])
    results["load_average_at_end"] = os.getloadavg()
    results["targets"] = summary(results)
    OUT.mkdir(exist_ok=True)
    (OUT / "bench.json").write_text(json.dumps(results, indent=2))
    print(f"\nwritten to {OUT / 'bench.json'}")
    return results


def scale_only(args) -> dict:
    """The scale-tier figures alone, written into bench.json beside the figures already there."""
    from tests.bench import scale

    path = OUT / "bench.json"
    results = json.loads(path.read_text()) if path.exists() else {}
    start = os.getloadavg()
    parts = [p.strip() for p in args.scale_parts.split(",") if p.strip()]
    unknown = sorted(set(parts) - set(scale.PARTS))
    if unknown:
        raise SystemExit(f"--scale-parts: unknown part(s) {unknown}; parts are {', '.join(scale.PARTS)}")
    new = scale.run(quick=args.quick, big=args.big, browser_on=not args.no_browser, parts=parts)
    results["scale"] = {**results.get("scale", {}), **new}
    results["scale"]["targets"] = scale.targets(results["scale"])
    results["scale"]["load_average_at_start"] = start
    results["scale"]["load_average_at_end"] = os.getloadavg()
    results["scale"]["cores"] = os.cpu_count()
    print(
        f"\n{os.cpu_count()} cores; 1-minute load average {start[0]:.1f} at the start,"
        f" {os.getloadavg()[0]:.1f} at the end"
    )
    OUT.mkdir(exist_ok=True)
    path.write_text(json.dumps(results, indent=2))
    print(f"\nwritten to {path}")
    return results


if __name__ == "__main__":
    main()
