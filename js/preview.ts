// The page's preview mask while a range is dragged, updated for the dragged axis only.
//
// A drag changes one axis's selection per pointer move. The AND of every other axis's part is kept (built
// once, on the first move of the drag), so each move costs one pass over the rows: the kept part AND the
// dragged axis's code lookup, counted in the same pass. Each result is a new array (masks handed out are
// never changed; the density counts compare the old and new ones). Same result as selection.previewMask.

import type { Table } from "./data";
import { isEmpty, own, pickedCodes, previewMask, selKey, type AxisSel, type Sel } from "./selection";

const axisKey = (s: AxisSel | undefined) => (isEmpty(s) ? "" : selKey({ x: s! }));

export class Previewer {
  private table: Table | null = null;
  /** the selection of the last result, per axis */
  private last = new Map<string, string>();
  private lastResult: { mask: Uint8Array; count: number } | null = null;
  /** the axis left out of `rest`, the key of the other axes' selection, their AND (null: every row) */
  private axis: string | null = null;
  private othersKey = "";
  private rest: Uint8Array | null = null;
  /** what the last call did: "same", "one axis" or "full" (for tests) */
  lastWork: "same" | "one axis" | "full" = "full";

  reset() {
    this.table = null;
    this.last.clear();
    this.lastResult = null;
    this.axis = null;
    this.rest = null;
  }

  /** The preview mask and count of `sel` over the table's rows. */
  mask(table: Table, sel: Sel): { mask: Uint8Array; count: number } {
    if (table !== this.table) {
      this.reset();
      this.table = table;
    }
    const keys = new Map<string, string>();
    for (const name of Object.keys(sel)) {
      const s = own(sel, name);
      if (table.byName.has(name) && !isEmpty(s)) keys.set(name, axisKey(s));
    }
    const changed = new Set<string>();
    for (const [name, key] of keys) if (this.last.get(name) !== key) changed.add(name);
    for (const name of this.last.keys()) if (!keys.has(name)) changed.add(name);
    if (changed.size === 0 && this.lastResult) {
      this.lastWork = "same";
      return this.lastResult;
    }
    this.last = keys;
    if (changed.size !== 1) {
      this.axis = null;
      this.rest = null;
      this.lastWork = "full";
      return (this.lastResult = previewMask(table, sel));
    }
    const [name] = changed;
    const others = [...keys].filter(([k]) => k !== name).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    const othersKey = JSON.stringify(others);
    if (this.axis !== name || this.othersKey !== othersKey) {
      const without: Sel = Object.create(null);
      for (const [k] of others) without[k] = own(sel, k)!;
      this.rest = others.length ? previewMask(table, without).mask : null;
      this.axis = name;
      this.othersKey = othersKey;
    }
    const n = table.n;
    const out = new Uint8Array(n);
    const rest = this.rest;
    const s = own(sel, name);
    let count = 0;
    if (isEmpty(s)) {
      if (rest) out.set(rest);
      else out.fill(1);
      for (let i = 0; i < n; i++) count += out[i];
    } else {
      const lut = pickedCodes(table.byName.get(name)!, s!);
      const codes = table.byName.get(name)!.codes;
      if (rest) {
        for (let i = 0; i < n; i++) {
          const v = rest[i] & lut[codes[i]];
          out[i] = v;
          count += v;
        }
      } else {
        for (let i = 0; i < n; i++) {
          const v = lut[codes[i]];
          out[i] = v;
          count += v;
        }
      }
    }
    this.lastWork = "one axis";
    return (this.lastResult = { mask: out, count });
  }
}
