// Value <-> pixel mapping and tick choice for one axis.

import { CODE_MAX, type AxisData } from "./data";

/** Round numbers between lo and hi, about `count` of them (1, 2, 5 x 10^k steps). */
export function niceTicks(lo: number, hi: number, count = 5): { values: number[]; step: number } {
  if (!isFinite(lo) || !isFinite(hi)) return { values: [], step: 0 };
  if (hi < lo) [lo, hi] = [hi, lo];
  if (hi === lo) return { values: [lo], step: 0 };
  const raw = (hi - lo) / Math.max(1, count);
  const mag = Math.pow(10, Math.floor(Math.log10(raw)));
  const norm = raw / mag;
  const step = (norm >= 7.5 ? 10 : norm >= 3.5 ? 5 : norm >= 1.5 ? 2 : 1) * mag;
  if (!isFinite(step) || step <= 0) return { values: [lo, hi], step: hi - lo };
  const values: number[] = [];
  const first = Math.ceil(lo / step - 1e-9);
  const last = Math.floor(hi / step + 1e-9);
  for (let k = first; k <= last && values.length < 50; k++) values.push(k * step);
  return { values, step };
}

/** Integer ticks for a discrete axis: every integer if few, else a nice subset of integers. */
export function integerTicks(lo: number, hi: number, count = 8): { values: number[]; step: number } {
  const t = niceTicks(lo, hi, count);
  const step = Math.max(1, Math.round(t.step));
  const values: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi && values.length < 50; v += step) values.push(v);
  return { values, step };
}

/** A compact label for a value given the tick step (or 0 for "unknown step"). */
export function formatValue(v: number, step = 0): string {
  if (!isFinite(v)) return v > 0 ? "∞" : v < 0 ? "−∞" : "–";
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e7 || a < 1e-4)) return v.toExponential(2).replace("e+", "e");
  let digits: number;
  if (step > 0) digits = Math.max(0, Math.min(8, -Math.floor(Math.log10(step) + 1e-9)));
  else digits = a >= 100 ? 1 : a >= 1 ? 3 : 4;
  const s = v.toFixed(digits);
  return step > 0 ? s : s.replace(/\.?0+$/, "");
}

/** Linear mapping of one axis's domain onto a vertical pixel span (larger values at the top). */
export class AxisScale {
  constructor(
    readonly axis: AxisData,
    readonly top: number,
    readonly bottom: number,
  ) {}

  get span(): number {
    return this.axis.hi * 0.5 - this.axis.lo * 0.5;
  }

  /** pixel of a data value (values outside the domain map outside the span) */
  toPixel(v: number): number {
    const half = this.span;
    if (!(half > 0)) return (this.top + this.bottom) / 2;
    const f = (v * 0.5 - this.axis.lo * 0.5) / half;
    return this.bottom - f * (this.bottom - this.top);
  }

  /** data value at a pixel, clamped to the domain */
  toValue(px: number): number {
    const half = this.span;
    if (!(half > 0)) return this.axis.lo;
    const f = Math.min(1, Math.max(0, (this.bottom - px) / (this.bottom - this.top)));
    return this.axis.lo + f * half * 2;
  }

  /** pixel of a wire code (NaN for the missing code) */
  codePixel(code: number): number {
    if (code > CODE_MAX) return NaN;
    if (!(this.span > 0)) return (this.top + this.bottom) / 2;
    return this.bottom - (code / CODE_MAX) * (this.bottom - this.top);
  }

  ticks(): { values: number[]; step: number } {
    const h = this.bottom - this.top;
    const count = Math.max(2, Math.round(h / 55));
    if (this.axis.values && this.axis.values.length <= Math.max(count * 2, 12)) return { values: this.axis.values, step: 1 };
    return this.axis.kind === "integer" ? integerTicks(this.axis.lo, this.axis.hi, count) : niceTicks(this.axis.lo, this.axis.hi, count);
  }
}
