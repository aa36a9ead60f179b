// Decode the kernel's `table` trait into typed columns, without copying the binary buffers.

import { CODE_MAX, CODE_MISSING } from "./wire";

export { CODE_MAX, CODE_MISSING };

export type Kind = "number" | "integer" | "category" | "boolean" | "datetime" | "timedelta";

export interface AxisData {
  name: string;
  kind: Kind;
  /** domain in axis units: numbers; nanoseconds for datetime and timedelta */
  lo: number;
  hi: number;
  log: boolean;
  /** time zone of a tz-aware datetime axis */
  tz: string | null;
  missing: number;
  /** count of -inf and +inf values (drawn pinned to the ends) */
  inf: [number, number];
  /** the distinct values of a discrete axis, when few */
  values?: number[];
  /** category bands, bottom to top, with row counts; `rest` lumps rarer labels into one band */
  labels?: string[];
  counts?: number[];
  rest?: { labels: number; rows: number };
  /** one code per row */
  codes: Uint16Array;
}

/** The row index labels the kernel sends (optional): a range `start + step * position`, or the labels as text. */
export interface RowIndex {
  start?: number;
  step?: number;
  labels?: string[];
}

export interface Table {
  /** rows whose codes are on the page (the sample size in the scale tier) */
  n: number;
  /** row index labels, when the kernel sent them */
  index: RowIndex | null;
  /** rows of the whole table (equal to n unless sampled) */
  total: number;
  /** the page holds a seeded sample of the rows (the scale tier) */
  sampled: boolean;
  axes: AxisData[];
  byName: Map<string, AxisData>;
}

interface RawColumn {
  name: string;
  kind: Kind;
  lo?: number;
  hi?: number;
  log?: boolean;
  tz?: string | null;
  missing: number;
  inf?: [number, number];
  values?: number[];
  labels?: string[];
  counts?: number[];
  rest?: { labels: number; rows: number };
  codes: DataView | ArrayBuffer | Uint8Array;
}

export interface RawTable {
  n?: number;
  index?: RowIndex;
  /** all rows of the table; absent or equal to n when not sampled */
  total?: number;
  sampled?: boolean;
  columns?: RawColumn[];
}

export const isCategorical = (a: AxisData) => a.kind === "category" || a.kind === "boolean";

function asUint16(buf: DataView | ArrayBuffer | Uint8Array, name: string, n: number): Uint16Array {
  let out: Uint16Array;
  if (buf instanceof ArrayBuffer) out = new Uint16Array(buf);
  else if (buf.byteOffset % 2 === 0) out = new Uint16Array(buf.buffer, buf.byteOffset, buf.byteLength >> 1);
  else out = new Uint16Array(buf.buffer.slice(buf.byteOffset, buf.byteOffset + buf.byteLength));
  if (out.length !== n) throw new Error(`column ${JSON.stringify(name)}: ${out.length} codes for ${n} rows`);
  return out;
}

export function decodeTable(raw: RawTable | null | undefined): Table {
  const n = raw?.n ?? 0;
  const axes: AxisData[] = (raw?.columns ?? []).map((c) => ({
    name: c.name,
    kind: c.kind,
    lo: c.lo ?? 0,
    hi: c.hi ?? 1,
    log: !!c.log,
    tz: c.tz ?? null,
    missing: c.missing,
    inf: c.inf ?? [0, 0],
    values: c.values,
    labels: c.labels,
    counts: c.counts,
    rest: c.rest,
    codes: asUint16(c.codes, c.name, n),
  }));
  const sampled = !!raw?.sampled;
  const total = Math.max(n, Number(raw?.total ?? n) || n);
  return { n, total, sampled, index: raw?.index ?? null, axes, byName: new Map(axes.map((a) => [a.name, a])) };
}

/** The index label of a row (its position in the table), or null when the kernel sent no index. */
export function indexLabel(t: Table, row: number): string | null {
  const ix = t.index;
  if (!ix) return null;
  if (ix.labels) return row < ix.labels.length ? ix.labels[row] : null;
  if (ix.start !== undefined && ix.step !== undefined) return String(ix.start + ix.step * row);
  return null;
}

/** Number of bands on a category axis (the shared "rest" band included). */
export function bandCount(a: AxisData): number {
  return (a.labels?.length ?? 0) + (a.rest ? 1 : 0);
}

/** Position 0..1 of a value along a numeric axis (log axes in log space); NaN for a zero-width domain. */
export function fraction(a: AxisData, v: number): number {
  if (a.log) {
    const l0 = Math.log(a.lo);
    const span = Math.log(a.hi) - l0;
    return span > 0 ? (Math.log(Math.max(v, Number.MIN_VALUE)) - l0) / span : NaN;
  }
  const half = a.hi * 0.5 - a.lo * 0.5;
  return half > 0 ? (v * 0.5 - a.lo * 0.5) / half : NaN;
}

/** The value at position f (0..1) of a numeric axis. */
export function valueAt(a: AxisData, f: number): number {
  if (a.log) return Math.exp(Math.log(a.lo) + f * (Math.log(a.hi) - Math.log(a.lo)));
  // in halves, like the kernel's quantisation, so that [-1e308, 1e308] does not overflow
  return (a.lo * 0.5 + f * (a.hi * 0.5 - a.lo * 0.5)) * 2;
}

/** The value (axis units) a numeric wire code stands for, to the quantisation step. */
export function codeToValue(a: AxisData, code: number): number {
  return code === CODE_MISSING ? NaN : valueAt(a, code / CODE_MAX);
}

/** Per byte value, its 8 bits (little bit order) as two 32-bit words of one byte per bit. */
const UNPACKED = (() => {
  const words = new Uint32Array(512);
  const bytes = new Uint8Array(words.buffer);
  for (let v = 0; v < 256; v++) for (let b = 0; b < 8; b++) bytes[v * 8 + b] = (v >> b) & 1;
  return words;
})();

/**
 * Unpack the kernel's bit-packed mask (little bit order) into one byte per row: a table lookup per
 * packed byte (two 32-bit stores), not a shift per row.
 */
export function unpackMask(bits: DataView | null | undefined, n: number): Uint8Array | null {
  if (!bits || bits.byteLength * 8 < n) return null;
  const bytes = Math.ceil(n / 8);
  const words = new Uint32Array(bytes * 2);
  const packed = new Uint8Array(bits.buffer, bits.byteOffset, bytes);
  for (let j = 0; j < bytes; j++) {
    const v = packed[j] << 1;
    words[2 * j] = UNPACKED[v];
    words[2 * j + 1] = UNPACKED[v + 1];
  }
  // bits past n (padding of the last byte) are not part of the mask
  return new Uint8Array(words.buffer, 0, n);
}

/** A deterministic spread 0..1 per row, so that lines inside a category band stay apart. */
export function rowSpread(n: number): Float32Array {
  const out = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    let h = Math.imul(i ^ 0x9e3779b9, 0x85ebca6b);
    h ^= h >>> 13;
    h = Math.imul(h, 0xc2b2ae35);
    h ^= h >>> 16;
    out[i] = (h >>> 0) / 4294967296;
  }
  return out;
}
