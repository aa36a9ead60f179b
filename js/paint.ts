// The lines layer: rows drawn into accumulation buffers, a little at a time, so the page stays responsive.
//
// Two buffers: rows outside the selection (one faded grey) and selected rows (coloured). Each is
// tone-mapped (alpha = 1 - exp(-gain * weight)) and the selected layer is composited over the faded
// one before a single putImageData. Work is cut into chunks of about CHUNK_MS; between chunks the page
// handles input, and about every SHOW_MS the picture so far is shown.
//
// Two modes:
//   lines   — one polyline per row (straight or curved; optionally bundled by a category column);
//   density — per pair of neighbouring axes, rows are counted in BINS x BINS cells (per colour group
//             and layer), and each non-empty cell is drawn once with its count as weight
//             (frequency-based parallel coordinates, Artero et al. 2004).

import { type Colouring, type RGB } from "./colour";
import { isCategorical, type Table } from "./data";
import { DensityCounts, type CountSpec } from "./densitycount";
import type { KernelPair } from "./scaletier";
import type { Layout } from "./layout";
import { BUNDLE_SLOTS, bundleCentres, linesDrawer, type LinesSetup } from "./linespass";
import { CODE_MAX, CODE_MISSING, DENSITY_BINS, HIST_BINS } from "./wire";
import { Accumulator, gainForOpacity } from "./raster";
import { WorkerPool } from "./workers";
import type { AxisScale } from "./scales";

export type Mode = "lines" | "density";

export interface PaintJob {
  table: Table;
  layout: Layout;
  scales: AxisScale[];
  /** per axis: y of a code is base[code] + spread[row] * height[code] (see draw.rowPlacement) */
  place: { base: Float32Array; height: Float32Array }[];
  spread: Float32Array;
  /** null: nothing is selected away, every row is drawn in colour */
  mask: Uint8Array | null;
  colouring: Colouring;
  faded: RGB;
  /** opacity of one selected line (faded lines get a fraction of it) */
  opacity: number;
  mode: Mode;
  curves: boolean;
  /** bundle rows of each category of this axis toward the category's centre between axes */
  bundle: { axis: number; strength: number } | null;
  dpr: number;
  /** show the picture transposed (horizontal orientation: logical x is the page's y) */
  transpose: boolean;
  /** scale tier, density view: the kernel's counts per gap of the layout (null: counted from the sample) */
  kernel?: { pairs: (KernelPair | null)[]; selectedFresh: boolean } | null;
  /** rows each page row stands for (N / k in the scale tier, else 1) */
  rowWeight?: number;
  /** an intermediate picture (a range being dragged): may wait for the drawing in progress */
  follow?: boolean;
}

export interface PaintResult {
  ms: number;
  /** the lines were drawn by Web Workers (else on the page) */
  workers: boolean;
  /** per axis in the layout: selected-row counts in HIST_BINS bins along the axis (numeric axes) */
  histSelected: Uint32Array[];
  histAll: Uint32Array[];
  /** the bundling the lines were drawn with (centres in CSS px per gap and slot), for hovering */
  bundle: { axis: number; strength: number; centres: Float64Array } | null;
  /** density view: milliseconds spent bringing the pair counts up to date (yields included) */
  countMs?: number;
}

/** What one painting pass works with. */
interface Pass {
  job: PaintJob;
  codes: Uint16Array[];
  xs: Float32Array;
  sel: Accumulator;
  fad: Accumulator;
  histSelected: Uint32Array[];
  histAll: Uint32Array[];
  /** set by the lines pass when it bundles (centres in device px) */
  bundle: LinesSetup["bundle"];
  /** set by the density pass: milliseconds of counting */
  countMs?: number;
  /** run a body over all rows in chunks; false when the job was abandoned */
  chunked: (body: (i0: number, i1: number) => void, share: [number, number]) => Promise<boolean>;
}

/** Bins per axis in the density view (the wire contract's, as in density.py). */
export const BINS = DENSITY_BINS;
const CHUNK_MS = 14;
/** The density view and the final picture work in shorter slices (they run while a range is dragged). */
const SLICE_MS = 8;
const SHOW_ROWS = 64;
/** Tables with at least this many cells (rows x axes) are drawn by Web Workers in lines mode. */
const WORKER_CELLS = 400_000;
const SHOW_MS = 180;

const yieldToPage = (() => {
  const channel = typeof MessageChannel !== "undefined" ? new MessageChannel() : null;
  const queue: (() => void)[] = [];
  if (channel) channel.port1.onmessage = () => queue.shift()?.();
  return () =>
    new Promise<void>((resolve) => {
      if (channel) {
        queue.push(resolve);
        channel.port2.postMessage(0);
      } else setTimeout(resolve, 0);
    });
})();

export class LinePainter {
  private token = 0;
  private sel: Accumulator | null = null;
  private fad: Accumulator | null = null;
  private image: ImageData | null = null;
  private turned: ImageData | null = null;
  private pool: WorkerPool | null = null;
  private usedWorkers = false;
  /** the drawing in progress, and the job to draw after it (see paint) */
  private running: { mode: Mode; token: number } | null = null;
  private next: PaintJob | null = null;
  /** the density view's counts, kept between redraws (see densitycount.ts) */
  private counts = new DensityCounts();
  private binYKey: { scales: AxisScale[] | null; dpr: number; laneY: number } = { scales: null, dpr: 0, laneY: 0 };
  private binYCache = new Map<string, Float32Array>();

  constructor(
    private canvas: HTMLCanvasElement,
    private onProgress: (fraction: number | null) => void,
    private onDone: (result: PaintResult) => void,
  ) {}

  /** Start painting a job; a job still running is abandoned. */
  paint(job: PaintJob): void {
    // while a range is dragged in the density view, a drawing in progress finishes and the latest job
    // follows it (else every pointer move would restart it and no picture would appear until the pointer
    // rests); any other job replaces the one in progress at once
    if (job.follow && job.mode === "density" && this.running?.mode === "density") {
      this.next = job;
      return;
    }
    this.next = null;
    const token = ++this.token;
    this.running = { mode: job.mode, token };
    this.run(job, token)
      .catch((err) => {
        console.error("axeswidget: drawing failed", err);
        this.onProgress(null);
      })
      .finally(() => {
        if (this.running?.token !== token) return;
        this.running = null;
        const next = this.next;
        this.next = null;
        if (next) this.paint(next);
      });
  }

  cancel() {
    this.token++;
    this.running = null;
    this.next = null;
  }

  /** Forget the density counts kept (the next density pass counts every row again; for the bench). */
  forgetCounts() {
    this.counts.forget();
  }


  private buffers(w: number, h: number) {
    if (!this.sel || this.sel.width !== w || this.sel.height !== h) {
      this.sel = new Accumulator(w, h);
      this.fad = new Accumulator(w, h);
      this.image = new ImageData(w, h);
    } else {
      this.sel.clear();
      this.fad!.clear();
    }
    return { sel: this.sel, fad: this.fad!, image: this.image! };
  }

  private async run(job: PaintJob, token: number) {
    const t0 = performance.now();
    this.usedWorkers = false;
    const W = Math.max(1, Math.round(job.layout.width * job.dpr));
    const H = Math.max(1, Math.round(job.layout.height * job.dpr));
    const { sel, fad, image } = this.buffers(W, H);
    const ctx = this.canvas.getContext("2d")!;
    const n = job.table.n;
    const k = job.layout.slots.length;
    const codes = job.layout.slots.map((s) => job.table.byName.get(s.name)!.codes);
    const histSelected = codes.map(() => new Uint32Array(HIST_BINS));
    const histAll = codes.map(() => new Uint32Array(HIST_BINS));
    const gain = gainForOpacity(job.opacity);
    const fadedGain = gainForOpacity(Math.min(0.25, job.opacity * 0.35));
    let shown = t0;
    let chunk = 2048;

    const show = (composed = false) => {
      if (!composed) compose(fad, sel, image, fadedGain, gain, job.mask !== null);
      if (!job.transpose) {
        ctx.putImageData(image, 0, 0);
        return;
      }
      if (!this.turned || this.turned.width !== H || this.turned.height !== W) this.turned = new ImageData(H, W);
      transpose(image, this.turned);
      ctx.putImageData(this.turned, 0, 0);
    };
    /** Run body over all rows in chunks; false when the job was abandoned. */
    const chunked = async (body: (i0: number, i1: number) => void, share: [number, number]) => {
      for (let i0 = 0; i0 < n; ) {
        const c0 = performance.now();
        const i1 = Math.min(n, i0 + chunk);
        body(i0, i1);
        i0 = i1;
        const took = performance.now() - c0;
        chunk = Math.max(256, Math.min(1 << 18, Math.round((chunk * CHUNK_MS) / Math.max(1, took))));
        if (i0 < n) {
          if (performance.now() - t0 > 300) this.onProgress(share[0] + (share[1] - share[0]) * (i0 / n));
          await yieldToPage();
          if (token !== this.token) return false;
          if (performance.now() - shown > SHOW_MS) {
            show();
            shown = performance.now();
            await yieldToPage();
          }
          if (token !== this.token) return false;
        }
      }
      return true;
    };

    let bundle: PaintResult["bundle"] = null;
    let countMs: number | undefined;
    if (k >= 2 && n > 0) {
      const xs = new Float32Array(job.layout.slots.map((s) => s.x * job.dpr));
      const pass: Pass = { job, codes, xs, sel, fad, histSelected, histAll, bundle: null, chunked };
      const ok = job.mode === "density" ? await this.density(pass) : await this.lines(pass);
      if (!ok || token !== this.token) return;
      if (pass.bundle) bundle = { ...pass.bundle, centres: pass.bundle.centres.map((y) => y / job.dpr) };
      countMs = pass.countMs;
    }
    // the finished picture is tone-mapped a band of rows at a time (a big canvas is a long task at once)
    let slice = performance.now();
    for (let y0 = 0; y0 < H; y0 += SHOW_ROWS) {
      compose(fad, sel, image, fadedGain, gain, job.mask !== null, y0, Math.min(H, y0 + SHOW_ROWS));
      if (y0 + SHOW_ROWS < H && performance.now() - slice >= SLICE_MS) {
        await yieldToPage();
        if (token !== this.token) return;
        slice = performance.now();
      }
    }
    show(true);
    this.onProgress(null);
    this.onDone({ ms: performance.now() - t0, histSelected, histAll, workers: this.usedWorkers, bundle, countMs });
  }

  private async lines(pass: Pass): Promise<boolean> {
    const { job, codes, xs, sel, fad, histSelected, histAll, chunked } = pass;
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
    const pool = this.workerPool(job.table.n * k);
    if (pool) {
      const token = this.token;
      const columns = job.layout.slots.map((s) => job.table.axes.findIndex((a) => a.name === s.name));
      pool.ensureData(job.table, job.table.axes.map((a) => a.codes), job.spread);
      const { codes: _c, spread: _s, ...rest } = setup;
      const results = await pool.run(
        { ...rest, columns },
        sel.width,
        sel.height,
        job.table.n,
        (f) => {
          if (token === this.token) this.onProgress(share[0] + (share[1] - share[0]) * f);
        },
        job.place,
      );
      if (token !== this.token) return false;
      if (results) {
        this.usedWorkers = true;
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

  /** The worker pool, when it is worth using for this much work and workers can run here. */
  private workerPool(cells: number): WorkerPool | null {
    if (cells < WORKER_CELLS) return null;
    if (!this.pool) {
      const cores = typeof navigator !== "undefined" ? navigator.hardwareConcurrency || 2 : 2;
      this.pool = new WorkerPool(Math.max(2, Math.min(4, cores)));
    }
    return this.pool.size ? this.pool : null;
  }

  /** Stop the workers (the view is going away). */
  dispose() {
    this.cancel();
    this.pool?.dispose();
    this.pool = null;
  }

  private async density(pass: Pass): Promise<boolean> {
    const { job, codes, xs, sel, fad, histSelected, histAll } = pass;
    const k = xs.length;
    const token = this.token;
    let slice = performance.now();
    const breathe = async () => {
      if (performance.now() - slice >= SLICE_MS) {
        await yieldToPage();
        slice = performance.now();
      }
      return token === this.token;
    };
    const kernel = job.kernel ?? null;
    // colour groups: at most 9 in density mode; the scale tier draws the kernel's counts in the line colour
    const groups = densityGroups(kernel ? null : job.colouring);
    const categorical = job.scales.map((sc) => isCategorical(sc.axis));
    const spec: CountSpec = { n: job.table.n, codes, categorical, bins: BINS, group: groups.group, groups: groups.count, key: [job.table] };
    const counts = this.counts;
    // counting starts in a task of its own (the overlay and the status are drawn in this one)
    await yieldToPage();
    if (token !== this.token) return false;
    slice = performance.now();
    const c0 = performance.now();
    if (!(await counts.prepare(spec, job.mask, breathe))) return false;
    pass.countMs = performance.now() - c0;
    counts.histAll.forEach((h, a) => histAll[a].set(h));
    counts.histSel.forEach((h, a) => histSelected[a].set(h));
    const drawPair = (acc: Accumulator, a: number, weights: ArrayLike<number>, offset: number, bins: number, colour: RGB, transposed = false) => {
      const B1 = bins + 1;
      const cells = B1 * B1;
      const yl = this.binY(job, a, bins);
      const yr = this.binY(job, a + 1, bins);
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
      this.onProgress((a + 1) / (k - 1));
    }
    return true;
  }

  /** y (device px) of each bin centre on the axis in slot a, cached per layout, pixel ratio and bin count. */
  private binY(job: PaintJob, a: number, bins: number): Float32Array {
    const key = job.scales;
    if (this.binYKey.scales !== key || this.binYKey.dpr !== job.dpr || this.binYKey.laneY !== job.layout.laneY) {
      this.binYKey = { scales: key, dpr: job.dpr, laneY: job.layout.laneY };
      this.binYCache.clear();
    }
    const id = `${a}:${bins}`;
    let ys = this.binYCache.get(id);
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
      this.binYCache.set(id, ys);
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

/** Swap rows and columns of an image (src W x H into dst H x W). */
export function transpose(src: ImageData, dst: ImageData) {
  const a = new Uint32Array(src.data.buffer);
  const b = new Uint32Array(dst.data.buffer);
  const W = src.width;
  const H = src.height;
  for (let y = 0; y < H; y++) {
    const row = y * W;
    for (let x = 0; x < W; x++) b[x * H + y] = a[row + x];
  }
}

/** Selected layer over faded layer (straight alpha), into `image` (rows y0..y1-1 when given). */
export function compose(fad: Accumulator, sel: Accumulator, image: ImageData, fadedGain: number, gain: number, fadedUsed = true, y0 = 0, y1 = image.height) {
  const out = image.data;
  const tmp = compose.buffer.length === out.length ? compose.buffer : (compose.buffer = new Uint8ClampedArray(out.length));
  const row = image.width * 4;
  if (fadedUsed) fad.resolve(out, fadedGain, y0, y1);
  else out.fill(0, y0 * row, y1 * row);
  sel.resolve(tmp, gain, y0, y1);
  for (let p = y0 * row, end = y1 * row; p < end; p += 4) {
    const as = tmp[p + 3];
    if (!as) continue;
    if (as === 255 || !out[p + 3]) {
      out[p] = tmp[p];
      out[p + 1] = tmp[p + 1];
      out[p + 2] = tmp[p + 2];
      out[p + 3] = as;
      continue;
    }
    const s = as / 255;
    const f = (out[p + 3] / 255) * (1 - s);
    const a = s + f;
    out[p] = (tmp[p] * s + out[p] * f) / a;
    out[p + 1] = (tmp[p + 1] * s + out[p + 1] * f) / a;
    out[p + 2] = (tmp[p + 2] * s + out[p + 2] * f) / a;
    out[p + 3] = a * 255;
  }
}
compose.buffer = new Uint8ClampedArray(0);
