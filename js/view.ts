// One view of the widget (one per output cell): DOM, canvases, redraw scheduling and syncing.

import { PairCache, rankCorrelation } from "./association";
import { attachBrush } from "./brush";
import { colouring, hexToRgb, toCss, viridis, type Colouring } from "./colour";
import { codeToValue, CODE_MAX, CODE_MISSING, decodeTable, isCategorical, rowSpread, unpackMask, type RawTable, type Table } from "./data";
import { autoAlpha, drawOverlay, readTheme, rowPlacement, scalesFor, uprightText, type Theme } from "./draw";
import { LinePainter, type Mode, type PaintJob, type PaintResult } from "./paint";
import { computeLayout, type Layout } from "./layout";
import { formatValue, type AxisScale } from "./scales";
import { fromTrait, previewMask, selKey, toTrait, type Sel, type TraitRanges } from "./selection";
import { DENSITY_ROWS } from "./wire";

/** The slice of the anywidget model API that the view uses (a stand-in can provide it in tests). */
export interface Model {
  get(name: string): any;
  set(name: string, value: unknown): void;
  save_changes(): void;
  on(event: string, cb: () => void): void;
  off(event: string, cb: () => void): void;
}

const SYNC_MS = 60;
/** Above this many rows, view_mode "auto" draws the density view (the wire contract's). */
export { DENSITY_ROWS };

export class View {
  readonly root: HTMLDivElement;
  private status: HTMLDivElement;
  private stage: HTMLDivElement;
  private linesCanvas: HTMLCanvasElement;
  private overlayCanvas: HTMLCanvasElement;
  private table!: Table;
  private order: string[] = [];
  private sel: Sel = {};
  private spread: Float32Array = new Float32Array(0);
  private kernelMask: Uint8Array | null = null;
  private kernelCount = 0;
  /** set while the page shows its own preview instead of the kernel's answer */
  private preview: { mask: Uint8Array; count: number } | null = null;
  private dragging = false;
  private seqSent = 0;
  private lastSync = 0;
  private syncTimer: number | undefined;
  private layoutCache: Layout | null = null;
  private scaleCache: AxisScale[] = [];
  private theme: Theme;
  private frame = 0;
  private dirtyLines = true;
  private dirtyOverlay = true;
  private cleanup: (() => void)[] = [];
  private pairs = new PairCache();
  private painter: LinePainter;
  private hist: PaintResult | null = null;
  private progress: HTMLDivElement;
  private tip: HTMLDivElement;
  private legend: HTMLDivElement;
  private modeButton: HTMLButtonElement;
  private colours: Colouring | null = null;
  private hover = -1;
  private drawn = 0;
  private waiters: ((ms: number) => void)[] = [];
  /** last pointer position over the chart (logical coordinates), to place the values box */
  private pointer = { x: 0, y: 0 };

  constructor(
    private model: Model,
    host: HTMLElement,
  ) {
    this.root = document.createElement("div");
    this.root.className = "axw-root";
    this.root.style.cssText = "position:relative;width:100%;font:12px var(--jp-ui-font-family, system-ui, sans-serif);";
    const bar = document.createElement("div");
    bar.className = "axw-bar";
    bar.style.cssText = "display:flex;align-items:center;gap:12px;padding:2px 4px 4px;color:var(--jp-ui-font-color1,#1f1f1f);";
    this.status = document.createElement("div");
    this.status.className = "axw-status";
    this.status.style.cssText = "flex:1;font-variant-numeric:tabular-nums;";
    this.legend = document.createElement("div");
    this.legend.className = "axw-legend";
    this.legend.style.cssText = "display:flex;align-items:center;gap:8px;font-size:11px;flex-wrap:wrap;";
    this.modeButton = document.createElement("button");
    this.modeButton.className = "axw-mode";
    this.modeButton.type = "button";
    this.modeButton.title = "switch between one line per row and the density view";
    this.modeButton.style.cssText =
      "font:inherit;font-size:11px;padding:1px 8px;border:1px solid var(--jp-border-color1,#bbb);border-radius:10px;" +
      "background:transparent;color:inherit;cursor:pointer;";
    this.modeButton.addEventListener("click", () => {
      this.model.set("view_mode", this.mode() === "density" ? "lines" : "density");
      this.model.save_changes();
      this.invalidate(true);
    });
    bar.append(this.status, this.legend, this.modeButton);
    this.stage = document.createElement("div");
    this.stage.className = "axw-stage";
    this.stage.style.cssText = "position:relative;width:100%;";
    this.linesCanvas = document.createElement("canvas");
    this.linesCanvas.className = "axw-lines";
    this.overlayCanvas = document.createElement("canvas");
    this.overlayCanvas.className = "axw-overlay";
    for (const c of [this.linesCanvas, this.overlayCanvas]) {
      c.style.cssText = "position:absolute;left:0;top:0;touch-action:none;";
      this.stage.appendChild(c);
    }
    this.progress = document.createElement("div");
    this.progress.className = "axw-progress";
    this.progress.setAttribute("role", "progressbar");
    this.progress.style.cssText = "position:absolute;left:0;top:0;height:2px;width:0;background:#0072B2;display:none;";
    this.tip = document.createElement("div");
    this.tip.className = "axw-tip";
    this.tip.style.cssText =
      "position:absolute;display:none;pointer-events:none;white-space:pre;font-size:11px;line-height:1.35;" +
      "padding:4px 6px;border-radius:4px;background:var(--jp-layout-color1,#fff);color:var(--jp-ui-font-color1,#222);" +
      "border:1px solid var(--jp-border-color1,#ccc);box-shadow:0 1px 3px rgba(0,0,0,.2);font-variant-numeric:tabular-nums;";
    this.stage.append(this.progress, this.tip);
    this.root.append(bar, this.stage);
    this.painter = new LinePainter(
      this.linesCanvas,
      (f) => {
        this.progress.style.display = f === null ? "none" : "block";
        if (f !== null) this.progress.style.width = `${Math.round(f * 100)}%`;
      },
      (r) => this.painted(r),
    );
    (this.root as any).__axw = { redraw: () => this.redrawTimed(), layersAt: (scale: number) => this.layersAt(scale) };
    host.appendChild(this.root);
    this.theme = readTheme(host);
    this.loadTable();
    this.sel = fromTrait(this.table, model.get("ranges") as TraitRanges);
    this.adoptKernel();

    this.listen("change:table", () => {
      this.loadTable();
      this.sel = fromTrait(this.table, model.get("ranges") as TraitRanges);
      this.preview = null;
      this.adoptKernel();
      this.invalidate(true);
    });
    this.listen("change:order", () => {
      if (this.dragging) return;
      this.readOrder();
      this.invalidate(true);
    });
    this.listen("change:ranges", () => {
      if (this.dragging) return;
      const s = fromTrait(this.table, model.get("ranges") as TraitRanges);
      if (selKey(s) === selKey(this.sel)) return;
      this.sel = s;
      this.invalidate(false);
    });
    // one kernel answer changes up to three traits: adopt it once, after all of them have arrived
    let answerQueued = false;
    const onAnswer = () => {
      if (answerQueued) return;
      answerQueued = true;
      queueMicrotask(() => {
        answerQueued = false;
        if (!this.dragging && model.get("answered_seq") >= this.seqSent) this.adoptKernel();
      });
    };
    this.listen("change:answered_seq", onAnswer);
    this.listen("change:mask_bits", onAnswer);
    this.listen("change:count", onAnswer);
    this.listen("change:height", () => this.resize());
    this.listen("change:orientation", () => this.resize());
    this.listen("change:color_by", () => {
      this.colours = null; // the colour groups depend on the colour column only
      this.invalidate(true);
    });
    for (const name of ["opacity", "view_mode", "curves", "bundle_by", "bundle_strength", "histograms"]) {
      this.listen(`change:${name}`, () => this.invalidate(true));
    }
    this.listen("change:pinned", () => this.invalidate(false));
    this.listen("change:flipped", () => {
      this.layoutCache = null;
      this.invalidate(true);
    });

    const detach = attachBrush(this.overlayCanvas, {
      layout: () => this.layout(),
      scales: () => this.scales(),
      selection: () => this.sel,
      flip: (axis) => this.flip(axis),
      reorder: (order, final) => this.reorder(order, final),
      preview: (r) => this.edit(r, false),
      hover: (x, y) => this.hoverAt(x, y),
      toLogical: (x, y) => (this.horizontal ? { x: y, y: x } : { x, y }),
      pin: () => this.pinHover(),
      commit: (r) => this.edit(r, true),
    });
    this.cleanup.push(detach);
    const ro = new ResizeObserver(() => this.resize());
    ro.observe(this.root);
    this.cleanup.push(() => ro.disconnect());
    this.resize();
  }

  private listen(event: string, cb: () => void) {
    this.model.on(event, cb);
    this.cleanup.push(() => this.model.off(event, cb));
  }

  private loadTable() {
    this.table = decodeTable(this.model.get("table") as RawTable);
    this.colours = null;
    this.hist = null;
    this.hover = -1;
    this.pairs.clear();
    if (this.spread.length !== this.table.n) this.spread = rowSpread(this.table.n);
    this.readOrder();
  }

  private readOrder() {
    const order = (this.model.get("order") as string[]) ?? [];
    this.order = order.filter((n) => this.table.byName.has(n));
    if (this.order.length === 0) this.order = this.table.axes.map((a) => a.name);
    this.layoutCache = null;
  }

  /** Take the kernel's mask and count as the truth (they are exact). */
  private adoptKernel() {
    this.kernelMask = unpackMask(this.model.get("mask_bits") as DataView, this.table.n);
    this.kernelCount = this.model.get("count") ?? this.table.n;
    this.preview = null;
    this.dirtyLines = true;
    this.schedule();
  }

  private edit(s: Sel, final: boolean) {
    this.sel = s;
    this.dragging = !final;
    this.preview = previewMask(this.table, s);
    this.invalidate(true);
    if (final) {
      this.sync();
      if (this.model.get("_standalone") && this.preview) {
        // no kernel behind this page (an exported file): the page's own mask is the answer
        this.kernelMask = this.preview.mask;
        this.kernelCount = this.preview.count;
        this.preview = null;
      }
      return;
    }
    const wait = SYNC_MS - (performance.now() - this.lastSync);
    if (wait <= 0) this.sync();
    else if (this.syncTimer === undefined) this.syncTimer = window.setTimeout(() => this.sync(), wait);
  }

  private flip(axis: string) {
    const now = new Set((this.model.get("flipped") as string[]) ?? []);
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

  /** Rank association of each neighbouring pair (flips applied), from the page's codes. */
  private readouts(): { left: string; right: string; value: number }[] {
    const flipped = new Set((this.model.get("flipped") as string[]) ?? []);
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

  /** Send the ranges to the kernel (throttled while dragging; always on release). */
  private sync() {
    window.clearTimeout(this.syncTimer);
    this.syncTimer = undefined;
    this.lastSync = performance.now();
    const sent = this.model.get("ranges") as TraitRanges;
    if (selKey(fromTrait(this.table, sent)) === selKey(this.sel)) {
      // nothing new for the kernel: its last answer stands (but a finished drag is news)
      if (!this.dragging && this.model.get("dragging")) {
        this.model.set("dragging", false);
        this.model.save_changes();
      }
      if (!this.dragging && this.model.get("answered_seq") >= this.seqSent) this.adoptKernel();
      return;
    }
    const value = toTrait(this.table, this.sel, sent);
    if (!this.dragging) {
      // draw what is sent: ends as the kernel will read them (whole values on integer axes, ms on dates)
      this.sel = fromTrait(this.table, value);
      this.preview = previewMask(this.table, this.sel);
      this.invalidate(true);
    }
    this.seqSent = Math.max(this.seqSent, this.model.get("edit_seq") ?? 0) + 1;
    this.model.set("ranges", value);
    this.model.set("edit_seq", this.seqSent);
    this.model.set("dragging", this.dragging);
    this.model.save_changes();
  }

  private invalidate(lines: boolean) {
    if (lines) this.dirtyLines = true;
    this.dirtyOverlay = true;
    this.schedule();
  }

  private schedule() {
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
      const flipped = new Set((this.model.get("flipped") as string[]) ?? []);
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
    return this.table.n > DENSITY_ROWS ? "density" : "lines";
  }

  private colouringNow(): Colouring {
    if (!this.colours) {
      const by = this.model.get("color_by") as string;
      this.colours = colouring(by ? this.table.byName.get(by) : undefined, hexToRgb(this.theme.line));
      this.renderLegend();
    }
    return this.colours;
  }

  private renderLegend() {
    const lg = this.colours!.legend;
    this.legend.replaceChildren();
    const by = this.model.get("color_by") as string;
    if (lg.kind === "none") return;
    const title = document.createElement("span");
    title.textContent = `colour: ${by}`;
    title.style.opacity = "0.75";
    this.legend.append(title);
    if (lg.kind === "categories") {
      lg.labels.forEach((label, i) => {
        const item = document.createElement("span");
        item.style.cssText = "display:inline-flex;align-items:center;gap:3px;";
        const sw = document.createElement("span");
        sw.style.cssText = `display:inline-block;width:10px;height:10px;border-radius:2px;background:${toCss(lg.colours[i])};`;
        const text = document.createElement("span");
        text.textContent = label;
        item.append(sw, text);
        this.legend.append(item);
      });
    } else {
      const sc = this.scales().find((x) => x.axis.name === by);
      const lo = document.createElement("span");
      const hi = document.createElement("span");
      lo.textContent = sc ? sc.format(lg.axis.lo) : "";
      hi.textContent = sc ? sc.format(lg.axis.hi) : "";
      const ramp = document.createElement("span");
      const stops = Array.from({ length: 9 }, (_, i) => toCss(viridis(i / 8))).join(",");
      ramp.style.cssText = `display:inline-block;width:90px;height:10px;border-radius:2px;background:linear-gradient(to right,${stops});`;
      this.legend.append(lo, ramp, hi);
    }
  }

  /** What the lines layer should show now, drawn at a pixel ratio. */
  private job(dpr: number): PaintJob {
    const layout = this.layout();
    const mask = this.preview ? this.preview.mask : this.kernelMask;
    const anyRange = Object.keys(this.sel).length > 0 || (this.kernelMask !== null && this.kernelCount < this.table.n);
    const shownMask = anyRange ? mask : null;
    const selected = shownMask ? (this.preview ? this.preview.count : this.kernelCount) : this.table.n;
    const userOpacity = Number(this.model.get("opacity") ?? 0);
    const bundleBy = this.model.get("bundle_by") as string;
    const bundleAxis = bundleBy ? layout.slots.findIndex((s) => s.name === bundleBy) : -1;
    const strength = Math.min(1, Math.max(0, Number(this.model.get("bundle_strength") ?? 0.5)));
    return {
      table: this.table,
      layout,
      scales: this.scales(),
      place: this.placement(),
      spread: this.spread,
      mask: shownMask,
      colouring: this.colouringNow(),
      faded: hexToRgb(this.theme.faded),
      opacity: userOpacity > 0 ? Math.min(1, userOpacity) : autoAlpha(selected),
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
    drawOverlay(ctx, layout, this.scales(), this.sel, this.theme, this.readouts(), hist);
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
    this.root.dataset.drawn = String(this.drawn);
    this.root.dataset.drawMs = r.ms.toFixed(1);
    this.root.dataset.drawnBy = r.workers ? "workers" : "page";
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

  // -- hover and pin ---------------------------------------------------------------------------------
  /** The row whose line passes nearest to (x, y) between two axes, or -1 (straight-line geometry). */
  private nearestRow(x: number, y: number): number {
    const layout = this.layout();
    const slots = layout.slots;
    let a = -1;
    for (let i = 0; i + 1 < slots.length; i++) if (x >= slots[i].x && x <= slots[i + 1].x) a = i;
    if (a < 0 || y < layout.top - 4 || y > layout.laneY + 8) return -1;
    let t = (x - slots[a].x) / (slots[a + 1].x - slots[a].x);
    if (this.model.get("curves")) {
      // the curve is a cubic with control points at half the gap (raster.ts curveSegment): find its
      // parameter at this x (x(u) = 1.5u(1-u) + u^3 rises from 0 to 1), then its height 3u^2 - 2u^3
      let lo = 0;
      let hi = 1;
      for (let k = 0; k < 24; k++) {
        const u = (lo + hi) / 2;
        if (1.5 * u * (1 - u) + u * u * u < t) lo = u;
        else hi = u;
      }
      const u = (lo + hi) / 2;
      t = u * u * (3 - 2 * u);
    }
    const place = this.placement();
    const ca = this.table.byName.get(slots[a].name)!.codes;
    const cb = this.table.byName.get(slots[a + 1].name)!.codes;
    const pa = place[a];
    const pb = place[a + 1];
    const spread = this.spread;
    let best = -1;
    let bestD = 6;
    for (let i = 0; i < this.table.n; i++) {
      const ya = pa.base[ca[i]] + spread[i] * pa.height[ca[i]];
      const yb = pb.base[cb[i]] + spread[i] * pb.height[cb[i]];
      const d = Math.abs(ya + t * (yb - ya) - y);
      if (d < bestD) {
        bestD = d;
        best = i;
      }
    }
    return best;
  }

  private placementCache: { key: Layout; value: ReturnType<typeof rowPlacement> } | null = null;

  private placement() {
    const layout = this.layout();
    if (this.placementCache?.key !== layout) this.placementCache = { key: layout, value: rowPlacement(this.scales(), layout) };
    return this.placementCache.value;
  }

  private hoverAt(x: number, y: number) {
    if (x >= 0) this.pointer = { x, y };
    const row = this.nearestRow(x, y);
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

  /** The hovered and the pinned row: a strong polyline, and their values in a small box. */
  private drawHighlight(ctx: CanvasRenderingContext2D) {
    const pinned = this.model.get("pinned") ?? -1;
    const rows = [pinned, this.hover].filter((r, i, all) => r >= 0 && r < this.table.n && all.indexOf(r) === i);
    const layout = this.layout();
    const place = this.placement();
    for (const row of rows) {
      ctx.save();
      ctx.strokeStyle = row === pinned ? "#D55E00" : this.theme.fg;
      ctx.lineWidth = 2;
      ctx.globalAlpha = 0.9;
      ctx.beginPath();
      layout.slots.forEach((s, a) => {
        const c = this.table.byName.get(s.name)!.codes[row];
        const y = place[a].base[c] + this.spread[row] * place[a].height[c];
        if (a === 0) ctx.moveTo(s.x, y);
        else ctx.lineTo(s.x, y);
      });
      ctx.stroke();
      ctx.restore();
    }
    const show = this.hover >= 0 ? this.hover : pinned;
    if (show < 0 || show >= this.table.n) {
      this.tip.style.display = "none";
      return;
    }
    const lines = [`row ${show}${show === pinned ? " (pinned)" : ""}`];
    for (const s of layout.slots) {
      const axis = this.table.byName.get(s.name)!;
      const c = axis.codes[show];
      let text: string;
      if (c === CODE_MISSING) text = "–";
      else if (isCategorical(axis)) text = axis.labels && c < axis.labels.length ? axis.labels[c] : "(other)";
      else {
        const sc = this.scales().find((x) => x.axis === axis)!;
        const v = codeToValue(axis, c);
        if (axis.kind === "number" && !axis.log) {
          // as many decimals as the quantisation step can tell apart
          const step = (axis.hi - axis.lo) / CODE_MAX;
          const decimals = step > 0 ? Math.min(6, Math.max(0, Math.floor(-Math.log10(step * 2)))) : 3;
          text = formatValue(Number(v.toFixed(decimals)));
        } else text = sc.format(v);
      }
      lines.push(`${s.name}: ${text}`);
    }
    this.tip.textContent = lines.join("\n");
    this.tip.style.display = "block";
    // beside the pointer, on the side with more room, kept inside the chart
    const box = { w: this.tip.offsetWidth, h: this.tip.offsetHeight };
    const px = layout.horizontal ? this.pointer.y : this.pointer.x;
    const py = layout.horizontal ? this.pointer.x : this.pointer.y;
    const { w: pw, h: ph } = this.physicalSize();
    const left = px + 16 + box.w <= pw ? px + 16 : Math.max(4, px - 16 - box.w);
    const top = Math.min(Math.max(4, py - box.h / 2), Math.max(4, ph - box.h - 4));
    this.tip.style.left = `${left}px`;
    this.tip.style.top = `${top}px`;
  }

  private updateStatus(layout: Layout) {
    const n = this.table.n;
    const fmt = (v: number) => v.toLocaleString("en-US");
    let text: string;
    if (this.preview) text = `≈ ${fmt(this.preview.count)} of ${fmt(n)} rows selected (checking…)`;
    else text = `${fmt(this.kernelCount)} of ${fmt(n)} rows selected`;
    this.status.textContent = text;
    const ds = this.root.dataset;
    ds.count = String(this.preview ? this.preview.count : this.kernelCount);
    ds.total = String(n);
    ds.state = this.preview ? "preview" : "synced";
    // a test hook: where the axes and the drawn range bands are, in CSS pixels of the canvas
    const sc = this.scales();
    ds.layout = JSON.stringify({
      top: layout.top,
      bottom: layout.bottom,
      laneY: layout.laneY,
      axes: layout.slots.map((s, i) => ({ name: s.name, x: s.x, lo: sc[i].axis.lo, hi: sc[i].axis.hi })),
      axisKinds: layout.slots.map((s, i) => sc[i].axis.kind),
      categoryBands: layout.slots.map((s, i) => (sc[i].categorical ? sc[i].bands.map((b, c) => ({ label: sc[i].bandLabel(c), y0: b.y0, y1: b.y1 })) : [])),
      bands: layout.slots.flatMap((s, i) =>
        (this.sel[s.name]?.spans ?? []).map(([lo, hi]) => ({ name: s.name, x: s.x, yTop: sc[i].toPixel(hi), yBottom: sc[i].toPixel(lo) })),
      ),
      flipped: sc.filter((x) => x.flipped).map((x) => x.axis.name),
      readouts: this.readouts(),
      horizontal: layout.horizontal,
      hover: this.hover,
      pinned: this.model.get("pinned") ?? -1,
      picked: Object.fromEntries(Object.entries(this.sel).map(([k, v]) => [k, { bands: v.bands, lane: v.lane }])),
    });
  }

  destroy() {
    this.painter.dispose();
    cancelAnimationFrame(this.frame);
    window.clearTimeout(this.syncTimer);
    for (const f of this.cleanup) f();
    this.root.remove();
  }
}
