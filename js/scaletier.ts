// The scale tier: the page holds a seeded sample of k rows of a table of N rows (`table.sampled`), and
// the kernel sends binned pair counts over all N rows (`pair_counts`). This module turns those traits
// into what the drawing and the status line need: the kernel's counts for each gap of the current axis
// order (by pair name; a reversed pair is read transposed; a missing pair is counted from the sample),
// whether the selected counts answer the latest edit, and the status text (an estimate scaled from the
// sample while a preview is shown, the kernel's exact count once it has answered).

import type { PairCountsEntry, PairCountsTrait } from "./model";

/** The kernel's counts for one gap between neighbouring axes, as drawn. */
export interface KernelPair {
  /** bins per axis (cells are (bins+1)^2, the last bin holds missing values) */
  bins: number;
  all: Uint32Array;
  /** selected rows (by the kernel's exact mask), or null when not sent */
  selected: Uint32Array | null;
  /** the kernel's pair is (right, left): read cell (l, r) at r * (bins+1) + l */
  transposed: boolean;
}

/** Little-endian uint32 counts from a binary trait value (no copy when aligned). */
export function countsFrom(buf: DataView | ArrayBuffer | Uint8Array | null | undefined, cells: number): Uint32Array | null {
  if (!buf) return null;
  const bytes = buf instanceof ArrayBuffer ? new Uint8Array(buf) : new Uint8Array(buf.buffer, buf.byteOffset, buf.byteLength);
  if (bytes.byteLength !== cells * 4) return null;
  if (bytes.byteOffset % 4 === 0) return new Uint32Array(bytes.buffer, bytes.byteOffset, cells);
  return new Uint32Array(bytes.slice().buffer);
}

/** A well-formed pair_counts trait, or null (`{}` outside the scale tier). */
export function pairCountsOf(raw: unknown): PairCountsTrait | null {
  const pc = raw as PairCountsTrait | null | undefined;
  if (!pc || typeof pc !== "object" || !Array.isArray(pc.pairs) || !(Number(pc.bins) > 0)) return null;
  return pc;
}

/** Kernel pairs decoded once per trait value, looked up by (left, right) name. */
export class PairLookup {
  private byName = new Map<string, { entry: PairCountsEntry; decoded?: { all: Uint32Array | null; selected: Uint32Array | null } }>();
  readonly bins: number;
  readonly seq: number;

  constructor(readonly trait: PairCountsTrait | null) {
    this.bins = trait ? Number(trait.bins) : 0;
    this.seq = trait ? Number(trait.seq ?? -1) : -1;
    for (const entry of trait?.pairs ?? []) this.byName.set(JSON.stringify([entry.left, entry.right]), { entry });
  }

  private decoded(left: string, right: string) {
    const slot = this.byName.get(JSON.stringify([left, right]));
    if (!slot) return null;
    if (!slot.decoded) {
      const cells = (this.bins + 1) * (this.bins + 1);
      slot.decoded = { all: countsFrom(slot.entry.all, cells), selected: countsFrom(slot.entry.selected, cells) };
    }
    return slot.decoded.all ? slot.decoded : null;
  }

  /** The kernel's counts between `left` and `right` (in that drawing order), or null when not sent. */
  pair(left: string, right: string): KernelPair | null {
    const direct = this.decoded(left, right);
    if (direct) return { bins: this.bins, all: direct.all!, selected: direct.selected, transposed: false };
    const reversed = this.decoded(right, left);
    if (reversed) return { bins: this.bins, all: reversed.all!, selected: reversed.selected, transposed: true };
    return null;
  }

  /** One entry per gap of `order`: the kernel's pair, or null where the sample is drawn instead. */
  forOrder(order: string[]): (KernelPair | null)[] {
    const out: (KernelPair | null)[] = [];
    for (let i = 0; i + 1 < order.length; i++) out.push(this.pair(order[i], order[i + 1]));
    return out;
  }
}

/** The count a preview over a k-row sample stands for among N rows: round(previewCount * N / k). */
export function estimateOf(previewCount: number, total: number, sample: number): number {
  return sample > 0 ? Math.round((previewCount * total) / sample) : 0;
}

/** A whole number with thousands separators ("1,234,567"), as toLocaleString("en-US") writes it without
 * the cost of starting the locale machinery on the first picture. */
export const fmt = (v: number) => String(Math.round(v)).replace(/\B(?=(\d{3})+(?!\d))/g, ",");

export interface StatusInput {
  /** the preview's count over the page's rows, or the kernel's exact count over all rows */
  count: number;
  /** a preview (the kernel has not answered the latest edit) */
  preview: boolean;
  /** rows on the page (k) and in the table (N) */
  n: number;
  total: number;
  sampled: boolean;
  mode: "lines" | "density";
}

/** The status line: the count and what it stands for. */
export function statusText(s: StatusInput): { text: string; count: number } {
  if (!s.sampled) {
    const text = s.preview ? `≈ ${fmt(s.count)} of ${fmt(s.n)} rows selected (checking…)` : `${fmt(s.count)} of ${fmt(s.n)} rows selected`;
    return { text, count: s.count };
  }
  if (s.preview) {
    const x = estimateOf(s.count, s.total, s.n);
    return { text: `≈ ${fmt(x)} of ${fmt(s.total)} rows selected (estimate from a ${fmt(s.n)}-row sample)`, count: x };
  }
  const text = `${fmt(s.count)} of ${fmt(s.total)} rows selected`;
  return { text: s.mode === "lines" ? `${text} · lines show a ${fmt(s.n)}-row sample` : text, count: s.count };
}
