// Selection numbers for one axis, from the page's wire codes: rows selected vs all rows, the median
// (number, date and duration axes) or the most common label (category and yes/no axes), and the
// missing values. Category counts are exact; a median is read from 2-byte codes, so it is right to
// within one quantisation step (1/65,535 of the axis's span; on a log axis, of its log span).

import { bandCount, codeToValue, CODE_MISSING, isCategorical, type AxisData } from "./data";
import { CODE_COUNT } from "./wire";

export interface GroupStats {
  rows: number;
  missing: number;
  /** median value (axis units) of the rows with a value; NaN when none */
  median: number;
  /** most common band and its row count (category axes); -1 when none */
  mode: number;
  modeRows: number;
}

export interface AxisStats {
  axis: string;
  categorical: boolean;
  all: GroupStats;
  selected: GroupStats;
}

/** Median of a histogram over codes: the value of the middle code (mean of the two middle ones). */
function medianOf(hist: Uint32Array, total: number, axis: AxisData): number {
  if (total === 0) return NaN;
  const lowRank = Math.floor((total - 1) / 2);
  const highRank = Math.floor(total / 2);
  let seen = 0;
  let low = -1;
  for (let c = 0; c < CODE_MISSING; c++) {
    const k = hist[c];
    if (!k) continue;
    if (low < 0 && seen + k > lowRank) low = c;
    if (seen + k > highRank) return (codeToValue(axis, low) + codeToValue(axis, c)) / 2;
    seen += k;
  }
  return NaN;
}

function group(hist: Uint32Array, axis: AxisData): GroupStats {
  const missing = hist[CODE_MISSING];
  let rows = missing;
  if (isCategorical(axis)) {
    let mode = -1;
    let modeRows = 0;
    for (let b = 0; b < bandCount(axis); b++) {
      rows += hist[b];
      if (hist[b] > modeRows) {
        mode = b;
        modeRows = hist[b];
      }
    }
    return { rows, missing, median: NaN, mode, modeRows };
  }
  let present = 0;
  for (let c = 0; c < CODE_MISSING; c++) present += hist[c];
  rows += present;
  return { rows, missing, median: medianOf(hist, present, axis), mode: -1, modeRows: 0 };
}

/** Stats of all rows and of the selected ones (`mask`: 1 per selected row; null = every row). */
export function axisStats(axis: AxisData, mask: Uint8Array | null): AxisStats {
  const all = new Uint32Array(CODE_COUNT);
  const sel = new Uint32Array(CODE_COUNT);
  const codes = axis.codes;
  const n = codes.length;
  if (mask) {
    for (let i = 0; i < n; i++) {
      const c = codes[i];
      all[c]++;
      if (mask[i]) sel[c]++;
    }
  } else {
    for (let i = 0; i < n; i++) all[codes[i]]++;
    sel.set(all);
  }
  return { axis: axis.name, categorical: isCategorical(axis), all: group(all, axis), selected: group(sel, axis) };
}

const fmt = (v: number) => v.toLocaleString("en-US");

/**
 * The text of the axis box: one line per figure, selected beside all. `format` prints a value of the
 * axis, `label` names a band; `marks` are extra lines (e.g. why the axis is marked).
 */
export function statsText(st: AxisStats, kind: string, format: (v: number) => string, label: (band: number) => string, marks: string[] = []): string {
  const rows: [string, string, string][] = [["", "selected", "all"]];
  rows.push(["rows", fmt(st.selected.rows), fmt(st.all.rows)]);
  if (st.categorical) {
    const m = (g: GroupStats) => (g.mode < 0 ? "–" : `${label(g.mode)} (${fmt(g.modeRows)})`);
    rows.push(["most common", m(st.selected), m(st.all)]);
  } else {
    const m = (g: GroupStats) => (Number.isNaN(g.median) ? "–" : format(g.median));
    rows.push(["median ≈", m(st.selected), m(st.all)]);
  }
  if (st.all.missing) rows.push(["missing", fmt(st.selected.missing), fmt(st.all.missing)]);
  const w0 = Math.max(...rows.map((r) => r[0].length));
  const w1 = Math.max(...rows.map((r) => r[1].length));
  const lines = [`${st.axis} (${kind})`, ...rows.map(([a, b, c]) => `${a.padEnd(w0)}  ${b.padStart(w1)}  ${c}`)];
  if (!st.categorical) lines.push("≈ medians from the page's 2-byte codes (within 1/65,535 of the axis)");
  return [...lines, ...marks].join("\n");
}
