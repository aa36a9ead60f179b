"""`make bench`: speed and size as ratios against baselines measured in the same run.

Never a pass/fail test: these machines are shared and noisy. Each figure is printed as a table and
written to bench-results/bench.json. Run: ``python -m tests.bench.run [--quick]``.
"""

from __future__ import annotations

import argparse
import json
import platform
import time
from pathlib import Path

import numpy as np
import pandas as pd

import axeswidget as aw

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
    """One range update on one of `brushed` axes vs a bare numpy range test over all of them."""
    df = table(rows, cols)
    w = aw.AxesWidget(df)
    names = list(df.columns[:brushed])
    base = {n: [[-0.5, 0.8]] for n in names}
    w.ranges = base
    arrays = [df[n].to_numpy() for n in names]
    state = {"k": 0}

    def widget_update():
        state["k"] += 1
        r = dict(base)
        r[names[0]] = [[-0.5, 0.8 + 1e-6 * (state["k"] % 7 + 1)]]
        w.ranges = r

    def bare():
        m = np.ones(rows, dtype=bool)
        for a in arrays:
            m &= (a >= -0.5) & (a <= 0.8)
        return m

    t_w, t_b = best_of(widget_update), best_of(bare)
    return {"rows": rows, "cols": cols, "widget_s": t_w, "numpy_s": t_b, "ratio": t_w / t_b}


def bench_wire(rows: int, cols: int) -> dict:
    df = table(rows, cols)
    w = aw.AxesWidget(df)
    nbytes = sum(memoryview(c["codes"]).nbytes for c in w.table["columns"])
    return {"rows": rows, "cols": cols, "bytes": nbytes, "bytes_per_cell": nbytes / (rows * cols)}


def main(argv=None) -> dict:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="only the 10^4 and 10^5 sizes")
    args = ap.parse_args(argv)
    sizes = [(10**4, 10), (10**5, 10), (10**5, 20)] + ([] if args.quick else [(10**6, 10), (10**6, 20)])
    results = {
        "machine": f"{platform.machine()} {platform.processor() or ''}".strip(),
        "mask": [],
        "wire": [],
    }
    print("mask: one range update (5 brushed axes) vs bare numpy range test over the 5 axes (target <= 1.0x)")
    print(f"{'rows':>9} {'cols':>4} {'widget ms':>10} {'numpy ms':>9} {'ratio':>6}")
    for rows, cols in sizes:
        r = bench_mask(rows, cols)
        results["mask"].append(r)
        print(
            f"{rows:>9} {cols:>4} {1e3 * r['widget_s']:>10.2f} {1e3 * r['numpy_s']:>9.2f} {r['ratio']:>6.2f}"
        )
    print("\nwire: bytes sent per cell for the column data (target <= 2)")
    for rows, cols in sizes:
        r = bench_wire(rows, cols)
        results["wire"].append(r)
        print(f"{rows:>9} {cols:>4} {r['bytes_per_cell']:>6.2f} B/cell ({r['bytes'] / 1e6:.1f} MB)")
    OUT.mkdir(exist_ok=True)
    (OUT / "bench.json").write_text(json.dumps(results, indent=2))
    print(f"\nwritten to {OUT / 'bench.json'}")
    return results


if __name__ == "__main__":
    main()
