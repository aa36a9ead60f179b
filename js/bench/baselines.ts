// Baselines for the browser bench (tests/bench/browser.py): bare loops that do the widget's work on
// the same codes, the same geometry and the same pixel buffer size, on one core (the page's thread).
//
// Built by the bench into a bench-only bundle (esbuild js/bench/baselines.ts), never into the shipped
// widget.js. It imports only the rasteriser (raster.ts) and the row pass (linespass.ts), which are the
// stable entry points of the front end; the widget itself is driven through its built bundle.
//
// Geometry: a numeric axis without flip puts code c (0..CODE_MAX) at
// y = bottom - c / CODE_MAX * (bottom - top) CSS px, the missing code on the missing-values lane, and
// device px are CSS px times the pixel ratio. The bench tables are numeric, unflipped and complete, so
// these are the widget's segments.

import { linesDrawer, type LinesSetup } from "../linespass";
import { Accumulator, gainForOpacity } from "../raster";

const CODE_MAX = 65534;
const CODE_MISSING = 65535;
/** Density bins per axis, as the page's density pass (drawdensity.ts BINS) and density.py use. */
const BINS = 128;

/** Where the widget draws: from its data-layout hook and the lines canvas. */
export interface Geometry {
  /** axis x in CSS px, in drawing order */
  xs: number[];
  top: number;
  bottom: number;
  laneY: number;
  /** lines canvas size in device px */
  width: number;
  height: number;
  dpr: number;
}

/** The table's codes in drawing order: `axes` columns of `rows` uint16 codes, one after the other. */
export interface Codes {
  rows: number;
  columns: Uint16Array[];
}

/** Fetch the codes the bench wrote beside the page (codes.bin, column after column). */
export async function loadCodes(url: string, rows: number, axes: number): Promise<Codes> {
  const buf = await (await fetch(url)).arrayBuffer();
  if (buf.byteLength !== rows * axes * 2) throw new Error(`codes.bin: ${buf.byteLength} bytes, expected ${rows * axes * 2}`);
  const columns = Array.from({ length: axes }, (_, a) => new Uint16Array(buf, a * rows * 2, rows));
  return { rows, columns };
}

/** y (device px) of every code on an unflipped numeric axis: the widget's placement table. */
function yTable(g: Geometry): Float32Array {
  const ys = new Float32Array(65536);
  for (let c = 0; c <= CODE_MAX; c++) ys[c] = (g.bottom - (c / CODE_MAX) * (g.bottom - g.top)) * g.dpr;
  ys[CODE_MISSING] = g.laneY * g.dpr;
  return ys;
}

function canvasOf(id: string, width: number, height: number): CanvasRenderingContext2D {
  let canvas = document.getElementById(id) as HTMLCanvasElement | null;
  if (!canvas) {
    canvas = document.createElement("canvas");
    canvas.id = id;
    canvas.style.cssText = "position:absolute;left:-20000px;top:0";
    document.body.appendChild(canvas);
  }
  canvas.width = width;
  canvas.height = height;
  return canvas.getContext("2d")!;
}

/**
 * The bare accumulation loop: every row's segments between neighbouring axes, stepped one pixel at a
 * time along the major direction with one unit of coverage split between the two pixels that straddle
 * the line (two float adds per step, as the widget's rasteriser), gap by gap, into one Float32 buffer
 * of the canvas size; then one tone-mapping pass (alpha = 1 - exp(-gain * weight)) and one
 * putImageData. No chunking, no workers, no histograms, no colours, no clipping.
 * Returns milliseconds: the accumulation alone and the whole (accumulate + show).
 */
export function bareLines(codes: Codes, g: Geometry, opacity = 0.05): { accumulateMs: number; totalMs: number; steps: number } {
  const W = g.width;
  const H = g.height;
  const S = W + 4; // two guard cells each side: the band of a line at the edge may spill over
  const buf = new Float32Array(S * (H + 4));
  const ytab = yTable(g);
  const xs = g.xs.map((x) => x * g.dpr);
  const ctx = canvasOf("axw-bench-bare", W, H);
  const image = ctx.createImageData(W, H);
  const n = codes.rows;
  const t0 = performance.now();
  let steps = 0;
  for (let a = 0; a + 1 < xs.length; a++) {
    const ca = codes.columns[a];
    const cb = codes.columns[a + 1];
    const xa = xs[a];
    const xb = xs[a + 1];
    for (let i = 0; i < n; i++) {
      const ya = ytab[ca[i]];
      const yb = ytab[cb[i]];
      const dx = xb - xa;
      const dy = yb - ya;
      if (Math.abs(dx) >= Math.abs(dy)) {
        // x-major: one step per pixel column
        const k = dy / dx;
        const u0 = Math.floor(Math.min(xa, xb));
        const u1 = Math.ceil(Math.max(xa, xb));
        let v = ya + k * (u0 + 0.5 - xa) - 0.5 + 2;
        for (let u = u0; u < u1; u++, v += k) {
          const j = v | 0;
          const f = v - j;
          const p = j * S + u + 2;
          buf[p] += 1 - f;
          buf[p + S] += f;
        }
        steps += u1 - u0;
      } else {
        // y-major: one step per pixel row
        const k = dx / dy;
        const u0 = Math.floor(Math.min(ya, yb));
        const u1 = Math.ceil(Math.max(ya, yb));
        let v = xa + k * (u0 + 0.5 - ya) - 0.5 + 2;
        for (let u = u0; u < u1; u++, v += k) {
          const j = v | 0;
          const f = v - j;
          const p = (u + 2) * S + j;
          buf[p] += 1 - f;
          buf[p + 1] += f;
        }
        steps += u1 - u0;
      }
    }
  }
  const t1 = performance.now();
  const gain = -Math.log1p(-opacity);
  const out = image.data;
  for (let y = 0; y < H; y++) {
    let p = (y + 2) * S + 2;
    let o = y * W * 4;
    for (let x = 0; x < W; x++, p++, o += 4) {
      const w = buf[p];
      out[o] = 0;
      out[o + 1] = 114;
      out[o + 2] = 178;
      out[o + 3] = w > 0 ? 255 - 255 * Math.exp(-gain * w) : 0;
    }
  }
  ctx.putImageData(image, 0, 0);
  ctx.getImageData(0, 0, 1, 1); // the put is done before the clock stops
  const t2 = performance.now();
  return { accumulateMs: t1 - t0, totalMs: t2 - t0, steps };
}

/**
 * The widget's own row pass and rasteriser (linespass.linesDrawer into raster.Accumulator) over all
 * rows in one call on the page's thread: what one core of the widget does, without the pipeline
 * (workers, chunking, merging). A diagnostic beside the bare loop, not a baseline.
 */
export function rasteriserOneCore(codes: Codes, g: Geometry, opacity = 0.05): { totalMs: number } {
  const W = g.width;
  const H = g.height;
  const ytab = yTable(g);
  const k = codes.columns.length;
  // placement tables in CSS px, as the widget's (the row pass multiplies by dpr)
  const base = new Float32Array(65536);
  for (let c = 0; c < 65536; c++) base[c] = ytab[c] / g.dpr;
  const height = new Float32Array(65536);
  const setup: LinesSetup = {
    codes: codes.columns,
    spread: new Float32Array(codes.rows),
    bases: codes.columns.map(() => base),
    heights: codes.columns.map(() => height),
    xs: new Float32Array(g.xs.map((x) => x * g.dpr)),
    dpr: g.dpr,
    mask: null,
    group: null,
    palette: [[0, 114 / 255, 178 / 255]],
    faded: [0.7, 0.7, 0.7],
    curves: false,
    bundle: null,
  };
  const ctx = canvasOf("axw-bench-raster", W, H);
  const image = ctx.createImageData(W, H);
  const t0 = performance.now();
  const sel = new Accumulator(W, H);
  const fad = new Accumulator(W, H);
  const histAll = Array.from({ length: k }, () => new Uint32Array(64));
  const histSelected = Array.from({ length: k }, () => new Uint32Array(64));
  linesDrawer(setup, sel, fad, histAll, histSelected)(0, codes.rows);
  sel.resolve(image.data, gainForOpacity(opacity));
  ctx.putImageData(image, 0, 0);
  ctx.getImageData(0, 0, 1, 1);
  return { totalMs: performance.now() - t0 };
}

/**
 * The bare bincount-like loop of the density view: bin every code (floor(code * BINS / 65535), the
 * missing code in bin BINS) with a lookup table, and count each neighbouring pair's (left bin, right
 * bin) cells with one increment per row, pair by pair. Same codes and bins as the page's density pass;
 * no drawing, no histograms, no colour groups. Returns milliseconds and the total count (rows x pairs).
 */
export function bareBincount(codes: Codes): { totalMs: number; counted: number } {
  const t0 = performance.now();
  const counts = bareBincountCounts(codes);
  const ms = performance.now() - t0;
  let counted = 0;
  for (const cnt of counts) for (let c = 0; c < cnt.length; c++) counted += cnt[c];
  return { totalMs: ms, counted };
}

const LUT = (() => {
  const lut = new Uint8Array(65536);
  for (let c = 0; c < CODE_MISSING; c++) lut[c] = Math.floor((c * BINS) / 65535);
  lut[CODE_MISSING] = BINS;
  return lut;
})();

function bareBincountCounts(codes: Codes): Uint32Array[] {
  const B = BINS + 1;
  const lut = LUT;
  const k = codes.columns.length;
  const n = codes.rows;
  const counts = Array.from({ length: k - 1 }, () => new Uint32Array(B * B));
  for (let a = 0; a + 1 < k; a++) {
    const ca = codes.columns[a];
    const cb = codes.columns[a + 1];
    const cnt = counts[a];
    for (let i = 0; i < n; i++) cnt[lut[ca[i]] * B + lut[cb[i]]]++;
  }
  return counts;
}

/** Add one anti-aliased segment of weight w as the bare loop does (major-direction steps, two adds each). */
function addSegment(buf: Float32Array, S: number, xa: number, ya: number, xb: number, yb: number, w: number): number {
  const dx = xb - xa;
  const dy = yb - ya;
  if (Math.abs(dx) >= Math.abs(dy)) {
    const k = dy / dx;
    const u0 = Math.floor(Math.min(xa, xb));
    const u1 = Math.ceil(Math.max(xa, xb));
    let v = ya + k * (u0 + 0.5 - xa) - 0.5 + 2;
    for (let u = u0; u < u1; u++, v += k) {
      const j = v | 0;
      const f = (v - j) * w;
      const p = j * S + u + 2;
      buf[p] += w - f;
      buf[p + S] += f;
    }
    return u1 - u0;
  }
  const k = dx / dy;
  const u0 = Math.floor(Math.min(ya, yb));
  const u1 = Math.ceil(Math.max(ya, yb));
  let v = xa + k * (u0 + 0.5 - ya) - 0.5 + 2;
  for (let u = u0; u < u1; u++, v += k) {
    const j = v | 0;
    const f = (v - j) * w;
    const p = (u + 2) * S + j;
    buf[p] += w - f;
    buf[p + 1] += f;
  }
  return u1 - u0;
}

/**
 * The whole density view done bare: the bincount-like loop above, then each non-empty (left bin, right
 * bin) cell drawn once as a segment between the bins' centres with its count as weight (same
 * accumulation step as bareLines), one tone-mapping pass and one putImageData. The same work as the
 * page's density pass without colour groups, histograms or chunking. Returns milliseconds.
 */
export function bareDensity(codes: Codes, g: Geometry, opacity = 0.05): { totalMs: number; countMs: number; cells: number } {
  const B = BINS + 1;
  const W = g.width;
  const H = g.height;
  const S = W + 4;
  const ytab = yTable(g);
  const binY = new Float32Array(B);
  for (let b = 0; b < BINS; b++) binY[b] = ytab[Math.min(CODE_MAX, Math.floor(((b + 0.5) * 65535) / BINS))];
  binY[BINS] = g.laneY * g.dpr;
  const xs = g.xs.map((x) => x * g.dpr);
  const ctx = canvasOf("axw-bench-density", W, H);
  const image = ctx.createImageData(W, H);
  const t0 = performance.now();
  const counted = bareBincountCounts(codes);
  const t1 = performance.now();
  const buf = new Float32Array(S * (H + 4));
  let cells = 0;
  for (let a = 0; a + 1 < xs.length; a++) {
    const cnt = counted[a];
    for (let cell = 0; cell < B * B; cell++) {
      const w = cnt[cell];
      if (!w) continue;
      cells++;
      addSegment(buf, S, xs[a], binY[(cell / B) | 0], xs[a + 1], binY[cell % B], w);
    }
  }
  const gain = -Math.log1p(-opacity);
  const out = image.data;
  for (let y = 0; y < H; y++) {
    let p = (y + 2) * S + 2;
    let o = y * W * 4;
    for (let x = 0; x < W; x++, p++, o += 4) {
      const w = buf[p];
      out[o] = 0;
      out[o + 1] = 114;
      out[o + 2] = 178;
      out[o + 3] = w > 0 ? 255 - 255 * Math.exp(-gain * w) : 0;
    }
  }
  ctx.putImageData(image, 0, 0);
  ctx.getImageData(0, 0, 1, 1);
  return { totalMs: performance.now() - t0, countMs: t1 - t0, cells };
}

declare global {
  interface Window {
    __baselines: typeof api;
  }
}

const api = { loadCodes, bareLines, rasteriserOneCore, bareBincount, bareDensity };
window.__baselines = api;
