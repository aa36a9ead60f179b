// The chart's geometry: which axes are shown in what order (the `order`, `hidden` and `flipped` traits),
// the size of the drawing area, and the layout, scales and row placement computed from them (cached
// until the order, size, table or flips change).

import { isCategorical, type Table } from "./data";
import { computeLayout, sideMargins, type Layout } from "./layout";
import type { WidgetModel } from "./model";
import { rowPlacement, scalesFor } from "./overlay";
import type { AxisScale } from "./scales";
import { chartWidth } from "./wide";

export class ChartLayout {
  /** the shown axes in drawing order */
  order: string[] = [];
  private layoutCache: Layout | null = null;
  private scaleCache: AxisScale[] = [];
  private placementCache: { key: Layout; value: ReturnType<typeof rowPlacement> } | null = null;

  constructor(
    private model: WidgetModel,
    private table: () => Table,
    /** the width the page gives the view (CSS px; 0 before it is shown) */
    private pageWidth: () => number,
  ) {}

  get horizontal(): boolean {
    return this.model.get("orientation") === "horizontal";
  }

  /** Compute the layout afresh when next asked (size, order, flips or table changed). */
  forget() {
    this.layoutCache = null;
  }

  /** Every axis in drawing order, hidden ones included (the `order` trait, completed). */
  allAxes(): string[] {
    const table = this.table();
    const order = (this.model.get("order") ?? []).filter((n) => table.byName.has(n));
    const rest = table.axes.map((a) => a.name).filter((n) => !order.includes(n));
    return [...order, ...rest];
  }

  hiddenAxes(): Set<string> {
    return new Set(this.model.get("hidden") ?? []);
  }

  /** Read the shown axes from the traits (all of them when every axis is hidden). */
  readOrder() {
    const hidden = this.hiddenAxes();
    const all = this.allAxes();
    this.order = all.filter((n) => !hidden.has(n));
    if (this.order.length === 0) this.order = all;
    this.layoutCache = null;
  }

  /** The shown axes in a new order (a drag in progress or done). */
  setOrder(order: string[]) {
    this.order = order;
    this.layoutCache = null;
  }

  /** The `order` trait for the shown axes in `order`: hidden ones keep their places. */
  fullOrder(order: string[]): string[] {
    const shown = new Set(order);
    let next = 0;
    return this.allAxes().map((n) => (shown.has(n) ? order[next++] : n));
  }

  flipped(): Set<string> {
    return new Set(this.model.get("flipped") ?? []);
  }

  /** Size of the drawing area on the page, in CSS pixels. */
  physicalSize(): { w: number; h: number } {
    const visible = Math.max(200, this.pageWidth() || 800);
    const h = Math.max(160, this.model.get("height") ?? 380);
    if (this.horizontal) return { w: visible, h: Math.max(h, 44 * this.order.length + 70) };
    // a minimum spacing between axes: wider than the page when needed (it then scrolls sideways)
    const first = this.table().byName.get(this.order[0]);
    return { w: chartWidth(visible, this.order.length, sideMargins(!!first && isCategorical(first))), h };
  }

  /** The layout in logical coordinates (axes vertical); see Layout.horizontal. */
  layout(): Layout {
    if (!this.layoutCache) {
      const table = this.table();
      const { w, h } = this.physicalSize();
      const first = table.byName.get(this.order[0]);
      const horizontal = this.horizontal;
      this.layoutCache = horizontal
        ? computeLayout(h, w, this.order, false, true)
        : computeLayout(w, h, this.order, !!first && isCategorical(first));
      const flipped = this.flipped();
      // across the page values grow to the right: logically that is a flipped axis
      const shown = new Set(this.order.filter((a) => flipped.has(a) !== horizontal));
      this.scaleCache = scalesFor(table, this.layoutCache, shown);
    }
    return this.layoutCache;
  }

  scales(): AxisScale[] {
    this.layout();
    return this.scaleCache;
  }

  /** Where each row sits on each axis (see overlay.rowPlacement), kept per layout. */
  placement() {
    const layout = this.layout();
    if (this.placementCache?.key !== layout) this.placementCache = { key: layout, value: rowPlacement(this.scales(), layout) };
    return this.placementCache.value;
  }
}
