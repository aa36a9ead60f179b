// The lines pass of the lines layer: one polyline per row (bundling centres first when bundled), drawn
// by Web Workers when given a pool, else on the page in chunks.

import { BUNDLE_SLOTS, bundleCentres, linesDrawer, type LinesSetup } from "./linespass";
import type { Pass } from "./paintjob";
import type { WorkerPool } from "./workers";

/** Draw the rows as lines into the pass's buffers; false when the job was abandoned. */
export async function linesPass(pass: Pass, pool: WorkerPool | null): Promise<boolean> {
  const { job, codes, xs, sel, fad, histSelected, histAll, chunked, current, progress } = pass;
  const k = xs.length;
  const setup: LinesSetup = {
    codes,
    spread: job.spread,
    bases: job.place.map((p) => p.base),
    heights: job.place.map((p) => p.height),
    xs,
    dpr: job.dpr,
    mask: job.mask,
    group: job.colouring.group,
    palette: job.colouring.palette,
    faded: job.faded,
    curves: job.curves,
    bundle: null,
  };
  if (job.bundle) {
    // bundling: a mid point per gap, pulled toward the mean mid point of the row's category
    const sums = new Float64Array((k - 1) * BUNDLE_SLOTS);
    const counts = new Float64Array(BUNDLE_SLOTS);
    const axis = job.bundle.axis;
    const ok = await chunked((i0, i1) => bundleCentres(setup, axis, i0, i1, sums, counts), [0, 0.2]);
    if (!ok) return false;
    for (let a = 0; a + 1 < k; a++) for (let g = 0; g < BUNDLE_SLOTS; g++) if (counts[g]) sums[a * BUNDLE_SLOTS + g] /= counts[g];
    setup.bundle = { axis, strength: job.bundle.strength, centres: sums };
    pass.bundle = setup.bundle;
  }
  const share: [number, number] = [job.bundle ? 0.2 : 0, 1];
  if (pool) {
    const columns = job.layout.slots.map((s) => job.table.axes.findIndex((a) => a.name === s.name));
    pool.ensureData(job.table, job.table.axes.map((a) => a.codes), job.spread);
    const { codes: _c, spread: _s, ...rest } = setup;
    const results = await pool.run(
      { ...rest, columns },
      sel.width,
      sel.height,
      job.table.n,
      (f) => {
        if (current()) progress(share[0] + (share[1] - share[0]) * f);
      },
      job.place,
    );
    if (!current()) return false;
    if (results) {
      pass.workers = true;
      for (const r of results) {
        sel.merge(r.sel);
        fad.merge(r.fad);
        r.histAll.forEach((h, a) => h.forEach((v, b) => (histAll[a][b] += v)));
        r.histSelected.forEach((h, a) => h.forEach((v, b) => (histSelected[a][b] += v)));
      }
      return true;
    }
    // a worker failed: draw here instead
  }
  return chunked(linesDrawer(setup, sel, fad, histAll, histSelected), share);
}
