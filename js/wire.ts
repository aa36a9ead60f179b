// The wire contract shared with the kernel: src/axeswidget/wire.json, bundled here by esbuild and read
// by axeswidget/wire.py. Every number both sides must agree on comes from it.

import contract from "../src/axeswidget/wire.json";

/** Largest quantisation code; codes 0..CODE_MAX map linearly (or logarithmically) onto [lo, hi]. */
export const CODE_MAX: number = contract.code.max;
/** Code reserved for a missing value. */
export const CODE_MISSING: number = contract.code.missing;
/** Number of distinct codes (the size of a lookup table over every code). */
export const CODE_COUNT = CODE_MISSING + 1;
/** Marginal histograms: HIST_BINS bins per axis, bin = code >> HIST_SHIFT. */
export const HIST_BINS: number = contract.histogram.bins;
export const HIST_SHIFT: number = contract.histogram.shift;
/** The density view splits each axis into DENSITY_BINS bins; view_mode "auto" uses it above DENSITY_ROWS rows. */
export const DENSITY_BINS: number = contract.density.bins;
export const DENSITY_ROWS: number = contract.density.rows;
/** Category axes draw at most this many bands (plus one shared band for rarer labels). */
export const CATEGORY_BAND_LIMIT: number = contract.category.band_limit;
/** PNG requests: custom message type, largest answer the page sends back, largest scale. */
export const PNG_MESSAGE: string = contract.png.message;
export const PNG_MAX_BYTES: number = contract.png.max_bytes;
export const PNG_MAX_SCALE: number = contract.png.max_scale;
/** The view option traits (kept across a data swap with `resume=`). */
export const OPTIONS: readonly string[] = contract.options;

/** Histogram bin of a present code. */
export const histBin = (code: number): number => code >> HIST_SHIFT;

/** Density bin of every code (a lookup table): `floor(code * bins / CODE_MISSING)` for numeric axes,
 * the band number (capped) on category axes, and the last bin, `bins`, for the missing code. */
export function densityBins(bins: number, categorical: boolean): Uint8Array | Uint16Array {
  const lut = bins < 255 ? new Uint8Array(CODE_COUNT) : new Uint16Array(CODE_COUNT);
  for (let c = 0; c < CODE_MISSING; c++) lut[c] = categorical ? Math.min(bins - 1, c) : Math.floor((c * bins) / CODE_MISSING);
  lut[CODE_MISSING] = bins;
  return lut;
}
