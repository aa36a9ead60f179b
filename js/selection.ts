// The page's view of a selection: ranges per axis in data units, and a preview mask from the codes.

import { CODE_MAX, CODE_MISSING, type Table } from "./data";

export type Span = [number, number];
export type Ranges = Record<string, Span[]>;

/** Copy of ranges with spans sorted and overlapping spans on one axis merged. */
export function tidy(ranges: Ranges): Ranges {
  const out: Ranges = {};
  for (const [axis, spans] of Object.entries(ranges)) {
    const sorted = spans
      .map(([a, b]) => (a <= b ? [a, b] : [b, a]) as Span)
      .sort((p, q) => p[0] - q[0]);
    const merged: Span[] = [];
    for (const s of sorted) {
      const last = merged[merged.length - 1];
      if (last && s[0] <= last[1]) last[1] = Math.max(last[1], s[1]);
      else merged.push([s[0], s[1]]);
    }
    if (merged.length) out[axis] = merged;
  }
  return out;
}

/**
 * Preview mask from the wire codes: a code counts as inside a span when the value it stands for is.
 * Exact up to half a quantisation step at the ends; the kernel's mask replaces it once it has answered.
 */
export function previewMask(table: Table, ranges: Ranges): { mask: Uint8Array; count: number } {
  const n = table.n;
  const mask = new Uint8Array(n).fill(1);
  for (const [name, spans] of Object.entries(ranges)) {
    const axis = table.byName.get(name);
    if (!axis || spans.length === 0) continue;
    const half = axis.hi * 0.5 - axis.lo * 0.5;
    // inclusive code interval per span
    const ivals = spans.map(([lo, hi]) => {
      if (!(half > 0)) return lo <= axis.lo && axis.lo <= hi ? [0, CODE_MAX] : [1, 0];
      // rounding is monotone, so every value inside [lo, hi] has a code inside [a, b]: the preview
      // can only err by including values within half a quantisation step outside the ends
      const a = Math.round(((lo * 0.5 - axis.lo * 0.5) / half) * CODE_MAX);
      const b = Math.round(((hi * 0.5 - axis.lo * 0.5) / half) * CODE_MAX);
      return [Math.max(0, a), Math.min(CODE_MAX, b)];
    });
    const codes = axis.codes;
    for (let i = 0; i < n; i++) {
      if (!mask[i]) continue;
      const c = codes[i];
      let hit = 0;
      if (c !== CODE_MISSING) {
        for (let k = 0; k < ivals.length; k++) {
          if (c >= ivals[k][0] && c <= ivals[k][1]) {
            hit = 1;
            break;
          }
        }
      }
      mask[i] = hit;
    }
  }
  let count = 0;
  for (let i = 0; i < n; i++) count += mask[i];
  return { mask, count };
}

/** Canonical text of a selection (axes sorted, spans tidied), for equality tests. */
export function rangesKey(r: Ranges): string {
  const t = tidy(r);
  return JSON.stringify(Object.keys(t).sort().map((k) => [k, t[k]]));
}
