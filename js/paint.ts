// The lines layer: rows drawn into accumulation buffers, a little at a time, so the page stays responsive.
//
// Two buffers: rows outside the selection (one faded grey) and selected rows (coloured). Each is
// tone-mapped (alpha = 1 - exp(-gain * weight)) and the selected layer is composited over the faded
// one before a single putImageData (compose.ts). Work is cut into chunks of about CHUNK_MS; between
// chunks the page handles input, and about every SHOW_MS the picture so far is shown.
//
// Two modes:
//   lines   — one polyline per row (straight or curved; optionally bundled by a category column;
//             drawlines.ts);
//   density — per pair of neighbouring axes, rows are counted in bins and each non-empty cell is drawn
//             once with its count as weight (drawdensity.ts).

import { compose, transpose } from "./compose";
import { DensityCounts } from "./densitycount";
import { BinCentres, densityPass } from "./drawdensity";
import { linesPass } from "./drawlines";
import { SLICE_MS, yieldToPage, type Mode, type PaintJob, type PaintResult, type Pass } from "./paintjob";
import { HIST_BINS } from "./wire";
import { Accumulator, gainForOpacity } from "./raster";
import { WorkerPool } from "./workers";

export type { Mode, PaintJob, PaintResult } from "./paintjob";

const CHUNK_MS = 14;
const SHOW_ROWS = 64;
/** Tables with at least this many cells (rows x axes) are drawn by Web Workers in lines mode. */
const WORKER_CELLS = 400_000;
const SHOW_MS = 180;

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
  /** bin centres of the density view, per axis */
  private binY = new BinCentres();

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
      const current = () => token === this.token;
      const progress = (f: number | null) => this.onProgress(f);
      const pass: Pass = { job, codes, xs, sel, fad, histSelected, histAll, bundle: null, chunked, current, progress };
      const ok =
        job.mode === "density" ? await densityPass(pass, this.counts, this.binY) : await linesPass(pass, this.workerPool(n * k));
      if (!ok || token !== this.token) return;
      if (pass.bundle) bundle = { ...pass.bundle, centres: pass.bundle.centres.map((y) => y / job.dpr) };
      countMs = pass.countMs;
      this.usedWorkers = !!pass.workers;
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
}

/** Paint one job into `canvas` with a painter of its own (a PNG at another scale); resolves when drawn. */
export function paintOnce(canvas: HTMLCanvasElement, job: PaintJob): Promise<void> {
  return new Promise<void>((resolve) => {
    const painter: LinePainter = new LinePainter(canvas, () => {}, () => {
      painter.dispose();
      resolve();
    });
    painter.paint(job);
  });
}
