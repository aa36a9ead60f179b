// A small pool of Web Workers that draw slices of rows in parallel (see lineworker.ts).
//
// The page keeps responding while they draw; their pictures are merged on the page. Creating a
// worker can fail (no Worker, a strict Content-Security-Policy): the pool then reports itself broken
// and the painter draws on the page instead.

import workerCode from "../build/lineworker.txt";
import type { LinesSetup } from "./linespass";
import type { AccumulatorState } from "./raster";

export interface SliceResult {
  sel: AccumulatorState;
  fad: AccumulatorState;
  histAll: Uint32Array[];
  histSelected: Uint32Array[];
}

type Pending = { resolve: (r: SliceResult[] | null) => void; results: SliceResult[]; left: number; done: number[] };

export class WorkerPool {
  private workers: Worker[] = [];
  private url: string | null = null;
  private data: unknown = null;
  /** the placement tables each worker holds, by identity (they are large: sent only when new) */
  private placed: unknown = null;
  private placedId = 0;
  private id = 0;
  private pending = new Map<number, Pending>();
  broken = false;

  constructor(size: number) {
    try {
      if (typeof Worker === "undefined" || typeof Blob === "undefined") throw new Error("no Worker");
      this.url = URL.createObjectURL(new Blob([workerCode], { type: "text/javascript" }));
      for (let w = 0; w < size; w++) {
        const worker = new Worker(this.url);
        worker.onmessage = (e) => this.receive(w, e.data);
        worker.onerror = () => this.fail();
        this.workers.push(worker);
      }
    } catch {
      this.fail();
    }
  }

  get size(): number {
    return this.broken ? 0 : this.workers.length;
  }

  /** Send the table's columns to every worker (once per table). */
  ensureData(key: unknown, codes: Uint16Array[], spread: Float32Array) {
    if (this.data === key || this.broken) return;
    this.data = key;
    for (const w of this.workers) w.postMessage({ type: "data", codes, spread });
  }

  /**
   * Draw rows [0, n) split over the workers. Resolves with every slice's result, or null when a newer
   * run superseded this one or a worker failed. `progress` gets the fraction of rows drawn.
   */
  run(
    setup: Omit<LinesSetup, "codes" | "spread"> & { columns: number[] },
    width: number,
    height: number,
    n: number,
    progress: (fraction: number) => void,
    placementKey: unknown = null,
  ): Promise<SliceResult[] | null> {
    // the placement tables go to the workers only when they changed (a new layout)
    let sent: Omit<LinesSetup, "codes" | "spread"> & { columns: number[]; placement: number } & Partial<LinesSetup>;
    if (placementKey !== null && placementKey === this.placed) {
      const { bases: _b, heights: _h, ...rest } = setup;
      sent = { ...rest, placement: this.placedId } as typeof sent;
    } else {
      this.placed = placementKey;
      this.placedId++;
      sent = { ...setup, placement: this.placedId };
    }
    for (const p of this.pending.values()) p.resolve(null);
    this.pending.clear();
    const id = ++this.id;
    const parts = this.workers.length;
    return new Promise((resolve) => {
      const entry: Pending = { resolve, results: [], left: parts, done: new Array(parts).fill(0) };
      this.pending.set(id, entry);
      this.progress = (w, done) => {
        entry.done[w] = done;
        progress(entry.done.reduce((a, b) => a + b, 0) / Math.max(1, n));
      };
      this.workers.forEach((worker, w) => {
        const i0 = Math.floor((w * n) / parts);
        const i1 = Math.floor(((w + 1) * n) / parts);
        worker.postMessage({ type: "job", id, width, height, i0, i1, setup: sent });
      });
    });
  }

  private progress: (w: number, done: number) => void = () => {};

  private receive(w: number, msg: { type: string; id: number; done?: number } & Partial<SliceResult>) {
    const entry = this.pending.get(msg.id);
    if (!entry) return;
    if (msg.type === "failed") {
      this.fail();
      return;
    }
    if (msg.type === "progress") {
      this.progress(w, msg.done ?? 0);
      return;
    }
    entry.results[w] = msg as SliceResult;
    if (--entry.left === 0) {
      this.pending.delete(msg.id);
      entry.resolve(entry.results);
    }
  }

  private fail() {
    this.broken = true;
    for (const p of this.pending.values()) p.resolve(null);
    this.pending.clear();
  }

  dispose() {
    for (const w of this.workers) w.terminate();
    this.workers = [];
    if (this.url) URL.revokeObjectURL(this.url);
    this.fail();
  }
}
