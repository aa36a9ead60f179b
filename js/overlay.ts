// The overlay canvas: axes, ticks, headers, missing lanes, the selection, histograms and readouts.
// (The lines layer is paint.ts; hovered rows are hover.ts.)

import { type Table } from "./data";
import { CODE_COUNT, CODE_MAX, CODE_MISSING, HIST_SHIFT } from "./wire";
import type { Layout } from "./layout";
import { AxisScale, formatValue } from "./scales";
import { own, type AxisSel, type Sel } from "./selection";
import type { Theme } from "./theme";
import { thinLabels } from "./wide";

export { readTheme, type Theme } from "./theme";

export function scalesFor(table: Table, layout: Layout, flipped: Set<string> = new Set()): AxisScale[] {
  // horizontal axes carry their tick labels side by side: leave them more room
  const gap = layout.horizontal ? 90 : 55;
  return layout.slots.map((s) => new AxisScale(table.byName.get(s.name)!, layout.top, layout.bottom, flipped.has(s.name), gap));
}

/** Opacity of one line, from the number of rows drawn: dense tables get fainter lines. */
export function autoAlpha(n: number): number {
  return Math.min(0.85, Math.max(0.02, 8 / Math.sqrt(Math.max(1, n))));
}

/**
 * Per axis, two lookup tables over every wire code: a row's y is `base[code] + spread[row] *
 * height[code]`. Numeric axes have height 0; category bands spread their rows over the band;
 * the missing code maps to the lane.
 */
export function rowPlacement(scales: AxisScale[], layout: Layout): { base: Float32Array; height: Float32Array }[] {
  return scales.map((sc) => {
    const base = new Float32Array(CODE_COUNT);
    const height = new Float32Array(CODE_COUNT);
    if (sc.categorical) {
      sc.bands.forEach((b, c) => {
        const padding = Math.min(2, (b.y1 - b.y0) / 4);
        base[c] = b.y0 + padding;
        height[c] = Math.max(0, b.y1 - b.y0 - 2 * padding);
      });
    } else {
      // codePixel is linear in the code: the same formula inline (no call per code)
      const p0 = sc.codePixel(0);
      const span = sc.codePixel(CODE_MAX) - p0;
      for (let c = 0; c < CODE_MISSING; c++) base[c] = p0 + (c / CODE_MAX) * span;
    }
    base[CODE_MISSING] = layout.laneY;
    return { base, height };
  });
}

function fitText(ctx: CanvasRenderingContext2D, text: string, max: number): string {
  if (ctx.measureText(text).width <= max) return text;
  let s = text;
  while (s.length > 1 && ctx.measureText(s + "…").width > max) s = s.slice(0, -1);
  return s + "…";
}

type Side = "before" | "after";

/**
 * Align text that sits beside an axis: "before" = left of a vertical axis / above a horizontal one,
 * "after" = right of it / below it. Positions are logical; see Layout.horizontal.
 */
function beside(ctx: CanvasRenderingContext2D, layout: Layout, side: Side) {
  if (layout.horizontal) {
    ctx.textAlign = "center";
    ctx.textBaseline = side === "before" ? "bottom" : "top";
  } else {
    ctx.textAlign = side === "before" ? "right" : "left";
    ctx.textBaseline = "middle";
  }
}

/**
 * In horizontal orientation the overlay context draws shapes transposed; text must stay upright, so
 * fillText/strokeText are redirected to draw at the transposed point without the transform.
 * Returns a function that undoes the redirection.
 */
export function uprightText(ctx: CanvasRenderingContext2D, dpr: number): () => void {
  const fill = ctx.fillText;
  const stroke = ctx.strokeText;
  const redirect = (draw: typeof fill) =>
    function (this: CanvasRenderingContext2D, text: string, x: number, y: number, maxWidth?: number) {
      ctx.save();
      ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
      if (maxWidth === undefined) draw.call(ctx, text, y, x);
      else draw.call(ctx, text, y, x, maxWidth);
      ctx.restore();
    };
  ctx.fillText = redirect(fill);
  ctx.strokeText = redirect(stroke);
  return () => {
    delete (ctx as any).fillText;
    delete (ctx as any).strokeText;
  };
}

/** Clear `canvas` and draw into it in logical coordinates at a pixel ratio (transposed when horizontal, text upright). */
export function drawLogical(canvas: HTMLCanvasElement, dpr: number, horizontal: boolean, draw: (ctx: CanvasRenderingContext2D) => void) {
  const ctx = canvas.getContext("2d")!;
  ctx.setTransform(1, 0, 0, 1, 0, 0);
  ctx.clearRect(0, 0, canvas.width, canvas.height);
  let restore = () => {};
  if (horizontal) {
    ctx.setTransform(0, dpr, dpr, 0, 0, 0);
    restore = uprightText(ctx, dpr);
  } else ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
  draw(ctx);
  restore();
}

/** Text with a halo in the background colour, so it stays legible over lines. */
function label(ctx: CanvasRenderingContext2D, text: string, x: number, y: number, theme: Theme, maxWidth?: number) {
  // a text wider than maxWidth is drawn condensed to fit (numbers are never cut)
  const fit = maxWidth !== undefined && ctx.measureText(text).width > maxWidth ? [Math.max(8, maxWidth)] : [];
  ctx.save();
  ctx.lineWidth = 3;
  ctx.lineJoin = "round";
  ctx.strokeStyle = theme.bg;
  ctx.globalAlpha = 0.85;
  ctx.strokeText(text, x, y, ...fit);
  ctx.restore();
  ctx.fillText(text, x, y, ...fit);
}

/** Axis name in at most two lines (split at the "_" or space nearest the middle), then truncated. */
function header(ctx: CanvasRenderingContext2D, name: string, x: number, max: number, theme: Theme, layout: Layout) {
  if (layout.horizontal) {
    // one line, left of the axis's start
    ctx.textAlign = "left";
    ctx.textBaseline = "bottom";
    for (const size of [12, 11, 10]) {
      ctx.font = `600 ${size}px ${theme.font}`;
      if (ctx.measureText(name).width <= layout.top - 14 || size === 10) break;
    }
    ctx.fillText(fitText(ctx, name, layout.top - 14), x + 1, 6);
    return;
  }
  for (const size of [12, 11, 10]) {
    ctx.font = `600 ${size}px ${theme.font}`;
    if (ctx.measureText(name).width <= max) {
      ctx.fillText(name, x, 14);
      return;
    }
  }
  let cut = -1;
  for (let i = 1; i < name.length - 1; i++) {
    if ((name[i] === "_" || name[i] === " ") && (cut < 0 || Math.abs(i - name.length / 2) < Math.abs(cut - name.length / 2))) cut = i;
  }
  if (cut > 0) {
    ctx.fillText(fitText(ctx, name.slice(0, cut + (name[cut] === "_" ? 1 : 0)), max), x, 8);
    ctx.fillText(fitText(ctx, name.slice(cut + 1), max), x, 20);
    return;
  }
  ctx.fillText(fitText(ctx, name, max), x, 14);
}

/** Thin bars on the right of an axis: all rows (light) and selected rows (line colour). */
function drawHistogram(
  ctx: CanvasRenderingContext2D,
  sc: AxisScale,
  x: number,
  layout: Layout,
  all: Uint32Array,
  selected: Uint32Array,
  theme: Theme,
) {
  let peak = 0;
  for (const v of all) peak = Math.max(peak, v);
  if (!peak) return;
  const width = 18;
  const bins = all.length;
  const h = (layout.bottom - layout.top) / bins;
  ctx.save();
  for (let b = 0; b < bins; b++) {
    if (!all[b]) continue;
    // bin b covers codes [b, b+1) << HIST_SHIFT: its pixel span on this (maybe flipped) axis
    const y0 = sc.codePixel(Math.min(CODE_MAX, b << HIST_SHIFT));
    const y1 = sc.codePixel(Math.min(CODE_MAX, (b + 1) << HIST_SHIFT));
    const top = Math.min(y0, y1);
    const hh = Math.max(1, Math.abs(y1 - y0) - 0.5 || h);
    ctx.globalAlpha = 0.35;
    ctx.fillStyle = theme.muted;
    ctx.fillRect(x + 2, top, (width * all[b]) / peak, hh);
    if (selected[b]) {
      ctx.globalAlpha = 0.8;
      ctx.fillStyle = theme.line;
      ctx.fillRect(x + 2, top, (width * selected[b]) / peak, hh);
    }
  }
  ctx.restore();
}

/** Okabe–Ito vermillion: negative associations between neighbours */
const NEGATIVE = "#D55E00";

const KIND_MARK: Record<string, string> = {
  number: "num",
  integer: "int",
  category: "cat",
  boolean: "y/n",
  datetime: "date",
  timedelta: "dur",
};

/** Smallest distance (CSS px) between the centres of two category labels on one axis. */
const LABEL_PX = 12;

/**
 * A category axis: a bar per band on the axis (picked ones wide and tinted), its label on the left.
 * Labels drop where they would collide; the picked ones are always labelled, then the largest bands.
 */
function drawBands(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, s: AxisSel | undefined, x: number, i: number, gap: number, theme: Theme) {
  beside(ctx, layout, "before");
  const centres = sc.bands.map((b) => (b.y0 + b.y1) / 2);
  const counts = sc.axis.counts ?? [];
  const labelled = new Set(
    thinLabels(centres, layout.horizontal ? 9 : LABEL_PX, (c) => !!s?.bands.includes(c), (c) => counts[c] ?? sc.axis.rest?.rows ?? 0),
  );
  sc.bands.forEach((b, code) => {
    const picked = s?.bands.includes(code);
    ctx.fillStyle = picked ? theme.band : theme.fg;
    ctx.globalAlpha = picked ? 1 : 0.16;
    ctx.fillRect(x - (picked ? 8 : 3), b.y0, picked ? 16 : 6, b.y1 - b.y0);
    if (picked) {
      ctx.strokeStyle = theme.bandEdge;
      ctx.strokeRect(x - 8, b.y0, 16, b.y1 - b.y0);
    }
    ctx.globalAlpha = 1;
    if (labelled.has(code)) {
      ctx.fillStyle = picked ? theme.fg : theme.muted;
      ctx.font = `${picked ? "600 " : ""}10px ${theme.font}`;
      // clear of the neighbour on the left and its histogram
      const room = layout.horizontal ? b.y1 - b.y0 + 40 : i === 0 ? x - 10 : Math.max(30, Math.min(gap - 30, gap * 0.55));
      label(ctx, fitText(ctx, sc.bandLabel(code), room), x - 7, (b.y0 + b.y1) / 2, theme);
    }
  });
}

/** A numeric axis: the line, its ticks, and the counts of ±inf pinned to its ends. */
function drawScale(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, x: number, room: number, theme: Theme) {
  ctx.globalAlpha = 0.9;
  ctx.beginPath();
  ctx.moveTo(x, layout.top);
  ctx.lineTo(x, layout.bottom);
  ctx.stroke();
  beside(ctx, layout, "before");
  const ticks = sc.ticks();
  // labels too wide for the room: a size smaller first, then drawn condensed (label's maxWidth)
  if (!layout.horizontal && ticks.labels.some((l) => ctx.measureText(l).width > room)) ctx.font = `9px ${theme.font}`;
  ticks.values.forEach((v, t) => {
    const y = Math.round(sc.toPixel(v)) + 0.5;
    ctx.beginPath();
    ctx.moveTo(x - 4, y);
    ctx.lineTo(x, y);
    ctx.stroke();
    // the label at the top end hangs below it, clear of the readouts in the header band
    const hang = !layout.horizontal && y < layout.top + 6;
    if (hang) ctx.textBaseline = "top";
    label(ctx, ticks.labels[t], x - 6, hang ? Math.max(y, layout.top) - 2 : y, theme, layout.horizontal ? undefined : room);
    if (hang) ctx.textBaseline = "middle";
  });
}

/** ±inf pinned to the ends of a numeric axis, with their counts. */
function drawInfinities(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, x: number, theme: Theme) {
  const [neg, pos] = sc.axis.inf;
  beside(ctx, layout, "after");
  if (pos) label(ctx, `+∞ ${pos}`, x + 6, layout.top - 6, theme);
  if (neg) label(ctx, `−∞ ${neg}`, x + 6, layout.bottom + 8, theme);
}

/**
 * A range on a whole-number axis with no whole value inside (e.g. 0.3–0.7), or on an axis whose
 * distinct values are known with none of them inside.
 */
export function holdsNoValue(sc: AxisScale, lo: number, hi: number): boolean {
  const a = sc.axis;
  if (a.values && a.values.length) return !a.values.some((v) => v >= lo && v <= hi);
  return a.kind === "integer" && Math.ceil(lo - 1e-9) > Math.floor(hi + 1e-9);
}

/** The ranges picked on a numeric axis: a tinted band each, with its end values beside it. */
function drawRanges(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, s: AxisSel | undefined, x: number, theme: Theme) {
  ctx.globalAlpha = 1;
  for (const [lo, hi] of s?.spans ?? []) {
    const yHi = sc.toPixel(hi);
    const yLo = sc.toPixel(lo);
    const yTop = Math.max(layout.top - 2, Math.min(yHi, yLo));
    const yBot = Math.min(layout.bottom + 2, Math.max(yHi, yLo));
    ctx.fillStyle = theme.band;
    ctx.fillRect(x - 8, yTop, 16, Math.max(2, yBot - yTop));
    ctx.strokeStyle = theme.bandEdge;
    ctx.strokeRect(x - 8, yTop, 16, Math.max(2, yBot - yTop));
    ctx.fillStyle = theme.fg;
    ctx.font = `600 10px ${theme.font}`;
    let hiText = hi === Infinity ? "open" : sc.format(hi);
    let loText = lo === -Infinity ? "open" : sc.format(lo);
    if (holdsNoValue(sc, lo, hi)) {
      // e.g. between 0 and 1 on a 0/1 axis: say so instead of printing two ends that round alike
      hiText = "no values";
      loText = "";
    }
    // end values on the right of the axis, or on the left where the chart ends
    const wide = Math.max(ctx.measureText(hiText).width, ctx.measureText(loText).width);
    const right = layout.horizontal || x + 11 + wide <= layout.width;
    beside(ctx, layout, right ? "after" : "before");
    const tx = right ? x + 11 : x - 11;
    label(ctx, sc.flipped ? loText : hiText, tx, yTop - 1, theme);
    label(ctx, sc.flipped ? hiText : loText, tx, yBot + 1, theme);
  }
}

/** The header: the axis name, and a small mark of its kind (with ↓ when flipped). */
function drawHeader(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, name: string, x: number, gap: number, theme: Theme) {
  ctx.globalAlpha = 1;
  ctx.textAlign = "center";
  ctx.textBaseline = "middle";
  ctx.fillStyle = theme.fg;
  header(ctx, name, x, Math.max(30, gap - 6), theme, layout);
  ctx.font = `9px ${theme.font}`;
  ctx.fillStyle = theme.muted;
  const kind = sc.axis.kind;
  const mark = (own(KIND_MARK, kind) ?? kind) + (sc.flipped !== layout.horizontal ? " ↓" : "");
  if (layout.horizontal) {
    ctx.textAlign = "left";
    ctx.textBaseline = "top";
    ctx.fillText(mark, x + 2, 6);
  } else ctx.fillText(mark, x, 33);
}

/** The missing-values lane: a box below the axis, filled when picked, with the count of missing values. */
function drawLane(ctx: CanvasRenderingContext2D, layout: Layout, sc: AxisScale, s: AxisSel | undefined, x: number, theme: Theme) {
  const missing = sc.axis.missing;
  const lanePicked = !!s?.lane;
  if (!missing && !lanePicked) return; // no missing values: no box (and nothing to click there)
  ctx.globalAlpha = missing || lanePicked ? 0.95 : 0.3;
  if (lanePicked) {
    ctx.fillStyle = theme.band;
    ctx.fillRect(x - 8, layout.laneY - layout.laneHalf, 16, 2 * layout.laneHalf);
  }
  ctx.strokeStyle = lanePicked ? theme.bandEdge : theme.muted;
  ctx.setLineDash(lanePicked ? [] : [2, 2]);
  ctx.strokeRect(x - 7, layout.laneY - layout.laneHalf, 14, 2 * layout.laneHalf);
  ctx.setLineDash([]);
  if (missing) {
    beside(ctx, layout, "after");
    ctx.fillStyle = theme.muted;
    ctx.font = `10px ${theme.font}`;
    ctx.fillText(`∅ ${formatValue(missing, 1)}`, x + 10, layout.laneY);
  }
  ctx.globalAlpha = 1;
}

/** Rank association between neighbours, midway between their headers. */
function drawReadouts(ctx: CanvasRenderingContext2D, layout: Layout, readouts: { value: number }[], theme: Theme) {
  ctx.font = `10px ${theme.font}`;
  ctx.textAlign = layout.horizontal ? "left" : "center";
  ctx.textBaseline = "middle";
  readouts.forEach((r, i) => {
    if (i + 1 >= layout.slots.length || !isFinite(r.value)) return;
    const x = (layout.slots[i].x + layout.slots[i + 1].x) / 2;
    ctx.fillStyle = r.value >= 0 ? theme.line : NEGATIVE;
    ctx.fillText(`ρ ${r.value >= 0 ? "+" : "−"}${Math.abs(r.value).toFixed(2)}`, x, layout.horizontal ? 60 : 42);
  });
}

/** Axes, ticks, headers, missing lanes, the selection, histograms and readouts. */
export function drawOverlay(
  ctx: CanvasRenderingContext2D,
  layout: Layout,
  scales: AxisScale[],
  sel: Sel,
  theme: Theme,
  readouts: { value: number }[] = [],
  hist: { histSelected: Uint32Array[]; histAll: Uint32Array[] } | null = null,
): void {
  const k = layout.slots.length;
  const gap = k > 1 ? layout.slots[1].x - layout.slots[0].x : layout.width;
  ctx.textBaseline = "middle";
  layout.slots.forEach((slot, i) => {
    const sc = scales[i];
    const s = own(sel, slot.name);
    const x = Math.round(slot.x) + 0.5;
    ctx.strokeStyle = theme.fg;
    ctx.fillStyle = theme.muted;
    ctx.lineWidth = 1;
    ctx.font = `10px ${theme.font}`;
    if (sc.categorical) drawBands(ctx, layout, sc, s, x, i, gap, theme);
    else {
      // tick labels stay clear of the neighbour on the left and its histogram
      drawScale(ctx, layout, sc, x, i === 0 ? x - 8 : gap - 30, theme);
      if (hist && hist.histAll[i]) drawHistogram(ctx, sc, x, layout, hist.histAll[i], hist.histSelected[i], theme);
      drawInfinities(ctx, layout, sc, x, theme);
      drawRanges(ctx, layout, sc, s, x, theme);
    }
    drawHeader(ctx, layout, sc, slot.name, x, gap, theme);
    drawLane(ctx, layout, sc, s, x, theme);
  });
  drawReadouts(ctx, layout, readouts, theme);
}
