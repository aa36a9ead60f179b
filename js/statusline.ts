// The words about the chart: the status line in the bar (rows selected, preview or exact, estimate in the
// scale tier), the live summary for screen readers (with the keyboard-focused axis), and the selection
// numbers of one axis shown in the floating box.

import { axisStats, statsText } from "./axisstats";
import type { Table } from "./data";
import { publishCount } from "./hooks";
import type { KeyboardFocus } from "./keyboard";
import type { Layout } from "./layout";
import type { AxisScale } from "./scales";
import { statusText } from "./scaletier";
import type { Sel } from "./selection";
import { selectionSummary, valueText, type SelectionTools } from "./tools";
import type { Mode } from "./paint";

export interface StatusInput {
  table: Table;
  sel: Sel;
  scales: AxisScale[];
  layout: Layout;
  mode: Mode;
  /** the count shown and whether it is the page's preview */
  status: { count: number; preview: boolean };
  dragging: boolean;
  keys: KeyboardFocus | undefined;
}

/** Write the status line and the test hook's count; say the summary (not while a range is dragged). */
export function showStatus(root: HTMLElement, line: HTMLElement, tools: SelectionTools, s: StatusInput) {
  const { n, total, sampled } = s.table;
  const { count, preview } = s.status;
  const status = statusText({ count, preview, n, total, sampled, mode: s.mode });
  line.textContent = status.text;
  publishCount(root, status.count, sampled ? total : n, preview);
  if (!s.dragging) {
    const focus = s.keys?.active && s.keys.axis ? focusPhrase(s.keys, s.layout, s.scales) : "";
    tools.speak(focus + selectionSummary(s.table, s.sel, s.scales, status.count, preview));
  }
}

/** "Axis 3 of 10: flow_m3h (number). " — said when the keyboard focus is on an axis. */
export function focusPhrase(keys: KeyboardFocus, layout: Layout, scales: AxisScale[]): string {
  const i = keys.index();
  const slots = layout.slots;
  if (i < 0) return "";
  const sc = scales[i];
  const band = sc.categorical && keys.band >= 0 ? `, band ${sc.bandLabel(keys.band)}` : "";
  return `Axis ${i + 1} of ${slots.length}: ${slots[i].name} (${sc.axis.kind}${sc.flipped ? ", flipped" : ""}${band}). `;
}

/** The selection numbers of an axis (selected vs all rows, median or most common label, missing), kept per axis and mask. */
export class AxisNumbers {
  /** the last axis numbers computed (one pass over the rows), kept while axis and mask stay the same */
  private cache: { axis: object; mask: Uint8Array | null; stats: ReturnType<typeof axisStats> } | null = null;

  /** The text for the axis of `sc`; `contrast`: the axes the kernel marked, most different first. */
  text(sc: AxisScale, mask: Uint8Array | null, contrast: string[]): string {
    const rank = contrast.indexOf(sc.axis.name);
    const marks = rank >= 0 ? [`marked: rank ${rank + 1} of the axes where the selected rows differ most (w.contrast())`] : [];
    const c = this.cache;
    const st = c && c.axis === sc.axis && c.mask === mask ? c.stats : axisStats(sc.axis, mask);
    this.cache = { axis: sc.axis, mask, stats: st };
    return statsText(st, sc.axis.kind, (v) => valueText(sc, v), (b) => sc.bandLabel(b), marks);
  }
}
