// The density view's counts: rows binned per pair of neighbouring axes, kept between redraws.
//
// Counting is done pair by pair (one tight loop over the rows per pair, two bin lookups and one
// increment per row, like a bare bincount) into counts of ALL rows per colour group, which do not depend
// on the selection and are kept for as long as the table, the axis order and the colouring stay. The
// selected rows' counts are then found with the least work of three: counting the selected rows, counting
// the rows left out (selected = all - left out), or moving only the rows whose mask changed since the
// counts kept (while a range is dragged that is a thin slice of rows). The marginal histograms come from
// the pair counts (a density bin lies inside one histogram bin), not from a pass of their own.

import { CODE_MISSING, densityBins, HIST_BINS, histBin } from "./wire";

/** Rows per piece of counting work (every pair) between two chances to yield to the page. */
const BLOCK = 1 << 14;
/** Rows per piece of a plain pass over the mask. */
const SCAN = 1 << 18;

const lutCache = new Map<string, Uint8Array | Uint16Array>();

/** Density bin of every code (cached: one table per bin count and axis kind, never rebuilt per redraw). */
export function binLut(bins: number, categorical: boolean): Uint8Array | Uint16Array {
  const key = `${bins}:${categorical}`;
  let lut = lutCache.get(key);
  if (!lut) lutCache.set(key, (lut = densityBins(bins, categorical)));
  return lut;
}

const histCache = new Map<number, Int16Array | null>();

/**
 * The histogram bin of each density bin of a numeric axis, when every density bin lies inside one
 * histogram bin (true for the wire contract's 128 density and 64 histogram bins); null when not, and
 * the histograms are then counted from the rows.
 */
export function histOfBin(bins: number): Int16Array | null {
  if (histCache.has(bins)) return histCache.get(bins)!;
  const lut = binLut(bins, false);
  const out = new Int16Array(bins).fill(-1);
  let ok = true;
  for (let c = 0; c < CODE_MISSING && ok; c++) {
    const b = lut[c];
    const h = histBin(c);
    if (out[b] === -1) out[b] = h;
    else if (out[b] !== h) ok = false;
  }
  const value = ok ? out : null;
  histCache.set(bins, value);
  return value;
}

/** What to count: the codes of the axes in drawing order and how rows are binned and grouped. */
export interface CountSpec {
  /** rows */
  n: number;
  /** codes per axis, in drawing order */
  codes: Uint16Array[];
  /** per axis: a category axis (bins are band numbers; no histogram) */
  categorical: boolean[];
  /** bins per axis (the last bin, `bins`, holds missing values) */
  bins: number;
  /** colour group per row (0..groups-1), or null for one group */
  group: Uint8Array | null;
  groups: number;
  /** identity of what the counts depend on besides the codes (the table, the order) */
  key: readonly unknown[];
}

/** Called between pieces of work: resolves false when the work is to be abandoned. */
export type Breathe = () => Promise<boolean>;

export class DensityCounts {
  /** per pair: counts of all rows, per group (groups x cells) */
  all: Uint32Array[] = [];
  /** per pair: counts of the selected rows, per group (groups x cells) */
  sel: Uint32Array[] = [];
  /** per axis: marginal histograms (HIST_BINS) of all and of the selected rows (zero on category axes) */
  histAll: Uint32Array[] = [];
  histSel: Uint32Array[] = [];
  /** rows whose pair counts moved in the last `prepare` (for tests and the bench) */
  lastWork = { rows: 0, how: "" as "" | "kept" | "all" | "selected" | "left out" | "changed" };
  private spec: CountSpec | null = null;
  private keyParts: readonly unknown[] = [];
  private allReady = false;
  /** the mask `sel` counts (undefined: `sel` is not valid) */
  private selMask: Uint8Array | null | undefined = undefined;
  private scratch = new Int32Array(0);

  /** cells per pair and group */
  get cells(): number {
    const b = (this.spec?.bins ?? 0) + 1;
    return b * b;
  }

  private sameKey(spec: CountSpec): boolean {
    const s = this.spec;
    if (!s || s.n !== spec.n || s.bins !== spec.bins || s.group !== spec.group || s.groups !== spec.groups) return false;
    if (s.codes.length !== spec.codes.length || spec.codes.some((c, a) => c !== s.codes[a])) return false;
    if (spec.categorical.some((c, a) => c !== s.categorical[a])) return false;
    return this.keyParts.length === spec.key.length && spec.key.every((k, i) => k === this.keyParts[i]);
  }

  /** Forget every count (the next `prepare` counts from zero). */
  forget() {
    this.spec = null;
    this.allReady = false;
    this.selMask = undefined;
  }

  /**
   * Bring the counts up to date for `mask` (null: every row selected). Masks are never changed after
   * they are handed over (a new selection is a new array), so the mask the kept counts belong to can be
   * compared with the new one. Returns false when `breathe` said to stop (the counts kept stay valid).
   */
  async prepare(spec: CountSpec, mask: Uint8Array | null, breathe: Breathe): Promise<boolean> {
    if (!this.sameKey(spec)) {
      this.spec = spec;
      this.keyParts = [...spec.key];
      this.allReady = false;
      this.selMask = undefined;
    }
    const pairs = Math.max(0, spec.codes.length - 1);
    const size = spec.groups * this.cells;
    if (!this.allReady) {
      this.all = Array.from({ length: pairs }, () => new Uint32Array(size));
      if (!(await this.countAll(breathe))) return false;
      this.allReady = true;
      this.selMask = undefined;
      this.histograms(this.histAll = spec.codes.map(() => new Uint32Array(HIST_BINS)), this.all);
      this.lastWork = { rows: spec.n, how: "all" };
    } else this.lastWork = { rows: 0, how: "kept" };
    if (mask === null) {
      this.sel = this.all;
      this.selMask = null;
      this.histSel = this.histAll;
      return true;
    }
    if (this.selMask === mask) return true;
    // `sel` is invalid while it is being changed (an abandoned pass leaves it half done)
    const old = this.selMask;
    this.selMask = undefined;
    if (!(await this.countSelected(old, mask, breathe))) return false;
    this.selMask = mask;
    this.histograms(this.histSel = spec.codes.map(() => new Uint32Array(HIST_BINS)), this.sel);
    return true;
  }

  /** Count every row into `all`, block by block and pair by pair. */
  private async countAll(breathe: Breathe): Promise<boolean> {
    const spec = this.spec!;
    const { n, codes, group, bins } = spec;
    const B1 = bins + 1;
    const cells = B1 * B1;
    const luts = spec.categorical.map((c) => binLut(bins, c));
    const off = group ? new Int32Array(Math.min(n, BLOCK)) : null;
    for (let i0 = 0; i0 < n; i0 += BLOCK) {
      const i1 = Math.min(n, i0 + BLOCK);
      // the loops live in plain functions: V8 optimises a hot loop inside an async function late
      if (off) groupOffsets(group!, cells, off, i0, i1);
      for (let a = 0; a + 1 < codes.length; a++) {
        if (off) countGrouped(this.all[a], luts[a], luts[a + 1], codes[a], codes[a + 1], B1, off, i0, i1);
        else countPairs(this.all[a], luts[a], luts[a + 1], codes[a], codes[a + 1], B1, i0, i1);
      }
      if (i1 < n && !(await breathe())) return false;
    }
    return true;
  }

  /** Update `sel` for a new mask with the least work (see the module comment). */
  private async countSelected(old: Uint8Array | null | undefined, mask: Uint8Array, breathe: Breathe): Promise<boolean> {
    const { n } = this.spec!;
    // every pass over the rows goes in blocks, with a chance to yield between them
    const scan = async (body: (i0: number, i1: number) => boolean | void): Promise<boolean> => {
      for (let i0 = 0; i0 < n; i0 += SCAN) {
        if (body(i0, Math.min(n, i0 + SCAN)) === false) return true;
        if (i0 + SCAN < n && !(await breathe())) return false;
      }
      return true;
    };
    let on = 0;
    if (!(await scan((i0, i1) => {
      let c = 0; // a local in the loop (the captured variable once per block)
      for (let i = i0; i < i1; i++) c += mask[i];
      on += c;
    }))) return false;
    const fromZero = Math.min(on, n - on);
    let changed = Infinity;
    if (old === null) changed = n - on;
    else if (old !== undefined) {
      // rows whose membership changed since the counts kept; give up once it is not the cheapest way
      changed = 0;
      if (!(await scan((i0, i1) => {
        let c = 0;
        for (let i = i0; i < i1; i++) c += old[i] ^ mask[i];
        changed += c;
        return changed <= fromZero;
      }))) return false;
    }
    if (this.scratch.length < n) this.scratch = new Int32Array(n);
    const rows = this.scratch;
    let m = 0;
    if (changed <= fromZero) {
      // move the changed rows: +1 where they joined, -1 where they left
      if (this.sel === this.all) this.sel = this.all.map((c) => c.slice());
      const sign = new Int8Array(changed);
      if (!(await scan((i0, i1) => {
        let j = m;
        for (let i = i0; i < i1; i++) {
          const was = old ? old[i] : 1;
          if (was !== mask[i]) {
            sign[j] = mask[i] ? 1 : -1;
            rows[j++] = i;
          }
        }
        m = j;
      }))) return false;
      this.lastWork = { rows: m, how: "changed" };
      return this.addRows(rows, m, sign, breathe);
    }
    const want = on <= n - on ? 1 : 0;
    if (!(await scan((i0, i1) => {
      let j = m;
      for (let i = i0; i < i1; i++) if (mask[i] === want) rows[j++] = i;
      m = j;
    }))) return false;
    const size = this.spec!.groups * this.cells;
    this.sel = this.all.map(() => new Uint32Array(size));
    this.lastWork = { rows: m, how: want ? "selected" : "left out" };
    if (!(await this.addRows(rows, m, null, breathe))) return false;
    if (!want) {
      // selected = all - left out
      this.sel.forEach((s, a) => {
        const all = this.all[a];
        for (let c = 0; c < s.length; c++) s[c] = all[c] - s[c];
      });
    }
    return true;
  }

  /** Add (or, with sign -1, take away) rows `rows[0..m)` to `sel`, pair by pair, in blocks. */
  private async addRows(rows: Int32Array, m: number, sign: Int8Array | null, breathe: Breathe): Promise<boolean> {
    const { codes, group, bins } = this.spec!;
    const B1 = bins + 1;
    const cells = B1 * B1;
    const luts = this.spec!.categorical.map((c) => binLut(bins, c));
    for (let j0 = 0; j0 < m; j0 += BLOCK) {
      const j1 = Math.min(m, j0 + BLOCK);
      for (let a = 0; a + 1 < codes.length; a++) {
        addPairRows(this.sel[a], luts[a], luts[a + 1], codes[a], codes[a + 1], B1, cells, group, rows, sign, j0, j1);
      }
      if (j1 < m && !(await breathe())) return false;
    }
    return true;
  }

  /** Marginal histograms of numeric axes from pair counts (or from the rows when bins do not nest). */
  private histograms(out: Uint32Array[], counts: Uint32Array[]) {
    const { codes, categorical, bins, groups } = this.spec!;
    const B1 = bins + 1;
    const cells = B1 * B1;
    const map = histOfBin(bins);
    codes.forEach((c, a) => {
      if (categorical[a]) return;
      const h = out[a];
      if (!map || codes.length < 2) {
        // the rows themselves (only when density bins do not lie inside histogram bins)
        const mask = counts === this.all ? null : this.selMask;
        for (let i = 0; i < c.length; i++) if (c[i] !== CODE_MISSING && (!mask || mask[i])) h[histBin(c[i])]++;
        return;
      }
      // axis a is the left axis of pair a, or the right axis of the last pair
      const left = a + 1 < codes.length;
      const cnt = counts[left ? a : a - 1];
      for (let g = 0; g < groups; g++) {
        const base = g * cells;
        for (let l = 0; l < bins; l++) {
          for (let r = 0; r < B1; r++) {
            const v = left ? cnt[base + l * B1 + r] : cnt[base + r * B1 + l];
            if (v) h[map[l]] += v;
          }
        }
      }
    });
  }
}

type Lut = Uint8Array | Uint16Array;

/** Offset of each row's colour group in a pair's counts, rows i0..i1-1 (into off[0..]). */
function groupOffsets(group: Uint8Array, cells: number, off: Int32Array, i0: number, i1: number) {
  for (let i = i0; i < i1; i++) off[i - i0] = group[i] * cells;
}

/** One pair, rows i0..i1-1: the bare bincount loop. */
function countPairs(cnt: Uint32Array, la: Lut, lb: Lut, ca: Uint16Array, cb: Uint16Array, B1: number, i0: number, i1: number) {
  for (let i = i0; i < i1; i++) cnt[la[ca[i]] * B1 + lb[cb[i]]]++;
}

/** One pair, rows i0..i1-1, each row into its colour group's counts. */
function countGrouped(cnt: Uint32Array, la: Lut, lb: Lut, ca: Uint16Array, cb: Uint16Array, B1: number, off: Int32Array, i0: number, i1: number) {
  for (let i = i0; i < i1; i++) cnt[off[i - i0] + la[ca[i]] * B1 + lb[cb[i]]]++;
}

/** One pair: add (or take away, by sign) the rows listed in rows[j0..j1-1]. */
function addPairRows(
  cnt: Uint32Array,
  la: Lut,
  lb: Lut,
  ca: Uint16Array,
  cb: Uint16Array,
  B1: number,
  cells: number,
  group: Uint8Array | null,
  rows: Int32Array,
  sign: Int8Array | null,
  j0: number,
  j1: number,
) {
  for (let j = j0; j < j1; j++) {
    const i = rows[j];
    const cell = (group ? group[i] * cells : 0) + la[ca[i]] * B1 + lb[cb[i]];
    cnt[cell] += sign ? sign[j] : 1;
  }
}
