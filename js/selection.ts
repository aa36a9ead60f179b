// The page's view of a selection and its conversion to and from the `ranges` trait.
//
// Inside the page every axis's selection is an AxisSel in axis units (numbers; nanoseconds for
// datetime and timedelta axes; ±Infinity for an open end). The trait holds the kernel's form:
// [lo, hi] pairs (null = open end; ISO strings for datetimes; seconds for timedeltas), category labels,
// and null for the missing-values lane.

import { bandCount, CODE_MAX, CODE_MISSING, fraction, isCategorical, type AxisData, type Table } from "./data";
import { calendar } from "./scales";
import { CODE_COUNT } from "./wire";

export type Span = [number, number];

export interface AxisSel {
  spans: Span[];
  /** picked band codes on a category axis */
  bands: number[];
  /** the missing-values lane is picked */
  lane: boolean;
}

/**
 * Selections are keyed by axis name, and axis names come from the data: any name, `__proto__` and
 * `constructor` included. So these records have no prototype (see `record`) and are read with
 * `own` only.
 */
export type Sel = Record<string, AxisSel>;
export type TraitItem = [number | string | null, number | string | null] | string | null | { rest: true };
export type TraitRanges = Record<string, TraitItem[]>;

/** An empty record keyed by data (no prototype: no inherited keys, `__proto__` is a plain key). */
export const record = <T>(): Record<string, T> => Object.create(null);

/** The value under an own key of a record keyed by data, or undefined. */
export function own<T>(rec: Record<string, T> | null | undefined, key: string): T | undefined {
  return rec && Object.prototype.hasOwnProperty.call(rec, key) ? rec[key] : undefined;
}

export const emptyAxis = (): AxisSel => ({ spans: [], bands: [], lane: false });
export const isEmpty = (s: AxisSel | undefined) => !s || (!s.spans.length && !s.bands.length && !s.lane);

export function cloneSel(sel: Sel): Sel {
  const out: Sel = record();
  for (const [k, v] of Object.entries(sel)) out[k] = { spans: v.spans.map((s) => [s[0], s[1]] as Span), bands: [...v.bands], lane: v.lane };
  return out;
}

/** Sorted spans with overlaps merged, bands sorted and unique; empty axes dropped. */
export function tidy(sel: Sel): Sel {
  const out: Sel = record();
  for (const [axis, s] of Object.entries(sel)) {
    const sorted = s.spans.map(([a, b]) => (a <= b ? [a, b] : [b, a]) as Span).sort((p, q) => p[0] - q[0]);
    const merged: Span[] = [];
    for (const sp of sorted) {
      const last = merged[merged.length - 1];
      if (last && sp[0] <= last[1]) last[1] = Math.max(last[1], sp[1]);
      else merged.push([sp[0], sp[1]]);
    }
    const t = { spans: merged, bands: [...new Set(s.bands)].sort((a, b) => a - b), lane: s.lane };
    if (!isEmpty(t)) out[axis] = t;
  }
  return out;
}

/** Canonical text of a selection, for equality tests. */
export function selKey(sel: Sel): string {
  const t = tidy(sel);
  return JSON.stringify(Object.keys(t).sort().map((k) => [k, t[k].spans, t[k].bands, t[k].lane]));
}

// -- trait conversion ------------------------------------------------------------------------------
function parseTime(iso: string): number {
  // keep at most milliseconds; a string without an offset is wall-clock time of a naive column (UTC)
  const m = /^(.*T\d\d:\d\d(?::\d\d)?)(\.\d+)?(Z|[+-]\d\d:?\d\d)?$/.exec(iso);
  const text = m ? m[1] + (m[2] ? m[2].slice(0, 4) : "") + (m[3] ?? "Z") : iso;
  return Date.parse(text) * 1e6;
}

function endToUnits(a: AxisData, v: number | string | null, side: 0 | 1): number {
  if (v === null || v === undefined) return side === 0 ? -Infinity : Infinity;
  if (a.kind === "datetime") return parseTime(String(v));
  if (a.kind === "timedelta") return Number(v) * 1e9;
  return Number(v);
}

const pad = (v: number, width = 2) => String(v).padStart(width, "0");

/**
 * A time (ms since the epoch) in the kernel's normal form, pandas' `Timestamp.isoformat()`: the wall
 * clock (in the axis's time zone, with its UTC offset, on a tz-aware axis), and microseconds only when
 * there is a fraction of a second.
 */
export function isoTime(ms: number, tz: string | null): string {
  const whole = Math.floor(ms / 1000) * 1000;
  const c = calendar(whole, tz);
  let text = `${pad(c.Y, 4)}-${pad(c.M)}-${pad(c.D)}T${pad(c.h)}:${pad(c.m)}:${pad(c.s)}`;
  if (ms !== whole) text += `.${pad(Math.round((ms - whole) * 1000), 6)}`;
  if (tz) {
    const offset = Math.round((Date.UTC(c.Y, c.M - 1, c.D, c.h, c.m, c.s) - whole) / 60000);
    const size = Math.abs(offset);
    text += `${offset < 0 ? "-" : "+"}${pad(Math.floor(size / 60))}:${pad(size % 60)}`;
  }
  return text;
}

/** A range end in the trait's form; integer axes round inward (lo up, hi down) to whole values. */
function unitsToEnd(a: AxisData, v: number, side: 0 | 1): number | string | null {
  if (!isFinite(v)) return null;
  if (a.kind === "datetime") return isoTime(Math.round(v / 1e6), a.tz);
  if (a.kind === "timedelta") return Math.round(v / 1e6) / 1e3;
  if (a.kind === "integer") return side === 0 ? Math.ceil(v - 1e-9) : Math.floor(v + 1e-9);
  return v;
}

export function fromTrait(table: Table, raw: TraitRanges | null | undefined): Sel {
  const out: Sel = record();
  for (const [name, items] of Object.entries(raw ?? {})) {
    const a = table.byName.get(name);
    if (!a || !Array.isArray(items)) continue;
    const s = emptyAxis();
    for (const item of items) {
      if (item === null) s.lane = true;
      else if (typeof item === "string") {
        const code = a.labels?.indexOf(item) ?? -1;
        if (code >= 0) s.bands.push(code);
        else if (a.rest) s.bands.push(a.labels?.length ?? 0); // a rarer label: it lives in the shared band
      } else if (!Array.isArray(item) && typeof item === "object") {
        if (a.rest) s.bands.push(a.labels?.length ?? 0);
      } else if (Array.isArray(item)) s.spans.push([endToUnits(a, item[0], 0), endToUnits(a, item[1], 1)]);
    }
    out[name] = s;
  }
  return tidy(out);
}

/**
 * The trait form of a selection. Axes whose selection equals the one read from `previous` keep the
 * previous trait items verbatim, and so do unchanged ranges on an edited axis: values the page cannot
 * represent exactly (nanoseconds) survive, and an end the kernel set is never reinterpreted.
 */
export function toTrait(table: Table, sel: Sel, previous: TraitRanges | null | undefined): TraitRanges {
  const out: TraitRanges = record();
  const prevSel = fromTrait(table, previous);
  for (const [name, s] of Object.entries(tidy(sel))) {
    const a = table.byName.get(name);
    if (!a) continue;
    const before = own(previous, name);
    const beforeSel = own(prevSel, name);
    if (before && beforeSel && selKey({ x: beforeSel }) === selKey({ x: s })) {
      out[name] = before;
      continue;
    }
    const items: TraitItem[] = [];
    // ranges kept as they were (the user changed another one on this axis) keep their previous text
    const kept = new Map<string, TraitItem>();
    for (const item of before ?? []) {
      if (Array.isArray(item)) kept.set(`${endToUnits(a, item[0], 0)} ${endToUnits(a, item[1], 1)}`, item);
    }
    for (const [lo, hi] of s.spans) {
      const same = kept.get(`${lo} ${hi}`);
      if (same) {
        items.push(same);
        continue;
      }
      // an end dragged onto the end of an axis that holds ±inf values takes them in (open end)
      const l = lo <= a.lo && a.inf[0] > 0 ? -Infinity : lo;
      const h = hi >= a.hi && a.inf[1] > 0 ? Infinity : hi;
      let pair: [number | string | null, number | string | null] = [unitsToEnd(a, l, 0), unitsToEnd(a, h, 1)];
      // a range between two whole values of an integer axis holds none: keep it as drawn
      if (typeof pair[0] === "number" && typeof pair[1] === "number" && pair[0] > pair[1]) pair = [l, h];
      items.push(pair);
    }
    for (const b of s.bands) {
      if (a.labels && b < a.labels.length) items.push(a.labels[b]);
      else if (a.rest && b === (a.labels?.length ?? 0)) items.push({ rest: true }); // the kernel names them
    }
    if (s.lane) items.push(null);
    if (items.length) out[name] = items;
  }
  return out;
}

// -- preview ---------------------------------------------------------------------------------------
/**
 * Preview mask from the wire codes. Range ends are rounded to codes (monotone), so every row inside a
 * range is in the preview; it can only err by taking in values within half a quantisation step outside
 * an end. The kernel's exact mask replaces it once the kernel has answered.
 */
export function previewMask(table: Table, sel: Sel): { mask: Uint8Array; count: number } {
  const n = table.n;
  const mask = new Uint8Array(n).fill(1);
  for (const [name, s] of Object.entries(sel)) {
    const axis = table.byName.get(name);
    if (!axis || isEmpty(s)) continue;
    const lut = pickedCodes(axis, s);
    const codes = axis.codes;
    for (let i = 0; i < n; i++) mask[i] &= lut[codes[i]];
  }
  let count = 0;
  for (let i = 0; i < n; i++) count += mask[i];
  return { mask, count };
}

/** A lookup table over every code of an axis: 1 where the code is picked by the axis's selection. */
export function pickedCodes(axis: AxisData, s: AxisSel): Uint8Array {
  const lut = new Uint8Array(CODE_COUNT);
  if (isCategorical(axis)) {
    const k = bandCount(axis);
    for (const b of s.bands) if (b < k) lut[b] = 1;
  } else {
    for (const [lo, hi] of s.spans) {
      const flo = lo === -Infinity ? 0 : fraction(axis, lo);
      const fhi = hi === Infinity ? 1 : fraction(axis, hi);
      let a: number, b: number;
      if (!isFinite(flo) || !isFinite(fhi)) {
        // zero-width domain: every present row sits at lo
        [a, b] = lo <= axis.lo && axis.lo <= hi ? [0, CODE_MAX] : [1, 0];
      } else {
        a = Math.max(0, Math.round(flo * CODE_MAX));
        b = Math.min(CODE_MAX, Math.round(fhi * CODE_MAX));
      }
      lut.fill(1, a, b + 1);
    }
  }
  if (s.lane) lut[CODE_MISSING] = 1;
  return lut;
}

/** Two selections pick the same rows of the page (compared on the page's codes). */
export function sameRows(table: Table, a: Sel, b: Sel): boolean {
  if (selKey(a) === selKey(b)) return true;
  // axis by axis: the same codes picked means the same rows, found without reading the rows; only an
  // axis whose picked codes differ is checked on the rows' codes
  const names = new Set([...Object.keys(a), ...Object.keys(b)]);
  for (const name of names) {
    const axis = table.byName.get(name);
    if (!axis) continue;
    const sa = own(a, name);
    const sb = own(b, name);
    const la = sa && !isEmpty(sa) ? pickedCodes(axis, sa) : null;
    const lb = sb && !isEmpty(sb) ? pickedCodes(axis, sb) : null;
    if (la === null && lb === null) continue;
    const pa = la ?? new Uint8Array(CODE_COUNT).fill(1);
    const pb = lb ?? new Uint8Array(CODE_COUNT).fill(1);
    let differ = false;
    for (let c = 0; c < CODE_COUNT && !differ; c++) differ = pa[c] !== pb[c];
    if (!differ) continue;
    const codes = axis.codes;
    for (let i = 0; i < codes.length; i++) if (pa[codes[i]] !== pb[codes[i]]) return false;
  }
  return true;
}

/** The first axis whose selection differs between `before` and `after` (undefined: none). */
export function editedAxis(before: Sel, after: Sel): string | undefined {
  const none = { spans: [], bands: [], lane: false };
  return [...new Set([...Object.keys(before), ...Object.keys(after)])].find(
    (k) => selKey({ k: own(before, k) ?? none }) !== selKey({ k: own(after, k) ?? none }),
  );
}
