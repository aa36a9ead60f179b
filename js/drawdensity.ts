// The density pass of the lines layer: per pair of neighbouring axes, rows counted in BINS x BINS cells
// (per colour group and layer; densitycount.ts), each non-empty cell drawn once with its count as weight
// (frequency-based parallel coordinates, Artero et al. 2004). In the scale tier the kernel's pair counts
// over every row are drawn instead.

import type { Colouring, RGB } from "./colour";
import { isCategorical } from "./data";
import type { CountSpec, DensityCounts } from "./densitycount";
import { SLICE_MS, yieldToPage, type PaintJob, type Pass } from "./paintjob";
import type { Accumulator } from "./raster";
import type { AxisScale } from "./scales";
import type { KernelPair } from "./scaletier";
import { CODE_MAX, CODE_MISSING, DENSITY_BINS } from "./wire";

/** Bins per axis in the density view (the wire contract's, as in density.py). */
export const BINS = DENSITY_BINS;

/** Draw the rows' pair counts into the pass's buffers; false when the job was abandoned. */
export async function densityPass(pass: Pass, counts: DensityCounts, binY: BinCentres): Promise<boolean> {
  const { job, codes, xs, sel, fad, histSelected, histAll, current } = pass;
  const k = xs.length;
  let slice = performance.now();
  const breathe = async () => {
    if (performance.now() - slice >= SLICE_MS) {
      await yieldToPage();
      slice = performance.now();
    }
    return current();
  };
  const kernel = job.kernel ?? null;
  // colour groups: at most 9 in density mode; the scale tier draws the kernel's counts in the line colour
  const groups = densityGroups(kernel ? null : job.colouring);
  const categorical = job.scales.map((sc) => isCategorical(sc.axis));
  const spec: CountSpec = { n: job.table.n, codes, categorical, bins: BINS, group: groups.group, groups: groups.count, key: [job.table] };
  // counting starts in a task of its own (the overlay and the status are drawn in this one)
  await yieldToPage();
  if (!current()) return false;
  slice = performance.now();
  const c0 = performance.now();
  if (!(await counts.prepare(spec, job.mask, breathe))) return false;
  pass.countMs = performance.now() - c0;
  counts.histAll.forEach((h, a) => histAll[a].set(h));
  counts.histSel.forEach((h, a) => histSelected[a].set(h));
  const drawPair = (acc: Accumulator, a: number, weights: ArrayLike<number>, offset: number, bins: number, colour: RGB, transposed = false) => {
    const B1 = bins + 1;
    const cells = B1 * B1;
    const yl = binY.of(job, a, bins);
    const yr = binY.of(job, a + 1, bins);
    const x0 = xs[a];
    const x1 = xs[a + 1];
    for (let cell = 0; cell < cells; cell++) {
      const w = weights[offset + cell];
      if (!(w > 0)) continue;
      const q = (cell / B1) | 0;
      const r = cell - q * B1;
      const y0 = transposed ? yl[r] : yl[q];
      const y1 = transposed ? yr[q] : yr[r];
      if (job.curves) acc.curveSegment(x0, y0, x1, y1, colour[0], colour[1], colour[2], w);
      else acc.segment(x0, y0, x1, y1, colour[0], colour[1], colour[2], w);
    }
  };
  const cells = counts.cells;
  const scale = job.rowWeight ?? 1;
  const faded = new Float32Array(cells);
  const chosen = new Float32Array(cells);
  for (let a = 0; a + 1 < k; a++) {
    const kp = kernel?.pairs[a] ?? null;
    const all = counts.all[a];
    const got = counts.sel[a];
    if (kp && (job.mask === null || (kernel!.selectedFresh && kp.selected) || kp.bins === BINS)) {
      // the kernel's counts over every row; the selected ones are its own once they answer the latest
      // edit, else scaled up from the sample (never more than the cell holds)
      const exact = job.mask === null ? kp.all : kernel!.selectedFresh ? kp.selected : null;
      const { ksel, kfaded } = kernelLayers(kp, exact, got, scale);
      drawPair(fad, a, kfaded, 0, kp.bins, job.faded, kp.transposed);
      if (!(await breathe())) return false;
      drawPair(sel, a, ksel, 0, kp.bins, groups.colour(0, job.colouring), kp.transposed);
    } else {
      // counted here: rows left out (faded, all groups together), selected rows per colour group
      fadedLayer(all, got, groups.count, cells, scale, faded);
      drawPair(fad, a, faded, 0, BINS, job.faded);
      if (!(await breathe())) return false;
      for (let g = 0; g < groups.count; g++) {
        scaled(got, g * cells, cells, scale, chosen);
        drawPair(sel, a, chosen, 0, BINS, groups.colour(g, job.colouring));
        if (!(await breathe())) return false;
      }
    }
    if (!(await breathe())) return false;
    pass.progress((a + 1) / (k - 1));
  }
  return true;
}

/** The y (device px) of each bin centre per axis, kept while the scales, pixel ratio and missing lane stay. */
export class BinCentres {
  private key: { scales: AxisScale[] | null; dpr: number; laneY: number } = { scales: null, dpr: 0, laneY: 0 };
  private cache = new Map<string, Float32Array>();

  /** y (device px) of each bin centre on the axis in slot a, cached per layout, pixel ratio and bin count. */
  of(job: PaintJob, a: number, bins: number): Float32Array {
    const key = job.scales;
    if (this.key.scales !== key || this.key.dpr !== job.dpr || this.key.laneY !== job.layout.laneY) {
      this.key = { scales: key, dpr: job.dpr, laneY: job.layout.laneY };
      this.cache.clear();
    }
    const id = `${a}:${bins}`;
    let ys = this.cache.get(id);
    if (!ys) {
      const sc = job.scales[a];
      ys = new Float32Array(bins + 1);
      for (let b = 0; b < bins; b++) {
        if (isCategorical(sc.axis)) {
          const band = sc.bands[b];
          ys[b] = band ? ((band.y0 + band.y1) / 2) * job.dpr : NaN;
        } else ys[b] = sc.codePixel(Math.min(CODE_MAX, ((b + 0.5) * CODE_MISSING) / bins)) * job.dpr;
      }
      ys[bins] = job.layout.laneY * job.dpr;
      this.cache.set(id, ys);
    }
    return ys;
  }
}

/**
 * The scale tier's layers of one pair from the kernel's counts: selected = the kernel's exact counts
 * (`exact`), or else the sample's selected counts scaled up (never more than the cell holds); the rest
 * faded. The sample's cell of the same (left, right) bins is read transposed when the kernel's pair is.
 */
function kernelLayers(kp: KernelPair, exact: Uint32Array | null, sample: Uint32Array, scale: number) {
  const B1 = kp.bins + 1;
  const kcells = B1 * B1;
  const kfaded = new Float32Array(kcells);
  const ksel = new Float32Array(kcells);
  for (let c = 0; c < kcells; c++) {
    const total = kp.all[c];
    let s: number;
    if (exact) s = Math.min(total, exact[c]);
    else {
      const q = (c / B1) | 0;
      const sc = kp.transposed ? (c - q * B1) * B1 + q : c;
      s = Math.min(total, Math.round(sample[sc] * scale));
    }
    ksel[c] = s;
    kfaded[c] = total - s;
  }
  return { ksel, kfaded };
}

/** Rows left out of a pair's counts (all groups together), times `scale`, into `out`. */
function fadedLayer(all: Uint32Array, got: Uint32Array, groups: number, cells: number, scale: number, out: Float32Array) {
  for (let c = 0; c < cells; c++) {
    let f = 0;
    for (let g = 0, o = c; g < groups; g++, o += cells) f += all[o] - got[o];
    out[c] = f * scale;
  }
}

/** counts[offset..offset+cells) times `scale`, into `out`. */
function scaled(counts: Uint32Array, offset: number, cells: number, scale: number, out: Float32Array) {
  for (let c = 0; c < cells; c++) out[c] = counts[offset + c] * scale;
}

/** Colour groups of the density view: at most 9 (categories keep theirs; continuous values 8 levels). */
interface DensityGroups {
  group: Uint8Array | null;
  count: number;
  colour(g: number, c: Colouring): RGB;
}

const groupCache = new WeakMap<Colouring, DensityGroups>();
const ONE_GROUP: DensityGroups = { group: null, count: 1, colour: (_g, c) => c.palette[0] };

function densityGroups(c: Colouring | null): DensityGroups {
  if (!c || !c.group) return ONE_GROUP;
  let out = groupCache.get(c);
  if (out) return out;
  const palette = c.palette;
  const src = c.group;
  if (palette.length <= 9) out = { group: src, count: palette.length, colour: (g, cc) => cc.palette[g] };
  else {
    const group = new Uint8Array(src.length);
    const last = palette.length - 1;
    for (let i = 0; i < src.length; i++) {
      const g = src[i];
      group[i] = g >= last ? 8 : Math.min(7, Math.floor((g * 8) / last));
    }
    out = {
      group,
      count: 9,
      colour: (g, cc) => (g === 8 ? cc.palette[last] : cc.palette[Math.min(last - 1, Math.round(((g + 0.5) * last) / 8))]),
    };
  }
  groupCache.set(c, out);
  return out;
}
