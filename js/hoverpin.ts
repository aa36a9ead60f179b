// The view's hover and pin state: the row whose line is nearest the pointer, the axis under the pointer,
// pinning by a click (the `pinned` trait), and the highlight drawn for them — a strong line each
// (hover.ts) and their values in the floating box and the dock (tipdock.ts).

import type { Hit } from "./brush";
import type { Table } from "./data";
import { drawRows, nearestRow, type LineGeometry } from "./hover";
import type { Layout } from "./layout";
import type { WidgetModel } from "./model";
import type { AxisScale } from "./scales";
import { showRowBoxes } from "./tipdock";

/** Okabe–Ito vermillion: the pinned row */
const PINNED = "#D55E00";

export interface HoverHost {
  table(): Table;
  layout(): Layout;
  scales(): AxisScale[];
  /** where the lines run now (hover.ts) */
  geometry(): LineGeometry;
  /** the chart's size (CSS px) */
  size(): { w: number; h: number };
  /** a range is being dragged */
  dragging(): boolean;
  /** the selection numbers of axis i */
  axisText(i: number): string;
  /** redraw the overlay */
  changed(): void;
}

export class HoverPin {
  /** the hovered row, or -1 */
  row = -1;
  /** index of the axis under the pointer (its numbers in the box), or -1 */
  axis = -1;
  /** last pointer position over the chart (logical coordinates), to place the values box */
  private pointer = { x: 0, y: 0 };

  constructor(
    private model: WidgetModel,
    private els: { tip: HTMLElement; dock: HTMLElement; scroller: HTMLElement; overlayCanvas: HTMLElement },
    private host: HoverHost,
  ) {}

  get pinned(): number {
    return this.model.get("pinned") ?? -1;
  }

  /** The pointer rests at (x, y) (logical; -1: off the chart): the row nearest it is hovered. */
  at(x: number, y: number) {
    if (x >= 0) this.pointer = { x, y };
    const row = nearestRow(this.host.geometry(), x, y);
    if (row === this.row) return;
    this.row = row;
    this.host.changed();
  }

  /** Pin the hovered row (unpin when it is the pinned one). */
  pin() {
    const row = this.row;
    this.setPinned(row === this.pinned ? -1 : row);
  }

  private setPinned(row: number) {
    this.model.set("pinned", row);
    this.model.save_changes();
    this.host.changed();
  }

  /** A header under the pointer: its full name and kind as the canvas's tooltip. */
  over(hit: Hit | null) {
    const title = hit?.kind === "header" ? `${hit.axis} (${this.host.table().byName.get(hit.axis)?.kind ?? ""}) — click to flip, drag to move` : "";
    if (this.els.overlayCanvas.title !== title) this.els.overlayCanvas.title = title;
  }

  /** The hovered and the pinned row: a strong line each, and their values in a small box. */
  draw(ctx: CanvasRenderingContext2D, fg: string) {
    const host = this.host;
    const pinned = this.pinned;
    const table = host.table();
    const n = table.n;
    const rows = [pinned, this.row].filter((r, i, all) => r >= 0 && r < n && all.indexOf(r) === i);
    const layout = host.layout();
    drawRows(ctx, host.geometry(), rows, pinned, { fg, pinned: PINNED });
    showRowBoxes(this.els.tip, this.els.dock, this.els.scroller, {
      table,
      layout,
      scales: host.scales(),
      hover: this.row,
      pinned,
      hoverAxis: this.axis,
      dragging: host.dragging(),
      pointer: this.pointer,
      size: host.size(),
      axisText: (i) => host.axisText(i),
      unpin: () => this.setPinned(-1),
    });
  }
}
