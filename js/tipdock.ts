// Where the values boxes go: the hovered row (or, resting on an axis, that axis's numbers) floats beside
// the pointer inside the visible part of the chart; the pinned row docks below the chart with an
// "unpin" button. The boxes themselves are valuesbox.ts.

import { element } from "./chartdom";
import type { Table } from "./data";
import { rowValues } from "./hover";
import type { Layout } from "./layout";
import type { AxisScale } from "./scales";
import { fillBox, linesPerColumn, placeFloating, rowTitle, trimToFit } from "./valuesbox";

export interface RowBoxes {
  table: Table;
  layout: Layout;
  scales: AxisScale[];
  hover: number;
  pinned: number;
  /** index of the axis under the pointer, or -1 */
  hoverAxis: number;
  /** a range is being dragged (no axis numbers then) */
  dragging: boolean;
  /** the pointer in logical coordinates */
  pointer: { x: number; y: number };
  /** the chart's size (CSS px) */
  size: { w: number; h: number };
  /** the selection numbers of axis i */
  axisText(i: number): string;
  unpin(): void;
}

/** Show, place or hide the floating box `tip` and the dock below the chart (`scroller`: the chart's scroll box). */
export function showRowBoxes(tip: HTMLElement, dock: HTMLElement, scroller: HTMLElement, b: RowBoxes) {
  const { table, layout, size, pinned } = b;
  const n = table.n;
  const pointer = layout.horizontal ? { x: b.pointer.y, y: b.pointer.x } : b.pointer;
  const x0 = scroller.scrollLeft;
  const visible = { x0, x1: x0 + (scroller.clientWidth || size.w), h: size.h };
  const onAxis = b.hoverAxis >= 0 && b.hoverAxis < layout.slots.length;
  if (onAxis && !b.dragging) {
    tip.style.display = "block";
    const text = document.createElement("div");
    text.className = "axw-tip-text";
    text.textContent = b.axisText(b.hoverAxis);
    tip.replaceChildren(text);
    placeFloating(tip, pointer, visible);
  } else if (!onAxis && b.hover >= 0 && b.hover < n) {
    tip.style.display = "block";
    fillBox(tip, rowTitle(table, b.hover, b.hover === pinned), rowValues(table, layout, b.scales, b.hover), linesPerColumn(size.h - 8));
    placeFloating(tip, pointer, visible);
    if (trimToFit(tip)) placeFloating(tip, pointer, visible);
  } else tip.style.display = "none";
  const dockRow = pinned >= 0 && pinned < n ? pinned : -1;
  const axes = String(layout.slots.length);
  if (dockRow < 0) dock.hidden = true;
  else if (dock.hidden || dock.dataset.row !== String(dockRow) || dock.dataset.layout !== axes) {
    dock.hidden = false;
    dock.dataset.row = String(dockRow);
    dock.dataset.layout = axes;
    fillBox(dock, rowTitle(table, dockRow, true), rowValues(table, layout, b.scales, dockRow), 0);
    const unpin = element("button", "axw-unpin");
    unpin.type = "button";
    unpin.textContent = "unpin";
    unpin.addEventListener("click", () => b.unpin());
    dock.firstElementChild?.append(unpin);
  }
}
