// Canvas painting: the lines layer and the overlay (axes, ticks, headers, ranges).

import { CODE_MISSING, type Table } from "./data";
import type { Layout } from "./layout";
import { AxisScale, formatValue } from "./scales";
import type { Ranges } from "./selection";

export interface Theme {
  fg: string;
  muted: string;
  bg: string;
  line: string;
  faded: string;
  band: string;
  bandEdge: string;
  font: string;
}

/** Colours from the host's CSS variables (JupyterLab's), with fallbacks for other hosts. */
export function readTheme(el: Element): Theme {
  const css = getComputedStyle(el);
  const v = (name: string, fallback: string) => css.getPropertyValue(name).trim() || fallback;
  return {
    fg: v("--jp-ui-font-color1", "#1f1f1f"),
    muted: v("--jp-ui-font-color2", "#6b6b6b"),
    bg: v("--jp-layout-color0", "#ffffff"),
    line: "#0072B2", // Okabe–Ito blue
    faded: v("--jp-ui-font-color3", "#a0a0a0"),
    band: "rgba(230, 159, 0, 0.22)", // Okabe–Ito orange, translucent
    bandEdge: "#C98A00",
    font: v("--jp-ui-font-family", "system-ui, -apple-system, 'Segoe UI', sans-serif"),
  };
}

export function scalesFor(table: Table, layout: Layout): AxisScale[] {
  return layout.slots.map((s) => new AxisScale(table.byName.get(s.name)!, layout.top, layout.bottom));
}

/** Opacity of one line, from the number of rows: dense tables get fainter lines. */
export function autoAlpha(n: number): number {
  return Math.min(0.85, Math.max(0.02, 14 / Math.sqrt(Math.max(1, n))));
}

/**
 * Paint one polyline per row: rows outside the mask first in a faded grey, selected rows on top.
 * `mask` null means every row is selected.
 */
export function drawLines(
  ctx: CanvasRenderingContext2D,
  table: Table,
  layout: Layout,
  mask: Uint8Array | null,
  theme: Theme,
): void {
  ctx.clearRect(0, 0, layout.width, layout.height);
  const k = layout.slots.length;
  if (k === 0 || table.n === 0) return;
  const scales = scalesFor(table, layout);
  const codes = layout.slots.map((s) => table.byName.get(s.name)!.codes);
  const xs = layout.slots.map((s) => s.x);
  // pixel of each code per axis, precomputed once (65536 entries; missing -> lane)
  const lut = scales.map((sc) => {
    const t = new Float32Array(65536);
    for (let c = 0; c < 65535; c++) t[c] = sc.codePixel(c);
    t[CODE_MISSING] = layout.laneY;
    return t;
  });
  let selected = table.n;
  if (mask) {
    selected = 0;
    for (let i = 0; i < table.n; i++) selected += mask[i];
  }
  const alpha = autoAlpha(table.n);
  const pass = (want: number, colour: string, a: number) => {
    ctx.strokeStyle = colour;
    ctx.globalAlpha = a;
    ctx.lineWidth = 1;
    let inPath = 0;
    ctx.beginPath();
    for (let i = 0; i < table.n; i++) {
      if ((mask ? mask[i] : 1) !== want) continue;
      ctx.moveTo(xs[0], lut[0][codes[0][i]]);
      for (let a2 = 1; a2 < k; a2++) ctx.lineTo(xs[a2], lut[a2][codes[a2][i]]);
      if (++inPath === 2000) {
        ctx.stroke();
        ctx.beginPath();
        inPath = 0;
      }
    }
    ctx.stroke();
  };
  if (mask) pass(0, theme.faded, Math.min(0.25, alpha * 0.35));
  pass(1, theme.line, autoAlpha(selected));
  ctx.globalAlpha = 1;
}

function fitText(ctx: CanvasRenderingContext2D, text: string, max: number): string {
  if (ctx.measureText(text).width <= max) return text;
  let s = text;
  while (s.length > 1 && ctx.measureText(s + "…").width > max) s = s.slice(0, -1);
  return s + "…";
}

/** Text with a halo in the background colour, so it stays legible over lines. */
function label(ctx: CanvasRenderingContext2D, text: string, x: number, y: number, theme: Theme) {
  ctx.save();
  ctx.lineWidth = 3;
  ctx.lineJoin = "round";
  ctx.strokeStyle = theme.bg;
  ctx.globalAlpha = 0.85;
  ctx.strokeText(text, x, y);
  ctx.restore();
  ctx.fillText(text, x, y);
}

/** Axis name in at most two lines (split at "_" or a space), shrinking the font before truncating. */
function header(ctx: CanvasRenderingContext2D, name: string, x: number, max: number, theme: Theme) {
  for (const size of [12, 11, 10]) {
    ctx.font = `600 ${size}px ${theme.font}`;
    if (ctx.measureText(name).width <= max) {
      ctx.fillText(name, x, 14);
      return;
    }
  }
  // split at the separator nearest the middle
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

const KIND_MARK: Record<string, string> = { number: "num", integer: "int" };

/** Axes, ticks, headers, missing lanes and range bands. */
export function drawOverlay(
  ctx: CanvasRenderingContext2D,
  table: Table,
  layout: Layout,
  ranges: Ranges,
  theme: Theme,
): void {
  ctx.clearRect(0, 0, layout.width, layout.height);
  const scales = scalesFor(table, layout);
  const k = layout.slots.length;
  const gap = k > 1 ? layout.slots[1].x - layout.slots[0].x : layout.width;
  ctx.textBaseline = "middle";
  layout.slots.forEach((slot, i) => {
    const sc = scales[i];
    const axis = sc.axis;
    const x = Math.round(slot.x) + 0.5;
    // axis line
    ctx.strokeStyle = theme.fg;
    ctx.globalAlpha = 0.9;
    ctx.lineWidth = 1;
    ctx.beginPath();
    ctx.moveTo(x, layout.top);
    ctx.lineTo(x, layout.bottom);
    ctx.stroke();
    // ticks, labelled on the left
    ctx.font = `10px ${theme.font}`;
    ctx.textAlign = "right";
    ctx.fillStyle = theme.muted;
    const ticks = sc.ticks();
    for (const v of ticks.values) {
      const y = Math.round(sc.toPixel(v)) + 0.5;
      ctx.beginPath();
      ctx.moveTo(x - 4, y);
      ctx.lineTo(x, y);
      ctx.stroke();
      label(ctx, formatValue(v, ticks.step), x - 6, y, theme);
    }
    // header: name, and a small marker of the kind
    ctx.globalAlpha = 1;
    ctx.textAlign = "center";
    ctx.fillStyle = theme.fg;
    header(ctx, slot.name, x, Math.max(30, gap - 6), theme);
    ctx.font = `9px ${theme.font}`;
    ctx.fillStyle = theme.muted;
    ctx.fillText(KIND_MARK[axis.kind] ?? axis.kind, x, 33);
    // missing-values lane
    ctx.strokeStyle = theme.muted;
    ctx.globalAlpha = axis.missing ? 0.9 : 0.3;
    ctx.setLineDash([2, 2]);
    ctx.strokeRect(x - 7, layout.laneY - layout.laneHalf, 14, 2 * layout.laneHalf);
    ctx.setLineDash([]);
    if (axis.missing) {
      ctx.textAlign = "left";
      ctx.fillText(`∅ ${axis.missing}`, x + 10, layout.laneY);
    }
    ctx.globalAlpha = 1;
    // range bands with their end values
    for (const [lo, hi] of ranges[slot.name] ?? []) {
      const y0 = sc.toPixel(hi);
      const y1 = sc.toPixel(lo);
      const top = Math.max(layout.top - 2, Math.min(y0, y1));
      const bot = Math.min(layout.bottom + 2, Math.max(y0, y1));
      ctx.fillStyle = theme.band;
      ctx.fillRect(x - 8, top, 16, Math.max(2, bot - top));
      ctx.strokeStyle = theme.bandEdge;
      ctx.strokeRect(x - 8, top, 16, Math.max(2, bot - top));
      ctx.fillStyle = theme.fg;
      ctx.font = `600 10px ${theme.font}`;
      ctx.textAlign = "left";
      const endStep = axis.kind === "integer" ? 1 : ticks.step / 10;
      label(ctx, formatValue(hi, endStep), x + 11, top - 1, theme);
      label(ctx, formatValue(lo, endStep), x + 11, bot + 1, theme);
    }
  });
}
