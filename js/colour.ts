// Colours: viridis for continuous values, Okabe–Ito for categories, and the per-row colour table.
//
// viridis: van der Walt & Smith's perceptually uniform, colour-blind-safe map (public domain, CC0),
// here as 65 evenly spaced stops, interpolated linearly. Okabe & Ito (2002) "Color Universal Design"
// palette for categories (black left out, since it vanishes on dark themes).

import { CODE_MAX, CODE_MISSING, codeToValue, isCategorical, type AxisData } from "./data";

const VIRIDIS_STOPS = [
  "#440154", "#46065a", "#470d60", "#471365", "#48186a", "#481d6f", "#482374", "#482878", "#472d7b",
  "#46327e", "#453681", "#443b84", "#424086", "#404587", "#3f4989", "#3d4e8a", "#3b528b", "#39568c",
  "#375a8d", "#355e8d", "#33638d", "#31668e", "#2f6a8e", "#2e6e8e", "#2c728e", "#2b768e", "#297a8e",
  "#287d8e", "#26818e", "#25858e", "#23898e", "#228c8d", "#21908c", "#20948c", "#1f988b", "#1e9b8a",
  "#1f9f88", "#20a387", "#21a685", "#24aa83", "#28ae80", "#2cb17e", "#31b57b", "#37b877", "#3ebc74",
  "#45bf70", "#4cc26c", "#54c667", "#5dc963", "#65cc5d", "#6ece58", "#78d152", "#82d34c", "#8cd646",
  "#96d83f", "#a0da39", "#abdc32", "#b5de2b", "#c0df24", "#cbe11f", "#d5e21a", "#e0e318", "#eae51a",
  "#f4e61e", "#fde725",
];

/** Okabe–Ito: orange, sky blue, bluish green, yellow, blue, vermillion, reddish purple */
export const OKABE_ITO = ["#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"];

export type RGB = [number, number, number];

export function hexToRgb(hex: string): RGB {
  const v = parseInt(hex.slice(1), 16);
  return [((v >> 16) & 255) / 255, ((v >> 8) & 255) / 255, (v & 255) / 255];
}

/** Any CSS colour as r, g, b in [0, 1] (through a canvas's colour parser; grey if unreadable). */
export function cssToRgb(css: string): RGB {
  if (/^#[0-9a-f]{6}$/i.test(css)) return hexToRgb(css);
  const m = /rgba?\(\s*([\d.]+)[,\s]+([\d.]+)[,\s]+([\d.]+)/i.exec(css);
  if (m) return [Number(m[1]) / 255, Number(m[2]) / 255, Number(m[3]) / 255];
  if (typeof document !== "undefined") {
    const ctx = document.createElement("canvas").getContext("2d");
    if (ctx) {
      ctx.fillStyle = "#808080";
      ctx.fillStyle = css;
      const out = String(ctx.fillStyle);
      if (out.startsWith("#")) return hexToRgb(out);
      return cssToRgb(out);
    }
  }
  return [0.5, 0.5, 0.5];
}

/** Relative luminance (sRGB approximation), to tell a dark background from a light one. */
export const luminance = ([r, g, b]: RGB) => 0.2126 * r + 0.7152 * g + 0.0722 * b;

const VIRIDIS = VIRIDIS_STOPS.map(hexToRgb);

/** viridis at t in [0, 1] (clamped), as r, g, b in [0, 1]. */
export function viridis(t: number): RGB {
  const x = Math.min(1, Math.max(0, isFinite(t) ? t : 0)) * (VIRIDIS.length - 1);
  const i = Math.min(VIRIDIS.length - 2, Math.floor(x));
  const f = x - i;
  const a = VIRIDIS[i];
  const b = VIRIDIS[i + 1];
  return [a[0] + f * (b[0] - a[0]), a[1] + f * (b[1] - a[1]), a[2] + f * (b[2] - a[2])];
}

export const toCss = ([r, g, b]: RGB) => `rgb(${Math.round(r * 255)}, ${Math.round(g * 255)}, ${Math.round(b * 255)})`;

/** Number of colour levels a continuous colour column is quantised into when drawing. */
export const LEVELS = 32;

export interface Colouring {
  /** colour group per row (0..groups-1), or null when every row has the same colour */
  group: Uint8Array | null;
  /** r, g, b per group */
  palette: RGB[];
  /** what the legend shows */
  legend: { kind: "none" } | { kind: "categories"; labels: string[]; colours: RGB[] } | { kind: "scale"; axis: AxisData };
}

const MISSING_GREY: RGB = [0.55, 0.55, 0.55];

/**
 * Colour groups for every row from a colour column: categories get Okabe–Ito colours (the eighth and
 * later share one grey), continuous values viridis in LEVELS steps; missing values grey.
 */
export function colouring(axis: AxisData | undefined, single: RGB): Colouring {
  if (!axis) return { group: null, palette: [single], legend: { kind: "none" } };
  const n = axis.codes.length;
  const group = new Uint8Array(n);
  const codes = axis.codes;
  if (isCategorical(axis)) {
    const labels = axis.labels ?? [];
    const shown = Math.min(labels.length, OKABE_ITO.length);
    const palette = OKABE_ITO.slice(0, shown).map(hexToRgb);
    const rest = palette.length;
    palette.push([0.6, 0.6, 0.6]); // every further category
    const missing = palette.length;
    palette.push(MISSING_GREY);
    for (let i = 0; i < n; i++) {
      const c = codes[i];
      group[i] = c === CODE_MISSING ? missing : c < shown ? c : rest;
    }
    const legendLabels = labels.slice(0, shown).concat(labels.length > shown || axis.rest ? ["other"] : []);
    return { group, palette, legend: { kind: "categories", labels: legendLabels, colours: palette.slice(0, legendLabels.length) } };
  }
  if (axis.kind === "integer" && axis.values && axis.values.length >= 2 && axis.values.length <= DISCRETE_COLOURS) {
    return discreteColouring(axis, axis.values);
  }
  const palette: RGB[] = [];
  for (let l = 0; l < LEVELS; l++) palette.push(viridis(l / (LEVELS - 1)));
  const missing = palette.length;
  palette.push(MISSING_GREY);
  for (let i = 0; i < n; i++) {
    const c = codes[i];
    group[i] = c === CODE_MISSING ? missing : Math.min(LEVELS - 1, Math.floor((c / (CODE_MAX + 1)) * LEVELS));
  }
  return { group, palette, legend: { kind: "scale", axis } };
}

/** Whole-number colour columns with at most this many values get one swatch per value (class labels). */
export const DISCRETE_COLOURS = 12;

/**
 * One colour per value of a whole-number column with few values (0/1/2 targets, 1..9 codes):
 * Okabe–Ito up to its seven colours, otherwise viridis at evenly spaced steps; missing values grey.
 */
function discreteColouring(axis: AxisData, values: number[]): Colouring {
  const k = values.length;
  const palette: RGB[] = k <= OKABE_ITO.length ? OKABE_ITO.slice(0, k).map(hexToRgb) : values.map((_, i) => viridis(i / (k - 1)));
  const missing = palette.length;
  palette.push(MISSING_GREY);
  // each code stands for one of the values: the nearest one (codes are quantised over the axis)
  const lut = new Map<number, number>();
  const nearest = (c: number) => {
    const v = codeToValue(axis, c);
    let best = 0;
    for (let j = 1; j < k; j++) if (Math.abs(values[j] - v) < Math.abs(values[best] - v)) best = j;
    return best;
  };
  const codes = axis.codes;
  const group = new Uint8Array(codes.length);
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i];
    if (c === CODE_MISSING) {
      group[i] = missing;
      continue;
    }
    let g = lut.get(c);
    if (g === undefined) lut.set(c, (g = nearest(c)));
    group[i] = g;
  }
  const labels = values.map((v) => String(v));
  return { group, palette, legend: { kind: "categories", labels, colours: palette.slice(0, k) } };
}
