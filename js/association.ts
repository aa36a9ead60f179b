// Rank association between neighbouring axes, looked up in the kernel's `rank_matrix` trait.
//
// The kernel computes Spearman's rho between every pair of axes (on a seeded sample above 200,000 rows),
// so nothing here touches the rows: a readout is one lookup, and an exported page shows the same values
// because traits are saved with it. A flip of exactly one axis of a pair turns the sign. A missing
// matrix, a missing axis or a NaN (null) value means no readout for that pair.

import type { RankMatrixTrait } from "./model";

export interface Readout {
  left: string;
  right: string;
  /** rho with flips applied; NaN when the kernel has no value (nothing is drawn) */
  value: number;
}

/** Index of a rank matrix by axis name (built once per trait value). */
export class RankLookup {
  private index = new Map<string, number>();
  private values: (number | null)[][] = [];

  constructor(matrix: RankMatrixTrait | Record<string, never> | null | undefined) {
    const axes = matrix && Array.isArray((matrix as RankMatrixTrait).axes) ? (matrix as RankMatrixTrait).axes : [];
    const values = matrix && Array.isArray((matrix as RankMatrixTrait).values) ? (matrix as RankMatrixTrait).values : [];
    axes.forEach((name, i) => {
      if (!this.index.has(name)) this.index.set(name, i);
    });
    this.values = values;
  }

  /** rho between two axes (unflipped), NaN when unknown. */
  value(a: string, b: string): number {
    const i = this.index.get(a);
    const j = this.index.get(b);
    if (i === undefined || j === undefined) return NaN;
    const v = this.values[i]?.[j] ?? this.values[j]?.[i];
    return typeof v === "number" && isFinite(v) ? v : NaN;
  }
}

/** The readout of each neighbouring pair of `order`, negated where exactly one of the two axes is flipped. */
export function neighbourReadouts(order: string[], flipped: Set<string>, ranks: RankLookup): Readout[] {
  const out: Readout[] = [];
  for (let i = 0; i + 1 < order.length; i++) {
    const left = order[i];
    const right = order[i + 1];
    let v = ranks.value(left, right);
    if (flipped.has(left) !== flipped.has(right)) v = -v;
    out.push({ left, right, value: v === 0 ? 0 : v });
  }
  return out;
}
