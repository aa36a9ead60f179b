// Hover and pin: which row's line passes nearest the pointer, that row drawn strong, and its values in a
// small box beside the pointer. Rows are found along the lines exactly as the rasteriser draws them:
// straight, curved (raster.ts curveYAtX) or bundled through a mid point per gap (linespass.ts).

import { codeToValue, CODE_MAX, CODE_MISSING, isCategorical, type Table } from "./data";
import type { Layout } from "./layout";
import { bundleSlot, BUNDLE_SLOTS } from "./linespass";
import { curveX, curveY, curveYAtX } from "./raster";
import { formatValue, type AxisScale } from "./scales";

/** Where every row's line runs (logical CSS pixels). */
export interface LineGeometry {
  table: Table;
  layout: Layout;
  /** per axis in drawing order: y of a code is base[code] + spread[row] * height[code] */
  place: { base: Float32Array; height: Float32Array }[];
  spread: Float32Array;
  curves: boolean;
  /** bundling of the last lines drawn: axis, strength, centre y (CSS px) per (gap, slot) */
  bundle: { axis: number; strength: number; centres: Float64Array } | null;
}

/** Largest distance (CSS px) from the pointer at which a line still counts as hovered. */
const NEAR_PX = 6;

/** y of one row at axis a (CSS px). */
function yAt(g: LineGeometry, a: number, row: number, codes: Uint16Array): number {
  const c = codes[row];
  return g.place[a].base[c] + g.spread[row] * g.place[a].height[c];
}

/** The gap (a, a+1) that contains x, or -1. */
function gapAt(layout: Layout, x: number): number {
  const slots = layout.slots;
  let a = -1;
  for (let i = 0; i + 1 < slots.length; i++) if (x >= slots[i].x && x <= slots[i + 1].x) a = i;
  return a;
}

/** The row whose line passes nearest to (x, y) between two axes, or -1. */
export function nearestRow(g: LineGeometry, x: number, y: number): number {
  const { layout, table } = g;
  const slots = layout.slots;
  const a = gapAt(layout, x);
  if (a < 0 || y < layout.top - 4 || y > layout.laneY + 8) return -1;
  const xa = slots[a].x;
  const xb = slots[a + 1].x;
  const ca = table.byName.get(slots[a].name)!.codes;
  const cb = table.byName.get(slots[a + 1].name)!.codes;
  const bundle = g.bundle;
  // the line between the axes: ya → yb along one curve, or ya → mid → yb along two when bundled
  const xm = (xa + xb) / 2;
  const firstHalf = x <= xm;
  const t = bundle ? (firstHalf ? (x - xa) / (xm - xa) : (x - xm) / (xb - xm)) : (x - xa) / (xb - xa);
  const f = bundle || g.curves ? curveYAtX(t) : t;
  const bcodes = bundle ? table.byName.get(slots[bundle.axis].name)!.codes : null;
  let best = -1;
  let bestD = NEAR_PX;
  for (let i = 0; i < table.n; i++) {
    const ya = yAt(g, a, i, ca);
    const yb = yAt(g, a + 1, i, cb);
    let from = ya;
    let to = yb;
    if (bundle) {
      const mid = (1 - bundle.strength) * ((ya + yb) / 2) + bundle.strength * bundle.centres[a * BUNDLE_SLOTS + bundleSlot(bcodes![i])];
      if (firstHalf) to = mid;
      else from = mid;
    }
    const d = Math.abs(from + f * (to - from) - y);
    if (d < bestD) {
      bestD = d;
      best = i;
    }
  }
  return best;
}

/** The path of one row's line, as the rasteriser draws it (curves flattened into short segments). */
export function rowPath(ctx: CanvasRenderingContext2D, g: LineGeometry, row: number): void {
  const { layout, table } = g;
  const slots = layout.slots;
  const ys = slots.map((s, a) => yAt(g, a, row, table.byName.get(s.name)!.codes));
  const bundle = g.bundle;
  const bcode = bundle ? table.byName.get(slots[bundle.axis].name)!.codes[row] : 0;
  const piece = (x0: number, y0: number, x1: number, y1: number) => {
    if (!(bundle || g.curves)) return ctx.lineTo(x1, y1);
    for (let s = 1; s <= 16; s++) ctx.lineTo(x0 + (x1 - x0) * curveX(s / 16), y0 + (y1 - y0) * curveY(s / 16));
  };
  ctx.moveTo(slots[0].x, ys[0]);
  for (let a = 0; a + 1 < slots.length; a++) {
    const [xa, xb, ya, yb] = [slots[a].x, slots[a + 1].x, ys[a], ys[a + 1]];
    if (bundle) {
      const xm = (xa + xb) / 2;
      const ym = (1 - bundle.strength) * ((ya + yb) / 2) + bundle.strength * bundle.centres[a * BUNDLE_SLOTS + bundleSlot(bcode)];
      piece(xa, ya, xm, ym);
      piece(xm, ym, xb, yb);
    } else piece(xa, ya, xb, yb);
  }
}

/** The hovered and the pinned row drawn as strong lines. */
export function drawRows(ctx: CanvasRenderingContext2D, g: LineGeometry, rows: number[], pinned: number, colours: { fg: string; pinned: string }) {
  for (const row of rows) {
    ctx.save();
    ctx.strokeStyle = row === pinned ? colours.pinned : colours.fg;
    ctx.lineWidth = 2;
    ctx.globalAlpha = 0.9;
    ctx.beginPath();
    rowPath(ctx, g, row);
    ctx.stroke();
    ctx.restore();
  }
}

/** One row's value on every axis shown, as text (name, value), in drawing order. */
export function rowValues(table: Table, layout: Layout, scales: AxisScale[], row: number): { name: string; value: string }[] {
  return layout.slots.map((s, i) => {
    const axis = table.byName.get(s.name)!;
    const c = axis.codes[row];
    let text: string;
    if (c === CODE_MISSING) text = "–";
    else if (isCategorical(axis)) text = axis.labels && c < axis.labels.length ? axis.labels[c] : "(other)";
    else {
      const v = codeToValue(axis, c);
      if (axis.kind === "number" && !axis.log) {
        // as many decimals as the quantisation step can tell apart
        const step = (axis.hi - axis.lo) / CODE_MAX;
        const decimals = step > 0 ? Math.min(6, Math.max(0, Math.floor(-Math.log10(step * 2)))) : 3;
        text = formatValue(Number(v.toFixed(decimals)));
      } else text = scales[i].format(v);
    }
    return { name: s.name, value: text };
  });
}

/** The text of the values box: the row number, then one line per axis. */
export function rowText(table: Table, layout: Layout, scales: AxisScale[], row: number, pinned: boolean): string {
  const lines = [`row ${row}${pinned ? " (pinned)" : ""}`];
  for (const e of rowValues(table, layout, scales, row)) lines.push(`${e.name}: ${e.value}`);
  return lines.join("\n");
}

/** Show the values box beside the pointer (page pixels), on the side with more room, inside the chart. */
export function placeTip(tip: HTMLElement, text: string | null, pointer: { x: number; y: number }, size: { w: number; h: number }) {
  if (text === null) {
    tip.style.display = "none";
    return;
  }
  tip.textContent = text;
  tip.style.display = "block";
  const box = { w: tip.offsetWidth, h: tip.offsetHeight };
  const left = pointer.x + 16 + box.w <= size.w ? pointer.x + 16 : Math.max(4, pointer.x - 16 - box.w);
  const top = Math.min(Math.max(4, pointer.y - box.h / 2), Math.max(4, size.h - box.h - 4));
  tip.style.left = `${left}px`;
  tip.style.top = `${top}px`;
}
