// Rank association between neighbouring axes, computed on the page from the wire codes.
//
// Spearman's rho with average ranks for ties (= Pearson correlation of the ranks), over the rows
// present on both axes. Codes are quantised values (or category band numbers), so ranks are those of
// the quantised values; this is what the readout between neighbours shows.

import { CODE_COUNT, CODE_MISSING } from "./wire";

export function rankCorrelation(ca: Uint16Array, cb: Uint16Array): number {
  const n = ca.length;
  const ha = new Float64Array(CODE_COUNT);
  const hb = new Float64Array(CODE_COUNT);
  let m = 0;
  for (let i = 0; i < n; i++) {
    const a = ca[i];
    const b = cb[i];
    if (a === CODE_MISSING || b === CODE_MISSING) continue;
    ha[a]++;
    hb[b]++;
    m++;
  }
  if (m < 2) return NaN;
  const ranks = (h: Float64Array) => {
    let below = 0;
    for (let c = 0; c < CODE_COUNT; c++) {
      const k = h[c];
      if (k) {
        h[c] = below + (k + 1) / 2;
        below += k;
      }
    }
  };
  ranks(ha);
  ranks(hb);
  let sx = 0, sy = 0, sxx = 0, syy = 0, sxy = 0;
  for (let i = 0; i < n; i++) {
    const a = ca[i];
    const b = cb[i];
    if (a === CODE_MISSING || b === CODE_MISSING) continue;
    const x = ha[a];
    const y = hb[b];
    sx += x;
    sy += y;
    sxx += x * x;
    syy += y * y;
    sxy += x * y;
  }
  const cov = sxy - (sx * sy) / m;
  const vx = sxx - (sx * sx) / m;
  const vy = syy - (sy * sy) / m;
  return vx > 0 && vy > 0 ? cov / Math.sqrt(vx * vy) : NaN;
}

/** Cache of pair values (unflipped); a flip of one axis of the pair turns the sign. */
export class PairCache {
  private values = new Map<string, number>();

  get(a: string, b: string, compute: () => number): number {
    const key = a < b ? `${a}\u0000${b}` : `${b}\u0000${a}`;
    let v = this.values.get(key);
    if (v === undefined) {
      v = compute();
      this.values.set(key, v);
    }
    return v;
  }

  clear() {
    this.values.clear();
  }
}
