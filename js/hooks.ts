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
  textBoxes?(): TextBox[];
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

export type TextBox = { text: string; font: string; x0: number; y0: number; x1: number; y1: number };

/**
 * Every text `draw` writes into a fresh scratch canvas of w x h, with its box (logical CSS px): the
 * canvas's fillText is wrapped to measure each text where it lands.
 */
export function collectTextBoxes(w: number, h: number, draw: (canvas: HTMLCanvasElement) => void): TextBox[] {
  const canvas = document.createElement("canvas");
  canvas.width = w;
  canvas.height = h;
  const ctx = canvas.getContext("2d")!;
  const boxes: TextBox[] = [];
  const fill = ctx.fillText.bind(ctx);
  ctx.fillText = (text: string, x: number, y: number, maxWidth?: number) => {
    const m = ctx.measureText(text);
    const width = maxWidth !== undefined ? Math.min(maxWidth, m.width) : m.width;
    const t = ctx.getTransform();
    const align = ctx.textAlign;
    const left = align === "center" ? x - width / 2 : align === "right" || align === "end" ? x - width : x;
    const px = t.a * left + t.e;
    const py = t.d * y + t.f;
    boxes.push({ text, font: ctx.font, x0: px, x1: px + width * t.a, y0: py - m.actualBoundingBoxAscent * t.d, y1: py + m.actualBoundingBoxDescent * t.d });
    if (maxWidth === undefined) fill(text, x, y);
    else fill(text, x, y, maxWidth);
  };
  draw(canvas);
  return boxes;
}
