// Value <-> pixel mapping, category bands and tick choice for one axis.

import { CODE_MAX, fraction, isCategorical, valueAt, type AxisData } from "./data";

export interface Ticks {
  values: number[];
  labels: string[];
  step: number;
}

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

/** Powers of ten (and 2, 5 multiples when the axis spans few decades) for a log axis. */
export function logTicks(lo: number, hi: number, count = 5): { values: number[]; step: number } {
  const values: number[] = [];
  const d0 = Math.floor(Math.log10(lo));
  const d1 = Math.ceil(Math.log10(hi));
  const mults = d1 - d0 <= 2 ? [1, 2, 5] : [1];
  const every = Math.max(1, Math.ceil((d1 - d0) / count));
  for (let d = d0; d <= d1; d += every)
    for (const m of mults) {
      const v = m * Math.pow(10, d);
      if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) values.push(v);
    }
  return { values, step: 0 };
}

/** A compact label for a value given the tick step (or 0 for "unknown step"). */
export function formatValue(v: number, step = 0): string {
  if (!isFinite(v)) return v > 0 ? "+∞" : v < 0 ? "−∞" : "–";
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e7 || a < 1e-4)) return v.toExponential(2).replace("e+", "e");
  let digits: number;
  if (step > 0) digits = Math.max(0, Math.min(8, -Math.floor(Math.log10(step) + 1e-9)));
  else digits = a >= 100 ? 1 : a >= 1 ? 3 : 4;
  const s = v.toFixed(digits);
  return step > 0 ? s : s.replace(/\.?0+$/, "");
}

// -- time ------------------------------------------------------------------------------------------
const SEC = 1e3;
const MIN = 60 * SEC;
const HOUR = 60 * MIN;
const DAY = 24 * HOUR;
const TIME_STEPS = [SEC, 5 * SEC, 15 * SEC, 30 * SEC, MIN, 5 * MIN, 15 * MIN, 30 * MIN, HOUR, 3 * HOUR, 6 * HOUR, 12 * HOUR, DAY, 2 * DAY, 7 * DAY];
const MONTH_STEPS = [1, 2, 3, 6];

const pad = (x: number, w = 2) => String(x).padStart(w, "0");
const formatters = new Map<string, Intl.DateTimeFormat | null>();

/** Calendar parts of an instant, in a time zone (UTC when none or unknown to the browser). */
export function calendar(ms: number, tz: string | null): { Y: number; M: number; D: number; h: number; m: number; s: number } {
  if (tz && tz !== "UTC") {
    if (!formatters.has(tz)) {
      try {
        formatters.set(tz, new Intl.DateTimeFormat("en-CA", { timeZone: tz, hourCycle: "h23", year: "numeric", month: "numeric", day: "numeric", hour: "numeric", minute: "numeric", second: "numeric" }));
      } catch {
        formatters.set(tz, null);
      }
    }
    const f = formatters.get(tz);
    if (f) {
      const p: Record<string, number> = {};
      for (const part of f.formatToParts(new Date(ms))) if (part.type !== "literal") p[part.type] = Number(part.value);
      return { Y: p.year, M: p.month, D: p.day, h: p.hour % 24, m: p.minute, s: p.second };
    }
  }
  const d = new Date(ms);
  return { Y: d.getUTCFullYear(), M: d.getUTCMonth() + 1, D: d.getUTCDate(), h: d.getUTCHours(), m: d.getUTCMinutes(), s: d.getUTCSeconds() };
}

/** A date/time label whose precision follows the tick step (ms). */
export function formatTime(ms: number, stepMs: number, tz: string | null): string {
  const c = calendar(ms, tz);
  if (stepMs >= 365 * DAY) return `${c.Y}`;
  if (stepMs >= 28 * DAY) return `${c.Y}-${pad(c.M)}`;
  if (stepMs >= DAY) return `${c.Y}-${pad(c.M)}-${pad(c.D)}`;
  if (stepMs >= MIN) return `${pad(c.M)}-${pad(c.D)} ${pad(c.h)}:${pad(c.m)}`;
  return `${pad(c.h)}:${pad(c.m)}:${pad(c.s)}`;
}

/** Calendar ticks between two instants (ms, UTC-aligned): seconds up to years. */
export function timeTicks(lo: number, hi: number, count = 5): { values: number[]; step: number } {
  const span = hi - lo;
  if (!(span > 0)) return { values: [lo], step: DAY };
  const target = span / Math.max(1, count);
  const values: number[] = [];
  const fixed = TIME_STEPS.find((s) => s >= target);
  if (fixed) {
    for (let v = Math.ceil(lo / fixed) * fixed; v <= hi && values.length < 60; v += fixed) values.push(v);
    return { values, step: fixed };
  }
  const months = MONTH_STEPS.find((m) => m * 30 * DAY >= target);
  const d0 = new Date(lo);
  if (months) {
    let y = d0.getUTCFullYear();
    let m = Math.ceil((d0.getUTCMonth() + (d0.getUTCDate() > 1 || d0.getUTCHours() > 0 ? 1 : 0)) / months) * months;
    for (let k = 0; k < 60; k++) {
      const v = Date.UTC(y + Math.floor(m / 12), m % 12, 1);
      if (v > hi) break;
      if (v >= lo) values.push(v);
      m += months;
    }
    return { values, step: months * 30 * DAY };
  }
  const years = niceTicks(0, target / (365.25 * DAY), 1).step || 1;
  const yStep = Math.max(1, Math.round(years));
  for (let y = Math.ceil(d0.getUTCFullYear() / yStep) * yStep; values.length < 60; y += yStep) {
    const v = Date.UTC(y, 0, 1);
    if (v > hi) break;
    if (v >= lo) values.push(v);
  }
  return { values, step: yStep * 365 * DAY };
}

/** A duration (seconds) in the unit that suits the step. */
export function formatDuration(sec: number, stepSec: number): string {
  const units: [number, string][] = [[86400, "d"], [3600, "h"], [60, "min"], [1, "s"]];
  const ref = Math.max(Math.abs(stepSec), 1e-9);
  const [size, name] = units.find(([s]) => ref >= s) ?? [1, "s"];
  return `${formatValue(sec / size, stepSec > 0 ? stepSec / size : 0)} ${name}`;
}

// -- the scale -------------------------------------------------------------------------------------
const BAND_GAP = 3;

/** Maps one axis onto a vertical pixel span (larger values and later bands at the top). */
export class AxisScale {
  /** category bands by band code: y0 (top) .. y1 (bottom) in pixels */
  readonly bands: { y0: number; y1: number }[] = [];

  constructor(
    readonly axis: AxisData,
    readonly top: number,
    readonly bottom: number,
    /** a flipped axis has its largest values (last bands) at the bottom */
    readonly flipped = false,
    /** about this many pixels between ticks */
    readonly tickGap = 55,
  ) {
    if (isCategorical(axis)) this.layoutBands();
  }

  /** pixel of a position 0..1 along the axis */
  private at(f: number): number {
    return this.flipped ? this.top + f * (this.bottom - this.top) : this.bottom - f * (this.bottom - this.top);
  }

  /** position 0..1 along the axis of a pixel (clamped) */
  private along(px: number): number {
    const f = this.flipped ? (px - this.top) / (this.bottom - this.top) : (this.bottom - px) / (this.bottom - this.top);
    return Math.min(1, Math.max(0, f));
  }

  private layoutBands() {
    const counts = [...(this.axis.counts ?? [])];
    if (this.axis.rest) counts.push(this.axis.rest.rows);
    const k = counts.length;
    if (!k) return;
    const h = this.bottom - this.top;
    const gap = Math.min(BAND_GAP, h / (4 * k));
    const avail = h - gap * (k - 1);
    const minH = Math.min(8, avail / k);
    const total = counts.reduce((a, b) => a + b, 0) || 1;
    let y = this.flipped ? this.top : this.bottom;
    for (const c of counts) {
      const bh = minH + ((avail - k * minH) * c) / total;
      if (this.flipped) {
        this.bands.push({ y0: y, y1: y + bh });
        y += bh + gap;
      } else {
        this.bands.push({ y0: y - bh, y1: y });
        y -= bh + gap;
      }
    }
  }

  get categorical(): boolean {
    return isCategorical(this.axis);
  }

  /** pixel of a data value in axis units (values outside the domain map outside the span) */
  toPixel(v: number): number {
    if (v === Infinity) return this.at(1);
    if (v === -Infinity) return this.at(0);
    const f = fraction(this.axis, v);
    if (!isFinite(f)) return (this.top + this.bottom) / 2;
    return this.at(f);
  }

  /** data value (axis units) at a pixel, clamped to the domain */
  toValue(px: number): number {
    if (!(this.axis.hi > this.axis.lo)) return this.axis.lo;
    return valueAt(this.axis, this.along(px));
  }

  /** pixel of a numeric wire code (NaN for the missing code) */
  codePixel(code: number): number {
    if (code > CODE_MAX) return NaN;
    if (!(this.axis.hi > this.axis.lo)) return (this.top + this.bottom) / 2;
    return this.at(code / CODE_MAX);
  }

  /** band code under a pixel on a category axis, or -1 */
  bandAt(px: number): number {
    return this.bands.findIndex((b) => px >= b.y0 - BAND_GAP / 2 && px <= b.y1 + BAND_GAP / 2);
  }

  bandLabel(code: number): string {
    const labels = this.axis.labels ?? [];
    return code < labels.length ? labels[code] : `${this.axis.rest?.labels ?? 0} other labels`;
  }

  ticks(): Ticks {
    const a = this.axis;
    const count = Math.max(2, Math.round((this.bottom - this.top) / this.tickGap));
    if (this.categorical) return { values: [], labels: [], step: 0 };
    if (a.kind === "datetime") {
      const t = timeTicks(a.lo / 1e6, a.hi / 1e6, count);
      return { values: t.values.map((v) => v * 1e6), labels: t.values.map((v) => formatTime(v, t.step, a.tz)), step: t.step * 1e6 };
    }
    if (a.kind === "timedelta") {
      const t = niceTicks(a.lo / 1e9, a.hi / 1e9, count);
      return { values: t.values.map((v) => v * 1e9), labels: t.values.map((v) => formatDuration(v, t.step)), step: t.step * 1e9 };
    }
    let t: { values: number[]; step: number };
    if (a.values && a.values.length <= Math.max(count * 2, 12)) t = { values: a.values, step: 1 };
    else if (a.log) t = logTicks(a.lo, a.hi, count);
    else t = a.kind === "integer" ? integerTicks(a.lo, a.hi, count) : niceTicks(a.lo, a.hi, count);
    return { ...t, labels: t.values.map((v) => formatValue(v, t.step)) };
  }

  /** A label for a value of this axis (axis units), precise enough for a range end. */
  format(v: number): string {
    const a = this.axis;
    if (!isFinite(v)) return formatValue(v);
    if (a.kind === "datetime") {
      const span = (a.hi - a.lo) / 1e6;
      const c = calendar(v / 1e6, a.tz);
      const day = `${c.Y}-${pad(c.M)}-${pad(c.D)}`;
      if (span > 60 * DAY) return day;
      return span > 2 * DAY ? `${day} ${pad(c.h)}:${pad(c.m)}` : `${day} ${pad(c.h)}:${pad(c.m)}:${pad(c.s)}`;
    }
    if (a.kind === "timedelta") return formatDuration(v / 1e9, (a.hi - a.lo) / 1e9 / 500);
    if (a.kind === "integer") return formatValue(v, 1);
    if (a.log) return formatValue(v, 0);
    return formatValue(v, niceTicks(a.lo, a.hi, 5).step / 10);
  }
}
