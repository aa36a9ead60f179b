// One view of the widget (one per output cell): the DOM, the two canvases and redraw scheduling, composed
// from the modules that do the work — kernel sync (sync.ts), lines layer (paint.ts), overlay (overlay.ts),
// hover and pin (hover.ts), legend (legend.ts), gestures (brush.ts) and test hooks (hooks.ts).

import { neighbourReadouts, RankLookup, type Readout } from "./association";
import { attachBrush } from "./brush";
import { colouring, hexToRgb, type Colouring } from "./colour";
import { decodeTable, isCategorical, rowSpread, type Table } from "./data";
import { attachHooks, publishCount, publishDrawn, publishLayout } from "./hooks";
import { drawRows, nearestRow, placeTip, rowText, type LineGeometry } from "./hover";
import { computeLayout, type Layout } from "./layout";
import { renderLegend } from "./legend";
import type { WidgetModel } from "./model";
import { autoAlpha, drawOverlay, readTheme, rowPlacement, scalesFor, uprightText, type Theme } from "./overlay";
import { LinePainter, type Mode, type PaintJob, type PaintResult } from "./paint";
import type { AxisScale } from "./scales";
import { ensureStyles } from "./style";
import { PairLookup, pairCountsOf, statusText } from "./scaletier";
import { KernelSync } from "./sync";
import { DENSITY_ROWS, OPTIONS } from "./wire";

/** Okabe–Ito vermillion: the pinned row */
const PINNED = "#D55E00";

function element<K extends keyof HTMLElementTagNameMap>(tag: K, className: string): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  el.className = className;
  return el;
}

export class View {
  readonly root = element("div", "axw-root");
  private status = element("div", "axw-status");
  private legend = element("div", "axw-legend");
  private modeButton = element("button", "axw-mode");
  private stage = element("div", "axw-stage");
  private linesCanvas = element("canvas", "axw-lines");
  private overlayCanvas = element("canvas", "axw-overlay");
  private progress = element("div", "axw-progress");
  private tip = element("div", "axw-tip");
  private table!: Table;
  private order: string[] = [];
  private spread: Float32Array = new Float32Array(0);
  private sync: KernelSync;
  private layoutCache: Layout | null = null;
  private scaleCache: AxisScale[] = [];
  private placementCache: { key: Layout; value: ReturnType<typeof rowPlacement> } | null = null;
  private theme: Theme;
  private frame = 0;
  private dirtyLines = true;
  private dirtyOverlay = true;
  private cleanup: (() => void)[] = [];
  private ranks: RankLookup | null = null;
  /** the kernel's pair counts (scale tier), decoded on first use */
  private kernelPairs: PairLookup | null = null;
  private painter: LinePainter;
  private hist: PaintResult | null = null;
  private colours: Colouring | null = null;
  private hover = -1;
  private drawn = 0;
  private waiters: ((ms: number) => void)[] = [];
  /** last pointer position over the chart (logical coordinates), to place the values box */
  private pointer = { x: 0, y: 0 };

  constructor(
    private model: WidgetModel,
    host: HTMLElement,
  ) {
    const bar = element("div", "axw-bar");
    this.modeButton.type = "button";
    this.modeButton.title = "switch between one line per row and the density view";
    this.modeButton.addEventListener("click", () => {
      this.model.set("view_mode", this.mode() === "density" ? "lines" : "density");
      this.model.save_changes();
      this.invalidate(true);
    });
    bar.append(this.status, this.legend, this.modeButton);
    this.progress.setAttribute("role", "progressbar");
    this.stage.append(this.linesCanvas, this.overlayCanvas, this.progress, this.tip);
    this.root.append(bar, this.stage);
    this.painter = new LinePainter(
      this.linesCanvas,
      (f) => {
        this.progress.style.display = f === null ? "none" : "block";
        if (f !== null) this.progress.style.width = `${Math.round(f * 100)}%`;
      },
      (r) => this.painted(r),
    );
    attachHooks(this.root, { redraw: () => this.redrawTimed(), layersAt: (scale) => this.layersAt(scale) });
    host.appendChild(this.root);
    ensureStyles(this.root);
    this.theme = readTheme(host);
    this.loadTable();
    this.sync = new KernelSync(model, { table: () => this.table, invalidate: (lines) => this.invalidate(lines) });
    this.cleanup.push(() => this.sync.dispose());

    this.listen("change:table", () => {
      this.loadTable();
      this.sync.tableChanged();
      this.invalidate(true);
    });
    this.listen("change:order", () => {
      if (this.sync.dragging) return;
      this.readOrder();
      this.invalidate(true);
    });
    this.listen("change:height", () => this.resize());
    this.listen("change:orientation", () => this.resize());
    this.listen("change:color_by", () => {
      this.colours = null; // the colour groups depend on the colour column only
      this.invalidate(true);
    });
    const handled = new Set(["height", "orientation", "color_by"]);
    for (const name of OPTIONS) if (!handled.has(name)) this.listen(`change:${name}`, () => this.invalidate(true));
    this.listen("change:pinned", () => this.invalidate(false));
    this.listen("change:pair_counts", () => {
      this.kernelPairs = null;
      if (this.table.sampled) this.invalidate(true);
    });
    this.listen("change:rank_matrix", () => {
      this.ranks = null;
      this.invalidate(false);
    });
    this.listen("change:flipped", () => {
      this.layoutCache = null;
      this.invalidate(true);
    });

    const detach = attachBrush(this.overlayCanvas, {
      layout: () => this.layout(),
      scales: () => this.scales(),
      selection: () => this.sync.sel,
      flip: (axis) => this.flip(axis),
      reorder: (order, final) => this.reorder(order, final),
      preview: (r) => this.sync.edit(r, false),
      hover: (x, y) => this.hoverAt(x, y),
      toLogical: (x, y) => (this.horizontal ? { x: y, y: x } : { x, y }),
      pin: () => this.pinHover(),
      commit: (r) => this.sync.edit(r, true),
    });
    this.cleanup.push(detach);
    const ro = new ResizeObserver(() => this.resize());
    ro.observe(this.root);
    this.cleanup.push(() => ro.disconnect());
    this.resize();
  }

  private listen(event: `change:${string}`, cb: () => void) {
    this.model.on(event, cb);
    this.cleanup.push(() => this.model.off(event, cb));
  }

  private loadTable() {
    this.table = decodeTable(this.model.get("table"));
    this.colours = null;
    this.hist = null;
    this.hover = -1;
    if (this.spread.length !== this.table.n) this.spread = rowSpread(this.table.n);
    this.readOrder();
  }

  private readOrder() {
    const order = this.model.get("order") ?? [];
    this.order = order.filter((n) => this.table.byName.has(n));
    if (this.order.length === 0) this.order = this.table.axes.map((a) => a.name);
    this.layoutCache = null;
  }

  private flipped(): Set<string> {
    return new Set(this.model.get("flipped") ?? []);
  }

  private flip(axis: string) {
    const now = this.flipped();
    if (now.has(axis)) now.delete(axis);
    else now.add(axis);
    this.model.set("flipped", [...now]);
    this.model.save_changes();
    this.layoutCache = null;
    this.invalidate(true);
  }

  private reorder(order: string[], final: boolean) {
    this.order = order;
    this.layoutCache = null;
    this.invalidate(true);
    if (final) {
      this.model.set("order", order);
      this.model.save_changes();
    }
  }

  /** Rank association of each neighbouring pair (flips applied), looked up in the kernel's rank_matrix. */
  private readouts(): Readout[] {
    this.ranks ??= new RankLookup(this.model.get("rank_matrix"));
    return neighbourReadouts(this.order, this.flipped(), this.ranks);
  }

  private invalidate(lines: boolean) {
    if (lines) this.dirtyLines = true;
    this.dirtyOverlay = true;
    if (this.frame) return;
    this.frame = requestAnimationFrame(() => {
      this.frame = 0;
      this.paint();
    });
  }

  get horizontal(): boolean {
    return this.model.get("orientation") === "horizontal";
  }

  /** Size of the drawing area on the page, in CSS pixels. */
  private physicalSize(): { w: number; h: number } {
    const w = Math.max(200, this.root.clientWidth || 800);
    const h = Math.max(160, this.model.get("height") ?? 380);
    return this.horizontal ? { w, h: Math.max(h, 44 * this.order.length + 70) } : { w, h };
  }

  /** The layout in logical coordinates (axes vertical); see Layout.horizontal. */
  layout(): Layout {
    if (!this.layoutCache) {
      const { w, h } = this.physicalSize();
      const first = this.table.byName.get(this.order[0]);
      const horizontal = this.horizontal;
      this.layoutCache = horizontal
        ? computeLayout(h, w, this.order, false, true)
        : computeLayout(w, h, this.order, !!first && isCategorical(first));
      const flipped = this.flipped();
      // across the page values grow to the right: logically that is a flipped axis
      const shown = new Set(this.order.filter((a) => flipped.has(a) !== horizontal));
      this.scaleCache = scalesFor(this.table, this.layoutCache, shown);
    }
    return this.layoutCache;
  }

  scales(): AxisScale[] {
    this.layout();
    return this.scaleCache;
  }

  private placement() {
    const layout = this.layout();
    if (this.placementCache?.key !== layout) this.placementCache = { key: layout, value: rowPlacement(this.scales(), layout) };
    return this.placementCache.value;
  }

  private resize() {
    this.layoutCache = null;
    this.layout();
    const { w: width, h: height } = this.physicalSize();
    const dpr = window.devicePixelRatio || 1;
    this.stage.style.height = `${height}px`;
    for (const c of [this.linesCanvas, this.overlayCanvas]) {
      c.width = Math.round(width * dpr);
      c.height = Math.round(height * dpr);
      c.style.width = `${width}px`;
      c.style.height = `${height}px`;
    }
    this.invalidate(true);
  }

  /** "lines" or "density": the user's choice, or by row count when "auto". */
  mode(): Mode {
    const m = this.model.get("view_mode") ?? "auto";
    if (m === "lines" || m === "density") return m;
    return this.table.sampled || this.table.n > DENSITY_ROWS ? "density" : "lines";
  }

  private colouringNow(): Colouring {
    if (!this.colours) {
      const by = this.model.get("color_by");
      this.colours = colouring(by ? this.table.byName.get(by) : undefined, hexToRgb(this.theme.line));
      renderLegend(this.legend, this.colours, by, this.scales().find((x) => x.axis.name === by));
    }
    return this.colours;
  }

  /** What the lines layer should show now, drawn at a pixel ratio. */
  private job(dpr: number): PaintJob {
    const layout = this.layout();
    const shown = this.sync.shown();
    const userOpacity = Number(this.model.get("opacity") ?? 0);
    const bundleBy = this.model.get("bundle_by");
    const bundleAxis = bundleBy ? layout.slots.findIndex((s) => s.name === bundleBy) : -1;
    const strength = Math.min(1, Math.max(0, Number(this.model.get("bundle_strength") ?? 0.5)));
    const mode = this.mode();
    // scale tier, density view: the kernel's pair counts over every row, in the line colour
    const scaleTier = this.table.sampled && mode === "density";
    let kernel: PaintJob["kernel"] = null;
    if (scaleTier) {
      this.kernelPairs ??= new PairLookup(pairCountsOf(this.model.get("pair_counts")));
      kernel = { pairs: this.kernelPairs.forOrder(layout.slots.map((s) => s.name)), selectedFresh: this.sync.answers(this.kernelPairs.seq) };
    }
    const line = hexToRgb(this.theme.line);
    const rowWeight = this.table.total / Math.max(1, this.table.n);
    return {
      table: this.table,
      layout,
      scales: this.scales(),
      // the density view does not place rows (hover computes the placement when it needs it)
      place: mode === "lines" ? this.placement() : [],
      spread: this.spread,
      mask: shown.mask,
      colouring: scaleTier ? { group: null, palette: [line], legend: { kind: "none" } } : this.colouringNow(),
      faded: hexToRgb(this.theme.faded),
      // in the scale tier a sample row stands for N / k rows: the opacity of as many rows as that
      opacity: userOpacity > 0 ? Math.min(1, userOpacity) : autoAlpha(scaleTier ? shown.count * rowWeight : shown.count),
      mode,
      follow: this.sync.dragging,
      kernel,
      rowWeight,
      curves: !!this.model.get("curves"),
      bundle: bundleAxis >= 0 ? { axis: bundleAxis, strength } : null,
      dpr,
      transpose: layout.horizontal,
    };
  }

  /** Axes, ranges, readouts and the highlighted rows, drawn into a canvas at a pixel ratio. */
  private paintOverlay(canvas: HTMLCanvasElement, dpr: number) {
    const layout = this.layout();
    const ctx = canvas.getContext("2d")!;
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.clearRect(0, 0, canvas.width, canvas.height);
    let restore = () => {};
    if (layout.horizontal) {
      ctx.setTransform(0, dpr, dpr, 0, 0, 0);
      restore = uprightText(ctx, dpr);
    } else ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    const hist = this.model.get("histograms") === false ? null : this.hist;
    drawOverlay(ctx, layout, this.scales(), this.sync.sel, this.theme, this.readouts(), hist);
    this.drawHighlight(ctx);
    restore();
  }

  private paint() {
    const layout = this.layout();
    const dpr = window.devicePixelRatio || 1;
    if (this.dirtyLines) {
      this.dirtyLines = false;
      const job = this.job(dpr);
      this.modeButton.textContent = job.mode === "density" ? "density ⇄ lines" : "lines ⇄ density";
      this.root.dataset.mode = job.mode;
      this.painter.paint(job);
      if (this.drawn === 0 && this.dirtyOverlay) {
        // first picture: the overlay and the status line in a task of their own (no long task)
        setTimeout(() => this.invalidate(false), 0);
        return;
      }
    }
    if (this.dirtyOverlay) {
      this.paintOverlay(this.overlayCanvas, dpr);
      this.dirtyOverlay = false;
    }
    this.updateStatus(layout);
  }

  /**
   * The chart's layers drawn afresh at `scale` device pixels per CSS pixel (for a sharp PNG at any
   * scale): the lines layer and the overlay, in drawing order.
   */
  async layersAt(scale: number): Promise<HTMLCanvasElement[]> {
    const { w, h } = this.physicalSize();
    const make = () => {
      const c = document.createElement("canvas");
      c.width = Math.round(w * scale);
      c.height = Math.round(h * scale);
      return c;
    };
    const lines = make();
    const overlay = make();
    await new Promise<void>((resolve) => {
      const painter: LinePainter = new LinePainter(lines, () => {}, () => {
        painter.dispose();
        resolve();
      });
      painter.paint(this.job(scale));
    });
    this.paintOverlay(overlay, scale);
    return [lines, overlay];
  }

  private painted(r: PaintResult) {
    this.hist = r;
    this.drawn++;
    publishDrawn(this.root, this.drawn, r);
    this.invalidate(false);
    for (const w of this.waiters.splice(0)) w(r.ms);
  }

  /** Redraw everything now and resolve with the milliseconds the lines layer took (a bench hook). */
  redrawTimed(): Promise<number> {
    // a full redraw counts the density view's pairs from zero (the bench times the counting pass)
    this.painter.forgetCounts();
    return new Promise((resolve) => {
      this.waiters.push(resolve);
      this.invalidate(true);
    });
  }

  // -- hover and pin (hover.ts) ----------------------------------------------------------------------
  private geometry(): LineGeometry {
    return {
      table: this.table,
      layout: this.layout(),
      place: this.placement(),
      spread: this.spread,
      curves: !!this.model.get("curves"),
      bundle: this.mode() === "lines" ? (this.hist?.bundle ?? null) : null,
    };
  }

  private hoverAt(x: number, y: number) {
    if (x >= 0) this.pointer = { x, y };
    const row = nearestRow(this.geometry(), x, y);
    if (row === this.hover) return;
    this.hover = row;
    this.invalidate(false);
  }

  private pinHover() {
    const row = this.hover;
    const now = this.model.get("pinned") ?? -1;
    this.model.set("pinned", row === now ? -1 : row);
    this.model.save_changes();
    this.invalidate(false);
  }

  /** The hovered and the pinned row: a strong line each, and their values in a small box. */
  private drawHighlight(ctx: CanvasRenderingContext2D) {
    const pinned = this.model.get("pinned") ?? -1;
    const n = this.table.n;
    const rows = [pinned, this.hover].filter((r, i, all) => r >= 0 && r < n && all.indexOf(r) === i);
    const layout = this.layout();
    drawRows(ctx, this.geometry(), rows, pinned, { fg: this.theme.fg, pinned: PINNED });
    const show = this.hover >= 0 ? this.hover : pinned;
    const text = show >= 0 && show < n ? rowText(this.table, layout, this.scales(), show, show === pinned) : null;
    const pointer = layout.horizontal ? { x: this.pointer.y, y: this.pointer.x } : this.pointer;
    placeTip(this.tip, text, pointer, this.physicalSize());
  }

  private updateStatus(layout: Layout) {
    const { n, total, sampled } = this.table;
    const { count, preview } = this.sync.status();
    const status = statusText({ count, preview, n, total, sampled, mode: this.mode() });
    this.status.textContent = status.text;
    publishCount(this.root, status.count, sampled ? total : n, preview);
    publishLayout(this.root, {
      layout,
      scales: this.scales(),
      sel: this.sync.sel,
      readouts: this.readouts(),
      hover: this.hover,
      pinned: this.model.get("pinned") ?? -1,
    });
  }

  destroy() {
    this.painter.dispose();
    cancelAnimationFrame(this.frame);
    for (const f of this.cleanup) f();
    this.root.remove();
  }
}
