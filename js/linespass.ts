// Drawing one slice of rows as polylines into two accumulators — shared by the page and the workers.

import { CATEGORY_BAND_LIMIT, CODE_MISSING, HIST_BINS, histBin } from "./wire";
import type { Accumulator } from "./raster";

export type RGB = [number, number, number];

export { HIST_BINS };

/**
 * Bundling keeps one centre per (gap, category band): the bands of a category axis (at most
 * CATEGORY_BAND_LIMIT plus the shared band of rarer labels), and a last slot for missing values.
 */
export const BUNDLE_SLOTS = CATEGORY_BAND_LIMIT + 2;
const LAST_SLOT = BUNDLE_SLOTS - 1;

/** The bundling slot of a code on the bundling axis. */
export const bundleSlot = (code: number): number => (code === CODE_MISSING ? LAST_SLOT : Math.min(LAST_SLOT, code));

/** Everything needed to draw rows; plain arrays only, so it can be posted to a worker. */
export interface LinesSetup {
  /** per axis in drawing order: the wire codes of every row */
  codes: Uint16Array[];
  /** 0..1 per row: where a row sits inside its category band */
  spread: Float32Array;
  /** per axis: y of a code (CSS px) is base[code] + spread[row] * height[code] */
  bases: Float32Array[];
  heights: Float32Array[];
  /** x of each axis in device pixels */
  xs: Float32Array;
  dpr: number;
  /** 1 = selected; null = every row selected */
  mask: Uint8Array | null;
  /** colour group per row (null: one colour) and the group colours */
  group: Uint8Array | null;
  palette: RGB[];
  faded: RGB;
  curves: boolean;
  /** bundling toward category centres: the category axis, strength, centre y per (gap, category) */
  bundle: { axis: number; strength: number; centres: Float64Array } | null;
}

/** Mean mid-point y (device px) per gap and category (BUNDLE_SLOTS slots, the last for missing). */
export function bundleCentres(setup: LinesSetup, axis: number, i0: number, i1: number, sums: Float64Array, counts: Float64Array) {
  const { codes, bases, heights, spread, dpr } = setup;
  const k = codes.length;
  const bcodes = codes[axis];
  for (let i = i0; i < i1; i++) {
    const g = bundleSlot(bcodes[i]);
    counts[g]++;
    for (let a = 0; a + 1 < k; a++) {
      const ca = codes[a][i];
      const cb = codes[a + 1][i];
      const ya = (bases[a][ca] + spread[i] * heights[a][ca]) * dpr;
      const yb = (bases[a + 1][cb] + spread[i] * heights[a + 1][cb]) * dpr;
      sums[a * BUNDLE_SLOTS + g] += (ya + yb) / 2;
    }
  }
}

/** A function that draws rows [i0, i1) and counts them into the histograms (HIST_BINS per axis). */
export function linesDrawer(
  setup: LinesSetup,
  sel: Accumulator,
  fad: Accumulator,
  histAll: Uint32Array[],
  histSelected: Uint32Array[],
): (i0: number, i1: number) => void {
  const { codes, spread, bases, heights, xs, dpr, mask, group, palette, bundle } = setup;
  const k = xs.length;
  const axesOut = bundle ? 2 * k - 1 : k;
  const step = bundle ? 2 : 1;
  const xsOut = new Float32Array(axesOut);
  for (let a = 0; a < k; a++) {
    xsOut[a * step] = xs[a];
    if (bundle && a + 1 < k) xsOut[2 * a + 1] = (xs[a] + xs[a + 1]) / 2;
  }
  const s = bundle ? bundle.strength : 0;
  const curve = setup.curves || !!bundle;
  const single = palette[0];
  let ys = new Float32Array(0);
  let colours = new Float32Array(0);
  let filterSel = new Uint8Array(0);
  let filterFad = new Uint8Array(0);
  return (i0, i1) => {
    const rows = i1 - i0;
    if (ys.length < rows * axesOut) {
      ys = new Float32Array(rows * axesOut);
      colours = new Float32Array(rows * 3);
      filterSel = new Uint8Array(rows);
      filterFad = new Uint8Array(rows);
    }
    let anyFaded = false;
    for (let r = 0; r < rows; r++) {
      const on = mask ? mask[i0 + r] : 1;
      filterSel[r] = on;
      filterFad[r] = on ? 0 : 1;
      if (!on) anyFaded = true;
    }
    // column by column: one axis's codes, placement tables and histograms stay in cache
    for (let a = 0; a < k; a++) {
      const col = codes[a];
      const base = bases[a];
      const height = heights[a];
      const all = histAll[a];
      const chosen = histSelected[a];
      let at = a * step;
      for (let r = 0; r < rows; r++, at += axesOut) {
        const i = i0 + r;
        const c = col[i];
        ys[at] = (base[c] + spread[i] * height[c]) * dpr;
        if (c !== CODE_MISSING) {
          const hb = histBin(c);
          all[hb]++;
          if (filterSel[r]) chosen[hb]++;
        }
      }
    }
    for (let r = 0; r < rows; r++) {
      const i = i0 + r;
      const rowBase = r * axesOut;
      if (bundle) {
        const bc = codes[bundle.axis][i];
        const g = bundleSlot(bc);
        for (let a = 0; a + 1 < k; a++) {
          const mid = (ys[rowBase + 2 * a] + ys[rowBase + 2 * a + 2]) / 2;
          ys[rowBase + 2 * a + 1] = (1 - s) * mid + s * bundle.centres[a * BUNDLE_SLOTS + g];
        }
      }
      if (group) {
        const p = palette[group[i]];
        colours[3 * r] = p[0];
        colours[3 * r + 1] = p[1];
        colours[3 * r + 2] = p[2];
      }
    }
    if (anyFaded) fad.polylines(xsOut, ys, rows, axesOut, setup.faded, 1, filterFad, curve);
    sel.polylines(xsOut, ys, rows, axesOut, group ? colours : single, 1, filterSel, curve);
  };
}
