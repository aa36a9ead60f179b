// Decode the kernel's `table` trait into typed columns, without copying the binary buffers.

/** Largest quantisation code; codes 0..CODE_MAX map linearly onto an axis's [lo, hi]. */
export const CODE_MAX = 65534;
/** Code reserved for a missing value. */
export const CODE_MISSING = 65535;

export type Kind = "number" | "integer";

export interface AxisData {
  name: string;
  kind: Kind;
  lo: number;
  hi: number;
  missing: number;
  /** the distinct values of a discrete axis, when few */
  values?: number[];
  /** one code per row */
  codes: Uint16Array;
}

export interface Table {
  n: number;
  axes: AxisData[];
  byName: Map<string, AxisData>;
}

interface RawColumn {
  name: string;
  kind: Kind;
  lo: number;
  hi: number;
  missing: number;
  values?: number[];
  codes: DataView | ArrayBuffer | Uint8Array;
}

export interface RawTable {
  n?: number;
  columns?: RawColumn[];
}

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
  const axes = (raw?.columns ?? []).map((c) => ({
    name: c.name,
    kind: c.kind,
    lo: c.lo,
    hi: c.hi,
    missing: c.missing,
    values: c.values,
    codes: asUint16(c.codes, c.name, n),
  }));
  return { n, axes, byName: new Map(axes.map((a) => [a.name, a])) };
}

/** The data value a code stands for (approximate: the kernel holds the exact values). */
export function codeToValue(axis: AxisData, code: number): number {
  if (code === CODE_MISSING) return NaN;
  return axis.lo + (code / CODE_MAX) * (axis.hi * 0.5 - axis.lo * 0.5) * 2;
}

/** Unpack the kernel's bit-packed mask (little bit order) into one byte per row. */
export function unpackMask(bits: DataView | null | undefined, n: number): Uint8Array | null {
  if (!bits || bits.byteLength * 8 < n) return null;
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) out[i] = (bits.getUint8(i >> 3) >> (i & 7)) & 1;
  return out;
}
