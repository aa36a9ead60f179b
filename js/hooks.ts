// Test and benchmark hooks on the view's root element (.axw-root): data-* attributes describing what is
// shown, and `root.__axw` with `redraw()` (resolves with the ms of a full redraw) and `layersAt(scale)`.
// Tests read these; nothing in the widget does.

import type { Layout } from "./layout";
import type { PaintResult } from "./paint";
import type { AxisScale } from "./scales";
import { own, type Sel } from "./selection";

/** What the view offers on `root.__axw`. */
export interface ViewHooks {
  redraw(): Promise<number>;
  layersAt(scale: number): Promise<HTMLCanvasElement[]>;
  /** every text the overlay draws, with its box (logical CSS px) */
  textBoxes?(): { text: string; font: string; x0: number; y0: number; x1: number; y1: number }[];
}

type Hooked = { __axw?: ViewHooks };

export function attachHooks(root: HTMLElement, hooks: ViewHooks): void {
  (root as HTMLElement & Hooked).__axw = hooks;
}

/** The hooks of a view's root, if it is one. */
export function viewHooks(root: HTMLElement): ViewHooks | undefined {
  return (root as HTMLElement & Hooked).__axw;
}

/** The status of the selection: count shown, rows, and "preview" until the kernel has answered. */
export function publishCount(root: HTMLElement, count: number, total: number, preview: boolean): void {
  const ds = root.dataset;
  ds.count = String(count);
  ds.total = String(total);
  ds.state = preview ? "preview" : "synced";
}

/** A finished drawing of the lines layer: how many so far, how long it took, and who drew it. */
export function publishDrawn(root: HTMLElement, drawn: number, r: PaintResult): void {
  const ds = root.dataset;
  ds.drawn = String(drawn);
  ds.drawMs = r.ms.toFixed(1);
  ds.drawnBy = r.workers ? "workers" : "page";
  // density view: the counting part of the draw
  if (r.countMs !== undefined) ds.countMs = r.countMs.toFixed(1);
  else delete ds.countMs;
}

export interface ShownLayout {
  layout: Layout;
  scales: AxisScale[];
  sel: Sel;
  readouts: { left: string; right: string; value: number }[];
  hover: number;
  pinned: number;
}

/** Where the axes, category bands, range bands, flips, readouts and highlighted rows are (logical CSS px). */
export function publishLayout(root: HTMLElement, shown: ShownLayout): void {
  const { layout, scales: sc, sel } = shown;
  root.dataset.layout = JSON.stringify({
    top: layout.top,
    bottom: layout.bottom,
    laneY: layout.laneY,
    axes: layout.slots.map((s, i) => ({ name: s.name, x: s.x, lo: sc[i].axis.lo, hi: sc[i].axis.hi })),
    axisKinds: layout.slots.map((s, i) => sc[i].axis.kind),
    categoryBands: layout.slots.map((s, i) => (sc[i].categorical ? sc[i].bands.map((b, c) => ({ label: sc[i].bandLabel(c), y0: b.y0, y1: b.y1 })) : [])),
    bands: layout.slots.flatMap((s, i) =>
      (own(sel, s.name)?.spans ?? []).map(([lo, hi]) => ({ name: s.name, x: s.x, yTop: sc[i].toPixel(hi), yBottom: sc[i].toPixel(lo) })),
    ),
    flipped: sc.filter((x) => x.flipped).map((x) => x.axis.name),
    readouts: shown.readouts,
    horizontal: layout.horizontal,
    hover: shown.hover,
    pinned: shown.pinned,
    picked: Object.fromEntries(Object.entries(sel).map(([k, v]) => [k, { bands: v.bands, lane: v.lane }])),
  });
}
