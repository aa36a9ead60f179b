// One view of the widget (one per output cell): the DOM, the two canvases and redraw scheduling, composed
// from the modules that do the work — kernel sync (sync.ts), lines layer (paint.ts), overlay (overlay.ts),
// hover and pin (hover.ts), legend (legend.ts), gestures (brush.ts) and test hooks (hooks.ts).

import { PairCache, rankCorrelation } from "./association";
import { AxisPicker } from "./axispicker";
import { attachBrush, type Hit } from "./brush";
import { colouring, hexToRgb, type Colouring } from "./colour";
import { decodeTable, isCategorical, rowSpread, type Table } from "./data";
import { attachHooks, publishCount, publishDrawn, publishLayout } from "./hooks";
import { drawRows, nearestRow, rowValues, type LineGeometry } from "./hover";
import { computeLayout, sideMargins, type Layout } from "./layout";
import { renderLegend } from "./legend";
import type { WidgetModel } from "./model";
import { autoAlpha, drawOverlay, readTheme, rowPlacement, scalesFor, uprightText, type Theme } from "./overlay";
import { LinePainter, type Mode, type PaintJob, type PaintResult } from "./paint";
import type { AxisScale } from "./scales";
import { ensureStyles } from "./style";
import { KernelSync } from "./sync";
import { fillBox, linesPerColumn, placeFloating, rowTitle, trimToFit } from "./valuesbox";
import { chartWidth } from "./wide";
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
  /** scrolls the chart sideways when its axes do not fit at the minimum spacing */
  private scroller = element("div", "axw-scroll");
  private stage = element("div", "axw-stage");
  /** the pinned row's values, docked below the chart */
  private dock = element("div", "axw-dock");
  private picker: AxisPicker;
  /** "axes 1–7 of 31 in view": shown while the chart scrolls sideways */
  private scrollHint = element("span", "axw-scroll-hint");
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
  private pairs = new PairCache();
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
    this.picker = new AxisPicker({
      axes: () => this.allAxes(),
      hidden: () => this.hiddenAxes(),
      withRange: () => new Set(Object.keys(this.sync.sel)),
      setHidden: (names) => {
        this.model.set("hidden", names);
        this.model.save_changes();
        this.readOrder();
        this.picker.refresh();
        this.resize();
      },
    });
    this.cleanup.push(() => this.picker.dispose());
    bar.append(this.status, this.legend, this.scrollHint, this.picker.button, this.modeButton);
    const onScroll = () => {
      this.updateScrollHint();
      if (this.hover >= 0) this.hoverAt(-1, -1); // the pointer no longer rests on that line
    };
    this.scroller.addEventListener("scroll", onScroll, { passive: true });
    this.cleanup.push(() => this.scroller.removeEventListener("scroll", onScroll));
    this.progress.setAttribute("role", "progressbar");
    this.stage.append(this.linesCanvas, this.overlayCanvas, this.progress, this.tip);
    this.scroller.append(this.stage);
    this.dock.hidden = true;
    this.root.append(bar, this.picker.panel, this.scroller, this.dock);
    this.painter = new LinePainter(
      this.linesCanvas,
      (f) => {
        this.progress.style.display = f === null ? "none" : "block";
        if (f !== null) this.progress.style.width = `${Math.round(f * 100)}%`;
      },
      (r) => this.painted(r),
    );
    attachHooks(this.root, {
      redraw: () => this.redrawTimed(),
      layersAt: (scale) => this.layersAt(scale),
      textBoxes: () => this.textBoxes(),
    });
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
    this.listen("change:hidden", () => {
      this.readOrder();
      this.picker.refresh();
      this.resize();
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
      over: (hit) => this.overHit(hit),
      commit: (r) => this.sync.edit(r, true),
    });
    this.cleanup.push(detach);
    // only a change of width matters (the docked values box changes the height, not the chart)
    let seenWidth = -1;
    const ro = new ResizeObserver(() => {
      if (this.root.clientWidth === seenWidth) return;
      seenWidth = this.root.clientWidth;
      this.resize();
    });
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
    this.pairs.clear();
    if (this.spread.length !== this.table.n) this.spread = rowSpread(this.table.n);
    this.readOrder();
  }

  /** Every axis in drawing order, hidden ones included (the `order` trait, completed). */
  private allAxes(): string[] {
    const order = (this.model.get("order") ?? []).filter((n) => this.table.byName.has(n));
    const rest = this.table.axes.map((a) => a.name).filter((n) => !order.includes(n));
    return [...order, ...rest];
  }

  private hiddenAxes(): Set<string> {
    return new Set(this.model.get("hidden") ?? []);
  }

  private readOrder() {
    const hidden = this.hiddenAxes();
    const all = this.allAxes();
    this.order = all.filter((n) => !hidden.has(n));
    if (this.order.length === 0) this.order = all;
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
      // `order` names every axis: the shown ones take the new order, hidden ones keep their places
      const shown = new Set(order);
      let next = 0;
      const full = this.allAxes().map((n) => (shown.has(n) ? order[next++] : n));
      this.model.set("order", full);
      this.model.save_changes();
    }
  }

  /** Rank association of each neighbouring pair (flips applied), from the page's codes. */
  private readouts(): { left: string; right: string; value: number }[] {
    const flipped = this.flipped();
    const out = [];
    for (let i = 0; i + 1 < this.order.length; i++) {
      const a = this.table.byName.get(this.order[i])!;
      const b = this.table.byName.get(this.order[i + 1])!;
      let v = this.pairs.get(a.name, b.name, () => rankCorrelation(a.codes, b.codes));
      if (flipped.has(a.name) !== flipped.has(b.name)) v = -v;
      out.push({ left: a.name, right: b.name, value: v });
    }
    return out;
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
    const visible = Math.max(200, this.root.clientWidth || 800);
    const h = Math.max(160, this.model.get("height") ?? 380);
    if (this.horizontal) return { w: visible, h: Math.max(h, 44 * this.order.length + 70) };
    // a minimum spacing between axes: wider than the page when needed (it then scrolls sideways)
    const first = this.table.byName.get(this.order[0]);
    return { w: chartWidth(visible, this.order.length, sideMargins(!!first && isCategorical(first))), h };
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
    this.stage.style.width = `${width}px`;
    this.root.dataset.scrolls = String(width > this.scroller.clientWidth + 1);
    this.updateScrollHint();
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
    return this.table.n > DENSITY_ROWS ? "density" : "lines";
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
    return {
      table: this.table,
      layout,
      scales: this.scales(),
      place: this.placement(),
      spread: this.spread,
      mask: shown.mask,
      colouring: this.colouringNow(),
      faded: hexToRgb(this.theme.faded),
      opacity: userOpacity > 0 ? Math.min(1, userOpacity) : autoAlpha(shown.count),
      mode: this.mode(),
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
    this.picker.refresh(); // ranges may have changed which axes can be hidden
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

  /** Which axes are in view when the chart is wider than the page (else no hint). */
  private updateScrollHint() {
    const x0 = this.scroller.scrollLeft;
    const x1 = x0 + this.scroller.clientWidth;
    const slots = this.horizontal ? [] : this.layout().slots;
    const inView = slots.map((s, i) => (s.x >= x0 && s.x <= x1 ? i : -1)).filter((i) => i >= 0);
    const all = inView.length === slots.length || inView.length === 0;
    this.scrollHint.hidden = all;
    if (!all) this.scrollHint.textContent = `axes ${inView[0] + 1}–${inView[inView.length - 1] + 1} of ${slots.length} in view ⇆`;
  }

  /** A header under the pointer: its full name and kind as the canvas's tooltip. */
  private overHit(hit: Hit | null) {
    const title = hit?.kind === "header" ? `${hit.axis} (${this.table.byName.get(hit.axis)?.kind ?? ""}) — click to flip, drag to move` : "";
    if (this.overlayCanvas.title !== title) this.overlayCanvas.title = title;
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
    // the hovered row floats beside the pointer; the pinned row docks below the chart
    const size = this.physicalSize();
    if (this.hover >= 0 && this.hover < n) {
      this.tip.style.display = "block";
      fillBox(this.tip, rowTitle(this.table, this.hover, this.hover === pinned), rowValues(this.table, layout, this.scales(), this.hover), linesPerColumn(size.h - 8));
      const pointer = layout.horizontal ? { x: this.pointer.y, y: this.pointer.x } : this.pointer;
      const x0 = this.scroller.scrollLeft;
      const visible = { x0, x1: x0 + (this.scroller.clientWidth || size.w), h: size.h };
      placeFloating(this.tip, pointer, visible);
      if (trimToFit(this.tip)) placeFloating(this.tip, pointer, visible);
    } else this.tip.style.display = "none";
    const dockRow = pinned >= 0 && pinned < n ? pinned : -1;
    if (dockRow < 0) this.dock.hidden = true;
    else if (this.dock.hidden || this.dock.dataset.row !== String(dockRow) || this.dock.dataset.layout !== String(this.order.length)) {
      this.dock.hidden = false;
      this.dock.dataset.row = String(dockRow);
      this.dock.dataset.layout = String(this.order.length);
      fillBox(this.dock, rowTitle(this.table, dockRow, true), rowValues(this.table, layout, this.scales(), dockRow), 0);
      const unpin = element("button", "axw-unpin");
      unpin.type = "button";
      unpin.textContent = "unpin";
      unpin.addEventListener("click", () => {
        this.model.set("pinned", -1);
        this.model.save_changes();
        this.invalidate(false);
      });
      this.dock.firstElementChild?.append(unpin);
    }
  }

  /**
   * Test hook: every text the overlay draws, with its box (logical CSS px), from a fresh overlay
   * drawing on a scratch canvas (vertical orientation).
   */
  textBoxes(): { text: string; font: string; x0: number; y0: number; x1: number; y1: number }[] {
    const { w, h } = this.physicalSize();
    const canvas = document.createElement("canvas");
    canvas.width = w;
    canvas.height = h;
    const ctx = canvas.getContext("2d")!;
    const boxes: { text: string; font: string; x0: number; y0: number; x1: number; y1: number }[] = [];
    const fill = ctx.fillText.bind(ctx);
    ctx.fillText = (text: string, x: number, y: number, maxWidth?: number) => {
      const m = ctx.measureText(text);
      const width = maxWidth !== undefined ? Math.min(maxWidth, m.width) : m.width;
      const t = ctx.getTransform();
      const align = ctx.textAlign;
      const left = align === "center" ? x - width / 2 : align === "right" || align === "end" ? x - width : x;
      const px = t.a * left + t.e;
      const py = t.d * y + t.f;
      boxes.push({ text, font: ctx.font, x0: px, x1: px + width * t.a, y0: py - m.actualBoundingBoxAscent * t.d, y1: py + m.actualBoundingBoxDescent * t.d });
      if (maxWidth === undefined) fill(text, x, y);
      else fill(text, x, y, maxWidth);
    };
    this.paintOverlay(canvas, 1);
    return boxes;
  }

  private updateStatus(layout: Layout) {
    const n = this.table.n;
    const fmt = (v: number) => v.toLocaleString("en-US");
    const { count, preview } = this.sync.status();
    this.status.textContent = preview ? `≈ ${fmt(count)} of ${fmt(n)} rows selected (checking…)` : `${fmt(count)} of ${fmt(n)} rows selected`;
    publishCount(this.root, count, n, preview);
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
