// One view of the widget (one per output cell): a thin composition of the modules that do the work — the
// DOM (chartdom.ts), axes, layout and scales (chartlayout.ts), kernel sync (sync.ts), the lines layer
// (paint.ts, fed by linesjob.ts), the overlay (overlay.ts), hover and pin (hoverpin.ts), the status line
// (statusline.ts), wide tables (widechart.ts), input (chartinput.ts) and test hooks (hooks.ts). It owns
// the trait listeners and the redraw scheduling.

import { neighbourReadouts, RankLookup, type Readout } from "./association";
import { blankCanvas, ChartDom } from "./chartdom";
import { attachInput } from "./chartinput";
import { ChartLayout } from "./chartlayout";
import { hexToRgb, type Colouring } from "./colour";
import { decodeTable, rowSpread, type Table } from "./data";
import { SAVED_GROUPS } from "./groups";
import { attachHooks, collectTextBoxes, publishDrawn, publishLayout } from "./hooks";
import type { LineGeometry } from "./hover";
import { HoverPin } from "./hoverpin";
import type { Layout } from "./layout";
import { colouringWithLegend } from "./legend";
import { LinesJobs, modeOf } from "./linesjob";
import type { KeyboardFocus } from "./keyboard";
import { drawContrastMarks, drawFocus } from "./marks";
import type { WidgetModel } from "./model";
import { drawLogical, drawOverlay, readTheme, type Theme } from "./overlay";
import { LinePainter, paintOnce, type Mode, type PaintJob, type PaintResult } from "./paint";
import type { AxisScale } from "./scales";
import { ensureStyles } from "./style";
import { AxisNumbers, showStatus } from "./statusline";
import { KernelSync } from "./sync";
import { themeKey, watchTheme } from "./theme";
import { SelectionTools } from "./tools";
import { editedAxis, sameRows, type Sel } from "./selection";
import { WideChart } from "./widechart";
import { OPTIONS } from "./wire";

export class View {
  readonly root: HTMLElement;
  private dom: ChartDom;
  private chart: ChartLayout;
  private wide: WideChart;
  private table!: Table;
  private spread: Float32Array = new Float32Array(0);
  private sync: KernelSync;
  private theme: Theme;
  private frame = 0;
  private dirtyLines = true;
  private dirtyOverlay = true;
  private cleanup: (() => void)[] = [];
  private ranks: RankLookup | null = null;
  private jobs = new LinesJobs();
  private painter: LinePainter;
  private hist: PaintResult | null = null;
  private colours: Colouring | null = null;
  private drawn = 0;
  private waiters: ((ms: number) => void)[] = [];
  /** selection tools (clear all, undo/redo, invert), the live summary and the callback error line */
  private tools: SelectionTools;
  private keys: KeyboardFocus;
  /** the hovered row, the axis under the pointer, the pinned row */
  private hover: HoverPin;
  /** the axis edited or hovered last (what "invert" acts on without keyboard focus) */
  private lastAxis: string | null = null;
  private themeRead = false;
  /** an exported page has no kernel to update the contrast marks after an edit: they are dropped then */
  private contrastStale = false;
  private axisNumbers = new AxisNumbers();

  constructor(
    private model: WidgetModel,
    host: HTMLElement,
  ) {
    this.chart = new ChartLayout(model, () => this.table, () => this.root.clientWidth);
    this.wide = new WideChart(model, this.chart, {
      withRange: () => new Set(Object.keys(this.sync.sel)),
      relayout: () => this.resize(),
      scrolled: () => {
        if (this.hover.row >= 0) this.hover.at(-1, -1); // the pointer no longer rests on that line
      },
    });
    this.cleanup.push(() => this.wide.dispose());
    const dom = (this.dom = new ChartDom(this.wide.picker));
    this.root = dom.root;
    this.wide.attach(dom.scroller, dom.scrollHint);
    this.hover = new HoverPin(model, dom, {
      table: () => this.table,
      layout: () => this.layout(),
      scales: () => this.scales(),
      geometry: () => this.geometry(),
      size: () => this.chart.physicalSize(),
      dragging: () => this.sync.dragging,
      axisText: (i) => this.axisNumbers.text(this.scales()[i], this.sync.shown().mask, this.contrastAxes()),
      changed: () => this.invalidate(false),
    });
    dom.modeButton.addEventListener("click", () => {
      this.model.set("view_mode", this.mode() === "density" ? "lines" : "density");
      this.model.save_changes();
      this.invalidate(true);
    });
    this.painter = new LinePainter(
      dom.linesCanvas,
      (f) => dom.showProgress(f),
      (r) => this.painted(r),
    );
    attachHooks(this.root, {
      redraw: () => this.redrawTimed(),
      // the lines layer and the overlay drawn afresh at `scale` device px per CSS px (a sharp PNG at any scale)
      layersAt: async (scale) => {
        const { w, h } = this.chart.physicalSize();
        const [lines, overlay] = [blankCanvas(w, h, scale), blankCanvas(w, h, scale)];
        await paintOnce(lines, this.job(scale));
        this.paintOverlay(overlay, scale);
        return [lines, overlay];
      },
      // every text the overlay draws, with its box, from a fresh drawing on a scratch canvas
      textBoxes: () => collectTextBoxes(this.chart.physicalSize().w, this.chart.physicalSize().h, (c) => this.paintOverlay(c, 1)),
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
    dom.placeTools(this.tools);
    this.cleanup.push(watchTheme(() => this.refreshTheme()));
    this.listenToTraits();

    const input = attachInput(dom.overlayCanvas, {
      layout: () => this.layout(),
      scales: () => this.scales(),
      selection: () => this.sync.sel,
      flip: (axis) => this.flip(axis),
      reorder: (order, final) => this.reorder(order, final),
      preview: (r) => this.sync.edit(r, false),
      hover: (x, y) => this.hover.at(x, y),
      toLogical: (x, y) => (this.chart.horizontal ? { x: y, y: x } : { x, y }),
      pin: () => this.hover.pin(),
      over: (hit) => this.hover.over(hit),
      commit: (r) => this.commit(r),
      axisHover: (i) => this.axisHovered(i),
      undo: () => this.tools.undo(),
      redo: () => this.tools.redo(),
      invert: (axis) => this.tools.invert(axis),
      focused: (axis) => {
        if (axis) this.lastAxis = axis;
        this.tools.refresh();
        this.invalidate(false);
      },
      leave: () => {
        this.axisHovered(-1);
        this.hover.at(-1, -1);
      },
    });
    this.keys = input.keys;
    this.cleanup.push(input.detach);
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

  /** What each trait change from the kernel (or another view) redraws. */
  private listenToTraits() {
    this.listen("change:table", () => {
      this.loadTable();
      this.sync.tableChanged();
      this.tools.history.reset(this.sync.sel); // edits of other data cannot be undone onto this one
      this.invalidate(true);
    });
    this.listen("change:order", () => {
      if (this.sync.dragging) return;
      this.chart.readOrder();
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
    this.listen("change:hidden", () => this.wide.hiddenChanged());
    this.listen("change:pair_counts", () => {
      this.jobs.forgetPairs();
      if (this.table.sampled) this.invalidate(true);
    });
    this.listen("change:rank_matrix", () => {
      this.ranks = null;
      this.invalidate(false);
    });
    this.listen("change:flipped", () => {
      this.chart.forget();
      this.invalidate(true);
    });
  }

  /** A final selection edit made on the page (gesture, key, tool): sent to the kernel and recorded. */
  private commit(s: Sel) {
    const edited = editedAxis(this.sync.sel, s);
    if (edited) this.lastAxis = edited;
    if (this.model.get("_standalone")) this.contrastStale = true;
    this.sync.edit(s, true);
    this.tools.recorded(this.sync.sel);
  }

  /** The pointer rests on axis i (-1: on none): its selection numbers are shown in the box. */
  private axisHovered(i: number) {
    if (i >= 0) this.lastAxis = this.layout().slots[i]?.name ?? this.lastAxis;
    if (i === this.hover.axis) return;
    this.hover.axis = i;
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
    this.hover.row = -1;
    if (this.spread.length !== this.table.n) this.spread = rowSpread(this.table.n);
    this.chart.readOrder();
  }

  private flip(axis: string) {
    const now = this.chart.flipped();
    if (now.has(axis)) now.delete(axis);
    else now.add(axis);
    this.model.set("flipped", [...now]);
    this.model.save_changes();
    this.chart.forget();
    this.invalidate(true);
  }

  private reorder(order: string[], final: boolean) {
    this.chart.setOrder(order);
    this.invalidate(true);
    if (final) {
      // `order` names every axis: the shown ones take the new order, hidden ones keep their places
      this.model.set("order", this.chart.fullOrder(order));
      this.model.save_changes();
    }
  }

  /** Rank association of each neighbouring pair (flips applied), looked up in the kernel's rank_matrix. */
  private readouts(): Readout[] {
    this.ranks ??= new RankLookup(this.model.get("rank_matrix"));
    return neighbourReadouts(this.chart.order, this.chart.flipped(), this.ranks);
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

  /** The layout in logical coordinates (axes vertical); see Layout.horizontal. */
  layout(): Layout {
    return this.chart.layout();
  }

  scales(): AxisScale[] {
    return this.chart.scales();
  }

  private resize() {
    this.chart.forget();
    this.layout();
    const { w: width, h: height } = this.chart.physicalSize();
    this.dom.size(width, height, window.devicePixelRatio || 1);
    this.wide.updateHint();
    this.invalidate(true);
  }

  /** "lines" or "density": the user's choice, or by row count when "auto". */
  mode(): Mode {
    return modeOf(this.model, this.table);
  }

  private colouringNow(): Colouring {
    this.colours ??= colouringWithLegend(this.model, this.table, hexToRgb(this.theme.line), this.dom.legend, this.root, () => this.scales());
    return this.colours;
  }

  /** What the lines layer should show now, drawn at a pixel ratio. */
  private job(dpr: number): PaintJob {
    return this.jobs.job({
      model: this.model,
      table: this.table,
      layout: this.layout(),
      scales: this.scales(),
      placement: () => this.chart.placement(),
      spread: this.spread,
      sync: this.sync,
      theme: this.theme,
      mode: this.mode(),
      colouring: () => this.colouringNow(),
      dpr,
    });
  }

  /** Axes, ranges, readouts and the highlighted rows, drawn into a canvas at a pixel ratio. */
  private paintOverlay(canvas: HTMLCanvasElement, dpr: number) {
    const layout = this.layout();
    drawLogical(canvas, dpr, layout.horizontal, (ctx) => {
      const hist = this.model.get("histograms") === false ? null : this.hist;
      this.wide.picker.refresh(); // ranges may have changed which axes can be hidden
      drawOverlay(ctx, layout, this.scales(), this.sync.sel, this.theme, this.readouts(), hist);
      drawContrastMarks(ctx, layout, this.contrastAxes(), this.theme);
      if (this.keys?.active && this.keys.axis && canvas === this.dom.overlayCanvas) drawFocus(ctx, layout, this.scales(), this.keys.axis, this.keys.band, this.theme);
      this.hover.draw(ctx, this.theme.fg);
    });
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
      this.dom.modeButton.textContent = job.mode === "density" ? "density ⇄ lines" : "lines ⇄ density";
      this.root.dataset.mode = job.mode;
      this.painter.paint(job);
      if (this.drawn === 0 && this.dirtyOverlay) {
        // first picture: the overlay and the status line in a task of their own (no long task)
        setTimeout(() => this.invalidate(false), 0);
        return;
      }
    }
    if (this.dirtyOverlay) {
      this.paintOverlay(this.dom.overlayCanvas, dpr);
      this.dirtyOverlay = false;
    }
    this.updateStatus(layout);
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

  /** Where every row's line runs now (for hovering and the highlight). */
  private geometry(): LineGeometry {
    return {
      table: this.table,
      layout: this.layout(),
      place: this.chart.placement(),
      spread: this.spread,
      curves: !!this.model.get("curves"),
      bundle: this.mode() === "lines" ? (this.hist?.bundle ?? null) : null,
    };
  }

  /** The axes the kernel marked as setting the selection apart (none once an exported page was edited). */
  private contrastAxes(): string[] {
    return this.contrastStale ? [] : (this.model.get("contrast_axes") ?? []);
  }

  private updateStatus(layout: Layout) {
    showStatus(this.root, this.dom.status, this.tools, {
      table: this.table,
      sel: this.sync.sel,
      scales: this.scales(),
      layout,
      mode: this.mode(),
      status: this.sync.status(),
      dragging: this.sync.dragging,
      keys: this.keys,
    });
    publishLayout(this.root, {
      layout,
      scales: this.scales(),
      sel: this.sync.sel,
      readouts: this.readouts(),
      hover: this.hover.row,
      pinned: this.hover.pinned,
    });
  }

  destroy() {
    this.painter.dispose();
    cancelAnimationFrame(this.frame);
    for (const f of this.cleanup) f();
    this.root.remove();
  }
}
