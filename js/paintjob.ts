// What the lines layer is asked to draw (PaintJob), what it reports back (PaintResult), and what one
// painting pass (lines or density) works with.

import type { Colouring, RGB } from "./colour";
import type { Table } from "./data";
import type { Layout } from "./layout";
import type { LinesSetup } from "./linespass";
import type { Accumulator } from "./raster";
import type { AxisScale } from "./scales";
import type { KernelPair } from "./scaletier";

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
export interface Pass {
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
  /** false once the job was abandoned (a newer one started) */
  current: () => boolean;
  /** report the fraction done (null: finished) */
  progress: (fraction: number | null) => void;
  /** set by the lines pass when Web Workers drew the lines */
  workers?: boolean;
  /** run a body over all rows in chunks; false when the job was abandoned */
  chunked: (body: (i0: number, i1: number) => void, share: [number, number]) => Promise<boolean>;
}

/** The density view and the final picture work in shorter slices (they run while a range is dragged). */
export const SLICE_MS = 8;

/** Let the page handle input: resolves in a task of its own (a message, else a timeout). */
export const yieldToPage = (() => {
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
