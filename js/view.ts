// One view of the widget (one per output cell): the DOM, the two canvases and redraw scheduling, composed
// from the modules that do the work — kernel sync (sync.ts), lines layer (paint.ts), overlay (overlay.ts),
// hover and pin (hover.ts), legend (legend.ts), gestures (brush.ts) and test hooks (hooks.ts).

import { neighbourReadouts, RankLookup, type Readout } from "./association";
import { AxisPicker } from "./axispicker";
import { axisStats, statsText } from "./axisstats";
import { attachBrush, type Hit } from "./brush";
import { colouring, hexToRgb, type Colouring } from "./colour";
import { decodeTable, isCategorical, rowSpread, type Table } from "./data";
import { SAVED_GROUPS, savedColouring } from "./groups";
import { attachHooks, publishCount, publishDrawn, publishLayout } from "./hooks";
import { drawRows, nearestRow, rowValues, type LineGeometry } from "./hover";
import { computeLayout, sideMargins, type Layout } from "./layout";
import { renderLegend } from "./legend";
import { KeyboardFocus } from "./keyboard";
import { drawContrastMarks, drawFocus } from "./marks";
import type { WidgetModel } from "./model";
import { autoAlpha, drawOverlay, readTheme, rowPlacement, scalesFor, uprightText, type Theme } from "./overlay";
import { LinePainter, type Mode, type PaintJob, type PaintResult } from "./paint";
import type { AxisScale } from "./scales";
import { ensureStyles } from "./style";
import { PairLookup, pairCountsOf, statusText } from "./scaletier";
import { KernelSync } from "./sync";
import { fillBox, linesPerColumn, placeFloating, rowTitle, trimToFit } from "./valuesbox";
import { chartWidth } from "./wide";
import { themeKey, watchTheme } from "./theme";
import { selectionSummary, SelectionTools, valueText } from "./tools";
import { own, previewMask, selKey, type Sel } from "./selection";
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
  /** selection tools (clear all, undo/redo, invert), the live summary and the callback error line */
  private tools: SelectionTools;
  private keys: KeyboardFocus;
  /** index of the axis under the pointer (its numbers in the box), or -1 */
  private hoverAxis = -1;
  /** the axis edited or hovered last (what "invert" acts on without keyboard focus) */
  private lastAxis: string | null = null;
  private themeRead = false;
  /** an exported page has no kernel to update the contrast marks after an edit: they are dropped then */
  private contrastStale = false;
  /** the last axis numbers computed (one pass over the rows), kept while axis and mask stay the same */
  private statsCache: { axis: object; mask: Uint8Array | null; stats: ReturnType<typeof axisStats> } | null = null;

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
    this.tools = new SelectionTools({
      table: () => this.table,
      selection: () => this.sync.sel,
      commit: (s) => this.commit(s),
      activeAxis: () => (this.keys?.active && this.keys.axis) || this.lastAxis,
    });
    bar.insertBefore(this.tools.box, this.legend);
    this.root.insertBefore(this.tools.errorLine, this.scroller);
    this.root.append(this.tools.live);
    this.cleanup.push(watchTheme(() => this.refreshTheme()));

    this.listen("change:table", () => {
      this.loadTable();
      this.sync.tableChanged();
      this.tools.history.reset(this.sync.sel); // edits of other data cannot be undone onto this one
      this.invalidate(true);
    });
    this.listen("change:order", () => {
      if (this.sync.dragging) return;
      this.readOrder();
      this.invalidate(true);
    });
    this.listen("change:height", () => this.resize());
    this.listen("change:orientation", () => this.resize());
    this.listen("change:ranges", () => {
      if (this.sync.dragging) return;
      // the kernel's reading of the page's own edit (ends rounded, same rows) is not a new step;
      // a selection set from Python is
      const present = this.tools.history.current;
      if (sameRows(this.table, present, this.sync.sel)) this.tools.history.settle(this.sync.sel);
      else this.tools.recorded(this.sync.sel);
    });
    this.listen("change:saved", () => {
      if (this.model.get("color_by") !== SAVED_GROUPS) return;
      this.colours = null;
      this.invalidate(true);
    });
    this.listen("change:callback_error", () => this.tools.showError(this.model.get("callback_error") ?? ""));
    this.tools.showError(this.model.get("callback_error") ?? "");
    this.listen("change:contrast_axes", () => this.invalidate(false));
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
      over: (hit) => this.overHit(hit),
      commit: (r) => this.commit(r),
      axisHover: (i) => this.axisHovered(i),
    });
    this.cleanup.push(detach);
    this.overlayCanvas.setAttribute("role", "application");
    this.overlayCanvas.setAttribute("aria-roledescription", "parallel coordinates chart");
    this.overlayCanvas.setAttribute(
      "aria-label",
      "parallel coordinates chart: left and right arrows choose an axis, Enter makes a range, up and down arrows move it, Delete clears the axis",
    );
    this.keys = new KeyboardFocus(this.overlayCanvas, {
      layout: () => this.layout(),
      scales: () => this.scales(),
      selection: () => this.sync.sel,
      commit: (s) => this.commit(s),
      flip: (axis) => this.flip(axis),
      reorder: (order, final) => this.reorder(order, final),
      undo: () => this.tools.undo(),
      redo: () => this.tools.redo(),
      invert: (axis) => this.tools.invert(axis),
      focused: (axis) => {
        if (axis) this.lastAxis = axis;
        this.tools.refresh();
        this.invalidate(false);
      },
    });
    this.cleanup.push(() => this.keys.dispose());
    const leave = () => {
      this.axisHovered(-1);
      this.hoverAt(-1, -1);
    };
    this.overlayCanvas.addEventListener("pointerleave", leave);
    this.cleanup.push(() => this.overlayCanvas.removeEventListener("pointerleave", leave));
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

  /** A final selection edit made on the page (gesture, key, tool): sent to the kernel and recorded. */
  private commit(s: Sel) {
    const before = this.sync.sel;
    const edited = [...new Set([...Object.keys(before), ...Object.keys(s)])].find(
      (k) => selKey({ k: own(before, k) ?? { spans: [], bands: [], lane: false } }) !== selKey({ k: own(s, k) ?? { spans: [], bands: [], lane: false } }),
    );
    if (edited) this.lastAxis = edited;
    if (this.model.get("_standalone")) this.contrastStale = true;
    this.sync.edit(s, true);
    this.tools.recorded(this.sync.sel);
  }

  /** The pointer rests on axis i (-1: on none): its selection numbers are shown in the box. */
  private axisHovered(i: number) {
    if (i >= 0) this.lastAxis = this.layout().slots[i]?.name ?? this.lastAxis;
    if (i === this.hoverAxis) return;
    this.hoverAxis = i;
    this.tools.refresh();
    this.invalidate(false);
  }

  /** Read the host's theme again; redraw everything when it changed (a theme switch, or a first look once shown). */
  private refreshTheme() {
    const next = readTheme(this.root);
    if (themeKey(next) === themeKey(this.theme)) return;
    this.theme = next;
    this.colours = null;
    this.invalidate(true);
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
    return this.table.sampled || this.table.n > DENSITY_ROWS ? "density" : "lines";
  }

  private colouringNow(): Colouring {
    if (!this.colours) {
      const by = this.model.get("color_by");
      const single = hexToRgb(this.theme.line);
      if (by === SAVED_GROUPS && !this.table.byName.has(by)) {
        this.colours = savedColouring(this.table, this.model.get("saved"), single);
        renderLegend(this.legend, this.colours, "kept groups", undefined);
        // test hook: rows per colour group (the last one: in no group)
        const counts = new Array(this.colours.palette.length).fill(0);
        for (const g of this.colours.group ?? []) counts[g]++;
        this.root.dataset.colourGroups = JSON.stringify(counts);
      } else {
        this.colours = colouring(by ? this.table.byName.get(by) : undefined, single);
        renderLegend(this.legend, this.colours, by, this.scales().find((x) => x.axis.name === by));
      }
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
    this.picker.refresh(); // ranges may have changed which axes can be hidden
    drawOverlay(ctx, layout, this.scales(), this.sync.sel, this.theme, this.readouts(), hist);
    drawContrastMarks(ctx, layout, this.contrastAxes(), this.theme);
    if (this.keys?.active && this.keys.axis && canvas === this.overlayCanvas) drawFocus(ctx, layout, this.scales(), this.keys.axis, this.keys.band, this.theme);
    this.drawHighlight(ctx);
    restore();
  }

  private paint() {
    if (!this.themeRead && this.root.isConnected) {
      // the host's CSS variables can only be read once the view is in the document
      this.themeRead = true;
      this.refreshTheme();
    }
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
    // the hovered row (or, resting on an axis, its numbers) floats beside the pointer; the pinned row
    // docks below the chart
    const size = this.physicalSize();
    const pointer = layout.horizontal ? { x: this.pointer.y, y: this.pointer.x } : this.pointer;
    const x0 = this.scroller.scrollLeft;
    const visible = { x0, x1: x0 + (this.scroller.clientWidth || size.w), h: size.h };
    const onAxis = this.hoverAxis >= 0 && this.hoverAxis < layout.slots.length;
    if (onAxis && !this.sync.dragging) {
      this.tip.style.display = "block";
      const text = document.createElement("div");
      text.className = "axw-tip-text";
      text.textContent = this.axisText(this.hoverAxis);
      this.tip.replaceChildren(text);
      placeFloating(this.tip, pointer, visible);
    } else if (!onAxis && this.hover >= 0 && this.hover < n) {
      this.tip.style.display = "block";
      fillBox(this.tip, rowTitle(this.table, this.hover, this.hover === pinned), rowValues(this.table, layout, this.scales(), this.hover), linesPerColumn(size.h - 8));
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

  /** The axes the kernel marked as setting the selection apart (none once an exported page was edited). */
  private contrastAxes(): string[] {
    return this.contrastStale ? [] : (this.model.get("contrast_axes") ?? []);
  }

  /** The selection numbers of axis i: selected vs all rows, median or most common label, missing. */
  private axisText(i: number): string {
    const sc = this.scales()[i];
    const rank = this.contrastAxes().indexOf(sc.axis.name);
    const marks = rank >= 0 ? [`marked: rank ${rank + 1} of the axes where the selected rows differ most (w.contrast())`] : [];
    const mask = this.sync.shown().mask;
    const c = this.statsCache;
    const st = c && c.axis === sc.axis && c.mask === mask ? c.stats : axisStats(sc.axis, mask);
    this.statsCache = { axis: sc.axis, mask, stats: st };
    return statsText(st, sc.axis.kind, (v) => valueText(sc, v), (b) => sc.bandLabel(b), marks);
  }

  private updateStatus(layout: Layout) {
    const { n, total, sampled } = this.table;
    const { count, preview } = this.sync.status();
    const status = statusText({ count, preview, n, total, sampled, mode: this.mode() });
    this.status.textContent = status.text;
    publishCount(this.root, status.count, sampled ? total : n, preview);
    if (!this.sync.dragging) {
      const focus = this.keys?.active && this.keys.axis ? this.focusPhrase() : "";
      this.tools.speak(focus + selectionSummary(this.table, this.sync.sel, this.scales(), status.count, preview));
    }
    publishLayout(this.root, {
      layout,
      scales: this.scales(),
      sel: this.sync.sel,
      readouts: this.readouts(),
      hover: this.hover,
      pinned: this.model.get("pinned") ?? -1,
    });
  }

  /** "Axis 3 of 10: flow_m3h (number). " — said when the keyboard focus is on an axis. */
  private focusPhrase(): string {
    const i = this.keys.index();
    const slots = this.layout().slots;
    if (i < 0) return "";
    const sc = this.scales()[i];
    const band = sc.categorical && this.keys.band >= 0 ? `, band ${sc.bandLabel(this.keys.band)}` : "";
    return `Axis ${i + 1} of ${slots.length}: ${slots[i].name} (${sc.axis.kind}${sc.flipped ? ", flipped" : ""}${band}). `;
  }

  destroy() {
    this.painter.dispose();
    cancelAnimationFrame(this.frame);
    for (const f of this.cleanup) f();
    this.root.remove();
  }
}

/** Two selections pick the same rows of the page (compared on the page's codes). */
function sameRows(table: Table, a: Sel, b: Sel): boolean {
  if (selKey(a) === selKey(b)) return true;
  const ma = previewMask(table, a);
  const mb = previewMask(table, b);
  if (ma.count !== mb.count) return false;
  for (let i = 0; i < ma.mask.length; i++) if (ma.mask[i] !== mb.mask[i]) return false;
  return true;
}
