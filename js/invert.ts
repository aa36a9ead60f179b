// Inverting the selection on one axis.
//
// Definition: the inverted selection of axis A picks exactly the rows that A's selection did not pick,
// judged on A alone (the other axes keep their selections, so the selected rows become: rows outside
// A's selection that pass every other axis).
//   - number, date and duration axes: the gaps between the ranges, out to open ends. Ranges hold both
//     of their ends, so a gap starts at the next representable value after an end: the next float64
//     for numbers (the kernel compares exact float64 values), the next whole number on whole-number
//     axes, the next millisecond on dates and durations (the page's resolution for time; values between
//     two milliseconds are the one approximate case);
//   - category and yes/no axes: the bands not picked (the shared band of rarer labels is one band);
//   - the missing-values lane flips too when the axis has missing values: a row missing on A is picked
//     afterwards exactly when it was not before.
// An axis without a selection has nothing to invert (null is returned): "everything but nothing" would
// be every row, which is no selection at all. Nor has an axis whose selection takes all of its rows
// (every band, or ranges over the whole line, and the lane): its complement would be no row at all.

import { bandCount, isCategorical, type Table } from "./data";
import { cloneSel, emptyAxis, isEmpty, own, tidy, type Sel, type Span } from "./selection";

const view = new DataView(new ArrayBuffer(8));

/** The next float64 above v (towards +Infinity). */
export function nextUp(v: number): number {
  if (Number.isNaN(v) || v === Infinity) return v;
  if (v === 0) return Number.MIN_VALUE;
  view.setFloat64(0, v);
  const bits = view.getBigUint64(0);
  view.setBigUint64(0, v > 0 ? bits + 1n : bits - 1n);
  return view.getFloat64(0);
}

/** The next float64 below v (towards -Infinity). */
export function nextDown(v: number): number {
  return -nextUp(-v);
}

/** Smallest step between two distinct values the kernel can tell apart on this axis, or 0 for float64. */
function step(table: Table, axis: string): number {
  const a = table.byName.get(axis)!;
  if (a.kind === "integer") return 1;
  if (a.kind === "datetime" || a.kind === "timedelta") return 1e6; // one millisecond in nanoseconds
  return 0;
}

const after = (v: number, s: number) => (s ? v + s : nextUp(v));
const before = (v: number, s: number) => (s ? v - s : nextDown(v));

/** The complement of sorted, merged ranges over the whole line (open ends as ±Infinity). */
export function gaps(spans: Span[], s = 0): Span[] {
  const out: Span[] = [];
  let from = -Infinity;
  for (const [lo, hi] of spans) {
    if (lo > -Infinity) {
      const end = before(lo, s);
      if (from === -Infinity || end >= from) out.push([from, end]);
    }
    from = hi === Infinity ? NaN : after(hi, s);
    if (Number.isNaN(from)) return out;
  }
  out.push([from, Infinity]);
  return out;
}

/** The selection with axis `axis` inverted (see the definition above), or null when it has none. */
export function invertedSel(table: Table, sel: Sel, axis: string): Sel | null {
  const a = table.byName.get(axis);
  const s = own(tidy(sel), axis);
  if (!a || isEmpty(s)) return null;
  const out = cloneSel(tidy(sel));
  const next = emptyAxis();
  if (isCategorical(a)) {
    for (let b = 0; b < bandCount(a); b++) if (!s!.bands.includes(b)) next.bands.push(b);
  } else {
    const st = step(table, axis);
    // ends as the kernel reads them: whole values inward on whole-number axes, milliseconds on time axes
    const whole = (lo: number, hi: number): Span =>
      st === 1 ? [Math.ceil(lo - 1e-9), Math.floor(hi + 1e-9)] : st ? [Math.round(lo / st) * st, Math.round(hi / st) * st] : [lo, hi];
    const read = s!.spans.map(([lo, hi]) => whole(lo, hi)).filter(([lo, hi]) => lo <= hi);
    next.spans = gaps(tidy({ x: { spans: read, bands: [], lane: false } }).x?.spans ?? [], st);
  }
  next.lane = a.missing > 0 ? !s!.lane : false;
  if (isEmpty(next)) return null; // the selection takes every row of this axis: its complement is no row
  out[axis] = next;
  return out;
}
