// One view of the widget (one per output cell): DOM, canvases, redraw scheduling and syncing.

import { PairCache, rankCorrelation } from "./association";
import { attachBrush } from "./brush";
import { decodeTable, isCategorical, rowSpread, unpackMask, type RawTable, type Table } from "./data";
import { drawLines, drawOverlay, readTheme, scalesFor, type Theme } from "./draw";
import { computeLayout, type Layout } from "./layout";
import type { AxisScale } from "./scales";
import { fromTrait, previewMask, selKey, toTrait, type Sel, type TraitRanges } from "./selection";

/** The slice of the anywidget model API that the view uses (a stand-in can provide it in tests). */
export interface Model {
  get(name: string): any;
  set(name: string, value: unknown): void;
  save_changes(): void;
  on(event: string, cb: () => void): void;
  off(event: string, cb: () => void): void;
}

const SYNC_MS = 60;

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

  constructor(
    private model: Model,
    host: HTMLElement,
  ) {
    this.root = document.createElement("div");
    this.root.className = "axw-root";
    this.root.style.cssText = "position:relative;width:100%;font:12px var(--jp-ui-font-family, system-ui, sans-serif);";
    this.status = document.createElement("div");
    this.status.className = "axw-status";
    this.status.style.cssText = "padding:2px 4px 4px;color:var(--jp-ui-font-color1,#1f1f1f);font-variant-numeric:tabular-nums;";
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
    this.root.append(this.status, this.stage);
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
    const onAnswer = () => {
      if (!this.dragging && model.get("answered_seq") >= this.seqSent) this.adoptKernel();
    };
    this.listen("change:answered_seq", onAnswer);
    this.listen("change:mask_bits", onAnswer);
    this.listen("change:count", onAnswer);
    this.listen("change:height", () => this.resize());
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
    if (final && this.model.get("_standalone")) {
      // no kernel behind this page (an exported file): the page's own mask is the answer
      this.kernelMask = this.preview.mask;
      this.kernelCount = this.preview.count;
      this.preview = null;
    }
    if (final) {
      this.sync();
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
    this.seqSent = Math.max(this.seqSent, this.model.get("edit_seq") ?? 0) + 1;
    this.model.set("ranges", toTrait(this.table, this.sel, sent));
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

  layout(): Layout {
    if (!this.layoutCache) {
      const w = Math.max(200, this.root.clientWidth || 800);
      const h = Math.max(160, this.model.get("height") ?? 380);
      const first = this.table.byName.get(this.order[0]);
      this.layoutCache = computeLayout(w, h, this.order, !!first && isCategorical(first));
      const flipped = new Set((this.model.get("flipped") as string[]) ?? []);
      this.scaleCache = scalesFor(this.table, this.layoutCache, flipped);
    }
    return this.layoutCache;
  }

  scales(): AxisScale[] {
    this.layout();
    return this.scaleCache;
  }

  private resize() {
    this.layoutCache = null;
    const { width, height } = this.layout();
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

  private paint() {
    const layout = this.layout();
    const dpr = window.devicePixelRatio || 1;
    const mask = this.preview ? this.preview.mask : this.kernelMask;
    const anyRange = Object.keys(this.sel).length > 0 || (this.kernelMask !== null && this.kernelCount < this.table.n);
    if (this.dirtyLines) {
      const ctx = this.linesCanvas.getContext("2d")!;
      ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
      drawLines(ctx, this.table, layout, this.scales(), this.spread, anyRange ? mask : null, this.theme);
      this.dirtyLines = false;
    }
    if (this.dirtyOverlay) {
      const ctx = this.overlayCanvas.getContext("2d")!;
      ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
      drawOverlay(ctx, layout, this.scales(), this.sel, this.theme, this.readouts());
      this.dirtyOverlay = false;
    }
    this.updateStatus(layout);
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
      picked: Object.fromEntries(Object.entries(this.sel).map(([k, v]) => [k, { bands: v.bands, lane: v.lane }])),
    });
  }

  destroy() {
    cancelAnimationFrame(this.frame);
    window.clearTimeout(this.syncTimer);
    for (const f of this.cleanup) f();
    this.root.remove();
  }
}
